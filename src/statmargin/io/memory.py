"""An in-memory workbook: the reference implementation of the back-end protocol, and the tests' double.

``MemoryWorkbook`` is a ``WorkbookSource`` and a ``WorkbookSink`` at once. Sheets
are lists of row values with a hidden flag, Excel tables, merged ranges, cell
issues (error values, formulas without a saved value) and the tool's marker, in
workbook order. It is built from plain Python data (``from_sheets``) or copied
from any other back end (``from_source``, ``from_file``), and it writes the tool's
sheets by the same rules as the file back end (``io.placement``): the same names
when a user sheet holds the tool's sheet name, the same marker rules, the same
``WriteReport``, and the same refusals (a model is checked by rendering it as the
file writer would, then the text is dropped). Each written ``SheetModel`` is kept
for tests to inspect, and the sheet it became reads back as a spreadsheet reader
sees the written file (numbers as floats, NaN as blank, dates in date-styled
cells as dates ...).

It holds every cell in memory, so it is meant for tests and small books; it does
no file I/O of its own (``from_file`` asks the file back end to read).
"""

from __future__ import annotations

import datetime as dt
import math
import numbers
import os
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any

from ..sheets.layout import parse_cell_ref
from ..sheets.model import STYLES, UNWRITABLE_TEXT, Cell, SheetModel
from .file import charts, sheetxml
from .placement import place
from .protocol import (
    ERROR_ISSUE,
    NO_VALUE_ISSUE,
    CellIssues,
    MergedRange,
    TableRange,
    WorkbookBackend,
    WorkbookSource,
    WriteReport,
    resolve_sheet_name,
)

# Sheet-model style keys whose number format shows a date (see sheets.model.STYLES).
DATE_STYLES = frozenset({"date"})
_MS_PER_DAY = 86_400_000
_LAST_SERIAL = 2_958_466  # 10000-01-01: the first day past what a date cell can show
_EPOCH = dt.datetime(1899, 12, 30)
_EPOCH_BEFORE_MARCH_1900 = dt.datetime(1899, 12, 31)  # serials below 61 (the 1900 leap-day bug)
_EVERY_STYLE = {key: 0 for key in STYLES}


@dataclass(frozen=True)
class ErrorValue:
    """An Excel error value in a cell given to ``from_sheets``, e.g. ``ErrorValue("#N/A")``.

    Read as a blank (as python-calamine reads one) and reported by ``cell_issues``.
    """

    code: str


@dataclass(frozen=True)
class Uncalculated:
    """A formula with no saved value in a cell given to ``from_sheets``, e.g. ``Uncalculated("=B2*2")``.

    Read as an empty cell and reported by ``cell_issues``.
    """

    formula: str


@dataclass(frozen=True)
class MemorySheet:
    """One worksheet held in memory.

    ``rows`` start at row 1 and column A; ``None`` is an empty cell, ``''`` a cell
    holding empty text (it counts as used, as in a file). Rows may be ragged.
    """

    name: str
    rows: list[list[Any]]
    hidden: bool = False
    tables: list[TableRange] = field(default_factory=list)
    merged: list[MergedRange] = field(default_factory=list)
    issues: CellIssues = field(default_factory=dict)
    hidden_rows: frozenset[int] | None = frozenset()  # 1-based rows hidden by a filter or the user
    tool_kind: str | None = None  # the marker's kind, for a sheet the tool wrote
    model: SheetModel | None = None  # the model a written sheet was made from

    def first_col(self) -> int:
        """The first column holding a used cell (0 for an empty sheet)."""
        firsts = (next((j for j, v in enumerate(row) if v is not None), None) for row in self.rows)
        return min((j for j in firsts if j is not None), default=0)


class MemoryWorkbook:
    """A workbook held in memory, readable and writable through the back-end protocol.

    Parameters
    ----------
    sheets : iterable of MemorySheet
        The worksheets, in workbook order.
    name : str
        The display name used in messages and as ``WriteReport.path``.

    Attributes
    ----------
    written : list of SheetModel
        Every model written through this object, in order.
    reports : list of WriteReport
        Every write's report, in order.
    copies : dict
        ``out`` -> the MemoryWorkbook a write with ``out`` produced (this book stays as it was).
    closed : bool
        Whether ``close`` was called.

    Examples
    --------
    >>> book = MemoryWorkbook.from_sheets({"Visits": [["Site", "Wait"], ["North", 12.0]]})
    >>> book.sheet_names(), list(book.iter_rows("visits"))
    (['Visits'], [['Site', 'Wait'], ['North', 12.0]])
    """

    def __init__(self, sheets: Iterable[MemorySheet] = (), *, name: str = "workbook") -> None:
        self._sheets = list(sheets)
        self.name = name
        self.written: list[SheetModel] = []
        self.reports: list[WriteReport] = []
        self.copies: dict[str, MemoryWorkbook] = {}
        self.closed = False

    # -- constructors -------------------------------------------------------------
    @classmethod
    def from_sheets(
        cls,
        sheets: Mapping[str, Sequence[Sequence[Any]]],
        *,
        name: str = "workbook",
        hidden: Iterable[str] = (),
        tables: Mapping[str, Sequence[TableRange]] | None = None,
        merged: Mapping[str, Sequence[MergedRange]] | None = None,
        tool_sheets: Mapping[str, str] | None = None,
    ) -> MemoryWorkbook:
        """A workbook from plain rows: ``{"Data": [[header...], [values...], ...]}``.

        Parameters
        ----------
        sheets : mapping
            Sheet name -> rows from row 1 and column A, in workbook order. Cells
            may hold ``ErrorValue`` or ``Uncalculated`` to stand for error cells
            and formulas without a saved value.
        name : str
            The display name.
        hidden : iterable of str
            Sheets the user cannot see.
        tables, merged : mapping, optional
            Sheet name -> Excel tables, or merged ranges (0-based bounds).
        tool_sheets : mapping, optional
            Sheet name -> kind, for sheets carrying the tool's marker.
        """
        hidden_set = set(hidden)
        built = []
        for sheet, rows in sheets.items():
            values, issues = _split_issues(rows)
            built.append(
                MemorySheet(
                    name=sheet,
                    rows=values,
                    hidden=sheet in hidden_set,
                    tables=list((tables or {}).get(sheet, ())),
                    merged=list((merged or {}).get(sheet, ())),
                    issues=issues,
                    tool_kind=(tool_sheets or {}).get(sheet),
                )
            )
        return cls(built, name=name)

    @classmethod
    def from_source(cls, source: WorkbookSource, *, name: str | None = None) -> MemoryWorkbook:
        """A copy of everything another back end shows: cells, tables, merges, issues, markers.

        Parameters
        ----------
        source : WorkbookSource
            Any back end; read through the protocol only.
        name : str, optional
            The display name; default: the source's.
        """
        kinds = source.tool_sheets()
        hidden = set(source.hidden_sheet_names())
        sheets = []
        for sheet in source.sheet_names():
            first_col, rows = source.iter_rows_at(sheet)
            pad: list[Any] = [None] * first_col
            sheets.append(
                MemorySheet(
                    name=sheet,
                    rows=[pad + list(row) for row in rows],
                    hidden=sheet in hidden,
                    tables=source.tables(sheet),
                    merged=source.merged_ranges(sheet),
                    issues=source.cell_issues(sheet),
                    hidden_rows=source.hidden_rows(sheet),
                    tool_kind=kinds.get(sheet),
                )
            )
        return cls(sheets, name=source.display_name if name is None else name)

    @classmethod
    def from_file(cls, path: str | os.PathLike[str]) -> MemoryWorkbook:
        """A copy of a workbook file, read by the file back end (the file is not kept open)."""
        from .file.source import FileSource  # not io.backends: tests replace that with this class

        with FileSource(path) as source:
            return cls.from_source(source)

    # -- inspection, for tests ------------------------------------------------------
    def sheet(self, sheet: str) -> MemorySheet:
        """The held sheet of that name (case ignored when unique)."""
        wanted = self.resolve_sheet(sheet)
        return next(s for s in self._sheets if s.name == wanted)

    def model(self, kind: str) -> SheetModel | None:
        """The model the book's current tool sheet of this kind was written from, if any."""
        for held in self._sheets:
            if held.tool_kind == kind and held.model is not None:
                return held.model
        return None

    # -- WorkbookSource ---------------------------------------------------------------
    @property
    def display_name(self) -> str:
        """The name given when the book was made (the file name for ``from_file``)."""
        return self.name

    def sheet_names(self) -> list[str]:
        """Every held sheet, in order."""
        return [s.name for s in self._sheets]

    def hidden_sheet_names(self) -> list[str]:
        """The sheets flagged hidden, in order."""
        return [s.name for s in self._sheets if s.hidden]

    def resolve_sheet(self, sheet: str) -> str:
        """The held spelling of ``sheet`` (``protocol.resolve_sheet_name``)."""
        return resolve_sheet_name(self.sheet_names(), sheet, self.name)

    def iter_rows(self, sheet: str) -> Iterator[list[Any]]:
        """Rows as held, from row 1 and column A."""
        return (list(row) for row in self.sheet(sheet).rows)

    def iter_rows_at(self, sheet: str) -> tuple[int, Iterator[list[Any]]]:
        """Rows as held from row 1, each starting at the first used column of the sheet."""
        held = self.sheet(sheet)
        first_col = held.first_col()
        return first_col, (row[first_col:] for row in held.rows)

    def last_row(self, sheet: str) -> int:
        """Rows held for the sheet (trailing empty rows included)."""
        return len(self.sheet(sheet).rows)

    def release(self) -> None:
        """Nothing to free: the rows are the workbook itself."""

    def tables(self, sheet: str) -> list[TableRange]:
        """The tables given for the sheet."""
        return list(self.sheet(sheet).tables)

    def merged_ranges(self, sheet: str) -> list[MergedRange]:
        """The merged ranges given for (or written on) the sheet, 0-based."""
        return list(self.sheet(sheet).merged)

    def tool_sheets(self) -> dict[str, str]:
        """Sheets carrying the tool's marker: name -> kind."""
        return {s.name: s.tool_kind for s in self._sheets if s.tool_kind}

    def cell_issues(
        self,
        sheet: str,
        *,
        first_row: int = 1,
        last_row: int | None = None,
        columns: Iterable[int] | None = None,
    ) -> CellIssues:
        """The sheet's error cells and formulas without a saved value, within the bounds asked for."""
        wanted = None if columns is None else set(columns)
        return {
            (row, col): issue
            for (row, col), issue in self.sheet(sheet).issues.items()
            if row >= first_row
            and (last_row is None or row <= last_row)
            and (wanted is None or col in wanted)
        }

    def hidden_rows(self, sheet: str) -> frozenset[int] | None:
        """The rows the sheet was given as hidden."""
        return self.sheet(sheet).hidden_rows

    def close(self) -> None:
        """Nothing to release; remembered so tests can see who closed the book."""
        self.closed = True

    # -- WorkbookSink -----------------------------------------------------------------
    def check(self, out: str | None = None) -> str | None:
        """Every write can succeed in memory; ``out`` naming this book means in place."""
        return None if out is None or out == self.name else out

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """Replace the tool's sheets by ``io.placement`` (or write them into a copy kept in ``copies[out]``).

        Raises
        ------
        WriteError
            Two models of one kind, a cell outside a worksheet, an unknown style
            or a link to a tool sheet that will not exist; the book is unchanged.
        """
        out = self.check(out)
        if not models:  # nothing to write: leave the book alone, as the file back end does
            return WriteReport(path=self.name, sheets={}, renamed=[], replaced=[])
        placement = place([(s.name, s.tool_kind) for s in self._sheets], models)
        new_sheets = [
            _written_sheet(m, placement.final[m.kind], placement.kind_to_name) for m in models
        ]
        # A replacement takes the replaced sheet's place and visibility; new kinds go last.
        successors = {m.kind: sheet for m, sheet in zip(models, new_sheets, strict=True)}
        kept: list[MemorySheet] = []
        for i, sheet in enumerate(self._sheets):
            if i in placement.removed:
                kept.append(replace(successors.pop(str(sheet.tool_kind)), hidden=sheet.hidden))
            else:
                kept.append(replace(sheet, tool_kind=None) if i in placement.unmarked else sheet)
        new_sheets = [successors[m.kind] for m in models if m.kind in successors]
        report = WriteReport(
            path=out or self.name,
            sheets=dict(placement.final),
            renamed=list(placement.renamed),
            replaced=[self._sheets[i].name for i in placement.removed],
        )
        if out is None:
            self._sheets = kept + new_sheets
        else:
            self.copies[out] = MemoryWorkbook(kept + new_sheets, name=out)
        self.written.extend(models)
        self.reports.append(report)
        return report


# ------------------------------------------------------------------------------ helpers


def _split_issues(rows: Sequence[Sequence[Any]]) -> tuple[list[list[Any]], CellIssues]:
    """Rows with error and uncalculated cells replaced as a file reader sees them, and those cells' issues."""
    values: list[list[Any]] = []
    issues: CellIssues = {}
    for number, row in enumerate(rows, start=1):
        plain = list(row)
        for col, value in enumerate(plain):
            if isinstance(value, ErrorValue):
                plain[col] = ""  # a used cell that reads as empty text
                issues[(number, col)] = (ERROR_ISSUE, value.code)
            elif isinstance(value, Uncalculated):
                plain[col] = None  # no value at all
                issues[(number, col)] = (NO_VALUE_ISSUE, value.formula)
        values.append(plain)
    return values, issues


def _written_sheet(model: SheetModel, name: str, kind_to_name: dict[str, str]) -> MemorySheet:
    """The sheet a model becomes, refused (WriteError) where the file writer would refuse it."""
    # The file writer's checks, by rendering as it does; the text is dropped.
    sheetxml.render_sheet(model, _EVERY_STYLE, kind_to_name)
    for chart in model.charts:
        charts.chart_xml(chart, name, model)
    if model.charts:
        charts.drawing_xml(model.charts, [f"rId{n}" for n in range(1, len(model.charts) + 1)], name)
    used = {pos: shown for pos, cell in model.cells.items() if (shown := read_back(cell)) is not None}
    rows: list[list[Any]] = []
    if used:
        first_col = min(c for _, c in used)
        last_col = max(c for _, c in used)
        pad: list[Any] = [None] * first_col
        for r in range(max(r for r, _ in used) + 1):
            rows.append(pad + [used.get((r, c), "") for c in range(first_col, last_col + 1)])
    merged = []
    for ref in model.merged:
        first, _, last = ref.partition(":")
        (r1, c1), (r2, c2) = parse_cell_ref(first), parse_cell_ref(last or first)
        merged.append((r1, c1, r2, c2))
    return MemorySheet(name=name, rows=rows, hidden=model.hidden, merged=merged, tool_kind=model.kind, model=model)


def read_back(cell: Cell) -> Any:
    """What a spreadsheet reader gets from a written cell (None: the cell holds no value).

    Notes
    -----
    Follows what the file back end writes (``io.file.sheetxml``) and
    python-calamine reads back, checked value by value in the tests: booleans
    stay booleans; whole numbers beyond 2**53 become text; other numbers become
    floats, NaN an empty cell and infinities the text ``inf``/``-inf``; dates and
    datetimes become day serials (1900 date system); in a date-styled cell a
    serial reads as a date, datetime or time; anything else becomes its text,
    without the characters no workbook can hold.
    """
    value = cell.value
    if value is None:
        return None
    if isinstance(value, bool) or type(value).__name__ == "bool_":
        return bool(value)
    if isinstance(value, numbers.Integral) and abs(int(value)) > 2**53:
        return str(int(value))
    serial: float
    if isinstance(value, numbers.Real):
        serial = float(value)
        if math.isnan(serial):
            return None
        if math.isinf(serial):
            return "inf" if serial > 0 else "-inf"
    elif isinstance(value, dt.date):
        moment = value if isinstance(value, dt.datetime) else dt.datetime.combine(value, dt.time())
        serial = (moment.replace(tzinfo=None) - _EPOCH).total_seconds() / 86400.0
    else:
        return UNWRITABLE_TEXT.sub("", str(value))
    return _serial_as_date(serial) if cell.style in DATE_STYLES else serial


def _serial_as_date(serial: float) -> Any:
    """A day serial in a date-formatted cell as python-calamine reads it (to the millisecond)."""
    if serial >= _LAST_SERIAL:
        return serial
    ms = round(serial * _MS_PER_DAY)
    if serial < 1:
        ms = max(ms, 0)
        return (dt.datetime.min + dt.timedelta(milliseconds=ms)).time()
    if serial < 61:  # before 1900-03-01 serials count from 1899-12-31; 60 is the leap day 1900 lacks
        moment = _EPOCH_BEFORE_MARCH_1900 + dt.timedelta(milliseconds=ms)
        if moment >= dt.datetime(1900, 3, 1):
            moment -= dt.timedelta(days=1)
    else:
        moment = _EPOCH + dt.timedelta(milliseconds=ms)
    return moment.date() if ms % _MS_PER_DAY == 0 else moment


if TYPE_CHECKING:  # mypy checks here that the class meets both protocols

    def _is_a_backend(book: MemoryWorkbook) -> WorkbookBackend:
        return book
