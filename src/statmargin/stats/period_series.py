"""One outcome over periods: the series, its trend and its unusual periods, in one call.

``share_periods`` (two-level outcomes) and ``centre_periods`` (continuous
outcomes) put together the pieces a period design needs for the ``periods``,
``trend`` and ``unusual`` fields of a result:

* the per-period summary of every period on the axis (gaps with n = 0, the
  partial period marked ``partial``, small periods marked ``few``);
* the trend test over the periods up to the latest (the partial period left
  out): Cochran-Armitage for shares, Mann-Kendall with Theil-Sen for means or
  medians;
* the control chart (p chart, widened by Laney's factor when the baseline is
  overdispersed, for shares; individuals chart of the period values for means
  and medians) with limits from the periods before the latest, and the periods
  its run rules flag.

A trend or chart that the data cannot support is left out with its skip code in
``skips``; the series is always returned.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Protocol, TypeVar

import numpy as np

from ..errors import NotEnoughDataError
from ..results import PeriodPoint, Trend, Unusual
from ..vocabulary import Grain
from ..vocabulary.codes import Coded
from .control import ControlChart, baseline_mask, individuals_chart, p_chart
from .trend import Series, centre_series, cochran_armitage, mann_kendall, share_series

T = TypeVar("T")


class PeriodAxis(Protocol):
    """What the methods read of the period axis the caller built (``plan.periods.PeriodAxis``).

    The caller labels the periods (``labels``, one per key): the methods work on keys and
    positions and never word a period.
    """

    @property
    def grain(self) -> Grain: ...

    @property
    def keys(self) -> np.ndarray:
        """The period keys, int64 and consecutive."""

    @property
    def latest(self) -> int:
        """Key of the latest period used for comparisons and flags."""

    @property
    def partial(self) -> int | None:
        """Key of a partial last period (after ``latest``), if any."""

    @property
    def few(self) -> tuple[int, ...]:
        """Keys of periods with fewer rows than the minimum."""

    @property
    def labels(self) -> list[str]:
        """Each key's period as shown (the caller's labels)."""

    @property
    def first(self) -> int: ...

    def through_latest(self) -> np.ndarray: ...


@dataclass
class PeriodAnalysis:
    """The series, trend and flags of one outcome (or one group of it) over the period axis."""

    points: list[PeriodPoint]
    trend: Trend | None
    unusual: list[Unusual]
    series: Series
    chart: ControlChart | None = None
    skips: list[Coded] = field(default_factory=list)  # why the trend or the chart is missing
    notes: list[Coded] = field(default_factory=list)  # caveats of the trend and the chart


def _finite(value: float) -> float | None:
    return float(value) if np.isfinite(value) else None


def _assemble(
    axis: PeriodAxis, series: Series, trend: Trend | None, chart: ControlChart | None, skips: list[Coded]
) -> PeriodAnalysis:
    points = []
    few = set(axis.few)
    labels = axis.labels
    for i, key in enumerate(axis.keys):
        points.append(
            PeriodPoint(
                period=labels[i],
                n=int(series.n[i]),
                value=_finite(series.value[i]),
                ci_low=_finite(series.ci_low[i]),
                ci_high=_finite(series.ci_high[i]),
                partial=axis.partial is not None and int(key) == axis.partial,
                few=int(key) in few,
                centre=chart.centre if chart is not None and np.isfinite(chart.sigma[i]) else None,
                lower_limit=_finite(chart.lower[i]) if chart is not None else None,
                upper_limit=_finite(chart.upper[i]) if chart is not None else None,
            )
        )
    unusual = (
        [Unusual(labels[i], rule) for i, rule in chart.flags]
        if chart is not None
        else []
    )
    notes = list(trend.notes) if trend is not None else []
    if chart is not None:
        notes.extend(chart.notes)
    return PeriodAnalysis(points, trend, unusual, series, chart, skips, notes)


def _attempt(skips: list[Coded], step: Callable[[], T]) -> T | None:
    """Run a trend or chart step; data that cannot support it leave its skip code instead."""
    try:
        return step()
    except NotEnoughDataError as err:
        if err.reason is not None:
            skips.append(err.reason)
        return None


def _upto(axis: PeriodAxis) -> np.ndarray:
    return axis.through_latest()


def share_periods(
    axis: PeriodAxis,
    position: np.ndarray,
    success: np.ndarray,
    *,
    level: str,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> PeriodAnalysis:
    """Share of ``level`` per period, its Cochran-Armitage trend and p-chart flags.

    Parameters
    ----------
    axis : PeriodAxis
        The period axis (``plan.periods.period_axis``).
    position : numpy.ndarray of int
        Axis position of each row (``axis.index(keys)``), negative for rows left out.
    success : numpy.ndarray of bool
        Whether each row has the counted level.
    level : str
        The counted level, for the estimate's name.
    alternative, confidence
        Direction of the trend question and level of the intervals.

    Examples
    --------
    >>> import datetime as dt
    >>> from statmargin.plan.periods import period_axis, read_periods
    >>> from statmargin.read.table import Column
    >>> months = np.repeat([f"2026-{m:02d}" for m in range(1, 8)], 100).astype(object)
    >>> yes = np.concatenate([np.arange(100) < k for k in (80, 78, 81, 79, 80, 78, 60)])
    >>> periods = read_periods(Column("Month", "A", np.full(700, np.nan), months))
    >>> axis = period_axis(periods)
    >>> out = share_periods(axis, axis.index(periods.keys), yes, level="Yes")
    >>> [(u.period, str(u.rule)) for u in out.unusual]
    [('2026-07', 'beyond_3_sigma')]
    >>> out.trend.test, out.trend.estimate.value < 0
    ('cochran_armitage', True)
    """
    series = share_series(position, success, len(axis.keys), confidence=confidence)
    counts = series.count
    assert counts is not None  # share_series always counts
    upto = _upto(axis)
    skips: list[Coded] = []
    trend = _attempt(
        skips, lambda: cochran_armitage(counts[upto], series.n[upto], level=level, grain=axis.grain,
                                        alternative=alternative, confidence=confidence)
    )
    chart = _attempt(
        skips, lambda: p_chart(counts, series.n, baseline_mask(series.n, axis.latest - axis.first),
                               plotted=upto & (series.n > 0))
    )
    return _assemble(axis, series, trend, chart, skips)


def centre_periods(
    axis: PeriodAxis,
    position: np.ndarray,
    values: np.ndarray,
    *,
    centre: str = "mean",
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> PeriodAnalysis:
    """Mean or median per period, its Mann-Kendall trend with the Theil-Sen slope, and XmR flags.

    Parameters
    ----------
    axis : PeriodAxis
        The period axis.
    position : numpy.ndarray of int
        Axis position of each row, negative for rows left out.
    values : numpy.ndarray of float
        The outcome (NaN where unusable).
    centre : {"mean", "median"}
        How each period is summarised (the median for outcomes the shape checks
        find skewed, as the design decides).
    alternative, confidence
        Direction of the trend question and level of the intervals.
    """
    series = centre_series(position, values, len(axis.keys), centre=centre, confidence=confidence)
    upto = _upto(axis)
    skips: list[Coded] = []
    trend = _attempt(
        skips, lambda: mann_kendall(series.value[upto], grain=axis.grain, alternative=alternative,
                                    confidence=confidence)
    )
    chart = _attempt(
        skips, lambda: individuals_chart(series.value, baseline_mask(series.n, axis.latest - axis.first),
                                         plotted=upto & (series.n > 0))
    )
    return _assemble(axis, series, trend, chart, skips)
