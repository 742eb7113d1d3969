"""Trend tests across periods and per-period summaries, against published examples, SciPy and statsmodels.

Sources:
- Agresti, A. (2002). Categorical Data Analysis, 2nd ed., section 3.4.4 (infant malformation
  by maternal alcohol consumption): with scores 0, 0.5, 1.5, 4, 7, r = 0.0142, M² = 6.57,
  P = 0.01; with equally spaced scores M² = 1.83; Pearson X² = 12.1 for the table. Recalled
  from memory; statsmodels' ``Table.test_ordinal_association`` confirms them.
- Hollander, M. & Wolfe, D. A. (1973). Nonparametric Statistical Methods, p. 185 (the data of
  R's ``?cor.test`` example): Kendall's T = 26, tau = 0.4444, exact one-sided p = 0.05972.
  Recalled from memory of R's output; SciPy's ``kendalltau`` confirms them.
- SciPy ``stats.kendalltau``, ``stats.theilslopes``, ``stats.ttest_1samp``, ``stats.binomtest``.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

from statmargin.errors import NotEnoughDataError
from statmargin.stats.trend import (
    SHORT_SERIES_PERIODS,
    centre_series,
    cochran_armitage,
    lag1_autocorrelation,
    mann_kendall,
    median_interval_ranks,
    share_series,
)
from statmargin.vocabulary import EstimateKind, Test
from statmargin.vocabulary.codes import Note, Skip
from statmargin.words.sentences import say

MALFORMED = np.array([48, 38, 5, 1, 1])
NOT_MALFORMED = np.array([17066, 14464, 788, 126, 37])
ALCOHOL_SCORES = np.array([0.0, 0.5, 1.5, 4.0, 7.0])


def test_cochran_armitage_agresti_alcohol_scores() -> None:
    """Agresti's alcohol example: M² = 6.57, P = 0.01, r = 0.0142 (CDA 2nd ed. 3.4.4, recalled)."""
    n = MALFORMED + NOT_MALFORMED
    trend = cochran_armitage(MALFORMED, n, scores=ALCOHOL_SCORES)
    assert trend.test is Test.COCHRAN_ARMITAGE
    assert round(trend.extra["linear_by_linear"], 2) == 6.57
    assert round(trend.p_value, 2) == 0.01
    r = math.sqrt(trend.extra["linear_by_linear"] / (n.sum() - 1))
    assert round(r, 4) == 0.0142
    assert trend.statistic > 0  # malformation rises with drinking


def test_cochran_armitage_agresti_equal_scores_and_pearson() -> None:
    """Equally spaced scores give M² = 1.83; z² plus the departure chi-square is Pearson's X² = 12.1."""
    n = MALFORMED + NOT_MALFORMED
    trend = cochran_armitage(MALFORMED, n)
    assert round(trend.extra["linear_by_linear"], 2) == 1.83
    pearson = stats.chi2_contingency(np.column_stack([MALFORMED, NOT_MALFORMED]), correction=False)[0]
    assert round(pearson, 1) == 12.1
    assert trend.extra["chi_square"] + trend.extra["departure_chi_square"] == pytest.approx(pearson, rel=1e-12)
    assert trend.extra["departure_df"] == 3


@pytest.mark.parametrize("seed", range(6))
def test_cochran_armitage_matches_statsmodels(seed: int) -> None:
    """(N-1)/N z² equals statsmodels' linear-by-linear statistic on random period tables."""
    rng = np.random.default_rng(seed)
    k = int(rng.integers(3, 15))
    n = rng.integers(5, 400, size=k)
    x = rng.binomial(n, rng.uniform(0.1, 0.9))
    trend = cochran_armitage(x, n)
    table = sm.stats.Table(np.column_stack([x, n - x]), shift_zeros=False)
    res = table.test_ordinal_association(row_scores=np.arange(k, dtype=float), col_scores=np.array([1.0, 0.0]))
    assert trend.extra["linear_by_linear"] == pytest.approx(res.zscore**2, rel=1e-10)
    assert math.copysign(1, trend.statistic) == math.copysign(1, res.zscore)


def test_change_per_period_is_the_weighted_least_squares_slope() -> None:
    """The estimate is the n-weighted least-squares slope of the period shares (statsmodels WLS)."""
    n = np.array([120, 95, 0, 130, 110, 101])  # a gap in the third period
    x = np.array([90, 70, 0, 88, 70, 60])
    trend = cochran_armitage(x, n, level="Yes", grain="month")
    used = n > 0
    scores = np.arange(6.0)[used]
    fit = sm.WLS(x[used] / n[used], sm.add_constant(scores), weights=n[used]).fit()
    assert trend.estimate.kind is EstimateKind.SHARE_CHANGE_PER_PERIOD
    assert trend.estimate.value == pytest.approx(fit.params[1], rel=1e-12)
    assert trend.estimate.name == "change in share of 'Yes' per month"
    # Its standard error: sqrt(sum n_i d_i² p_i (1 - p_i)) / Sxx, by hand.
    p = x[used] / n[used]
    d = scores - np.average(scores, weights=n[used])
    sxx = float((n[used] * d * d).sum())
    se = math.sqrt(float((n[used] * d * d * p * (1 - p)).sum())) / sxx
    assert trend.estimate.ci_high - trend.estimate.value == pytest.approx(1.959963984540054 * se, rel=1e-9)


def test_cochran_armitage_size_and_interval_coverage() -> None:
    """Under no trend the test rejects about 5% of the time; with a trend the 95% interval covers about 95%."""
    rng = np.random.default_rng(20261205)
    sims, k = 2500, 12
    n = rng.integers(40, 250, size=k)
    rejected = 0
    covered = 0
    slope = -0.01
    shares = 0.78 + slope * np.arange(k)
    for _ in range(sims):
        flat = cochran_armitage(rng.binomial(n, 0.78), n)
        rejected += flat.p_value < 0.05
        sloped = cochran_armitage(rng.binomial(n, shares), n)
        covered += sloped.estimate.ci_low <= slope <= sloped.estimate.ci_high
    # Monte Carlo standard error at 2500 runs is about 0.0044 for a 5% rate: 3 SE allowed.
    assert abs(rejected / sims - 0.05) < 0.014
    assert abs(covered / sims - 0.95) < 0.014


def test_cochran_armitage_skips_and_notes() -> None:
    """Two periods are too few; a short series and a series that bends are named as caveats."""
    with pytest.raises(NotEnoughDataError) as info:
        cochran_armitage(np.array([3, 4, 0]), np.array([10, 10, 0]))
    assert info.value.reason.code is Skip.TOO_FEW_PERIODS
    n = np.full(5, 400)
    x = np.array([200, 320, 200, 320, 200])  # zig-zag: no line, strong differences
    trend = cochran_armitage(x, n)
    codes = [note.code for note in trend.notes]
    assert Note.SHORT_SERIES in codes and Note.TREND_NOT_LINEAR in codes
    assert "fewer than 8" in say(next(n for n in trend.notes if n.code is Note.SHORT_SERIES))


def test_cochran_armitage_one_sided() -> None:
    """A one-sided question halves the p-value in its direction and opens one end of the interval."""
    n = np.full(8, 100)
    x = np.array([50, 52, 55, 53, 58, 60, 61, 63])
    both = cochran_armitage(x, n)
    up = cochran_armitage(x, n, alternative="greater")
    assert up.p_value == pytest.approx(both.p_value / 2)
    assert up.estimate.ci_high == math.inf and up.estimate.ci_low > both.estimate.ci_low


def test_mann_kendall_hollander_wolfe() -> None:
    """Hollander & Wolfe p.185: S = 16, tau = 0.4444, exact one-sided p = 0.05972 (R, recalled)."""
    x = np.array([44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1])
    y = np.array([2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8])
    trend = mann_kendall(y[np.argsort(x)], alternative="greater")
    assert trend.test is Test.MANN_KENDALL
    assert trend.statistic == 16.0
    assert round(trend.extra["tau"], 4) == 0.4444
    assert round(trend.p_value, 5) == 0.05972
    assert trend.p_method == "exact"


def test_mann_kendall_with_ties_matches_scipy() -> None:
    """With ties and gaps, S is the brute-force sign sum and the p-value is SciPy's kendalltau."""
    values = np.array([3.1, 3.4, np.nan, 3.4, 3.9, 3.2, 4.4, 4.4, 4.0, np.nan, 4.8, 5.0])
    trend = mann_kendall(values)
    keep = ~np.isnan(values)
    t, y = np.arange(values.size)[keep], values[keep]
    s = sum(np.sign(y[j] - y[i]) for i in range(y.size) for j in range(i + 1, y.size))
    assert trend.statistic == s
    reference = stats.kendalltau(t, y)
    assert trend.p_value == pytest.approx(reference.pvalue, rel=1e-12)
    assert trend.p_method == "normal_approximation"
    # Tie-corrected variance by hand: n = 10, two pairs of ties in y.
    n = y.size
    var = (n * (n - 1) * (2 * n + 5) - 2 * (2 * 1 * 9)) / 18
    assert 2 * stats.norm.sf(abs(s) / math.sqrt(var)) == pytest.approx(reference.pvalue, rel=1e-9)


def test_theil_sen_matches_scipy_with_gaps() -> None:
    """The slope and Sen's interval equal SciPy's theilslopes on the period positions."""
    values = np.array([12.0, 11.5, 13.1, np.nan, 12.2, 14.0, 13.7, 15.2, 14.9, 16.3])
    trend = mann_kendall(values, grain="week")
    keep = ~np.isnan(values)
    ref = stats.theilslopes(values[keep], np.arange(values.size)[keep], alpha=0.95)
    assert trend.estimate.kind is EstimateKind.THEIL_SEN_SLOPE
    assert trend.estimate.value == pytest.approx(ref.slope)
    assert (trend.estimate.ci_low, trend.estimate.ci_high) == pytest.approx((ref.low_slope, ref.high_slope))
    assert trend.estimate.name == "Theil-Sen slope per week"
    # The median of all pairwise slopes, by hand.
    t, y = np.arange(values.size)[keep], values[keep]
    slopes = [(y[j] - y[i]) / (t[j] - t[i]) for i in range(y.size) for j in range(i + 1, y.size)]
    assert trend.estimate.value == pytest.approx(float(np.median(slopes)))


def test_mann_kendall_size_under_no_trend() -> None:
    """On 12 independent periods with no trend the test rejects at most about 5% of the time."""
    rng = np.random.default_rng(7)
    sims = 1200
    rejected = sum(mann_kendall(rng.normal(size=12)).p_value < 0.05 for _ in range(sims))
    assert rejected / sims < 0.05 + 0.019  # 3 Monte Carlo standard errors


def test_short_and_autocorrelated_series_notes() -> None:
    """Six periods get the short-series note; a strongly autocorrelated 36-period series gets its note."""
    short = mann_kendall(np.array([1.0, 2.0, 1.5, 2.5, 3.0, 2.8]))
    assert [n.code for n in short.notes] == [Note.SHORT_SERIES]
    assert short.notes[0].facts == {"n": 6, "minimum": SHORT_SERIES_PERIODS}
    rng = np.random.default_rng(11)
    e = np.zeros(36)
    for i in range(1, 36):
        e[i] = 0.9 * e[i - 1] + rng.normal()
    wandering = mann_kendall(e)
    note = next(n for n in wandering.notes if n.code is Note.AUTOCORRELATED)
    assert note.facts["r"] > note.facts["limit"] == pytest.approx(1.96 / 6)
    assert "lag-1 autocorrelation" in say(note)


def test_lag1_autocorrelation_matches_statsmodels_acf() -> None:
    """The lag-1 autocorrelation equals statsmodels' acf at lag 1 on a series without gaps."""
    e = np.random.default_rng(3).normal(size=40)
    from statsmodels.tsa.stattools import acf

    assert lag1_autocorrelation(e) == pytest.approx(acf(e, nlags=1, fft=False)[1], rel=1e-12)


def test_mann_kendall_skips() -> None:
    """Fewer than three periods, or a flat series, cannot be tested for trend."""
    with pytest.raises(NotEnoughDataError) as few:
        mann_kendall(np.array([1.0, np.nan, 2.0]))
    assert few.value.reason.code is Skip.TOO_FEW_PERIODS
    with pytest.raises(NotEnoughDataError) as flat:
        mann_kendall(np.full(5, 7.0))
    assert flat.value.reason.code is Skip.NO_SPREAD


def test_share_series_wilson_matches_scipy() -> None:
    """Per-period shares and Wilson intervals equal SciPy's binomtest Wilson intervals."""
    rng = np.random.default_rng(5)
    position = rng.integers(-1, 6, size=900)
    success = rng.random(900) < 0.7
    series = share_series(position, success, 6)
    for i in range(6):
        rows = position == i
        assert series.n[i] == rows.sum() and series.count[i] == success[rows].sum()
        ci = stats.binomtest(int(series.count[i]), int(series.n[i])).proportion_ci(method="wilson")
        assert (series.ci_low[i], series.ci_high[i]) == pytest.approx((ci.low, ci.high), rel=1e-12)


def test_centre_series_means_match_scipy_t_intervals() -> None:
    """Per-period means and t intervals equal SciPy's one-sample t intervals."""
    rng = np.random.default_rng(6)
    position = rng.integers(0, 4, size=200)
    values = rng.gamma(2.0, 10.0, size=200)
    values[::17] = np.nan
    series = centre_series(position, values, 5)
    for i in range(4):
        v = values[(position == i) & ~np.isnan(values)]
        ci = stats.ttest_1samp(v, 0).confidence_interval()
        assert series.value[i] == pytest.approx(v.mean())
        assert (series.ci_low[i], series.ci_high[i]) == pytest.approx((ci.low, ci.high))
        assert series.sd[i] == pytest.approx(v.std(ddof=1))
    assert series.n[4] == 0 and np.isnan(series.value[4])


def test_centre_series_medians_and_order_statistic_intervals() -> None:
    """Per-period medians use numpy's median and the interval the order statistics of the binomial rule."""
    rng = np.random.default_rng(8)
    position = np.repeat(np.arange(3), [10, 25, 4])
    values = rng.lognormal(3, 0.6, size=position.size)
    series = centre_series(position, values, 3, centre="median")
    for i, size in enumerate([10, 25, 4]):
        v = np.sort(values[position == i])
        assert series.value[i] == pytest.approx(np.median(v))
        ranks = median_interval_ranks(size)
        if ranks is None:
            assert np.isnan(series.ci_low[i])
            continue
        assert (series.ci_low[i], series.ci_high[i]) == (v[ranks[0] - 1], v[ranks[1] - 1])
        # Guaranteed coverage: 1 - 2 P(B <= l - 1) >= 0.95 for B ~ Binomial(n, 1/2).
        assert 1 - 2 * stats.binom.cdf(ranks[0] - 1, size, 0.5) >= 0.95


def test_median_interval_coverage_by_simulation() -> None:
    """The median interval covers the true median of a skewed distribution at least 95% of the time."""
    rng = np.random.default_rng(9)
    true_median = math.exp(1.0)  # lognormal(1, 1)
    sims, size = 3000, 30
    position = np.zeros(size, dtype=np.int64)
    hits = 0
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for _ in range(sims):
            s = centre_series(position, rng.lognormal(1.0, 1.0, size), 1, centre="median")
            hits += s.ci_low[0] <= true_median <= s.ci_high[0]
    assert hits / sims >= 0.95 - 0.01
