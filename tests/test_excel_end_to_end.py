"""The newcomer's journey through the Excel bridge gives the same sheets as through the command line.

The same invented workbook (``workbook_edit.make_newcomer_workbook``) is taken
twice: once through ``statmargin plan`` / a user's role edits / ``statmargin
run`` (twice) on the file, once through the bridge's entry points on an
in-memory stand-in for the open workbook (``xlwings_standin``), with the same
role edits typed into the stand-in's roles sheet. The clock is fixed so the run
logs agree. The reference for every cell is the file back end's output, read
with openpyxl (an independent reader); charts are compared with the chart parts
of the file.
"""

from __future__ import annotations

import datetime as dt
import re
import shutil
import types
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import openpyxl
import pytest
from click.testing import CliRunner
from openpyxl.cell.cell import MergedCell

import statmargin.excel
import xlwings_standin as xs
from statmargin.cli import main
from statmargin.io.file.source import FileSource
from statmargin.io.file.zipio import read_zip
from statmargin.io.protocol import string_constant
from statmargin.plan.roles_sheet import HEADERS
from workbook_edit import NEWCOMER_SHEET, make_newcomer_workbook, set_roles

ROLE_EDITS = {"Wait minutes": {"Role": "outcome"}, "Site": {"Role": "compare by"}}
FIXED_START = dt.datetime(2026, 3, 2, 9, 30, tzinfo=dt.timezone.utc)
TOOL_KINDS = ("roles", "results", "shape", "notes", "log", "history")
C_NS = "{http://schemas.openxmlformats.org/drawingml/2006/chart}"
A_NS = "{http://schemas.openxmlformats.org/drawingml/2006/main}"


class _FixedDatetime(dt.datetime):
    @classmethod
    def now(cls, tz: Any = None) -> _FixedDatetime:  # type: ignore[override]
        return cls.fromtimestamp(FIXED_START.timestamp(), tz)


def _fixed_clock(monkeypatch: pytest.MonkeyPatch) -> None:
    import statmargin.jobs.workbook as jobs

    monkeypatch.setattr(jobs, "datetime", _FixedDatetime)
    monkeypatch.setattr(jobs, "time", types.SimpleNamespace(perf_counter=lambda: 100.0))


def type_roles(book: xs.Book, edits: dict[str, dict[str, Any]]) -> None:
    """A user picking roles in the stand-in's roles sheet, found by its marker and headers."""
    name = next(n for n, v in xs.markers(book).items() if string_constant(v) == "roles")
    sheet = xs.sheet(book, name)
    rows = xs.rows(sheet)
    header_at = next(i for i, row in enumerate(rows) if row and row[0] == HEADERS[0])
    for column, cells in edits.items():
        r = next(i for i, row in enumerate(rows) if i > header_at and row and row[0] == column)
        for header, value in cells.items():
            c = rows[header_at].index(header)
            xs.type_in(sheet, f"{xs.column_letters(c + 1)}{r + 1}", value)


@pytest.fixture(scope="module")
def both(tmp_path_factory) -> dict[str, Any]:
    """The journey through the command line (a file) and through the bridge (a stand-in book)."""
    folder = tmp_path_factory.mktemp("excel-journey")
    original = make_newcomer_workbook(folder / "visits.xlsx")
    file_book = folder / "file" / "visits.xlsx"
    file_book.parent.mkdir()
    shutil.copyfile(original, file_book)
    with pytest.MonkeyPatch.context() as monkeypatch:
        _fixed_clock(monkeypatch)
        runner = CliRunner()
        assert runner.invoke(main, ["plan", str(file_book)], catch_exceptions=False).exit_code == 0
        planned_file = folder / "planned.xlsx"
        shutil.copyfile(file_book, planned_file)
        set_roles(file_book, ROLE_EDITS)
        for _ in range(2):
            ran = runner.invoke(main, ["run", str(file_book), "--quiet"], catch_exceptions=False)
            assert ran.exit_code == 0, ran.output

        book = xs.load(original, freeze_supported=True)
        assert statmargin.excel.plan(book) == 0
        planned_sheets = {n: xs.rows(xs.sheet(book, n)) for n in xs.sheet_names(book)}
        type_roles(book, ROLE_EDITS)
        for _ in range(2):
            assert statmargin.excel.run(book) == 0
    return {"file": file_book, "planned_file": planned_file, "book": book, "planned_sheets": planned_sheets}


def _empty(value: Any) -> bool:
    return value is None or value == ""


def _same(a: Any, b: Any) -> bool:
    if _empty(a) and _empty(b):
        return True
    if isinstance(a, dt.datetime) and isinstance(b, dt.datetime):
        return abs((a - b).total_seconds()) < 1e-3  # openpyxl rebuilds dates from day serials
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        return float(a) == float(b)
    return a == b


def _file_cells(path: Path, sheet: str) -> dict[tuple[int, int], Any]:
    ws = openpyxl.load_workbook(path)[sheet]
    return {(c.row - 1, c.column - 1): c.value for row in ws.iter_rows() for c in row if not _empty(c.value)}


def _bridge_cells(book: xs.Book, sheet: str) -> dict[tuple[int, int], Any]:
    return {rc: v for rc, v in xs.values(xs.sheet(book, sheet)).items() if not _empty(v)}


def _differences(file_cells: dict, bridge_cells: dict) -> list[str]:
    keys = sorted(set(file_cells) | set(bridge_cells))
    return [f"{k}: file {file_cells.get(k)!r} bridge {bridge_cells.get(k)!r}"
            for k in keys if not _same(file_cells.get(k), bridge_cells.get(k))]


def test_bridge_called_only_declared_members(both) -> None:
    """Planning and two runs through the bridge used nothing outside the declared xlwings subset."""
    assert xs.recorder(both["book"]).violations == []


def test_same_sheets_in_the_same_order_with_the_same_markers(both) -> None:
    """Sheet names, their order and the tool-sheet markers are those the file back end wrote."""
    source = FileSource(both["file"])
    assert xs.sheet_names(both["book"]) == source.sheet_names()
    marks = {name: string_constant(value) for name, value in xs.markers(both["book"]).items()}
    assert marks == source.tool_sheets()
    assert sorted(marks.values()) == sorted(TOOL_KINDS)


def test_planned_roles_sheet_equals_the_files(both) -> None:
    """Right after planning, the roles sheet's cells equal those of the file planned by the command line."""
    name = "statmargin roles"
    file_cells = _file_cells(both["planned_file"], name)
    rows = both["planned_sheets"][name]
    bridge_cells = {(r, c): v for r, row in enumerate(rows) for c, v in enumerate(row) if not _empty(v)}
    assert _differences(file_cells, bridge_cells) == []


@pytest.mark.parametrize("kind", TOOL_KINDS)
def test_tool_sheet_cells_equal_the_files(both, kind) -> None:
    """Every cell of each tool sheet holds the value the file back end wrote (links compared as shown text)."""
    name = FileSource(both["file"]).tool_sheets()
    sheet = next(n for n, k in name.items() if k == kind)
    assert _differences(_file_cells(both["file"], sheet), _bridge_cells(both["book"], sheet)) == []


def _hex(colour: Any) -> str | None:
    rgb = getattr(colour, "rgb", None)
    return ("#" + rgb[-6:].upper()) if isinstance(rgb, str) and re.fullmatch(r"[0-9A-Fa-f]{6,8}", rgb) else None


@pytest.mark.parametrize("kind", TOOL_KINDS)
def test_formats_equal_the_files(both, kind) -> None:
    """Number format, bold, italic, wrap, fill, font colour and centring of each written cell match the file's."""
    names = FileSource(both["file"]).tool_sheets()
    sheet = next(n for n, k in names.items() if k == kind)
    ws = openpyxl.load_workbook(both["file"])[sheet]
    formats = xs.formats(xs.sheet(both["book"], sheet))
    problems = []
    for row in ws.iter_rows():
        for c in row:
            if c.style_id == 0 or isinstance(c, MergedCell):
                continue  # not written by statmargin (openpyxl styles the covered cells of a merge)
            got = formats.get((c.row - 1, c.column - 1), {})
            want = {
                "number_format": c.number_format,
                "font_bold": bool(c.font.b),
                "font_italic": bool(c.font.i),
                "wrap": bool(c.alignment.wrap_text),
                "fill": _hex(c.fill.fgColor) if c.fill.fill_type == "solid" else None,
                "font_color": _hex(c.font.color),
                "horizontal": c.alignment.horizontal or "general",
            }
            have = {
                "number_format": got.get("number_format", "General"),
                "font_bold": got.get("font_bold", False),
                "font_italic": got.get("font_italic", False),
                "wrap": got.get("wrap", False),
                "fill": got.get("fill"),
                "font_color": got.get("font_color"),
                "horizontal": got.get("horizontal", "general"),
            }
            if want != have:
                problems.append(f"{c.coordinate}: file {want} bridge {have}")
    assert problems == []


def _file_links(path: Path, sheet: str) -> dict[tuple[int, int], str]:
    ws = openpyxl.load_workbook(path)[sheet]
    return {(c.row - 1, c.column - 1): c.hyperlink.location for row in ws.iter_rows() for c in row if c.hyperlink}


def test_links_point_where_the_files_do(both) -> None:
    """Each link of the results and data-notes sheets jumps to the same place as in the file."""
    names = FileSource(both["file"]).tool_sheets()
    checked = 0
    for sheet in names:
        want = _file_links(both["file"], sheet)
        formulas = xs.formulas(xs.sheet(both["book"], sheet))
        got = {}
        for rc, formula in formulas.items():
            found = re.fullmatch(r'=HYPERLINK\("#((?:[^"]|"")*)","(?:[^"]|"")*"\)', formula)
            assert found, formula
            got[rc] = found.group(1).replace('""', '"')
        assert got == want, sheet
        checked += len(want)
    assert checked >= 6  # the five dirty wait cells and the shape-check link


def test_layout_equals_the_files(both) -> None:
    """Column widths, wrapped-row heights, merged ranges, dropdown lists and frozen panes match the file's."""
    names = FileSource(both["file"]).tool_sheets()
    wb = openpyxl.load_workbook(both["file"])
    for sheet in names:
        ws = wb[sheet]
        got = xs.layout(xs.sheet(both["book"], sheet))
        widths = {openpyxl.utils.column_index_from_string(k): d.width
                  for k, d in ws.column_dimensions.items() if d.customWidth}
        assert got["widths"] == pytest.approx(widths), sheet
        heights = {r: d.height for r, d in ws.row_dimensions.items() if d.customHeight}
        assert got["heights"] == pytest.approx(heights), sheet
        merged = sorted((m.min_row, m.min_col, m.max_row, m.max_col) for m in ws.merged_cells.ranges)
        assert sorted(got["merged"]) == merged, sheet
        file_lists = sorted(
            (str(v.sqref), [s.strip('"') for s in v.formula1.strip('"').split(",")])
            for v in ws.data_validations.dataValidation
        )
        bridge_lists = sorted(
            (f"{xs.column_letters(b[1])}{b[0]}:{xs.column_letters(b[3])}{b[2]}" if b[:2] != b[2:] else
             f"{xs.column_letters(b[1])}{b[0]}", values)
            for b, values, dropdown in got["validations"]
        )
        assert bridge_lists == file_lists, sheet
        if ws.freeze_panes:
            r, c = openpyxl.utils.cell.coordinate_to_tuple(ws.freeze_panes)
            frozen = xs.parse_address(got["frozen"])
            # The frozen area ends just above and left of the file's top-left unfrozen cell.
            assert (frozen[2] if frozen[2] < xs.MAX_ROWS else 0, frozen[3] if frozen[3] < xs.MAX_COLS else 0) == (r - 1, c - 1)
        else:
            assert got["frozen"] is None, sheet


def test_print_titles_match(both) -> None:
    """Rows and columns repeated on printed pages are named as in the file."""
    wb = openpyxl.load_workbook(both["file"])
    for sheet in FileSource(both["file"]).tool_sheets():
        ws = wb[sheet]
        names = xs.layout(xs.sheet(both["book"], sheet))["names"]
        want = ",".join(p for p in (ws.print_title_cols, ws.print_title_rows) if p)
        got = names.get("Print_Titles", "").lstrip("=")
        parts = [p.split("!", 1)[1] for p in got.split(",")] if got else []
        assert ",".join(parts).replace("$", "") == want.replace("$", ""), sheet


def _file_charts(path: Path, sheet: str) -> list[dict[str, Any]]:
    """The charts whose series point at ``sheet``, in part order, as written by the file back end."""
    charts = []
    prefix = "'" + sheet.replace("'", "''") + "'!"
    for entry in sorted(read_zip(path.read_bytes()), key=lambda e: int(re.sub(r"\D", "", e.name) or 0)):
        if not re.fullmatch(r"xl/charts/chart\d+\.xml", entry.name):
            continue
        root = ET.fromstring(entry.data())
        refs = [f.text or "" for f in root.iter(f"{C_NS}f")]
        if not refs or not all(r.startswith(prefix) for r in refs):
            continue  # the user's own chart on the data sheet
        title = "".join(t.text or "" for t in root.find(f"{C_NS}chart/{C_NS}title").iter(f"{A_NS}t"))
        series = [s.find(f"{C_NS}tx/{C_NS}v").text for s in root.iter(f"{C_NS}ser")]
        cats = [s.find(f"{C_NS}cat/{C_NS}strRef/{C_NS}f").text for s in root.iter(f"{C_NS}ser")]
        vals = [s.find(f"{C_NS}val/{C_NS}numRef/{C_NS}f").text for s in root.iter(f"{C_NS}ser")]
        charts.append({"title": title, "series": series, "categories": cats[0].split("!")[1],
                       "values": [v.split("!")[1] for v in vals]})
    return charts


def test_charts_match_the_files(both) -> None:
    """Each native chart has the file chart's title, series names, category labels and value ranges."""
    names = FileSource(both["file"]).tool_sheets()
    shape = next(n for n, k in names.items() if k == "shape")
    got = xs.layout(xs.sheet(both["book"], shape))["charts"]
    want = _file_charts(both["file"], shape)
    assert len(got) == len(want) >= 1

    def box(b: tuple[int, int, int, int]) -> str:
        return f"${xs.column_letters(b[1])}${b[0]}:${xs.column_letters(b[3])}${b[2]}"

    for chart, reference in zip(got, want, strict=True):
        assert chart["title"] == reference["title"]
        assert [name for name, _ in chart["series"]] == reference["series"]
        assert box(chart["x_values"]) == reference["categories"]
        r1, c1, r2, c2 = chart["source"]
        assert [box((r1, c, r2, c)) for c in range(c1, c2 + 1)] == reference["values"]
        assert chart["plot_by"] == "columns"


def test_the_run_ends_on_the_results_sheet_with_a_summary(both) -> None:
    """After Run the results sheet is the active one and the status bar says what was written; no box popped up."""
    state = xs.app_state(both["book"])
    assert state["active"] == "statmargin results"
    assert state["status_bar"] == "statmargin: 1 analysis written to 'statmargin results'; save the workbook to keep them."
    assert state["alerts"] == []
    assert state["screen_updating"] is True and state["calculation"] == "automatic"


def test_data_sheet_untouched(both) -> None:
    """The user's data sheet keeps every value, its table and nothing new is written there."""
    original = xs.load(both["planned_file"].parent / "visits.xlsx")
    assert xs.values(xs.sheet(both["book"], NEWCOMER_SHEET)) == xs.values(xs.sheet(original, NEWCOMER_SHEET))
    assert xs.formats(xs.sheet(both["book"], NEWCOMER_SHEET)) == {}
