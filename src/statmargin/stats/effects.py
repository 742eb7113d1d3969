"""Effect sizes and their confidence intervals, as small pure functions.

Each function takes plain numbers (statistics, sample sizes) and returns numbers or
an ``Effect``; none of them reads data frames or files.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np
from scipy import optimize, special, stats

from statmargin.results import Effect
from statmargin.vocabulary import EffectKind


def hedges_correction(df: float) -> float:
    """Small-sample bias factor J(df) that turns Cohen's d into Hedges' g.

    Parameters
    ----------
    df : float
        Degrees of freedom of the standard deviation used (n - 1 or n1 + n2 - 2).

    Returns
    -------
    float
        ``J = Gamma(df/2) / (sqrt(df/2) Gamma((df-1)/2))``, the exact factor.

    References
    ----------
    Hedges, L. V. (1981). Distribution theory for Glass's estimator of effect size
    and related estimators. Journal of Educational Statistics 6(2):107-128.
    doi:10.3102/10769986006002107
    """
    if df <= 1:
        return 1.0
    log_j = special.gammaln(df / 2.0) - 0.5 * math.log(df / 2.0) - special.gammaln((df - 1.0) / 2.0)
    return float(math.exp(log_j))


def _solve_decreasing(function: Callable[[float], float], target: float, start: float) -> float:
    """Root of ``function(x) = target`` for a decreasing function, bracketing outward from start."""
    step = max(1.0, abs(start))
    low, high = start - step, start + step
    for _ in range(200):
        if function(low) >= target:
            break
        low -= step
        step *= 2.0
    step = max(1.0, abs(start))
    for _ in range(200):
        if function(high) <= target:
            break
        high += step
        step *= 2.0
    return float(optimize.brentq(lambda x: function(x) - target, low, high, xtol=1e-12, rtol=1e-12))


def noncentrality_interval(
    t: float, df: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Confidence interval for the noncentrality parameter of an observed t statistic.

    Parameters
    ----------
    t : float
        Observed t statistic.
    df : float
        Its degrees of freedom.
    alternative : str
        ``"two-sided"``, ``"greater"`` (lower bound only) or ``"less"`` (upper bound only).
    confidence : float
        Confidence level.

    Returns
    -------
    float, float
        Lower and upper bound (``-inf``/``inf`` for an open side).

    Notes
    -----
    Inverts the noncentral t distribution function: the bounds are the noncentrality
    values under which the observed t sits at the upper and lower tail quantiles.
    For |t| above ``NONCENTRAL_T_LIMIT`` (or if the inversion fails numerically) the
    large-sample normal interval is used instead.

    References
    ----------
    Steiger, J. H., & Fouladi, R. T. (1997). Noncentrality interval estimation and the
    evaluation of statistical models. In: What If There Were No Significance Tests?
    Erlbaum, pp. 221-257.
    """

    def cdf(ncp: float) -> float:
        value = float(stats.nct.cdf(t, df, ncp)) if ncp != 0.0 else float(stats.t.cdf(t, df))
        if not math.isfinite(value):
            raise ValueError(f"nct.cdf({t}, {df}, {ncp}) = {value}")
        return value

    if abs(t) <= NONCENTRAL_T_LIMIT:
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                return _invert_noncentral_t(cdf, t, alternative, confidence)
        except (ValueError, RuntimeError):
            pass  # numerically out of reach: use the large-sample form below
    return _noncentrality_normal_interval(t, df, alternative, confidence)


# Beyond this |t| the noncentral t distribution function loses accuracy in SciPy;
# the large-sample interval is then accurate to well under 1% of its width.
NONCENTRAL_T_LIMIT = 37.0


def _invert_noncentral_t(
    cdf: Callable[[float], float], t: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Bounds where the noncentral t distribution function hits the tail probabilities."""
    if alternative == "two-sided":
        tail = (1.0 - confidence) / 2.0
        return _solve_decreasing(cdf, 1.0 - tail, t), _solve_decreasing(cdf, tail, t)
    if alternative == "greater":
        return _solve_decreasing(cdf, confidence, t), math.inf
    return -math.inf, _solve_decreasing(cdf, 1.0 - confidence, t)


def _noncentrality_normal_interval(
    t: float, df: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Large-sample interval ``t +/- z sqrt(1 + t^2 / (2 df))`` for the noncentrality.

    Notes
    -----
    The delta-method variance of Cohen's d (Hedges & Olkin 1985, Statistical Methods
    for Meta-Analysis, ch. 5, eq. 14), written on the noncentrality scale.
    """
    spread = math.sqrt(1.0 + t * t / (2.0 * df))
    if alternative == "two-sided":
        q = float(stats.norm.ppf(1.0 - (1.0 - confidence) / 2.0))
        return t - q * spread, t + q * spread
    q = float(stats.norm.ppf(confidence))
    if alternative == "greater":
        return t - q * spread, math.inf
    return -math.inf, t + q * spread


def standardized_effect(
    kind: EffectKind,
    t: float,
    df: float,
    scale: float,
    alternative: str,
    confidence: float,
) -> Effect:
    """Hedges-corrected standardized difference ``J(df) * t * scale`` with a noncentral-t CI.

    Parameters
    ----------
    kind : EffectKind
        Hedges' g or g_z.
    t, df : float
        The t statistic that standardizes the difference, and its degrees of freedom.
    scale : float
        Factor from t to Cohen's d: ``1/sqrt(n)`` (one sample, pairs) or
        ``sqrt(1/n1 + 1/n2)`` (two samples, pooled SD).
    alternative, confidence
        As for the test.

    Returns
    -------
    Effect
        Hedges' g = J(df) d (Hedges & Olkin 1985, Statistical Methods for
        Meta-Analysis), with the noncentral-t interval for the population standardized
        difference (Steiger & Fouladi 1997): the noncentrality bounds times ``scale``.

    Notes
    -----
    The bounds are not multiplied by J, as some software does: that shrinks the
    interval below its level (in ``simulations/choose_then_test.py`` 82-88% coverage
    at 5 to 10 values, where J is 0.8 to 0.9). The interval excludes 0 exactly when
    the t-test rejects, and g = J d lies inside it: J d is between 0 and d, and the
    near bound of a 95% interval is closer to 0 than J d whenever it has the sign of d
    (kept by taking the hull with g in any case).
    """
    correction = hedges_correction(df)
    low, high = noncentrality_interval(t, df, alternative, confidence)
    value = correction * t * scale
    return Effect(kind, value=value, ci_low=min(low * scale, value), ci_high=max(high * scale, value))


def standardized_mean_with_any_shape(effect: Effect, values: Any, mu: float, alternative: str,
                                     confidence: float, counts: Any = None) -> Effect:
    """Widen a one-sample (or paired) standardized mean's interval so it also holds for non-normal data.

    Parameters
    ----------
    effect : Effect
        Hedges' g (or g_z) with its noncentral-t interval (:func:`standardized_effect`).
    values : array_like
        The values (or paired differences) it was computed from.
    counts : array_like, optional
        How many records each value stands for (a count column); all 1 by default.
    mu, alternative, confidence
        As for the test.

    Returns
    -------
    Effect
        The same estimate; the interval is the union of the noncentral-t interval (exact
        for normal data) and the delta-method interval d +- z sqrt((1 + d^2 (kappa - 1) / 4
        - d gamma_1) / n) with the sample skewness gamma_1 and kurtosis kappa, and the
        jackknife interval d +- z SD_jack (leaving out one record at a time), all intervals
        of the population standardized mean (not shrunk by Hedges' J; see
        :func:`standardized_effect`).

    Notes
    -----
    The noncentral-t interval assumes normal data: with heavy tails (t with 3 df) it
    covered about 0.90 in the choose-then-test simulation at n = 30. The delta-method
    variance comes from Var(mean) = sigma^2 / n, Var(s) ~ sigma^2 (kappa - 1) / (4n) and
    Cov(mean, s) ~ mu_3 / (2 sigma n); it is the single-group case of Bonett's (2008)
    distribution-free interval (Psychological Methods 13(2), 99-109,
    doi:10.1037/1082-989X.13.2.99; form recalled from memory and re-derived here). For
    normal data it reduces to the usual (1 + d^2 / 2) / n, so the union barely widens.
    At 5 to 20 values the sample skewness and kurtosis understate the population's, so
    the delta-method part is too narrow; the jackknife variance tends to err the other
    way (Efron & Stein 1981, Annals of Statistics 9(3):586-596,
    doi:10.1214/aos/1176345462), and with it t(3) data of 10 values covered 96% under a
    shift instead of 93%. Its leave-one-out moments come from centred sums in O(n).
    With t(3) tails (no finite fourth moment) no part holds 93% beyond about 50 values
    under a shift: the SD converges too slowly (see docs/test-choice.md).

    Examples
    --------
    >>> import numpy as np
    >>> x = np.random.default_rng(1).standard_t(3, 30) + 0.6
    >>> n = x.size
    >>> plain = standardized_effect(EffectKind.HEDGES_G, x.mean() / (x.std(ddof=1) / n ** 0.5), n - 1,
    ...                             n ** -0.5, "two-sided", 0.95)
    >>> wide = standardized_mean_with_any_shape(plain, x, 0.0, "two-sided", 0.95)
    >>> bool(wide.ci_low <= plain.ci_low and wide.ci_high >= plain.ci_high and wide.value == plain.value)
    True
    """
    if effect.value is None or not math.isfinite(effect.value):
        return effect
    x = np.asarray(values, dtype=float)
    n, mean, m2, m3, m4 = _central_moments(x, counts)
    if n < 4 or not m2 > 0:
        return effect
    d = (mean - mu) / math.sqrt(m2 * n / (n - 1.0))
    skew, kurtosis = m3 / m2**1.5, m4 / m2**2
    variance = (1.0 + d * d * (kurtosis - 1.0) / 4.0 - d * skew) / n
    means, left_out_variances = _left_out_moments(x, mean, m2 * n, n)
    with np.errstate(divide="ignore", invalid="ignore"):
        jackknife = _jackknife_variance((means - mu) / np.sqrt(left_out_variances), counts)
    return _with_normal_interval(effect, d, (variance, jackknife), alternative, confidence)


def _left_out_moments(x: Any, mean: float, squares: float, n: float) -> tuple[Any, Any]:
    """Mean and variance of the records left when one record of each value is left out (O(n), from centred sums)."""
    centred = np.asarray(x, dtype=float) - mean
    return mean - centred / (n - 1.0), (squares - centred * centred * n / (n - 1.0)) / (n - 2.0)


def _jackknife_variance(left_out: Any, counts: Any) -> float:
    """Jackknife variance (n - 1)/n sum (theta_i - mean theta)^2 of the leave-one-record-out estimates.

    ``left_out[i]`` is the estimate without one of the ``counts[i]`` records of value i
    (the same for each of them, so each counts that many times; 1 each when ``counts``
    is None). NaN when undefined.
    """
    theta = np.asarray(left_out, dtype=float)
    c = np.ones(theta.size) if counts is None else np.asarray(counts, dtype=float)
    n = float(c.sum())
    if n < 3 or not np.all(np.isfinite(theta)):
        return math.nan
    centre = float(np.sum(c * theta)) / n
    return (n - 1.0) / n * float(np.sum(c * (theta - centre) ** 2))


def _with_normal_interval(effect: Effect, d: float, variances: tuple[float, ...], alternative: str,
                          confidence: float) -> Effect:
    """The effect with its interval widened to cover d +- z sqrt(v) for each usable variance v (one side if one-sided)."""
    one_sided = alternative in ("greater", "less")
    z = stats.norm.ppf(confidence if one_sided else 0.5 + confidence / 2.0)
    low, high = effect.ci_low, effect.ci_high
    for variance in variances:
        if not variance > 0:  # also False for NaN
            continue
        half = z * math.sqrt(variance)
        if alternative != "less" and low is not None and math.isfinite(low):
            low = min(low, d - half)
        if alternative != "greater" and high is not None and math.isfinite(high):
            high = max(high, d + half)
    return Effect(effect.kind, value=effect.value, ci_low=low, ci_high=high)


def _central_moments(values: Any, counts: Any = None) -> tuple[float, float, float, float, float]:
    """n, mean and the central moments m2, m3, m4 (denominator n) of the records; NaN moments without records.

    Elementwise sums rather than dot products: no BLAS threads competing for cores.
    """
    x = np.asarray(values, dtype=float)
    c = np.ones(x.size) if counts is None else np.asarray(counts, dtype=float)
    n = float(c.sum())
    if not n > 0:
        return 0.0, math.nan, math.nan, math.nan, math.nan
    mean = float(np.sum(c * x)) / n
    d = x - mean
    return n, mean, float(np.sum(c * d**2)) / n, float(np.sum(c * d**3)) / n, float(np.sum(c * d**4)) / n


def standardized_difference_with_any_shape(effect: Effect, a: Any, b: Any, alternative: str, confidence: float,
                                           counts_a: Any = None, counts_b: Any = None) -> Effect:
    """Widen Welch's Hedges' g (average-variance scale) interval so it also holds for non-normal groups.

    Parameters
    ----------
    effect : Effect
        Hedges' g with its noncentral-t interval from Welch's t (:func:`standardized_effect`).
    a, b : array_like
        The two groups' values (finite).
    counts_a, counts_b : array_like, optional
        How many records each value stands for (a count column); all 1 by default.
    alternative, confidence
        As for the test.

    Returns
    -------
    Effect
        The same estimate; the interval is the union of the noncentral-t one and the
        delta-method interval d +- z sqrt(V) of d = (mean_a - mean_b) / s, s^2 the average
        of the two variances, with

        V = (s_a^2 / n_a + s_b^2 / n_b) / s^2 - d (mu3_a / n_a - mu3_b / n_b) / (2 s^3)
            + d^2 sum_i s_i^4 (kappa_i - 1) / n_i / (16 s^4),

        mu3 each group's third central moment and kappa its kurtosis, and with the
        two-sample jackknife interval d +- z SD_jack (each group's leave-one-out variance
        added).

    Notes
    -----
    The two-group form of :func:`standardized_mean_with_any_shape`, from Var(mean_i) =
    s_i^2 / n_i, Var(s_i^2) ~ s_i^4 (kappa_i - 1) / n_i and Cov(mean_i, s_i^2) ~ mu3_i / n_i
    by the delta method (derived here, in the manner of Bonett 2008). For two normal
    groups of n it is 2 / n + d^2 / (4n), the usual large-sample variance of d, so the
    union barely widens; with skewed groups of 5 to 10 values the noncentral-t interval
    alone covered 84-88% under a shift in ``simulations/choose_then_test.py``, and with
    the delta-method part 88-89%; the jackknife part (see
    :func:`standardized_mean_with_any_shape`) brings lognormal groups of 10 to 92.7%.

    Examples
    --------
    >>> rng = np.random.default_rng(3)
    >>> a, b = rng.lognormal(0.5, 0.8, 10), rng.lognormal(0.0, 0.8, 10)
    >>> from statmargin.stats.twogroup import welch_t
    >>> plain = welch_t(a, b).effect  # already widened; the noncentral-t part alone is narrower or equal
    >>> bool(plain.ci_low <= plain.value <= plain.ci_high)
    True
    """
    if effect.value is None or not math.isfinite(effect.value):
        return effect
    groups = [_central_moments(a, counts_a), _central_moments(b, counts_b)]
    if any(n < 4 or m2 <= 0 for n, _, m2, _, _ in groups):
        return effect
    variances = [m2 * n / (n - 1.0) for n, _, m2, _, _ in groups]
    average = (variances[0] + variances[1]) / 2.0
    sd = math.sqrt(average)
    d = (groups[0][1] - groups[1][1]) / sd
    (na, _, m2a, m3a, m4a), (nb, _, m2b, m3b, m4b) = groups
    variance = (
        (variances[0] / na + variances[1] / nb) / average
        - d * (m3a / na - m3b / nb) / (2.0 * sd**3)
        + d * d * (variances[0] ** 2 * (m4a / m2a**2 - 1.0) / na + variances[1] ** 2 * (m4b / m2b**2 - 1.0) / nb)
        / (16.0 * average**2)
    )
    jackknife = 0.0  # groups are independent: the two leave-one-out variances add
    sides = ((a, counts_a, groups[0], groups[1][1], variances[1], 1.0),
             (b, counts_b, groups[1], groups[0][1], variances[0], -1.0))
    for values, counts, (n_own, mean_own, m2_own, _, _), other_mean, other_variance, sign in sides:
        means, left_out = _left_out_moments(values, mean_own, m2_own * n_own, n_own)
        with np.errstate(divide="ignore", invalid="ignore"):
            theta = sign * (means - other_mean) / np.sqrt((left_out + other_variance) / 2.0)
        jackknife += _jackknife_variance(theta, counts)
    return _with_normal_interval(effect, d, (variance, jackknife), alternative, confidence)


def fisher_z_interval(
    r: float, standard_error: float, alternative: str, confidence: float, edge: float = 1.0 - 1e-15
) -> tuple[float, float]:
    """Interval for a correlation-like quantity in (-1, 1) via Fisher's z = atanh(r).

    Parameters
    ----------
    edge : float
        ``r`` is held inside [-edge, edge] before the transform, so a perfect value
        gives finite bounds rather than NaN.

    Notes
    -----
    One-sided questions give a one-sided interval (open side +/-1). A perfect
    value (|r| = 1) stays inside its own interval: the held-in transform alone
    would put the near bound a rounding step short of it.
    """
    z = math.atanh(max(-edge, min(edge, r)))
    if alternative == "two-sided":
        q = float(stats.norm.ppf(1.0 - (1.0 - confidence) / 2.0))
        low, high = math.tanh(z - q * standard_error), math.tanh(z + q * standard_error)
    else:
        q = float(stats.norm.ppf(confidence))
        if alternative == "greater":
            low, high = math.tanh(z - q * standard_error), 1.0
        else:
            low, high = -1.0, math.tanh(z + q * standard_error)
    return min(low, r), max(high, r)


def rank_biserial_signed(
    v_plus: float, n: int, alternative: str, confidence: float
) -> Effect:
    """Matched-pairs rank-biserial correlation from the signed-rank sum V.

    Parameters
    ----------
    v_plus : float
        Sum of ranks of the positive differences (R's V), zeros already dropped.
    n : int
        Number of non-zero differences.

    Returns
    -------
    Effect
        ``r = (V+ - V-) / (V+ + V-) = 4 V / (n (n + 1)) - 1`` with a Fisher-z interval.

    Notes
    -----
    The interval takes the null standard deviation of r,
    ``s = sqrt(n (n + 1) (2 n + 1) / 6) / (n (n + 1) / 2)``, to the atanh scale by the
    delta method, s / (1 - r^2). Using s itself on the atanh scale, as for Pearson's r,
    assumes r's variance shrinks like (1 - r^2)^2 away from 0, which r's does not: that
    interval covered 67-85% under a shift in ``simulations/choose_then_test.py``. A
    perfect r = +/-1 is moved in by half a step of V (2 / (n (n + 1))) before the
    transform, a continuity-style adjustment so the interval does not collapse onto
    the boundary.

    References
    ----------
    Kerby, D. S. (2014). The simple difference formula: an approach to teaching
    nonparametric correlation. Comprehensive Psychology 3:11.IT.3.1.
    doi:10.2466/11.IT.3.1
    """
    total = n * (n + 1) / 2.0
    r = 2.0 * v_plus / total - 1.0
    se = math.sqrt(n * (n + 1) * (2 * n + 1) / 6.0) / total
    edge = 1.0 - 2.0 / (n * (n + 1))
    held = max(-edge, min(edge, r))
    low, high = fisher_z_interval(r, se / (1.0 - held * held), alternative, confidence, edge=edge)
    return Effect(EffectKind.RANK_BISERIAL_PAIRED, value=r, ci_low=low, ci_high=high)


def rank_biserial_two_sample(
    u_first: float, n1: int, n2: int, alternative: str, confidence: float
) -> Effect:
    """Rank-biserial correlation of two groups from the first group's U (R's W).

    Returns
    -------
    Effect
        ``r = 2 U1 / (n1 n2) - 1``: +1 when every value of the first group is above
        every value of the second, -1 for the reverse. Fisher-z interval with the null
        SD ``sqrt((n1 + n2 + 1) / (3 n1 n2))``; a perfect r = +/-1 is moved in by half
        a step of U (1 / (n1 n2)) before the transform so the interval does not
        collapse onto the boundary.

    References
    ----------
    Glass, G. V. (1966). Note on rank biserial correlation. Educational and
    Psychological Measurement 26(3):623-631. doi:10.1177/001316446602600307
    """
    r = 2.0 * u_first / (n1 * n2) - 1.0
    se = math.sqrt((n1 + n2 + 1) / (3.0 * n1 * n2))
    low, high = fisher_z_interval(r, se, alternative, confidence, edge=1.0 - 1.0 / (n1 * n2))
    return Effect(EffectKind.RANK_BISERIAL, value=r, ci_low=low, ci_high=high)


def eta_squared(between: float, total: float) -> float:
    """Share of the total sum of squares that lies between groups, SSB / SST."""
    return between / total


def omega_squared(between: float, within: float, k: int, n_total: int) -> float:
    """Less biased share of variance between groups.

    Notes
    -----
    ``(SSB - (k - 1) MSW) / (SST + MSW)`` (Hays 1963, Statistics for Psychologists);
    can be slightly negative for small effects, which is reported as is.
    """
    msw = within / (n_total - k)
    return (between - (k - 1) * msw) / (between + within + msw)


def epsilon_squared(h: float, n_total: int) -> float:
    """Epsilon-squared for Kruskal-Wallis, ``H / ((n^2 - 1) / (n + 1)) = H / (n - 1)``.

    References
    ----------
    Tomczak, M., & Tomczak, E. (2014). The need to report effect size estimates
    revisited. Trends in Sport Sciences 1(21):19-25.
    """
    return h / (n_total - 1.0)


def variance_share_interval(
    f: float, df1: float, df2: float, n_total: int, confidence: float
) -> tuple[float, float]:
    """Two-sided CI for the population share of variance between groups.

    Parameters
    ----------
    f : float
        Observed F of the classic one-way ANOVA.
    df1, df2 : float
        Its degrees of freedom.
    n_total : int
        Total number of observations.
    confidence : float
        Confidence level.

    Returns
    -------
    float, float
        Bounds of ``lambda / (lambda + N)``, from the noncentrality interval of F.

    Notes
    -----
    Inverts the noncentral F distribution function in its noncentrality lambda
    (a bound is 0 when even lambda = 0 places F beyond the tail). Both eta-squared
    and omega-squared estimate this population share.

    References
    ----------
    Steiger, J. H. (2004). Beyond the F test: effect size confidence intervals and
    tests of close fit in the analysis of variance and contrast analysis.
    Psychological Methods 9(2):164-182. doi:10.1037/1082-989X.9.2.164
    """

    def cdf(ncp: float) -> float:
        if ncp <= 0.0:
            return float(stats.f.cdf(f, df1, df2))
        return float(stats.ncf.cdf(f, df1, df2, ncp))

    tail = (1.0 - confidence) / 2.0
    at_zero = cdf(0.0)
    start = max(f * df1 - df1, 1.0)

    def bound(target: float) -> float:
        if at_zero <= target:
            return 0.0
        high = start
        for _ in range(200):
            if cdf(high) <= target:
                break
            high *= 2.0
        return float(optimize.brentq(lambda x: cdf(x) - target, 0.0, high, xtol=1e-10, rtol=1e-12))

    low_ncp, high_ncp = bound(1.0 - tail), bound(tail)
    return low_ncp / (low_ncp + n_total), high_ncp / (high_ncp + n_total)


def invert_noncentrality(
    cdf: Callable[[float], float], confidence: float, start: float
) -> tuple[float, float, float]:
    """Noncentrality values at which the observed statistic sits at the 1-a/2, 1/2 and a/2 points.

    Parameters
    ----------
    cdf : callable
        ``cdf(ncp)``: the distribution function of the statistic's family at the
        observed value, for noncentrality ``ncp`` (decreasing in ``ncp``).
    confidence : float
        Two-sided confidence level.
    start : float
        A first guess of the noncentrality (for the bracket).

    Returns
    -------
    float, float, float
        Lower bound, median-unbiased estimate, upper bound; each is 0 when even a
        noncentrality of 0 puts the observed value beyond its target, and infinite when
        no finite noncentrality reaches it (callers cap it at the effect's largest value).

    Notes
    -----
    The three values come from one inversion (Steiger & Fouladi 1997; Steiger
    2004): the bounds solve ``cdf(ncp) = 1 - a/2`` and ``a/2``, and the estimate solves
    ``cdf(ncp) = 1/2``, the noncentrality under which the observed value is the
    median. As ``cdf`` decreases in ``ncp`` the estimate always lies between the
    bounds, and it is 0 exactly when the observed value is at or below the central
    median (p >= 1/2).
    """
    tail = (1.0 - confidence) / 2.0
    at_zero = cdf(0.0)

    def solve(target: float) -> float:
        if at_zero <= target:
            return 0.0
        high = max(start, 1.0)
        for _ in range(200):
            if cdf(high) <= target:
                break
            high *= 2.0
        else:  # no finite noncentrality reaches the target (a statistic of floating-point noise size)
            return math.inf
        return float(optimize.brentq(lambda x: cdf(x) - target, 0.0, high, xtol=1e-10, rtol=1e-12))

    return solve(1.0 - tail), solve(0.5), solve(tail)


def noncentral_f_cdf(f: float, df1: float, df2: float) -> Callable[[float], float]:
    """``ncp -> P(F' <= f)`` for F' noncentral F on (df1, df2) (df2 = inf: chi-square / df1).

    Notes
    -----
    For very large noncentrality SciPy's noncentral F can lose accuracy; past
    ``LARGE_NONCENTRALITY`` the normal approximation of the noncentral chi-square
    (mean df1 + ncp, variance 2 (df1 + 2 ncp)) is used, scaled by an independent
    chi-square on df2 through the delta method.
    """

    def cdf(ncp: float) -> float:
        if ncp > LARGE_NONCENTRALITY:
            mean = (df1 + ncp) / df1
            var = 2.0 * (df1 + 2.0 * ncp) / df1**2
            if math.isfinite(df2):
                var += mean * mean * 2.0 / df2
            return float(stats.norm.cdf((f - mean) / math.sqrt(var)))
        if math.isinf(df2):
            if ncp <= 0.0:
                return float(stats.chi2.cdf(f * df1, df1))
            return float(stats.ncx2.cdf(f * df1, df1, ncp))
        if ncp <= 0.0:
            return float(stats.f.cdf(f, df1, df2))
        return float(stats.ncf.cdf(f, df1, df2, ncp))

    return cdf


LARGE_NONCENTRALITY = 1e5  # beyond this the normal form of the noncentral distribution is used


def variance_share(
    f: float, df1: float, df2: float, n_total: float, confidence: float
) -> tuple[float, float, float]:
    """Share of variation between groups, ``lambda / (lambda + N)``, with its interval.

    Parameters
    ----------
    f : float
        Observed F statistic (for a chi-square statistic X on df, pass X / df and
        ``df2 = inf``).
    df1, df2 : float
        Its degrees of freedom.
    n_total : float
        Total number of observations N.
    confidence : float
        Two-sided confidence level.

    Returns
    -------
    float, float, float
        Estimate, lower and upper bound, all from :func:`invert_noncentrality`; the
        estimate is the median-unbiased one, so it always lies inside the interval.

    Notes
    -----
    For a one-way ANOVA the population share ``lambda / (lambda + N)`` is eta-squared
    (Steiger 2004); the plug-in SSB / SST overstates it and can fall outside the
    interval when F is small, which is why the estimate comes from the same inversion.

    References
    ----------
    Steiger, J. H. (2004). Beyond the F test: effect size confidence intervals and
    tests of close fit in the analysis of variance and contrast analysis.
    Psychological Methods 9(2):164-182. doi:10.1037/1082-989X.9.2.164

    Examples
    --------
    PlantGrowth (R datasets): F = 4.846 on (2, 27) df, N = 30. At the estimate the
    observed F is the median of the noncentral F (SciPy cross-check):

    >>> estimate, low, high = variance_share(4.846088, 2, 27, 30, 0.95)
    >>> low <= estimate <= high
    True
    >>> ncp = estimate * 30 / (1 - estimate)
    >>> round(float(stats.ncf.cdf(4.846088, 2, 27, ncp)), 6)
    0.5
    """
    low, mid, high = invert_noncentrality(noncentral_f_cdf(f, df1, df2), confidence, f * df1)
    share = [1.0 if math.isinf(ncp) else ncp / (ncp + n_total) for ncp in (mid, low, high)]
    return share[0], share[1], share[2]
