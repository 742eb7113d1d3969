"""One outcome over periods: series, trend and flags together, and their JSON records.

Values are checked against the building blocks they come from (tested against published
references in test_trend.py and test_control.py) and against the JSON keys the issue fixes:
trend {test, statistic, p_value, estimate: {name, value, ci_low, ci_high}, periods} and
unusual [{period, rule}].
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from statmargin.plan.periods import period_axis, read_periods
from statmargin.read.table import Column
from statmargin.results import Result
from statmargin.stats.control import individuals_chart
from statmargin.stats.period_series import centre_periods, share_periods
from statmargin.stats.trend import cochran_armitage, mann_kendall
from statmargin.vocabulary import ControlRule, Design, SinceLastRun
from statmargin.vocabulary.codes import Skip

EPOCH = dt.date(1899, 12, 30)


def _dated(days: list[dt.date]) -> Column:
    serial = np.array([(d - EPOCH).days for d in days], dtype=float)
    return Column("Visit date", "A", serial, np.full(len(days), None, dtype=object), n_dates=len(days))


def _months(counts: list[int], gap_at: int | None = None) -> tuple[Column, list[int]]:
    """Rows on the 10th and on the last weekday-ish 28th of each month from January 2026."""
    days: list[dt.date] = []
    for m, n in enumerate(counts, start=1):
        if m == gap_at:
            continue
        days += [dt.date(2026, m, 10 + (i % 18)) for i in range(n)]
    return _dated(days), [n for m, n in enumerate(counts, start=1) if m != gap_at]


def test_partial_month_is_shown_but_not_tested_or_flagged() -> None:
    """A partial last month is in the series (marked) and out of the trend and the chart."""
    rng = np.random.default_rng(1)
    counts = [120, 118, 125, 122, 119, 121, 40]
    column, _ = _months(counts)
    periods = read_periods(column)
    axis = period_axis(periods, as_of=dt.date(2026, 7, 20))  # July still running, rows to the 27th
    assert axis.partial is not None
    success = rng.random(len(column)) < 0.8
    success[-40:] = False  # a partial month that would look alarming
    out = share_periods(axis, axis.index(periods.keys), success, level="Yes")
    assert [p.partial for p in out.points] == [False] * 6 + [True]
    assert out.points[-1].n == 40 and out.points[-1].value == 0.0
    assert out.trend.periods == 6
    reference = cochran_armitage(out.series.count[:6], out.series.n[:6])
    assert out.trend.p_value == pytest.approx(reference.p_value)
    assert all(u.period != "2026-07" for u in out.unusual)
    assert out.points[-1].upper_limit is None


def test_gap_months_carry_n_zero_and_no_value() -> None:
    """A month without rows is a point with n = 0 and no value; the trend counts it as a month."""
    column, _ = _months([50, 50, 50, 50, 50, 50, 50, 50], gap_at=3)
    periods = read_periods(column)
    axis = period_axis(periods, as_of=dt.date(2026, 12, 1))
    values = np.arange(len(column), dtype=float) % 7 + np.repeat(np.arange(7.0), 50)
    out = centre_periods(axis, axis.index(periods.keys), values)
    gap = out.points[2]
    assert (gap.period, gap.n, gap.value, gap.ci_low) == ("2026-03", 0, None, None)
    means = out.series.value
    reference = mann_kendall(means)
    assert out.trend.statistic == reference.statistic and out.trend.periods == 7
    assert out.trend.estimate.value == pytest.approx(reference.estimate.value)


def test_individuals_chart_flags_a_jump_in_the_mean() -> None:
    """A jump in the latest month's mean is flagged by the individuals chart of the period means."""
    column, sizes = _months([60] * 9)
    periods = read_periods(column)
    axis = period_axis(periods, as_of=dt.date(2026, 12, 1))
    rng = np.random.default_rng(2)
    shifts = np.repeat([0, 1, -1, 0.5, 0, -0.5, 1, 0, 9.0], sizes)
    values = 30 + shifts + rng.normal(0, 3, size=shifts.size)
    out = centre_periods(axis, axis.index(periods.keys), values)
    chart = individuals_chart(out.series.value, np.arange(9) < 8)
    assert out.chart.upper[0] == pytest.approx(chart.upper[0])
    assert ("2026-09", ControlRule.BEYOND_3_SIGMA) in [(u.period, u.rule) for u in out.unusual]


def test_too_few_periods_keep_the_series_and_name_the_skips() -> None:
    """Two months give a series but no trend and no chart, each with its skip code."""
    column, _ = _months([30, 30])
    periods = read_periods(column)
    axis = period_axis(periods, as_of=dt.date(2026, 12, 1))
    out = share_periods(axis, axis.index(periods.keys), np.arange(60) % 3 == 0, level="Yes")
    assert out.trend is None and out.chart is None and out.unusual == []
    assert [s.code for s in out.skips] == [Skip.TOO_FEW_PERIODS, Skip.NO_BASELINE]
    assert len(out.points) == 2


def test_json_records_have_the_issue_keys() -> None:
    """A result carrying the period analysis writes periods, trend, unusual and since_last_run as documented."""
    months = np.repeat([f"2026-{m:02d}" for m in range(1, 8)], 100).astype(object)
    yes = np.concatenate([np.arange(100) < k for k in (80, 78, 81, 79, 80, 78, 60)])
    periods = read_periods(Column("Month", "A", np.full(700, np.nan), months))
    axis = period_axis(periods)
    out = share_periods(axis, axis.index(periods.keys), yes, level="Yes")
    result = Result("Same day", None, Design.ONE_SAMPLE_CATEGORICAL, None, periods=out.points,
                    trend=out.trend, unusual=out.unusual, since_last_run=SinceLastRun.NEW)
    record = result.to_record()
    assert set(record["trend"]) == {"test", "statistic", "p_value", "estimate", "periods"}
    assert set(record["trend"]["estimate"]) == {"name", "value", "ci_low", "ci_high"}
    assert record["trend"]["test"] == "cochran_armitage" and record["trend"]["periods"] == 7
    assert record["unusual"] == [{"period": "2026-07", "rule": "beyond_3_sigma"}]
    assert record["since_last_run"] == "new"
    first = record["periods"][0]
    assert first["period"] == "2026-01" and first["n"] == 100 and first["value"] == 0.8
    assert {"ci_low", "ci_high", "partial", "few", "centre", "lower_limit", "upper_limit"} <= set(first)
    plain = Result("Wait", "Site", Design.TWO_GROUP_CONTINUOUS, None).to_record()
    assert plain["periods"] is None and plain["trend"] is None and plain["unusual"] is None
