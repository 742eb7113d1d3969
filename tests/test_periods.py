"""Reading a period column: formats, serial numbers, grains, gaps, partial and small periods.

Reference values are calendar facts (ISO-8601 week numbers from Python's
``date.isocalendar``, which implements ISO 8601; Excel's day numbers count from
1899-12-30, or from 1904-01-01 in the 1904 date system, as documented in
ECMA-376 Part 1, section 18.17.4.1).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from statmargin.errors import RoleError
from statmargin.plan.periods import (
    MIN_ROWS_PER_PERIOD,
    parse_grain,
    parse_period,
    period_axis,
    period_bounds,
    period_label,
    read_period_text,
    read_periods,
    rows_in,
    week_key,
    year_earlier,
)
from statmargin.read.table import Column
from statmargin.vocabulary import Grain
from statmargin.vocabulary.codes import Note
from statmargin.words.sentences import say

EPOCH = dt.date(1899, 12, 30)


def text_column(values: list[str | None], name: str = "Period") -> Column:
    """A column of text cells as the reader gives them."""
    return Column(name, "A", np.full(len(values), np.nan), np.array(values, dtype=object))


def date_column(days: list[dt.date], name: str = "Visit date") -> Column:
    """A column of date cells: day numbers from 1899-12-30, counted as dates."""
    serial = np.array([(d - EPOCH).days for d in days], dtype=float)
    return Column(name, "A", serial, np.full(len(days), None, dtype=object), n_dates=len(days))


def number_column(values: list[float], name: str = "Period") -> Column:
    """A column of plain numbers (no date cells)."""
    return Column(name, "A", np.array(values, dtype=float), np.full(len(values), None, dtype=object))


def labels(read, grain=Grain.MONTH) -> list[str]:
    """Period labels of the readable rows."""
    return [period_label(grain, int(k)) for k in read.keys[read.valid]]


@pytest.mark.parametrize(
    ("text", "month"),
    [
        ("2026-03", "2026-03"),
        ("2026/3", "2026-03"),
        ("2026-03-14", "2026-03"),
        ("2026-03-31 23:59", "2026-03"),
        ("2026-03-31T08:15:00", "2026-03"),
        ("Mar 2026", "2026-03"),
        ("march 2026", "2026-03"),
        ("MARCH 2026", "2026-03"),
        ("Mar-2026", "2026-03"),
        ("Sept 2026", "2026-09"),
        ("03/2026", "2026-03"),
        ("3-2026", "2026-03"),
        ("14 Mar 2026", "2026-03"),
        ("Mar 14, 2026", "2026-03"),
        ("2026 Mar", "2026-03"),
        ("  2026-12 ", "2026-12"),
    ],
)
def test_month_text_formats(text: str, month: str) -> None:
    """Each documented text form of a month or a day is put in its calendar month."""
    read = read_periods(text_column([text]), Grain.MONTH)
    assert labels(read) == [month]


@pytest.mark.parametrize(
    ("text", "quarter"),
    [("2026 Q1", "2026 Q1"), ("Q1 2026", "2026 Q1"), ("2026-Q4", "2026 Q4"), ("q2/2026", "2026 Q2"),
     ("2026-05", "2026 Q2"), ("2026-09-30", "2026 Q3")],
)
def test_quarter_text_formats(text: str, quarter: str) -> None:
    """Quarters are read as written, and months and dates fall in their quarter."""
    read = read_periods(text_column([text]), Grain.QUARTER)
    assert labels(read, Grain.QUARTER) == [quarter]


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # 2026-02-11 is a Wednesday in ISO week 7 of 2026 (Python's isocalendar implements ISO 8601).
        ("2026-W07", dt.date(2026, 2, 11)),
        ("2026W7", dt.date(2026, 2, 9)),
        ("2026 w07", dt.date(2026, 2, 15)),
        # 2021-01-03 (a Sunday) belongs to ISO week 53 of 2020.
        ("2020-W53", dt.date(2021, 1, 3)),
    ],
)
def test_iso_weeks(text: str, expected: dt.date) -> None:
    """ISO week labels name the Monday-to-Sunday week that holds the expected day."""
    read = read_periods(text_column([text]), Grain.WEEK)
    assert read.keys[0] == week_key(expected.toordinal())
    iso = expected.isocalendar()
    assert labels(read, Grain.WEEK) == [f"{iso[0]}-W{iso[1]:02d}"]


def test_week_of_dates_matches_isocalendar() -> None:
    """Every day of 2019-2027 falls in the ISO week that Python's isocalendar gives it."""
    days = [dt.date(2019, 1, 1) + dt.timedelta(days=i) for i in range(9 * 366)]
    read = read_periods(date_column(days), Grain.WEEK)
    got = [period_label(Grain.WEEK, int(k)) for k in read.keys]
    want = [f"{d.isocalendar()[0]}-W{d.isocalendar()[1]:02d}" for d in days]
    assert got == want


def test_dates_at_every_grain_match_the_calendar() -> None:
    """Dates from 1999 to 2031 land in their calendar month, quarter and year."""
    days = [dt.date(1999, 1, 1) + dt.timedelta(days=i) for i in range(0, 33 * 365, 3)]
    col = date_column(days)
    assert labels(read_periods(col, Grain.MONTH)) == [f"{d.year}-{d.month:02d}" for d in days]
    quarters = labels(read_periods(col, Grain.QUARTER), Grain.QUARTER)
    assert quarters == [f"{d.year} Q{(d.month - 1) // 3 + 1}" for d in days]
    assert labels(read_periods(col, Grain.YEAR), Grain.YEAR) == [str(d.year) for d in days]


def test_raw_serials_and_the_1904_system() -> None:
    """Plain numbers are day numbers: 46095 is 2026-03-14 from 1899-12-30 and 2030-03-15 from 1904-01-01."""
    col = number_column([46095.0, 46095.75])
    assert labels(read_periods(col, Grain.MONTH)) == ["2026-03", "2026-03"]
    # 46095 is Excel's day number of 2026-03-14 (45658 is 2025-01-01, plus 365 + 72 days).
    assert EPOCH + dt.timedelta(days=46095) == dt.date(2026, 3, 14)
    # ECMA-376: in the 1904 system day 0 is 1904-01-01, so the same number is 1462 days later.
    read = read_periods(col, Grain.MONTH, date1904=True)
    assert labels(read) == ["2030-03", "2030-03"]
    assert dt.date.fromordinal(int(read.day[0])) == dt.date(2030, 3, 15)


def test_years_and_year_months_as_numbers() -> None:
    """Whole numbers 1900-2100 are years; YYYYMM numbers are months."""
    assert labels(read_periods(number_column([2024, 2025, 2026]), Grain.YEAR), Grain.YEAR) == [
        "2024", "2025", "2026"
    ]
    assert labels(read_periods(number_column([202601, 202612]), Grain.MONTH)) == ["2026-01", "2026-12"]


def test_unreadable_cells_are_named_with_rows() -> None:
    """Cells that are not periods are counted, named by sheet row, and left out."""
    col = text_column(["2026-01", "2026-02", "soon", None, "03/04/2026", "2026-03"])
    read = read_periods(col, Grain.MONTH, rows=np.arange(2, 8))
    assert read.valid.tolist() == [True, True, False, False, False, True]
    (note,) = read.notes
    assert note.code is Note.PERIOD_UNREADABLE
    assert note.facts["n"] == 2
    assert note.facts["examples"] == [(4, "soon"), (6, "03/04/2026")]
    assert "row 4: 'soon'" in say(note)


@pytest.mark.parametrize("text", ["03/04/2026", "Mar-26", "2026-13", "Q5 2026", "2026-W54", "1850", "next month"])
def test_ambiguous_or_impossible_text_is_not_read(text: str) -> None:
    """Day-first/month-first dates, two-digit years and impossible periods are not guessed."""
    assert read_period_text(text) is None


def test_not_a_period_column_is_refused_in_one_line() -> None:
    """A column of names is refused with a one-line message that says what a period column needs."""
    with pytest.raises(RoleError) as info:
        read_periods(text_column(["North", "South", "East", "2026-01"], name="District"), Grain.MONTH)
    message = str(info.value)
    assert "\n" not in message and "District does not hold periods" in message
    assert "2026-03" in message


def test_grain_finer_than_the_cells_is_refused_with_the_grain_they_support() -> None:
    """Month labels cannot be grouped by week; the message names month as the finest grain."""
    with pytest.raises(RoleError, match="cannot be grouped by week: its cells give months"):
        read_periods(text_column(["2026-01", "2026-02"]), Grain.WEEK)
    with pytest.raises(RoleError, match="its cells give quarters"):
        read_periods(text_column(["2026 Q1", "2026 Q2"]), Grain.MONTH)


def test_gaps_are_periods_with_no_rows() -> None:
    """A month without rows between the first and last is on the axis with n = 0 and named."""
    col = text_column(["2026-01"] * 12 + ["2026-03"] * 11 + ["2026-04"] * 10)
    axis = period_axis(read_periods(col, Grain.MONTH))
    assert axis.labels == ["2026-01", "2026-02", "2026-03", "2026-04"]
    assert axis.counts.tolist() == [12, 0, 11, 10]
    assert [period_label(Grain.MONTH, k) for k in axis.gaps] == ["2026-02"]
    gap_note = next(n for n in axis.notes if n.code is Note.PERIOD_GAPS)
    assert say(gap_note) == "Period has no rows in 2026-02; that period is shown with n = 0."
    # The latest (April) is compared with March, the nearest earlier period with rows.
    assert period_label(Grain.MONTH, axis.previous) == "2026-03"


def test_partial_latest_period_from_dates() -> None:
    """Dates up to 14 March, run on 15 March: March is partial, February is the latest."""
    days = [dt.date(2026, 1, 1) + dt.timedelta(days=i) for i in range(0, 73)]  # to 2026-03-14
    axis = period_axis(read_periods(date_column(days), Grain.MONTH), as_of=dt.date(2026, 3, 15))
    assert period_label(axis.grain, axis.latest) == "2026-02"
    assert period_label(axis.grain, axis.partial) == "2026-03"
    assert axis.through_latest().tolist() == [True, True, False]
    note = next(n for n in axis.notes if n.code is Note.PERIOD_PARTIAL)
    assert note.facts["last_date"] == dt.date(2026, 3, 14)
    assert "2026-03 is partial (rows up to 2026-03-14, the period ends 2026-03-31)" in say(note)


def test_month_over_is_complete_even_if_rows_stop_early() -> None:
    """Rows up to Friday 27 March, run on 2 April: March has ended, so it is complete and the latest."""
    days = [dt.date(2026, 1, 1) + dt.timedelta(days=i) for i in range(0, 86)]  # to 2026-03-27
    axis = period_axis(read_periods(date_column(days), Grain.MONTH), as_of=dt.date(2026, 4, 2))
    assert period_label(axis.grain, axis.latest) == "2026-03" and axis.partial is None


def test_complete_latest_period_from_dates() -> None:
    """A last date on the period's last day leaves the last period complete."""
    days = [dt.date(2026, 1, 15), dt.date(2026, 2, 10), dt.date(2026, 3, 31)]
    axis = period_axis(read_periods(date_column(days), Grain.MONTH))
    assert period_label(axis.grain, axis.latest) == "2026-03"
    assert axis.partial is None


def test_month_labels_are_complete_unless_the_user_says() -> None:
    """With labels only, the last month is complete by default and partial when the user says so."""
    col = text_column(["2026-01", "2026-02", "2026-03"])
    read = read_periods(col, Grain.MONTH)
    assert period_label(Grain.MONTH, period_axis(read).latest) == "2026-03"
    told = period_axis(read, last_is_partial=True)
    assert period_label(Grain.MONTH, told.latest) == "2026-02"
    assert period_label(Grain.MONTH, told.partial) == "2026-03"


def test_user_named_latest_period() -> None:
    """A latest period named by the user is used and noted; one outside the data is refused."""
    read = read_periods(text_column(["2026-01", "2026-02", "2026-03"]), Grain.MONTH)
    axis = period_axis(read, latest="Feb 2026")
    assert period_label(Grain.MONTH, axis.latest) == "2026-02"
    assert any(n.code is Note.PERIOD_USER_LATEST for n in axis.notes)
    with pytest.raises(RoleError, match="data run from 2026-01 to 2026-03"):
        period_axis(read, latest="2025-12")


def test_small_periods_are_named_not_pooled() -> None:
    """A period with fewer than the minimum rows keeps its own place on the axis and is named."""
    col = text_column(["2026-01"] * 20 + ["2026-02"] * 3 + ["2026-03"] * 20)
    axis = period_axis(read_periods(col, Grain.MONTH))
    assert axis.counts.tolist() == [20, 3, 20]
    assert [period_label(Grain.MONTH, k) for k in axis.few] == ["2026-02"]
    note = next(n for n in axis.notes if n.code is Note.PERIOD_FEW_ROWS)
    assert note.facts["minimum"] == MIN_ROWS_PER_PERIOD
    assert "2026-02 (n = 3)" in say(note)


def test_year_earlier_period() -> None:
    """The same period a year earlier: 12 months, 4 quarters, the same ISO week number."""
    march = parse_period("2026-03", Grain.MONTH)
    assert period_label(Grain.MONTH, year_earlier(Grain.MONTH, march)) == "2025-03"
    q1 = parse_period("2026 Q1", Grain.QUARTER)
    assert period_label(Grain.QUARTER, year_earlier(Grain.QUARTER, q1)) == "2025 Q1"
    w7 = parse_period("2026-W07", Grain.WEEK)
    assert period_label(Grain.WEEK, year_earlier(Grain.WEEK, w7)) == "2025-W07"
    # ISO 2020 had 53 weeks, 2019 only 52: week 53 has no same week a year earlier.
    assert year_earlier(Grain.WEEK, parse_period("2020-W53", Grain.WEEK)) is None
    assert year_earlier(Grain.YEAR, 2026) is None


def test_year_earlier_on_the_axis_needs_rows() -> None:
    """The axis offers the year-earlier period only when the data reach back that far."""
    months = [f"2025-{m:02d}" for m in range(1, 13)] + ["2026-01", "2026-02", "2026-03"]
    read = read_periods(text_column(months), Grain.MONTH)
    axis = period_axis(read)
    assert period_label(Grain.MONTH, axis.year_earlier) == "2025-03"
    short = period_axis(read_periods(text_column(months[6:]), Grain.MONTH))
    assert short.year_earlier is None
    assert rows_in(read, axis.year_earlier).sum() == 1


@pytest.mark.parametrize(
    ("grain", "key", "first", "last"),
    [
        (Grain.MONTH, 2024 * 12 + 1, dt.date(2024, 2, 1), dt.date(2024, 2, 29)),  # leap year
        (Grain.QUARTER, 2026 * 4 + 3, dt.date(2026, 10, 1), dt.date(2026, 12, 31)),
        (Grain.YEAR, 2026, dt.date(2026, 1, 1), dt.date(2026, 12, 31)),
    ],
)
def test_period_bounds(grain: Grain, key: int, first: dt.date, last: dt.date) -> None:
    """First and last days of periods follow the calendar (February 2024 has 29 days)."""
    assert period_bounds(grain, key) == (first, last)


def test_a_million_rows_read_in_linear_memory() -> None:
    """A million date rows and a million month labels are read, and agree, without a per-row Python loop."""
    rng = np.random.default_rng(20261205)
    n = 1_048_575
    serial = (dt.date(2024, 1, 1) - EPOCH).days + rng.integers(0, 731, size=n)
    dates = Column("Date", "A", serial.astype(float), np.full(n, None, dtype=object), n_dates=n)
    by_date = read_periods(dates, Grain.MONTH)
    months = np.array(
        [period_label(Grain.MONTH, int(k)) for k in range(2024 * 12, 2026 * 12)], dtype=object
    )
    text = Column("Month", "B", np.full(n, np.nan), months[by_date.keys - 2024 * 12])
    by_label = read_periods(text, Grain.MONTH)
    assert by_date.valid.all() and by_label.valid.all()
    assert np.array_equal(by_date.keys, by_label.keys)
    axis = period_axis(by_date)
    assert axis.counts.sum() == n and len(axis.keys) == 24


def test_grain_setting_is_read_or_refused() -> None:
    """The grain setting reads in any case and spacing; a word that is not a grain is refused in one line."""
    assert parse_grain("  Week ") is Grain.WEEK and parse_grain("") is Grain.MONTH
    with pytest.raises(RoleError, match="Period grain 'fortnight' is not one of: week, month, quarter, year."):
        parse_grain("fortnight")
