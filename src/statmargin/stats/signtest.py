"""The sign test: is the median above or below a stated value? (also for paired differences).

The sign test counts values above and below the stated value and compares the split
with a fair coin (exact binomial). It needs no symmetry, unlike the signed-rank test,
so it tests the median of a skewed measure; it is also well defined when every value
is the same (all on one side), where a t-test has no spread to work with.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import replace
from typing import Any

import numpy as np
from scipy import stats

from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats.aggregated import pairs_level
from statmargin.stats.weighted import weighted_median
from statmargin.stats.weighted_select import collapse
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Skip, coded


def _binomial_p(above: np.ndarray, n: np.ndarray, alternative: str) -> np.ndarray:
    """Exact binomial p of ``above`` successes in ``n`` at 1/2 (1 where n = 0).

    Two-sided: twice the smaller tail, capped at 1 (for p = 1/2 this is SciPy's
    ``binomtest`` p, whose two-sided rule sums the outcomes no more likely than the
    observed one).
    """
    upper = stats.binom.sf(above - 1, n, 0.5)  # P(X >= above)
    lower = stats.binom.cdf(above, n, 0.5)  # P(X <= above)
    if alternative == "greater":
        p = upper
    elif alternative == "less":
        p = lower
    else:
        p = np.minimum(1.0, 2.0 * np.minimum(upper, lower))
    return np.where(n > 0, p, 1.0)


def median_interval(values: np.ndarray, alternative: str, confidence: float,
                    counts: np.ndarray | None = None) -> tuple[float, float]:
    """Every value m that the sign test of ``values`` against m does not reject (its hull).

    Parameters
    ----------
    values : numpy.ndarray
        Finite values.
    alternative, confidence
        Sidedness and level, as for the test.
    counts : numpy.ndarray, optional
        Records each value stands for (a count column); 1 each when not given.

    Returns
    -------
    float, float
        Bounds; ``-inf``/``inf`` when no value is rejected on that side (too few values
        for the level, or a one-sided question).

    Notes
    -----
    Candidates are every distinct value and every gap between neighbours; the counts
    below and above a candidate come from the sorted values, so memory is linear.
    Values equal to a candidate are left out of its test, as in the test itself. With
    no ties this is the classic distribution-free interval [x_(k), x_(n-k+1)] from
    binomial order statistics (Hollander, Wolfe & Chicken 2014, Nonparametric
    Statistical Methods, 3rd ed., sec. 3.6), whose coverage is at least the level for
    any continuous distribution; its ends are reported as the closed order statistics.

    Examples
    --------
    Ten invented values: the 95% interval is [x_(2), x_(9)], as P(Bin(10, 1/2) <= 1) =
    0.0107 <= 0.025 < P(Bin(10, 1/2) <= 2) = 0.0547:

    >>> x = np.array([3.1, 4.0, 4.4, 5.2, 5.9, 6.3, 7.0, 8.8, 9.5, 12.0])
    >>> median_interval(x, "two-sided", 0.95)
    (4.0, 9.5)
    """
    alpha = 1.0 - confidence
    if counts is None:
        distinct, counts = np.unique(values, return_counts=True)
    else:
        distinct, counts = collapse(values, counts)
    n = int(counts.sum())
    through = np.cumsum(counts)  # values <= distinct[i]
    below_at = through - counts  # values < distinct[i]
    above_at = n - through  # values > distinct[i]
    # gaps: just above distinct[i] (and below distinct[i + 1]); gap -1 is below the minimum
    below_gap = through
    above_gap = n - through
    accept_at = _binomial_p(above_at, above_at + below_at, alternative) >= alpha - 1e-12
    accept_gap = _binomial_p(above_gap, above_gap + below_gap, alternative) >= alpha - 1e-12
    below_min_accepted = bool(_binomial_p(np.array([n]), np.array([n]), alternative)[0] >= alpha - 1e-12)
    if below_min_accepted:
        low = -math.inf
    else:
        points = np.flatnonzero(accept_at | accept_gap)
        if points.size == 0:  # cannot happen for a sign test with a median inside the data
            return _median(distinct, counts), _median(distinct, counts)
        low = float(distinct[points[0]])  # a gap's infimum is the value just below it
    if accept_gap[-1]:
        high = math.inf
    else:
        points_at = np.flatnonzero(accept_at)
        points_gap = np.flatnonzero(accept_gap[:-1])
        candidates = []
        if points_at.size:
            candidates.append(float(distinct[points_at[-1]]))
        if points_gap.size:
            candidates.append(float(distinct[points_gap[-1] + 1]))  # a gap's supremum
        high = max(candidates) if candidates else _median(distinct, counts)
    return low, high


def widest_median_gap(estimate: Estimate, groups: Mapping[str, tuple[np.ndarray, np.ndarray | None]],
                      confidence: float) -> Estimate:
    """The widest gap between group medians with an interval that holds for all pairs together.

    Parameters
    ----------
    estimate : Estimate
        The largest median gap, its ``levels`` (highest, lowest) naming the two groups.
    groups : dict
        Each group's values and counts (None: one record each), by label.
    confidence : float
        The level the interval holds at for all k(k-1)/2 pairs together.

    Returns
    -------
    Estimate
        The same gap with [L_high - U_low, U_high - L_low], from each median's
        distribution-free interval (:func:`median_interval`) at level 1 - a/2, where a =
        (1 - confidence) / (k(k-1)/2): both cover with probability at least 1 - a, so the
        difference interval covers the pair's median difference with at least that, and
        all pairs together at least ``confidence`` (Bonferroni, as the widest pair is
        picked after looking). Conservative; no assumption on the shape.

    Examples
    --------
    >>> a, b = np.arange(1.0, 21.0), np.arange(11.0, 31.0)
    >>> gap = Estimate(EstimateKind.LARGEST_MEDIAN_GAP, 10.0, levels=("b", "a"))
    >>> out = widest_median_gap(gap, {"a": (a, None), "b": (b, None), "c": (a, None)}, 0.95)
    >>> out.ci_low <= 10.0 <= out.ci_high
    True
    """
    if len(estimate.levels) != 2 or estimate.levels[0] == estimate.levels[1]:
        return estimate
    level = 0.5 + pairs_level(confidence, len(groups)) / 2.0  # each median at 1 - a/2
    (high_values, high_counts), (low_values, low_counts) = (groups[label] for label in estimate.levels)
    high_low, high_high = median_interval(high_values, "two-sided", level, high_counts)
    low_low, low_high = median_interval(low_values, "two-sided", level, low_counts)
    low, high = high_low - low_high, high_high - low_low
    if not (math.isfinite(low) and math.isfinite(high)):
        return estimate
    return replace(estimate, ci_low=low, ci_high=high)


def _median(values: np.ndarray, counts: np.ndarray | None) -> float:
    """``np.median`` of the records (each value standing for ``counts`` records when given)."""
    return float(np.median(values)) if counts is None else weighted_median(values, counts)


def sign_result(values: np.ndarray, mu: float, alternative: str, confidence: float, what: str,
                counts: np.ndarray | None = None) -> Result:
    """The sign test of ``values`` against ``mu`` with the median and the share above.

    ``counts`` are the records each value stands for (a count column); the result is
    that of the repeated records.
    """
    weights = np.ones(values.size, dtype=np.int64) if counts is None else counts
    total = int(weights.sum())
    above = int(weights[values > mu].sum())
    below = int(weights[values < mu].sum())
    ties = total - above - below
    if above + below == 0:
        raise common.NotEnoughDataError(coded(Skip.ALL_EQUAL_TARGET, what=what, value=float(mu)))
    test = stats.binomtest(above, above + below, 0.5, alternative=alternative)
    share = test.proportion_ci(confidence_level=confidence, method=PMethod.EXACT)
    notes: list[Coded] = []
    if ties:
        notes.append(coded(Note.SIGN_TIES_DROPPED, n=Count(ties), value=float(mu)))
    median = _median(values, counts)
    low, high = median_interval(values, alternative, confidence, counts)
    low, high = common.open_at_null(low, high, float(mu), float(test.pvalue) < 1.0 - confidence)
    if math.isinf(low) and math.isinf(high):
        common.caveat(notes, coded(Note.MEDIAN_INTERVAL_OPEN, n=Count(total), confidence=confidence))
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_CONTINUOUS,
        test=Test.SIGN_TEST,
        statistic_name="values above",
        statistic=float(above),
        df=None,
        p_value=float(test.pvalue),
        p_method=PMethod.EXACT,
        alternative=alternative,
        confidence=confidence,
        n=total,
        estimate=Estimate(EstimateKind.MEDIAN, median, min(low, median), max(high, median), reference=float(mu)),
        effect=Effect(EffectKind.SHARE_ABOVE, above / (above + below), float(share.low), float(share.high)),
        notes=notes,
        extra={"above": above, "below": below, "equal": ties},
    )


def sign_test(x: Any, *, mu: float = 0.0, alternative: str = "two-sided", confidence: float = 0.95) -> Result:
    """Sign test of the median of ``x`` against ``mu``, with the median's order-statistic interval.

    Parameters
    ----------
    x : array_like
        Outcome values (NaN dropped and counted in ``n_excluded``).
    mu : float
        The stated value.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the median is above ``mu`` (more values above than below).
    confidence : float
        Level of the intervals.

    Returns
    -------
    Result
        Statistic: the number of values above ``mu``; exact binomial p among the values
        not equal to ``mu``. Estimate: the sample median with the distribution-free
        interval of :func:`median_interval` (every m the test does not reject). Effect:
        the share of values above ``mu`` among those not equal to it, with the
        Clopper-Pearson interval (the inversion of the same binomial test, so it
        excludes 1/2 exactly when p < 1 - confidence).

    Notes
    -----
    Assumes independent values; nothing about their shape. Values equal to ``mu`` are
    left out of the test (the usual convention; a note counts them). When every value
    is the same and differs from ``mu`` the test is still exact: n values all on one
    side have two-sided p = 2 / 2^n.

    References
    ----------
    Dixon, W. J., & Mood, A. M. (1946). The statistical sign test. JASA
    41(236):557-566. doi:10.1080/01621459.1946.10501898
    Clopper, C. J., & Pearson, E. S. (1934). The use of confidence or fiducial limits
    illustrated in the case of the binomial. Biometrika 26(4):404-413.
    doi:10.1093/biomet/26.4.404

    Examples
    --------
    Twelve invented waiting times (days) against a target of 20: 3 above, 9 below.

    >>> import math
    >>> from scipy import stats
    >>> waits = [5, 8, 9, 11, 12, 14, 15, 17, 19, 26, 48, 90]
    >>> result = sign_test(waits, mu=20)
    >>> result.statistic, round(result.p_value, 4), result.estimate.value
    (3.0, 0.146, 14.5)
    >>> math.isclose(result.p_value, stats.binomtest(3, 12, 0.5).pvalue)
    True
    >>> result.estimate.ci_low, result.estimate.ci_high
    (9.0, 26.0)

    A constant column against a different value is still tested:

    >>> result = sign_test([12.5] * 10, mu=10)
    >>> round(result.p_value, 6), (result.estimate.ci_low, result.estimate.ci_high)
    (0.001953, (12.5, 12.5))
    """
    common.check_options(alternative, confidence)
    values, dropped = common.clean(x)
    common.require_count(values, 1, "the outcome")
    result = sign_result(values, float(mu), alternative, confidence, "the outcome")
    result.n_excluded = dropped
    result.groups = [common.describe("all", values)]
    result.against = float(mu)
    return result


def sign_test_paired(
    x1: Any,
    x2: Any,
    *,
    labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Sign test of paired differences x1 - x2 against 0, with the median difference.

    Parameters
    ----------
    x1, x2 : array_like
        First and second measurement of each unit, aligned by position (pairs with a
        missing value dropped).
    labels : tuple of str
        Names of the two measurements.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: first tends to exceed second.
    confidence : float
        Level of the intervals.

    Returns
    -------
    Result
        As :func:`sign_test` on the differences: statistic the number of pairs with
        first > second; estimate the median difference with its interval; effect the
        share of pairs with first > second among pairs that differ.

    Notes
    -----
    Needs only that the pairs are independent. It fits ordered categories (only the
    direction of each change is used) and pairs whose differences are all equal.

    References
    ----------
    Dixon, W. J., & Mood, A. M. (1946). The statistical sign test. JASA
    41(236):557-566. doi:10.1080/01621459.1946.10501898

    Examples
    --------
    Every one of eight invented pairs went up by 2.5 (first - second = -2.5):

    >>> import math
    >>> from scipy import stats
    >>> before = [10, 11, 12, 9, 10, 13, 8, 12]
    >>> after = [b + 2.5 for b in before]
    >>> result = sign_test_paired(before, after, labels=("before", "after"))
    >>> result.statistic, round(result.p_value, 6), result.estimate.value
    (0.0, 0.007812, -2.5)
    >>> math.isclose(result.p_value, stats.binomtest(0, 8, 0.5).pvalue)
    True
    """
    common.check_options(alternative, confidence)
    first, second = common.labels_pair(labels)
    a, b, dropped = common.clean_pairs(x1, x2, "the paired measurements")
    result = paired_sign_result(a, b, (first, second), alternative, confidence)
    result.n_excluded = dropped
    result.groups = [common.describe(first, a), common.describe(second, b),
                     common.describe(f"{first} - {second}", a - b)]
    return result


def paired_sign_result(a: np.ndarray, b: np.ndarray, labels: tuple[str, str], alternative: str, confidence: float,
                       counts: np.ndarray | None = None) -> Result:
    """The sign test of the complete pairs ``a``, ``b`` (each pair standing for ``counts`` records when given)."""
    first, second = labels
    n = int(a.size if counts is None else counts.sum())
    if n < 1:
        raise common.NotEnoughDataError(coded(Skip.TOO_FEW_PAIRS, n=Count(n), minimum=1, first=first, second=second))
    differences = a - b
    if np.all(differences == 0):
        raise common.NotEnoughDataError(coded(Skip.ALL_DIFFERENCES_ZERO, first=first, second=second))
    result = sign_result(differences, 0.0, alternative, confidence, f"the differences {first} - {second}", counts)
    assert result.estimate is not None
    result.design = Design.PAIRED_CONTINUOUS
    result.statistic_name = "pairs above"
    result.estimate = Estimate(EstimateKind.PAIRED_MEDIAN_DIFFERENCE, result.estimate.value,
                               result.estimate.ci_low, result.estimate.ci_high, levels=(first, second))
    return result
