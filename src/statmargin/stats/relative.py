"""Rank methods that stay valid when spreads differ: Brunner-Munzel and its k-group form.

Both compare groups through relative effects: for two groups the probability that a
value of the first exceeds one of the second (ties count one half); for k groups
each group's probability of exceeding a value drawn from all groups, every group
weighted equally. Neither assumes equal shapes or spreads, unlike the Mann-Whitney
and Kruskal-Wallis tests, whose null distribution needs identical distributions.

Everything is computed from placements (how many values of another group lie below
each value), so memory is linear in the number of records.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import stats

from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats import effects, shift_search
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Refusal, Subject, coded

PERMUTATION_BELOW = 15  # "auto" draws permutations when the smallest group is smaller than this
PERMUTATIONS = 4000  # permutation draws (p resolution 1 / 4001)
PERMUTATION_SEED = 20240917  # fixed, so the same data always give the same p-value
BATCH_LIMIT = 1_000_000  # most values held per batch of permutations (memory stays bounded)
PERMUTATION_MAX_TOTAL = 2000  # permutations only up to this many values in all: beyond it the work
# (draws x values x groups) takes minutes, while the smallest group alone sets the approximation's df
P_METHODS = ("auto", "permutation", "asymptotic")


# ---------------------------------------------------------------- placements and relative effects


def placement_counts(rows: np.ndarray, sizes: list[int]) -> list[np.ndarray]:
    """Counts of each group's values below every value, for a batch of arrangements.

    Parameters
    ----------
    rows : numpy.ndarray, shape (B, N)
        B arrangements of the N pooled mid-ranks (multiples of 1/2 from 1 to N, with the
        data's ties); groups lie side by side in the order of ``sizes``.
    sizes : list of int
        Group sizes.

    Returns
    -------
    list of numpy.ndarray
        Entry s has shape (B, k, n_s): for each value of group s, the number of values
        of group j (axis 1) below it, ties counting one half. For j = s this is the
        value's mid-rank within its own group minus one half.

    Notes
    -----
    Mid-ranks doubled are whole numbers up to 2N, so each group's values are counted
    into a histogram per arrangement (``bincount``), summed cumulatively, and read off
    at every value: O(k B N) time and memory, without sorting.
    """
    batch, total = rows.shape
    starts = np.concatenate(([0], np.cumsum(sizes)))
    slots = 2 * total + 2
    index = np.rint(2.0 * rows).astype(np.int64)  # doubled mid-ranks: 2 .. 2N
    row_base = (np.arange(batch, dtype=np.int64) * slots)[:, None]
    counts = [np.empty((batch, len(sizes), size)) for size in sizes]
    flat_index = (index + row_base).ravel()
    for j in range(len(sizes)):
        block = (index[:, starts[j] : starts[j + 1]] + row_base).ravel()
        histogram = np.bincount(block, minlength=batch * slots).astype(float)
        below = np.cumsum(histogram) - histogram  # rows are apart by ``slots``: strictly below, per row
        below -= np.repeat(below[::slots], slots)  # start every row's running count at 0
        half = (below + 0.5 * histogram)[flat_index].reshape(batch, total)
        for s in range(len(sizes)):
            counts[s][:, j, :] = half[:, starts[s] : starts[s + 1]]
    return counts


@dataclass(frozen=True)
class RelativeEffects:
    """Relative effects of a batch of arrangements and the pieces of their covariance."""

    p: np.ndarray  # (B, k): each group's probability of exceeding the equally weighted mix
    parts: list[np.ndarray]  # per group s: (B, k, k) covariance of p contributed by group s
    covariance: np.ndarray  # (B, k, k): sum of parts


def relative_effects(counts: list[np.ndarray], sizes: list[int] | list[float],
                     weights: list[np.ndarray] | None = None) -> RelativeEffects:
    """Unweighted relative effects and their covariance from placement counts.

    ``weights`` (one array per group) are the records each value stands for (a count
    column); ``sizes`` are then the groups' record totals. Without them each value is
    one record.

    Notes
    -----
    p_i = (1/k) sum_j p_ji with p_ji the mean placement of group i's values in group j
    (so p_ii = 1/2). By the Hajek projection each p_i is, up to negligible terms, a sum
    of independent contributions, one per value: a value X of group s contributes
    (1/n_s) sum_{j != s} F_j(X) / k to p_s and -(1/n_s) F_i(X) / k to p_i (i != s),
    where F_j(X) is its placement in group j. The covariance of p is the sum over
    groups of the sample covariance of these contributions divided by n_s. For two
    groups this is exactly the Brunner-Munzel variance.
    """
    k = len(sizes)
    weight = 1.0 / k
    scale = 1.0 / np.array(sizes, dtype=float)[None, :, None]
    placements = [c * scale for c in counts]  # (B, k, n_s): placement of each value in group j

    def mean(values: np.ndarray, s: int) -> np.ndarray:  # over each group's records
        return values.mean(axis=2) if weights is None else np.sum(values * weights[s], axis=2) / float(sizes[s])

    p = np.stack([mean(placements[i], i).sum(axis=1) * weight for i in range(k)], axis=1)
    parts = []
    for s, size in enumerate(sizes):
        own = placements[s]
        contribution = -weight * own  # (B, k, n_s): row i = contribution to p_i
        contribution[:, s, :] = (own.sum(axis=1) - own[:, s, :]) * weight
        centred = contribution - mean(contribution, s)[:, :, None]
        if size > 1:
            weighted = centred if weights is None else centred * weights[s]
            part = np.matmul(weighted, centred.transpose(0, 2, 1)) / ((size - 1) * size)
        else:
            part = np.zeros((p.shape[0], k, k))
        parts.append(part)
    return RelativeEffects(p, parts, np.sum(parts, axis=0))


@dataclass(frozen=True)
class AnovaType:
    """The ANOVA-type statistic of relative effects with its Box-type degrees of freedom."""

    statistic: np.ndarray  # (B,)
    df1: np.ndarray
    df2: np.ndarray
    scale: np.ndarray  # g = tr((M S)^2) / tr(M S): the statistic's numerator is about g chi2(df1)
    trace: np.ndarray  # tr(M S)


def anova_type(effects_: RelativeEffects, sizes: list[int]) -> AnovaType:
    """F = p' M p / tr(M S) on (f1, f0) df, M the centring matrix (Brunner, Dette & Munk 1997).

    Notes
    -----
    f1 = tr(M S)^2 / tr((M S)^2) (Box 1954); f0 = tr(M S)^2 / sum_s tr(M S_s)^2 / (n_s - 1),
    the Satterthwaite degrees of freedom of the per-group parts S_s (for two groups the
    Brunner-Munzel degrees of freedom). When every part is zero (no overlap and no
    spread) the statistic is +inf if the effects differ and 0 if they do not.
    """
    k = len(sizes)
    centring = np.eye(k) - 1.0 / k
    ms = centring @ effects_.covariance
    trace = np.trace(ms, axis1=1, axis2=2)
    square = np.einsum("bij,bji->b", ms, ms)
    centred = effects_.p - effects_.p.mean(axis=1, keepdims=True)
    numerator = np.sum(centred * centred, axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        statistic = np.where(trace > 0, numerator / trace, np.where(numerator > 1e-15, np.inf, 0.0))
        df1 = np.where(square > 0, trace * trace / square, 1.0)
        denominator = sum(
            np.trace(centring @ part, axis1=1, axis2=2) ** 2 / max(size - 1, 1)
            for part, size in zip(effects_.parts, sizes, strict=True)
        )
        df2 = np.where(denominator > 0, trace * trace / denominator, np.inf)
        scale = np.where(trace > 0, square / trace, 0.0)
    return AnovaType(statistic, df1, df2, scale, trace)


def _arranged(groups: list[np.ndarray]) -> tuple[np.ndarray, list[int]]:
    """The pooled mid-ranks of the observed arrangement as one row, and the group sizes."""
    return stats.rankdata(np.concatenate(groups))[None, :], [g.size for g in groups]


def permuted_batches(values: np.ndarray, draws: int, seed: int) -> Any:
    """Yield batches of random permutations of ``values`` (seeded), memory bounded by BATCH_LIMIT."""
    rng = np.random.default_rng(seed)
    per_batch = max(1, BATCH_LIMIT // max(values.size, 1))
    done = 0
    while done < draws:
        size = min(per_batch, draws - done)
        order = np.argsort(rng.random((size, values.size)), axis=1)
        yield values[order]
        done += size


def permutation_p(observed: float, draws: np.ndarray) -> float:
    """Monte Carlo permutation p: (1 + #{draws >= observed}) / (B + 1) (never below 1/(B + 1))."""
    tolerance = 1e-12 * max(1.0, abs(observed)) if math.isfinite(observed) else 0.0
    return float((1 + int(np.sum(draws >= observed - tolerance))) / (draws.size + 1))


def permutation_critical(draws: np.ndarray, alpha: float) -> float:
    """The value c with: the permutation p of a statistic is <= alpha exactly when it exceeds c.

    Notes
    -----
    With a_1 >= a_2 >= ... the draws in decreasing order and m = floor(alpha (B + 1)) - 1,
    p(t) = (1 + #{a >= t}) / (B + 1) <= alpha holds exactly for t > a_(m+1); an interval
    built with this c therefore excludes the null value exactly when p <= alpha.
    """
    m = math.floor(alpha * (draws.size + 1) + 1e-9) - 1
    if m < 0:
        return math.inf
    ordered = np.sort(draws)[::-1]
    return float(ordered[m]) if m < ordered.size else -math.inf


# ---------------------------------------------------------------- two groups


def _check_p_method(p_method: str) -> None:
    if p_method not in P_METHODS:
        raise common.OptionError(coded(Refusal.UNKNOWN_P_METHOD, given=p_method, choices=P_METHODS))


def use_permutation(p_method: str, sizes: list[int]) -> bool:
    """Whether the p-value comes from permutations: asked for, or "auto" with a small group; never above
    ``PERMUTATION_MAX_TOTAL`` values in all."""
    if sum(sizes) > PERMUTATION_MAX_TOTAL:
        return False
    return p_method == "permutation" or (p_method == "auto" and min(sizes) < PERMUTATION_BELOW)


def _two_sample_t(rows: np.ndarray, sizes: list[int]) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Probability of superiority of the first group, its SE, the Brunner-Munzel t and df.

    Parameters
    ----------
    rows : numpy.ndarray, shape (B, N)
        Pooled mid-ranks, first group then second, for B arrangements.

    Notes
    -----
    The two-group case of :func:`relative_effects`, written directly: a value's
    placement count in the other group is its pooled mid-rank minus its mid-rank in
    its own group, as in SciPy's ``brunnermunzel``; vectorized over arrangements.
    """
    n1, n2 = sizes
    first, second = rows[:, :n1], rows[:, n1:]
    below1 = first - stats.rankdata(first, axis=1)  # values of the second group below each first value
    below2 = second - stats.rankdata(second, axis=1)
    return _t_of_placements(below1.mean(axis=1) / n2, below1.var(axis=1, ddof=1), below2.var(axis=1, ddof=1),
                            n1, n2)


def two_sample_t_counted(a: np.ndarray, ca: np.ndarray, b: np.ndarray,
                         cb: np.ndarray) -> tuple[float, float, float, float]:
    """:func:`_two_sample_t` of the records of rows ``a`` and ``b`` standing for ``ca`` and ``cb`` records each.

    A record's placement in the other group is the same for every record of its row,
    so the mean and variance over records are the count-weighted ones over rows.
    """
    below1 = common.SortedRecords(b, cb).below(a)
    below2 = common.SortedRecords(a, ca).below(b)
    n1, n2 = float(ca.sum()), float(cb.sum())
    (m1, v1), (_, v2) = _counted_moments(below1, ca), _counted_moments(below2, cb)
    ps, se, t, df = _t_of_placements(np.array([m1 / n2]), np.array([v1]), np.array([v2]), n1, n2)
    return float(ps[0]), float(se[0]), float(t[0]), float(df[0])


def _counted_moments(values: np.ndarray, counts: np.ndarray) -> tuple[float, float]:
    """Mean and variance (n - 1) of the records of rows ``values`` standing for ``counts`` records each."""
    # Elementwise sums, not np.dot: a BLAS call per evaluation is slow when its threads compete for cores.
    n = float(counts.sum())
    mean = float(np.sum(counts * values)) / n
    return mean, float(np.sum(counts * (values - mean) ** 2)) / (n - 1.0)


def _t_of_placements(ps: np.ndarray, s1: np.ndarray, s2: np.ndarray, n1: float,
                     n2: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Brunner-Munzel t and df from the probability of superiority and the placements' variances."""
    variance = s1 / (n1 * n2 * n2) + s2 / (n2 * n1 * n1)
    se = np.sqrt(variance)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(se > 0, (ps - 0.5) / se, np.where(np.abs(ps - 0.5) > 1e-15, np.sign(ps - 0.5) * np.inf, 0.0))
        df = (n1 * s1 + n2 * s2) ** 2 / ((n1 * s1) ** 2 / (n1 - 1) + (n2 * s2) ** 2 / (n2 - 1))
    return ps, se, t, df


def _tail_statistic(t: np.ndarray | float, alternative: str) -> Any:
    """The statistic whose large values are evidence for ``alternative``."""
    if alternative == "greater":
        return t
    if alternative == "less":
        return -np.asarray(t)
    return np.abs(t)


def _van_dantzig_interval(ps: float, m: int, alternative: str, confidence: float) -> tuple[float, float]:
    """Interval for P(X > Y) from the bound Var <= p (1 - p) / min(n1, n2), Wilson style.

    Notes
    -----
    Used only when the Brunner-Munzel variance estimate is zero (complete separation or
    no spread), where a Wald interval would have no width. The bound holds for any
    distributions (van Dantzig 1951, Proc. Kon. Ned. Akad. Wet. A 54:1-8; recalled from
    memory), so the interval is conservative.
    """
    q = common.z_quantiles(alternative, confidence)
    z = q[0] if q[0] is not None else -(q[1] or 0.0)
    denominator = 1.0 + z * z / m
    centre = (ps + z * z / (2 * m)) / denominator
    half = z * math.sqrt(ps * (1 - ps) / m + z * z / (4 * m * m)) / denominator
    low, high = max(0.0, centre - half), min(1.0, centre + half)
    if alternative == "greater":
        high = 1.0
    elif alternative == "less":
        low = 0.0
    return min(low, ps), max(high, ps)


@dataclass(frozen=True)
class _Critical:
    """Critical values of the (tail) statistic: upper for the lower bound, lower for the upper."""

    lower_bound: float  # the estimate minus this times SE is the lower bound
    upper_bound: float


def _critical_values(alternative: str, confidence: float, df: float, draws: np.ndarray | None) -> _Critical:
    """Critical values from the t distribution, or from the permutation draws of t."""
    alpha = 1.0 - confidence
    if draws is None:
        if alternative == "two-sided":
            q = float(stats.t.ppf(1.0 - alpha / 2.0, df))
            return _Critical(q, q)
        q = float(stats.t.ppf(confidence, df))
        return _Critical(q, math.inf) if alternative == "greater" else _Critical(math.inf, q)
    if alternative == "two-sided":
        c = permutation_critical(np.abs(draws), alpha)
        return _Critical(c, c)
    if alternative == "greater":
        return _Critical(permutation_critical(draws, alpha), math.inf)
    return _Critical(math.inf, permutation_critical(-draws, alpha))


def brunner_munzel(
    x: Any,
    y: Any,
    *,
    labels: tuple[str, str] = ("A", "B"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
    p_method: str = "auto",
    intervals: bool = True,
) -> Result:
    """Brunner-Munzel test: does a value of the first group tend to exceed one of the second?

    Parameters
    ----------
    x, y : array_like
        Values of the first and second group (NaN dropped); at least two each.
    labels : tuple of str
        Group labels, first then second.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: values of the first group tend to be larger, P(X > Y) + P(X = Y)/2 > 1/2.
    confidence : float
        Level of both intervals.
    p_method : {"auto", "permutation", "asymptotic"}
        ``auto`` draws permutations when the smaller group has fewer than
        ``PERMUTATION_BELOW`` values (Neubert & Brunner 2007), else the t approximation.
    intervals : bool
        False gives the test alone (no estimate or effect): follow-ups first need only
        every pair's p to know the level of each pair's intervals.

    Returns
    -------
    Result
        Statistic t (positive when the first group tends to be larger; SciPy's
        ``brunnermunzel(x, y)`` reports the negative), df, p. Effect: the probability
        of superiority P(X > Y) + P(X = Y)/2 with the interval p +/- c SE. Estimate:
        the Hodges-Lehmann shift (median of all differences x_i - y_j) with the
        interval from inverting this test over shifts.

    Notes
    -----
    The test is of H0: P(X > Y) + P(X = Y)/2 = 1/2; it does not assume equal shapes or
    spreads (Brunner & Munzel 2000). The critical value c is the t quantile on the
    Brunner-Munzel df, or, with permutations, the quantile of the permuted statistics
    (the studentized permutation test of Neubert & Brunner 2007, exact when the groups
    have the same distribution and asymptotically valid when they do not), so the
    interval excludes 1/2 exactly when p is below 1 - confidence.

    The location estimate: shifting the first group by d, the test of ``x - d`` against
    ``y`` asks whether d is the median of the differences X - Y (for continuous
    outcomes P(X - d > Y) = 1/2 exactly there). The interval is every d this test does
    not reject, with c fixed at its value for the data as observed (our own
    construction, checked by simulation in ``simulations/choose_then_test.py``), and
    the median of the n1 n2 differences estimates that median without listing them.

    References
    ----------
    Brunner, E., & Munzel, U. (2000). The nonparametric Behrens-Fisher problem:
    asymptotic theory and a small-sample approximation. Biometrical Journal
    42(1):17-25. doi:10.1002/(SICI)1521-4036(200001)42:1<17::AID-BIMJ17>3.0.CO;2-U
    Neubert, K., & Brunner, E. (2007). A studentized permutation test for the
    non-parametric Behrens-Fisher problem. Computational Statistics & Data Analysis
    51(10):5192-5204. doi:10.1016/j.csda.2006.05.024

    Examples
    --------
    The pain scores of Brunner & Munzel (2000), as in SciPy's ``brunnermunzel``
    example, with the t approximation:

    >>> import math
    >>> from scipy import stats
    >>> x = [1, 2, 1, 1, 1, 1, 1, 1, 1, 1, 2, 4, 1, 1]
    >>> y = [3, 3, 4, 3, 1, 2, 3, 1, 1, 5, 4]
    >>> result = brunner_munzel(x, y, labels=("x", "y"), p_method="asymptotic")
    >>> round(result.statistic, 4), round(result.df, 4), round(result.p_value, 6)
    (-3.1375, 17.6828, 0.005786)
    >>> check = stats.brunnermunzel(x, y)
    >>> math.isclose(result.statistic, -check.statistic), math.isclose(result.p_value, check.pvalue)
    (True, True)
    >>> round(result.effect.value, 4), result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    (0.211, True)
    """
    common.check_options(alternative, confidence)
    return done_pair(x, y, labels=labels, alternative=alternative, p_method=p_method).result(confidence, intervals)


def done_pair(x: Any, y: Any, *, labels: tuple[str, str] = ("A", "B"), alternative: str = "two-sided",
                p_method: str = "auto") -> DonePair:
    """The Brunner-Munzel test of ``x`` against ``y``, ready to give its Result at any confidence level.

    Follow-ups need every pair's p before they know each pair's interval level; the test
    (its ranking and any permutations) is then done once per pair, not once per level.
    """
    common.check_options(alternative, 0.95)  # the alternative; each level is checked by ``result``
    _check_p_method(p_method)
    first, second = common.labels_pair(labels)
    a, dropped_a = common.clean(x, f"group {first}")
    b, dropped_b = common.clean(y, f"group {second}")
    common.require_count(a, 2, f"group {first}")
    common.require_count(b, 2, f"group {second}")
    common.require_spread(np.concatenate([a, b]), Subject.OUTCOME_BOTH_GROUPS)
    rows, sizes = _arranged([a, b])
    ps_arr, se_arr, t_arr, df_arr = _two_sample_t(rows, sizes)
    ps, se, t, df = float(ps_arr[0]), float(se_arr[0]), float(t_arr[0]), float(df_arr[0])
    notes: list[Coded] = []
    draws = None
    if use_permutation(p_method, sizes):
        draws = np.concatenate([_two_sample_t(batch, sizes)[2]
                                for batch in permuted_batches(rows[0], PERMUTATIONS, PERMUTATION_SEED)])
        p_value = _permutation_p_two_sample(t, draws, alternative)
        method = PMethod.PERMUTATION
        notes.append(coded(Note.PERMUTATION_P, draws=PERMUTATIONS, smallest=Count(min(sizes)), below=PERMUTATION_BELOW))
    else:
        p_value = asymptotic_p(t, df, alternative)
        method = PMethod.ASYMPTOTIC
    test = BrunnerMunzel(ps, se, t, df, p_value, method, draws)
    return DonePair(a, b, (first, second), dropped_a + dropped_b, alternative, test, notes)


def shift_estimate(a: np.ndarray, b: np.ndarray) -> float:
    """The Hodges-Lehmann shift (median of all a_i - b_j), from distinct values and counts when ties are many.

    Rounded sheet data have few distinct values; the selection over their pairs, each
    counted as often as it occurs (``weighted_select``), gives exactly the same number.
    """
    ua, ca = np.unique(a, return_counts=True)
    ub, cb = np.unique(b, return_counts=True)
    if 4 * (ua.size + ub.size) <= a.size + b.size:
        from statmargin.stats.weighted_select import median_pairwise_difference_weighted

        return median_pairwise_difference_weighted(ua, ca, ub, cb)
    return common.median_pairwise_difference(a, b)


@dataclass
class DonePair:
    """A done Brunner-Munzel test with its cleaned groups; ``result`` adds the intervals at a level."""

    a: np.ndarray
    b: np.ndarray
    labels: tuple[str, str]
    dropped: int
    alternative: str
    test: BrunnerMunzel
    notes: list[Coded]
    shift: float | None = None  # the Hodges-Lehmann shift, found once when first needed
    summaries: list[dict[str, Any]] | None = None  # each group's summary, made once

    def result(self, confidence: float, intervals: bool = True) -> Result:
        """The Result at ``confidence``; ``intervals=False`` leaves out the estimate and effect."""
        common.check_options(self.alternative, confidence)
        a, b = self.a, self.b
        if intervals:
            if self.shift is None:
                self.shift = shift_estimate(a, b)
            result = two_group_result(self.test, a, b, self.shift, self.labels, self.alternative, confidence)
        else:
            result = result_without_intervals(self.test, a.size + b.size, self.alternative, confidence)
        result.n_excluded = self.dropped
        if self.summaries is None:
            self.summaries = [common.describe(self.labels[0], a), common.describe(self.labels[1], b)]
        result.groups = [dict(summary) for summary in self.summaries]
        result.notes = list(self.notes)
        return result


@dataclass(frozen=True)
class BrunnerMunzel:
    """The observed Brunner-Munzel test: P(X > Y) + P(X = Y)/2, its SE, t, df, p and any permutation draws."""

    ps: float
    se: float
    t: float
    df: float
    p_value: float
    p_method: PMethod
    draws: np.ndarray | None  # permuted t values, when the p-value came from permutations


def result_without_intervals(test: BrunnerMunzel, n: int, alternative: str, confidence: float) -> Result:
    """The Result of a Brunner-Munzel test without its estimate and effect (see ``intervals``)."""
    return Result(outcome="", exposure=None, design=Design.TWO_GROUP_CONTINUOUS, test=Test.BRUNNER_MUNZEL,
                  statistic_name="t", statistic=test.t, df=test.df if math.isfinite(test.df) else None,
                  p_value=test.p_value, p_method=test.p_method, alternative=alternative, confidence=confidence,
                  n=int(n))


def two_group_result(test: BrunnerMunzel, a: np.ndarray, b: np.ndarray, shift: float, labels: tuple[str, str],
                     alternative: str, confidence: float, ca: np.ndarray | None = None,
                     cb: np.ndarray | None = None) -> Result:
    """The Result of a Brunner-Munzel test: both intervals from the test's own critical values.

    ``ca`` and ``cb`` are the records each value of ``a`` and ``b`` stands for (1 each
    when not given); ``shift`` is the median of the pairwise differences of the records.
    """
    first, second = labels
    ps, se, t = test.ps, test.se, test.t
    n1 = int(a.size if ca is None else ca.sum())
    n2 = int(b.size if cb is None else cb.sum())
    critical = _critical_values(alternative, confidence, test.df, test.draws)
    if se > 0:
        low = ps - critical.lower_bound * se if math.isfinite(critical.lower_bound) else 0.0
        high = ps + critical.upper_bound * se if math.isfinite(critical.upper_bound) else 1.0
        ps_low, ps_high = max(0.0, min(low, ps)), min(1.0, max(high, ps))
    else:
        ps_low, ps_high = _van_dantzig_interval(ps, min(n1, n2), alternative, confidence)
    shift_low, shift_high = _shift_interval(a, b, shift, critical, ca, cb)
    rejected = _rejects(t, alternative, critical)
    shift_low, shift_high = common.open_at_null(shift_low, shift_high, 0.0, rejected)
    return Result(
        outcome="",
        exposure=None,
        design=Design.TWO_GROUP_CONTINUOUS,
        test=Test.BRUNNER_MUNZEL,
        statistic_name="t",
        statistic=t,
        df=test.df if math.isfinite(test.df) else None,
        p_value=test.p_value,
        p_method=test.p_method,
        alternative=alternative,
        confidence=confidence,
        n=n1 + n2,
        estimate=Estimate(EstimateKind.LOCATION_SHIFT, shift, shift_low, shift_high, levels=(first, second)),
        effect=Effect(EffectKind.PROBABILITY_OF_SUPERIORITY, ps, ps_low, ps_high, levels=(first, second)),
        extra={"standard_error": se, "critical_value": critical.lower_bound if math.isfinite(critical.lower_bound)
               else critical.upper_bound},
    )


def _rejects(t: float, alternative: str, critical: _Critical) -> bool:
    """Whether the statistic lies beyond the critical values (the test rejects at its level)."""
    return t > critical.lower_bound or -t > critical.upper_bound


def asymptotic_p(t: float, df: float, alternative: str) -> float:
    """P of the Brunner-Munzel t on df (infinite t gives 0 or 1)."""
    if math.isnan(df) or df <= 0:
        df = math.inf
    if math.isinf(t):
        positive = t > 0
        if alternative == "two-sided":
            return 0.0
        return 0.0 if (alternative == "greater") == positive else 1.0
    return common.p_from_t(t, df, alternative) if math.isfinite(df) else common.p_from_z(t, alternative)


def _permutation_p_two_sample(t: float, draws: np.ndarray, alternative: str) -> float:
    """Permutation p of the two-group statistic for the given direction."""
    observed = float(_tail_statistic(t, alternative))
    return permutation_p(observed, np.asarray(_tail_statistic(draws, alternative), dtype=float))


def _shift_statistic(a_records: common.SortedRecords, b_records: common.SortedRecords, d: float) -> float:
    """Brunner-Munzel t of ``a - d`` against ``b``, each as sorted distinct values with their record counts."""
    shifted = a_records.shifted(d)
    below_a = b_records.below(shifted.values)
    below_b = shifted.below(b_records.values)
    n1, n2 = float(a_records.cumulative[-1]), float(b_records.cumulative[-1])
    mean_a, var_a = _counted_moments(below_a, a_records.weights)
    _, var_b = _counted_moments(below_b, b_records.weights)
    ps = mean_a / n2
    variance = var_a / (n1 * n2 * n2) + var_b / (n2 * n1 * n1)
    if variance <= 0:
        return 0.0 if abs(ps - 0.5) < 1e-15 else math.copysign(math.inf, ps - 0.5)
    return (ps - 0.5) / math.sqrt(variance)


def _shift_interval(a: np.ndarray, b: np.ndarray, shift: float, critical: _Critical, ca: np.ndarray | None = None,
                    cb: np.ndarray | None = None) -> tuple[float, float]:
    """Every shift d whose test of ``a - d`` against ``b`` stays within the critical values.

    Notes
    -----
    The statistic falls in steps as d grows, jumping only where some a_i - d meets
    some b_j; each bound is the difference a_i - b_j at which it crosses its critical
    value (as R's ``wilcox.test`` intervals end at differences), found by
    ``shift_search.step_crossing`` from a bracket stepped out from the estimate with a
    normal-theory width. The estimate is kept inside the interval even when ties make
    the statistic at it non-zero.
    """
    # Distinct values with their counts: ties are counts, so the statistic is the same and
    # each evaluation costs the number of distinct values, not of records.
    a_records = common.SortedRecords(a, ca)
    a_sorted = a_records.values
    b_records = common.SortedRecords(b, cb)
    b_sorted = b_records.values
    span = float(a_sorted[-1] - b_sorted[0]) - float(a_sorted[0] - b_sorted[-1])
    low_end = float(a_sorted[0] - b_sorted[-1]) - span - 1.0
    high_end = float(a_sorted[-1] - b_sorted[0]) + span + 1.0

    def solve(target: float, lower: bool) -> float:
        # f falls as d grows; the bound is where it goes from above 0 to 0 or below.
        def f(d: float) -> float:
            return _shift_statistic(a_records, b_records, d) - target

        if math.isnan(target):  # no critical value (an undefined df): the interval is the estimate, as before
            return shift
        at_shift = f(shift)
        limit = low_end if lower else high_end
        if lower and at_shift > 0:
            return shift
        if not lower and at_shift <= 0:
            return shift
        width = max(abs(target), 1.0) * _normal_width(a_records, b_records, span)
        left, right, f_left, f_right = shift_search.outward_bracket(f, shift, at_shift, width, limit,
                                                                    lambda: f(limit))
        if left == right:  # the critical value is never reached: the far end, as before
            return left
        return shift_search.step_crossing(f, a_sorted, b_sorted, left, right, f_left, f_right)

    low = -math.inf if math.isinf(critical.lower_bound) else solve(critical.lower_bound, True)
    high = math.inf if math.isinf(critical.upper_bound) else solve(-critical.upper_bound, False)
    return min(low, shift), max(high, shift)


def _normal_width(a: common.SortedRecords, b: common.SortedRecords, span: float) -> float:
    """A first step for the bound search: the standard error of a difference in centres, robustly.

    Each group's spread is its interquartile range / 1.349 (the SD for normal data), so
    the step is about the bound's distance from the estimate for a critical value of 1.
    """
    def spread(records: common.SortedRecords) -> tuple[float, float]:
        n = float(records.cumulative[-1])
        at = np.searchsorted(records.cumulative[1:], [0.25 * n, 0.75 * n], "left")
        at = np.minimum(at, records.values.size - 1)
        return float(records.values[at[1]] - records.values[at[0]]) / 1.349, n

    (sa, na), (sb, nb) = spread(a), spread(b)
    width = math.sqrt(sa * sa / na + sb * sb / nb)
    return width if math.isfinite(width) and width > 0 else max(span, 1.0) * 1e-3


# ---------------------------------------------------------------- three or more groups


def rank_anova_type(
    groups: Mapping[str, Any],
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    p_method: str = "auto",
) -> Result:
    """ANOVA-type rank test of equal relative effects in k groups (spreads may differ).

    Parameters
    ----------
    groups : mapping of label to array_like
        Values per group, in display order (NaN dropped); at least two values each.
    alternative : str
        Accepted for a uniform call; the test is two-sided (noted if not).
    confidence : float
        Level of the effect's interval.
    p_method : {"auto", "permutation", "asymptotic"}
        ``auto`` draws permutations when the smallest group has fewer than
        ``PERMUTATION_BELOW`` values, else the F approximation. Permutations are exact
        only when the groups have the same distribution, so the choice rule asks for
        ``asymptotic`` when spreads differ.

    Returns
    -------
    Result
        F on (f1, f0) df and p. Effect: epsilon-squared with equal group weights,
        12/k sum_i (p_i - 1/2)^2, with its interval; estimate: the largest
        difference between group medians (no interval). ``groups`` carry each group's
        relative effect ``p``.

    Notes
    -----
    H0: every group's relative effect p_i (the chance that one of its values exceeds a
    value drawn from the k groups weighted equally, ties one half) is 1/2. The
    statistic is the ANOVA-type statistic of Brunner, Dette & Munk (1997) with Box's
    degrees of freedom, applied to the unweighted relative effects recommended by
    Brunner, Konietschke, Pauly & Puri (2017), so the hypothesis does not depend on
    group sizes. The covariance comes from the Hajek projection of the placements
    (``relative_effects``), which does not assume equal spreads; for two groups the
    test is exactly the Brunner-Munzel test. The denominator df is the Satterthwaite
    df of the per-group parts (our choice; checked by simulation in
    ``simulations/choose_then_test.py``).

    The effect is 12/k sum (p_i - 1/2)^2: for equal group sizes and no ties this is
    the population epsilon-squared (the share of rank variance between groups). Its
    estimate and interval invert the same F (noncentral with lambda = p' M p / g),
    with the median-unbiased estimate, so the estimate always lies inside.

    References
    ----------
    Brunner, E., Dette, H., & Munk, A. (1997). Box-type approximations in nonparametric
    factorial designs. JASA 92(440):1494-1502. doi:10.1080/01621459.1997.10473671
    Brunner, E., Konietschke, F., Pauly, M., & Puri, M. L. (2017). Rank-based procedures
    in factorial designs: hypotheses about non-parametric treatment effects. JRSS B
    79(5):1463-1485. doi:10.1111/rssb.12222

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> result = rank_anova_type(groups, p_method="asymptotic")
    >>> round(result.statistic, 4), round(result.p_value, 4)
    (8.9325, 0.0057)
    >>> [round(g["relative_effect"], 4) for g in result.groups]
    [0.26, 0.7667, 0.4733]

    With two groups it is the Brunner-Munzel test (SciPy cross-check):

    >>> import math
    >>> from scipy import stats
    >>> two = {"north": groups["north"], "centre": groups["centre"]}
    >>> check = stats.brunnermunzel(groups["north"], groups["centre"])
    >>> math.isclose(rank_anova_type(two, p_method="asymptotic").p_value, check.pvalue)
    True
    """
    common.check_options(alternative, confidence)
    _check_p_method(p_method)
    cleaned, dropped, notes = common.prepare_groups(groups, alternative, confidence)
    arrays = list(cleaned.values())
    rows, sizes = _arranged(arrays)
    rel = relative_effects(placement_counts(rows, sizes), sizes)
    ats = anova_type(rel, sizes)
    f, df1, df2 = float(ats.statistic[0]), float(ats.df1[0]), float(ats.df2[0])
    if use_permutation(p_method, sizes):
        draws = np.concatenate([
            anova_type(relative_effects(placement_counts(batch, sizes), sizes), sizes).statistic
            for batch in permuted_batches(rows[0], PERMUTATIONS, PERMUTATION_SEED)
        ])
        p_value = permutation_p(f, draws)
        method = PMethod.PERMUTATION
        notes.append(coded(Note.PERMUTATION_P, draws=PERMUTATIONS, smallest=Count(min(sizes)), below=PERMUTATION_BELOW))
    else:
        p_value = anova_type_p(f, df1, df2)
        method = PMethod.ASYMPTOTIC
    summaries = [common.describe(label, values) for label, values in cleaned.items()]
    result = anova_type_result(rel, ats, p_value, method, summaries, confidence,
                               {label: (values, None) for label, values in cleaned.items()})
    result.n_excluded = dropped
    result.notes = notes
    return result


def anova_type_p(f: float, df1: float, df2: float) -> float:
    """The F approximation's p of the ANOVA-type statistic (0 for an infinite statistic)."""
    return 0.0 if math.isinf(f) else float(stats.f.sf(f, df1, df2))


def anova_type_result(rel: RelativeEffects, ats: AnovaType, p_value: float, method: PMethod,
                      summaries: list[dict[str, Any]], confidence: float,
                      groups: Mapping[str, tuple[np.ndarray, np.ndarray | None]]) -> Result:
    """The Result of an ANOVA-type rank test from its relative effects and statistic (batch row 0).

    ``groups`` holds each group's values and counts (None: one record each), for the
    widest median gap's all-pairs interval (``signtest.widest_median_gap``).
    """
    # At call time: signtest imports weighted, which imports multigroup, which imports this module.
    from statmargin.stats.signtest import widest_median_gap

    f, df1, df2 = float(ats.statistic[0]), float(ats.df1[0]), float(ats.df2[0])
    effect = _equal_weight_epsilon(f, df1, df2, float(ats.scale[0]), len(summaries), confidence)
    for summary, p_i in zip(summaries, rel.p[0], strict=True):
        summary["relative_effect"] = float(p_i)
    high = max(summaries, key=lambda g: g["median"])
    low = min(summaries, key=lambda g: g["median"])
    return Result(
        outcome="",
        exposure=None,
        design=Design.MULTI_GROUP_CONTINUOUS,
        test=Test.RANK_ANOVA_TYPE,
        statistic_name="F",
        statistic=f,
        df=[df1, df2],
        p_value=p_value,
        p_method=method,
        alternative="two-sided",
        confidence=confidence,
        n=int(sum(int(g["n"]) for g in summaries)),
        estimate=widest_median_gap(Estimate(EstimateKind.LARGEST_MEDIAN_GAP, high["median"] - low["median"],
                                            levels=(str(high["label"]), str(low["label"]))), groups, confidence),
        effect=effect,
        groups=summaries,
    )


def _equal_weight_epsilon(f: float, df1: float, df2: float, scale: float, k: int, confidence: float) -> Effect:
    """Epsilon-squared with equal group weights and its interval from the noncentral F.

    Notes
    -----
    p' M p is about g chi2(df1, lambda) with lambda = p' M p / g, so F is about a
    noncentral F(df1, df2, lambda); the share is 12/k p' M p = 12/k g lambda, capped
    at its largest possible value (k^2 - 1) / k^2 (every group apart).
    """
    top = (k * k - 1.0) / (k * k)
    if not math.isfinite(f) or scale <= 0:
        return Effect(EffectKind.EPSILON_SQUARED_EQUAL_WEIGHTS, top, top, top)
    low, mid, high = effects.invert_noncentrality(effects.noncentral_f_cdf(f, df1, df2), confidence, f * df1)
    share = [min(top, 12.0 / k * scale * ncp) for ncp in (mid, low, high)]
    return Effect(EffectKind.EPSILON_SQUARED_EQUAL_WEIGHTS, share[0], share[1], share[2])
