"""Three or more independent groups: one-way ANOVA, Welch's ANOVA, Kruskal-Wallis.

Sums of squares are computed in two passes around accurate means with compensated
sums, so data sharing many leading digits (NIST StRD SmLs07-09) keep their accuracy.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from scipy import stats

from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats import effects
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Skip, coded

BOOTSTRAP_RESAMPLES = 2000
# Kruskal-Wallis's chi-square p is a rough guide below this many values in a group (common practice).
KRUSKAL_SMALL_GROUP = 5
BOOTSTRAP_SEED = 20240917  # fixed so the same data always give the same interval


def _prepare(groups: Mapping[str, Any], alternative: str, confidence: float) -> tuple[dict[str, np.ndarray], int, list[Coded]]:
    """Clean every group, require two values each, at least two groups and some spread."""
    common.check_options(alternative, confidence)
    notes: list[Coded] = []
    if alternative != "two-sided":
        notes.append(coded(Note.MULTIGROUP_TWO_SIDED, alternative=alternative))
    cleaned: dict[str, np.ndarray] = {}
    dropped = 0
    for label, values in groups.items():
        kept, lost = common.clean(values, f"group {label}")
        common.require_count(kept, 2, f"group {label}")
        cleaned[str(label)] = kept
        dropped += lost
    if len(cleaned) < 2:
        raise common.NotEnoughDataError(coded(Skip.TOO_FEW_GROUPS, n=len(cleaned)))
    common.require_spread(np.concatenate(list(cleaned.values())), "the outcome in every group")
    return cleaned, dropped, notes


def sums_of_squares(groups: Mapping[str, np.ndarray]) -> tuple[float, float, list[float]]:
    """Between- and within-group sums of squares, computed accurately.

    Parameters
    ----------
    groups : mapping of label to numpy.ndarray
        Finite values per group.

    Returns
    -------
    float, float, list of float
        SSB, SSW and the group means.

    Notes
    -----
    Two-pass: the grand mean is an ``fsum`` mean refined by the mean residual; values
    are centred on it, group means of the centred values are computed the same way,
    and squared deviations are summed with ``math.fsum``. One-pass formulas
    (sum of squares minus n times the squared mean) lose every digit on data with many
    constant leading digits.

    References
    ----------
    Chan, T. F., Golub, G. H., & LeVeque, R. J. (1983). Algorithms for computing the
    sample variance: analysis and recommendations. The American Statistician
    37(3):242-247. doi:10.1080/00031305.1983.10483115

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import numpy as np
    >>> groups = {
    ...     "north": [4.2, 5.1, 3.9, 4.8, 5.5],
    ...     "centre": [5.9, 6.4, 5.2, 6.8, 6.1],
    ...     "south": [4.9, 5.6, 6.0, 5.3, 4.7],
    ... }
    >>> between, within, means = sums_of_squares({k: np.array(v) for k, v in groups.items()})
    >>> round(between, 4), round(within, 4), [round(m, 4) for m in means]
    (4.788, 4.228, [4.7, 6.08, 5.3])
    """
    arrays = list(groups.values())
    grand = common.accurate_mean(np.concatenate(arrays))
    # Centre on the grand mean first: for data sharing leading digits the subtraction
    # is exact (Sterbenz), so group means of the centred values keep every digit.
    centred = [values - grand for values in arrays]
    offsets = [common.accurate_mean(values) for values in centred]
    within = math.fsum(common.sum_of_squares(values, offset) for values, offset in zip(centred, offsets, strict=True))
    between = math.fsum(values.size * offset * offset for values, offset in zip(centred, offsets, strict=True))
    means = [grand + offset for offset in offsets]
    return between, within, means


def _share_of_variance(
    between: float, within: float, k: int, n_total: int, confidence: float
) -> tuple[Effect, dict[str, Any]]:
    """Eta-squared with the noncentral-F interval of the classic F, and omega-squared for ``extra``.

    Notes
    -----
    Both ANOVAs report this same descriptive share of variation, computed from the
    classic sums of squares (Welch's weighting does not enter it).
    """
    df1, df2 = k - 1, n_total - k
    classic_f = (between / df1) / (within / df2)
    low, high = effects.variance_share_interval(classic_f, df1, df2, n_total, confidence)
    effect = Effect(EffectKind.ETA_SQUARED, effects.eta_squared(between, between + within), low, high)
    omega = {
        EffectKind.OMEGA_SQUARED.value: effects.omega_squared(between, within, k, n_total),
        "omega_squared_ci": [low, high],
    }
    return effect, omega


def _largest_gap(summaries: list[dict[str, Any]], key: str, kind: EstimateKind) -> Estimate:
    """Largest difference between group ``key`` values (highest minus lowest), no interval.

    Notes
    -----
    One number that says how far apart the groups are in the outcome's units; the
    pairwise intervals belong to the follow-up comparisons.
    """
    high = max(summaries, key=lambda g: g[key])
    low = min(summaries, key=lambda g: g[key])
    return Estimate(kind, high[key] - low[key], levels=(str(high["label"]), str(low["label"])))


def one_way_anova(
    groups: Mapping[str, np.ndarray],
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Classic one-way ANOVA F test (equal variances assumed).

    Parameters
    ----------
    groups : mapping of label to numpy.ndarray
        Values per group, in display order (NaN dropped).
    alternative : str
        Accepted for a uniform call; the F test is always two-sided (noted if not).
    confidence : float
        Level of the effect-size interval.

    Returns
    -------
    Result
        F with df (k - 1, N - k); effect eta-squared with a noncentral-F interval;
        ``extra`` holds omega-squared, the sums of squares and mean squares. Estimate:
        largest difference between group means (highest minus lowest), no interval.

    Notes
    -----
    Matches R's ``oneway.test(y ~ g, var.equal = TRUE)`` and ``anova(lm(y ~ g))``.
    Assumes independent values, roughly normal residuals and equal variances.

    References
    ----------
    Fisher, R. A. (1925). Statistical Methods for Research Workers. Oliver & Boyd.

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
    >>> result = one_way_anova(groups)
    >>> round(result.statistic, 4), result.df, round(result.p_value, 4)
    (6.7947, [2.0, 12.0], 0.0106)
    >>> result.effect.name, round(result.effect.value, 4)
    ('eta-squared', 0.5311)
    >>> result.estimate.name, round(result.estimate.value, 4)
    ('largest difference between group means (centre - north)', 1.38)
    >>> math.isclose(result.p_value, stats.f_oneway(*groups.values()).pvalue)
    True
    """
    cleaned, dropped, notes = _prepare(groups, alternative, confidence)
    between, within, _ = sums_of_squares(cleaned)
    k = len(cleaned)
    n_total = sum(values.size for values in cleaned.values())
    df1, df2 = k - 1, n_total - k
    if within == 0.0:
        raise common.NotEnoughDataError(coded(Skip.NO_SPREAD_WITHIN_GROUPS))
    ms_between, ms_within = between / df1, within / df2
    f = ms_between / ms_within
    effect, omega = _share_of_variance(between, within, k, n_total, confidence)
    summaries = [common.describe(label, values) for label, values in cleaned.items()]
    return Result(
        outcome="",
        exposure=None,
        design=Design.MULTI_GROUP_CONTINUOUS,
        test=Test.ONE_WAY_ANOVA,
        statistic_name="F",
        statistic=f,
        df=[float(df1), float(df2)],
        p_value=float(stats.f.sf(f, df1, df2)),
        p_method=PMethod.ASYMPTOTIC,
        alternative="two-sided",
        confidence=confidence,
        n=int(n_total),
        n_excluded=dropped,
        estimate=_largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP),
        effect=effect,
        groups=summaries,
        notes=notes,
        extra={
            **omega,
            "ss_between": between,
            "ss_within": within,
            "ms_between": ms_between,
            "ms_within": ms_within,
        },
    )


def welch_anova(
    groups: Mapping[str, np.ndarray],
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Welch's one-way ANOVA, which does not assume equal variances.

    Parameters
    ----------
    groups, alternative, confidence
        As for :func:`one_way_anova`.

    Returns
    -------
    Result
        Welch's F with df (k - 1, 1 / (3 tmp)); effect eta-squared with the
        noncentral-F interval of the classic F (a descriptive share of variance, the
        same as for :func:`one_way_anova`; omega-squared in ``extra``). Estimate:
        largest difference between group means.

    Notes
    -----
    Matches R's ``oneway.test(y ~ g)`` (var.equal = FALSE). Every group needs some
    spread, because weights are n_i / s_i^2.

    References
    ----------
    Welch, B. L. (1951). On the comparison of several mean values: an alternative
    approach. Biometrika 38(3-4):330-336. doi:10.1093/biomet/38.3-4.330

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
    >>> result = welch_anova(groups)
    >>> round(result.statistic, 4), [round(df, 4) for df in result.df], round(result.p_value, 4)
    (5.727, [2.0, 7.9346], 0.0289)
    >>> scipy_p = stats.f_oneway(*groups.values(), equal_var=False).pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True
    """
    cleaned, dropped, notes = _prepare(groups, alternative, confidence)
    summaries = [common.describe(label, values) for label, values in cleaned.items()]
    for summary in summaries:
        if summary["sd"] == 0.0:
            raise common.NotEnoughDataError(
                coded(Skip.GROUP_CONSTANT_WELCH, label=summary["label"], value=summary["mean"])
            )
    k = len(summaries)
    f, df1, df2 = welch_statistic(summaries)
    between, within, _ = sums_of_squares(cleaned)
    n_total = int(sum(summary["n"] for summary in summaries))
    effect, omega = _share_of_variance(between, within, k, n_total, confidence)
    notes.append(coded(Note.WELCH_EFFECT_CLASSIC))
    return Result(
        outcome="",
        exposure=None,
        design=Design.MULTI_GROUP_CONTINUOUS,
        test=Test.WELCH_ANOVA,
        statistic_name="F",
        statistic=f,
        df=[df1, df2],
        p_value=float(stats.f.sf(f, df1, df2)),
        p_method=PMethod.ASYMPTOTIC,
        alternative="two-sided",
        confidence=confidence,
        n=n_total,
        n_excluded=dropped,
        estimate=_largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP),
        effect=effect,
        groups=summaries,
        notes=notes,
        extra=omega,
    )


def welch_statistic(summaries: list[dict[str, Any]]) -> tuple[float, float, float]:
    """Welch's F and its two df from group summaries (``n``, ``mean``, ``sd`` each; every sd above 0).

    Notes
    -----
    Weights w_i = n_i / s_i^2; F = sum w_i (m_i - m_w)^2 / ((k - 1) (1 + 2 (k - 2) tmp))
    with tmp = sum (1 - w_i / W)^2 / (n_i - 1) / (k^2 - 1) and df (k - 1, 1 / (3 tmp))
    (Welch 1951), as R's ``oneway.test``.
    """
    k = len(summaries)
    n = np.array([s["n"] for s in summaries], dtype=float)
    means = np.array([s["mean"] for s in summaries])
    weights = n / np.array([s["sd"] ** 2 for s in summaries])
    total_weight = math.fsum(weights)
    weighted_mean = math.fsum(weights * means) / total_weight
    tmp = math.fsum((1.0 - weights / total_weight) ** 2 / (n - 1.0)) / (k * k - 1.0)
    f = math.fsum(weights * (means - weighted_mean) ** 2) / ((k - 1.0) * (1.0 + 2.0 * (k - 2.0) * tmp))
    return f, float(k - 1), 1.0 / (3.0 * tmp)


def kruskal_wallis_h(groups: list[np.ndarray]) -> float:
    """Tie-corrected Kruskal-Wallis H of a list of groups (0 when all values are tied).

    Parameters
    ----------
    groups : list of numpy.ndarray
        Finite values per group.

    Returns
    -------
    float
        H = (12 / (N (N + 1)) sum R_i^2 / n_i - 3 (N + 1)) / (1 - sum(t^3 - t) / (N^3 - N)),
        with mid-ranks for ties and t the sizes of the tied sets.

    Notes
    -----
    Same statistic as R's ``kruskal.test``; returns 0 instead of dividing by zero
    when every value is tied.

    References
    ----------
    Kruskal, W. H., & Wallis, W. A. (1952). Use of ranks in one-criterion variance
    analysis. JASA 47(260):583-621. doi:10.1080/01621459.1952.10483441

    Examples
    --------
    Waiting times (hours) at three sites, five visits each (invented data):

    >>> import math
    >>> import numpy as np
    >>> from scipy import stats
    >>> arrays = [np.array([4.2, 5.1, 3.9, 4.8, 5.5]), np.array([5.9, 6.4, 5.2, 6.8, 6.1]),
    ...           np.array([4.9, 5.6, 6.0, 5.3, 4.7])]
    >>> round(kruskal_wallis_h(arrays), 4)
    7.28
    >>> math.isclose(kruskal_wallis_h(arrays), stats.kruskal(*arrays).statistic)
    True
    """
    values = np.concatenate(groups)
    ties = common.tie_counts(values)
    rank_term = _rank_term(stats.rankdata(values), [group.size for group in groups])
    return float(_tie_corrected_h(rank_term, float(np.sum(ties**3 - ties)), values.size))


def _rank_term(ranks: np.ndarray, sizes: list[int]) -> np.ndarray:
    """Sum over groups of (rank sum)^2 / n_i; groups lie side by side along the last axis."""
    rank_term = np.zeros(ranks.shape[:-1])
    start = 0
    for size in sizes:
        rank_sum = ranks[..., start : start + size].sum(axis=-1)
        rank_term += rank_sum * rank_sum / size
        start += size
    return rank_term


def _tie_corrected_h(rank_term: np.ndarray, tie_sum: np.ndarray | float, n: int) -> np.ndarray:
    """H from the rank term and sum(t^3 - t) of the tied sets; 0 where every value is tied."""
    denominator = 1.0 - tie_sum / (n**3 - n)
    raw = 12.0 * rank_term / (n * (n + 1)) - 3.0 * (n + 1)
    return np.divide(raw, denominator, out=np.zeros_like(raw), where=denominator > 0)


def kruskal_wallis(
    groups: Mapping[str, np.ndarray],
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Kruskal-Wallis rank test for a difference among groups.

    Parameters
    ----------
    groups, alternative, confidence
        As for :func:`one_way_anova`.

    Returns
    -------
    Result
        Tie-corrected H with k - 1 df (chi-square approximation); effect epsilon-squared
        H / (N - 1) with a seeded percentile bootstrap interval (2000 resamples within
        groups, seed fixed in ``BOOTSTRAP_SEED``). Estimate: largest difference between
        group medians (highest minus lowest), no interval.

    Notes
    -----
    Matches R's ``kruskal.test(y ~ g)``. The chi-square approximation is rough for very
    small groups (common practice: at least 5 per group; Hollander, Wolfe & Chicken,
    Nonparametric Statistical Methods, 3rd ed., section 6.1); a note says so.

    References
    ----------
    Kruskal, W. H., & Wallis, W. A. (1952). Use of ranks in one-criterion variance
    analysis. JASA 47(260):583-621. doi:10.1080/01621459.1952.10483441

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
    >>> result = kruskal_wallis(groups)
    >>> round(result.statistic, 4), result.df, round(result.p_value, 4)
    (7.28, 2.0, 0.0263)
    >>> result.effect.name, round(result.effect.value, 4)
    ('epsilon-squared', 0.52)
    >>> math.isclose(result.p_value, stats.kruskal(*groups.values()).pvalue)
    True
    """
    cleaned, dropped, notes = _prepare(groups, alternative, confidence)
    arrays = list(cleaned.values())
    n_total = sum(values.size for values in arrays)
    h = kruskal_wallis_h(arrays)
    df = len(arrays) - 1
    if min(values.size for values in arrays) < 5:
        common.caveat(notes, coded(Note.KRUSKAL_SMALL_GROUPS, limit=Count(KRUSKAL_SMALL_GROUP)))
    low, high = _epsilon_bootstrap(arrays, n_total, confidence)
    summaries = [common.describe(label, values) for label, values in cleaned.items()]
    return Result(
        outcome="",
        exposure=None,
        design=Design.MULTI_GROUP_CONTINUOUS,
        test=Test.KRUSKAL_WALLIS,
        statistic_name="H",
        statistic=h,
        df=float(df),
        p_value=float(stats.chi2.sf(h, df)),
        p_method=PMethod.ASYMPTOTIC,
        alternative="two-sided",
        confidence=confidence,
        n=int(n_total),
        n_excluded=dropped,
        estimate=_largest_gap(summaries, "median", EstimateKind.LARGEST_MEDIAN_GAP),
        effect=Effect(EffectKind.EPSILON_SQUARED, float(effects.epsilon_squared(h, n_total)), low, high),
        groups=summaries,
        notes=notes,
        extra={"bootstrap_resamples": BOOTSTRAP_RESAMPLES, "bootstrap_seed": BOOTSTRAP_SEED},
    )


def _epsilon_bootstrap(arrays: list[np.ndarray], n_total: int, confidence: float) -> tuple[float, float]:
    """Percentile bootstrap interval of epsilon-squared, resampling within each group.

    Notes
    -----
    Seeded (``BOOTSTRAP_SEED``) so results repeat exactly. Percentile intervals are
    common practice for rank effect sizes (Efron & Tibshirani 1993, An Introduction
    to the Bootstrap, ch. 13).
    """
    rng = np.random.default_rng(BOOTSTRAP_SEED)
    # All resamples at once: one row per resample, groups side by side in columns.
    resampled = np.concatenate(
        [group[rng.integers(0, group.size, (BOOTSTRAP_RESAMPLES, group.size))] for group in arrays], axis=1
    )
    rank_term = _rank_term(stats.rankdata(resampled, axis=1), [group.size for group in arrays])
    tie_sums = np.array([float(np.sum(t**3 - t)) for t in map(common.tie_counts, resampled)])
    draws = _tie_corrected_h(rank_term, tie_sums, n_total) / (n_total - 1.0)
    tail = (1.0 - confidence) / 2.0
    low, high = np.quantile(draws, [tail, 1.0 - tail])
    return float(low), float(high)
