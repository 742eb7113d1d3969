"""One sample against a fixed value: one-sample t and Wilcoxon signed-rank.

The signed-rank machinery (exact null distribution, Hodges-Lehmann interval) lives
here and is reused by ``paired`` on the pairwise differences.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any, NamedTuple

import numpy as np
from scipy import optimize, stats

from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats import effects
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Skip, coded

EXACT_LIMIT = 50  # exact null distribution below this many non-zero differences (R's rule)


class MeanT(NamedTuple):
    """The numbers of a one-sample t-test of a mean against a fixed value."""

    summary: dict[str, Any]  # label, n, mean, sd, median of the values tested
    difference: float  # mean - mu
    t: float
    df: int
    ci_low: float
    ci_high: float
    effect: Effect


def mean_t(
    values: np.ndarray, mu: float, label: str, effect_kind: EffectKind, alternative: str, confidence: float
) -> MeanT:
    """One-sample t of ``values`` against ``mu``, shared by the one-sample and paired t-tests.

    Parameters
    ----------
    values : numpy.ndarray
        Finite values (or paired differences) with some spread, at least two.
    mu : float
        The fixed value.
    label : str
        Label of the summary of ``values``.
    effect_kind : EffectKind
        The standardized effect (Hedges' g, or g_z for differences).
    alternative, confidence
        Sidedness and level of the intervals.

    Returns
    -------
    MeanT
        Summary, mean - mu with its t interval, t on n - 1 df and the standardized
        effect J(n-1) (mean - mu) / sd with its noncentral-t interval.

    Examples
    --------
    Extra hours of sleep under drug 1 in R's ``sleep`` data (datasets::sleep), as
    ``t.test(extra[group == 1], mu = 0)``:

    >>> import math
    >>> from scipy import stats
    >>> extra = np.array([0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0])
    >>> tested = mean_t(extra, 0.0, "drug 1", EffectKind.HEDGES_G, "two-sided", 0.95)
    >>> round(tested.t, 4), tested.df, round(tested.ci_low, 4), round(tested.ci_high, 4)
    (1.3257, 9, -0.5298, 2.0298)
    >>> math.isclose(tested.t, stats.ttest_1samp(extra, 0.0).statistic)
    True
    """
    return mean_t_of_summary(common.describe(label, values), mu, effect_kind, alternative, confidence, values=values)


def mean_t_of_summary(
    summary: dict[str, Any], mu: float, effect_kind: EffectKind, alternative: str, confidence: float,
    values: np.ndarray | None = None, counts: np.ndarray | None = None,
) -> MeanT:
    """:func:`mean_t` from a summary (``n``, ``mean``, ``sd``), for callers that summarise counted rows.

    With ``values`` (and their ``counts``), the effect's interval also holds for
    non-normal data (``effects.standardized_mean_with_any_shape``).
    """
    n = summary["n"]
    se = summary["sd"] / math.sqrt(n)
    difference = summary["mean"] - mu
    t = difference / se
    df = n - 1
    low, high = common.t_interval(difference, se, df, alternative, confidence)
    effect = effects.standardized_effect(effect_kind, t, df, 1.0 / math.sqrt(n), alternative, confidence)
    if values is not None:
        effect = effects.standardized_mean_with_any_shape(effect, values, mu, alternative, confidence, counts)
    return MeanT(summary, difference, t, df, low, high, effect)


def one_sample_t(
    x: np.ndarray,
    *,
    mu: float = 0.0,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """One-sample t-test of the mean against ``mu``.

    Parameters
    ----------
    x : numpy.ndarray
        Outcome values (NaN dropped and counted in ``n_excluded``).
    mu : float
        The fixed value the mean is compared with.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the mean is above ``mu``.
    confidence : float
        Level of the confidence intervals.

    Returns
    -------
    Result
        Estimate "mean difference from {mu}" (mean - mu) with a t interval; effect
        Hedges' g = J(n-1) (mean - mu) / sd with a noncentral-t interval.

    Notes
    -----
    Assumes independent values whose mean is close to normally distributed (roughly
    normal data or a large sample). Matches R's ``t.test(x, mu = mu)``.

    References
    ----------
    Student (1908). The probable error of a mean. Biometrika 6(1):1-25.
    doi:10.1093/biomet/6.1.1

    Examples
    --------
    Extra hours of sleep under drug 1 in R's ``sleep`` data (datasets::sleep,
    group 1; Cushny & Peebles 1905 as given by Student 1908), tested against 0:

    >>> import math
    >>> from scipy import stats
    >>> extra = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
    >>> result = one_sample_t(extra, mu=0.0)
    >>> round(result.statistic, 4), result.df, round(result.p_value, 4)
    (1.3257, 9.0, 0.2176)
    >>> round(result.estimate.ci_low, 4), round(result.estimate.ci_high, 4)
    (-0.5298, 2.0298)
    >>> math.isclose(result.p_value, stats.ttest_1samp(extra, 0.0).pvalue)
    True
    """
    common.check_options(alternative, confidence)
    values, dropped = common.clean(x)
    common.require_count(values, 2, "the outcome")
    common.require_spread(values, "the outcome")
    tested = mean_t(values, mu, "all", EffectKind.HEDGES_G, alternative, confidence)
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_CONTINUOUS,
        test=Test.ONE_SAMPLE_T,
        statistic_name="t",
        statistic=tested.t,
        df=float(tested.df),
        p_value=common.p_from_t(tested.t, tested.df, alternative),
        p_method=PMethod.ASYMPTOTIC,
        alternative=alternative,
        confidence=confidence,
        n=int(values.size),
        n_excluded=dropped,
        estimate=Estimate(
            EstimateKind.MEAN_DIFFERENCE_FROM_VALUE, tested.difference, tested.ci_low, tested.ci_high,
            reference=float(mu),
        ),
        effect=tested.effect,
        groups=[tested.summary],
        against=mu,
    )


def wilcoxon_signed_rank(
    x: np.ndarray,
    *,
    mu: float = 0.0,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    exact: bool | str = "auto",
    correct: bool = True,
) -> Result:
    """Wilcoxon signed-rank test of the centre of ``x`` against ``mu``.

    Parameters
    ----------
    x : numpy.ndarray
        Outcome values (NaN dropped).
    mu : float
        The fixed value.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: values tend to lie above ``mu``.
    confidence : float
        Level of the interval for the pseudo-median.
    exact : {"auto", True, False}
        ``"auto"``: exact null distribution when fewer than 50 non-zero differences,
        no ties and no zero differences; otherwise the normal approximation.
        ``True`` asks for exact but still falls back (with a note) when ties or zeros
        make it impossible.
    correct : bool
        Continuity correction in the normal approximation (R's default ``TRUE``).

    Returns
    -------
    Result
        Statistic V (sum of ranks of positive differences x - mu, as R reports it);
        estimate "pseudo-median" of x (Hodges-Lehmann: median of the Walsh averages)
        with its interval; effect matched-pairs rank-biserial r.

    Notes
    -----
    Zero differences are dropped before ranking (Wilcoxon's convention, as R does),
    also for the pseudo-median and its interval (as R does), and their count is reported in ``extra["n_zero_differences"]``. The approximate p uses
    the tie-corrected variance. The interval follows R's ``wilcox.test(conf.int =
    TRUE)``: order statistics of Walsh averages (exact) or inversion of the
    approximate statistic (approximate). On the approximate path the pseudo-median is
    selected without listing all n (n + 1) / 2 Walsh averages, so memory stays O(n).
    The test assumes differences symmetric about their centre.

    References
    ----------
    Wilcoxon, F. (1945). Individual comparisons by ranking methods. Biometrics
    Bulletin 1(6):80-83. doi:10.2307/3001968
    Hodges, J. L., & Lehmann, E. L. (1963). Estimates of location based on rank tests.
    Annals of Mathematical Statistics 34(2):598-611. doi:10.1214/aoms/1177704172

    Examples
    --------
    First measurements of the depression data in R's ``?wilcox.test`` example
    (Hollander & Wolfe 1973, p. 29), tested against a centre of 1. With no ties
    and no zero differences the p-value is exact:

    >>> import math
    >>> import numpy as np
    >>> from scipy import stats
    >>> x = [1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30]
    >>> result = wilcoxon_signed_rank(x, mu=1.0)
    >>> result.statistic, result.p_method, round(result.p_value, 4)
    (43.0, 'exact', 0.0117)
    >>> round(result.estimate.value, 4), round(result.estimate.ci_low, 4), round(result.estimate.ci_high, 4)
    (1.725, 1.165, 2.37)
    >>> scipy_p = stats.wilcoxon(np.array(x) - 1.0, method="exact").pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True
    """
    common.check_options(alternative, confidence)
    values, dropped = common.clean(x)
    common.require_count(values, 1, "the outcome")
    result = signed_rank_result(
        values,
        mu=mu,
        alternative=alternative,
        confidence=confidence,
        exact=exact,
        correct=correct,
        what="the outcome",
    )
    result.design = Design.ONE_SAMPLE_CONTINUOUS
    result.groups = [common.describe("all", values)]
    result.n_excluded = dropped
    result.against = mu
    result.estimate = Estimate(EstimateKind.PSEUDO_MEDIAN, *_estimate_parts(result.estimate))
    return result


def _estimate_parts(estimate: Estimate | None) -> tuple[float | None, float | None, float | None]:
    """Value and bounds of an estimate (helper for renaming)."""
    assert estimate is not None
    return estimate.value, estimate.ci_low, estimate.ci_high


def signed_rank_result(
    values: np.ndarray,
    *,
    mu: float,
    alternative: str,
    confidence: float,
    exact: bool | str,
    correct: bool,
    what: str,
) -> Result:
    """Signed-rank test core shared by the one-sample and paired versions.

    Parameters
    ----------
    values : numpy.ndarray
        Finite values (or paired differences).
    mu : float
        Null centre.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: values tend to lie above ``mu``.
    confidence : float
        Level of the interval for the pseudo-median.
    exact : {"auto", True, False}
        As for :func:`wilcoxon_signed_rank`.
    correct : bool
        Continuity correction in the normal approximation.
    what : str
        Plain name for messages ("the outcome", "the differences").

    Returns
    -------
    Result
        With test, statistic, p, estimate (pseudo-median of ``values``), effect and
        notes filled; the caller sets design, groups and names.

    Notes
    -----
    Same conventions as :func:`wilcoxon_signed_rank`: zero differences from ``mu``
    are dropped before ranking, ties get mid-ranks, and the exact null distribution
    is used only with fewer than 50 non-zero differences, no ties and no zeros.

    References
    ----------
    Wilcoxon, F. (1945). Individual comparisons by ranking methods. Biometrics
    Bulletin 1(6):80-83. doi:10.2307/3001968

    Examples
    --------
    The core on values already cleaned (the public wrappers call it):

    >>> import numpy as np
    >>> values = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
    >>> core = signed_rank_result(values, mu=1.0, alternative="two-sided", confidence=0.95,
    ...                           exact="auto", correct=True, what="the outcome")
    >>> core.test, core.statistic, round(core.p_value, 4), core.extra["n_zero_differences"]
    ('wilcoxon_signed_rank', 43.0, 0.0117, 0)
    """
    common.check_exact(exact)
    shifted = values - mu
    nonzero = shifted[shifted != 0]
    n_zero = int(shifted.size - nonzero.size)
    if nonzero.size == 0:
        raise common.NotEnoughDataError(coded(Skip.ALL_EQUAL_TARGET, what=what, value=float(mu)))
    n = nonzero.size
    ranks = stats.rankdata(np.abs(nonzero))
    v_plus = float(ranks[nonzero > 0].sum())
    ties = common.has_ties(ranks)
    notes: list[Coded] = []
    can_be_exact = n < EXACT_LIMIT and not ties and n_zero == 0
    use_exact = can_be_exact and exact in ("auto", True)
    if exact is True and not can_be_exact:
        common.caveat(notes, coded(Note.EXACT_RULED_OUT, one_sample=True))
    if n_zero:
        notes.append(coded(Note.ZEROS_DROPPED, n=Count(n_zero), value=float(mu)))
    # R's convention: the estimate and interval use the values left after dropping zeros.
    kept = nonzero + mu
    if use_exact:  # fewer than 50 values: listing the n (n + 1) / 2 Walsh averages is cheap
        walsh = _walsh_averages(kept)
        centre = float(np.median(walsh))
        p_value = _signed_rank_exact_p(v_plus, n, alternative)
        p_method = PMethod.EXACT
        low, high = order_statistic_interval(walsh, signed_rank_counts(n), 2**n, alternative, confidence)
        notes.append(coded(Note.EXACT_P, per_group=False))
    else:  # possibly many values: select the median Walsh average without listing them all
        centre = common.median_walsh_average(kept)
        z = _signed_rank_z(nonzero, alternative, correct)
        p_value = common.p_from_z(z, alternative)
        p_method, approximation_note = common.normal_approximation(correct)
        low, high = _signed_rank_approx_interval(kept, alternative, confidence, correct, notes)
        notes.append(approximation_note)
    effect = effects.rank_biserial_signed(v_plus, n, alternative, confidence)
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_CONTINUOUS,
        test=Test.WILCOXON_SIGNED_RANK,
        statistic_name="V",
        statistic=v_plus,
        df=None,
        p_value=p_value,
        p_method=p_method,
        alternative=alternative,
        confidence=confidence,
        n=int(values.size),
        estimate=Estimate(EstimateKind.PSEUDO_MEDIAN, centre, low, high),
        effect=effect,
        notes=notes,
        extra={"n_zero_differences": n_zero, "n_ranked": int(n), "ties": bool(ties)},
    )


def signed_rank_counts(n: int) -> list[int]:
    """Number of sign patterns giving each V = 0..n(n+1)/2 (exact null distribution).

    Parameters
    ----------
    n : int
        Number of non-zero, untied differences.

    Returns
    -------
    list of int
        ``counts[v]`` is the number of the 2^n sign patterns whose positive ranks sum
        to v; dividing by 2^n gives R's ``dsignrank(v, n)``.

    Notes
    -----
    Built by adding one rank at a time: ``c_k(v) = c_{k-1}(v) + c_{k-1}(v - k)``.
    Python integers keep the counts exact for any n.

    References
    ----------
    Wilcoxon, F. (1945). Individual comparisons by ranking methods. Biometrics
    Bulletin 1(6):80-83. doi:10.2307/3001968

    Examples
    --------
    For n = 3 the 2^3 = 8 sign patterns give V = 0..6 with these counts:

    >>> signed_rank_counts(3)
    [1, 1, 1, 2, 1, 1, 1]
    >>> sum(signed_rank_counts(10)) == 2**10
    True
    """
    counts = [1]
    for k in range(1, n + 1):
        grown = counts + [0] * k
        for v in range(k, len(grown)):
            grown[v] += counts[v - k]
        counts = grown
    return counts


def _cumulative(counts: list[int]) -> list[int]:
    """Running totals of integer counts."""
    total, out = 0, []
    for c in counts:
        total += c
        out.append(total)
    return out


def exact_p_from_counts(counts: list[int], total: int, observed: float, alternative: str) -> float:
    """Exact p of a rank statistic from its null counts (R's ``psignrank``/``pwilcox`` rules).

    Parameters
    ----------
    counts : list of int
        ``counts[s]`` arrangements give statistic s = 0..len(counts) - 1 (symmetric).
    total : int
        Number of equally likely arrangements (the sum of ``counts``).
    observed : float
        Observed statistic (rounded to a whole number).
    alternative : {"two-sided", "greater", "less"}
        ``greater``: large values are evidence.

    Returns
    -------
    float
        One tail, or for two-sided questions the smaller tail doubled (capped at 1).

    Examples
    --------
    Hamilton depression scores at two visits, from R's ``?wilcox.test`` example
    (Hollander & Wolfe 1973, p. 29): V = 40 of 9 untied differences.

    >>> import math
    >>> from scipy import stats
    >>> x = [1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30]
    >>> y = [0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29]
    >>> p = exact_p_from_counts(signed_rank_counts(9), 2**9, 40.0, "greater")
    >>> round(p, 4), math.isclose(p, stats.wilcoxon(x, y, alternative="greater", method="exact").pvalue)
    (0.0195, True)
    """
    cumulative = _cumulative(counts)
    s = int(round(observed))

    def lower(q: int) -> float:  # P(S <= q)
        return 0.0 if q < 0 else cumulative[min(q, len(cumulative) - 1)] / total

    def upper(q: int) -> float:  # P(S >= q)
        return 1.0 - lower(q - 1)

    if alternative == "greater":
        return upper(s)
    if alternative == "less":
        return lower(s)
    p = upper(s) if s > (len(counts) - 1) / 2 else lower(s)
    return min(1.0, 2.0 * p)


def _signed_rank_exact_p(v_plus: float, n: int, alternative: str) -> float:
    """Exact p of V as R's ``psignrank`` rules give it (two-sided = doubled smaller tail)."""
    return exact_p_from_counts(signed_rank_counts(n), 2**n, v_plus, alternative)


def _quantile_from_counts(counts: list[int], total: int, probability: float) -> int:
    """Smallest q with P(X <= q) >= probability (R's qsignrank/qwilcox, same 10 eps fuzz)."""
    target = probability - 10 * np.finfo(float).eps
    running = 0
    for q, c in enumerate(counts):
        running += c
        if running / total >= target:
            return q
    return len(counts) - 1


def _walsh_averages(values: np.ndarray) -> np.ndarray:
    """All (x_i + x_j) / 2 for i <= j, sorted."""
    i, j = np.triu_indices(values.size)
    return np.sort((values[i] + values[j]) / 2.0)


def order_statistic_interval(
    ordered: np.ndarray, counts: list[int], total: int, alternative: str, confidence: float
) -> tuple[float, float]:
    """Exact interval from order statistics, with cut-offs from a rank statistic's null counts.

    Parameters
    ----------
    ordered : numpy.ndarray
        Sorted Walsh averages or pairwise differences, one per value of the statistic
        above zero (``len(counts) - 1`` of them).
    counts, total
        Null counts of the statistic and their sum, as for :func:`exact_p_from_counts`.
    alternative, confidence
        Sidedness and level; one-sided questions get an open bound.

    Returns
    -------
    float, float
        Lower and upper bound (R's ``wilcox.test(conf.int = TRUE)`` rule).

    Examples
    --------
    First measurements of the depression data in R's ``?wilcox.test`` example
    (Hollander & Wolfe 1973, p. 29): the exact 95% interval of the pseudo-median
    from the 45 sorted Walsh averages, as ``wilcox.test(x, conf.int = TRUE)``:

    >>> x = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
    >>> walsh = _walsh_averages(x)
    >>> low, high = order_statistic_interval(walsh, signed_rank_counts(9), 2**9, "two-sided", 0.95)
    >>> round(low, 4), round(high, 4)
    (1.165, 2.37)
    """
    m = len(counts) - 1
    alpha = 1.0 - confidence
    if alternative == "two-sided":
        qu = max(_quantile_from_counts(counts, total, alpha / 2.0), 1)
        return float(ordered[qu - 1]), float(ordered[m - qu])
    qu = max(_quantile_from_counts(counts, total, alpha), 1)
    if alternative == "greater":
        return float(ordered[qu - 1]), math.inf
    return -math.inf, float(ordered[m - qu])


def _signed_rank_z(shifted_nonzero: np.ndarray, alternative: str, correct: bool) -> float:
    """Standardized V with tie-corrected variance and optional continuity correction."""
    ranks = stats.rankdata(np.abs(shifted_nonzero))
    return signed_rank_z(float(ranks[shifted_nonzero > 0].sum()), shifted_nonzero.size, common.tie_counts(ranks),
                         alternative, correct)


def signed_rank_z(v_plus: float, n: float, tie_sizes: np.ndarray, alternative: str, correct: bool) -> float:
    """Standardized V from its value, the number of non-zero differences and the tied-set sizes."""
    centred = v_plus - n * (n + 1) / 4.0
    sigma = math.sqrt(n * (n + 1) * (2 * n + 1) / 24.0 - float(np.sum(tie_sizes**3 - tie_sizes)) / 48.0)
    if sigma == 0.0:
        return 0.0
    return (centred - common.continuity_correction(centred, alternative, correct)) / sigma


def _signed_rank_approx_interval(
    values: np.ndarray, alternative: str, confidence: float, correct: bool, notes: list[Coded]
) -> tuple[float, float]:
    """Interval from inverting the approximate signed-rank statistic in the centre d.

    Notes
    -----
    The standardized statistic of ``values - d`` is a decreasing step function of d;
    see :func:`invert_centre_statistic`.
    """

    def statistic(d: float) -> float:
        shifted = values - d
        return _signed_rank_z(shifted[shifted != 0], alternative, correct)

    return invert_centre_statistic(statistic, float(values.min()), float(values.max()), alternative, confidence,
                                   notes)


def invert_centre_statistic(
    statistic: Callable[[float], float], low_end: float, high_end: float, alternative: str, confidence: float,
    notes: list[Coded],
) -> tuple[float, float]:
    """Bounds where a decreasing standardized statistic of the centre crosses the normal quantiles.

    Notes
    -----
    Each bound is found by bracketing root search to 1e-12 (R's ``wilcox.test`` uses
    ``uniroot`` at tolerance 1e-4, so bounds agree to about 1e-4). When a bound cannot
    be reached inside the data's range, the range is returned with a note.
    """
    at_low, at_high = statistic(low_end), statistic(high_end)
    q_lower, q_upper = common.z_quantiles(alternative, confidence)
    reachable = (q_lower is None or at_low >= q_lower) and (q_upper is None or at_high <= q_upper)
    if not reachable:
        common.caveat(notes, coded(Note.CI_NOT_REACHABLE, confidence=confidence))
        return low_end, high_end

    def root(q: float) -> float:
        return float(optimize.brentq(lambda d: statistic(d) - q, low_end, high_end, xtol=1e-12))

    low = -math.inf if q_lower is None else root(q_lower)
    high = math.inf if q_upper is None else root(q_upper)
    return low, high
