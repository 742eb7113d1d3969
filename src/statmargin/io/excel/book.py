"""The open Excel workbook as a workbook source and sink, through xlwings' open-source core.

``ExcelBook`` implements the same ``WorkbookSource`` and ``WorkbookSink``
protocol as the file back end, so ``plan_workbook`` and ``run_workbook`` run
unchanged on the workbook the user has open: only reading and writing differ.

Reading: each sheet's used range is fetched in blocks of rows, one
``Range.options(ndim=2, err_to_str=True).value`` call per block (never a call
per cell); Excel error values arrive as their text (``#N/A``) so the reader
notes them as it does for files.

Writing: each new tool sheet is added in the place of the tool sheet it
replaces (and later takes its visibility, hidden or very hidden), or after the
last sheet for a kind the workbook does not have yet, and filled completely
(``render``) before any earlier tool sheet is touched; only then are the
replaced sheets deleted and the new ones given their final names and markers.
If Excel refuses anything while the new sheets are filled, they are deleted
again and the workbook keeps its earlier tool sheets. Nothing is saved: the
user saves the workbook as usual.

The tool-sheet marker is the same as in files: a sheet-scoped defined name
``statmargin_sheet`` whose value is the sheet's kind (``="results"``), added
with ``Sheet.names.add``. xlwings cannot hide a name, so through the bridge it
is visible in Excel's Name Manager (files written by the command line hide it).
"""

from __future__ import annotations

import decimal
from collections.abc import Iterable, Iterator
from typing import TYPE_CHECKING, Any

from ...errors import OptionError, StatmarginError, WorkbookError, WriteError
from ...sheets.layout import print_names
from ...sheets.model import SheetModel
from ...words import excel_messages
from ..placement import place
from ..protocol import (
    TOOL_SHEET_MARKER,
    CellIssues,
    MergedRange,
    TableRange,
    WorkbookBackend,
    WriteReport,
    resolve_sheet_name,
    string_constant,
)
from . import hidden, render
from .render import CELLS_PER_CALL

_TEMP_PREFIX = "~statmargin "


def _brief(exc: BaseException) -> str:
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 160 else text[:157] + "..."


def _visible(value: Any) -> bool:
    """Whether ``Sheet.visible`` means shown: Windows reports -1, 0 or 2 (very hidden)."""
    return value is True or (not isinstance(value, bool) and value == -1)


class ExcelBook:
    """A workbook source and sink over an open xlwings ``Book``.

    Parameters
    ----------
    book : xlwings.Book
        The workbook, usually ``xlwings.Book.caller()``.
    """

    def __init__(self, book: Any) -> None:
        self.book = book
        self._sheets: dict[str, Any] | None = None
        self._marks: dict[str, str] | None = None
        self.notes: list[str] = []

    # -- source -----------------------------------------------------------------
    @property
    def display_name(self) -> str:
        """The workbook's name as Excel shows it (never a path), for messages."""
        return str(self.book.name)


    def _sheet_objects(self) -> dict[str, Any]:
        if self._sheets is None:
            try:
                self._sheets = {str(s.name): s for s in self.book.sheets}
            except Exception as exc:  # noqa: BLE001 - COM and AppleScript errors vary
                raise WorkbookError(excel_messages.cannot_read_book(self.display_name, _brief(exc))) from None
        return self._sheets

    def _sheet(self, name: str) -> Any:
        return self._sheet_objects()[self.resolve_sheet(name)]

    def resolve_sheet(self, sheet: str) -> str:
        """The workbook's own spelling of ``sheet`` (``protocol.resolve_sheet_name``).

        Raises
        ------
        SheetNotFoundError
            No worksheet (or several) fits; the message lists the sheets.
        """
        return resolve_sheet_name(list(self._sheet_objects()), sheet, self.display_name)

    def cell_issues(
        self,
        sheet: str,
        *,
        first_row: int = 1,
        last_row: int | None = None,
        columns: Iterable[int] | None = None,
    ) -> CellIssues:
        """Nothing to add: Excel gives error values as their text and every formula's current value."""
        self.resolve_sheet(sheet)
        return {}

    def hidden_rows(self, sheet: str) -> frozenset[int] | None:
        """Rows of the used range that a filter or the user hid (height 0); None when Excel cannot say."""
        try:
            xsheet = self._sheet(sheet)
            used = xsheet.used_range
            top = int(used.row)
            return hidden.hidden_rows(xsheet, top, top + int(used.shape[0]) - 1)
        except Exception:  # noqa: BLE001 - the run then says it could not tell
            return None

    def sheet_names(self) -> list[str]:
        """Worksheet names in workbook order (Excel's ``Worksheets``: chart sheets are not listed)."""
        return list(self._sheet_objects())

    def hidden_sheet_names(self) -> list[str]:
        """Worksheets the user cannot see (hidden or very hidden)."""
        return [name for name, sheet in self._sheet_objects().items() if not _visible(sheet.visible)]

    def close(self) -> None:
        """Nothing to release: the workbook stays open in Excel."""

    def iter_rows(self, sheet: str) -> Iterator[list[Any]]:
        """Rows of cell values from row 1 and column A; blanks are None."""
        first_col, rows = self.iter_rows_at(sheet)
        if first_col == 0:
            return rows
        pad = [None] * first_col
        return (pad + row for row in rows)

    def last_row(self, sheet: str) -> int:
        """1-based last row of the sheet's used range (0 when it cannot be told; a size hint only)."""
        try:
            used = self._sheet(sheet).used_range
            return int(used.row) + int(used.shape[0]) - 1
        except Exception:  # noqa: BLE001 - a hint: the reader grows its arrays when it is low
            return 0

    def release(self) -> None:
        """Nothing to free: the open workbook holds the cells."""

    def iter_rows_at(self, sheet: str) -> tuple[int, Iterator[list[Any]]]:
        """Rows from row 1, starting at the used range's first column; returns (that column, rows).

        Notes
        -----
        Rows above the used range come as empty lists. The used range is read in
        blocks of about ``CELLS_PER_CALL`` cells, one xlwings call each, so a
        sheet of 100,000 rows and 5 columns takes 2 reads; only one block is in
        memory at a time.
        """
        xsheet = self._sheet(sheet)
        try:
            used = xsheet.used_range
            top, left = int(used.row), int(used.column)
            n_rows, n_cols = (int(n) for n in used.shape)
            if n_rows == 1 and n_cols == 1 and used.value is None:
                return 0, iter(())
        except Exception as exc:  # noqa: BLE001
            raise WorkbookError(excel_messages.cannot_read_sheet(sheet, self.display_name, _brief(exc))) from None
        return left - 1, self._blocks(xsheet, sheet, top, left, n_rows, n_cols)

    def _blocks(
        self, xsheet: Any, name: str, top: int, left: int, n_rows: int, n_cols: int
    ) -> Iterator[list[Any]]:
        for _ in range(top - 1):
            yield []
        step = max(1, CELLS_PER_CALL // n_cols)
        for start in range(top, top + n_rows, step):
            end = min(top + n_rows - 1, start + step - 1)
            try:
                block = (
                    xsheet.range((start, left), (end, left + n_cols - 1))
                    .options(ndim=2, err_to_str=True)
                    .value
                )
            except Exception as exc:  # noqa: BLE001
                raise WorkbookError(excel_messages.cannot_read_sheet(name, self.display_name, _brief(exc))) from None
            if decimal.Decimal in {type(v) for row in block for v in row}:
                # Currency cells arrive as Decimal through COM; the reader wants numbers.
                block = [[float(v) if isinstance(v, decimal.Decimal) else v for v in row] for row in block]
            yield from block

    def tables(self, sheet: str) -> list[TableRange]:
        """Excel tables on a sheet, header row included, totals row left out."""
        found = []
        try:
            for table in self._sheet(sheet).tables:
                if not table.show_headers:
                    continue
                area = table.range
                top, left = int(area.row), int(area.column)
                n_rows, n_cols = (int(n) for n in area.shape)
                last = top + n_rows - 1 - (1 if table.show_totals else 0)
                found.append(TableRange(str(table.name), top, left - 1, last, left + n_cols - 2))
        except StatmarginError:
            raise
        except Exception as exc:  # noqa: BLE001
            raise WorkbookError(excel_messages.cannot_read_sheet(sheet, self.display_name, _brief(exc))) from None
        return found

    def merged_ranges(self, sheet: str) -> list[MergedRange]:
        """Merged ranges as (first_row, first_col, last_row, last_col), 0-based, inclusive.

        Notes
        -----
        xlwings has no call that lists merged areas, so they are found by
        halving: a block whose ``merge_cells`` is False holds no merged cell and
        is skipped in one call; otherwise it is split in two until single cells
        are reached, and a merged cell's ``merge_area`` gives the whole area. A
        sheet without merges costs one call; each merged area about
        2 log2(size of the used range) calls.
        """
        xsheet = self._sheet(sheet)
        try:
            used = xsheet.used_range
            top, left = int(used.row), int(used.column)
            n_rows, n_cols = (int(n) for n in used.shape)
            found: list[MergedRange] = []
            self._find_merges(xsheet, (top, left, top + n_rows - 1, left + n_cols - 1), found)
        except Exception as exc:  # noqa: BLE001
            raise WorkbookError(excel_messages.cannot_read_sheet(sheet, self.display_name, _brief(exc))) from None
        return sorted(found)

    def _find_merges(self, xsheet: Any, box: tuple[int, int, int, int], found: list[MergedRange]) -> None:
        r1, c1, r2, c2 = box
        for a1, b1, a2, b2 in found:  # inside an area found already: nothing new here
            if a1 <= r1 - 1 and r2 - 1 <= a2 and b1 <= c1 - 1 and c2 - 1 <= b2:
                return
        if xsheet.range((r1, c1), (r2, c2)).merge_cells is False:
            return
        if r1 == r2 and c1 == c2:
            area = xsheet.range((r1, c1)).merge_area
            top, left = int(area.row), int(area.column)
            n_rows, n_cols = (int(n) for n in area.shape)
            span = (top - 1, left - 1, top + n_rows - 2, left + n_cols - 2)
            if span not in found and (n_rows > 1 or n_cols > 1):
                found.append(span)
            return
        if r2 - r1 >= c2 - c1:
            mid = (r1 + r2) // 2
            halves = ((r1, c1, mid, c2), (mid + 1, c1, r2, c2))
        else:
            mid = (c1 + c2) // 2
            halves = ((r1, c1, r2, mid), (r1, mid + 1, r2, c2))
        for half in halves:
            self._find_merges(xsheet, half, found)

    def tool_sheets(self) -> dict[str, str]:
        """Sheets carrying the ``statmargin_sheet`` name: sheet name -> kind."""
        if self._marks is None:
            marks: dict[str, str] = {}
            try:
                for name, sheet in self._sheet_objects().items():
                    for defined in sheet.names:
                        if str(defined.name).rsplit("!", 1)[-1] == TOOL_SHEET_MARKER:
                            marks[name] = string_constant(defined.refers_to)
            except Exception as exc:  # noqa: BLE001
                raise WorkbookError(excel_messages.cannot_read_book(self.display_name, _brief(exc))) from None
            self._marks = marks
        return dict(self._marks)

    # -- sink -----------------------------------------------------------------------
    def check(self, out: str | None = None) -> str | None:
        """Refuse a separate output file: from inside Excel the open workbook is written."""
        if out:
            raise OptionError(excel_messages.no_out_file())
        return None

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """See ``WorkbookSink.write_sheets``; here, into the open workbook (``out`` must be None).

        Raises
        ------
        WriteError
            Excel refused a change; sheets added by this write were removed again.
        """
        self.check(out)
        if not models:
            return WriteReport(path=self.display_name, sheets={}, renamed=[], replaced=[])
        sheets = self._sheet_objects()
        names = list(sheets)
        marks = self.tool_sheets()
        placement = place([(n, marks.get(n)) for n in names], models)
        predecessors = {marks[names[i]]: sheets[names[i]] for i in placement.removed if names[i] in marks}
        states = {kind: sheet.visible for kind, sheet in predecessors.items()}
        app = self.book.app
        settings = _pause(app)
        created: list[Any] = []
        try:
            base_size = self._base_font_size(sheets)
            last = sheets[names[-1]] if names else None
            temp_taken = {n.casefold() for n in names}
            for model in models:
                temp = _temporary_name(temp_taken)
                old = predecessors.get(model.kind)
                if old is not None:  # in the replaced sheet's place, so no sheet changes position
                    new = self.book.sheets.add(name=temp, before=old)
                elif last is not None:
                    new = self.book.sheets.add(name=temp, after=last)
                    last = new
                else:
                    new = self.book.sheets.add(name=temp)
                    last = new
                created.append(new)
                render.render(new, model, placement.kind_to_name, base_font_size=base_size, on_note=self.notes.append)
        except StatmarginError:
            self._undo(created)
            _resume(app, settings)
            raise
        except Exception as exc:  # noqa: BLE001
            self._undo(created)
            _resume(app, settings)
            raise WriteError(excel_messages.write_refused(_brief(exc))) from None
        try:
            for index in placement.removed:
                sheets[names[index]].delete()
            for index in placement.unmarked:
                for defined in sheets[names[index]].names:
                    if str(defined.name).rsplit("!", 1)[-1] == TOOL_SHEET_MARKER:
                        defined.delete()
            for model, new in zip(models, created, strict=True):
                final = placement.final[model.kind]
                new.name = final
                new.names.add(TOOL_SHEET_MARKER, f'="{model.kind}"')
                for name, ref in print_names(model, final):  # Print_Titles, Print_Area: Excel's own names
                    new.names.add(name, "=" + ref)
            shown = [new for model, new in zip(models, created, strict=True) if not model.hidden]
            (shown or created)[0].activate()
            for model, new in zip(models, created, strict=True):
                if model.kind in states:
                    if not _visible(states[model.kind]):
                        new.visible = states[model.kind]  # hidden (0) or very hidden (2), as the user left it
                elif model.hidden:
                    new.visible = False  # a sheet the tool reads back on the next run, out of the user's way
        except Exception as exc:  # noqa: BLE001
            raise WriteError(excel_messages.finish_refused(_brief(exc))) from None
        finally:
            self._sheets = None
            self._marks = None
            _resume(app, settings)
        return WriteReport(
            path=self.display_name,
            sheets=dict(placement.final),
            renamed=list(placement.renamed),
            replaced=[names[i] for i in placement.removed],
        )

    def _base_font_size(self, sheets: dict[str, Any]) -> float:
        """The workbook's default font size, read from A1 of its first sheet."""
        if not sheets:
            return render.DEFAULT_BASE_FONT_SIZE
        size = next(iter(sheets.values())).range((1, 1)).font.size
        return float(size) if isinstance(size, int | float) and size > 0 else render.DEFAULT_BASE_FONT_SIZE

    def _undo(self, created: list[Any]) -> None:
        for sheet in reversed(created):
            try:
                sheet.delete()
            except Exception:  # noqa: BLE001, S112 - best effort; the original error is reported
                continue
        self._sheets = None


def _temporary_name(taken: set[str]) -> str:
    n = 1
    while f"{_TEMP_PREFIX}{n}".casefold() in taken:
        n += 1
    name = f"{_TEMP_PREFIX}{n}"
    taken.add(name.casefold())
    return name


def _pause(app: Any) -> tuple[Any, Any]:
    """Turn screen updating and automatic calculation off while writing; returns the old settings."""
    try:
        old = (app.screen_updating, app.calculation)
        app.screen_updating = False
        app.calculation = "manual"
        return old
    except Exception:  # noqa: BLE001 - a host that cannot pause still writes correctly
        return (None, None)


def _resume(app: Any, settings: tuple[Any, Any]) -> None:
    screen, calculation = settings
    try:
        if calculation is not None:
            app.calculation = calculation
        if screen is not None:
            app.screen_updating = screen
    except Exception:  # noqa: BLE001
        pass


if TYPE_CHECKING:  # mypy checks here that the bridge meets both protocols

    def _is_a_backend(book: ExcelBook) -> WorkbookBackend:
        return book
