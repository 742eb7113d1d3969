"""The monthly-refresh demo data: appending July makes one analysis cross the level and one reverse.

The data are invented (demo_workbooks/period_demo_data.py); the expected flags are the
scenario's design, checked here with the period, trend, control-chart and history functions
so the story the demo tells is what the tool computes. Pooled shares are counts by design
(708 of 900, then 805 of 1050).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from script_loader import load_script
from statmargin.jobs.history import (
    TREND_PART,
    analysis_key,
    compare_runs,
    history_rows,
    key_results,
    last_run,
    parse_history_rows,
)
from statmargin.plan.periods import period_axis, period_label, read_periods
from statmargin.read.reader import read_table
from statmargin.read.table import Column
from statmargin.results import Result
from statmargin.stats.categorical import chi_square_independence
from statmargin.stats.control import baseline_mask, p_chart
from statmargin.stats.trend import cochran_armitage, share_series
from statmargin.vocabulary import ControlRule, Design, Grain, SinceLastRun

RUN_DAY = dt.date(2026, 8, 3)  # the refresh happens after July has ended


demo = load_script("demo_workbooks/period_demo_data.py")


def _columns(rows: list[dict[str, Any]]) -> tuple[Column, np.ndarray]:
    """The date column as the reader gives it, and the same-day outcome as booleans."""
    serial = np.array([(r[demo.DATE_COLUMN] - dt.date(1899, 12, 30)).days for r in rows], dtype=float)
    dates = Column(demo.DATE_COLUMN, "B", serial, np.full(len(rows), None, dtype=object), n_dates=len(rows))
    return dates, np.array([r[demo.OUTCOME] == "Yes" for r in rows])


def _analyse(months: int, run: str) -> tuple[list[Result], Any, Any]:
    """What the period design computes for same-day vaccination after ``months`` months."""
    dates, yes = _columns(demo.period_demo_rows(months))
    periods = read_periods(dates, Grain.MONTH)
    axis = period_axis(periods, as_of=RUN_DAY)
    series = share_series(axis.index(periods.keys), yes, len(axis.keys))
    trend = cochran_armitage(series.count, series.n, level="Yes", grain=Grain.MONTH)
    latest, previous = axis.latest - axis.first, axis.previous - axis.first
    table = [[series.count[i], series.n[i] - series.count[i]] for i in (latest, previous)]
    versus = chi_square_independence(table, ["latest", "previous"], ["Yes", "No"])
    versus.outcome, versus.exposure, versus.design = demo.OUTCOME, "latest vs previous month", Design.TWO_CATEGORICAL
    whole = Result(demo.OUTCOME, None, Design.ONE_SAMPLE_CATEGORICAL, None, trend=trend)
    whole.p_value = trend.p_value  # the whole-data record here carries the trend only
    return [whole, versus], axis, series


def test_pooled_share_moves_as_the_scenario_says() -> None:
    """Same-day vaccination pooled over the months: 78.7% after June, 76.7% after July, July at 64.7%."""
    six = demo.period_demo_rows(6)
    seven = demo.period_demo_rows(7)
    assert seven[: len(six)] == six  # July's rows are appended; the first six months are unchanged
    share = lambda rows: sum(r[demo.OUTCOME] == "Yes" for r in rows) / len(rows)  # noqa: E731
    assert (round(100 * share(six), 1), round(100 * share(seven), 1)) == (78.7, 76.7)
    assert round(100 * share(seven[len(six):]), 1) == 64.7


def test_appending_july_crosses_the_level_and_reverses() -> None:
    """After July the trend is newly below 0.05 and July-versus-June points the other way, below 0.05."""
    first, axis6, _ = _analyse(6, "2026-07-02T08:00:00+00:00")
    second, axis7, _ = _analyse(7, "2026-08-03T08:00:00+00:00")
    assert period_label(Grain.MONTH, axis6.latest) == "2026-06" and axis6.partial is None
    assert period_label(Grain.MONTH, axis7.latest) == "2026-07"
    trend6, trend7 = first[0].trend, second[0].trend
    assert trend6.p_value > 0.05 and trend7.p_value < 0.05
    assert trend7.estimate.value < 0
    assert first[1].p_value > 0.05 and first[1].estimate.value > 0  # June up on May, not below the level
    assert second[1].p_value < 0.05 and second[1].estimate.value < 0  # July down on June, below it

    # The history sheet of the first run, read back by the second run.
    rows = history_rows([], key_results(first, "2026-07-02T08:00:00+00:00", 0.05))
    previous = last_run(parse_history_rows(rows))
    flags = compare_runs(previous, key_results(second, "2026-08-03T08:00:00+00:00", 0.05))
    assert flags[analysis_key(second[0], TREND_PART)] is SinceLastRun.NOW_BELOW_LEVEL
    assert flags[analysis_key(second[1])] is SinceLastRun.DIRECTION_REVERSED


def test_july_is_an_unusual_month_on_the_p_chart() -> None:
    """July's share is beyond the lower 3-sigma limit of the p chart from January to June; June was not."""
    _, axis6, series6 = _analyse(6, "r1")
    _, axis7, series7 = _analyse(7, "r2")
    chart7 = p_chart(series7.count, series7.n, baseline_mask(series7.n, axis7.latest - axis7.first))
    july = axis7.latest - axis7.first
    assert (july, ControlRule.BEYOND_3_SIGMA) in chart7.flags
    assert series7.value[july] < chart7.lower[july]
    chart6 = p_chart(series6.count, series6.n, baseline_mask(series6.n, axis6.latest - axis6.first))
    assert chart6.flags == []


def test_demo_workbook_reads_back_as_monthly_periods(tmp_path: Path) -> None:
    """The written workbook's date column arrives as dates and reads as seven complete months."""
    path = demo.write_workbook(tmp_path / "riverbend.xlsx", months=7)
    table = read_table(path, sheet=demo.SHEET)
    column = table.column(demo.DATE_COLUMN)
    assert column.n_dates == len(column) == 1050
    axis = period_axis(read_periods(column, Grain.MONTH, rows=table.rows), as_of=RUN_DAY)
    assert axis.labels == [f"2026-{m:02d}" for m in range(1, 8)]
    assert axis.counts.tolist() == [demo.MONTH_ROWS[m] for m in range(1, 8)]
    assert axis.partial is None and not axis.gaps and not axis.few


@pytest.mark.parametrize("month", [1, 7])
def test_months_are_reproducible(month: int) -> None:
    """A month's rows are the same on every call (seeded by month)."""
    assert demo.month_rows(month) == demo.month_rows(month)
