"""Helpers for end-to-end tests: a newcomer's workbook, and cell edits made the way a user would.

``set_cells`` changes cell values in one sheet by rewriting only that sheet's
XML inside the zip (every other part keeps its compressed bytes), which is what
a user's edit amounts to for the parts statmargin cares about. All data here is
invented for tests (an invented outreach clinic's visit log).
"""

from __future__ import annotations

import datetime as dt
import posixpath
import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

import numpy as np
import xlsxwriter
from python_calamine import CalamineWorkbook

from statmargin.io.file.zipio import ZipEntry, new_entry, read_zip, write_zip
from statmargin.plan.roles_sheet import HEADERS, SHEET_NAME

NEWCOMER_SHEET = "Visits"
NEWCOMER_TABLE = "VisitTable"
NEWCOMER_ROWS = 36
# The dirty cells planted in the "Wait minutes" column (column C), by address: what the
# cell holds and the data-notes "What was wrong" word the reader should give it.
DIRTY_WAIT_CELLS = {
    "C5": ("NA", "missing marker"),
    "C9": ("-", "missing marker"),
    "C13": ("52", "number stored as text"),
    "C17": ("<5", "suppressed count"),
    "C21": ("#N/A", "error value"),
}
BLANK_WAIT_CELL = "C25"
SITES = ("Harbour", "Millbrook", "Ashgrove")


def _entries(path: Path) -> dict[str, ZipEntry]:
    return {e.name: e for e in read_zip(path.read_bytes())}


def make_newcomer_workbook(path: str | Path, *, seed: int = 20260301) -> Path:
    """Write a workbook as a newcomer would make it by hand, with a few dirty cells.

    Parameters
    ----------
    path : str or Path
        Where to write the .xlsx.
    seed : int
        Seed for the invented wait times.

    Returns
    -------
    Path
        The written file.

    Notes
    -----
    Sheet "Visits" holds an Excel table (Site, Visit date, Wait minutes,
    Follow-up) of 36 invented visits at three sites, with a column chart beside
    it. The wait column holds the dirty cells listed in ``DIRTY_WAIT_CELLS``
    plus a blank (``BLANK_WAIT_CELL``); the error value is a formula with a
    cached ``#N/A``.
    """
    path = Path(path)
    rng = np.random.default_rng(seed)
    book = xlsxwriter.Workbook(str(path))
    try:
        sheet = book.add_worksheet(NEWCOMER_SHEET)
        date_format = book.add_format({"num_format": "yyyy-mm-dd"})
        sheet.add_table(
            0, 0, NEWCOMER_ROWS, 3,
            {"name": NEWCOMER_TABLE, "columns": [{"header": h} for h in ("Site", "Visit date", "Wait minutes", "Follow-up")]},
        )
        centre = {"Harbour": 30.0, "Millbrook": 42.0, "Ashgrove": 35.0}
        for i in range(NEWCOMER_ROWS):
            row = i + 1
            site = SITES[i % 3]
            sheet.write_string(row, 0, site)
            sheet.write_datetime(row, 1, dt.datetime(2026, 3, 1) + dt.timedelta(days=i), date_format)
            address = f"C{row + 1}"
            if address in DIRTY_WAIT_CELLS:
                text = DIRTY_WAIT_CELLS[address][0]
                if text.startswith("#"):
                    sheet.write_formula(row, 2, "=NA()", None, text)
                else:
                    sheet.write_string(row, 2, text)
            elif address != BLANK_WAIT_CELL:
                sheet.write_number(row, 2, round(float(rng.normal(centre[site], 6.0)), 1))
            sheet.write_string(row, 3, "yes" if rng.random() < 0.6 else "no")
        chart = book.add_chart({"type": "column"})
        chart.add_series(
            {
                "name": "Wait",
                "categories": [NEWCOMER_SHEET, 1, 0, NEWCOMER_ROWS, 0],
                "values": [NEWCOMER_SHEET, 1, 2, NEWCOMER_ROWS, 2],
            }
        )
        sheet.insert_chart("F2", chart)
    finally:
        book.close()
    return path


def sheet_part(path: str | Path, sheet: str) -> str:
    """The zip part name (e.g. ``xl/worksheets/sheet3.xml``) of a sheet, by its tab name."""
    entries = _entries(Path(path))
    workbook = entries["xl/workbook.xml"].data().decode("utf-8")
    rels = entries["xl/_rels/workbook.xml.rels"].data().decode("utf-8")
    for tag in re.findall(r"<(?:\w+:)?sheet\b[^>]*>", workbook):
        name = re.search(r'\bname="([^"]*)"', tag)
        rid = re.search(r'\br:id="([^"]*)"', tag)
        if name and rid and _unescape(name.group(1)) == sheet:
            for rel in re.findall(r"<(?:\w+:)?Relationship\b[^>]*>", rels):
                if re.search(rf'\bId="{re.escape(rid.group(1))}"', rel):
                    target = re.search(r'\bTarget="([^"]*)"', rel).group(1)
                    if target.startswith("/"):
                        return target.lstrip("/")
                    return posixpath.normpath(posixpath.join("xl", target))
    raise KeyError(f"no sheet named {sheet!r} in {path}")


def _unescape(text: str) -> str:
    return text.replace("&quot;", '"').replace("&apos;", "'").replace("&lt;", "<").replace("&gt;", ">").replace("&amp;", "&")


def _cell_xml(address: str, value: Any, style: str | None) -> str:
    s = f' s="{style}"' if style is not None else ""
    if value is None or value == "":
        return f'<c r="{address}"{s}/>'
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return f'<c r="{address}"{s}><v>{value!r}</v></c>'
    return f'<c r="{address}"{s} t="inlineStr"><is><t xml:space="preserve">{escape(str(value))}</t></is></c>'


def _col_number(letters: str) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + ord(ch) - 64
    return n


def _set_cell(xml: str, address: str, value: Any) -> str:
    letters, row = re.fullmatch(r"([A-Z]+)(\d+)", address).groups()
    cell_re = re.compile(rf'<c r="{address}"(?P<attrs>[^>]*?)(?:/>|>.*?</c>)', re.S)
    found = cell_re.search(xml)
    if found:
        style = re.search(r'\bs="(\d+)"', found.group("attrs"))
        return xml[: found.start()] + _cell_xml(address, value, style.group(1) if style else None) + xml[found.end():]
    row_re = re.compile(rf'<row r="{row}"(?P<attrs>[^>]*?)(?:/>|>(?P<body>.*?)</row>)', re.S)
    found_row = row_re.search(xml)
    new_cell = _cell_xml(address, value, None)
    if found_row is None:
        raise KeyError(f"row {row} is not in the sheet; only existing rows can be edited")
    body = found_row.group("body") or ""
    cells = list(re.finditer(r'<c r="([A-Z]+)\d+"', body))
    insert_at = len(body)
    for c in cells:
        if _col_number(c.group(1)) > _col_number(letters):
            insert_at = c.start()
            break
    body = body[:insert_at] + new_cell + body[insert_at:]
    attrs = re.sub(r'\s*spans="[^"]*"', "", found_row.group("attrs"))
    return xml[: found_row.start()] + f'<row r="{row}"{attrs}>{body}</row>' + xml[found_row.end():]


def set_cells(path: str | Path, sheet: str, values: Mapping[str, Any]) -> None:
    """Set cell values (A1 address -> value) in one sheet, keeping every other zip part's bytes.

    Parameters
    ----------
    path : str or Path
        The workbook, changed in place.
    sheet : str
        Tab name of the sheet to edit.
    values : mapping
        Address -> new value: text is written as an inline string, numbers as
        numbers, ``None`` or "" empties the cell (its style is kept).

    Notes
    -----
    Only the one worksheet part is rewritten; the cell keeps its style index, as
    when a user types over a cell (or picks from its dropdown).
    """
    path = Path(path)
    part = sheet_part(path, sheet)
    entries = read_zip(path.read_bytes())
    out: list[ZipEntry] = []
    for entry in entries:
        if entry.name == part:
            xml = entry.data().decode("utf-8")
            for address, value in values.items():
                xml = _set_cell(xml, address, value)
            entry = new_entry(entry.name, xml.encode("utf-8"))
        out.append(entry)
    path.write_bytes(write_zip(out))


def roles_cell(path: str | Path, column: str, header: str = "Role", *, sheet: str = SHEET_NAME) -> str:
    """The address of one of the user's cells on the roles sheet, found by column name and header text."""
    rows = CalamineWorkbook.from_path(str(path)).get_sheet_by_name(sheet).to_python()
    header_row = next(i for i, row in enumerate(rows) if row and row[0] == HEADERS[0] and header in row)
    col = list(rows[header_row]).index(header)
    for r in range(header_row + 1, len(rows)):
        if rows[r] and rows[r][0] == column:
            return f"{chr(65 + col)}{r + 1}"
    raise KeyError(f"column {column!r} is not listed on the roles sheet")


def set_roles(path: str | Path, choices: Mapping[str, Mapping[str, Any]], *, sheet: str = SHEET_NAME) -> dict[str, Any]:
    """Pick roles (and other choices) on the roles sheet as a user would: column -> {header: value}.

    Returns the edited cells (address -> value).
    """
    edits = {roles_cell(path, column, header, sheet=sheet): value for column, cells in choices.items() for header, value in cells.items()}
    set_cells(path, sheet, edits)
    return edits


def tool_sheet_name(path: str | Path, kind: str) -> str:
    """The tab name of the tool sheet of one kind ("roles", "results", "shape", "notes", "log")."""
    from statmargin.io.file.source import FileSource

    names = [name for name, k in FileSource(path).tool_sheets().items() if k == kind]
    if len(names) != 1:
        raise KeyError(f"expected one {kind!r} sheet in {path}, found {names}")
    return names[0]


def sheet_rows(path: str | Path, sheet: str) -> list[list[Any]]:
    """Every row of a sheet as python-calamine reads it (an independent reader)."""
    return CalamineWorkbook.from_path(str(path)).get_sheet_by_name(sheet).to_python()


def table_records(rows: list[list[Any]], first_header: str) -> list[dict[str, Any]]:
    """The rows under the header row that starts with ``first_header``, as header -> value dicts."""
    at = next(i for i, row in enumerate(rows) if row and row[0] == first_header)
    headers = [str(h) for h in rows[at]]
    out = []
    for row in rows[at + 1:]:
        if all(v in ("", None) for v in row):
            continue
        out.append({h: (row[i] if i < len(row) else "") for i, h in enumerate(headers) if h})
    return out


def results_records(path: str | Path) -> list[dict[str, Any]]:
    """The results sheet's analysis and follow-up rows, found by header text ("Question")."""
    return table_records(sheet_rows(path, tool_sheet_name(path, "results")), "Question")


def append_rows(path: str | Path, sheet: str, rows: list[list[Any]], *, style_from_row: int = 2) -> int:
    """Append rows of values below a sheet's last row, as a user pastes next month's records.

    Numbers are written as numbers and text as inline strings; ``datetime.date``
    values become day serials. Each new cell takes the style of the cell in the
    same column of ``style_from_row`` (so a date column stays formatted as dates).
    Only the one worksheet part is rewritten (its dimension updated); every other
    zip part keeps its bytes. Returns the sheet row number of the first new row.
    """
    path = Path(path)
    part = sheet_part(path, sheet)
    entries = read_zip(path.read_bytes())
    out: list[ZipEntry] = []
    first = 0
    for entry in entries:
        if entry.name == part:
            xml = entry.data().decode("utf-8")
            numbers = [int(n) for n in re.findall(r'<row r="(\d+)"', xml)]
            first = max(numbers) + 1
            template = re.search(rf'<row r="{style_from_row}"[^>]*>(.*?)</row>', xml, re.S)
            styles = {}
            if template:
                for cell in re.finditer(r'<c r="([A-Z]+)\d+"([^>]*?)(?:/>|>)', template.group(1)):
                    found = re.search(r'\bs="(\d+)"', cell.group(2))
                    styles[cell.group(1)] = found.group(1) if found else None
            body = []
            for offset, values in enumerate(rows):
                number = first + offset
                cells = []
                for col, value in enumerate(values):
                    letters = ""
                    index = col + 1
                    while index:
                        index, rem = divmod(index - 1, 26)
                        letters = chr(65 + rem) + letters
                    if isinstance(value, dt.date):
                        value = (value - dt.date(1899, 12, 30)).days
                    cells.append(_cell_xml(f"{letters}{number}", value, styles.get(letters)))
                body.append(f'<row r="{number}">{"".join(cells)}</row>')
            xml = xml.replace("</sheetData>", "".join(body) + "</sheetData>", 1)
            last = first + len(rows) - 1
            xml = re.sub(r'(<dimension ref="[A-Z]+\d+:[A-Z]+)\d+(")', rf"\g<1>{last}\g<2>", xml, count=1)
            entry = new_entry(entry.name, xml.encode("utf-8"))
        out.append(entry)
    path.write_bytes(write_zip(out))
    return first
