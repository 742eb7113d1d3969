"""Tests for counts: goodness of fit, one share, independence, Fisher's exact test, McNemar.

Every function takes plain counts (no spreadsheet objects) and returns a
``statmargin.results.Result`` with ``outcome=""`` and ``exposure=None``; the
engine fills those in. Caveats are raised as warnings and also written as plain
sentences into ``Result.notes`` so they reach the report.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from scipy import optimize, stats
from scipy.stats import contingency

from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.results import Effect, Estimate, Result
from statmargin.stats._common import caveat, check_confidence
from statmargin.stats.defaults import DEFAULT_RESAMPLES, DEFAULT_SEED
from statmargin.vocabulary import Alternative, Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Derived, Note, Refusal, Skip, Subject, coded

# Cochran (1954) rule, common practice: the chi-square approximation is doubtful
# when more than 20% of expected counts are below 5 or any is below 1.
SMALL_EXPECTED = 5.0
TINY_EXPECTED = 1.0
MAX_SHARE_SMALL = 0.20
# McNemar: use the exact binomial version when there are fewer discordant pairs
# than this (common practice; the chi-square approximation needs enough of them).
MCNEMAR_EXACT_BELOW = 25
# R's tolerance when counting simulated statistics at least as large as observed.
_ALMOST_ONE = 1.0 - 64.0 * np.finfo(float).eps


def _alternative(alternative: Alternative | str) -> str:
    """The alternative as one of 'two-sided', 'greater', 'less'."""
    value = getattr(alternative, "value", alternative)
    value = str(value).strip().lower()
    if value not in ("two-sided", "greater", "less"):
        raise OptionError(coded(Refusal.UNKNOWN_ALTERNATIVE, given=alternative))
    return value


def _z(confidence: float, alternative: str) -> float:
    """Normal quantile for a two-sided or one-sided interval at this level."""
    if alternative == "two-sided":
        return float(stats.norm.ppf(1.0 - (1.0 - confidence) / 2.0))
    return float(stats.norm.ppf(confidence))


def _check_resamples(resamples: int) -> int:
    if int(resamples) < 1:
        raise OptionError(coded(Refusal.RESAMPLES, given=resamples))
    return int(resamples)


def _mc_se(p: float, resamples: int) -> float:
    """Monte Carlo standard error of a simulated p-value (binomial sampling error)."""
    return math.sqrt(p * (1.0 - p) / resamples)


def _monte_carlo_p(simulated: np.ndarray, observed: float, resamples: int) -> tuple[float, float]:
    """Simulated p-value and its Monte Carlo standard error.

    Notes
    -----
    p = (1 + #{X2_sim >= X2}) / (B + 1), counting with R's tolerance
    (``_ALMOST_ONE``) as ``chisq.test(simulate.p.value = TRUE)`` does.
    """
    p_value = (1 + int((simulated >= _ALMOST_ONE * observed).sum())) / (resamples + 1)
    return p_value, _mc_se(p_value, resamples)


# --------------------------------------------------------------------------- intervals


def wilson_interval(
    successes: float, n: float, *, confidence: float = 0.95, alternative: str = "two-sided"
) -> tuple[float, float]:
    """Wilson score interval for one share.

    Parameters
    ----------
    successes, n : int or float
        Count of the level of interest and the total (n > 0); effective
        (non-whole) counts are allowed.
    confidence : float
        Confidence level.
    alternative : str
        'two-sided' gives both limits; 'greater' gives a lower limit with upper
        limit 1; 'less' gives an upper limit with lower limit 0.

    Returns
    -------
    tuple of float
        (lower, upper).

    Notes
    -----
    Without continuity correction. It matches R's ``prop.test(x, n, correct =
    FALSE)$conf.int``.

    References
    ----------
    Wilson, E. B. (1927). Probable inference, the law of succession, and
    statistical inference. JASA 22(158), 209-212. https://doi.org/10.1080/01621459.1927.10502953

    Examples
    --------
    7 of 20 screened clients returned (invented counts):

    >>> import math
    >>> from scipy import stats
    >>> low, high = wilson_interval(7, 20)
    >>> round(low, 4), round(high, 4)
    (0.1812, 0.5671)
    >>> check = stats.binomtest(7, 20).proportion_ci(confidence_level=0.95, method="wilson")
    >>> math.isclose(low, check.low), math.isclose(high, check.high)
    (True, True)
    """
    z = _z(confidence, alternative)
    phat = successes / n
    denom = 1.0 + z * z / n
    centre = (phat + z * z / (2 * n)) / denom
    half = z / denom * math.sqrt(phat * (1.0 - phat) / n + z * z / (4 * n * n))
    low, high = max(0.0, centre - half), min(1.0, centre + half)
    # At 0 or n successes the exact limit is 0 or 1; rounding must not put it a step inside.
    if successes == 0:
        low = 0.0
    if successes == n:
        high = 1.0
    if alternative == "greater":
        high = 1.0
    elif alternative == "less":
        low = 0.0
    return low, high


def newcombe_difference_interval(
    x1: float,
    n1: float,
    x2: float,
    n2: float,
    *,
    confidence: float = 0.95,
    alternative: str = "two-sided",
) -> tuple[float, float]:
    """Newcombe hybrid score interval for a difference of two independent shares.

    Parameters
    ----------
    x1, n1, x2, n2 : int
        Counts of the level of interest and totals in the two groups.
    confidence : float
        Confidence level.
    alternative : str
        'two-sided', or 'greater' / 'less' for a one-sided limit (other limit +-1).

    Returns
    -------
    tuple of float
        (lower, upper) for x1/n1 - x2/n2.

    Notes
    -----
    Method 10 of Newcombe (1998): combine the two Wilson intervals by squaring
    and adding the distances from each share to its limits.

    References
    ----------
    Newcombe, R. G. (1998). Interval estimation for the difference between
    independent proportions: comparison of eleven methods. Statistics in
    Medicine 17(8), 873-890.
    https://doi.org/10.1002/(SICI)1097-0258(19980430)17:8<873::AID-SIM779>3.0.CO;2-I

    Examples
    --------
    Newcombe's (1998) worked example 56/70 against 48/80; the paper lists 0.0524 to
    0.3339 for method 10 (published values recalled from memory). SciPy has no
    version of this interval.

    >>> low, high = newcombe_difference_interval(56, 70, 48, 80)
    >>> round(low, 4), round(high, 4)
    (0.0524, 0.3339)
    """
    p1, p2 = x1 / n1, x2 / n2
    l1, u1 = wilson_interval(x1, n1, confidence=confidence)
    l2, u2 = wilson_interval(x2, n2, confidence=confidence)
    if alternative != "two-sided":
        # one-sided limits use the one-sided normal quantile in each Wilson interval
        l1, u1 = _wilson_both(x1, n1, confidence)
        l2, u2 = _wilson_both(x2, n2, confidence)
    d = p1 - p2
    low = d - math.sqrt((p1 - l1) ** 2 + (u2 - p2) ** 2)
    high = d + math.sqrt((u1 - p1) ** 2 + (p2 - l2) ** 2)
    if alternative == "greater":
        high = 1.0
    elif alternative == "less":
        low = -1.0
    return max(-1.0, low), min(1.0, high)


def _wilson_both(x: float, n: float, confidence: float) -> tuple[float, float]:
    """Both Wilson limits computed with the one-sided quantile."""
    low, _ = wilson_interval(x, n, confidence=confidence, alternative="greater")
    _, high = wilson_interval(x, n, confidence=confidence, alternative="less")
    return low, high


def newcombe_paired_difference_interval(
    table: np.ndarray, *, confidence: float = 0.95
) -> tuple[float, float]:
    """Newcombe hybrid score interval for a difference of two paired shares.

    Parameters
    ----------
    table : ndarray, shape (2, 2)
        Paired counts [[a, b], [c, d]]: rows the first measurement, columns the
        second, level of interest first.
    confidence : float
        Two-sided confidence level.

    Returns
    -------
    tuple of float
        (lower, upper) for (a + b)/n - (a + c)/n = (b - c)/n.

    Notes
    -----
    Method 10 of Newcombe (1998b): Wilson limits for each marginal share, combined
    through the correlation phi of the 2x2 table with Newcombe's correction of its
    numerator: A = ad - bc is replaced by A - n/2 when A > n/2, by 0 when
    0 <= A <= n/2, and kept when A < 0; phi = 0 when a margin is empty. The formulas
    are those given by Fagerland, Lydersen & Laake (2014, Statistics in Medicine
    33:2850-2875; the "Newcombe square-and-add" interval).

    References
    ----------
    Newcombe, R. G. (1998). Improved confidence intervals for the difference
    between binomial proportions based on paired data. Statistics in Medicine
    17(22), 2635-2650.
    https://doi.org/10.1002/(SICI)1097-0258(19981130)17:22<2635::AID-SIM954>3.0.CO;2-C
    Fagerland, M. W., Lydersen, S., & Laake, P. (2014). Recommended tests and
    confidence intervals for paired binomial proportions. Statistics in Medicine
    33(16), 2850-2875. https://doi.org/10.1002/sim.6148

    Examples
    --------
    Newcombe's (1998b) worked example a = 36, b = 12, c = 2, d = 0 (ad - bc < 0, so no
    correction); the paper lists 0.0569 to 0.3404 for method 10 (published values
    recalled from memory). SciPy has no version of this interval.

    >>> low, high = newcombe_paired_difference_interval([[36, 12], [2, 0]])
    >>> round(low, 4), round(high, 4)
    (0.0569, 0.3404)

    Complete response before and after consolidation therapy (Cavo et al. 2012, the
    worked example of Fagerland, Lydersen & Laake 2014): ad - bc = 4624 > n/2, so the
    correction applies; their interval is -0.1186 to -0.0046 (as also in the test
    suite of the R package contingencytables, which implements their formulas).

    >>> low, high = newcombe_paired_difference_interval([[59, 6], [16, 80]])
    >>> round(low, 4), round(high, 4)
    (-0.1186, -0.0046)
    """
    a, b, c, d = (float(v) for v in np.asarray(table, dtype=float).ravel())
    n = a + b + c + d
    p1, p2 = (a + b) / n, (a + c) / n
    l1, u1 = wilson_interval(int(a + b), int(n), confidence=confidence)
    l2, u2 = wilson_interval(int(a + c), int(n), confidence=confidence)
    margins = (a + b) * (c + d) * (a + c) * (b + d)
    association = a * d - b * c
    if association > n / 2.0:
        association -= n / 2.0
    elif association >= 0.0:
        association = 0.0
    phi = association / math.sqrt(margins) if margins > 0 else 0.0
    diff = p1 - p2
    low_sq = (p1 - l1) ** 2 - 2 * phi * (p1 - l1) * (u2 - p2) + (u2 - p2) ** 2
    high_sq = (u1 - p1) ** 2 - 2 * phi * (u1 - p1) * (p2 - l2) + (p2 - l2) ** 2
    low = diff - math.sqrt(max(low_sq, 0.0))
    high = diff + math.sqrt(max(high_sq, 0.0))
    return max(-1.0, low), min(1.0, high)


def _ncx2_cdf(x: float, df: float, nc: float) -> float:
    if nc <= 0.0:
        return float(stats.chi2.cdf(x, df))
    return float(stats.ncx2.cdf(x, df, nc))


def noncentrality_interval(
    statistic: float, df: float, *, confidence: float = 0.95
) -> tuple[float, float]:
    """Confidence interval for the noncentrality of a chi-square statistic.

    Parameters
    ----------
    statistic : float
        Observed Pearson chi-square.
    df : float
        Its degrees of freedom.
    confidence : float
        Two-sided confidence level.

    Returns
    -------
    tuple of float
        (lower, upper) noncentrality; a limit is 0 when the observed statistic is
        too small to reach it.

    Notes
    -----
    Inverts the noncentral chi-square distribution function: the lower limit
    solves P(X <= x_obs | lambda) = 1 - alpha/2 and the upper limit solves
    P(X <= x_obs | lambda) = alpha/2 ("pivoting the CDF").

    References
    ----------
    Smithson, M. (2003). Confidence Intervals. Sage (QASS 140), ch. 4.
    Steiger, J. H. (2004). Beyond the F test. Psychological Methods 9(2),
    164-182. https://doi.org/10.1037/1082-989X.9.2.164

    Examples
    --------
    A chi-square of 10 on 2 df; at each limit the noncentral chi-square distribution
    function of the observed value equals its target (cross-check with SciPy):

    >>> import math
    >>> from scipy import stats
    >>> low, high = noncentrality_interval(10.0, 2)
    >>> round(low, 4), round(high, 4)
    (0.8261, 24.9611)
    >>> math.isclose(stats.ncx2.cdf(10.0, 2, low), 0.975), math.isclose(stats.ncx2.cdf(10.0, 2, high), 0.025)
    (True, True)
    """
    alpha = 1.0 - confidence

    def limit(target: float) -> float:
        if _ncx2_cdf(statistic, df, 0.0) <= target:
            return 0.0
        high = max(10.0, 2.0 * statistic)
        while _ncx2_cdf(statistic, df, high) > target:
            high *= 2.0
        return float(
            optimize.brentq(lambda nc: _ncx2_cdf(statistic, df, nc) - target, 0.0, high, xtol=1e-10)
        )

    return limit(1.0 - alpha / 2.0), limit(alpha / 2.0)


def noncentrality_estimate(
    statistic: float, df: float, *, confidence: float = 0.95
) -> tuple[float, float, float]:
    """Median-unbiased noncentrality of a chi-square statistic with its interval.

    Parameters
    ----------
    statistic : float
        Observed Pearson chi-square.
    df : float
        Its degrees of freedom.
    confidence : float
        Two-sided confidence level.

    Returns
    -------
    tuple of float
        (estimate, lower, upper): the noncentrality under which the observed value is
        the median, and the bounds of :func:`noncentrality_interval`; one inversion,
        so lower <= estimate <= upper always.

    Notes
    -----
    Effect sizes built on the noncentrality (Cohen's w = sqrt(lambda / n), Cramer's
    V = sqrt(lambda / (n m))) use this estimate. The plug-in sqrt(X^2 / (n m)) treats
    the whole statistic as signal (its null expectation is df), so with a small X^2 it
    can lie above the interval's upper bound.

    References
    ----------
    Steiger, J. H., & Fouladi, R. T. (1997). Noncentrality interval estimation and the
    evaluation of statistical models. In Harlow, Mulaik & Steiger (eds.), What If There
    Were No Significance Tests? Erlbaum, pp. 221-257.

    Examples
    --------
    >>> from scipy import stats
    >>> mid, low, high = noncentrality_estimate(10.0, 2)
    >>> round(float(stats.ncx2.cdf(10.0, 2, mid)), 6), low <= mid <= high
    (0.5, True)
    """
    from statmargin.stats import effects

    low, mid, high = effects.invert_noncentrality(
        effects.noncentral_f_cdf(statistic / df, df, math.inf), confidence, statistic
    )
    return mid, low, high


# --------------------------------------------------------------------------- input checks


def _as_count(value: Any, what: Subject, label: str | None = None) -> int:
    """A whole count 0 or more; ``what`` (with ``label`` for ``Subject.COUNT_OF``) names it in a refusal."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise OptionError(coded(Refusal.NOT_A_COUNT, what=what, label=label, value=value)) from None
    if not math.isfinite(number) or number < 0 or number != int(number):
        raise OptionError(coded(Refusal.NOT_WHOLE_COUNT, what=what, label=label, value=value))
    return int(number)


def _count_table(table: Any, row_labels: Sequence[str], col_labels: Sequence[str]) -> np.ndarray:
    """A validated integer table with no empty row or column."""
    arr = np.asarray(table, dtype=object)
    if arr.ndim != 2:
        raise OptionError(coded(Refusal.TABLE_NOT_2D))
    if arr.shape != (len(row_labels), len(col_labels)):
        raise OptionError(coded(Refusal.TABLE_LABELS, rows=arr.shape[0], columns=arr.shape[1],
                                row_labels=len(row_labels), column_labels=len(col_labels)))
    counts = np.array([[_as_count(v, Subject.TABLE_CELL) for v in row] for row in arr], dtype=np.int64)
    if counts.shape[0] < 2 or counts.shape[1] < 2:
        raise NotEnoughDataError(coded(Skip.ONE_CATEGORY_SIDE))
    if counts.sum() == 0:
        raise NotEnoughDataError(coded(Skip.EMPTY_TABLE))
    for i, label in enumerate(row_labels):
        if counts[i].sum() == 0:
            raise NotEnoughDataError(coded(Skip.EMPTY_ROW, label=label))
    for j, label in enumerate(col_labels):
        if counts[:, j].sum() == 0:
            raise NotEnoughDataError(coded(Skip.EMPTY_COLUMN, label=label))
    return counts


def _labelled(values: np.ndarray, row_labels: Sequence[str], col_labels: Sequence[str]) -> dict:
    return {
        "row_labels": [str(v) for v in row_labels],
        "col_labels": [str(v) for v in col_labels],
        "values": values.tolist(),
    }


def _expected_counts(counts: np.ndarray) -> np.ndarray:
    n = counts.sum()
    return np.outer(counts.sum(axis=1), counts.sum(axis=0)) / n


def _pearson_x2(observed: np.ndarray, expected: np.ndarray) -> np.ndarray:
    """Pearson chi-square over the last two axes (or the last axis for 1-D counts)."""
    axes = tuple(range(observed.ndim - expected.ndim, observed.ndim))
    return ((observed - expected) ** 2 / expected).sum(axis=axes)


def _row_groups(
    counts: np.ndarray, row_labels: Sequence[str], col_labels: Sequence[str]
) -> list[dict]:
    n = counts.sum()
    groups = []
    for i, label in enumerate(row_labels):
        total = int(counts[i].sum())
        groups.append(
            {
                "label": str(label),
                "count": total,
                "share": total / n,
                "counts": {str(c): int(counts[i, j]) for j, c in enumerate(col_labels)},
                "shares": {str(c): counts[i, j] / total for j, c in enumerate(col_labels)},
            }
        )
    return groups


def _difference_of_shares(
    counts: np.ndarray,
    row_labels: Sequence[str],
    col_labels: Sequence[str],
    *,
    confidence: float,
    alternative: str = "two-sided",
) -> Estimate:
    """Share of the first column in row 1 minus row 2, with Newcombe's interval."""
    x1, x2 = int(counts[0, 0]), int(counts[1, 0])
    n1, n2 = int(counts[0].sum()), int(counts[1].sum())
    low, high = newcombe_difference_interval(
        x1, n1, x2, n2, confidence=confidence, alternative=alternative
    )
    return Estimate(
        EstimateKind.SHARE_DIFFERENCE,
        value=x1 / n1 - x2 / n2,
        ci_low=low,
        ci_high=high,
        levels=(str(row_labels[0]), str(row_labels[1])),
        level=str(col_labels[0]),
    )


# --------------------------------------------------------------------------- goodness of fit


def chi_square_goodness_of_fit(
    counts: dict[str, int],
    shares: dict[str, float],
    *,
    confidence: float = 0.95,
    seed: int = DEFAULT_SEED,
    monte_carlo_resamples: int = DEFAULT_RESAMPLES,
    monte_carlo: bool | str = "auto",
) -> Result:
    """Pearson chi-square test that counts follow given shares.

    Parameters
    ----------
    counts : dict of str to int
        Observed count per category. A category named in ``shares`` but absent
        here counts as 0.
    shares : dict of str to float
        Expected share per category, each > 0, adding up to 1.
    confidence : float
        Level for the intervals.
    seed : int
        Seed for the Monte Carlo p-value (reproducible run to run).
    monte_carlo_resamples : int
        Number of simulated samples for the Monte Carlo p-value.
    monte_carlo : bool or "auto"
        "auto" uses Monte Carlo when any expected count is below 5.

    Returns
    -------
    Result
        design Design.ONE_SAMPLE_CATEGORICAL, test Test.CHI_SQUARE_GOODNESS_OF_FIT.
        ``estimate`` is the share of the category furthest from its expected
        share, with a Wilson interval; ``effect`` is Cohen's w with a
        noncentrality-based interval; ``groups`` has count, share, expected and
        expected_share per category.

    Notes
    -----
    Without small counts the p-value is the upper tail of chi-square with k - 1
    df (as R ``chisq.test(x, p = p)``). When any expected count is below 5
    (Cochran 1954; common practice) the p-value is (1 + #{X2_sim >= X2}) /
    (B + 1) over B multinomial samples under the null, as R's
    ``simulate.p.value = TRUE``. Cohen's w = sqrt(lambda / n) with lambda the
    median-unbiased noncentrality and its interval from the same inversion
    (:func:`noncentrality_estimate`; Smithson 2003), so w lies inside its interval;
    the plug-in sqrt(X2 / n) is in ``extra["cohens_w_plugin"]``.

    References
    ----------
    Cochran, W. G. (1954). Some methods for strengthening the common chi-square
    tests. Biometrics 10(4), 417-451. https://doi.org/10.2307/3001616
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences,
    2nd ed., ch. 7.

    Examples
    --------
    Mendel's pea counts (Mendel 1866: round/wrinkled by yellow/green) against the
    9:3:3:1 ratio; every expected count is large, so the chi-square p-value is used:

    >>> import math
    >>> from scipy import stats
    >>> counts = {"round yellow": 315, "round green": 108, "wrinkled yellow": 101, "wrinkled green": 32}
    >>> shares = {"round yellow": 9 / 16, "round green": 3 / 16, "wrinkled yellow": 3 / 16,
    ...           "wrinkled green": 1 / 16}
    >>> result = chi_square_goodness_of_fit(counts, shares)
    >>> round(result.statistic, 4), result.df, round(result.p_value, 4), result.p_method
    (0.47, 3.0, 0.9254, 'asymptotic')
    >>> result.effect.name, round(result.extra["cohens_w_plugin"], 4), result.effect.value
    ("Cohen's w", 0.0291, 0.0)
    >>> expected = [556 * s for s in shares.values()]
    >>> math.isclose(result.p_value, stats.chisquare(list(counts.values()), f_exp=expected).pvalue)
    True
    """
    confidence = check_confidence(confidence)
    labels = [str(k) for k in shares]
    missing = [str(k) for k in counts if str(k) not in labels]
    if missing:
        raise OptionError(coded(Refusal.SHARE_MISSING, label=missing[0]))
    if len(labels) < 2:
        raise NotEnoughDataError(coded(Skip.ONE_CATEGORY_GIVEN))
    by_label = {str(k): v for k, v in counts.items()}
    observed = np.array(
        [_as_count(by_label.get(lab, 0), Subject.COUNT_OF, lab) for lab in labels], dtype=float
    )
    expected_share = np.array([float(shares[k]) for k in shares], dtype=float)
    if not np.all(np.isfinite(expected_share)) or np.any(expected_share <= 0):
        raise OptionError(coded(Refusal.SHARES_NOT_POSITIVE))
    if abs(expected_share.sum() - 1.0) > 1e-6:
        raise OptionError(coded(Refusal.SHARES_SUM, total=float(expected_share.sum())))
    expected_share = expected_share / expected_share.sum()
    n = int(observed.sum())
    if n == 0:
        raise NotEnoughDataError(coded(Skip.EMPTY_TABLE))

    expected = n * expected_share
    x2 = float(_pearson_x2(observed, expected))
    df = len(labels) - 1
    notes: list[Coded] = []
    extra: dict[str, Any] = {
        "categories": labels,
        "observed": observed.astype(int).tolist(),
        "expected": expected.tolist(),
        "min_expected": float(expected.min()),
        "n_expected_below_5": int((expected < SMALL_EXPECTED).sum()),
    }
    n_small = extra["n_expected_below_5"]
    use_mc = n_small > 0 if monte_carlo == "auto" else bool(monte_carlo)
    if use_mc:
        monte_carlo_resamples = _check_resamples(monte_carlo_resamples)
        rng = np.random.default_rng(seed)
        sims = rng.multinomial(n, expected_share, size=monte_carlo_resamples)
        sim_x2 = _pearson_x2(sims.astype(float), expected)
        p_value, se = _monte_carlo_p(sim_x2, x2, monte_carlo_resamples)
        p_method = PMethod.MONTE_CARLO
        extra.update(monte_carlo_resamples=monte_carlo_resamples, monte_carlo_se=se, seed=seed)
        caveat(
            notes,
            coded(Note.MONTE_CARLO_P, n_small=Count(n_small), n_cells=len(labels), small=n_small > 0,
                  resamples=monte_carlo_resamples, se=se, margins=False),
        )
    else:
        p_value = float(stats.chi2.sf(x2, df))
        p_method = PMethod.ASYMPTOTIC

    observed_share = observed / n
    furthest = int(np.argmax(np.abs(observed_share - expected_share)))
    low, high = wilson_interval(int(observed[furthest]), n, confidence=confidence)
    estimate = Estimate(
        EstimateKind.SHARE_FURTHEST,
        value=float(observed_share[furthest]),
        ci_low=low,
        ci_high=high,
        level=str(labels[furthest]),
        reference=float(expected_share[furthest]),
    )
    nc_mid, nc_low, nc_high = noncentrality_estimate(x2, df, confidence=confidence)
    effect = Effect(
        EffectKind.COHENS_W,
        value=math.sqrt(nc_mid / n),
        ci_low=math.sqrt(nc_low / n),
        ci_high=math.sqrt(nc_high / n),
    )
    extra["cohens_w_plugin"] = math.sqrt(x2 / n)
    groups = [
        {
            "label": lab,
            "count": int(observed[i]),
            "share": float(observed_share[i]),
            "expected": float(expected[i]),
            "expected_share": float(expected_share[i]),
        }
        for i, lab in enumerate(labels)
    ]
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_CATEGORICAL,
        test=Test.CHI_SQUARE_GOODNESS_OF_FIT,
        statistic_name="chi-square",
        statistic=x2,
        df=float(df),
        p_value=float(p_value),
        p_method=p_method,
        confidence=confidence,
        n=n,
        estimate=estimate,
        effect=effect,
        groups=groups,
        notes=notes,
        against={lab: float(s) for lab, s in zip(labels, expected_share, strict=True)},
        extra=extra,
    )


# --------------------------------------------------------------------------- one share


def binomial_exact(
    successes: int,
    n: int,
    *,
    share: float,
    label: str,
    other_label: str | None = None,
    alternative: Alternative | str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Exact binomial test of one share against a target share.

    Parameters
    ----------
    successes : int
        Count of the level of interest (``label``).
    n : int
        Total count (both levels).
    share : float
        Target share under the null, strictly between 0 and 1.
    label : str
        The level counted as a success.
    other_label : str, optional
        The other level (for ``groups``); "other" if not given.
    alternative : {"two-sided", "greater", "less"}
        Direction of the alternative for the true share against ``share``.
    confidence : float
        Level for the intervals.

    Returns
    -------
    Result
        design Design.ONE_SAMPLE_CATEGORICAL, test Test.BINOMIAL_EXACT. ``estimate`` is
        the observed share with a Wilson interval; the Clopper-Pearson exact
        interval is in ``extra["clopper_pearson"]``; ``effect`` is Cohen's h
        against the target share.

    Notes
    -----
    The p-value is R's ``binom.test`` (two-sided: sum of probabilities of
    outcomes no more likely than the observed one). The Wilson interval is the
    main interval because it has coverage closer to nominal than the exact one
    (Brown, Cai and DasGupta 2001). Cohen's h = 2 asin(sqrt(p)) - 2
    asin(sqrt(p0)); its interval maps the Wilson limits through the same
    increasing function.

    References
    ----------
    Clopper, C. J. and Pearson, E. S. (1934). Biometrika 26(4), 404-413.
    https://doi.org/10.1093/biomet/26.4.404
    Brown, L. D., Cai, T. T. and DasGupta, A. (2001). Interval estimation for a
    binomial proportion. Statistical Science 16(2), 101-133.
    https://doi.org/10.1214/ss/1009213286
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences,
    2nd ed., ch. 6.

    Examples
    --------
    The plant-breeding counts of R's ``?binom.test`` example: 682 giant and 243
    dwarf plants against the Mendelian share 3/4 of giants:

    >>> import math
    >>> from scipy import stats
    >>> result = binomial_exact(682, 925, share=0.75, label="giant", other_label="dwarf")
    >>> round(result.p_value, 4), round(result.estimate.value, 4)
    (0.3825, 0.7373)
    >>> round(result.estimate.ci_low, 4), round(result.estimate.ci_high, 4)
    (0.708, 0.7646)
    >>> cp = result.extra["clopper_pearson"]
    >>> round(cp["ci_low"], 4), round(cp["ci_high"], 4)
    (0.7077, 0.7654)
    >>> math.isclose(result.p_value, stats.binomtest(682, 925, p=0.75).pvalue)
    True
    """
    confidence = check_confidence(confidence)
    alt = _alternative(alternative)
    n = _as_count(n, Subject.OBSERVATIONS)
    successes = _as_count(successes, Subject.COUNT_OF, label)
    if n == 0:
        raise NotEnoughDataError(coded(Skip.NO_OBSERVATIONS))
    if successes > n:
        raise OptionError(coded(Refusal.COUNT_ABOVE_TOTAL, label=label, count=successes, total=n))
    share = float(share)
    if not (0.0 < share < 1.0):
        raise OptionError(coded(Refusal.TARGET_SHARE_OPEN, value=share))
    test = stats.binomtest(successes, n, p=share, alternative=alt)
    exact = test.proportion_ci(confidence_level=confidence, method=PMethod.EXACT)
    phat = successes / n
    low, high = wilson_interval(successes, n, confidence=confidence, alternative=alt)

    def h(p: float) -> float:
        return 2 * math.asin(math.sqrt(p)) - 2 * math.asin(math.sqrt(share))

    other = other_label if other_label is not None else "other"
    groups = [
        {"label": str(label), "count": successes, "share": phat, "expected": n * share},
        {
            "label": str(other),
            "count": n - successes,
            "share": 1 - phat,
            "expected": n * (1 - share),
        },
    ]
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_CATEGORICAL,
        test=Test.BINOMIAL_EXACT,
        statistic_name="number of successes",
        statistic=float(successes),
        df=None,
        p_value=float(test.pvalue),
        p_method=PMethod.EXACT,
        alternative=alt,
        confidence=confidence,
        n=n,
        estimate=Estimate(EstimateKind.SHARE, value=phat, ci_low=low, ci_high=high, level=str(label)),
        effect=Effect(EffectKind.COHENS_H, value=h(phat), ci_low=h(low), ci_high=h(high)),
        groups=groups,
        against=share,
        extra={
            "clopper_pearson": {"ci_low": float(exact.low), "ci_high": float(exact.high)},
            "target_share": share,
        },
    )


# --------------------------------------------------------------------------- independence


def chi_square_independence(
    table: Any,
    row_labels: Sequence[str],
    col_labels: Sequence[str],
    *,
    correction: bool = False,
    monte_carlo: bool | str = "auto",
    seed: int = DEFAULT_SEED,
    resamples: int = DEFAULT_RESAMPLES,
    confidence: float = 0.95,
) -> Result:
    """Pearson chi-square test of independence for a table of counts.

    Parameters
    ----------
    table : array_like, shape (r, c)
        Counts; rows are the groups compared, columns the outcome categories.
    row_labels, col_labels : sequence of str
        One label per row and per column.
    correction : bool
        Yates' continuity correction for 2x2 tables. Off by default: the plain
        Pearson statistic is reported (as R ``chisq.test(tab, correct = FALSE)``).
    monte_carlo : bool or "auto"
        "auto" simulates the p-value for tables larger than 2x2 with small
        expected counts (see Notes).
    seed, resamples : int
        Seed and number of simulated tables for the Monte Carlo p-value.
    confidence : float
        Level for the intervals.

    Returns
    -------
    Result
        design Design.TWO_CATEGORICAL, test Test.CHI_SQUARE_INDEPENDENCE; ``effect`` is
        Cramer's V with a noncentrality-based interval; for 2x2 tables
        ``estimate`` is the difference in the share of the first column between
        the two rows (Newcombe interval) and ``extra["odds_ratio"]`` the sample
        odds ratio with Woolf's interval. ``extra`` also holds the observed and
        expected tables.

    Notes
    -----
    Small expected counts (Cochran 1954, common practice): more than 20% of
    cells below 5 or any below 1. For larger tables the p-value then comes from
    tables simulated with both margins fixed (Patefield's algorithm, via
    ``scipy.stats.random_table``), p = (1 + #{X2_sim >= X2}) / (B + 1) as R's
    ``simulate.p.value``. For a 2x2 table a note recommends Fisher's exact test.
    Cramer's V = sqrt(lambda / (n (min(r, c) - 1))) with lambda the median-unbiased
    noncentrality of the uncorrected X2, and its interval from the same inversion
    (:func:`noncentrality_estimate`; Smithson 2003), so V always lies inside it; the
    plug-in sqrt(X2 / (n (min(r, c) - 1))) is in ``extra["cramers_v_plugin"]``. Woolf's interval
    adds 0.5 to every cell when a cell is 0 (Haldane-Anscombe).

    References
    ----------
    Patefield, W. M. (1981). Algorithm AS 159. Applied Statistics 30(1), 91-97.
    https://doi.org/10.2307/2346669
    Woolf, B. (1955). On estimating the relation between blood group and
    disease. Annals of Human Genetics 19(4), 251-253.
    https://doi.org/10.1111/j.1469-1809.1955.tb01348.x
    Cramer, H. (1946). Mathematical Methods of Statistics, Princeton, p. 282.

    Examples
    --------
    Party identification by gender, from R's ``?chisq.test`` example (Agresti 2007,
    p. 39):

    >>> import math
    >>> from scipy import stats
    >>> table = [[762, 327, 468], [484, 239, 477]]
    >>> result = chi_square_independence(table, ["F", "M"], ["Democrat", "Independent", "Republican"])
    >>> round(result.statistic, 4), result.df, f"{result.p_value:.4g}"
    (30.0701, 2.0, '2.954e-07')
    >>> result.effect.name, round(result.effect.value, 4), round(result.extra["cramers_v_plugin"], 4)
    ("Cramer's V", 0.1027, 0.1044)
    >>> math.isclose(result.p_value, stats.chi2_contingency(table).pvalue)
    True

    A 2x2 table (invented counts) gives the difference in shares and the odds ratio:

    >>> table = [[12, 8], [5, 15]]
    >>> result = chi_square_independence(table, ["clinic A", "clinic B"], ["attended", "missed"])
    >>> round(result.statistic, 4), round(result.p_value, 4), round(result.estimate.value, 4)
    (5.0128, 0.0252, 0.35)
    >>> round(result.extra["odds_ratio"]["value"], 4)
    4.5
    >>> math.isclose(result.p_value, stats.chi2_contingency(table, correction=False).pvalue)
    True
    """
    confidence = check_confidence(confidence)
    counts = _count_table(table, row_labels, col_labels)
    n = int(counts.sum())
    nrow, ncol = counts.shape
    expected = _expected_counts(counts)
    x2_plain = float(_pearson_x2(counts.astype(float), expected))
    df = (nrow - 1) * (ncol - 1)
    is_2x2 = counts.shape == (2, 2)
    if correction and is_2x2:
        # Yates: move each count half a unit towards expected, never past it (as R).
        diff = np.abs(counts - expected)
        x2 = float((np.square(diff - np.minimum(0.5, diff)) / expected).sum())
    else:
        x2 = x2_plain

    n_cells = nrow * ncol
    n_small = int((expected < SMALL_EXPECTED).sum())
    small = n_small / n_cells > MAX_SHARE_SMALL or expected.min() < TINY_EXPECTED
    notes: list[Coded] = []
    extra: dict[str, Any] = {
        "observed": _labelled(counts, row_labels, col_labels),
        "expected": _labelled(expected, row_labels, col_labels),
        "min_expected": float(expected.min()),
        "n_expected_below_5": n_small,
        "share_expected_below_5": n_small / n_cells,
        "continuity_correction": bool(correction and is_2x2),
    }
    use_mc = (small and not is_2x2) if monte_carlo == "auto" else bool(monte_carlo)
    if use_mc:
        resamples = _check_resamples(resamples)
        sims = stats.random_table(counts.sum(axis=1), counts.sum(axis=0), seed=seed).rvs(
            size=resamples
        )
        sim_x2 = _pearson_x2(sims.astype(float), expected)
        p_value, se = _monte_carlo_p(sim_x2, x2, resamples)
        p_method = PMethod.MONTE_CARLO
        extra.update(monte_carlo_resamples=resamples, monte_carlo_se=se, seed=seed)
        caveat(
            notes,
            coded(Note.MONTE_CARLO_P, n_small=Count(n_small), n_cells=n_cells, small=small,
                  resamples=resamples, se=se, margins=True),
        )
    else:
        p_value = float(stats.chi2.sf(x2, df))
        p_method = (
            PMethod.NORMAL_APPROXIMATION_CONTINUITY if extra["continuity_correction"] else PMethod.ASYMPTOTIC
        )
        if small:
            caveat(
                notes,
                coded(Note.EXPECTED_BELOW_5, n_small=Count(n_small), n_cells=n_cells,
                      smallest=Derived(expected.min()), two_by_two=is_2x2),
            )

    min_dim = min(nrow, ncol) - 1
    nc_mid, nc_low, nc_high = noncentrality_estimate(x2_plain, df, confidence=confidence)
    effect = Effect(
        EffectKind.CRAMERS_V,
        value=min(1.0, math.sqrt(nc_mid / (n * min_dim))),
        ci_low=min(1.0, math.sqrt(nc_low / (n * min_dim))),
        ci_high=min(1.0, math.sqrt(nc_high / (n * min_dim))),
    )
    extra["cramers_v_plugin"] = math.sqrt(x2_plain / (n * min_dim))
    estimate = None
    if is_2x2:
        estimate = _difference_of_shares(counts, row_labels, col_labels, confidence=confidence)
        extra[EffectKind.ODDS_RATIO.value] = _woolf_odds_ratio(counts, confidence, col_labels, row_labels)

    return Result(
        outcome="",
        exposure=None,
        design=Design.TWO_CATEGORICAL,
        test=Test.CHI_SQUARE_INDEPENDENCE,
        statistic_name="chi-square",
        statistic=x2,
        df=float(df),
        p_value=float(p_value),
        p_method=p_method,
        confidence=confidence,
        n=n,
        estimate=estimate,
        effect=effect,
        groups=_row_groups(counts, row_labels, col_labels),
        notes=notes,
        extra=extra,
    )


def _woolf_odds_ratio(
    counts: np.ndarray, confidence: float, col_labels: Sequence[str], row_labels: Sequence[str]
) -> dict[str, Any]:
    """Sample odds ratio (a d)/(b c) with Woolf's log interval (0.5 added if a cell is 0).

    A record of numbers and identifiers for ``Result.extra``: the odds of ``level``
    (the first column) in ``levels`` (first row against second), the interval method
    and whether 0.5 was added to every cell.
    """
    cells = counts.astype(float)
    adjusted = bool((cells == 0).any())
    if adjusted:
        cells = cells + 0.5
    a, b, c, d = cells.ravel()
    log_or = math.log(a * d / (b * c))
    se = math.sqrt(1 / a + 1 / b + 1 / c + 1 / d)
    z = _z(confidence, "two-sided")
    return {
        "level": str(col_labels[0]),
        "levels": [str(row_labels[0]), str(row_labels[1])],
        "value": math.exp(log_or),
        "ci_low": math.exp(log_or - z * se),
        "ci_high": math.exp(log_or + z * se),
        "method": "woolf_logit",
        "half_added": adjusted,
    }


# --------------------------------------------------------------------------- Fisher


def fisher_exact(
    table2x2: Any,
    row_labels: Sequence[str],
    col_labels: Sequence[str],
    *,
    alternative: Alternative | str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Fisher's exact test for a 2x2 table.

    Parameters
    ----------
    table2x2 : array_like, shape (2, 2)
        Counts; rows are the two groups, columns the two outcome categories.
    row_labels, col_labels : sequence of str
        Labels of the two rows and two columns.
    alternative : {"two-sided", "greater", "less"}
        Alternative for the odds ratio against 1.
    confidence : float
        Level for the intervals.

    Returns
    -------
    Result
        design Design.TWO_CATEGORICAL, test Test.FISHER_EXACT; ``effect`` is the
        conditional maximum-likelihood odds ratio with its exact interval;
        ``estimate`` is the difference in the share of the first column between
        the rows, with Newcombe's interval.

    Notes
    -----
    The two-sided p-value sums the probabilities of all tables with the same
    margins that are no more likely than the observed one, as R ``fisher.test``.
    The odds ratio and its interval are R's (conditional MLE, exact limits).
    Larger tables are refused: use ``chi_square_independence`` (with a Monte
    Carlo p-value when counts are small).

    References
    ----------
    Fisher, R. A. (1935). The logic of inductive inference. JRSS 98(1), 39-82.
    https://doi.org/10.2307/2342435
    Agresti, A. (2013). Categorical Data Analysis, 3rd ed., Wiley, sec. 3.5 and 16.6.

    Examples
    --------
    The tea-tasting experiment of Fisher's The Design of Experiments (1935), as in
    R's ``?fisher.test`` example: did the lady guess better than chance?

    >>> import math
    >>> from scipy import stats
    >>> table = [[3, 1], [1, 3]]
    >>> result = fisher_exact(table, ["milk first", "tea first"], ["said milk", "said tea"],
    ...                       alternative="greater")
    >>> round(result.p_value, 4), round(result.effect.value, 4), round(result.effect.ci_low, 4)
    (0.2429, 6.4083, 0.3136)
    >>> math.isclose(result.p_value, stats.fisher_exact(table, alternative="greater").pvalue)
    True
    """
    confidence = check_confidence(confidence)
    alt = _alternative(alternative)
    counts = _count_table(table2x2, row_labels, col_labels)
    if counts.shape != (2, 2):
        raise OptionError(coded(Refusal.FISHER_TWO_BY_TWO))
    p_value = float(stats.fisher_exact(counts, alternative=alt).pvalue)
    odds = contingency.odds_ratio(counts, kind="conditional")
    ci = odds.confidence_interval(confidence_level=confidence, alternative=alt)
    expected = _expected_counts(counts)
    return Result(
        outcome="",
        exposure=None,
        design=Design.TWO_CATEGORICAL,
        test=Test.FISHER_EXACT,
        statistic_name=None,
        statistic=None,
        df=None,
        p_value=p_value,
        p_method=PMethod.EXACT,
        alternative=alt,
        confidence=confidence,
        n=int(counts.sum()),
        estimate=_difference_of_shares(
            counts, row_labels, col_labels, confidence=confidence, alternative=alt
        ),
        effect=Effect(
            EffectKind.ODDS_RATIO,
            value=float(odds.statistic),
            ci_low=float(ci.low),
            ci_high=float(ci.high),
            levels=(str(row_labels[0]), str(row_labels[1])),
            level=str(col_labels[0]),
        ),
        groups=_row_groups(counts, row_labels, col_labels),
        extra={
            "observed": _labelled(counts, row_labels, col_labels),
            "expected": _labelled(expected, row_labels, col_labels),
            "min_expected": float(expected.min()),
        },
    )


# --------------------------------------------------------------------------- McNemar


def mcnemar(
    table2x2: Any,
    labels: Sequence[str],
    *,
    exact: bool | str = "auto",
    alternative: Alternative | str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """McNemar's test for a change in a two-level outcome measured twice on the same units.

    Parameters
    ----------
    table2x2 : array_like, shape (2, 2)
        Paired counts: rows the first measurement, columns the second, both in
        the order of ``labels``. Off-diagonal cells are the discordant pairs:
        b = first ``labels[0]`` then ``labels[1]``; c = the reverse.
    labels : sequence of str
        The two levels; ``labels[0]`` is the level whose share is compared.
    exact : bool or "auto"
        "auto" uses the exact binomial version when b + c < 25 (common practice).
    alternative : {"two-sided", "greater", "less"}
        "greater": the share of ``labels[0]`` is higher at the first
        measurement. One-sided alternatives always use the exact version.
    confidence : float
        Level for the intervals.

    Returns
    -------
    Result
        design Design.PAIRED_CATEGORICAL, test Test.MCNEMAR. ``estimate``: first share
        minus second share of ``labels[0]`` = (b - c)/n with Newcombe's paired
        interval (two-sided); ``effect``: the odds ratio of discordant pairs b/c
        with an exact interval from the Clopper-Pearson limits for b/(b + c).

    Notes
    -----
    Chi-square version: (|b - c| - 1)^2 / (b + c) on 1 df, with continuity
    correction, as R ``mcnemar.test`` default. Exact version: b is
    Binomial(b + c, 1/2) under the null. The odds-ratio interval transforms the
    exact binomial limits pi to pi / (1 - pi) (Agresti 2013, ch. 11).

    References
    ----------
    McNemar, Q. (1947). Note on the sampling error of the difference between
    correlated proportions or percentages. Psychometrika 12(2), 153-157.
    https://doi.org/10.1007/BF02295996

    Examples
    --------
    Approval of the president's performance in two surveys of the same 1600 people,
    from R's ``?mcnemar.test`` example (Agresti 1990, p. 350); 236 discordant pairs,
    so the chi-square version is used:

    >>> table = [[794, 150], [86, 570]]
    >>> result = mcnemar(table, ["approve", "disapprove"])
    >>> result.statistic_name, round(result.statistic, 4), f"{result.p_value:.4g}"
    ('chi-square', 16.8178, '4.115e-05')
    >>> round(result.estimate.value, 4), round(result.effect.value, 4)
    (0.04, 1.7442)

    SciPy has no McNemar test; the exact version is a binomial test of b among the
    b + c discordant pairs (invented counts, 11 discordant pairs):

    >>> import math
    >>> from scipy import stats
    >>> result = mcnemar([[20, 9], [2, 19]], ["yes", "no"])
    >>> result.p_method, round(result.p_value, 4)
    ('exact', 0.0654)
    >>> math.isclose(result.p_value, stats.binomtest(9, 11, p=0.5).pvalue)
    True
    """
    confidence = check_confidence(confidence)
    alt = _alternative(alternative)
    if len(labels) != 2:
        raise OptionError(coded(Refusal.MCNEMAR_TWO_LEVELS))
    arr = np.asarray(table2x2, dtype=object)
    if arr.shape != (2, 2):
        raise OptionError(coded(Refusal.MCNEMAR_TWO_BY_TWO))
    counts = np.array([[_as_count(v, Subject.TABLE_CELL) for v in row] for row in arr], dtype=np.int64)
    n = int(counts.sum())
    if n == 0:
        raise NotEnoughDataError(coded(Skip.NO_COMPLETE_PAIRS))
    b, c = int(counts[0, 1]), int(counts[1, 0])
    discordant = b + c
    if discordant == 0:
        raise NotEnoughDataError(coded(Skip.NO_DISCORDANT_PAIRS))
    use_exact = (discordant < MCNEMAR_EXACT_BELOW) if exact == "auto" else bool(exact)
    if alt != "two-sided":
        use_exact = True
    notes: list[Coded] = []
    binom = stats.binomtest(b, discordant, p=0.5, alternative=alt)
    if use_exact:
        statistic_name, statistic, df = "discordant pairs b", float(b), None
        p_value, p_method = float(binom.pvalue), PMethod.EXACT
    else:
        statistic_name = "chi-square"
        statistic = (abs(b - c) - 1.0) ** 2 / discordant
        df = 1.0
        p_value = float(stats.chi2.sf(statistic, 1))
        p_method = PMethod.NORMAL_APPROXIMATION_CONTINUITY

    low, high = newcombe_paired_difference_interval(counts, confidence=confidence)
    cp = stats.binomtest(b, discordant, p=0.5).proportion_ci(
        confidence_level=confidence, method=PMethod.EXACT
    )

    def odds(pi: float) -> float | None:
        return None if pi >= 1.0 else pi / (1.0 - pi)

    ratio = None if c == 0 else b / c
    if c == 0:
        caveat(notes, coded(Note.ONE_WAY_DISCORDANT, n=Count(b)))
    excludes_zero = low > 0.0 or high < 0.0
    if alt == "two-sided" and excludes_zero != (p_value < 1.0 - confidence):
        # Newcombe's interval and McNemar's p are different methods; near the edge they
        # can disagree (e.g. Cavo et al. 2012: exact p = 0.052, interval -0.119 to -0.005).
        notes.append(coded(Note.INTERVAL_DISAGREES_WITH_P, low=low, high=high, p=p_value,
                           alpha=1.0 - confidence, excludes_zero=excludes_zero))
    first, second = int(counts[0].sum()) / n, int(counts[:, 0].sum()) / n
    return Result(
        outcome="",
        exposure=None,
        design=Design.PAIRED_CATEGORICAL,
        test=Test.MCNEMAR,
        statistic_name=statistic_name,
        statistic=statistic,
        df=df,
        p_value=p_value,
        p_method=p_method,
        alternative=alt,
        confidence=confidence,
        n=n,
        estimate=Estimate(
            EstimateKind.PAIRED_SHARE_DIFFERENCE,
            value=(b - c) / n,
            ci_low=low,
            ci_high=high,
            level=str(labels[0]),
        ),
        effect=Effect(
            EffectKind.DISCORDANT_ODDS_RATIO,
            value=ratio,
            ci_low=odds(float(cp.low)),
            ci_high=odds(float(cp.high)),
        ),
        groups=[
            {"label": f"{labels[0]} (first)", "count": int(counts[0].sum()), "share": first},
            {"label": f"{labels[0]} (second)", "count": int(counts[:, 0].sum()), "share": second},
        ],
        notes=notes,
        extra={
            "observed": _labelled(counts, labels, labels),
            "discordant_b": b,
            "discordant_c": c,
            "exact_below": MCNEMAR_EXACT_BELOW,  # the exact binomial version below this many discordant pairs
        },
    )
