"""Follow-up comparisons after a test of three or more groups, or of a larger table.

Pairs come in R's order: for levels g1, g2, g3 the pairs are (g2, g1), (g3, g1),
(g3, g2), and each difference is the later level minus the earlier one, as R's
``TukeyHSD`` and ``pairwise.wilcox.test`` print them. Every function returns a
list of ``statmargin.results.Followup``.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator, Mapping, Sequence
from typing import Any, Protocol, TypeVar

import numpy as np
from scipy import optimize, stats

from statmargin.errors import NotEnoughDataError
from statmargin.results import Estimate, Followup, Result
from statmargin.stats._common import (
    SortedRecords,
    accurate_mean,
    check_confidence,
    clean,
    median_pairwise_difference,
    open_at_null,
    sum_of_squares,
    tie_counts,
)
from statmargin.stats.adjust import adjust_p, matched_levels
from statmargin.stats.categorical import _count_table
from statmargin.stats.studentized_range import studentized_range_ppf, studentized_range_sf
from statmargin.vocabulary import AdjustMethod, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Count, Skip, coded

T = TypeVar("T")
DEFAULT_ALPHA = 0.05  # level for flags (common practice), as Settings.alpha
RESIDUAL_FLAG = 2.0  # |adjusted residual| above this is flagged (Agresti, common practice)


def _clean_groups(groups: Mapping[str, Any], minimum: int = 2) -> list[tuple[str, np.ndarray]]:
    """Labels and finite values per group; refuse fewer than two groups or tiny groups."""
    cleaned = []
    for label, values in groups.items():
        kept, _ = clean(values, f"group '{label}'")
        if kept.size < minimum:
            raise NotEnoughDataError(
                coded(Skip.PAIRWISE_TOO_FEW, label=str(label), n=Count(kept.size), minimum=minimum)
            )
        cleaned.append((str(label), kept))
    if len(cleaned) < 2:
        raise NotEnoughDataError(coded(Skip.PAIRWISE_ONE_GROUP))
    return cleaned


def _pairs(items: Sequence[T]) -> Iterator[tuple[T, T]]:
    """(later, earlier) pairs in R's order."""
    for i in range(len(items)):
        for j in range(i + 1, len(items)):
            yield items[j], items[i]


def _interval_followup(
    test: Test,
    a: str,
    b: str,
    diff: float,
    half_width: float,
    p_adj: float,
    statistic: float,
    alpha: float,
) -> Followup:
    """A difference in means with its simultaneous interval and family-wise p (no unadjusted p)."""
    return Followup(
        test=test,
        levels=(a, b),
        estimate=Estimate(
            EstimateKind.MEAN_DIFFERENCE,
            levels=(a, b),
            value=diff,
            ci_low=diff - half_width,
            ci_high=diff + half_width,
        ),
        p_value=None,
        p_adjusted=p_adj,
        statistic=statistic,
        flagged=p_adj < alpha,
    )


def _adjusted_followups(
    test: Test,
    kind: EstimateKind,
    rows: Sequence[tuple[str, str, float, float, float | None]],
    adjust: AdjustMethod | str,
    alpha: float,
    intervals: list[tuple[float, float]] | None = None,
) -> list[Followup]:
    """Followups from (later, earlier, estimate, statistic, p) rows, p adjusted over the rows.

    ``intervals`` gives each row's (low, high) confidence bounds when there are any.
    """
    adjusted = adjust_p([r[4] for r in rows], adjust)
    bounds = intervals if intervals is not None else [(None, None)] * len(rows)
    return [
        Followup(
            test=test,
            levels=(a, b),
            estimate=Estimate(kind, value=value, ci_low=low, ci_high=high, levels=(a, b)),
            p_value=p,
            p_adjusted=p_adj,
            statistic=statistic,
            flagged=p_adj is not None and p_adj < alpha,
        )
        for (a, b, value, statistic, p), p_adj, (low, high) in zip(rows, adjusted, bounds, strict=True)
    ]


def tukey_hsd(
    groups: Mapping[str, Any], *, confidence: float = 0.95, alpha: float = DEFAULT_ALPHA
) -> list[Followup]:
    """Tukey's honestly significant difference for all pairs of group means.

    Parameters
    ----------
    groups : mapping of str to array_like
        Values per group, in display order. Non-finite values are dropped.
    confidence : float
        Family-wise confidence level of the intervals.
    alpha : float
        Level for ``flagged``.

    Returns
    -------
    list of Followup
        test Test.TUKEY_HSD; ``estimate`` is the difference in means (later -
        earlier level) with its simultaneous interval; ``statistic`` is the
        studentized range q; ``p_adjusted`` is the family-wise p-value;
        ``p_value`` is None because Tukey's method has no per-pair unadjusted
        p-value.

    Notes
    -----
    Tukey-Kramer form for unequal group sizes: se = sqrt(MSE/2 (1/n_a + 1/n_b)),
    q = |diff| / se on k groups and N - k df; intervals diff +- q_crit se. This
    is R's ``TukeyHSD(aov(y ~ g))``. Assumes equal variances and roughly normal
    residuals.

    References
    ----------
    Tukey, J. W. (1949). Comparing individual means in the analysis of variance.
    Biometrics 5(2), 99-114. https://doi.org/10.2307/3001913
    Kramer, C. Y. (1956). Extension of multiple range tests to group means with
    unequal numbers of replications. Biometrics 12(3), 307-310.
    https://doi.org/10.2307/3001469

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import math
    >>> from scipy import stats
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> pairs = tukey_hsd(groups)
    >>> for pair in pairs:
    ...     print(pair.levels, round(pair.estimate.value, 4), round(pair.p_adjusted, 4), pair.flagged)
    ('centre', 'north') 1.38 0.0082 True
    ('south', 'north') 0.6 0.2838 False
    ('south', 'centre') -0.78 0.1364 False
    >>> round(pairs[0].estimate.ci_low, 4), round(pairs[0].estimate.ci_high, 4)
    (0.3785, 2.3815)

    SciPy's ``tukey_hsd`` indexes groups by position (1 = centre, 0 = north):

    >>> check = stats.tukey_hsd(*groups.values())
    >>> math.isclose(pairs[0].p_adjusted, check.pvalue[1, 0])
    True
    >>> math.isclose(pairs[0].estimate.ci_low, check.confidence_interval().low[1, 0])
    True
    """
    confidence = check_confidence(confidence)
    return tukey_hsd_of_summaries(_summaries(_clean_groups(groups)), confidence=confidence, alpha=alpha)


Summary = tuple[str, float, float, float]  # label, mean, sum of squared deviations, n


def _summaries(items: list[tuple[str, np.ndarray]]) -> list[Summary]:
    """Label, mean, sum of squares and size of each group's values."""
    out = []
    for label, values in items:
        mean = accurate_mean(values)
        out.append((label, mean, sum_of_squares(values, mean), float(values.size)))
    return out


def tukey_hsd_of_summaries(summaries: list[Summary], *, confidence: float = 0.95,
                           alpha: float = DEFAULT_ALPHA) -> list[Followup]:
    """:func:`tukey_hsd` from each group's (label, mean, sum of squares, n)."""
    k = len(summaries)
    df = sum(n for *_, n in summaries) - k
    mse = sum(ss for _, _, ss, _ in summaries) / df
    if mse <= 0.0:
        raise NotEnoughDataError(coded(Skip.NO_WITHIN_SPREAD))
    q_crit = studentized_range_ppf(confidence, k, df)
    out = []
    for (a, mean_a, _, n_a), (b, mean_b, _, n_b) in _pairs(summaries):
        diff = mean_a - mean_b
        se = math.sqrt(mse / 2.0 * (1.0 / n_a + 1.0 / n_b))
        q = abs(diff) / se
        p_adj = float(np.clip(studentized_range_sf(q, k, df), 0.0, 1.0))
        out.append(_interval_followup(Test.TUKEY_HSD, a, b, diff, q_crit * se, p_adj, q, alpha))
    return out


def games_howell(
    groups: Mapping[str, Any], *, confidence: float = 0.95, alpha: float = DEFAULT_ALPHA
) -> list[Followup]:
    """Games-Howell comparisons of all pairs of means without assuming equal variances.

    Parameters
    ----------
    groups : mapping of str to array_like
        Values per group, in display order (at least 2 finite values each).
    confidence : float
        Family-wise confidence level of the intervals.
    alpha : float
        Level for ``flagged``.

    Returns
    -------
    list of Followup
        test Test.GAMES_HOWELL; ``estimate`` the difference in means (later -
        earlier) with its interval; ``statistic`` the Welch t; ``p_adjusted`` the
        studentized-range p-value; ``p_value`` None (no unadjusted version).

    Notes
    -----
    For each pair: se = sqrt(s_a^2/n_a + s_b^2/n_b), Welch-Satterthwaite df,
    t = diff / se, p = P(Q_{k, df} > sqrt(2) |t|), interval diff +- q_crit /
    sqrt(2) * se.

    References
    ----------
    Games, P. A. and Howell, J. F. (1976). Pairwise multiple comparison
    procedures with unequal n's and/or variances: a Monte Carlo study. Journal
    of Educational Statistics 1(2), 113-125. https://doi.org/10.3102/10769986001002113

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import math
    >>> from scipy import stats
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> for pair in games_howell(groups):
    ...     print(pair.levels, round(pair.statistic, 4), round(pair.p_adjusted, 4), pair.flagged)
    ('centre', 'north') 3.4895 0.0202 True
    ('south', 'north') 1.6036 0.3009 False
    ('south', 'centre') -2.1939 0.1331 False

    SciPy has no Games-Howell test, but with only two groups the studentized range
    p-value equals Welch's t-test p-value, which gives a cross-check:

    >>> two = {"north": groups["north"], "centre": groups["centre"]}
    >>> welch_p = stats.ttest_ind(groups["centre"], groups["north"], equal_var=False).pvalue
    >>> math.isclose(games_howell(two)[0].p_adjusted, welch_p)
    True
    """
    confidence = check_confidence(confidence)
    return games_howell_of_summaries(_summaries(_clean_groups(groups)), confidence=confidence, alpha=alpha)


def games_howell_of_summaries(summaries: list[Summary], *, confidence: float = 0.95,
                              alpha: float = DEFAULT_ALPHA) -> list[Followup]:
    """:func:`games_howell` from each group's (label, mean, sum of squares, n)."""
    k = len(summaries)
    out = []
    for (a, mean_a, ss_a, n_a), (b, mean_b, ss_b, n_b) in _pairs(summaries):
        var_a, var_b = ss_a / (n_a - 1), ss_b / (n_b - 1)
        wa, wb = var_a / n_a, var_b / n_b
        se = math.sqrt(wa + wb)
        if se == 0.0:
            raise NotEnoughDataError(coded(Skip.PAIR_NO_SPREAD, first=a, second=b))
        df = (wa + wb) ** 2 / (wa**2 / (n_a - 1) + wb**2 / (n_b - 1))
        diff = mean_a - mean_b
        t = diff / se
        p_adj = float(np.clip(studentized_range_sf(abs(t) * math.sqrt(2.0), k, df), 0.0, 1.0))
        half = studentized_range_ppf(confidence, k, df) / math.sqrt(2.0) * se
        out.append(_interval_followup(Test.GAMES_HOWELL, a, b, diff, half, p_adj, t, alpha))
    return out


def dunn(
    groups: Mapping[str, Any],
    *,
    adjust: AdjustMethod | str = "holm",
    alpha: float = DEFAULT_ALPHA,
    confidence: float = 0.95,
) -> list[Followup]:
    """Dunn's test: all pairs of mean ranks after a Kruskal-Wallis test.

    Parameters
    ----------
    groups : mapping of str to array_like
        Values per group, in display order.
    adjust : {"holm", "benjamini-hochberg", "none"}
        Adjustment over the k(k-1)/2 pairs.
    alpha : float
        Level for ``flagged`` and for matching the intervals to the adjusted p.
    confidence : float
        Level of the intervals when no adjustment is made (``adjust="none"``);
        otherwise each pair's level comes from ``adjust.matched_levels``.

    Returns
    -------
    list of Followup
        test Test.DUNN; ``estimate`` the location shift of the later level against
        the earlier one that Dunn's own statistic points to, with its interval;
        ``statistic`` z from the mean ranks; ``p_value`` two-sided normal;
        ``p_adjusted`` after ``adjust``.

    Notes
    -----
    z = (Rbar_a - Rbar_b) / sqrt((N(N+1)/12 - sum(t^3 - t) / (12 (N - 1)))
    (1/n_a + 1/n_b)), with ties given average ranks and the tie correction from
    the pooled ranking. The test is about mean ranks, which have no units. Each
    pair is described in the outcome's units by inverting this same z over shifts d
    of the later group (re-ranking ``a - d`` among all values, the standard error
    held at its value for the data): the estimate is the shift at which z changes
    sign (the Hodges-Lehmann principle; for two groups it is the median of all
    differences) and the interval is every d with |z(d)| within the critical value.
    The interval's level is matched to the adjustment (``matched_levels``: Holm's
    step levels, Benjamini-Yekutieli's for Benjamini-Hochberg), so an interval
    excludes 0 exactly when the adjusted p is below ``alpha``. The shift reading
    assumes the groups differ mainly in location.

    References
    ----------
    Dunn, O. J. (1964). Multiple comparisons using rank sums. Technometrics
    6(3), 241-252. https://doi.org/10.1080/00401706.1964.10490181
    Hodges, J. L. and Lehmann, E. L. (1963). Annals of Mathematical Statistics
    34(2), 598-611. https://doi.org/10.1214/aoms/1177704172

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import math
    >>> from scipy import stats
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> for pair in dunn(groups, adjust="holm"):
    ...     print(pair.levels, round(pair.statistic, 4), round(pair.p_value, 4), round(pair.p_adjusted, 4))
    ('centre', 'north') 2.687 0.0072 0.0216
    ('south', 'north') 1.1314 0.2579 0.2579
    ('south', 'centre') -1.5556 0.1198 0.2396
    >>> [(pair.estimate.ci_low > 0 or pair.estimate.ci_high < 0) == pair.flagged
    ...  for pair in dunn(groups, adjust="holm")]
    [True, True, True]

    SciPy has no Dunn test, but with only two groups Dunn's z equals the
    Mann-Whitney z without continuity correction, and the estimate is the median of
    all differences (the Hodges-Lehmann shift):

    >>> two = {"north": groups["north"], "centre": groups["centre"]}
    >>> mw = stats.mannwhitneyu(groups["centre"], groups["north"], use_continuity=False,
    ...                         method="asymptotic")
    >>> only = dunn(two, adjust="none")[0]
    >>> math.isclose(only.p_value, mw.pvalue)
    True
    >>> math.isclose(only.estimate.value, float(np.median(np.subtract.outer(groups["centre"], groups["north"]))))
    True
    """
    confidence = check_confidence(confidence)
    items = _clean_groups(groups)
    pooled = np.concatenate([v for _, v in items])
    ranks = stats.rankdata(pooled)
    mean_ranks, start = [], 0
    for label, values in items:
        mean_ranks.append((label, float(ranks[start : start + values.size].mean()), float(values.size)))
        start += values.size
    # Each group as its distinct values with their counts: the shift search then costs the
    # number of distinct values, not records, and gives exactly the same z (ties are counts).
    weighted = {label: _distinct_with_counts(values) for label, values in items}
    return dunn_of_mean_ranks(mean_ranks, tie_counts(pooled), weighted, adjust=adjust, alpha=alpha,
                              confidence=confidence)


def _distinct_with_counts(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    distinct, counts = np.unique(values, return_counts=True)
    return distinct, counts.astype(float)


def dunn_of_mean_ranks(
    mean_ranks: list[tuple[str, float, float]],
    tie_sizes: np.ndarray,
    groups: Mapping[str, tuple[np.ndarray, np.ndarray]],
    *,
    adjust: AdjustMethod | str = "holm",
    alpha: float = DEFAULT_ALPHA,
    confidence: float = 0.95,
) -> list[Followup]:
    """:func:`dunn` from each group's (label, mean rank, n), the pooled tie sizes and the (values, counts).

    ``groups`` holds each group's distinct values and how many records each stands for
    (counts of 1 for plain records), so rows that stand for several records get exactly
    the result of their repeated records.
    """
    n_total = sum(n for *_, n in mean_ranks)
    tie_term = float(np.sum(tie_sizes**3 - tie_sizes)) / (12.0 * (n_total - 1))
    variance = n_total * (n_total + 1) / 12.0 - tie_term
    if variance <= 0.0:
        raise NotEnoughDataError(coded(Skip.ALL_RANKS_EQUAL))
    rows, errors = [], []
    for (a, rank_a, n_a), (b, rank_b, n_b) in _pairs(mean_ranks):
        se = math.sqrt(variance * (1.0 / n_a + 1.0 / n_b))
        z = (rank_a - rank_b) / se
        rows.append((a, b, z, float(min(1.0, 2.0 * stats.norm.sf(abs(z))))))
        errors.append(se)
    levels = _levels([r[3] for r in rows], adjust, alpha, confidence)
    out_rows, intervals = [], []
    for (a, b, z, p), se, level in zip(rows, errors, levels, strict=True):
        critical = float(stats.norm.isf((level or 0.0) / 2.0))
        estimate, low, high = _DunnShift(groups, a, b, se).solve(critical)
        out_rows.append((a, b, estimate, z, p))
        intervals.append(open_at_null(low, high, 0.0, abs(z) > critical))
    return _adjusted_followups(Test.DUNN, EstimateKind.LOCATION_SHIFT, out_rows, adjust, alpha, intervals)


def _levels(raw: Sequence[float | None], adjust: AdjustMethod | str, alpha: float, confidence: float) -> list[float | None]:
    """Each comparison's interval level: matched to the adjustment, or 1 - confidence without one."""
    if str(getattr(adjust, "value", adjust)).strip().lower() == AdjustMethod.NONE.value:
        return [1.0 - confidence] * len(raw)
    return matched_levels(raw, adjust, alpha)


class _DunnShift:
    """Dunn's z of group a shifted by d against group b, re-ranked among all values.

    The pooled mid-rank of a record is its mid-rank within its own group plus the
    number of other records below it (ties one half), so shifting group a changes only
    the counts between a and the rest; each evaluation costs O((n_a + n_b) log N).
    """

    def __init__(self, groups: Mapping[str, tuple[np.ndarray, np.ndarray]], a: str, b: str, se: float) -> None:
        values_a, counts_a = groups[a]
        values_b, counts_b = groups[b]
        others = [c for c in groups if c != a]
        rest = [c for c in others if c != b]
        self.a = np.sort(values_a)
        self.counts_a = counts_a[np.argsort(values_a, kind="stable")]
        self.sorted_a = SortedRecords(self.a, self.counts_a)
        self.n_a, self.n_b = float(counts_a.sum()), float(counts_b.sum())
        self.values_b, self.counts_b = values_b, counts_b
        self.others = SortedRecords(np.concatenate([groups[c][0] for c in others]),
                              np.concatenate([groups[c][1] for c in others]))
        self.se = se
        # b's counts against groups other than a and b do not change with d
        self.b_fixed = 0.0
        if rest:
            against = SortedRecords(np.concatenate([groups[c][0] for c in rest]), np.concatenate([groups[c][1] for c in rest]))
            self.b_fixed = float(np.sum(counts_b * against.below(values_b))) / self.n_b

    def z(self, d: float) -> float:
        shifted = self.sorted_a.shifted(d)
        mean_a = (self.n_a + 1) / 2.0 + float(np.sum(shifted.weights * self.others.below(shifted.values))) / self.n_a
        mean_b = ((self.n_b + 1) / 2.0 + self.b_fixed
                  + float(np.sum(self.counts_b * shifted.below(self.values_b))) / self.n_b)
        return (mean_a - mean_b) / self.se

    def solve(self, critical: float) -> tuple[float, float, float]:
        """(estimate, low, high): the sign change of z and where |z| reaches ``critical``."""
        others = self.others.values
        span = float(max(self.a[-1], others[-1]) - min(self.a[0], others[0]))
        low_end = float(self.a[0] - others[-1]) - span - 1.0
        high_end = float(self.a[-1] - others[0]) + span + 1.0
        tolerance = 1e-7 * max(span, 1e-300)  # the bound is then moved to the exact jump point

        def crossing(target: float, right_end: bool, unreachable: float) -> float:
            # z falls in steps as d grows. The left end of {d: z(d) <= target} is where
            # z - target - eps changes sign; the right end of {d: z(d) >= target} is where
            # z - target + eps does. A target that z never reaches leaves that side open.
            offset = 1e-12 if right_end else -1e-12

            def f(d: float) -> float:
                return self.z(d) - target + offset

            if f(low_end) <= 0 or f(high_end) > 0:
                return unreachable
            return float(optimize.brentq(f, low_end, high_end, xtol=tolerance, rtol=1e-12))

        left = self.snap(crossing(0.0, False, math.nan))
        right = self.snap(crossing(0.0, True, math.nan))
        estimate = (left + right) / 2.0
        if not math.isfinite(critical):
            return estimate, -math.inf, math.inf
        low = self.snap(crossing(critical, False, -math.inf))
        high = self.snap(crossing(-critical, True, math.inf))
        return estimate, min(low, estimate), max(high, estimate)

    def snap(self, d: float) -> float:
        """The jump point nearest ``d``: z changes only where a value a_i - d meets another value."""
        if not math.isfinite(d):
            return d
        others = self.others.values
        right = np.clip(np.searchsorted(others, self.a - d), 0, others.size - 1)
        left = np.clip(right - 1, 0, others.size - 1)
        candidates = np.concatenate([self.a - others[left], self.a - others[right]])
        return float(candidates[np.argmin(np.abs(candidates - d))])


def pairwise_mann_whitney(
    groups: Mapping[str, Any],
    *,
    adjust: AdjustMethod | str = "holm",
    correct: bool = True,
    alpha: float = DEFAULT_ALPHA,
) -> list[Followup]:
    """Mann-Whitney tests on every pair of groups, adjusted over the pairs.

    Parameters
    ----------
    groups : mapping of str to array_like
        Values per group, in display order.
    adjust : {"holm", "benjamini-hochberg", "none"}
        Adjustment over the k(k-1)/2 pairs.
    correct : bool
        Continuity correction in the normal approximation.
    alpha : float
        Level for ``flagged``.

    Returns
    -------
    list of Followup
        test Test.PAIRWISE_MANN_WHITNEY; ``estimate`` the Hodges-Lehmann shift (median of
        all later-minus-earlier differences, no interval); ``statistic`` U of
        the later level; ``p_value`` unadjusted; ``p_adjusted`` after ``adjust``.

    Notes
    -----
    Normal approximation with tie correction, as R
    ``pairwise.wilcox.test(y, g, exact = FALSE)``: each pair uses only its own
    two groups' ranks.

    References
    ----------
    Mann, H. B. and Whitney, D. R. (1947). Annals of Mathematical Statistics
    18(1), 50-60. https://doi.org/10.1214/aoms/1177730491
    Hodges, J. L. and Lehmann, E. L. (1963). Annals of Mathematical Statistics
    34(2), 598-611. https://doi.org/10.1214/aoms/1177704172

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import math
    >>> from scipy import stats
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> pairs = pairwise_mann_whitney(groups, adjust="holm")
    >>> for pair in pairs:
    ...     print(pair.levels, pair.statistic, round(pair.p_value, 4), round(pair.p_adjusted, 4))
    ('centre', 'north') 24.0 0.0216 0.0647
    ('south', 'north') 19.0 0.2101 0.2101
    ('south', 'centre') 4.0 0.0947 0.1894
    >>> check = stats.mannwhitneyu(groups["centre"], groups["north"], method="asymptotic")
    >>> math.isclose(pairs[0].p_value, check.pvalue)
    True
    """
    items = _clean_groups(groups)
    rows = []
    for (a, xa), (b, xb) in _pairs(items):
        test = stats.mannwhitneyu(
            xa, xb, use_continuity=correct, alternative="two-sided", method=PMethod.ASYMPTOTIC
        )
        shift = median_pairwise_difference(xa, xb)
        p = float(test.pvalue)
        rows.append((a, b, shift, float(test.statistic), p if math.isfinite(p) else None))
    return _adjusted_followups(Test.PAIRWISE_MANN_WHITNEY, EstimateKind.LOCATION_SHIFT, rows, adjust, alpha)


def pairwise_brunner_munzel(
    groups: Mapping[str, Any],
    *,
    adjust: AdjustMethod | str = "holm",
    alpha: float = DEFAULT_ALPHA,
    confidence: float = 0.95,
    p_method: str = "auto",
) -> list[Followup]:
    """Brunner-Munzel tests of every pair of groups, adjusted over the pairs.

    Parameters
    ----------
    groups : mapping of str to array_like
        Values per group, in display order.
    adjust : {"holm", "benjamini-hochberg", "none"}
        Adjustment over the k(k-1)/2 pairs.
    alpha : float
        Level for ``flagged`` and for matching the intervals to the adjusted p.
    confidence : float
        Level of the intervals when no adjustment is made.
    p_method : {"auto", "permutation", "asymptotic"}
        As for ``relative.brunner_munzel`` (the choice rule passes what it used for the
        omnibus test).

    Returns
    -------
    list of Followup
        test Test.PAIRWISE_BRUNNER_MUNZEL; ``estimate`` the Hodges-Lehmann shift
        (later - earlier) with the interval from inverting the pair's test at the
        matched level; ``statistic`` the Brunner-Munzel t (positive when the later
        level tends to be larger); ``p_value`` unadjusted; ``p_adjusted`` after ``adjust``.

    Notes
    -----
    The follow-up of the ANOVA-type rank test: like it, each pair's test stays valid
    when spreads differ (Dunn's pooled ranking does not). Each pair uses only its own
    two groups. Interval levels come from ``adjust.matched_levels``, so an interval
    excludes 0 exactly when the adjusted p is below ``alpha``.

    References
    ----------
    Brunner, E., & Munzel, U. (2000). Biometrical Journal 42(1):17-25.

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data); with two
    groups and no adjustment the pair is the Brunner-Munzel test (SciPy cross-check):

    >>> import math
    >>> from scipy import stats
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> pairs = pairwise_brunner_munzel(groups, p_method="asymptotic")
    >>> [pair.levels for pair in pairs]
    [('centre', 'north'), ('south', 'north'), ('south', 'centre')]
    >>> check = stats.brunnermunzel(groups["north"], groups["centre"])
    >>> math.isclose(pairs[0].p_value, check.pvalue)
    True
    >>> [(pair.estimate.ci_low > 0 or pair.estimate.ci_high < 0) == pair.flagged for pair in pairs]
    [True, True, True]
    """
    from statmargin.stats.relative import done_pair

    def run(xa: Any, xb: Any, labels: tuple[str, str]) -> PairTest:
        return done_pair(xa, xb, labels=labels, p_method=p_method)

    return pairwise_of(run, _clean_groups(groups), adjust=adjust, alpha=alpha, confidence=confidence)


class PairTest(Protocol):
    """One pair's done test: its Result at a confidence level, with or without intervals."""

    def result(self, confidence: float, intervals: bool = True) -> Result: ...


def pairwise_of(run: Callable[[Any, Any, tuple[str, str]], PairTest],
                items: Sequence[tuple[str, Any]], *, adjust: AdjustMethod | str, alpha: float,
                confidence: float) -> list[Followup]:
    """Pairwise Brunner-Munzel follow-ups from ``run(a, b, labels)``, the test of each pair.

    Each pair is tested once; its p (``intervals=False``) sets the levels matched to the
    adjustment, and its estimate and interval come from the same test at its level.
    """
    confidence = check_confidence(confidence)
    tested = []
    for (a, xa), (b, xb) in _pairs(list(items)):
        pair = run(xa, xb, (a, b))
        tested.append((a, b, pair, pair.result(confidence, False)))
    raw = [r.p_value for *_, r in tested]
    levels = _levels(raw, adjust, alpha, confidence)
    rows, intervals = [], []
    for (a, b, pair, result), level in zip(tested, levels, strict=True):
        at_level = pair.result(1.0 - (level or 0.0), True)
        assert at_level.estimate is not None
        rows.append((a, b, float(at_level.estimate.value or 0.0), float(result.statistic or 0.0), result.p_value))
        intervals.append((float(at_level.estimate.ci_low or 0.0), float(at_level.estimate.ci_high or 0.0)))
    return _adjusted_followups(Test.PAIRWISE_BRUNNER_MUNZEL, EstimateKind.LOCATION_SHIFT, rows, adjust, alpha,
                               intervals)


def adjusted_residuals(
    table: Any,
    row_labels: Sequence[str],
    col_labels: Sequence[str],
    *,
    threshold: float = RESIDUAL_FLAG,
    adjust: AdjustMethod | str = "holm",
) -> list[Followup]:
    """Adjusted standardized residual of every cell of a table of counts.

    Parameters
    ----------
    table : array_like, shape (r, c)
        Counts.
    row_labels, col_labels : sequence of str
        One label per row and column.
    threshold : float
        Cells with |residual| above this are flagged (2 by default).
    adjust : {"holm", "benjamini-hochberg", "none"}
        Adjustment of the cell p-values over all r*c cells.

    Returns
    -------
    list of Followup
        Row by row; test Test.ADJUSTED_RESIDUAL, levels (row, column);
        ``statistic`` the residual; ``estimate`` observed minus expected count;
        ``p_value`` two-sided normal p of the residual; ``p_adjusted`` after
        ``adjust``; ``flagged`` when |residual| > ``threshold``.

    Notes
    -----
    r_ij = (O_ij - E_ij) / sqrt(E_ij (1 - row_i / n) (1 - col_j / n)), close to
    standard normal under independence (Haberman 1973). Reading |r| > 2 as a
    cell that departs from independence is common practice (Agresti 2013,
    sec. 3.3.1); the flag does not itself adjust for the number of cells, so
    ``p_adjusted`` is given beside it.

    References
    ----------
    Haberman, S. J. (1973). The analysis of residuals in cross-classified
    tables. Biometrics 29(1), 205-220. https://doi.org/10.2307/2529686
    Agresti, A. (2013). Categorical Data Analysis, 3rd ed., Wiley.

    Examples
    --------
    Party identification by gender, from R's ``?chisq.test`` example (Agresti 2007,
    p. 39):

    >>> table = [[762, 327, 468], [484, 239, 477]]
    >>> cells = adjusted_residuals(table, ["F", "M"], ["Democrat", "Independent", "Republican"])
    >>> for cell in cells[:3]:
    ...     print(cell.levels, round(cell.statistic, 4), cell.flagged)
    ('F', 'Democrat') 4.5021 True
    ('F', 'Independent') 0.6995 False
    ('F', 'Republican') -5.3159 True

    SciPy has no adjusted residuals, but in a 2x2 table the squared residual of
    every cell equals the Pearson chi-square (invented counts):

    >>> import math
    >>> from scipy import stats
    >>> small = [[12, 8], [5, 15]]
    >>> z = adjusted_residuals(small, ["A", "B"], ["yes", "no"])[0].statistic
    >>> math.isclose(z * z, stats.chi2_contingency(small, correction=False).statistic)
    True
    """
    counts = _count_table(table, row_labels, col_labels).astype(float)
    n = counts.sum()
    row_share = counts.sum(axis=1) / n
    col_share = counts.sum(axis=0) / n
    expected = np.outer(row_share, col_share) * n
    residual = (counts - expected) / np.sqrt(expected * np.outer(1.0 - row_share, 1.0 - col_share))
    cells = []
    for i, row in enumerate(row_labels):
        for j, col in enumerate(col_labels):
            z = float(residual[i, j])
            cells.append((str(row), str(col), float(counts[i, j] - expected[i, j]), z))
    raw = [float(2.0 * stats.norm.sf(abs(c[3]))) for c in cells]
    adjusted = adjust_p(raw, adjust)
    return [
        Followup(
            test=Test.ADJUSTED_RESIDUAL,
            levels=(row, col),
            estimate=Estimate(EstimateKind.OBSERVED_MINUS_EXPECTED, value=diff),
            p_value=p,
            p_adjusted=p_adj,
            statistic=z,
            flagged=abs(z) > threshold,
        )
        for (row, col, diff, z), p, p_adj in zip(cells, raw, adjusted, strict=True)
    ]
