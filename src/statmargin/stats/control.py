"""Shewhart control charts for a per-period series and the Western Electric run rules.

Charts (Montgomery, Introduction to Statistical Quality Control, 6th ed., 2009):

* ``p_chart``: shares per period, centre p̄ from the baseline periods, limits
  p̄ ± 3 sqrt(p̄ (1 - p̄) / n_i) from each period's own n (section 7.2); when
  the baseline periods vary much more than their sizes explain, the limits are
  widened by Laney's factor (``ChartKind.LANEY_P``, see :func:`p_chart`);
* ``xbar_chart``: period means with per-period n, centre the weighted grand
  mean, limits x̄̄ ± 3 s̄ / (c4(n_i) sqrt(n_i)) with the pooled within-period
  SD s̄ (section 6.3.2, x̄ and s charts with variable sample size);
* ``individuals_chart``: one value per period (XmR), centre the baseline mean,
  sigma = average moving range / d2 with d2 = 1.128 (section 6.4).

**Baseline.** Limits come from every period with rows before the latest one
(``baseline_mask``): the latest period is judged against limits it did not
shape, and the earlier periods are read retrospectively against the same
limits (a Phase I reading). All earlier periods are used rather than the first
k because monitoring workbooks are short (often 6 to 24 periods) and a fixed
first-k baseline would leave too few periods; at least ``MIN_BASELINE_PERIODS``
are required.

**Run rules** (Western Electric Company, Statistical Quality Control
Handbook, 1956, the four zone rules), applied to the standardized distance
z = (value - centre) / sigma_i of each plotted period, in period order (gaps
skipped):

1. one point beyond 3 sigma;
2. 2 of 3 points in a row beyond 2 sigma on the same side;
3. 4 of 5 points in a row beyond 1 sigma on the same side;
4. 8 points in a row on the same side of the centre line.

Nelson (1984, J Qual Technol 16(4):237-239) uses 9 in a row for rule 4 and
adds four more patterns; the Western Electric set is used because it is the
original, widely taught set and each extra rule raises the false-alarm rate.
With all four rules the in-control average run length of a normal process is
about 92 points (Champ & Woodall 1987, Technometrics 29(4):393-399, recalled
from memory), against 370 for rule 1 alone: over a year of months about one
false flag in eight years of a stable program. A flag is put on the period
that completes the pattern, and only if that period is itself beyond the zone
(or on the side) the rule counts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import special, stats

from ..errors import NotEnoughDataError
from ..vocabulary import ChartKind, ControlRule
from ..vocabulary.codes import Coded, Note, Skip, coded

MIN_BASELINE_PERIODS = 5  # periods with rows before the latest needed for limits
D2_MOVING_RANGE = 1.128  # d2 for subgroups of 2 (Montgomery, Appendix Table VI)
LANEY_TEST_LEVEL = 0.01  # dispersion chi-square below this widens the p chart (Laney)

# (rule, window, needed, zone): `needed` of `window` points in a row beyond `zone` sigma on one side.
WESTERN_ELECTRIC: tuple[tuple[ControlRule, int, int, float], ...] = (
    (ControlRule.BEYOND_3_SIGMA, 1, 1, 3.0),
    (ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA, 3, 2, 2.0),
    (ControlRule.FOUR_OF_FIVE_BEYOND_1_SIGMA, 5, 4, 1.0),
    (ControlRule.EIGHT_ON_ONE_SIDE, 8, 8, 0.0),
)


@dataclass(frozen=True)
class ControlChart:
    """A chart over the period axis: centre, per-period sigma and 3-sigma limits, and the flags.

    Arrays are aligned with the period axis; NaN where a period is not plotted.
    """

    kind: ChartKind
    centre: float
    sigma: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    z: np.ndarray
    baseline: np.ndarray  # bool mask of the periods the limits came from
    flags: list[tuple[int, ControlRule]] = field(default_factory=list)  # (axis position, rule)
    notes: list[Coded] = field(default_factory=list)


def baseline_mask(counts: np.ndarray, latest: int) -> np.ndarray:
    """The baseline: periods with rows before the latest (axis position ``latest``).

    Raises
    ------
    NotEnoughDataError
        With fewer than ``MIN_BASELINE_PERIODS`` such periods.
    """
    positions = np.arange(counts.size)
    mask = (positions < latest) & (counts > 0)
    if int(mask.sum()) < MIN_BASELINE_PERIODS:
        raise NotEnoughDataError(
            coded(Skip.NO_BASELINE, n=int(mask.sum()), minimum=MIN_BASELINE_PERIODS)
        )
    return mask


def run_rules(
    z: np.ndarray, rules: tuple[tuple[ControlRule, int, int, float], ...] = WESTERN_ELECTRIC
) -> list[tuple[int, ControlRule]]:
    """Positions that complete a run-rule pattern, with the rule, in position order.

    Parameters
    ----------
    z : numpy.ndarray
        Standardized distance from the centre line per period; NaN periods are
        not plotted and are skipped (the points either side count as neighbours).
    rules : tuple
        (rule, window, needed, zone) entries; default the Western Electric set.

    Returns
    -------
    list of (int, ControlRule)

    Examples
    --------
    >>> z = np.array([0.5, 2.5, 0.1, 2.2, 3.4, np.nan, -0.2])
    >>> [(int(i), str(r)) for i, r in run_rules(z)]
    [(3, 'two_of_three_beyond_2_sigma'), (4, 'beyond_3_sigma'), (4, 'two_of_three_beyond_2_sigma')]
    """
    plotted = np.flatnonzero(~np.isnan(z))
    values = z[plotted]
    fired: list[tuple[int, int, ControlRule]] = []  # (position, rule order, rule)
    ends = np.arange(1, values.size + 1)
    for order, (rule, window, needed, zone) in enumerate(rules):
        hit = np.zeros(values.size, dtype=bool)
        for sign in (1.0, -1.0):
            beyond = (sign * values > zone).astype(np.int64)
            # Beyond-zone count in the window ending at each point (cumulative-sum difference);
            # the first points have shorter windows, which can still hold `needed` points.
            total = np.cumsum(np.concatenate(([0], beyond)))
            in_window = total[ends] - total[np.maximum(ends - window, 0)]
            hit |= (in_window >= needed) & (beyond == 1)
        fired.extend((int(plotted[t]), order, rule) for t in np.flatnonzero(hit))
    return [(position, rule) for position, _, rule in sorted(fired, key=lambda f: (f[0], f[1]))]


def _chart(
    kind: ChartKind,
    values: np.ndarray,
    centre: float,
    sigma: np.ndarray,
    baseline: np.ndarray,
    plotted: np.ndarray,
    notes: list[Coded],
    bounds: tuple[float, float] = (-math.inf, math.inf),
) -> ControlChart:
    sigma = np.where(plotted, sigma, np.nan)
    z = np.where(plotted & (sigma > 0), (values - centre) / np.where(sigma > 0, sigma, 1.0), np.nan)
    lower = np.clip(centre - 3.0 * sigma, *bounds)
    upper = np.clip(centre + 3.0 * sigma, *bounds)
    return ControlChart(kind, centre, sigma, lower, upper, z, baseline, run_rules(z), notes)


def p_chart(
    counts: np.ndarray,
    totals: np.ndarray,
    baseline: np.ndarray,
    *,
    plotted: np.ndarray | None = None,
    laney: bool | str = "auto",
) -> ControlChart:
    """p chart of shares per period with limits from each period's own n.

    Parameters
    ----------
    counts, totals : numpy.ndarray
        Rows of the counted level and all rows per period (axis order).
    baseline : numpy.ndarray of bool
        Periods the centre line and (for Laney's factor) the spread come from.
    plotted : numpy.ndarray of bool, optional
        Periods to plot and test (default: every period with rows).
    laney : bool or "auto"
        Widen the limits by Laney's factor: always, never, or (``"auto"``) when
        the baseline shares vary more than binomial sampling allows
        (Pearson chi-square of the baseline periods below ``LANEY_TEST_LEVEL``).

    Returns
    -------
    ControlChart
        ``kind`` is ``p`` or ``laney_p``; limits are clipped to [0, 1].

    Notes
    -----
    sigma_i = sqrt(p̄ (1 - p̄) / n_i) with p̄ the pooled share of the baseline
    periods (Montgomery 2009, eq. 7.8 with variable n, section 7.2.2). Large
    programs have real month-to-month variation beyond binomial sampling; then
    nearly every period falls outside p-chart limits. Laney's p' chart
    multiplies sigma_i by sigma_z, the average moving range of the baseline
    z-scores divided by 1.128 (Laney 2002, Quality Engineering 14(4):531-537,
    https://doi.org/10.1081/QEN-120003555); it is used only when sigma_z > 1.

    Examples
    --------
    Montgomery's orange-juice can example (Example 7.1, 30 samples of 50 cans;
    p̄ = 0.2313, UCL = 0.4102, LCL = 0.0524, samples 15 and 23 above the UCL;
    recalled from memory, the counts add up to the published 347):

    >>> x = np.array([12, 15, 8, 10, 4, 7, 16, 9, 14, 10, 5, 6, 17, 12, 22,
    ...               8, 10, 5, 13, 11, 20, 18, 24, 15, 9, 12, 7, 13, 9, 6])
    >>> n = np.full(30, 50)
    >>> chart = p_chart(x, n, np.ones(30, bool), laney=False)
    >>> round(chart.centre, 4), round(float(chart.upper[0]), 4), round(float(chart.lower[0]), 4)
    (0.2313, 0.4102, 0.0524)
    >>> sorted({i + 1 for i, rule in chart.flags if rule == "beyond_3_sigma"})
    [15, 23]
    """
    x = np.asarray(counts, dtype=float)
    n = np.asarray(totals, dtype=float)
    shown = (n > 0) if plotted is None else (np.asarray(plotted, dtype=bool) & (n > 0))
    p_bar = float(x[baseline].sum() / n[baseline].sum())
    if p_bar <= 0.0 or p_bar >= 1.0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what="the baseline periods", value=p_bar))
    share = np.divide(x, n, out=np.full_like(x, np.nan), where=n > 0)
    sigma = np.sqrt(p_bar * (1.0 - p_bar) / np.where(n > 0, n, np.nan))
    notes: list[Coded] = []
    kind = ChartKind.P
    z_base = (share[baseline] - p_bar) / sigma[baseline]
    sigma_z = float(np.mean(np.abs(np.diff(z_base)))) / D2_MOVING_RANGE
    df = int(baseline.sum()) - 1
    chi_square = float(np.sum(z_base**2) * 1.0)
    p_dispersion = float(stats.chi2.sf(chi_square, df))
    widen = laney is True or (laney == "auto" and p_dispersion < LANEY_TEST_LEVEL)
    if widen and sigma_z > 1.0:
        kind = ChartKind.LANEY_P
        sigma = sigma * sigma_z
        notes.append(coded(Note.OVERDISPERSED, ratio=sigma_z, statistic=chi_square, df=df, p=p_dispersion))
    return _chart(kind, share, p_bar, sigma, baseline, shown, notes, bounds=(0.0, 1.0))


def c4(n: np.ndarray | float) -> np.ndarray:
    """The unbiasing constant c4(n) = sqrt(2 / (n - 1)) Γ(n/2) / Γ((n - 1)/2) (Montgomery, Appendix VI).

    Examples
    --------
    >>> np.round(c4(np.array([2, 5, 25])), 4).tolist()
    [0.7979, 0.94, 0.9896]
    """
    m = np.asarray(n, dtype=float)
    return np.sqrt(2.0 / (m - 1.0)) * np.exp(special.gammaln(m / 2.0) - special.gammaln((m - 1.0) / 2.0))


def xbar_chart(
    means: np.ndarray,
    sds: np.ndarray,
    totals: np.ndarray,
    baseline: np.ndarray,
    *,
    plotted: np.ndarray | None = None,
) -> ControlChart:
    """Chart of period means with per-period n (x̄ and s charts with variable sample size).

    Notes
    -----
    Centre x̄̄ = Σ n_i x̄_i / Σ n_i and pooled s̄ = sqrt(Σ (n_i - 1) s_i² / Σ (n_i - 1))
    over the baseline periods; limits x̄̄ ± 3 s̄ / (c4(n_i) sqrt(n_i))
    (Montgomery 2009, section 6.3.2, eqs. 6.30-6.32). Periods with one row have
    no SD and add nothing to s̄. Within-period spread only: when periods differ
    for reasons beyond sampling (as monthly means of large programs usually
    do) prefer :func:`individuals_chart`.

    Examples
    --------
    >>> chart = xbar_chart(np.array([10.0, 11, 9, 10, 10, 14]), np.full(6, 2.0), np.full(6, 4),
    ...                    np.array([1, 1, 1, 1, 1, 0], bool))
    >>> round(chart.centre, 2), round(float(chart.upper[5]), 4)  # 10 + 3 * 2 / (c4(4) * 2), c4(4) = 0.9213
    (10.0, 13.2562)
    >>> [(int(i), str(r)) for i, r in chart.flags]
    [(5, 'beyond_3_sigma')]
    """
    m = np.asarray(means, dtype=float)
    s = np.asarray(sds, dtype=float)
    n = np.asarray(totals, dtype=float)
    shown = (n > 0) if plotted is None else (np.asarray(plotted, dtype=bool) & (n > 0))
    centre = float((n[baseline] * m[baseline]).sum() / n[baseline].sum())
    with_sd = baseline & (n >= 2) & ~np.isnan(s)
    dof = float((n[with_sd] - 1.0).sum())
    if dof <= 0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what="the baseline periods", value=centre))
    pooled = math.sqrt(float(((n[with_sd] - 1.0) * s[with_sd] ** 2).sum()) / dof)
    if pooled <= 0.0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what="the baseline periods", value=centre))
    safe_n = np.where(n >= 2, n, 2.0)
    sigma = np.where(n >= 2, pooled / (c4(safe_n) * np.sqrt(safe_n)), pooled)
    return _chart(ChartKind.XBAR, m, centre, sigma, baseline, shown, [])


def individuals_chart(
    values: np.ndarray, baseline: np.ndarray, *, plotted: np.ndarray | None = None
) -> ControlChart:
    """Individuals (XmR) chart of one value per period.

    Notes
    -----
    Centre x̄ = mean of the baseline values; sigma = MR̄ / d2 with MR̄ the mean
    absolute difference between consecutive plotted baseline values and
    d2 = 1.128; limits x̄ ± 3 MR̄ / 1.128 = x̄ ± 2.66 MR̄ (Montgomery 2009,
    section 6.4, eq. 6.33). The moving range takes the period-to-period
    variation as the common-cause spread, which suits period means of large
    programs whose months differ for many small reasons (Wheeler & Chambers
    1992, Understanding Statistical Process Control, 2nd ed.).

    Examples
    --------
    >>> chart = individuals_chart(np.array([10.0, 12, 11, 13, 12, 20]), np.array([1, 1, 1, 1, 1, 0], bool))
    >>> chart.centre, round(float(chart.upper[0]), 4)  # MR-bar = (2 + 1 + 2 + 1) / 4 = 1.5; 11.6 + 3 * 1.5 / 1.128
    (11.6, 15.5894)
    >>> [(int(i), str(r)) for i, r in chart.flags]
    [(5, 'beyond_3_sigma')]
    """
    v = np.asarray(values, dtype=float)
    shown = ~np.isnan(v) if plotted is None else (np.asarray(plotted, dtype=bool) & ~np.isnan(v))
    base = v[baseline & ~np.isnan(v)]
    centre = float(base.mean())
    mr_bar = float(np.mean(np.abs(np.diff(base)))) if base.size >= 2 else 0.0
    if mr_bar <= 0.0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what="the baseline periods", value=centre))
    sigma = np.full(v.size, mr_bar / D2_MOVING_RANGE)
    return _chart(ChartKind.INDIVIDUALS, v, centre, sigma, baseline, shown, [])
