"""Read a data sheet into typed columns, noting every cell that was skipped or converted.

Reading streams rows and fills, per requested column, a float64 ``numbers``
array (NaN where no number) and an object ``labels`` array (None where no
text). Rows are handled in batches: a column slice of a batch that holds only
floats (the common case in large sheets) is copied into numpy in one step, and
only the other cells are looked at one by one. No DataFrame of the whole sheet
is ever built.

Cell rules (each skipped or converted cell gets a ``table.DataNote``):

* numbers and dates: kept as numbers; dates, times and durations become Excel
  day numbers (days since 1899-12-30; exact for dates from 1900-03-01, the
  convention Excel itself uses) and are counted in ``Column.n_dates``;
* booleans: kept as the labels ``"TRUE"``/``"FALSE"``;
* blank cells (and text of only spaces): counted in ``n_blank``, no note;
* missing markers (``MISSING_MARKERS``, compared without case): ``MISSING_MARKER``
  note, counted in ``n_blank``;
* Excel error values (``EXCEL_ERRORS``, also when typed as text): ``ERROR_VALUE``
  note, counted in ``n_unreadable``;
* suppressed small counts (``<5``, ``< 5``, ``<=3``, ``≤3``): ``SUPPRESSED``
  note, counted in ``n_unreadable``;
* numbers stored as text: converted when the whole text is a number, optionally
  with thousands separators (``1,250``; ``1 250``) and a trailing ``%``;
  ``TEXT_NUMBER`` note "converted to ...". A percent keeps the unit shown:
  ``"12.5%"`` becomes 12.5, not 0.125, so the value reads as it did in the sheet.
  Decimal commas (``12,5``), brackets for negatives (``(3)``) and currency signs
  are *not* converted: each could mean something else, so they stay text and
  the engine reports them if the column is numeric;
* any other text: kept as a label with outer spaces removed;
* formulas never calculated (no saved value, .xlsx/.xlsm only): ``NO_CACHED_VALUE``
  note, counted in ``n_unreadable``.

At most ``NOTE_CAP`` notes are kept per column and kind; the rest are summed up
in one note ("and N more like this"), so a sheet with a million ``NA`` cells
still gives a readable notes sheet.
"""

from __future__ import annotations

import datetime as dt
import difflib
import hashlib
import math
import os
import re
import threading
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from itertools import chain, islice
from operator import itemgetter
from typing import Any

import numpy as np

from .. import stages
from ..errors import ColumnNotFoundError, NotEnoughDataError, OptionError, WorkbookError
from ..io.addresses import column_letter
from ..io.protocol import ERROR_ISSUE, CellIssues, TableRange, WorkbookSource
from ..vocabulary import RowsToUse
from ..words import notes_words, read_messages
from ..words.file_messages import damaged_part_way
from ..words.workbook_messages import no_workbook_given
from .table import Column, DataNote, NoteKind, Table, not_none

NOTE_CAP = 1000  # notes kept per (column, kind); the rest are summarised in one note
BATCH_ROWS = 8192  # rows handled together; large enough to amortise per-batch work
TITLE_LOOKAHEAD = 5  # title lines that may be skipped above the header row

EXCEL_ERRORS = frozenset(
    {
        "#N/A",
        "#DIV/0!",
        "#VALUE!",
        "#REF!",
        "#NAME?",
        "#NUM!",
        "#NULL!",
        "#SPILL!",
        "#CALC!",
        "#GETTING_DATA",
    }
)
# Compared after stripping spaces and folding case. "none" and "unknown" are left
# out on purpose: they are often real answers in survey-style columns.
MISSING_MARKERS = frozenset({"na", "n/a", "n.a.", "nan", "-", "--", ".", "missing"})

_EXCEL_EPOCH = dt.datetime(1899, 12, 30)
_EXCEL_EPOCH_DATE = _EXCEL_EPOCH.date()
_SECONDS_PER_DAY = 86400.0
_NAN = math.nan

_SUPPRESSED = re.compile(r"^(?:<|<=|≤|&lt;)\s*\d+(?:\.\d+)?$")
_NUMBER = re.compile(
    r"^(?P<num>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"  # plain, 12 / 12.5 / 1e3
    r"|[+-]?\d{1,3}(?:,\d{3})+(?:\.\d+)?"  # 1,250.5
    r"|[+-]?\d{1,3}(?:[ \u00a0\u202f\u2009]\d{3})+(?:\.\d+)?)"  # 1 250.5 (space, no-break or thin space)
    r"\s*(?P<pct>%)?$"
)
_SEPARATORS = re.compile(r"[, \u00a0\u202f\u2009]")
_UNITS = re.compile(r"^(?P<base>.*?\S)\s*[\(\[](?P<units>[^\(\)\[\]]+)[\)\]]$")
_SPACES = re.compile(r"\s+")

# Kinds of cell, as returned by the slow-path classifier.
_NUM, _DATE, _LABEL, _BLANK, _MARKER, _ERROR, _SUPP, _TEXTNUM = range(8)


# -----------------------------------------------------------------------------
# Cell classification
# -----------------------------------------------------------------------------
def classify_cell(value: Any) -> tuple[int, float, str | None]:
    """Classify one raw cell value (the slow path for anything that is not a float).

    Parameters
    ----------
    value : Any
        A value as a workbook source yields it: float, int, bool, str, date,
        datetime, time, timedelta, or None/``''`` for a blank.

    Returns
    -------
    tuple
        ``(kind, number, label)``: ``kind`` is one of the module's cell kinds,
        ``number`` is the numeric value or NaN, ``label`` is the text kept or None.

    Notes
    -----
    Order matters: ``bool`` is checked before ``int`` because it is a subclass.
    """
    kind_of = type(value)
    if kind_of is float:
        return _NUM, value, None
    if kind_of is str:
        return _classify_text(value)
    if value is None:
        return _BLANK, _NAN, None
    if kind_of is bool:
        return _LABEL, _NAN, "TRUE" if value else "FALSE"
    if kind_of is int:
        return _NUM, float(value), None
    if isinstance(value, dt.datetime):
        return (
            _DATE,
            (value.replace(tzinfo=None) - _EXCEL_EPOCH).total_seconds() / _SECONDS_PER_DAY,
            None,
        )
    if isinstance(value, dt.date):
        return _DATE, float((value - _EXCEL_EPOCH_DATE).days), None
    if isinstance(value, dt.time):
        seconds = value.hour * 3600 + value.minute * 60 + value.second + value.microsecond / 1e6
        return _DATE, seconds / _SECONDS_PER_DAY, None
    if isinstance(value, dt.timedelta):
        return _DATE, value.total_seconds() / _SECONDS_PER_DAY, None
    if isinstance(value, (int, float, np.number)) and not isinstance(value, bool):
        return _NUM, float(value), None
    return _classify_text(str(value))


def _classify_text(text: str) -> tuple[int, float, str | None]:
    """Classify a text cell: blank, error, marker, suppressed count, number as text, or label."""
    stripped = text.strip()
    if not stripped:
        return _BLANK, _NAN, None
    first = stripped[0]
    if first == "#" and stripped.upper() in EXCEL_ERRORS:
        return _ERROR, _NAN, None
    if stripped.casefold() in MISSING_MARKERS:
        return _MARKER, _NAN, None
    if first in "<≤&" and _SUPPRESSED.match(stripped):
        return _SUPP, _NAN, None
    if first.isdigit() or first in "+-−.":
        number = parse_text_number(stripped)
        if number is not None:
            return _TEXTNUM, number, None
    return _LABEL, _NAN, stripped


def parse_text_number(text: str) -> float | None:
    """The number a text cell shows, or None when the text is not wholly a number.

    Parameters
    ----------
    text : str
        Cell text, e.g. ``"1,250"``, ``" 42 "``, ``"1 250"``, ``"12.5%"``, ``"−3"``.

    Returns
    -------
    float or None
        The value in the unit shown (``"12.5%"`` -> 12.5), or None.

    Notes
    -----
    ``float()`` alone is not used because it accepts ``"nan"``, ``"inf"`` and
    ``"1_000"``, none of which a person means as a number in a cell.
    """
    stripped = text.strip().replace("\u2212", "-")  # typographic minus sign
    match = _NUMBER.match(stripped)
    if not match:
        return None
    return float(_SEPARATORS.sub("", match.group("num")))


def format_number(value: float) -> str:
    """A number as text for notes: whole numbers without a decimal point."""
    if math.isfinite(value) and value == int(value) and abs(value) < 1e15:
        return str(int(value))
    return repr(float(value))


def _sample_number(value: float) -> str:
    """A number for the roles sheet's sample: whole numbers as they are, others to 6 significant digits.

    Six digits is about what a spreadsheet's General format shows in a normal-width
    column; the full value stays in the data and in the data notes.
    """
    if math.isfinite(value) and value == int(value) and abs(value) < 1e15:
        return str(int(value))
    if math.isfinite(value) and 1e6 <= abs(value) < 1e15:
        return str(round(value))  # no exponent for a large amount: whole units are enough in a sample
    return f"{value:.6g}"


def cell_text(value: Any) -> str:
    """A raw cell value as the text a person would see (for headers and notes)."""
    if value is None:
        return ""
    if type(value) is float or type(value) is int:
        return format_number(float(value))
    if type(value) is bool:
        return "TRUE" if value else "FALSE"
    if isinstance(value, (dt.date, dt.time)):
        return value.isoformat(sep=" ") if isinstance(value, dt.datetime) else value.isoformat()
    return str(value)


def _is_blank(value: Any) -> bool:
    return value is None or (type(value) is str and not value.strip())


# -----------------------------------------------------------------------------
# Headers
# -----------------------------------------------------------------------------
@dataclass
class HeaderColumn:
    """One column of the data region as named from the header row."""

    index: int  # 0-based sheet column
    name: str  # unique name
    header: str  # the header text as written (spaces tidied), "" if blank
    units: str | None = None


@dataclass
class _Layout:
    """Where the data is: sheet, header row, columns, and the last row to read."""

    sheet: str
    header_row: int
    columns: list[HeaderColumn]
    last_row: int | None  # None: up to the end of the sheet
    table: TableRange | None
    notes: list[DataNote] = field(default_factory=list)
    first_col: int = 0  # column of element 0 in each row from the source
    rows: Iterator[list[Any]] = field(default_factory=lambda: iter(()))  # rows after the header


def header_units(header: str) -> str | None:
    """Units written in brackets at the end of a header: ``"Wait (minutes)"`` -> ``"minutes"``.

    Notes
    -----
    Brackets holding only a number, as in ``"Visit (2)"``, are a count, not units.
    """
    match = _UNITS.match(header)
    if not match:
        return None
    units = match.group("units").strip()
    if not units or units.replace(".", "").isdigit():
        return None
    return units


def unique_names(
    sheet: str, header_row: int, cells: list[tuple[int, str]], merged_from: dict[int, int]
) -> tuple[list[HeaderColumn], list[DataNote]]:
    """Turn header texts into unique column names, noting each change.

    Parameters
    ----------
    sheet : str
        Sheet name (for the notes).
    header_row : int
        1-based header row.
    cells : list of (int, str)
        0-based column index and tidied header text, in sheet order.
    merged_from : dict
        Column index -> index of the merge's first column, for header cells
        covered by a merge spanning several columns.

    Returns
    -------
    columns, notes

    Notes
    -----
    Covered cells of a merged header take the merged text with " (2)", " (3)"...;
    blank headers become "Column F"; duplicates (compared without case, since a
    person typing a name on the roles sheet may not match case) get " (2)"...
    """
    texts = dict(cells)
    columns: list[HeaderColumn] = []
    notes: list[DataNote] = []
    seen: set[str] = set()
    merge_count: dict[int, int] = {}
    for index, text in cells:
        letter = column_letter(index)
        address = f"{letter}{header_row}"
        header = text
        if index in merged_from:
            origin = merged_from[index]
            merge_count[origin] = merge_count.get(origin, 1) + 1
            base = texts.get(origin, "") or notes_words.blank_header_column(column_letter(origin))
            name = f"{base} ({merge_count[origin]})"
            action = notes_words.merged_header(name)
            header = texts.get(origin, "")
        elif not text:
            name = notes_words.blank_header_column(letter)
            action = notes_words.blank_header(name)
        else:
            name = text
            action = ""
        if name.casefold() in seen:
            base, k = name, 2
            while f"{base} ({k})".casefold() in seen:
                k += 1
            name = f"{base} ({k})"
            action = notes_words.duplicate_header(name, action)
        seen.add(name.casefold())
        if action:
            notes.append(DataNote(sheet, address, name, text, NoteKind.HEADER, action))
        columns.append(
            HeaderColumn(index=index, name=name, header=header, units=header_units(header))
        )
    return columns, notes


# -----------------------------------------------------------------------------
# Opening and locating the data
# -----------------------------------------------------------------------------
def _open_source(
    path: str | os.PathLike[str] | None, source: WorkbookSource | None
) -> tuple[WorkbookSource, bool]:
    """The source to read and whether it was opened here (and so is closed here)."""
    if source is not None:
        return source, False
    if path is None:
        raise OptionError(no_workbook_given())
    from ..io import backends  # the job edge picks the back end for a path

    return backends.open_source(path), True


def _rows_at(source: WorkbookSource, sheet: str) -> tuple[int, Iterator[list[Any]]]:
    """Rows from row 1 and the column their first element belongs to."""
    first_col, rows = source.iter_rows_at(sheet)
    return int(first_col), iter(rows)


def first_data_sheet(
    path: str | os.PathLike[str] | WorkbookSource | None = None,
    *,
    source: WorkbookSource | None = None,
) -> str:
    """The first visible worksheet, in workbook order, that holds data and is not a tool sheet.

    Parameters
    ----------
    path : str or os.PathLike or WorkbookSource, optional
        Workbook file (ignored when ``source`` is given); an open source is
        also accepted here.
    source : WorkbookSource, optional
        An open source to use instead of opening ``path``.

    Returns
    -------
    str
        The sheet name.

    Raises
    ------
    NotEnoughDataError
        If no such sheet has any value.
    """
    file_path: str | os.PathLike[str] | None
    if path is None or isinstance(path, (str, os.PathLike)):
        file_path = path
    else:  # an open source passed in the first place
        file_path, source = None, source if source is not None else path
    src, owned = _open_source(file_path, source)
    try:
        return _first_data_sheet(src, src.display_name)
    finally:
        if owned:
            src.close()


def _first_data_sheet(source: WorkbookSource, display: str) -> str:
    tool = set(source.tool_sheets())
    hidden = set(source.hidden_sheet_names())
    candidates = [n for n in source.sheet_names() if n not in tool and n not in hidden]
    for name in candidates:
        _, rows = _rows_at(source, name)
        if any(not _is_blank(v) for row in _guard(rows, display) for v in row):
            return name
    raise NotEnoughDataError(read_messages.no_data_sheet(display))


def _pick_table(
    tables: list[TableRange], table: str | None, sheet: str
) -> tuple[TableRange | None, str | None]:
    """The table to read and, when the choice was automatic among several, a sentence saying so."""
    if table is not None:
        for candidate in tables:
            if candidate.name.casefold() == table.strip().casefold():
                return candidate, None
        raise OptionError(read_messages.table_not_on_sheet(table, sheet, [t.name for t in tables]))
    if not tables:
        return None, None
    ordered = sorted(tables, key=lambda t: (t.first_row, t.first_col))
    if len(ordered) == 1:
        return ordered[0], None
    return ordered[0], notes_words.several_tables(ordered[0].name, [t.name for t in ordered[1:]])


def _locate(
    source: WorkbookSource,
    sheet: str,
    header_row: int | None,
    table: str | None,
    display: str,
) -> _Layout:
    """Find the header row and the columns, leaving the row iterator just past the header."""
    if header_row is not None and (not isinstance(header_row, int) or header_row < 1):
        raise OptionError(read_messages.bad_header_row(header_row))
    tables = list(source.tables(sheet)) if header_row is None or table is not None else []
    chosen, several = _pick_table(tables, table, sheet)
    notes: list[DataNote] = []
    first_col, rows = _rows_at(source, sheet)

    if chosen is not None:
        header_row = chosen.first_row
    row_number = 0
    header_cells: list[Any] | None = None
    if header_row is not None:
        for row_number, row in enumerate(_guard(rows, display), start=1):
            if row_number == header_row:
                header_cells = row
                break
        if header_cells is None:
            if row_number == 0:
                raise NotEnoughDataError(read_messages.empty_sheet(sheet, display))
            raise OptionError(read_messages.header_row_below_data(header_row, row_number, sheet))
        if chosen is None and all(_is_blank(v) for v in header_cells):
            raise OptionError(read_messages.blank_header_row(header_row, sheet))
    else:
        header_row, header_cells, rows, title_note = _find_header(rows, sheet, first_col, display)
        if header_cells is None:
            raise NotEnoughDataError(read_messages.empty_sheet(sheet, display))
        if title_note is not None:
            notes.append(title_note)

    # Columns: the table's, else from the first to the last non-blank header cell.
    texts = {first_col + i: _header_text(v) for i, v in enumerate(header_cells)}
    merged_from: dict[int, int] = {}
    for r1, c1, r2, c2 in source.merged_ranges(sheet):
        if r1 <= header_row - 1 <= r2 and c2 > c1:
            for c in range(c1 + 1, c2 + 1):
                merged_from[c] = c1
    if chosen is not None:
        lo, hi = chosen.first_col, chosen.last_col
    else:
        filled = [c for c, t in texts.items() if t]
        lo, hi = min(filled), max(filled)
        while hi + 1 in merged_from:
            hi += 1
    merged_from = {c: o for c, o in merged_from.items() if lo <= c <= hi and lo <= o}
    cells = [(c, "" if c in merged_from else texts.get(c, "")) for c in range(lo, hi + 1)]
    columns, header_notes = unique_names(sheet, header_row, cells, merged_from)
    if several and chosen is not None:  # a note on several tables always comes with a choice
        table_note = DataNote(
            sheet,
            f"{column_letter(chosen.first_col)}{chosen.first_row}",
            "",
            chosen.name,
            NoteKind.OTHER,
            several,
        )
        notes.append(table_note)
    return _Layout(
        sheet=sheet,
        header_row=header_row,
        columns=columns,
        last_row=chosen.last_row if chosen is not None else None,
        table=chosen,
        notes=notes + header_notes,
        first_col=first_col,
        rows=rows,
    )


def _header_text(value: Any) -> str:
    if _is_blank(value):
        return ""
    return _SPACES.sub(" ", cell_text(value)).strip()


def _find_header(
    rows: Iterator[list[Any]], sheet: str, first_col: int, display: str
) -> tuple[int, list[Any] | None, Iterator[list[Any]], DataNote | None]:
    """The first non-empty row, skipping title lines above a header row.

    Notes
    -----
    A lone text above the table (a title such as "Clinic visits 2024") would
    otherwise become the only header. Leading rows holding exactly one text are
    skipped as titles, but only when the row after them has two or more filled
    cells, all text, so it reads as a header row; otherwise the first non-empty
    row is the header. At most ``TITLE_LOOKAHEAD`` title lines are skipped, and
    each skip is noted.
    """
    buffered: list[tuple[int, list[Any], int, bool]] = []  # (row, cells, filled, all text)
    consumed: list[list[Any]] = []
    for number, row in enumerate(_guard(rows, display), start=1):
        consumed.append(row)
        present = [v for v in row if not _is_blank(v)]
        if present:
            all_text = all(type(v) is str for v in present)
            buffered.append((number, row, len(present), all_text))
            if len(buffered) > TITLE_LOOKAHEAD:
                break
    if not buffered:
        return 0, None, iter(()), None
    skip = 0
    while skip < len(buffered) - 1 and buffered[skip][2] == 1 and buffered[skip][3]:
        skip += 1
    if skip and not (buffered[skip][2] >= 2 and buffered[skip][3]):
        skip = 0
    header_number, header_cells = buffered[skip][0], buffered[skip][1]
    note = None
    if skip:
        first_number, first_cells = buffered[0][0], buffered[0][1]
        offset = next(i for i, v in enumerate(first_cells) if not _is_blank(v))
        note = DataNote(
            sheet,
            f"{column_letter(first_col + offset)}{first_number}",
            "",
            cell_text(first_cells[offset]),
            NoteKind.HEADER,
            notes_words.title_skipped(header_number),
        )
    rest = chain(consumed[header_number:], rows)
    return header_number, header_cells, rest, note


# -----------------------------------------------------------------------------
# Reading the data
# -----------------------------------------------------------------------------
class _NoteBook:
    """Notes for one column, capped per kind, with counts of the rest."""

    def __init__(self, sheet: str, column: str, letter: str) -> None:
        self.sheet, self.column, self.letter = sheet, column, letter
        self.notes: list[tuple[int, DataNote]] = []
        self.counts: dict[NoteKind, int] = {}
        self.first_over: dict[NoteKind, int] = {}

    def add(self, row: int, kind: NoteKind, value: str, action: str) -> None:
        count = self.counts.get(kind, 0) + 1
        self.counts[kind] = count
        if count <= NOTE_CAP:
            note = DataNote(self.sheet, f"{self.letter}{row}", self.column, value, kind, action)
            self.notes.append((row, note))
        elif count == NOTE_CAP + 1:
            self.first_over[kind] = row

    def add_rows(self, kind: NoteKind, rows: np.ndarray, values: list[str], actions: list[str]) -> None:
        """Notes for many cells of one kind at once (rows in order); only the first ``NOTE_CAP`` are kept."""
        before = self.counts.get(kind, 0)
        room = max(0, NOTE_CAP - before)
        for row, value, action in zip(rows[:room].tolist(), values[:room], actions[:room], strict=True):
            note = DataNote(self.sheet, f"{self.letter}{row}", self.column, value, kind, action)
            self.notes.append((row, note))
        if before + len(rows) > NOTE_CAP and kind not in self.first_over:
            self.first_over[kind] = int(rows[room])
        self.counts[kind] = before + len(rows)

    def summaries(self) -> list[DataNote]:
        out = []
        for kind, row in self.first_over.items():
            more = self.counts[kind] - NOTE_CAP
            out.append(
                DataNote(
                    self.sheet,
                    f"{self.letter}{row}",
                    self.column,
                    "",
                    kind,
                    notes_words.more_like_this(more),
                )
            )
        return out


_ACTIONS = {
    _MARKER: (NoteKind.MISSING_MARKER, notes_words.COUNTED_AS_MISSING),
    _ERROR: (NoteKind.ERROR_VALUE, notes_words.ERROR_SKIPPED),
    _SUPP: (NoteKind.SUPPRESSED, notes_words.SUPPRESSED_NOT_USED),
}


class _Codebook:
    """The distinct non-float values of one column, each classified once.

    Label and date columns repeat few values many times, so each batch of cells
    is turned into codes (one dict look-up per cell, in C) and everything else
    is done on arrays indexed by code.
    """

    def __init__(self) -> None:
        self.index: dict[Any, int] = {}
        self.kinds = np.empty(0, dtype=np.int8)
        self.numbers = np.empty(0, dtype=np.float64)
        self.labels = np.empty(0, dtype=object)
        self.raw: list[Any] = []  # the value of each code as it came
        self.size = 0

    def codes(self, values: Sequence[Any]) -> np.ndarray:
        """The code of each value, classifying values not seen before."""
        index = self.index
        new = [v for v in set(values) if v not in index]  # may raise TypeError (unhashable)
        if new:
            self._grow(len(new))
            for value in new:
                index[value] = self.add(value)
        return np.fromiter(map(index.__getitem__, values), dtype=np.int64, count=len(values))

    def add(self, value: Any) -> int:
        """A new code for ``value`` (a boolean comes wrapped in a 1-tuple); room must be there."""
        raw = value[0] if type(value) is tuple else value
        kind, number, label = classify_cell(raw)
        if kind == _NUM and number != number:
            kind = _BLANK  # a NaN float (possible from other sources) is a blank
        code = self.size
        self.kinds[code], self.numbers[code], self.labels[code] = kind, number, label
        self.raw.append(raw)
        self.size += 1
        return code

    def _grow(self, extra: int) -> None:
        need = self.size + extra
        if need <= self.kinds.shape[0]:
            return
        capacity = max(need, 2 * self.kinds.shape[0], 64)
        for name in ("kinds", "numbers", "labels"):
            old = getattr(self, name)
            grown = np.empty(capacity, dtype=old.dtype)
            grown[: self.size] = old[: self.size]
            setattr(self, name, grown)


@dataclass
class _ColumnState:
    """Arrays and counts being filled for one column."""

    head: HeaderColumn
    offset: int  # position in each source row
    letter: str
    notes: _NoteBook
    numbers: np.ndarray  # the whole column, filled batch by batch
    labels: np.ndarray
    n_blank: int = 0
    n_unreadable: int = 0
    n_dates: int = 0
    error_rows: set[int] = field(default_factory=set)  # rows whose text was an error code
    codebook: _Codebook = field(default_factory=_Codebook)
    texty: bool = False  # the last batch held mostly values other than numbers

    def ensure(self, size: int) -> None:
        """Room for ``size`` rows (the source's row count can be an underestimate)."""
        have = self.numbers.shape[0]
        if size > have:
            grow = max(size, have + have // 2)
            self.numbers = np.concatenate([self.numbers, np.full(grow - have, np.nan)])
            self.labels = np.concatenate([self.labels, np.empty(grow - have, dtype=object)])


_NOTED = (_TEXTNUM, _MARKER, _ERROR, _SUPP)  # cell kinds that get a data note
_FILLED = np.array([k not in (_BLANK,) for k in range(8)], dtype=bool)  # kinds that are an entry


def _fill_batch(
    state: _ColumnState, values: Sequence[Any], row0: int, at: int, content: np.ndarray
) -> None:
    """Put one batch of a column's raw values into its typed arrays from position ``at``.

    Notes
    -----
    Two ways, chosen by what the column held in its previous batch, give the
    same result. Mostly numbers: floats go to the array in one C-level step, and
    only the other cells (blanks, texts, dates) are looked up in the column's
    codebook. Mostly other values (labels, dates): every cell is looked up, one
    dict look-up per cell. Notes are made only for the cells that need one.
    """
    count = len(values)
    numbers = state.numbers[at : at + count]
    book = state.codebook
    if state.texty:
        where = np.arange(count)
        codes = _codes(book, values)
        numbers[:] = book.numbers[codes]
    else:
        odd = [k for k, v in enumerate(values) if type(v) is not float]
        if not odd:
            numbers[:] = values
            present = ~np.isnan(numbers)  # a NaN float (possible from other sources) is a blank
            content |= present
            state.n_blank += count - int(present.sum())
            return
        fixed = list(values)
        for k in odd:
            fixed[k] = _NAN
        numbers[:] = fixed
        where = np.array(odd, dtype=np.int64)
        is_float = np.ones(count, dtype=bool)
        is_float[where] = False
        present = ~np.isnan(numbers) & is_float
        content |= present
        state.n_blank += int(count - len(odd) - present.sum())
        codes = _codes(book, [values[k] for k in odd])
        numbers[where] = book.numbers[codes]
    state.labels[at + where] = book.labels[codes]
    kinds = book.kinds[codes]
    content[where] |= _FILLED[kinds]
    tally = np.bincount(kinds, minlength=8)
    state.texty = (len(where) - int(tally[_NUM])) * 2 > count  # cells that were not numbers
    state.n_blank += int(tally[_BLANK] + tally[_MARKER])
    state.n_unreadable += int(tally[_ERROR] + tally[_SUPP])
    state.n_dates += int(tally[_DATE])
    for kind in _NOTED:
        if tally[kind]:
            _note_cells(state, kind, row0 + where[kinds == kind], codes[kinds == kind])


def _codes(book: _Codebook, values: Sequence[Any]) -> np.ndarray:
    """The codebook's code of each value (booleans kept apart from the numbers 0 and 1)."""
    try:
        distinct = set(values)
        if (True in distinct or False in distinct) and any(type(v) is bool for v in values):
            # True == 1 == 1.0 as dict keys: wrap booleans so each keeps its own code.
            values = [(v,) if type(v) is bool else v for v in values]
        return book.codes(values)
    except TypeError:  # an unhashable value from an unusual source: classify cell by cell
        book._grow(len(values))
        return np.array([book.add(value) for value in values], dtype=np.int64)


def _note_cells(state: _ColumnState, kind: int, rows: np.ndarray, codes: np.ndarray) -> None:
    """Data notes for the cells of one kind in a batch (at most ``NOTE_CAP`` are made)."""
    book = state.codebook
    head = codes[: NOTE_CAP + 1].tolist()
    raws = [book.raw[c] for c in head]
    if kind == _ERROR:
        state.error_rows.update(rows.tolist())
    if kind == _TEXTNUM:
        texts = [str(r) for r in raws]
        numbers = book.numbers[head].tolist()
        actions = [_converted(t, n) for t, n in zip(texts, numbers, strict=True)]
        state.notes.add_rows(NoteKind.TEXT_NUMBER, rows, texts, actions)
    else:
        note_kind, action = _ACTIONS[kind]
        state.notes.add_rows(note_kind, rows, [str(r).strip() for r in raws], [action] * len(raws))


def _converted(text: str, number: float) -> str:
    return notes_words.converted_to(format_number(number), text.rstrip().endswith("%"))


def read_table(
    path: str | os.PathLike[str] | None,
    *,
    sheet: str | None = None,
    header_row: int | None = None,
    columns: Sequence[str] | None = None,
    source: WorkbookSource | None = None,
    table: str | None = None,
    progress: Callable[[int, int], None] | None = None,
    rows_to_use: RowsToUse = RowsToUse.ALL,
) -> Table:
    """Read a sheet's data region into typed columns.

    Parameters
    ----------
    path : str or os.PathLike or None
        Workbook file, opened with ``io.backends.open_source``; ignored when
        ``source`` is given. Messages name the workbook by its ``display_name``.
    sheet : str, optional
        Sheet to read; default: ``first_data_sheet``. Case is ignored when unique.
    header_row : int, optional
        1-based row holding the headers. Default: the header row of the sheet's
        Excel table if it has one, else the first non-empty row; one-text title
        lines above an all-text header row are skipped and noted.
    columns : sequence of str, optional
        Column names to read (the unique names, see ``read_header``); ``None``
        reads all. Columns keep sheet order.
    source : WorkbookSource, optional
        An open source to read from instead of opening ``path``.
    table : str, optional
        Name of the Excel table to read when the sheet has several.
    progress : callable, optional
        Called with (rows read, rows expected) after each batch of rows.
    rows_to_use : RowsToUse
        ``ALL`` (default) reads hidden and filtered rows like any other and counts
        them in ``Table.n_hidden``; ``VISIBLE`` reads them as empty rows, so no
        analysis uses them and no count includes them.

    Returns
    -------
    Table
        Typed columns, the sheet row number of each data row, the notes made
        while reading, ``n_rows_read`` and a ``fingerprint`` of the values.

    Raises
    ------
    WorkbookError, SheetNotFoundError, ColumnNotFoundError, OptionError, NotEnoughDataError
        With a one-line message saying what to do.

    Notes
    -----
    Data rows run from below the header to the last row holding a value in the
    columns read (or the table's last row); blank rows at the end are not data,
    blank rows in between are kept as all-blank rows. Values in columns outside
    the header's span (no header above them) are not read; each such column
    gets one note. See the module docstring for the cell rules.
    """
    with stages.stage("read"):
        src, owned = _open_source(path, source)
        try:
            return _read(src, src.display_name, sheet, header_row, columns, table, progress, rows_to_use)
        finally:
            if owned:
                src.close()


def _read(
    source: WorkbookSource,
    display: str,
    sheet: str | None,
    header_row: int | None,
    columns: Sequence[str] | None,
    table: str | None,
    progress: Callable[[int, int], None] | None = None,
    rows_to_use: RowsToUse = RowsToUse.ALL,
) -> Table:
    sheet = _first_data_sheet(source, display) if sheet is None else source.resolve_sheet(sheet)
    scan = _IssueScan(source, sheet)  # runs while the sheet loads (the load releases the GIL)
    layout = _locate(source, sheet, header_row, table, display)
    chosen = _select(layout, columns)
    first_data_row = layout.header_row + 1
    expected = _expected_rows(source, sheet, layout)
    states = [
        _ColumnState(
            head=h,
            offset=h.index - layout.first_col,
            letter=column_letter(h.index),
            notes=_NoteBook(sheet, h.name, column_letter(h.index)),
            numbers=np.full(expected, np.nan),
            labels=np.empty(expected, dtype=object),
        )
        for h in chosen
    ]
    span = (layout.columns[0].index, layout.columns[-1].index)
    stray: dict[int, list[Any]] = {}  # column -> [first row, count] of values without a header
    content_all = np.zeros(expected, dtype=bool)  # rows holding an entry in a column read
    row0 = first_data_row
    rows = layout.rows
    need = max((s.offset for s in states), default=-1) + 1
    check_stray = layout.table is None
    # Hidden rows to read as empty: known before the rows stream in, so the search
    # must finish first (it shares the pass over the sheet with the issue scan).
    leave_out = _hidden_rows(source, sheet, scan) if rows_to_use is RowsToUse.VISIBLE else None
    with stages.stage("read.convert"):
        while True:
            size = BATCH_ROWS
            if layout.last_row is not None:
                size = min(size, layout.last_row - row0 + 1)
                if size <= 0:
                    break
            batch = _next_batch(rows, size, display)
            if not batch:
                break
            at, count = row0 - first_data_row, len(batch)
            if leave_out:
                batch = [[] if row0 + i in leave_out else row for i, row in enumerate(batch)]
            if at + count > content_all.shape[0]:
                for state in states:
                    state.ensure(at + count)
                capacity = states[0].numbers.shape[0] if states else at + count
                grown = np.zeros(capacity - content_all.shape[0], dtype=bool)
                content_all = np.concatenate([content_all, grown])
            if states:
                by_column = _transpose(batch, need)
                content = content_all[at : at + count]
                for state in states:
                    _fill_batch(state, by_column[state.offset], row0, at, content)
            if check_stray:
                _find_stray(batch, row0, layout.first_col, span, stray)
            row0 += count
            if progress is not None:
                progress(at + count, max(expected, at + count))
    source.release()  # the loaded sheet's cells are no longer needed: free them before the analyses

    n_seen = row0 - first_data_row
    content_all = content_all[:n_seen]
    had_values = bool(content_all.any())
    # The source may stop before trailing cells it reads as empty (errors, uncalculated
    # formulas), so look for those up to the table's end, or the sheet's end.
    issues = scan.issues(first_data_row, layout.last_row, chosen)
    hidden = leave_out if rows_to_use is RowsToUse.VISIBLE else _hidden_rows(source, sheet, scan)
    if leave_out:
        issues = {cell: issue for cell, issue in issues.items() if cell[0] not in leave_out}
    beyond = max((row for row, _ in issues), default=0) - (first_data_row + n_seen - 1)
    if beyond > 0:
        for state in states:
            state.ensure(n_seen + beyond)
            state.numbers[n_seen : n_seen + beyond] = np.nan
            state.labels[n_seen : n_seen + beyond] = None
            state.n_blank += beyond
        content_all = np.concatenate([content_all, np.zeros(beyond, dtype=bool)])
        n_seen += beyond
    n_errors, n_no_value = _apply_issues(states, issues, first_data_row, content_all)
    if not had_values and n_no_value and not n_errors:
        raise WorkbookError(read_messages.formulas_without_values(sheet, display))
    filled = np.flatnonzero(content_all)
    n_rows = int(filled[-1]) + 1 if filled.size else 0
    if states and not n_rows:
        raise NotEnoughDataError(
            read_messages.no_data_below_headers(sheet, layout.header_row, columns_named=columns is not None)
        )

    # Rows left out are counted wherever they were read (a filter often hides the last
    # rows); rows kept only where they hold data.
    last_counted = first_data_row + (n_seen if leave_out else n_rows) - 1
    n_hidden = None if hidden is None else sum(1 for r in hidden if first_data_row <= r <= last_counted)
    last_data_row = first_data_row + n_rows - 1
    hidden_in_data = sum(1 for r in leave_out if first_data_row <= r <= last_data_row) if leave_out else 0
    built: dict[str, Column] = {}
    cell_notes: list[tuple[int, int, DataNote]] = []
    summaries: list[DataNote] = []
    for position, state in enumerate(states):
        numbers, labels = state.numbers, state.labels
        if numbers.shape[0] != n_rows:  # a copy, so the unused end of the arrays is freed
            numbers, labels = numbers[:n_rows].copy(), labels[:n_rows].copy()
        state.numbers = state.labels = np.empty(0)
        # Trailing blank rows were counted as blanks while streaming; take them back out.
        trailing = max(0, n_seen - n_rows)
        if leave_out:  # rows read as empty are not blanks of the column either
            trailing += hidden_in_data
        head = state.head
        built[head.name] = Column(
            name=head.name,
            letter=state.letter,
            numbers=numbers,
            labels=labels,
            header=head.header,
            n_blank=state.n_blank - trailing,
            n_unreadable=state.n_unreadable,
            n_dates=state.n_dates,
            units=head.units,
        )
        cell_notes.extend((row, position, note) for row, note in state.notes.notes)
        summaries.extend(state.notes.summaries())
    cell_notes.sort(key=lambda item: (item[0], item[1]))
    notes = list(layout.notes) + [n for _, _, n in cell_notes] + summaries
    notes += _stray_notes(sheet, stray)

    rows_index = np.arange(first_data_row, first_data_row + n_rows, dtype=np.int64)
    result = Table(
        sheet=sheet,
        header_row=layout.header_row,
        rows=rows_index,
        columns=built,
        notes=notes,
        n_rows_read=n_rows,
        n_hidden=n_hidden,
        hidden_left_out=bool(leave_out),
    )
    result.fingerprint = fingerprint(result)
    return result


def _expected_rows(source: WorkbookSource, sheet: str, layout: _Layout) -> int:
    """Data rows to make room for: the table's, else the source's last row (grown if short)."""
    if layout.last_row is not None:
        return max(0, layout.last_row - layout.header_row)
    return max(0, int(source.last_row(sheet)) - layout.header_row)


def _hidden_rows(source: WorkbookSource, sheet: str, scan: _IssueScan) -> frozenset[int] | None:
    """The sheet's hidden rows, asked once the issue scan (which may find them on its way) is done."""
    scan.wait()
    return source.hidden_rows(sheet)


def _transpose(batch: list[list[Any]], need: int) -> list[tuple[Any, ...]]:
    """A batch of rows as one tuple per column (short rows padded with blanks)."""
    widths = set(map(len, batch))
    width = max(max(widths), need)
    if len(widths) > 1 or width > min(widths):
        batch = [r if len(r) == width else list(r) + [None] * (width - len(r)) for r in batch]
    return list(zip(*batch, strict=True))


class _IssueScan:
    """The source's search for error cells and uncalculated formulas, run in a thread.

    Notes
    -----
    The file source's search decompresses the sheet XML a second time; run
    beside python-calamine's load of the sheet (which releases the GIL), it
    costs little extra wall time on a machine with two or more cores.
    """

    def __init__(self, source: WorkbookSource, sheet: str) -> None:
        self.found: dict[tuple[int, int], tuple[str, str]] = {}
        self.error: BaseException | None = None
        self.thread: threading.Thread | None = None
        finder = source.cell_issues

        def search() -> None:
            try:
                with stages.stage("read.scan"):
                    self.found = dict(finder(sheet))
            except BaseException as exc:  # noqa: BLE001 - raised again in the reading thread
                self.error = exc

        self.thread = threading.Thread(target=search, name="statmargin-cell-issues", daemon=True)
        self.thread.start()

    def wait(self) -> None:
        """Wait for the search to finish; raise what it raised."""
        if self.thread is not None:
            with stages.stage("read.scan wait"):
                self.thread.join()
        if self.error is not None:
            raise self.error

    def issues(
        self, first_row: int, last_row: int | None, chosen: list[HeaderColumn]
    ) -> dict[tuple[int, int], tuple[str, str]]:
        """The issues found in the rows and columns read."""
        if self.thread is None:
            return {}
        self.wait()
        wanted = {h.index for h in chosen}
        return {
            (row, col): issue
            for (row, col), issue in self.found.items()
            if col in wanted and row >= first_row and (last_row is None or row <= last_row)
        }


def _guard(rows: Iterator[list[Any]], display: str) -> Iterator[list[Any]]:
    """Rows passed through one by one (header search), with failures made one-line errors."""
    while True:
        batch = _next_batch(rows, 1, display)
        if not batch:
            return
        yield batch[0]


def _next_batch(rows: Iterator[list[Any]], size: int, display: str) -> list[list[Any]]:
    """Up to ``size`` rows; a failure inside the source becomes a one-line WorkbookError."""
    try:
        return list(islice(rows, size))
    except Exception as exc:  # noqa: BLE001 - any reader library failure is a damaged file
        detail = " ".join(str(exc).split())[:200] or type(exc).__name__
        raise WorkbookError(damaged_part_way(display, detail)) from None


def _select(layout: _Layout, columns: Sequence[str] | None) -> list[HeaderColumn]:
    """The header columns asked for, in sheet order."""
    if columns is None:
        return list(layout.columns)
    if isinstance(columns, str):
        columns = [columns]
    by_name = {h.name: h for h in layout.columns}
    folded: dict[str, list[HeaderColumn]] = {}
    for h in layout.columns:
        folded.setdefault(h.name.casefold(), []).append(h)
    wanted: set[int] = set()
    for name in columns:
        head = by_name.get(name)
        if head is None:
            matches = folded.get(str(name).strip().casefold(), [])
            head = matches[0] if len(matches) == 1 else None
        if head is None:
            close = difflib.get_close_matches(str(name), list(by_name), n=3, cutoff=0.5)
            raise ColumnNotFoundError(read_messages.not_a_header(name, layout.sheet, layout.header_row, close,
                                                                 list(by_name)))
        wanted.add(head.index)
    return [h for h in layout.columns if h.index in wanted]


def _find_stray(
    batch: list[list[Any]],
    row0: int,
    first_col: int,
    span: tuple[int, int],
    stray: dict[int, list[Any]],
) -> None:
    """Count values in columns outside the header's span (they have no header and are not read)."""
    lo, hi = span[0] - first_col, span[1] - first_col
    width = max(map(len, batch))
    outside = [j for j in range(width) if j < lo or j > hi]
    for j in outside:
        for k, row in enumerate(batch):
            if j < len(row) and not _is_blank(row[j]):
                entry = stray.setdefault(first_col + j, [row0 + k, 0, cell_text(row[j])])
                entry[1] += 1


def _stray_notes(sheet: str, stray: dict[int, list[Any]]) -> list[DataNote]:
    """One note per column that has values but no header (those values are not read)."""
    notes = []
    for col in sorted(stray):
        first, count, text = stray[col]
        letter = column_letter(col)
        notes.append(
            DataNote(
                sheet,
                f"{letter}{first}",
                notes_words.blank_header_column(letter),
                text,
                NoteKind.HEADER,
                notes_words.values_without_header(count),
            )
        )
    return notes


def _apply_issues(
    states: list[_ColumnState],
    issues: CellIssues,
    first_row: int,
    content: np.ndarray,
) -> tuple[int, int]:
    """Turn cells read as blank into error or no-saved-value notes; returns (errors, no-value)."""
    by_col = {s.head.index: s for s in states}
    n_errors = n_no_value = 0
    for (row, col), (kind, text) in sorted(issues.items()):
        state = by_col.get(col)
        k = row - first_row
        if state is None or not 0 <= k < content.shape[0]:
            continue
        if kind == ERROR_ISSUE and row in state.error_rows:
            continue  # the source already gave the error code as text; noted once
        state.n_blank -= 1
        state.n_unreadable += 1
        content[k] = True  # a formula or error is an entry in that row, not a blank
        if kind == ERROR_ISSUE:
            state.notes.add(row, NoteKind.ERROR_VALUE, text, notes_words.ERROR_SKIPPED)
            n_errors += 1
        else:
            state.notes.add(
                row,
                NoteKind.NO_CACHED_VALUE,
                text,
                notes_words.NO_SAVED_VALUE,
            )
            n_no_value += 1
    if issues:
        for state in states:  # keep each column's notes in row order after the additions
            state.notes.notes.sort(key=itemgetter(0))
    return n_errors, n_no_value


def fingerprint(table: Table) -> str:
    """A short hash of the values read, so a run log can tell whether the data changed.

    Notes
    -----
    BLAKE2b (16-byte digest) over the sheet name, header row, data row numbers,
    and each column's name, numbers (as float64 bytes) and labels.
    """
    digest = hashlib.blake2b(digest_size=16)
    digest.update(table.sheet.encode("utf-8") + b"\x00" + str(table.header_row).encode())
    digest.update(np.ascontiguousarray(table.rows, dtype=np.int64).tobytes())
    for name, column in table.columns.items():
        digest.update(b"\x01" + name.encode("utf-8") + b"\x00")
        digest.update(np.ascontiguousarray(column.numbers, dtype=np.float64).tobytes())
        labels = column.labels
        missing = np.equal(labels, None)  # type: ignore[call-overload]  # elementwise at run time
        if missing.any():
            labels = labels.copy()
            labels[missing] = "\x00"
        digest.update("\x1f".join(labels.tolist()).encode("utf-8"))
    return digest.hexdigest()


# -----------------------------------------------------------------------------
# Headers and samples for the roles sheet
# -----------------------------------------------------------------------------
def read_header(
    path: str | os.PathLike[str] | None,
    *,
    sheet: str | None = None,
    header_row: int | None = None,
    source: WorkbookSource | None = None,
    table: str | None = None,
) -> list[tuple[str, str]]:
    """The data columns' unique names and letters, without reading the data.

    Parameters
    ----------
    path, sheet, header_row, source, table
        As for ``read_table``.

    Returns
    -------
    list of (str, str)
        ``(name, letter)`` in sheet order; the names ``read_table`` uses.
    """
    src, owned = _open_source(path, source)
    try:
        display = src.display_name
        name = _first_data_sheet(src, display) if sheet is None else src.resolve_sheet(sheet)
        layout = _locate(src, name, header_row, table, display)
        return [(h.name, column_letter(h.index)) for h in layout.columns]
    finally:
        if owned:
            src.close()


def sample_values(column: Column, k: int = 5) -> list[str]:
    """Up to ``k`` distinct values of a column, in row order, as text (for the roles sheet).

    Parameters
    ----------
    column : Column
        A column from ``read_table``.
    k : int
        How many values at most.

    Returns
    -------
    list of str
        Numbers shown without a trailing ".0" and to 6 significant digits; labels
        as read; in a column that mostly holds dates, day serials shown as ISO
        dates (2026-03-01).
    """
    out: list[str] = []
    seen: set[str] = set()
    numbers, labels = column.numbers, column.labels
    filled = len(column) - column.n_blank - column.n_unreadable
    show = _serial_date_text if column.n_dates * 2 >= max(filled, 1) else _sample_number
    for i in _first_occurrences(numbers, labels):
        if len(out) >= k:
            break
        label = labels[i]
        if label is not None:
            text = str(label)
        elif not math.isnan(numbers[i]):
            text = show(float(numbers[i]))
        else:
            continue
        if text not in seen:
            seen.add(text)
            out.append(text)
    return out


def _first_occurrences(numbers: np.ndarray, labels: np.ndarray, head: int = 1000) -> Iterator[int]:
    """Row numbers, in order, of each value's first appearance: every row of the first ``head``, then the rest.

    A column of few distinct values (codes, a 0/1 outcome) would otherwise be
    walked row by row to its end; past the head only first appearances are
    visited, found by NumPy and one pass over the labels.
    """
    yield from range(min(head, len(numbers)))
    if len(numbers) <= head:
        return
    rest_labels = labels[head:]
    has_label = not_none(rest_labels)
    number_rows = np.flatnonzero(~has_label & ~np.isnan(numbers[head:]))
    _, first = np.unique(numbers[head:][number_rows], return_index=True)
    label_first: dict[Any, int] = {}
    for row, label in zip(np.flatnonzero(has_label).tolist(), rest_labels[has_label].tolist(), strict=True):
        label_first.setdefault(label, row)
    rows = np.concatenate([number_rows[first], np.fromiter(label_first.values(), dtype=np.intp)])
    yield from (head + int(row) for row in np.sort(rows))


def _serial_date_text(serial: float) -> str:
    """An Excel day serial (1900 system, days since 1899-12-30) as an ISO date, with time if any."""
    moment = dt.datetime(1899, 12, 30) + dt.timedelta(days=serial)
    return moment.isoformat(sep=" ", timespec="minutes") if serial % 1 else moment.date().isoformat()
