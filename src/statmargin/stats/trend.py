"""Per-period summaries and trend tests across periods.

* ``share_series``: n, count and share of the counted level per period, with
  Wilson intervals;
* ``centre_series``: n and the mean (t interval) or the median (distribution-free
  order-statistic interval) per period;
* ``cochran_armitage``: the Cochran-Armitage test for a linear trend in shares
  across periods, with the change in share per period and its interval;
* ``mann_kendall``: the Mann-Kendall test on a period series with the Theil-Sen
  slope per period and its interval.

Scores are the period positions (0, 1, 2, ... from the first period, gaps
included), so a trend is measured per real period and an empty month still
counts as a month. Arrays in, numbers and result objects out; no sentences.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from ..errors import NotEnoughDataError
from ..results import Estimate, Trend
from ..vocabulary import EstimateKind, Grain, PMethod, Test
from ..vocabulary.codes import Coded, Count, Note, Skip, coded
from ._common import check_options, p_from_z, z_quantiles
from .categorical import wilson_interval

MIN_TREND_PERIODS = 3  # periods with data below which no trend test is run (2 periods is a comparison)
SHORT_SERIES_PERIODS = 8  # fewer periods get Note.SHORT_SERIES (common practice, see README)
NOT_LINEAR_LEVEL = 0.05  # departure-from-line chi-square below this adds Note.TREND_NOT_LINEAR


# --------------------------------------------------------------------------- per-period summaries


@dataclass(frozen=True)
class Series:
    """Per-period numbers aligned with the period axis (NaN where a period has no rows)."""

    n: np.ndarray  # int64 rows per period
    value: np.ndarray  # share, mean or median
    ci_low: np.ndarray
    ci_high: np.ndarray
    count: np.ndarray | None = None  # rows of the counted level (shares only)
    sd: np.ndarray | None = None  # within-period SD (means only; NaN for n < 2)


def share_series(
    position: np.ndarray, success: np.ndarray, n_periods: int, *, confidence: float = 0.95
) -> Series:
    """Share of the counted level per period with Wilson intervals.

    Parameters
    ----------
    position : numpy.ndarray of int
        Period position of each row (0 = first period); negative for rows left out.
    success : numpy.ndarray of bool
        Whether the row has the counted level.
    n_periods : int
        Length of the period axis.
    confidence : float
        Level of the Wilson intervals.

    Returns
    -------
    Series
        ``n``, ``count``, ``value`` (the share) and the interval per period.

    Examples
    --------
    >>> s = share_series(np.array([0, 0, 0, 1, 1, 2]), np.array([1, 0, 1, 1, 1, 0], bool), 3)
    >>> s.n.tolist(), s.count.tolist(), np.round(s.value, 3).tolist()
    ([3, 2, 1], [2, 2, 0], [0.667, 1.0, 0.0])
    """
    keep = position >= 0
    pos = position[keep]
    n = np.bincount(pos, minlength=n_periods).astype(np.int64)
    x = np.bincount(pos, weights=success[keep].astype(float), minlength=n_periods).astype(np.int64)
    value = np.full(n_periods, np.nan)
    low = np.full(n_periods, np.nan)
    high = np.full(n_periods, np.nan)
    for i in np.flatnonzero(n):
        value[i] = x[i] / n[i]
        low[i], high[i] = wilson_interval(int(x[i]), int(n[i]), confidence=confidence)
    return Series(n=n, value=value, ci_low=low, ci_high=high, count=x)


def median_interval_ranks(n: int, confidence: float = 0.95) -> tuple[int, int] | None:
    """1-based ranks (l, u) of the distribution-free interval for a median, or None if n is too small.

    The interval [x_(l), x_(n-l+1)] covers the median with probability
    1 - 2 P(B <= l - 1), B ~ Binomial(n, 1/2); l is the largest rank keeping that
    at or above ``confidence`` (Conover 1999, Practical Nonparametric
    Statistics, 3rd ed., section 3.2).

    Examples
    --------
    Ten values: ranks 2 and 9 (coverage 1 - 2 * 11/1024 = 0.979; ranks 3 and 8 give only 0.891).

    >>> median_interval_ranks(10)
    (2, 9)
    >>> median_interval_ranks(5) is None
    True
    """
    alpha = 1.0 - confidence
    l_rank = int(stats.binom.ppf(alpha / 2.0, n, 0.5))  # P(B <= l) >= alpha/2
    if stats.binom.cdf(l_rank, n, 0.5) > alpha / 2.0:
        l_rank -= 1
    # Now P(B <= l_rank) <= alpha/2; the interval uses order statistic l_rank + 1.
    if l_rank < 0:
        return None
    return l_rank + 1, n - l_rank


def centre_series(
    position: np.ndarray,
    values: np.ndarray,
    n_periods: int,
    *,
    centre: str = "mean",
    confidence: float = 0.95,
) -> Series:
    """Mean (t interval) or median (order-statistic interval) per period.

    Parameters
    ----------
    position : numpy.ndarray of int
        Period position of each row; negative for rows left out.
    values : numpy.ndarray of float
        The outcome; NaN rows are left out.
    n_periods : int
        Length of the period axis.
    centre : {"mean", "median"}
        Which centre to summarise each period by.
    confidence : float
        Level of the intervals.

    Returns
    -------
    Series
        Intervals are NaN where they cannot be formed (n < 2 for a mean; n < 6
        for a 95% median interval).

    Notes
    -----
    Rows are grouped by period with one stable integer sort, then each period's
    values are sorted in place: O(N log N) time and O(N) memory for N rows.

    Examples
    --------
    >>> s = centre_series(np.array([0, 0, 0, 1, 1]), np.array([1.0, 2.0, 6.0, 4.0, 4.0]), 2)
    >>> np.round(s.value, 3).tolist(), np.round(s.ci_low, 3).tolist()
    ([3.0, 4.0], [-3.572, 4.0])
    >>> from scipy import stats
    >>> round(float(stats.ttest_1samp([1.0, 2.0, 6.0], 0).confidence_interval().low), 3)
    -3.572
    """
    keep = (position >= 0) & ~np.isnan(values)
    pos, vals = position[keep], values[keep]
    n = np.bincount(pos, minlength=n_periods).astype(np.int64)
    value = np.full(n_periods, np.nan)
    low = np.full(n_periods, np.nan)
    high = np.full(n_periods, np.nan)
    sd = np.full(n_periods, np.nan)
    if centre == "mean":
        total = np.bincount(pos, weights=vals, minlength=n_periods)
        has = n > 0
        value[has] = total[has] / n[has]
        dev = vals - value[pos]
        ss = np.bincount(pos, weights=dev * dev, minlength=n_periods)
        two = n >= 2
        sd[two] = np.sqrt(ss[two] / (n[two] - 1))
        q = stats.t.ppf(1.0 - (1.0 - confidence) / 2.0, n[two] - 1)
        half = q * sd[two] / np.sqrt(n[two])
        low[two], high[two] = value[two] - half, value[two] + half
        return Series(n=n, value=value, ci_low=low, ci_high=high, sd=sd)
    # Group rows by period (a stable integer sort), then sort each period's values in place.
    ordered = vals[np.argsort(pos, kind="stable")]
    starts = np.concatenate(([0], np.cumsum(n)[:-1]))
    for i in np.flatnonzero(n):
        block = ordered[starts[i] : starts[i] + n[i]]
        block.sort()
        m = int(n[i])
        value[i] = 0.5 * (float(block[(m - 1) // 2]) + float(block[m // 2]))  # the block is sorted
        ranks = median_interval_ranks(int(n[i]), confidence)
        if ranks is not None:
            low[i], high[i] = block[ranks[0] - 1], block[ranks[1] - 1]
    return Series(n=n, value=value, ci_low=low, ci_high=high)


# --------------------------------------------------------------------------- shared checks


def _require_periods(n_periods: int) -> None:
    if n_periods < MIN_TREND_PERIODS:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_PERIODS, n=n_periods, minimum=MIN_TREND_PERIODS))


def _series_notes(n_periods: int, residuals: np.ndarray) -> list[Coded]:
    """Short-series and autocorrelation caveats shared by both trend tests."""
    notes: list[Coded] = []
    if n_periods < SHORT_SERIES_PERIODS:
        notes.append(coded(Note.SHORT_SERIES, n=n_periods, minimum=SHORT_SERIES_PERIODS))
        return notes  # a lag-1 autocorrelation of so few points says little
    r = lag1_autocorrelation(residuals)
    limit = 1.96 / math.sqrt(n_periods)
    if r is not None and r > limit:
        notes.append(coded(Note.AUTOCORRELATED, r=r, n=n_periods, limit=limit))
    return notes


def lag1_autocorrelation(residuals: np.ndarray) -> float | None:
    """Lag-1 autocorrelation of a series' residuals (NaN marks a gap; pairs across a gap are skipped).

    Notes
    -----
    r1 = sum(e_t e_{t+1}) / sum(e_t^2) over the residuals centred at their mean,
    the usual estimate (Box & Jenkins); under independence its standard error
    is about 1 / sqrt(n) (Bartlett 1946), so positive values above
    1.96 / sqrt(n) mark a series whose neighbours move together, which makes
    trend p-values too small (Hamed & Rao 1998, J Hydrol 204:182-196,
    https://doi.org/10.1016/S0022-1694(97)00125-X).
    """
    e = residuals - np.nanmean(residuals)
    ss = float(np.nansum(e * e))
    pairs = e[:-1] * e[1:]
    if ss <= 0.0 or not np.isfinite(pairs).any():
        return None
    return float(np.nansum(pairs) / ss)


# --------------------------------------------------------------------------- Cochran-Armitage


def cochran_armitage(
    counts: np.ndarray,
    totals: np.ndarray,
    *,
    scores: np.ndarray | None = None,
    level: str = "",
    grain: Grain | str = Grain.MONTH,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Trend:
    """Cochran-Armitage test for a linear trend in shares across ordered periods.

    Parameters
    ----------
    counts, totals : numpy.ndarray
        Rows of the counted level and all rows per period, in period order.
        Periods with no rows (gaps) are allowed and carry no weight.
    scores : numpy.ndarray, optional
        Period scores; default the positions 0, 1, 2, ... (equal spacing per
        period, gaps included).
    level : str
        The counted level, for the estimate's name.
    grain : Grain or str
        The period length, for the estimate's units.
    alternative : {"two-sided", "greater", "less"}
        ``greater`` asks whether the share rises with the scores.
    confidence : float
        Level of the interval of the change per period.

    Returns
    -------
    Trend
        ``statistic`` is z; ``estimate`` the change in share per period
        (``EstimateKind.SHARE_CHANGE_PER_PERIOD``; 0.01 is one percentage
        point) with its Wald interval; ``extra`` holds ``chi_square`` (z²),
        ``linear_by_linear`` (M² = (N-1)/N z²), the departure-from-line
        chi-square and its df and p.

    Raises
    ------
    NotEnoughDataError
        With fewer than ``MIN_TREND_PERIODS`` periods with rows, or no spread
        (every row or none has the level).

    Notes
    -----
    With N rows, share p̄, period scores s_i, mean score s̄ = Σ n_i s_i / N and
    S_xx = Σ n_i (s_i - s̄)²:

    * the statistic is z = Σ x_i (s_i - s̄) / sqrt(p̄ (1 - p̄) S_xx) (Armitage
      1955), standard normal without trend;
    * the least-squares slope of the period shares on the scores, weighted by
      n_i, is b = Σ x_i (s_i - s̄) / S_xx, so z = b / SE₀(b): the test and the
      estimate are one quantity. The estimate's interval is b ± z_q SE(b) with
      SE(b)² = Σ n_i (s_i - s̄)² p̂_i (1 - p̂_i) / S_xx², the exact variance of b
      when each period has its own share, with the observed shares plugged in
      (a Wald interval; its coverage is checked by simulation in the tests);
    * Agresti's linear-by-linear statistic M² = (N - 1) r², as computed by
      statsmodels ``Table.test_ordinal_association``, equals (N - 1)/N · z²;
    * the Pearson chi-square of the k x 2 table minus z² is the departure from
      a straight line on k - 2 df (Armitage 1955); when it is below
      ``NOT_LINEAR_LEVEL`` the periods vary more than the line explains and
      ``Note.TREND_NOT_LINEAR`` says the p-value may be too small.

    References
    ----------
    Cochran, W. G. (1954). Some methods for strengthening the common chi-square
    tests. Biometrics 10(4), 417-451. https://doi.org/10.2307/3001616
    Armitage, P. (1955). Tests for linear trends in proportions and
    frequencies. Biometrics 11(3), 375-386. https://doi.org/10.2307/3001775
    Agresti, A. (2002). Categorical Data Analysis, 2nd ed., section 3.4. Wiley.

    Examples
    --------
    Agresti's infant malformation by maternal alcohol table with scores 0, 0.5,
    1.5, 4, 7 (Categorical Data Analysis, 2nd ed., section 3.4.4: M² = 6.57,
    P = 0.01; recalled from memory), cross-checked with statsmodels:

    >>> x = np.array([48, 38, 5, 1, 1]); n = x + np.array([17066, 14464, 788, 126, 37])
    >>> trend = cochran_armitage(x, n, scores=np.array([0, 0.5, 1.5, 4, 7]))
    >>> round(trend.extra["linear_by_linear"], 2), round(trend.p_value, 3)
    (6.57, 0.01)
    >>> import statsmodels.api as sm
    >>> table = sm.stats.Table(np.column_stack([x, n - x]))
    >>> res = table.test_ordinal_association(row_scores=np.array([0, 0.5, 1.5, 4, 7]), col_scores=np.array([1, 0]))
    >>> bool(np.isclose(res.zscore ** 2, trend.extra["linear_by_linear"]))
    True
    """
    check_options(alternative, confidence)
    x = np.asarray(counts, dtype=float)
    n = np.asarray(totals, dtype=float)
    s = np.arange(n.size, dtype=float) if scores is None else np.asarray(scores, dtype=float)
    used = n > 0
    k = int(used.sum())
    _require_periods(k)
    total = float(n.sum())
    p_bar = float(x.sum()) / total
    if p_bar <= 0.0 or p_bar >= 1.0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what=level or "the outcome", value=p_bar))
    s_bar = float((n * s).sum()) / total
    d = s - s_bar
    s_xx = float((n * d * d).sum())
    t_stat = float((x * d).sum())
    slope = t_stat / s_xx
    z = t_stat / math.sqrt(p_bar * (1.0 - p_bar) * s_xx)
    p_value = p_from_z(z, alternative)

    p_hat = np.divide(x, n, out=np.zeros_like(x), where=used)
    se = math.sqrt(float((n * d * d * p_hat * (1.0 - p_hat)).sum())) / s_xx
    q_low, q_high = z_quantiles(alternative, confidence)
    low = slope - q_low * se if q_low is not None else -math.inf
    high = slope - q_high * se if q_high is not None else math.inf

    expected = n[used] * p_bar
    pearson = float((((x[used] - expected) ** 2) / (expected * (1.0 - p_bar))).sum())
    departure = max(pearson - z * z, 0.0)
    df = k - 2
    p_departure = float(stats.chi2.sf(departure, df)) if df > 0 else None

    fitted = p_bar + slope * d
    residuals = np.where(used, p_hat - fitted, np.nan)
    notes = _series_notes(k, residuals)
    if p_departure is not None and p_departure < NOT_LINEAR_LEVEL:
        notes.append(coded(Note.TREND_NOT_LINEAR, statistic=departure, df=df, p=p_departure))
    return Trend(
        test=Test.COCHRAN_ARMITAGE,
        statistic=z,
        statistic_name="z",
        p_value=p_value,
        p_method=PMethod.NORMAL_APPROXIMATION,
        estimate=Estimate(
            EstimateKind.SHARE_CHANGE_PER_PERIOD,
            value=slope,
            ci_low=low,
            ci_high=high,
            level=level,
            levels=(str(grain),),
        ),
        periods=k,
        notes=tuple(notes),
        extra={
            "chi_square": z * z,
            "linear_by_linear": (total - 1.0) / total * z * z,
            "n": Count(int(total)),
            "departure_chi_square": departure,
            "departure_df": df,
            "departure_p": p_departure,
        },
    )


# --------------------------------------------------------------------------- Mann-Kendall


def mann_kendall(
    values: np.ndarray,
    *,
    positions: np.ndarray | None = None,
    grain: Grain | str = Grain.MONTH,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Trend:
    """Mann-Kendall test for a monotonic trend in a period series, with the Theil-Sen slope.

    Parameters
    ----------
    values : numpy.ndarray
        One value per period (the period mean or median); NaN marks a period
        without rows, which is left out.
    positions : numpy.ndarray, optional
        Period positions (default 0, 1, 2, ...); the slope is per unit of these.
    grain : Grain or str
        The period length, for the slope's units.
    alternative : {"two-sided", "greater", "less"}
        ``greater`` asks whether the series rises.
    confidence : float
        Level of the Theil-Sen interval.

    Returns
    -------
    Trend
        ``statistic`` is Kendall's S = Σ_{i<j} sign(y_j - y_i); the p-value is
        SciPy's ``kendalltau`` of the values against their period positions
        (exact without ties and with fewer than 50 periods, else the normal
        approximation with the tie-corrected variance
        Var(S) = [n(n-1)(2n+5) - Σ t(t-1)(2t+5)] / 18); ``extra["tau"]`` holds
        tau-b. ``estimate`` is the Theil-Sen slope (median of pairwise slopes)
        with Sen's interval from SciPy's ``theilslopes``.

    Raises
    ------
    NotEnoughDataError
        With fewer than ``MIN_TREND_PERIODS`` periods, or a flat series.

    Notes
    -----
    The test counts periods, not records, as the units of replication, so a
    program with thousands of records a month is not declared to trend on a
    shift too small to see between months; a record-level Kendall's tau
    between value and period would treat every record as independent.
    A short series (fewer than ``SHORT_SERIES_PERIODS``) and positive lag-1
    autocorrelation of the detrended series add caveats.

    References
    ----------
    Mann, H. B. (1945). Nonparametric tests against trend. Econometrica 13(3),
    245-259. https://doi.org/10.2307/1907187
    Kendall, M. G. (1975). Rank Correlation Methods, 4th ed. Griffin.
    Sen, P. K. (1968). Estimates of the regression coefficient based on
    Kendall's tau. JASA 63(324), 1379-1389. https://doi.org/10.1080/01621459.1968.10480934
    Theil, H. (1950). A rank-invariant method of linear and polynomial
    regression analysis. Indagationes Mathematicae 12, 85-91.

    Examples
    --------
    Hollander & Wolfe (1973, p. 185), the data of R's ``?cor.test`` example,
    with y ordered by x: R reports T = 26 (S = 2T - 36 = 16), tau = 0.4444 and
    an exact one-sided p = 0.05972 (recalled from memory), and SciPy agrees:

    >>> x = np.array([44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1])
    >>> y = np.array([2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8])
    >>> trend = mann_kendall(y[np.argsort(x)], alternative="greater")
    >>> trend.statistic, round(trend.extra["tau"], 4), round(trend.p_value, 5)
    (16.0, 0.4444, 0.05972)
    """
    check_options(alternative, confidence)
    y = np.asarray(values, dtype=float)
    t = np.arange(y.size, dtype=float) if positions is None else np.asarray(positions, dtype=float)
    keep = ~np.isnan(y)
    y, t = y[keep], t[keep]
    k = int(y.size)
    _require_periods(k)
    if np.all(y == y[0]):
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what="the period series", value=float(y[0])))
    i, j = np.triu_indices(k, 1)
    s_stat = float(np.sign(y[j] - y[i]).dot(np.sign(t[j] - t[i])))
    tau = stats.kendalltau(t, y, alternative=alternative)
    exact = k < 50 and np.unique(y).size == k
    theil = stats.theilslopes(y, t, alpha=_theil_confidence(alternative, confidence))
    low, high = float(theil.low_slope), float(theil.high_slope)
    if alternative == "greater":
        high = math.inf
    elif alternative == "less":
        low = -math.inf
    residuals = np.full(keep.size, np.nan)
    residuals[keep] = y - (theil.intercept + theil.slope * t)
    return Trend(
        test=Test.MANN_KENDALL,
        statistic=s_stat,
        statistic_name="S",
        p_value=float(tau.pvalue),
        p_method=PMethod.EXACT if exact else PMethod.NORMAL_APPROXIMATION,
        estimate=Estimate(
            EstimateKind.THEIL_SEN_SLOPE,
            value=float(theil.slope),
            ci_low=low,
            ci_high=high,
            levels=(str(grain),),
        ),
        periods=k,
        notes=tuple(_series_notes(k, residuals)),
        extra={"tau": float(tau.statistic), "intercept": float(theil.intercept)},
    )


def _theil_confidence(alternative: str, confidence: float) -> float:
    """SciPy's two-sided interval level that gives a one-sided bound at ``confidence``."""
    return confidence if alternative == "two-sided" else 2.0 * confidence - 1.0
