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
from statmargin.stats import effects, relative
from statmargin.stats.aggregated import pairs_level
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Count, Note, Skip, coded

# Kruskal-Wallis's chi-square p is a rough guide below this many values in a group (common practice).
KRUSKAL_SMALL_GROUP = 5


def _summaries_with_spread(cleaned: Mapping[str, np.ndarray]) -> list[dict[str, Any]]:
    """Each group's summary; refuse a group without spread, which precision weights cannot weigh."""
    summaries = [common.describe(label, values) for label, values in cleaned.items()]
    for summary in summaries:
        if summary["sd"] == 0.0:
            raise common.NotEnoughDataError(
                coded(Skip.GROUP_CONSTANT_WELCH, label=summary["label"], value=summary["mean"])
            )
    return summaries


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
    """Eta-squared from the classic F by noncentral-F inversion; plug-in values for ``extra``.

    Notes
    -----
    The estimate is the median-unbiased population share lambda / (lambda + N) and the
    bounds come from the same inversion (``effects.variance_share``), so the estimate
    always lies inside its interval. The sample share SSB / SST (plug-in eta-squared)
    and omega-squared are kept in ``extra`` for comparison with other software.
    """
    df1, df2 = k - 1, n_total - k
    classic_f = (between / df1) / (within / df2)
    value, low, high = effects.variance_share(classic_f, df1, df2, n_total, confidence)
    effect = Effect(EffectKind.ETA_SQUARED, value, low, high)
    plug_in = {
        "eta_squared_plugin": effects.eta_squared(between, between + within),
        EffectKind.OMEGA_SQUARED.value: effects.omega_squared(between, within, k, n_total),
        "omega_squared_ci": [low, high],
    }
    return effect, plug_in


def _largest_gap(summaries: list[dict[str, Any]], key: str, kind: EstimateKind,
                 confidence: float | None = None) -> Estimate:
    """Largest difference between group ``key`` values (highest minus lowest).

    Notes
    -----
    One number that says how far apart the groups are in the outcome's units. With
    ``confidence`` (means only) it gets Welch's interval for that pair at the level
    that holds for all k(k-1)/2 pairs together (:func:`widest_mean_gap_interval`),
    as the widest pair is picked after looking. Medians get none here; the ANOVA-type
    rank test adds its own (``signtest.widest_median_gap``).
    """
    high = max(summaries, key=lambda g: g[key])
    low = min(summaries, key=lambda g: g[key])
    gap = high[key] - low[key]
    bounds: tuple[float | None, float | None] = (None, None)
    if confidence is not None and gap != 0:
        bounds = widest_mean_gap_interval(high, low, len(summaries), confidence)
    return Estimate(kind, gap, bounds[0], bounds[1], levels=(str(high["label"]), str(low["label"])))


def widest_mean_gap_interval(high: Mapping[str, Any], low: Mapping[str, Any], n_groups: int,
                             confidence: float) -> tuple[float | None, float | None]:
    """Welch's interval for ``high`` minus ``low`` means at the all-pairs (Bonferroni) level.

    Parameters
    ----------
    high, low : mapping
        Group summaries with ``mean``, ``sd`` and ``n``.
    n_groups : int
        How many groups the pair was picked from.
    confidence : float
        The level the interval holds at for all pairs together.

    Returns
    -------
    (low, high) : tuple
        The bounds, or (None, None) when a group has fewer than 2 values or no spread.

    Notes
    -----
    Written from the summaries so weighted and record-level groups share it; the
    formula is Welch's (Welch 1947, Biometrika 34:28-35) with the level of
    :func:`aggregated.pairs_level`.

    Examples
    --------
    Equal to scipy's Welch interval on the same two groups at the all-pairs level:

    >>> from scipy import stats
    >>> a, b = np.array([12.0, 15, 11, 19, 14]), np.array([9.0, 7, 10, 8, 12, 6])
    >>> ours = widest_mean_gap_interval({"mean": a.mean(), "sd": a.std(ddof=1), "n": 5},
    ...                                 {"mean": b.mean(), "sd": b.std(ddof=1), "n": 6}, 3, 0.95)
    >>> ref = stats.ttest_ind(a, b, equal_var=False).confidence_interval(1 - 0.05 / 3)
    >>> bool(np.allclose(ours, (ref.low, ref.high), rtol=1e-12))
    True
    """
    try:
        (n1, s1), (n2, s2) = (float(high["n"]), float(high["sd"])), (float(low["n"]), float(low["sd"]))
    except (KeyError, TypeError, ValueError):
        return None, None
    if min(n1, n2) < 2 or not (math.isfinite(s1) and math.isfinite(s2)) or s1 + s2 <= 0:
        return None, None
    v1, v2 = s1 * s1 / n1, s2 * s2 / n2
    df = (v1 + v2) ** 2 / (v1 * v1 / (n1 - 1) + v2 * v2 / (n2 - 1))
    level = pairs_level(confidence, n_groups)
    half = float(stats.t.ppf(0.5 + level / 2.0, df)) * math.sqrt(v1 + v2)
    gap = float(high["mean"]) - float(low["mean"])
    return gap - half, gap + half


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
        F with df (k - 1, N - k); effect eta-squared, the median-unbiased estimate
        of the population share with its noncentral-F interval (one inversion, so the
        estimate lies inside); ``extra`` holds the plug-in SSB / SST, omega-squared,
        the sums of squares and mean squares. Estimate: largest difference between
        group means (highest minus lowest), no interval.

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
    >>> result.effect.name, round(result.extra["eta_squared_plugin"], 4)
    ('eta-squared', 0.5311)
    >>> result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    True
    >>> result.estimate.name, round(result.estimate.value, 4)
    ('largest difference between group means (centre - north)', 1.38)
    >>> math.isclose(result.p_value, stats.f_oneway(*groups.values()).pvalue)
    True
    """
    cleaned, dropped, notes = common.prepare_groups(groups, alternative, confidence)
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
        estimate=_largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP, confidence),
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
        Welch's F with df (k - 1, 1 / (3 tmp)); effect the precision-weighted
        eta-squared from the noncentral F of Welch's own F (see ``_weighted_share``),
        so its interval agrees with the test. Estimate: largest difference between
        group means.

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
    cleaned, dropped, notes = common.prepare_groups(groups, alternative, confidence)
    summaries = _summaries_with_spread(cleaned)
    f, df1, df2 = welch_statistic(summaries)
    n_total = int(sum(summary["n"] for summary in summaries))
    effect = _weighted_share(f * df1, df1, df2, n_total, confidence)
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
        estimate=_largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP, confidence),
        effect=effect,
        groups=summaries,
        notes=notes,
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


def _weighted_share(noncentral_statistic: float, df1: float, df2: float, n_total: int,
                    confidence: float) -> Effect:
    """Precision-weighted share of variation between groups, from the test's own statistic.

    Parameters
    ----------
    noncentral_statistic : float
        The statistic on the chi-square scale: Welch's F times (k - 1), or the
        Alexander-Govern A.
    df1, df2 : float
        k - 1 and the denominator df (inf for a chi-square statistic).

    Notes
    -----
    Under an alternative the statistic is about noncentral with lambda =
    sum_i (n_i / s_i^2) (mean_i - weighted mean)^2, so lambda / (lambda + N) is eta-squared
    when the spreads are equal and weights each group by its precision when they are not.
    Estimate (median-unbiased) and bounds come from one noncentrality inversion of the
    test's own statistic, so the interval agrees with the test that is reported.
    """
    value, low, high = effects.variance_share(noncentral_statistic / df1, df1, df2, n_total, confidence)
    return Effect(EffectKind.ETA_SQUARED_WEIGHTED, value, low, high)


def alexander_govern(
    groups: Mapping[str, np.ndarray],
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    p_method: str = "asymptotic",
) -> Result:
    """Alexander-Govern test of equal means without assuming equal variances.

    Parameters
    ----------
    groups, alternative, confidence
        As for :func:`one_way_anova`.
    p_method : {"asymptotic", "auto", "permutation"}
        "auto" takes the p-value from permutations (:func:`alexander_govern_permutation_p`)
        when the smallest group has fewer than 15 values, as the rank tests do; never
        above 2000 values in all.

    Returns
    -------
    Result
        A (chi-square on k - 1 df) and p from ``scipy.stats.alexandergovern`` (or from
        permutations); effect: precision-weighted eta-squared with its interval from the
        noncentral chi-square; estimate: largest difference between group means with
        its all-pairs Welch interval (:func:`widest_mean_gap_interval`).

    Notes
    -----
    Each group's t of its mean against the precision-weighted mean is normalized
    (Hill 1970) and the squares summed. In our simulations
    (``simulations/choose_then_test.py``) it held its level better than Welch's ANOVA
    with many small groups (8 groups of 5: 0.056 against 0.071 for normal data), as
    Alexander & Govern (1994) and later comparisons report. Every group needs some
    spread, as weights are n_i / s_i^2.

    References
    ----------
    Alexander, R. A., & Govern, D. M. (1994). A new and simpler approximation for ANOVA
    under variance heterogeneity. Journal of Educational Statistics 19(2):91-101.
    doi:10.3102/10769986019002091

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
    >>> result = alexander_govern(groups)
    >>> check = stats.alexandergovern(*groups.values())
    >>> math.isclose(result.statistic, check.statistic), math.isclose(result.p_value, check.pvalue)
    (True, True)
    >>> result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    True
    """
    cleaned, dropped, notes = common.prepare_groups(groups, alternative, confidence)
    summaries = _summaries_with_spread(cleaned)
    values = list(cleaned.values())
    check = stats.alexandergovern(*values)
    p, method = float(check.pvalue), PMethod.ASYMPTOTIC
    if relative.use_permutation(p_method, [v.size for v in values]):
        p, method = alexander_govern_permutation_p(values, float(check.statistic)), PMethod.PERMUTATION
    result = alexander_govern_result(summaries, float(check.statistic), p, confidence)
    result.p_method = method
    result.n_excluded = dropped
    result.notes = notes
    return result


def alexander_govern_permutation_p(groups: list[np.ndarray], observed: float) -> float:
    """Seeded Monte Carlo permutation p of the Alexander-Govern statistic (the values reshuffled among groups).

    Notes
    -----
    In small groups the chi-square approximation lets the test reject too often: in
    800-1000 null runs at 0.05, 8 groups of 10 skewed (lognormal) values 0.093, 8 groups
    of 5 scores piled at a ceiling 0.079-0.081. The permutation p is exact when the
    groups could be swapped, and as the statistic is studentized (each group's mean
    over its own standard error) it stays asymptotically valid when spreads differ
    (Janssen 1997, Statistics & Probability Letters 36:9-21; Pauly, Brunner &
    Konietschke 2015, JRSS B 77:461-473; both recalled from memory). Over normal,
    skewed, t(3), ceiling-piled and unequal-spread (SDs 15 and 4, sizes 5 and 19)
    groups, 4 or 8 of them with 5 or 10 values, it rejected in 0.029-0.066 of runs.
    The draws are those of the rank tests (``relative.PERMUTATIONS``, same seed,
    batches bounded in memory); a draw in which a group has no spread counts as
    extreme.

    Examples
    --------
    >>> groups = [np.array([4.2, 5.1, 3.9, 4.8, 5.5]), np.array([5.9, 6.4, 5.2, 6.8, 6.1]),
    ...           np.array([4.9, 5.6, 6.0, 5.3, 4.7])]
    >>> a = stats.alexandergovern(*groups).statistic
    >>> p = alexander_govern_permutation_p(groups, a)
    >>> bool(0.0 < p < 0.05), p == alexander_govern_permutation_p(groups, a)  # seeded: the same p again
    (True, True)
    """
    sizes = [g.size for g in groups]
    starts = np.cumsum([0] + sizes[:-1])
    n = np.asarray(sizes, dtype=float)
    draws = []
    for rows in relative.permuted_batches(np.concatenate(groups), relative.PERMUTATIONS,
                                            relative.PERMUTATION_SEED):
        means = np.add.reduceat(rows, starts, axis=1) / n
        centred = rows - np.repeat(means, sizes, axis=1)
        variances = np.add.reduceat(centred * centred, starts, axis=1) / (n - 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            statistic = _alexander_govern_statistic(n, means, variances)
        draws.append(np.where(np.isnan(statistic), np.inf, statistic))
    return relative.permutation_p(observed, np.concatenate(draws))


def _alexander_govern_statistic(n: np.ndarray, means: np.ndarray, variances: np.ndarray) -> Any:
    """A = sum of Hill-normalized t's squared, over the last axis (groups); see :func:`alexander_govern_of_summaries`."""
    se = np.sqrt(variances / n)
    precision = 1.0 / se**2
    centre = np.sum(precision * means, axis=-1, keepdims=True) / np.sum(precision, axis=-1, keepdims=True)
    t = (means - centre) / se
    v = n - 1.0
    a = v - 0.5
    b = 48.0 * a**2
    c = np.sqrt(a * np.log1p(t**2 / v))
    z = c + (c**3 + 3 * c) / b - (4 * c**7 + 33 * c**5 + 240 * c**3 + 855 * c) / (10 * b**2 + 8 * b * c**4 + 1000 * b)
    return np.sum(z**2, axis=-1)


def alexander_govern_result(summaries: list[dict[str, Any]], a: float, p: float, confidence: float) -> Result:
    """The Result of an Alexander-Govern test from the groups' summaries, its statistic and p."""
    k = len(summaries)
    n_total = int(sum(s["n"] for s in summaries))
    return Result(
        outcome="",
        exposure=None,
        design=Design.MULTI_GROUP_CONTINUOUS,
        test=Test.ALEXANDER_GOVERN,
        statistic_name="A",
        statistic=a,
        df=float(k - 1),
        p_value=p,
        p_method=PMethod.ASYMPTOTIC,
        alternative="two-sided",
        confidence=confidence,
        n=n_total,
        estimate=_largest_gap(summaries, "mean", EstimateKind.LARGEST_MEAN_GAP, confidence),
        effect=_weighted_share(a, float(k - 1), math.inf, n_total, confidence),
        groups=summaries,
    )


def alexander_govern_of_summaries(summaries: list[dict[str, Any]]) -> tuple[float, float]:
    """Alexander-Govern statistic A and its chi-square p from each group's n, mean and SD.

    Notes
    -----
    Written out (``scipy.stats.alexandergovern`` needs the values) for rows that stand
    for several records: weights w_i = (n_i / s_i^2) / sum_j (n_j / s_j^2), the weighted
    mean m, t_i = (mean_i - m) / (s_i / sqrt(n_i)), and Hill's (1970) normalization of
    each t on n_i - 1 df: with a = n_i - 1.5, b = 48 a^2 and c = sqrt(a log(1 + t^2 / (n_i - 1))),
    z = c + (c^3 + 3c) / b - (4c^7 + 33c^5 + 240c^3 + 855c) / (10 b^2 + 8 b c^4 + 1000 b);
    A = sum z_i^2 on k - 1 df (Alexander & Govern 1994, eq. 5-7).

    Examples
    --------
    >>> groups = [[4.2, 5.1, 3.9, 4.8, 5.5], [5.9, 6.4, 5.2, 6.8, 6.1], [4.9, 5.6, 6.0, 5.3, 4.7]]
    >>> a, p = alexander_govern_of_summaries([common.describe(str(i), np.array(g)) for i, g in enumerate(groups)])
    >>> check = stats.alexandergovern(*groups)
    >>> math.isclose(a, check.statistic), math.isclose(p, check.pvalue)
    (True, True)
    """
    n = np.array([float(s["n"]) for s in summaries])
    means = np.array([float(s["mean"]) for s in summaries])
    variances = np.array([float(s["sd"]) for s in summaries]) ** 2
    statistic = float(_alexander_govern_statistic(n, means, variances))
    return statistic, float(stats.chi2.sf(statistic, len(summaries) - 1))


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
        Tie-corrected H with k - 1 df (chi-square approximation); effect
        epsilon-squared (see ``_epsilon_squared``: median-unbiased, with its
        noncentral-F interval on the ranks; the plug-in H / (N - 1) is in ``extra``).
        Estimate: largest difference between group medians (highest minus lowest),
        no interval.

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
    >>> result.effect.name, round(result.extra["epsilon_squared_plugin"], 4)
    ('epsilon-squared', 0.52)
    >>> result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    True
    >>> math.isclose(result.p_value, stats.kruskal(*groups.values()).pvalue)
    True
    """
    cleaned, dropped, notes = common.prepare_groups(groups, alternative, confidence)
    arrays = list(cleaned.values())
    n_total = sum(values.size for values in arrays)
    h = kruskal_wallis_h(arrays)
    df = len(arrays) - 1
    if min(values.size for values in arrays) < KRUSKAL_SMALL_GROUP:
        common.caveat(notes, coded(Note.KRUSKAL_SMALL_GROUPS, limit=Count(KRUSKAL_SMALL_GROUP)))
    value, low, high = _epsilon_squared(h, len(arrays), n_total, confidence)
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
        effect=Effect(EffectKind.EPSILON_SQUARED, value, low, high),
        groups=summaries,
        notes=notes,
        extra={"epsilon_squared_plugin": float(effects.epsilon_squared(h, n_total))},
    )


def _epsilon_squared(h: float, k: int, n_total: int, confidence: float) -> tuple[float, float, float]:
    """Epsilon-squared (the share of rank variance between groups) with its interval.

    Notes
    -----
    H / (N - 1) is exactly eta-squared of the one-way ANOVA of the pooled ranks, whose
    F is F_R = (H / (k - 1)) / ((N - 1 - H) / (N - k)) (Conover & Iman 1981). The
    estimate (median-unbiased) and interval invert the noncentral F of F_R, as for
    eta-squared (Steiger 2004), so the estimate lies inside the interval, the work is
    a few distribution-function calls whatever N (memory linear in rows, from the
    ranking alone), and the lower bound leaves 0 only when F_R is beyond its
    central 1 - a/2 quantile. Coverage was checked by simulation
    (tests/test_trust_figures.py, simulations/choose_then_test.py).

    References
    ----------
    Conover, W. J., & Iman, R. L. (1981). Rank transformations as a bridge between
    parametric and nonparametric statistics. The American Statistician 35(3):124-129.
    doi:10.1080/00031305.1981.10479327
    """
    df1, df2 = k - 1, n_total - k
    rest = (n_total - 1.0) - h
    if rest <= 0:  # every group apart: the share is 1
        return 1.0, 1.0, 1.0
    f_ranks = (h / df1) / (rest / df2)
    return effects.variance_share(f_ranks, df1, df2, n_total, confidence)
