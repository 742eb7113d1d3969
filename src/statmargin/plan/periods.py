"""The period role: read a column's cells as periods (week, month, quarter, year) and lay out the series.

A period column may hold real dates, spreadsheet day numbers, or text such as
``2026-03``, ``2026-03-14``, ``Mar 2026``, ``March 2026``, ``03/2026``,
``2026 Q1``, ``Q1 2026``, ``2026-W07`` or ``2026``. Each cell becomes an
integer **period key** at the chosen grain, so that consecutive periods have
consecutive keys:

=========  ==========================================================
grain      key
=========  ==========================================================
year       the year, e.g. 2026
quarter    ``year * 4 + quarter - 1``
month      ``year * 12 + month - 1``
week       ``(monday.toordinal() - 1) // 7`` for the ISO-8601 week's
           Monday (weeks run Monday to Sunday; proleptic day 1 was a
           Monday, so the key counts whole weeks)
=========  ==========================================================

Rules (documented in README "The period role"):

* **Numbers.** When the reader saw dates in the column (``Column.n_dates > 0``)
  every number is a day number counted from 1899-12-30, as the reader stores
  dates. Otherwise a column of whole numbers all between 1900 and 2100 holds
  years, one of whole numbers all of the form YYYYMM holds months, and any
  other number is read as a spreadsheet day number (from 1899-12-30, or from
  1904-01-01 when ``date1904`` is set) if it falls between 1950-01-01 and
  2100-12-31; numbers outside that window are unreadable. Raw day numbers in a
  plain number column are rare, so the window keeps counts from being read
  as dates in 1900.
* **Text.** ISO dates (``2026-03-14``, optionally with a time), ``14 Mar 2026``,
  ``Mar 14, 2026``; months as ``2026-03``, ``2026/3``, ``03/2026``, ``3-2026``,
  ``Mar 2026``, ``March 2026``, ``Mar-2026``; quarters as ``2026 Q1``,
  ``2026-Q1``, ``Q1 2026``, ``Q1/2026``; ISO weeks as ``2026-W07``, ``2026W7``,
  ``2026 W07``; years as ``2026``. English month names and abbreviations, any
  case. Day-first or month-first dates such as ``03/04/2026`` are ambiguous and
  are not read; two-digit years are not read either.
* **Grain.** A cell can be put in a period no finer than what it carries: a
  date fits any grain, ``2026-03`` fits month, quarter and year, ``2026 Q1``
  quarter and year, a week week and (ISO) year. Cells too coarse for the grain
  are unreadable at that grain.
* **A period column** is one where at least half of the filled cells read as
  periods at the grain (``READABLE_SHARE``); otherwise the column is refused in
  one line. Unreadable cells of a period column are counted and named with a few
  examples (``Note.PERIOD_UNREADABLE``) and their rows are left out.
* **The series** runs from the first to the last period with rows; a period in
  between without rows is a gap (n = 0), named (``Note.PERIOD_GAPS``), never
  dropped, so trends are measured in real periods.
* **The latest period** is the last complete one. When the last period's rows
  carry days (dates), it is partial if its last date falls before the period's
  last day and the period had not yet ended on the day of the run (``as_of``):
  rows stopping on Friday the 29th make a month partial while the month is
  still running, not once it is over. A partial last period is named
  (``Note.PERIOD_PARTIAL``) and the period before it becomes the latest. When the cells carry only labels
  (``2026-03``), the last period is complete unless the user says it is partial.
  The user may also name the latest period outright.
* **Too few rows**: a period with at least one but fewer than
  ``MIN_ROWS_PER_PERIOD`` rows is named (``Note.PERIOD_FEW_ROWS``) and kept as
  its own period, never pooled with a neighbour.
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass, field

import numpy as np

from ..errors import RoleError
from ..read.table import Column
from ..vocabulary import Grain, Precision
from ..vocabulary.codes import Coded, Count, Note, coded

# A period column has at least this share of its filled cells readable as periods.
READABLE_SHARE = 0.5
# Periods with fewer rows are named as small (common practice: about 10 records per
# group before a share or mean of the group is read on its own; Wilson intervals and
# control limits stay valid below it but become wide).
MIN_ROWS_PER_PERIOD = 10
EXAMPLES_SHOWN = 5  # unreadable cells named by row in the note

_EPOCH_1900 = dt.date(1899, 12, 30).toordinal()  # how the reader stores dates
_EPOCH_1904 = dt.date(1904, 1, 1).toordinal()
_UNIX = dt.date(1970, 1, 1).toordinal()
_DATE_MIN = dt.date(1900, 3, 1).toordinal()  # reader's day numbers are exact from here
_DATE_MAX = dt.date(2200, 12, 31).toordinal()
_RAW_MIN = dt.date(1950, 1, 1).toordinal()  # raw day numbers in a number column
_RAW_MAX = dt.date(2100, 12, 31).toordinal()
_YEAR_MIN, _YEAR_MAX = 1900, 2100

# Grains a cell of each precision can be put in.
_FITS: dict[Precision, frozenset[Grain]] = {
    Precision.DAY: frozenset(Grain),
    Precision.WEEK: frozenset({Grain.WEEK, Grain.YEAR}),
    Precision.MONTH: frozenset({Grain.MONTH, Grain.QUARTER, Grain.YEAR}),
    Precision.QUARTER: frozenset({Grain.QUARTER, Grain.YEAR}),
    Precision.YEAR: frozenset({Grain.YEAR}),
}
_FINEST_FIRST = (Grain.WEEK, Grain.MONTH, Grain.QUARTER, Grain.YEAR)
PERIODS_PER_YEAR = {Grain.MONTH: 12, Grain.QUARTER: 4, Grain.YEAR: 1}


# --------------------------------------------------------------------------- keys and labels


def week_key(ordinal: int) -> int:
    """The week key of a day (proleptic ordinal): whole weeks since Monday 0001-01-01."""
    return (ordinal - 1) // 7


def period_bounds(grain: Grain, key: int) -> tuple[dt.date, dt.date]:
    """First and last day of a period.

    Examples
    --------
    >>> period_bounds(Grain.MONTH, 2026 * 12 + 1)
    (datetime.date(2026, 2, 1), datetime.date(2026, 2, 28))
    >>> period_bounds(Grain.WEEK, week_key(dt.date(2026, 2, 11).toordinal()))
    (datetime.date(2026, 2, 9), datetime.date(2026, 2, 15))
    """
    if grain is Grain.WEEK:
        monday = dt.date.fromordinal(key * 7 + 1)
        return monday, monday + dt.timedelta(days=6)
    if grain is Grain.YEAR:
        return dt.date(key, 1, 1), dt.date(key, 12, 31)
    months = 3 if grain is Grain.QUARTER else 1
    first_month = key * months  # months since year 0
    start = dt.date(first_month // 12, first_month % 12 + 1, 1)
    after = first_month + months
    end = dt.date(after // 12, after % 12 + 1, 1) - dt.timedelta(days=1)
    return start, end


def period_label(grain: Grain, key: int) -> str:
    """The period's identifier as shown and written to JSON: ``2026-03``, ``2026 Q1``, ``2026-W07``, ``2026``.

    Examples
    --------
    >>> [period_label(Grain.MONTH, 2026 * 12 + 2), period_label(Grain.QUARTER, 2026 * 4)]
    ['2026-03', '2026 Q1']
    >>> period_label(Grain.WEEK, week_key(dt.date(2026, 2, 11).toordinal()))
    '2026-W07'
    """
    if grain is Grain.YEAR:
        return f"{key:04d}"
    if grain is Grain.QUARTER:
        return f"{key // 4:04d} Q{key % 4 + 1}"
    if grain is Grain.MONTH:
        return f"{key // 12:04d}-{key % 12 + 1:02d}"
    iso = dt.date.fromordinal(key * 7 + 1).isocalendar()
    return f"{iso[0]:04d}-W{iso[1]:02d}"


def year_earlier(grain: Grain, key: int) -> int | None:
    """The same period one year earlier (the same ISO week number for weeks), or None.

    A year has no earlier "same period" at the year grain (that is the previous
    period), and week 53 has none in a year of 52 weeks.
    """
    if grain is Grain.YEAR:
        return None
    if grain is not Grain.WEEK:
        return key - PERIODS_PER_YEAR[grain]
    year, week, _ = dt.date.fromordinal(key * 7 + 1).isocalendar()
    try:
        monday = dt.date.fromisocalendar(year - 1, week, 1)
    except ValueError:
        return None
    return week_key(monday.toordinal())


def parse_grain(text: str | Grain | None) -> Grain:
    """The grain a user typed on the roles sheet ('Month', ' week '); empty means month.

    Raises
    ------
    RoleError
        For a word that is not a grain, in one line that lists the choices.

    Examples
    --------
    >>> parse_grain(" Quarter "), parse_grain(None)
    ('quarter', 'month')
    """
    from ..words.period_words import unknown_grain

    if isinstance(text, Grain):
        return text
    word = " ".join(str(text or "").split()).lower()
    if not word:
        return Grain.MONTH
    try:
        return Grain(word)
    except ValueError:
        raise RoleError(unknown_grain(str(text))) from None


# --------------------------------------------------------------------------- text cells

_MONTHS = {
    name: i + 1
    for i, names in enumerate(
        [
            ("jan", "january"), ("feb", "february"), ("mar", "march"), ("apr", "april"),
            ("may",), ("jun", "june"), ("jul", "july"), ("aug", "august"),
            ("sep", "sept", "september"), ("oct", "october"), ("nov", "november"),
            ("dec", "december"),
        ]
    )
    for name in names
}
_MON = r"(?P<mon>[a-z]{3,9})\.?"
_Y = r"(?P<y>\d{4})"
_PATTERNS: list[tuple[re.Pattern[str], Precision]] = [
    (re.compile(rf"^{_Y}-(?P<m>\d{{1,2}})-(?P<d>\d{{1,2}})(?:[ t]\d{{1,2}}:\d{{2}}(?::\d{{2}}(?:\.\d+)?)?)?$"), Precision.DAY),
    (re.compile(rf"^(?P<d>\d{{1,2}})[ -]{_MON}[ -,]*{_Y}$"), Precision.DAY),
    (re.compile(rf"^{_MON}[ -](?P<d>\d{{1,2}}),?[ -]{_Y}$"), Precision.DAY),
    (re.compile(rf"^{_Y}[-/ ]?w(?P<w>\d{{1,2}})$"), Precision.WEEK),
    (re.compile(rf"^{_Y}[-/ ]?q(?P<q>[1-4])$"), Precision.QUARTER),
    (re.compile(rf"^q(?P<q>[1-4])[-/ ]?{_Y}$"), Precision.QUARTER),
    (re.compile(rf"^{_Y}[-/.](?P<m>\d{{1,2}})$"), Precision.MONTH),
    (re.compile(rf"^(?P<m>\d{{1,2}})[-/.]{_Y}$"), Precision.MONTH),
    (re.compile(rf"^{_MON}[ \-/,]*{_Y}$"), Precision.MONTH),
    (re.compile(rf"^{_Y}[ \-/]{_MON}$"), Precision.MONTH),
    (re.compile(rf"^{_Y}$"), Precision.YEAR),
]


@dataclass(frozen=True)
class _Read:
    """One cell read as a period: its precision and its finest key (day ordinal for dates)."""

    precision: Precision
    value: int


def read_period_text(text: str) -> _Read | None:
    """Read one text cell as a period at its own precision, or None.

    Examples
    --------
    >>> read_period_text("Mar 2026")
    _Read(precision='month', value=24314)
    >>> read_period_text("2026 Q1").precision, read_period_text("03/2026").value == 2026 * 12 + 2
    ('quarter', True)
    >>> read_period_text("03/04/2026") is None
    True
    """
    cleaned = " ".join(text.strip().casefold().split())
    for pattern, precision in _PATTERNS:
        match = pattern.match(cleaned)
        if match is None:
            continue
        parts = match.groupdict()
        year = int(parts["y"])
        if not _YEAR_MIN <= year <= _YEAR_MAX:
            return None
        month = int(parts["m"]) if parts.get("m") else _MONTHS.get(parts.get("mon") or "", 0)
        try:
            if precision is Precision.DAY:
                return _Read(precision, dt.date(year, month, int(parts["d"])).toordinal())
            if precision is Precision.WEEK:
                monday = dt.date.fromisocalendar(year, int(parts["w"]), 1)
                return _Read(precision, week_key(monday.toordinal()))
        except ValueError:
            return None
        if precision is Precision.QUARTER:
            return _Read(precision, year * 4 + int(parts["q"]) - 1)
        if precision is Precision.MONTH:
            return _Read(precision, year * 12 + month - 1) if 1 <= month <= 12 else None
        return _Read(precision, year)
    return None


# --------------------------------------------------------------------------- reading a column


@dataclass(frozen=True)
class PeriodKeys:
    """A column read as periods at one grain: a key per row, where readable.

    ``keys`` is meaningful only where ``valid``; ``day`` holds the day ordinal of
    rows whose cell carried a date (0 elsewhere), for the partial-period check.
    """

    column: str
    grain: Grain
    keys: np.ndarray  # int64 per row
    valid: np.ndarray  # bool per row
    day: np.ndarray  # int64 per row: the date's ordinal where the cell carried a day, else 0
    notes: list[Coded] = field(default_factory=list)
    n_filled: int = 0


def _keys_from_days(ordinals: np.ndarray, grain: Grain) -> np.ndarray:
    """Period keys for day ordinals, vectorized (numpy calendar months)."""
    if grain is Grain.WEEK:
        return (ordinals - 1) // 7
    months = (ordinals - _UNIX).astype("datetime64[D]").astype("datetime64[M]").astype(np.int64)
    month_key = months + 1970 * 12
    if grain is Grain.MONTH:
        return month_key
    if grain is Grain.QUARTER:
        return month_key // 3
    return month_key // 12


def _convert(precision: Precision, values: np.ndarray, grain: Grain) -> np.ndarray:
    """Keys at ``grain`` for finest keys of one precision (the grain must fit the precision)."""
    if precision is Precision.DAY:
        return _keys_from_days(values, grain)
    if precision is Precision.WEEK:
        if grain is Grain.WEEK:
            return values
        # ISO year of the week: the year of its Thursday.
        return _keys_from_days(values * 7 + 4, Grain.YEAR)
    if precision is Precision.MONTH:
        return {Grain.MONTH: values, Grain.QUARTER: values // 3, Grain.YEAR: values // 12}[grain]
    if precision is Precision.QUARTER:
        return values if grain is Grain.QUARTER else values // 4
    return values


def _numbers_as_periods(
    numbers: np.ndarray, n_dates: int, date1904: bool
) -> tuple[Precision, np.ndarray, np.ndarray]:
    """Finest keys of the numeric cells: (precision, finest key per value, readable per value)."""
    whole = np.floor(numbers)
    if n_dates == 0 and numbers.size and bool(np.all(whole == numbers)):
        if bool(np.all((numbers >= _YEAR_MIN) & (numbers <= _YEAR_MAX))):
            return Precision.YEAR, whole.astype(np.int64), np.ones(numbers.size, dtype=bool)
        year, month = np.divmod(whole, 100)
        if bool(np.all((year >= _YEAR_MIN) & (year <= _YEAR_MAX) & (month >= 1) & (month <= 12))):
            keys = (year * 12 + month - 1).astype(np.int64)
            return Precision.MONTH, keys, np.ones(numbers.size, dtype=bool)
    if n_dates > 0:
        ordinals = whole + _EPOCH_1900
        low, high = _DATE_MIN, _DATE_MAX
    else:
        ordinals = whole + (_EPOCH_1904 if date1904 else _EPOCH_1900)
        low, high = _RAW_MIN, _RAW_MAX
    ok = (ordinals >= low) & (ordinals <= high)
    return Precision.DAY, np.where(ok, ordinals, 0).astype(np.int64), ok


def read_periods(
    column: Column,
    grain: Grain | str = Grain.MONTH,
    *,
    date1904: bool = False,
    rows: np.ndarray | None = None,
) -> PeriodKeys:
    """Read a column's cells as periods at a grain.

    Parameters
    ----------
    column : read.table.Column
        The column as read (``numbers`` and ``labels``; dates arrive as day
        numbers counted from 1899-12-30, with ``n_dates`` counting them).
    grain : Grain or str
        ``week`` (ISO-8601), ``month`` (default), ``quarter`` or ``year``.
    date1904 : bool
        Read raw day numbers in a column without dates from 1904-01-01 (old Mac
        workbooks); cells the reader saw as dates are already converted.
    rows : numpy.ndarray, optional
        Sheet row number of each value, to name unreadable cells by row.

    Returns
    -------
    PeriodKeys
        A key per row with a validity mask, the day of cells that carried dates,
        and a note naming unreadable cells (facts only).

    Raises
    ------
    RoleError
        If fewer than half of the filled cells read as periods at ``grain``
        (the message, made in ``words.period_words``, names the grain the
        column does support when there is one).

    Notes
    -----
    Numbers are converted in one vectorized step; text is read once per
    distinct label (``pandas.factorize``), so a million rows of month labels
    cost one regular-expression match per distinct label.

    Examples
    --------
    >>> from statmargin.read.table import Column
    >>> col = Column("Month", "B", np.full(4, np.nan),
    ...              np.array(["2026-01", "Feb 2026", "03/2026", "soon"], dtype=object))
    >>> read = read_periods(col, "month")
    >>> [period_label(Grain.MONTH, int(k)) for k in read.keys[read.valid]]
    ['2026-01', '2026-02', '2026-03']
    >>> read.notes[0].facts["n"]
    1
    """
    from ..words.period_words import not_a_period_column

    grain = Grain(str(grain).strip().lower()) if not isinstance(grain, Grain) else grain
    n = len(column)
    keys = np.zeros(n, dtype=np.int64)
    valid = np.zeros(n, dtype=bool)
    day = np.zeros(n, dtype=np.int64)
    bad = np.zeros(n, dtype=bool)  # filled but unreadable at this grain
    supported: set[Grain] = set()

    is_number = ~np.isnan(column.numbers)
    if is_number.any():
        precision, finest, ok = _numbers_as_periods(column.numbers[is_number], column.n_dates, date1904)
        where = np.flatnonzero(is_number)
        if ok.any():
            supported |= _FITS[precision]
        if grain in _FITS[precision]:
            keys[where[ok]] = _convert(precision, finest[ok], grain)
            valid[where[ok]] = True
            if precision is Precision.DAY:
                day[where[ok]] = finest[ok]
            bad[where[~ok]] = True
        else:
            bad[where] = True

    others = np.flatnonzero(~is_number)
    where = others[column.labels[others] != np.array(None)]  # elementwise: the cells holding text
    if where.size:
        import pandas as pd

        codes, uniques = pd.factorize(column.labels[where])
        reads = [read_period_text(str(u)) for u in uniques]
        for precision in Precision:
            chosen = np.array([r is not None and r.precision is precision for r in reads], dtype=bool)
            if not chosen.any():
                continue
            supported |= _FITS[precision]
            finest_by_code = np.array([r.value if r is not None else 0 for r in reads], dtype=np.int64)
            rows_here = chosen[codes]
            at = where[rows_here]
            if grain in _FITS[precision]:
                finest = finest_by_code[codes[rows_here]]
                keys[at] = _convert(precision, finest, grain)
                valid[at] = True
                if precision is Precision.DAY:
                    day[at] = finest
            else:
                bad[at] = True
        unread = np.array([r is None for r in reads], dtype=bool)
        bad[where[unread[codes]]] = True

    n_filled = int(valid.sum() + bad.sum())
    if n_filled == 0 or valid.sum() < READABLE_SHARE * n_filled:
        finest_grain = None if grain in supported else next((g for g in _FINEST_FIRST if g in supported), None)
        examples = _examples(column, np.flatnonzero(bad), rows)
        raise RoleError(not_a_period_column(column.name, grain, finest_grain, examples))
    notes: list[Coded] = []
    if bad.any():
        notes.append(
            coded(
                Note.PERIOD_UNREADABLE,
                column=column.name,
                n=Count(int(bad.sum())),
                grain=grain,
                examples=_examples(column, np.flatnonzero(bad), rows),
            )
        )
    return PeriodKeys(column.name, grain, keys, valid, day, notes, n_filled)


def _examples(column: Column, positions: np.ndarray, rows: np.ndarray | None) -> list[tuple[int, str]]:
    """A few unreadable cells as (sheet row or 1-based position, text shown)."""
    out = []
    for i in positions[:EXAMPLES_SHOWN]:
        label = column.labels[i]
        text = str(label) if label is not None else f"{column.numbers[i]:g}"
        out.append((int(rows[i]) if rows is not None else int(i) + 1, text))
    return out


# --------------------------------------------------------------------------- the series axis


@dataclass(frozen=True)
class PeriodAxis:
    """The ordered periods from the first to the last with rows, and which one is the latest.

    Arrays are aligned with ``keys`` (``first`` to ``last`` inclusive, gaps included).
    """

    grain: Grain
    keys: np.ndarray  # int64, consecutive
    counts: np.ndarray  # int64 rows per period (0 for a gap)
    latest: int  # key of the latest period used for comparisons and flags
    previous: int | None  # the nearest earlier period with rows
    year_earlier: int | None  # the same period a year before, when it has rows
    partial: int | None  # key of a partial last period (after ``latest``), if any
    few: tuple[int, ...]  # keys with 1..minimum-1 rows
    gaps: tuple[int, ...]  # keys with no rows
    minimum: int = MIN_ROWS_PER_PERIOD
    notes: list[Coded] = field(default_factory=list)

    @property
    def labels(self) -> list[str]:
        return [period_label(self.grain, int(k)) for k in self.keys]

    @property
    def first(self) -> int:
        return int(self.keys[0])

    def index(self, keys: np.ndarray) -> np.ndarray:
        """Position on the axis of each key (0 for the first period)."""
        return np.asarray(keys, dtype=np.int64) - self.first

    def through_latest(self) -> np.ndarray:
        """Mask over the axis: periods up to and including the latest (the partial one after it left out)."""
        return self.keys <= self.latest


def parse_period(text: str, grain: Grain) -> int | None:
    """The key of a period label a user typed (``2026-03``, ``Mar 2026``, ...) at a grain, or None."""
    read = read_period_text(str(text))
    if read is None or grain not in _FITS[read.precision]:
        return None
    return int(_convert(read.precision, np.array([read.value], dtype=np.int64), grain)[0])


def period_axis(
    periods: PeriodKeys,
    *,
    latest: str | None = None,
    last_is_partial: bool | None = None,
    minimum: int = MIN_ROWS_PER_PERIOD,
    mask: np.ndarray | None = None,
    as_of: dt.date | None = None,
) -> PeriodAxis:
    """Lay out the series: every period from first to last, the latest complete one, gaps and small periods.

    Parameters
    ----------
    periods : PeriodKeys
        The column read by :func:`read_periods`.
    latest : str, optional
        The latest period as the user named it (a label such as ``2026-03``);
        default: the last complete period.
    last_is_partial : bool, optional
        The user's word on whether the last period with rows is partial; default
        (None): partial when its rows carry dates, the last of them falls
        before the period's last day and the period had not ended by ``as_of``;
        complete when they carry only labels.
    minimum : int
        Rows below which a period is named as small (``MIN_ROWS_PER_PERIOD``).
    mask : numpy.ndarray of bool, optional
        Rows to count (e.g. rows with a usable outcome); default all readable rows.
    as_of : datetime.date, optional
        The day of the run (default today), for the partial-period check.

    Returns
    -------
    PeriodAxis

    Raises
    ------
    RoleError
        If no row has a period, or ``latest`` is not a period of the data.

    Examples
    --------
    Rows dated 2026-01-05 to 2026-03-14 by month: March is partial, so February is the latest.

    >>> from statmargin.read.table import Column
    >>> days = [dt.date(2026, 1, 5), dt.date(2026, 2, 20), dt.date(2026, 3, 14)]
    >>> serial = np.array([d.toordinal() - dt.date(1899, 12, 30).toordinal() for d in days], float)
    >>> col = Column("Visit date", "A", serial, np.full(3, None, dtype=object), n_dates=3)
    >>> axis = period_axis(read_periods(col, "month"), as_of=dt.date(2026, 3, 15))
    >>> axis.labels, period_label(axis.grain, axis.latest), period_label(axis.grain, axis.partial)
    (['2026-01', '2026-02', '2026-03'], '2026-02', '2026-03')
    """
    from ..words.period_words import no_period_rows, unknown_latest

    grain = periods.grain
    use = periods.valid if mask is None else (periods.valid & mask)
    present = periods.keys[use]
    if present.size == 0:
        raise RoleError(no_period_rows(periods.column))
    first, last = int(present.min()), int(present.max())
    axis_keys = np.arange(first, last + 1, dtype=np.int64)
    counts = np.bincount(present - first, minlength=axis_keys.size).astype(np.int64)
    notes: list[Coded] = list(periods.notes)

    partial: int | None = None
    if latest is not None:
        chosen = parse_period(latest, grain)
        if chosen is None or not first <= chosen <= last or counts[chosen - first] == 0:
            raise RoleError(unknown_latest(latest, periods.column, period_label(grain, first), period_label(grain, last)))
        notes.append(coded(Note.PERIOD_USER_LATEST, period=period_label(grain, chosen)))
        latest_key = chosen
        if chosen < last:
            partial = last if last_is_partial else None
    else:
        is_partial = last_is_partial
        last_day = 0
        if is_partial is None:
            in_last = use & (periods.keys == last) & (periods.day > 0)
            last_day = int(periods.day[in_last].max()) if in_last.any() else 0
            end = period_bounds(grain, last)[1].toordinal()
            today = (as_of or dt.date.today()).toordinal()
            is_partial = bool(last_day) and last_day < end and today < end
        latest_key = last
        if is_partial:
            earlier = np.flatnonzero(counts[:-1] > 0)
            if earlier.size:  # with a single period there is nothing complete to fall back on
                partial = last
                latest_key = first + int(earlier[-1])
                notes.append(
                    coded(
                        Note.PERIOD_PARTIAL,
                        period=period_label(grain, last),
                        last_date=dt.date.fromordinal(last_day) if last_day else None,
                        period_end=period_bounds(grain, last)[1],
                    )
                )

    before = np.flatnonzero(counts[: latest_key - first] > 0)
    previous = first + int(before[-1]) if before.size else None
    back = year_earlier(grain, latest_key)
    if back is None or back < first or counts[back - first] == 0:
        back = None
    upto = axis_keys <= latest_key if partial is None else axis_keys < partial
    gaps = tuple(int(k) for k in axis_keys[(counts == 0) & upto])
    few = tuple(int(k) for k in axis_keys[(counts > 0) & (counts < minimum) & (axis_keys != partial)])
    if gaps:
        notes.append(coded(Note.PERIOD_GAPS, column=periods.column, periods=[period_label(grain, k) for k in gaps]))
    if few:
        notes.append(
            coded(
                Note.PERIOD_FEW_ROWS,
                periods=[(period_label(grain, k), Count(int(counts[k - first]))) for k in few],
                minimum=minimum,
            )
        )
    return PeriodAxis(
        grain=grain,
        keys=axis_keys,
        counts=counts,
        latest=latest_key,
        previous=previous,
        year_earlier=back,
        partial=partial,
        few=few,
        gaps=gaps,
        minimum=minimum,
        notes=notes,
    )


def rows_in(periods: PeriodKeys, key: int | None) -> np.ndarray:
    """Mask of the rows in one period (all False for None), e.g. for the latest-versus-previous test."""
    if key is None:
        return np.zeros(periods.keys.shape, dtype=bool)
    return periods.valid & (periods.keys == key)
