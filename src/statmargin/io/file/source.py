"""Read access to a workbook file: python-calamine for cell values, small XML parts for the rest.

``FileSource`` implements ``protocol.WorkbookSource`` for every format
python-calamine opens (.xlsx, .xlsm, .xlsb, .xls, .ods). Cell values stream from
calamine. What calamine does not expose is read from the small parts of an
.xlsx/.xlsm package with ``zipfile`` and ``xml.etree``: Excel tables
(``xl/tables/tableN.xml``) and defined names (``xl/workbook.xml``).

calamine returns an empty cell both for Excel error values (``#N/A``...) and for
formulas that were never calculated (no cached value). ``cell_issues`` finds those
cells with a chunked byte scan of the sheet XML: chunks with no ``<f>`` element
and no ``t="e"`` attribute (the usual case for exported data) are skipped after
one C-level regex search, so the scan costs about one extra decompression of the
sheet. Only .xlsx/.xlsm files get this scan; in other formats such cells read as
blanks.

Every failure to open or read the file becomes a one-line ``WorkbookError``.
"""

from __future__ import annotations

import os
import posixpath
import re
import zipfile
from collections.abc import Callable, Iterable, Iterator
from typing import Any
from xml.etree import ElementTree as ET
from xml.sax.saxutils import unescape

from ... import stages
from ...errors import WorkbookError
from ...words import file_messages as messages
from ..addresses import column_index
from ..protocol import ERROR_ISSUE as ERROR_ISSUE  # re-exported from the protocol
from ..protocol import NO_VALUE_ISSUE as NO_VALUE_ISSUE
from ..protocol import (
    TOOL_SHEET_MARKER,
    CellIssues,
    MergedRange,
    TableRange,
    resolve_sheet_name,
    string_constant,
)
from . import guard
from .hidden_rows import hidden_rows_in_block

_REL_ID_SUFFIX = "}id"
_STRICT_NS = b"http://purl.oclc.org/ooxml/spreadsheetml/main"
_SCAN_CHUNK = 1 << 22  # 4 MiB of decompressed sheet XML per read

# Where a formula element (``<f``/``<x:f`` followed by ``>``, ``/`` or a space) or an
# error-typed cell (``="e"``) may be: found with vectorised byte comparisons, so a
# block of plain values costs a few passes at memory speed, and only the cells
# around the hits are parsed. A false hit (e.g. ``<formula1>`` in a validation
# rule, or ``="e"`` in a text) only costs parsing one more cell.
_TAG_OPEN, _PREFIX_END, _F, _E, _EQUALS = (ord(c) for c in "<:fe=")
_QUOTES = (ord('"'), ord("'"))
_AFTER_NAME = tuple(ord(c) for c in ">/ \t\r\n")
_CELL_OPEN = re.compile(rb"<(?:\w+:)?c[\s/>]")
_WALK_BACK = 64  # tags looked at before a hint to find the cell that holds it
# One cell element: attributes, then either self-closing or a body up to </c>.
_CELL = re.compile(rb"<(?:\w+:)?c(\s[^>]*?)?(?:/>|>(.*?)</(?:\w+:)?c>)", re.DOTALL)
_ATTR_R = re.compile(rb"\sr=[\"']([A-Za-z]+)(\d+)[\"']")
_ATTR_T = re.compile(rb"\st=[\"'](\w+)[\"']")
_FORMULA = re.compile(rb"<(?:\w+:)?f(?:\s[^>]*)?(?:/>|>(.*?)</(?:\w+:)?f>)", re.DOTALL)
_VALUE = re.compile(rb"<(?:\w+:)?v(?:\s[^>]*)?(?:/>|>(.*?)</(?:\w+:)?v>)", re.DOTALL)
_ROW_END = re.compile(rb"</(?:\w+:)?row>")
_REF = re.compile(r"^\$?([A-Za-z]+)\$?(\d+)(?::\$?([A-Za-z]+)\$?(\d+))?$")


def _local(tag: str) -> str:
    """Tag name without its XML namespace."""
    return tag.rsplit("}", 1)[-1]


def _rel_id(element: ET.Element) -> str | None:
    """The relationship id attribute (r:id) of an element, whatever its namespace."""
    for key, value in element.attrib.items():
        if key.endswith(_REL_ID_SUFFIX):
            return value
    return None


def _resolve(base_dir: str, target: str) -> str:
    """Package path of a relationship target relative to the part's folder."""
    if target.startswith("/"):
        return target.lstrip("/")
    return posixpath.normpath(posixpath.join(base_dir, target))


def parse_ref(ref: str) -> tuple[int, int, int, int]:
    """Bounds of an A1 range ``"B3:D10"`` as (first_row, first_col, last_row, last_col).

    Rows are 1-based and columns 0-based, as in ``protocol.TableRange``.
    """
    match = _REF.match(ref.strip())
    if not match:
        raise ValueError(ref)  # callers skip a table whose range cannot be read
    c1, r1, c2, r2 = match.groups()
    c2 = c2 or c1
    r2 = r2 or r1
    return int(r1), column_index(c1), int(r2), column_index(c2)


class FileSource:
    """Cell values and workbook structure of a spreadsheet file.

    Parameters
    ----------
    path : str or os.PathLike
        The workbook file. It is opened read-only and never written.

    Notes
    -----
    The calamine sheet of the most recent ``iter_rows`` call is cached, because
    calamine loads a whole sheet into memory when asked for it and the reader
    may ask twice (header detection, then data).
    """

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.path = os.fspath(path)
        self.display = os.path.basename(self.path) or self.path
        self._book = _open_book(self.path, self.display)
        self._meta = list(self._book.sheets_metadata)
        self._zip_parts: dict[str, str] | None = None  # sheet name -> XML part path
        self._cached: tuple[str, Any] | None = None
        self._hidden: dict[str, frozenset[int]] = {}  # sheet -> hidden rows, found by the cell scan

    # -- lifetime -------------------------------------------------------------
    def close(self) -> None:
        """Release the file."""
        self._cached = None
        try:
            self._book.close()
        except Exception:  # noqa: BLE001 - already closed is fine
            pass

    def __enter__(self) -> FileSource:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def display_name(self) -> str:
        """The file name without its folder, for messages."""
        return self.display

    # -- WorkbookSource ----------------------------------------------------------
    def sheet_names(self) -> list[str]:
        """Visible and hidden worksheet names, in workbook order (chart sheets left out)."""
        import python_calamine as pc

        return [m.name for m in self._meta if m.typ == pc.SheetTypeEnum.WorkSheet]

    def hidden_sheet_names(self) -> list[str]:
        """Worksheets the user cannot see (hidden or very hidden)."""
        import python_calamine as pc

        return [m.name for m in self._meta if m.visible != pc.SheetVisibleEnum.Visible]

    def resolve_sheet(self, sheet: str) -> str:
        """The workbook's own spelling of ``sheet``; case is ignored when the match is unique.

        Raises
        ------
        SheetNotFoundError
            If no worksheet has that name; the message lists the sheet names.
        """
        return resolve_sheet_name(self.sheet_names(), sheet, self.display)

    def iter_rows(self, sheet: str) -> Iterator[list[Any]]:
        """Rows of raw cell values from row 1 and column A; blanks are ``''``."""
        first_col, rows = self.iter_rows_at(sheet)
        rows = _guarded(rows, self.display)
        if first_col == 0:
            return rows
        pad = [""] * first_col
        return (pad + row for row in rows)

    def iter_rows_at(self, sheet: str) -> tuple[int, Iterator[list[Any]]]:
        """Rows from row 1, starting at the first used column; returns (that column, rows).

        Notes
        -----
        This is the fast path the reader uses: calamine yields rows that start at
        the sheet's first used column, so no padding is done per row, and the
        iterator is calamine's own (no Python frame per row). The caller turns
        exceptions raised while iterating into ``WorkbookError``.
        """
        calamine_sheet = self._sheet(sheet)
        start = calamine_sheet.start
        if start is None:
            return 0, iter(())
        return int(start[1]), iter(calamine_sheet.iter_rows())

    def release(self) -> None:
        """Free the cells of the sheet loaded last; a later read loads it again."""
        self._cached = None

    def last_row(self, sheet: str) -> int:
        """1-based number of the last row holding a value (0 for an empty sheet)."""
        end = self._sheet(sheet).end
        return 0 if end is None else int(end[0]) + 1

    def tables(self, sheet: str) -> list[TableRange]:
        """Excel tables on a sheet, in the order the sheet lists them.

        Notes
        -----
        Bounds include the header row and exclude a totals row. Tables saved
        without a header row are left out, since their columns have no names in
        the cells. Only .xlsx/.xlsm packages have tables; other formats give [].
        """
        sheet = self.resolve_sheet(sheet)
        part = self._sheet_parts().get(sheet)
        if part is None:
            return []
        folder, name = posixpath.split(part)
        rels = self._read_xml(posixpath.join(folder, "_rels", name + ".rels"))
        if rels is None:
            return []
        found: list[TableRange] = []
        for rel in rels:
            if not rel.get("Type", "").endswith("/table"):
                continue
            root = self._read_xml(_resolve(folder, rel.get("Target", "")))
            if root is None or _local(root.tag) != "table":
                continue
            if root.get("headerRowCount", "1") == "0":
                continue
            try:
                r1, c1, r2, c2 = parse_ref(root.get("ref", ""))
            except ValueError:
                continue
            r2 -= int(root.get("totalsRowCount", "0") or 0)
            label = root.get("displayName") or root.get("name") or ""
            found.append(
                TableRange(name=label, first_row=r1, first_col=c1, last_row=r2, last_col=c2)
            )
        return found

    def merged_ranges(self, sheet: str) -> list[MergedRange]:
        """Merged ranges as (first_row, first_col, last_row, last_col), 0-based, inclusive."""
        ranges = self._sheet(sheet).merged_cell_ranges
        if not ranges:
            return []
        return [(int(a[0]), int(a[1]), int(b[0]), int(b[1])) for a, b in ranges]

    def tool_sheets(self) -> dict[str, str]:
        """Sheets carrying the ``statmargin_sheet`` defined name: sheet name -> kind.

        Notes
        -----
        ``localSheetId`` counts every sheet in ``<sheets>`` (chart sheets too), so it
        is mapped through the workbook's own list rather than ``sheet_names``.
        Only .xlsx/.xlsm packages carry the marker; other formats give {}.
        """
        root = self._read_xml("xl/workbook.xml")
        if root is None:
            return {}
        order = [el.get("name", "") for el in root.iter() if _local(el.tag) == "sheet"]
        marked: dict[str, str] = {}
        for el in root.iter():
            if _local(el.tag) != "definedName" or el.get("name") != TOOL_SHEET_MARKER:
                continue
            local_id = el.get("localSheetId")
            if local_id is None or not local_id.isdigit() or int(local_id) >= len(order):
                continue
            marked[order[int(local_id)]] = string_constant(el.text or "")
        return marked

    def cell_issues(
        self,
        sheet: str,
        *,
        first_row: int = 1,
        last_row: int | None = None,
        columns: Iterable[int] | None = None,
    ) -> CellIssues:
        """See ``WorkbookSource.cell_issues``; here, the cells calamine reads as empty.

        Notes
        -----
        A formula counts as uncalculated when its cell has no ``<v>`` or an empty
        one, unless the cell is typed as a string (an empty text result is a real
        value). Cells without an ``r`` address cannot be located and are skipped.
        """
        sheet = self.resolve_sheet(sheet)
        part = self._sheet_parts().get(sheet)
        if part is None:
            return {}
        wanted = None if columns is None else set(columns)
        found: CellIssues = {}
        hidden: set[int] = set()
        try:
            with zipfile.ZipFile(self.path) as archive, archive.open(part) as stream:
                tail = b""
                while True:
                    chunk = stream.read(_SCAN_CHUNK)
                    block = tail + chunk
                    if chunk:
                        cut = _last_row_end(block)
                        if cut < 0:  # one very long row: keep reading
                            tail = block
                            continue
                        block, tail = block[:cut], block[cut:]
                    _scan_block(block, found, first_row, last_row, wanted)
                    hidden_rows_in_block(block, hidden)
                    if not chunk:
                        break
        except guard.ZIP_READ_ERRORS as exc:
            raise WorkbookError(messages.sheet_damaged(self.display, sheet, _one_line(exc))) from None
        self._hidden[sheet] = frozenset(hidden)
        return found

    def hidden_rows(self, sheet: str) -> frozenset[int] | None:
        """1-based rows a filter or the user hid; None for a file type that does not say (not .xlsx/.xlsm).

        The search shares the pass of ``cell_issues`` over the sheet's XML, so after
        that call the answer costs nothing.
        """
        sheet = self.resolve_sheet(sheet)
        if sheet not in self._hidden:
            if self._sheet_parts().get(sheet) is None:
                return None
            self.cell_issues(sheet)
        return self._hidden[sheet]

    # -- internals ------------------------------------------------------------------
    def _sheet(self, sheet: str) -> Any:
        sheet = self.resolve_sheet(sheet)
        if self._cached is not None and self._cached[0] == sheet:
            return self._cached[1]
        self._cached = None  # free the previous sheet before loading the next
        part = self._sheet_parts().get(sheet)
        if part is not None:  # calamine holds the whole span of a sheet: refuse a runaway one first
            guard.check_sheet_extent(self.path, part, self.display, sheet)
        try:
            with stages.stage("read.load"):
                loaded = self._book.get_sheet_by_name(sheet)
        except BaseException as exc:  # calamine raises several types, and panics on some damage
            _reraise_interrupts(exc)
            raise WorkbookError(_read_failure(exc, self.display, messages.sheet_unreadable, sheet)) from None
        self._cached = (sheet, loaded)
        return loaded

    def _is_package(self) -> bool:
        return zipfile.is_zipfile(self.path)

    def _read_xml(self, part: str) -> ET.Element | None:
        """A small package part parsed, or None when absent or not a package."""
        if not self._is_package():
            return None
        try:
            with zipfile.ZipFile(self.path) as archive:
                if part not in archive.NameToInfo:
                    return None
                data = archive.read(part)
            return ET.fromstring(data)
        except (*guard.ZIP_READ_ERRORS, ET.ParseError, LookupError):
            # A damaged or oddly encoded part (an unknown XML encoding raises LookupError):
            # treat it as absent; reading the cells then reports what is wrong.
            return None

    def _sheet_parts(self) -> dict[str, str]:
        """Worksheet name -> path of its XML part inside the package."""
        if self._zip_parts is not None:
            return self._zip_parts
        parts: dict[str, str] = {}
        book = self._read_xml("xl/workbook.xml")
        rels = self._read_xml("xl/_rels/workbook.xml.rels")
        if book is not None and rels is not None:
            targets = {rel.get("Id"): rel.get("Target", "") for rel in rels}
            for el in book.iter():
                if _local(el.tag) != "sheet":
                    continue
                target = targets.get(_rel_id(el))
                if target:
                    parts[el.get("name", "")] = _resolve("xl", target)
        self._zip_parts = parts
        return parts


def _open_book(path: str, display: str) -> Any:
    """Open with calamine, turning every failure into a one-line WorkbookError."""
    import python_calamine as pc

    if guard.check_file(path) is guard.FileKind.PACKAGE and _is_strict(path):
        raise WorkbookError(messages.strict_open_xml(display))
    try:
        return pc.CalamineWorkbook.from_path(path)
    except pc.PasswordError:
        raise WorkbookError(messages.encrypted(display)) from None
    except BaseException as exc:  # calamine raises several types, and panics on some damage
        _reraise_interrupts(exc)
        raise WorkbookError(_read_failure(exc, display, messages.could_not_open)) from None


def _reraise_interrupts(exc: BaseException) -> None:
    """Let Ctrl+C and exits through; everything else from calamine is a damaged file."""
    if isinstance(exc, (KeyboardInterrupt, SystemExit, GeneratorExit)):
        raise exc


def _read_failure(exc: BaseException, display: str, message: Callable[..., str], *args: str) -> str:
    """The one-line message for a calamine failure; a part larger than declared is named as such."""
    detail = _one_line(exc)
    if "larger than its declared" in detail:  # the zip reader stopped a lying part (zip bomb)
        return messages.larger_than_declared(display)
    if "unrecognized entity" in detail:  # a DOCTYPE's entity (XXE, entity expansion), never expanded
        return messages.entities_refused(display)
    return message(*args, display, detail)


def _is_strict(path: str) -> bool:
    """Whether the package's workbook part is Strict Open XML (ECMA-376 Part 1, strict namespaces)."""
    try:
        with zipfile.ZipFile(path) as archive:
            names = {n.casefold(): n for n in archive.namelist()}
            part = names.get("xl/workbook.xml")
            if part is None:
                return False
            with archive.open(part) as stream:
                head = stream.read(4096)
    except guard.ZIP_READ_ERRORS:
        return False  # calamine then says what is wrong
    return _STRICT_NS in head


def _guarded(rows: Iterator[list[Any]], display: str) -> Iterator[list[Any]]:
    """Pass rows through, turning a read failure part-way into a WorkbookError."""
    try:
        yield from rows
    except BaseException as exc:  # calamine raises several types, and panics on some damage
        _reraise_interrupts(exc)
        raise WorkbookError(_read_failure(exc, display, messages.damaged_part_way)) from None


def _one_line(exc: BaseException) -> str:
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text[:200]


def _last_row_end(block: bytes) -> int:
    """Offset just past the last ``</row>`` (any namespace prefix) in the block, or -1."""
    pos = block.rfind(b"row>")
    while pos >= 0:
        start = block.rfind(b"<", 0, pos)
        if start >= 0 and _ROW_END.fullmatch(block, start, pos + 4):
            return pos + 4
        pos = block.rfind(b"row>", 0, pos)
    return -1


def _scan_block(
    block: bytes,
    found: dict[tuple[int, int], tuple[str, str]],
    first_row: int,
    last_row: int | None,
    wanted: set[int] | None,
) -> None:
    """Record error cells and formulas without a cached value in one block of sheet XML.

    Notes
    -----
    Only the cells holding a hint (``_ISSUE_HINTS``) are parsed, so a block of
    plain values costs a few substring searches.
    """
    for cell in _hinted_cells(block):
        attrs = cell.group(1) or b""
        body = cell.group(2) or b""
        type_match = _ATTR_T.search(attrs)
        cell_type = type_match.group(1) if type_match else b"n"
        formula = _FORMULA.search(body) if body else None
        if cell_type != b"e" and formula is None:
            continue
        ref = _ATTR_R.search(attrs)
        if ref is None:
            continue
        row = int(ref.group(2))
        if row < first_row or (last_row is not None and row > last_row):
            continue
        col = column_index(ref.group(1).decode("ascii"))
        if wanted is not None and col not in wanted:
            continue
        value = _VALUE.search(body) if body else None
        value_text = (value.group(1) or b"") if value else b""
        if cell_type == b"e" and value_text:
            found[(row, col)] = (ERROR_ISSUE, _text(value_text))
        elif (
            formula is not None and not value_text and cell_type not in (b"str", b"s", b"inlineStr")
        ):
            formula_text = _text(formula.group(1) or b"") or "(shared formula)"
            found[(row, col)] = (NO_VALUE_ISSUE, "=" + formula_text)


def _hint_positions(block: bytes) -> list[int]:
    """Offsets in the block where a formula element or an error type attribute may start."""
    import numpy as np

    data = np.frombuffer(block, dtype=np.uint8)
    # One pass per letter, then the few neighbours of each hit are checked.
    f_at = np.flatnonzero(data[1:-1] == _F) + 1
    before, after = data[f_at - 1], data[f_at + 1]
    ends = np.zeros(f_at.shape, dtype=bool)
    for byte in _AFTER_NAME:
        ends |= after == byte
    formula = f_at[((before == _TAG_OPEN) | (before == _PREFIX_END)) & ends]
    e_at = np.flatnonzero(data[2:-1] == _E) + 2
    before, after = data[e_at - 1], data[e_at + 1]
    quoted = ((before == _QUOTES[0]) | (before == _QUOTES[1])) & (after == before)
    error = e_at[quoted & (data[e_at - 2] == _EQUALS)]
    return sorted(formula.tolist() + error.tolist())


def _hinted_cells(block: bytes) -> Iterator[re.Match[bytes]]:
    """The cell elements that hold a formula or error hint, in document order."""
    starts: set[int] = set()
    for pos in _hint_positions(block):
        start = _cell_start(block, pos)
        if start >= 0:
            starts.add(start)
    for start in sorted(starts):
        cell = _CELL.match(block, start)
        if cell is not None:
            yield cell


def _cell_start(block: bytes, pos: int) -> int:
    """Offset of the ``<c`` tag of the cell around ``pos`` (-1 if none is near)."""
    at = block.rfind(b"<", 0, pos + 1)
    for _ in range(_WALK_BACK):
        if at < 0 or _CELL_OPEN.match(block, at):
            return at
        at = block.rfind(b"<", 0, at)
    return -1


def _text(raw: bytes) -> str:
    return unescape(raw.decode("utf-8", "replace"), {"&quot;": '"', "&apos;": "'"}).strip()
