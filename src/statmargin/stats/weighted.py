"""Frequency weights (a count column): continuous tests as if each row were repeated, without repeating it.

A row with count c stands for c identical records. Every function here returns
the ``Result`` of the matching unweighted method applied to the repeated
records, computed from the rows and their counts in memory linear in the
rows: weighted sums (compensated) for means and variances, mid-ranks from
cumulative counts for rank tests (tie sizes are the counts of equal values),
and weighted selection for Hodges-Lehmann estimates
(``statmargin.stats.weighted_select``). When every count is 1 the rows are the
records and the unweighted method is called directly, so exact p-values and
intervals appear exactly where they would. Rows with a count of 0 stand for no
record; rows with a missing count are left out (``extra["rows_without_count"]``).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from scipy import stats

from statmargin.errors import NotEnoughDataError
from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats import correlation, effects, multigroup, onesample, paired, twogroup
from statmargin.stats.multigroup import KRUSKAL_SMALL_GROUP
from statmargin.stats.weighted_select import (
    collapse,
    median_pairwise_difference_weighted,
    median_walsh_average_weighted,
)
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Skip, Subject, coded

Weighted = tuple[Any, Any]  # (values, counts) of one group


# --------------------------------------------------------------------------- inputs


def check_counts(counts: Any, *, what: str = "the count column") -> np.ndarray:
    """Counts as floats; refuse a count below 0 or not whole (NaN stays: the row is left out).

    Raises
    ------
    NotEnoughDataError
        With ``Skip.NEGATIVE_VALUE`` or ``Skip.NOT_WHOLE_COUNT`` naming the first bad row
        (position + 1).

    Examples
    --------
    >>> check_counts([1, 3, float("nan")]).tolist()
    [1.0, 3.0, nan]
    """
    c = np.asarray(counts, dtype=float).ravel()
    finite = np.isfinite(c)
    bad = np.flatnonzero(finite & ((c < 0) | (c != np.floor(c))))
    if bad.size:
        i = int(bad[0])
        code = Skip.NEGATIVE_VALUE if c[i] < 0 else Skip.NOT_WHOLE_COUNT
        raise NotEnoughDataError(coded(code, what=what, row=i + 1, value=float(c[i])))
    return c


def clean_weighted(values: Any, counts: Any, what: str = "the outcome") -> tuple[np.ndarray, np.ndarray, int, int]:
    """Finite values with their counts (> 0), records left out, and rows without a count.

    Returns
    -------
    numpy.ndarray, numpy.ndarray, int, int
        Values, whole-number counts (int64), the number of records whose value was
        missing (what ``clean`` reports for the repeated data) and the number of rows
        whose count was missing.

    Examples
    --------
    >>> v, c, dropped, no_count = clean_weighted([1.0, float("nan"), 3.0, 4.0], [2, 5, 0, float("nan")])
    >>> v.tolist(), c.tolist(), dropped, no_count
    ([1.0], [2], 5, 1)
    """
    v = np.asarray(values, dtype=float).ravel()
    c = check_counts(counts)
    if v.size != c.size:
        raise NotEnoughDataError(coded(Skip.LENGTH_MISMATCH, what=what, first=v.size, second=c.size))
    has_count = np.isfinite(c)
    has_value = np.isfinite(v)
    keep = has_count & has_value & (c > 0)
    dropped = int(c[has_count & ~has_value].sum())
    return v[keep], c[keep].astype(np.int64), dropped, int((~has_count).sum())


def _all_ones(*counts: np.ndarray) -> bool:
    return all(bool(np.all(c == 1)) for c in counts)


def _total(c: np.ndarray) -> int:
    return int(c.sum())


# --------------------------------------------------------------------------- weighted summaries


def weighted_mean(x: np.ndarray, w: np.ndarray) -> float:
    """Mean of the repeated records, with the same correction pass as ``_common.accurate_mean``.

    Examples
    --------
    >>> float(weighted_mean(np.array([1.0, 4.0]), np.array([3, 1])))
    1.75
    """
    n = float(w.sum())
    first = math.fsum(w * x) / n
    return first + math.fsum(w * (x - first)) / n


def weighted_sum_of_squares(x: np.ndarray, w: np.ndarray, center: float) -> float:
    """Sum of squared deviations of the repeated records from ``center`` (compensated)."""
    d = x - center
    return math.fsum(w * d * d)


def weighted_quantile_at(x: np.ndarray, w: np.ndarray, k: int) -> float:
    """The k-th smallest (0-based) of the repeated records."""
    u, c = collapse(x, w)
    return float(u[int(np.searchsorted(np.cumsum(c), k, side="right"))])


def weighted_median(x: np.ndarray, w: np.ndarray) -> float:
    """``np.median`` of the repeated records.

    Examples
    --------
    >>> weighted_median(np.array([5.0, 1.0, 3.0]), np.array([1, 2, 1]))
    2.0
    """
    n = _total(w)
    if n % 2:
        return weighted_quantile_at(x, w, n // 2)
    return float(np.mean(np.array([weighted_quantile_at(x, w, n // 2 - 1), weighted_quantile_at(x, w, n // 2)])))


def weighted_describe(label: str, x: np.ndarray, w: np.ndarray) -> dict[str, Any]:
    """``_common.describe`` of the repeated records: label, n, mean, sd, median."""
    n = _total(w)
    mean = weighted_mean(x, w) if n else None
    sd = math.sqrt(weighted_sum_of_squares(x, w, mean) / (n - 1)) if mean is not None and n >= 2 else None
    median = weighted_median(x, w) if n else None
    return {"label": str(label), "n": n, "mean": mean, "sd": sd, "median": median}


def midranks(values: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mid-rank of each row among the repeated records, and the sizes of the tied sets.

    Returns
    -------
    numpy.ndarray, numpy.ndarray
        ``scipy.stats.rankdata`` of the repeated records, one value per row; the
        counts of each distinct value (the tie sizes t of sum(t^3 - t)).

    Examples
    --------
    >>> ranks, ties = midranks(np.array([2.0, 1.0, 2.0]), np.array([1, 2, 3]))
    >>> ranks.tolist(), ties.tolist()
    ([4.5, 1.5, 4.5], [2.0, 4.0])
    """
    u, inverse = np.unique(values, return_inverse=True)
    tied = np.bincount(inverse, weights=weights, minlength=u.size)
    upper = np.cumsum(tied)
    return (upper - (tied - 1.0) / 2.0)[inverse], tied


# --------------------------------------------------------------------------- one sample and pairs


def _require(x: np.ndarray, w: np.ndarray, minimum: int, what: str, *, spread: bool = True) -> None:
    if _total(w) < minimum:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_VALUES, what=what, n=Count(_total(w)), minimum=minimum))
    if spread and x.size and np.all(x == x[0]):
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what=what, value=float(x[0])))


def one_sample_t(
    x: Any, counts: Any, *, mu: float = 0.0, alternative: str = "two-sided", confidence: float = 0.95
) -> Result:
    """``onesample.one_sample_t`` of the repeated records.

    Examples
    --------
    R's ``sleep`` data, drug 1, with the two 0.8-like values given as counted rows;
    equal to the repeated data:

    >>> from statmargin.stats.onesample import one_sample_t as plain
    >>> x, c = np.array([0.7, -1.6, -0.2, 3.4]), np.array([2, 1, 3, 2])
    >>> math.isclose(one_sample_t(x, c).p_value, plain(np.repeat(x, c)).p_value, rel_tol=1e-12)
    True
    """
    common.check_options(alternative, confidence)
    v, c, dropped, no_count = clean_weighted(x, counts)
    if _all_ones(c):
        return _with_rows(onesample.one_sample_t(v, mu=mu, alternative=alternative, confidence=confidence),
                          dropped, no_count)
    _require(v, c, 2, "the outcome")
    tested = onesample.mean_t_of_summary(weighted_describe("all", v, c), mu, EffectKind.HEDGES_G, alternative, confidence,
                                         values=v, counts=c)
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.ONE_SAMPLE_CONTINUOUS, test=Test.ONE_SAMPLE_T,
        statistic_name="t", statistic=tested.t, df=float(tested.df),
        p_value=common.p_from_t(tested.t, tested.df, alternative), p_method=PMethod.ASYMPTOTIC,
        alternative=alternative, confidence=confidence, n=_total(c),
        estimate=Estimate(EstimateKind.MEAN_DIFFERENCE_FROM_VALUE, tested.difference, tested.ci_low,
                          tested.ci_high, reference=float(mu)),
        effect=tested.effect, groups=[tested.summary], against=mu,
    ), dropped, no_count)


def _with_rows(result: Result, dropped: int, no_count: int) -> Result:
    """Set the records left out (as the repeated data report them) and the rows without a count."""
    result.n_excluded = dropped
    result.extra["rows_without_count"] = no_count
    return result


def _paired_rows(
    x1: Any, x2: Any, counts: Any, labels: tuple[str, str]
) -> tuple[np.ndarray, np.ndarray, np.ndarray, int, int, str, str]:
    """Complete pairs with their counts; records left out; rows without a count."""
    first, second = common.labels_pair(labels)
    a = np.asarray(x1, dtype=float).ravel()
    b = np.asarray(x2, dtype=float).ravel()
    c = check_counts(counts)
    if not (a.size == b.size == c.size):
        raise NotEnoughDataError(coded(Skip.LENGTH_MISMATCH, what="the paired measurements", first=a.size,
                                       second=b.size))
    has_count = np.isfinite(c)
    complete = np.isfinite(a) & np.isfinite(b)
    keep = has_count & complete & (c > 0)
    dropped = int(c[has_count & ~complete].sum())
    return a[keep], b[keep], c[keep].astype(np.int64), dropped, int((~has_count).sum()), first, second


def paired_t(
    x1: Any, x2: Any, counts: Any, *, labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided", confidence: float = 0.95,
) -> Result:
    """``paired.paired_t`` of the repeated pairs (each row is a pair standing for ``count`` pairs)."""
    common.check_options(alternative, confidence)
    a, b, c, dropped, no_count, first, second = _paired_rows(x1, x2, counts, labels)
    if _all_ones(c):
        return _with_rows(paired.paired_t(a, b, labels=labels, alternative=alternative, confidence=confidence),
                          dropped, no_count)
    if _total(c) < 2:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_PAIRS, n=Count(_total(c)), minimum=2, first=first, second=second))
    d = a - b
    if np.all(d == 0):
        raise NotEnoughDataError(coded(Skip.ALL_DIFFERENCES_ZERO, first=first, second=second))
    _require(d, c, 2, f"the differences {first} - {second}")
    tested = onesample.mean_t_of_summary(weighted_describe(f"{first} - {second}", d, c), 0.0, EffectKind.HEDGES_G_Z,
                           alternative, confidence, values=d, counts=c)
    mean = tested.summary["mean"]
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.PAIRED_CONTINUOUS, test=Test.PAIRED_T,
        statistic_name="t", statistic=tested.t, df=float(tested.df),
        p_value=common.p_from_t(tested.t, tested.df, alternative), p_method=PMethod.ASYMPTOTIC,
        alternative=alternative, confidence=confidence, n=_total(c),
        estimate=Estimate(EstimateKind.PAIRED_MEAN_DIFFERENCE, mean, tested.ci_low, tested.ci_high,
                          levels=(first, second)),
        effect=tested.effect,
        groups=[weighted_describe(first, a, c), weighted_describe(second, b, c), tested.summary],
        extra={"d_z": mean / tested.summary["sd"]},
    ), dropped, no_count)


def _signed_rank_z(d: np.ndarray, w: np.ndarray, alternative: str, correct: bool) -> float:
    """``onesample._signed_rank_z`` of the repeated non-zero differences."""
    ranks, ties = midranks(np.abs(d), w)
    return onesample.signed_rank_z(math.fsum((w * ranks)[d > 0]), float(w.sum()), ties, alternative, correct)


def signed_rank_result(
    values: np.ndarray, weights: np.ndarray, *, mu: float, alternative: str, confidence: float,
    exact: bool | str, correct: bool, what: str,
) -> Result:
    """``onesample.signed_rank_result`` of the repeated records (normal approximation).

    Counts above 1 make ties, so the exact null distribution never applies; the
    caller passes rows whose counts are not all 1.
    """
    common.check_exact(exact)
    shifted = values - mu
    nonzero = shifted != 0
    d, wd = shifted[nonzero], weights[nonzero]
    n_zero = _total(weights[~nonzero])
    if d.size == 0:
        raise NotEnoughDataError(coded(Skip.ALL_EQUAL_TARGET, what=what, value=float(mu)))
    n = _total(wd)
    ranks, ties = midranks(np.abs(d), wd)
    v_plus = math.fsum((wd * ranks)[d > 0])
    notes: list[Coded] = []
    if exact is True:
        common.caveat(notes, coded(Note.EXACT_RULED_OUT, one_sample=True))
    if n_zero:
        notes.append(coded(Note.ZEROS_DROPPED, n=Count(n_zero), value=float(mu)))
    kept = d + mu  # the same operations as the unweighted code, value by value
    centre = median_walsh_average_weighted(kept, wd)
    z = _signed_rank_z(d, wd, alternative, correct)
    p_value = common.p_from_z(z, alternative)
    p_method, approximation_note = common.normal_approximation(correct)
    low, high = _signed_rank_interval(kept, wd, alternative, confidence, correct, notes)
    notes.append(approximation_note)
    return Result(
        outcome="", exposure=None, design=Design.ONE_SAMPLE_CONTINUOUS, test=Test.WILCOXON_SIGNED_RANK,
        statistic_name="V", statistic=v_plus, df=None, p_value=p_value, p_method=p_method,
        alternative=alternative, confidence=confidence, n=_total(weights),
        estimate=Estimate(EstimateKind.PSEUDO_MEDIAN, centre, low, high),
        effect=effects.rank_biserial_signed(v_plus, n, alternative, confidence),
        notes=notes,
        extra={"n_zero_differences": n_zero, "n_ranked": n, "ties": bool(ties.size < n)},
    )


def _signed_rank_interval(
    values: np.ndarray, w: np.ndarray, alternative: str, confidence: float, correct: bool, notes: list[Coded]
) -> tuple[float, float]:
    """``onesample._signed_rank_approx_interval`` of the repeated records."""

    def statistic(centre: float) -> float:
        shifted = values - centre
        keep = shifted != 0
        return _signed_rank_z(shifted[keep], w[keep], alternative, correct)

    return onesample.invert_centre_statistic(statistic, float(values.min()), float(values.max()), alternative,
                                             confidence, notes)


def wilcoxon_signed_rank(
    x: Any, counts: Any, *, mu: float = 0.0, alternative: str = "two-sided", confidence: float = 0.95,
    exact: bool | str = "auto", correct: bool = True,
) -> Result:
    """``onesample.wilcoxon_signed_rank`` of the repeated records."""
    common.check_options(alternative, confidence)
    v, c, dropped, no_count = clean_weighted(x, counts)
    if _all_ones(c):
        return _with_rows(onesample.wilcoxon_signed_rank(v, mu=mu, alternative=alternative,
                                                         confidence=confidence, exact=exact, correct=correct),
                          dropped, no_count)
    _require(v, c, 1, "the outcome", spread=False)
    result = signed_rank_result(v, c, mu=mu, alternative=alternative, confidence=confidence, exact=exact,
                                correct=correct, what="the outcome")
    result.groups = [weighted_describe("all", v, c)]
    result.against = mu
    return _with_rows(result, dropped, no_count)


def wilcoxon_paired(
    x1: Any, x2: Any, counts: Any, *, labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided", confidence: float = 0.95, exact: bool | str = "auto", correct: bool = True,
) -> Result:
    """``paired.wilcoxon_paired`` of the repeated pairs."""
    common.check_options(alternative, confidence)
    a, b, c, dropped, no_count, first, second = _paired_rows(x1, x2, counts, labels)
    if _all_ones(c):
        return _with_rows(paired.wilcoxon_paired(a, b, labels=labels, alternative=alternative,
                                                 confidence=confidence, exact=exact, correct=correct),
                          dropped, no_count)
    if _total(c) < 1:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_PAIRS, n=Count(0), minimum=1, first=first, second=second))
    d = a - b
    if np.all(d == 0):
        raise NotEnoughDataError(coded(Skip.ALL_DIFFERENCES_ZERO, first=first, second=second))
    result = signed_rank_result(d, c, mu=0.0, alternative=alternative, confidence=confidence, exact=exact,
                                correct=correct, what=f"the differences {first} - {second}")
    assert result.estimate is not None
    result.design = Design.PAIRED_CONTINUOUS
    result.estimate = Estimate(EstimateKind.PAIRED_PSEUDO_MEDIAN, result.estimate.value, result.estimate.ci_low,
                               result.estimate.ci_high, levels=(first, second))
    result.groups = [weighted_describe(first, a, c), weighted_describe(second, b, c),
                     weighted_describe(f"{first} - {second}", d, c)]
    return _with_rows(result, dropped, no_count)


# --------------------------------------------------------------------------- two groups


def _two(x: Weighted, y: Weighted, labels: tuple[str, str]) -> tuple[Any, ...]:
    first, second = common.labels_pair(labels)
    a, ca, dropped_a, none_a = clean_weighted(*x, what=f"group {first}")
    b, cb, dropped_b, none_b = clean_weighted(*y, what=f"group {second}")
    return a, ca, b, cb, dropped_a + dropped_b, none_a + none_b, first, second


def _check_two(a: np.ndarray, ca: np.ndarray, b: np.ndarray, cb: np.ndarray, first: str, second: str) -> None:
    """As ``twogroup._two_groups``: two records per group and some spread overall."""
    _require(a, ca, 2, f"group {first}", spread=False)
    _require(b, cb, 2, f"group {second}", spread=False)
    _require(np.concatenate([a, b]), np.concatenate([ca, cb]), 2, Subject.OUTCOME_BOTH_GROUPS)


def welch_t(x: Weighted, y: Weighted, *, labels: tuple[str, str] = ("A", "B"), alternative: str = "two-sided",
            confidence: float = 0.95) -> Result:
    """``twogroup.welch_t`` of the repeated records; ``x`` and ``y`` are (values, counts)."""
    return _t_test(x, y, labels, alternative, confidence, equal_variances=False)


def student_t(x: Weighted, y: Weighted, *, labels: tuple[str, str] = ("A", "B"), alternative: str = "two-sided",
              confidence: float = 0.95) -> Result:
    """``twogroup.student_t`` of the repeated records; ``x`` and ``y`` are (values, counts)."""
    return _t_test(x, y, labels, alternative, confidence, equal_variances=True)


def _t_test(x: Weighted, y: Weighted, labels: tuple[str, str], alternative: str, confidence: float, *,
            equal_variances: bool) -> Result:
    common.check_options(alternative, confidence)
    a, ca, b, cb, dropped, no_count, first, second = _two(x, y, labels)
    if _all_ones(ca, cb):
        plain = twogroup.student_t if equal_variances else twogroup.welch_t
        return _with_rows(plain(a, b, labels=labels, alternative=alternative, confidence=confidence), dropped, no_count)
    _check_two(a, ca, b, cb, first, second)
    result = twogroup.t_test_of_summaries(weighted_describe(first, a, ca), weighted_describe(second, b, cb),
                                          alternative, confidence, equal_variances=equal_variances)
    if not equal_variances and result.effect is not None:
        result.effect = effects.standardized_difference_with_any_shape(result.effect, a, b, alternative, confidence,
                                                                       ca, cb)
    return _with_rows(result, dropped, no_count)


def _rank_sum_z(a: np.ndarray, ca: np.ndarray, b: np.ndarray, cb: np.ndarray, alternative: str,
                correct: bool) -> float:
    """``twogroup._rank_sum_z`` of the repeated records."""
    ranks, ties = midranks(np.concatenate([a, b]), np.concatenate([ca, cb]))
    return twogroup.rank_sum_z(math.fsum(ca * ranks[: a.size]), float(ca.sum()), float(cb.sum()), ties,
                               alternative, correct)


def mann_whitney_u(
    x: Weighted, y: Weighted, *, labels: tuple[str, str] = ("A", "B"), alternative: str = "two-sided",
    confidence: float = 0.95, exact: bool | str = "auto", correct: bool = True,
) -> Result:
    """``twogroup.mann_whitney_u`` of the repeated records; ``x`` and ``y`` are (values, counts).

    Examples
    --------
    >>> from statmargin.stats.twogroup import mann_whitney_u as plain
    >>> x, cx = np.array([0.8, 1.9, 1.0, 1.4]), np.array([2, 1, 3, 1])
    >>> y, cy = np.array([1.15, 0.9, 0.7]), np.array([1, 2, 2])
    >>> weighted = mann_whitney_u((x, cx), (y, cy))
    >>> repeated = plain(np.repeat(x, cx), np.repeat(y, cy))
    >>> weighted.statistic == repeated.statistic, math.isclose(weighted.p_value, repeated.p_value, rel_tol=1e-12)
    (True, True)
    """
    common.check_options(alternative, confidence)
    common.check_exact(exact)
    a, ca, b, cb, dropped, no_count, first, second = _two(x, y, labels)
    if _all_ones(ca, cb):
        return _with_rows(twogroup.mann_whitney_u(a, b, labels=labels, alternative=alternative,
                                                  confidence=confidence, exact=exact, correct=correct),
                          dropped, no_count)
    _check_two(a, ca, b, cb, first, second)
    n1, n2 = _total(ca), _total(cb)
    ranks, ties = midranks(np.concatenate([a, b]), np.concatenate([ca, cb]))
    u_first = math.fsum(ca * ranks[: a.size]) - n1 * (n1 + 1) / 2.0
    notes: list[Coded] = []
    if exact is True:
        common.caveat(notes, coded(Note.EXACT_RULED_OUT, one_sample=False))
    shift = median_pairwise_difference_weighted(a, ca, b, cb)
    p_value = common.p_from_z(_rank_sum_z(a, ca, b, cb, alternative, correct), alternative)
    p_method, approximation_note = common.normal_approximation(correct)
    low, high = _rank_sum_interval(a, ca, b, cb, alternative, confidence, correct)
    notes.append(approximation_note)
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.TWO_GROUP_CONTINUOUS, test=Test.MANN_WHITNEY_U,
        statistic_name="W", statistic=u_first, df=None, p_value=p_value, p_method=p_method,
        alternative=alternative, confidence=confidence, n=n1 + n2,
        estimate=Estimate(EstimateKind.LOCATION_SHIFT, shift, low, high, levels=(first, second)),
        effect=effects.rank_biserial_two_sample(u_first, n1, n2, alternative, confidence),
        groups=[weighted_describe(first, a, ca), weighted_describe(second, b, cb)], notes=notes,
        extra={"ties": bool(ties.size < n1 + n2), "u_second": float(n1 * n2 - u_first)},
    ), dropped, no_count)


def _rank_sum_interval(a: np.ndarray, ca: np.ndarray, b: np.ndarray, cb: np.ndarray, alternative: str,
                       confidence: float, correct: bool) -> tuple[float, float]:
    """``twogroup._rank_sum_approx_interval`` of the repeated records."""
    return twogroup.invert_shift_statistic(
        lambda d: _rank_sum_z(a - d, ca, b, cb, alternative, correct),
        float(a.min() - b.max()), float(a.max() - b.min()), alternative, confidence,
    )


# --------------------------------------------------------------------------- three or more groups


def _groups(groups: Mapping[str, Weighted], alternative: str, confidence: float) -> tuple[Any, ...]:
    """As ``_common.prepare_groups``: two records per group, two groups, some spread overall."""
    common.check_options(alternative, confidence)
    notes: list[Coded] = []
    if alternative != "two-sided":
        notes.append(coded(Note.MULTIGROUP_TWO_SIDED, alternative=alternative))
    cleaned: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    dropped = no_count = 0
    for label, (values, counts) in groups.items():
        v, c, lost, none = clean_weighted(values, counts, what=f"group {label}")
        _require(v, c, 2, f"group {label}", spread=False)
        cleaned[str(label)] = (v, c)
        dropped += lost
        no_count += none
    if len(cleaned) < 2:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_GROUPS, n=len(cleaned)))
    everything = [v for v, _ in cleaned.values()]
    _require(np.concatenate(everything), np.concatenate([c for _, c in cleaned.values()]), 2,
             Subject.OUTCOME_EVERY_GROUP)
    return cleaned, dropped, no_count, notes


def sums_of_squares(groups: Mapping[str, tuple[np.ndarray, np.ndarray]]) -> tuple[float, float, list[float]]:
    """``multigroup.sums_of_squares`` of the repeated records: SSB, SSW and the group means."""
    values = np.concatenate([v for v, _ in groups.values()])
    counts = np.concatenate([c for _, c in groups.values()])
    grand = weighted_mean(values, counts)
    offsets = [weighted_mean(v - grand, c) for v, c in groups.values()]
    within = math.fsum(weighted_sum_of_squares(v - grand, c, o) for (v, c), o in zip(groups.values(), offsets,
                                                                                      strict=True))
    between = math.fsum(float(c.sum()) * o * o for (_, c), o in zip(groups.values(), offsets, strict=True))
    return between, within, [grand + o for o in offsets]


def _delegate_groups(groups: Mapping[str, tuple[np.ndarray, np.ndarray]]) -> dict[str, np.ndarray] | None:
    """The groups' values when every count is 1 (the rows are the records), else None."""
    if all(_all_ones(c) for _, c in groups.values()):
        return {label: v for label, (v, _) in groups.items()}
    return None


def one_way_anova(groups: Mapping[str, Weighted], *, alternative: str = "two-sided",
                  confidence: float = 0.95) -> Result:
    """``multigroup.one_way_anova`` of the repeated records; each group is (values, counts)."""
    cleaned, dropped, no_count, notes = _groups(groups, alternative, confidence)
    plain = _delegate_groups(cleaned)
    if plain is not None:
        return _with_rows(multigroup.one_way_anova(plain, alternative=alternative, confidence=confidence),
                          dropped, no_count)
    between, within, _ = sums_of_squares(cleaned)
    k = len(cleaned)
    n_total = sum(_total(c) for _, c in cleaned.values())
    df1, df2 = k - 1, n_total - k
    if within == 0.0:
        raise NotEnoughDataError(coded(Skip.NO_SPREAD_WITHIN_GROUPS))
    ms_between, ms_within = between / df1, within / df2
    f = ms_between / ms_within
    effect, omega = multigroup._share_of_variance(between, within, k, n_total, confidence)
    summaries = [weighted_describe(label, v, c) for label, (v, c) in cleaned.items()]
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.MULTI_GROUP_CONTINUOUS, test=Test.ONE_WAY_ANOVA,
        statistic_name="F", statistic=f, df=[float(df1), float(df2)], p_value=float(stats.f.sf(f, df1, df2)),
        p_method=PMethod.ASYMPTOTIC, alternative="two-sided", confidence=confidence, n=int(n_total),
        estimate=multigroup._largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP, confidence), effect=effect,
        groups=summaries, notes=notes,
        extra={**omega, "ss_between": between, "ss_within": within, "ms_between": ms_between,
               "ms_within": ms_within},
    ), dropped, no_count)


def welch_anova(groups: Mapping[str, Weighted], *, alternative: str = "two-sided",
                confidence: float = 0.95) -> Result:
    """``multigroup.welch_anova`` of the repeated records; each group is (values, counts)."""
    cleaned, dropped, no_count, notes = _groups(groups, alternative, confidence)
    plain = _delegate_groups(cleaned)
    if plain is not None:
        return _with_rows(multigroup.welch_anova(plain, alternative=alternative, confidence=confidence),
                          dropped, no_count)
    summaries = [weighted_describe(label, v, c) for label, (v, c) in cleaned.items()]
    for summary in summaries:
        if summary["sd"] == 0.0:
            raise NotEnoughDataError(coded(Skip.GROUP_CONSTANT_WELCH, label=summary["label"], value=summary["mean"]))
    f, df1, df2 = multigroup.welch_statistic(summaries)
    n_total = int(sum(summary["n"] for summary in summaries))
    effect = multigroup._weighted_share(f * df1, df1, df2, n_total, confidence)
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.MULTI_GROUP_CONTINUOUS, test=Test.WELCH_ANOVA,
        statistic_name="F", statistic=f, df=[df1, df2], p_value=float(stats.f.sf(f, df1, df2)),
        p_method=PMethod.ASYMPTOTIC, alternative="two-sided", confidence=confidence, n=n_total,
        estimate=multigroup._largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP, confidence), effect=effect,
        groups=summaries, notes=notes,
    ), dropped, no_count)


def kruskal_wallis_h(groups: Sequence[tuple[np.ndarray, np.ndarray]]) -> float:
    """``multigroup.kruskal_wallis_h`` of the repeated records.

    Examples
    --------
    >>> from statmargin.stats.multigroup import kruskal_wallis_h as plain
    >>> groups = [(np.array([4.2, 5.1]), np.array([2, 3])), (np.array([5.9, 4.2]), np.array([1, 4])),
    ...           (np.array([4.9, 6.0]), np.array([3, 2]))]
    >>> math.isclose(kruskal_wallis_h(groups), plain([np.repeat(v, c) for v, c in groups]), rel_tol=1e-12)
    True
    """
    values = np.concatenate([v for v, _ in groups])
    counts = np.concatenate([c for _, c in groups]).astype(float)
    ranks, ties = midranks(values, counts)
    n = int(counts.sum())
    rank_term, start = 0.0, 0
    for v, c in groups:
        rank_sum = math.fsum(c * ranks[start : start + v.size])
        rank_term += rank_sum * rank_sum / float(c.sum())
        start += v.size
    return float(multigroup._tie_corrected_h(np.array(rank_term), float(np.sum(ties**3 - ties)), n))


def kruskal_wallis(groups: Mapping[str, Weighted], *, alternative: str = "two-sided",
                   confidence: float = 0.95) -> Result:
    """``multigroup.kruskal_wallis`` of the repeated records; each group is (values, counts).

    Notes
    -----
    H, its p-value, the estimate and the group summaries equal the repeated data's;
    epsilon-squared and its interval come from H alone (``multigroup._epsilon_squared``),
    so they equal the repeated data's too, in memory linear in the distinct values.
    """
    cleaned, dropped, no_count, notes = _groups(groups, alternative, confidence)
    plain = _delegate_groups(cleaned)
    if plain is not None:
        return _with_rows(multigroup.kruskal_wallis(plain, alternative=alternative, confidence=confidence),
                          dropped, no_count)
    parts = list(cleaned.values())
    sizes = [_total(c) for _, c in parts]
    n_total = sum(sizes)
    h = kruskal_wallis_h(parts)
    df = len(parts) - 1
    if min(sizes) < 5:
        common.caveat(notes, coded(Note.KRUSKAL_SMALL_GROUPS, limit=Count(KRUSKAL_SMALL_GROUP)))
    value, low, high = multigroup._epsilon_squared(h, len(parts), n_total, confidence)
    summaries = [weighted_describe(label, v, c) for label, (v, c) in cleaned.items()]
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.MULTI_GROUP_CONTINUOUS, test=Test.KRUSKAL_WALLIS,
        statistic_name="H", statistic=h, df=float(df), p_value=float(stats.chi2.sf(h, df)),
        p_method=PMethod.ASYMPTOTIC, alternative="two-sided", confidence=confidence, n=int(n_total),
        estimate=multigroup._largest_gap(summaries, "median", EstimateKind.LARGEST_MEDIAN_GAP),
        effect=Effect(EffectKind.EPSILON_SQUARED, value, low, high),
        groups=summaries, notes=notes,
        extra={"epsilon_squared_plugin": float(effects.epsilon_squared(h, n_total))},
    ), dropped, no_count)


# --------------------------------------------------------------------------- correlation


def _pairs(x: Any, y: Any, counts: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray, int, int]:
    a, b, c, dropped, no_count, _, _ = _paired_rows(x, y, counts, ("x", "y"))
    if _total(c) < 3:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_PAIRS, n=Count(_total(c)), minimum=3))
    return a, b, c, dropped, no_count


def _weighted_r(a: np.ndarray, b: np.ndarray, c: np.ndarray) -> float:
    """``correlation._pearson_coefficient`` of the repeated pairs."""
    da = a - weighted_mean(a, c)
    db = b - weighted_mean(b, c)
    r = math.fsum(c * da * db) / math.sqrt(math.fsum(c * da * da) * math.fsum(c * db * db))
    return max(-1.0, min(1.0, r))


def _no_spread(a: np.ndarray, b: np.ndarray, labels: tuple[str, str]) -> None:
    for values, label in ((a, labels[0]), (b, labels[1])):
        if np.all(values == values[0]):
            raise NotEnoughDataError(coded(Skip.NO_SPREAD, what=label, value=float(values[0])))


def pearson_r(x: Any, y: Any, counts: Any, *, labels: tuple[str, str] = ("first", "second"),
              alternative: str = "two-sided", confidence: float = 0.95) -> Result:
    """``correlation.pearson_r`` of the repeated pairs (each row a pair standing for ``count`` pairs)."""
    common.check_options(alternative, confidence)
    a, b, c, dropped, no_count = _pairs(x, y, counts)
    if _all_ones(c):
        return _with_rows(correlation.pearson_r(a, b, labels=labels, alternative=alternative,
                                                confidence=confidence), dropped, no_count)
    _no_spread(a, b, labels)
    n = _total(c)
    r = _weighted_r(a, b, c)
    df = n - 2
    t = correlation._t_of_r(r, df)
    notes: list[Coded] = []
    low, high = correlation._fisher_interval(r, n, alternative, confidence, notes)
    if abs(r) == 1.0:
        notes.append(coded(Note.PERFECT_LINE))
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.TWO_CONTINUOUS, test=Test.PEARSON_R, statistic_name="t",
        statistic=t, df=float(df), p_value=correlation._p_of_t(t, df, alternative), p_method=PMethod.ASYMPTOTIC,
        alternative=alternative, confidence=confidence, n=n,
        estimate=Estimate(EstimateKind.PEARSON_R, r, low, high), effect=Effect(EffectKind.PEARSON_R, r, low, high),
        groups=[weighted_describe(labels[0], a, c), weighted_describe(labels[1], b, c)], notes=notes,
        extra={"r_squared": r * r},
    ), dropped, no_count)


def spearman_rho(x: Any, y: Any, counts: Any, *, labels: tuple[str, str] = ("first", "second"),
                 alternative: str = "two-sided", confidence: float = 0.95) -> Result:
    """``correlation.spearman_rho`` of the repeated pairs (mid-ranks from the counts)."""
    common.check_options(alternative, confidence)
    a, b, c, dropped, no_count = _pairs(x, y, counts)
    if _all_ones(c):
        return _with_rows(correlation.spearman_rho(a, b, labels=labels, alternative=alternative,
                                                   confidence=confidence), dropped, no_count)
    _no_spread(a, b, labels)
    n = _total(c)
    rho = _weighted_r(midranks(a, c)[0], midranks(b, c)[0], c)
    s = (n**3 - n) / 6.0 * (1.0 - rho)
    df = n - 2
    t = correlation._t_of_r(rho, df)
    notes: list[Coded] = []
    se = math.sqrt((1.0 + rho * rho / 2.0) / (n - 3)) if n >= 4 else None
    low, high = correlation._fisher_interval(rho, n, alternative, confidence, notes, se)
    return _with_rows(Result(
        outcome="", exposure=None, design=Design.TWO_CONTINUOUS, test=Test.SPEARMAN_RHO, statistic_name="S",
        statistic=s, df=None, p_value=correlation._p_of_t(t, df, alternative), p_method=PMethod.ASYMPTOTIC,
        alternative=alternative, confidence=confidence, n=n,
        estimate=Estimate(EstimateKind.SPEARMAN_RHO, rho, low, high),
        effect=Effect(EffectKind.SPEARMAN_RHO, rho, low, high),
        groups=[weighted_describe(labels[0], a, c), weighted_describe(labels[1], b, c)], notes=notes,
        extra={"t": t, "t_df": float(df)},
    ), dropped, no_count)


# --------------------------------------------------------------------------- tables for the count designs


def weighted_counts(labels: Any, counts: Any, levels: Sequence[str] | None = None) -> dict[str, int]:
    """Records per category: the sum of the counts of each label's rows.

    Parameters
    ----------
    labels : array-like
        One category label per row (None or NaN: row left out).
    counts : array-like
        Records per row (whole numbers 0 or more; NaN: row left out).
    levels : sequence of str, optional
        Categories in display order (every category found when omitted, sorted);
        a level with no rows counts 0.

    Returns
    -------
    dict of str to int
        What ``collections.Counter`` of the repeated labels gives, for
        ``chi_square_goodness_of_fit`` and ``binomial_exact``.

    Examples
    --------
    >>> weighted_counts(["pass", "fail", "pass", None], [40, 3, 12, 5])
    {'fail': 3, 'pass': 52}
    """
    table, rows, _ = weighted_table(labels, np.zeros(len(labels), dtype=object), counts, row_levels=levels,
                                    col_levels=["0"])
    return {label: int(v) for label, v in zip(rows, table[:, 0], strict=True)}


def weighted_table(
    row_labels: Any, col_labels: Any, counts: Any, *, row_levels: Sequence[str] | None = None,
    col_levels: Sequence[str] | None = None,
) -> tuple[np.ndarray, list[str], list[str]]:
    """Records per pair of categories: the contingency table of the repeated rows.

    Parameters
    ----------
    row_labels, col_labels : array-like
        Labels per row (for McNemar's test: the first and second measurement).
    counts : array-like
        Records per row.
    row_levels, col_levels : sequence of str, optional
        Level orders (sorted labels found when omitted).

    Returns
    -------
    numpy.ndarray, list of str, list of str
        The int64 table and its row and column levels, for
        ``chi_square_independence``, ``fisher_exact`` and ``mcnemar``.

    Examples
    --------
    >>> table, rows, cols = weighted_table(["A", "A", "B"], ["yes", "no", "yes"], [12, 8, 5])
    >>> table.tolist(), rows, cols
    ([[8, 12], [0, 5]], ['A', 'B'], ['no', 'yes'])
    """
    c = check_counts(counts)
    r = np.asarray(row_labels, dtype=object).ravel()
    k = np.asarray(col_labels, dtype=object).ravel()
    if not (r.size == k.size == c.size):
        raise NotEnoughDataError(coded(Skip.LENGTH_MISMATCH, what=Subject.LABELS_AND_COUNTS, first=r.size,
                                       second=c.size))
    keep = np.isfinite(c) & np.array([_present(v) for v in r], dtype=bool) & np.array(
        [_present(v) for v in k], dtype=bool)
    r, k, c = r[keep].astype(str), k[keep].astype(str), c[keep]
    rows = list(row_levels) if row_levels is not None else sorted(set(r.tolist()))
    cols = list(col_levels) if col_levels is not None else sorted(set(k.tolist()))
    row_index = {label: i for i, label in enumerate(rows)}
    col_index = {label: j for j, label in enumerate(cols)}
    inside = np.array([a in row_index and b in col_index for a, b in zip(r, k, strict=True)], dtype=bool)
    table = np.zeros((len(rows), len(cols)), dtype=np.int64)
    if inside.any():
        i = np.array([row_index[a] for a in r[inside]], dtype=np.int64)
        j = np.array([col_index[b] for b in k[inside]], dtype=np.int64)
        np.add.at(table, (i, j), c[inside].astype(np.int64))
    return table, rows, cols


def _present(value: Any) -> bool:
    if value is None:
        return False
    return not (isinstance(value, float) and math.isnan(value))
