"""Rates: events per person-time (or per population), against a target and between groups.

Every function takes each group's rows as (events, person-time) arrays, pools
them per group, measures whether rows vary more than Poisson sampling allows,
and returns a ``statmargin.results.Result`` (``outcome=""``, ``exposure=None``;
the design fills those in). Rates are reported per ``per`` units of
person-time (``per=1000`` gives rates per 1,000); targets are given per one
unit (2 per 1,000 is ``0.002``).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any

from scipy import optimize, stats
from statsmodels.stats import rates as sm_rates

from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.results import Effect, Estimate, Followup, Result
from statmargin.stats import _common as common
from statmargin.stats.adjust import adjust_p, matched_levels
from statmargin.stats.aggregated import (
    Dispersion,
    Pooled,
    extras,
    pairs_level,
    pearson_dispersion,
    pool,
    scale_for,
    split_by,
    summaries,
)
from statmargin.stats.categorical import (
    SMALL_EXPECTED,
    chi_square_goodness_of_fit,
    wilson_interval,
)
from statmargin.stats.defaults import DEFAULT_RESAMPLES, DEFAULT_SEED
from statmargin.vocabulary import AdjustMethod, Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Note, Reason, Refusal, Skip, coded

# Two rates: the exact conditional test when an expected count under the null is
# below this (Cochran's rule, common practice, as for 2x2 tables); the score test otherwise.
EXACT_BELOW_EXPECTED = SMALL_EXPECTED
_RELATIVE_ERROR = 1.0 + 1e-7  # R's poisson.test tolerance for "no more likely than observed"
_SIDES = {"two-sided": "two-sided", "greater": "larger", "less": "smaller"}


# --------------------------------------------------------------------------- one rate


def poisson_exact_p(events: int, expected: float, alternative: str = "two-sided") -> float:
    """Exact p-value of a Poisson count against its expected value, as R's ``poisson.test``.

    Parameters
    ----------
    events : int
        Observed count.
    expected : float
        Expected count under the null (target rate times person-time), >= 0.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the true rate is above the target.

    Returns
    -------
    float
        One tail, or for two-sided questions the probability of all counts no more
        likely than the observed one (with R's relative tolerance 1e-7).

    Notes
    -----
    The two-sided rule is R's: the other tail collects the counts whose
    probability is at most ``dpois(x, m) * (1 + 1e-7)``. R lists that tail's
    candidates; the probabilities are monotone on each side of the mode, so a
    binary search finds the same boundary in O(log m) work, whatever the count.

    References
    ----------
    Garwood, F. (1936). Fiducial limits for the Poisson distribution. Biometrika
    28(3-4), 437-442. https://doi.org/10.1093/biomet/28.3-4.437

    Examples
    --------
    R's ``?poisson.test`` example (Welsh nickel workers, 137 cases against 24.19893
    expected) gives p < 2.2e-16; 10 events against 4.5 expected:

    >>> poisson_exact_p(137, 24.19893) < 2.2e-16
    True
    >>> round(poisson_exact_p(10, 4.5), 6)
    0.017093
    >>> from scipy import optimize, stats
    >>> import math
    >>> pmf = stats.poisson.pmf(range(200), 4.5)
    >>> math.isclose(poisson_exact_p(10, 4.5), pmf[pmf <= pmf[10] * (1 + 1e-7)].sum())
    True
    """
    x, m = int(events), float(expected)
    if alternative == "less":
        return float(stats.poisson.cdf(x, m))
    if alternative == "greater":
        return float(stats.poisson.sf(x - 1, m))
    if m == 0:
        return 1.0 if x == 0 else 0.0
    if x == m:
        return 1.0
    threshold = float(stats.poisson.pmf(x, m)) * _RELATIVE_ERROR
    if x < m:  # the far tail lies above the mean, where probabilities fall
        first = _first_above_mode_at_most(m, threshold)
        p = stats.poisson.cdf(x, m) + stats.poisson.sf(first - 1, m)
    else:  # the far tail lies below the mean, where probabilities rise
        count = _count_below_mode_at_most(m, threshold)
        p = stats.poisson.cdf(count - 1, m) + stats.poisson.sf(x - 1, m)
    return float(min(1.0, p))


def _first_above_mode_at_most(m: float, threshold: float) -> int:
    """Smallest i >= ceil(m) with pmf(i) <= threshold (pmf falls from there on)."""
    low = math.ceil(m)
    if stats.poisson.pmf(low, m) <= threshold:
        return low
    step = max(1, low)
    high = low + step
    while stats.poisson.pmf(high, m) > threshold:
        step *= 2
        high = low + step
    # pmf(low) > threshold >= pmf(high)
    return _first_true(low, high, lambda i: stats.poisson.pmf(i, m) <= threshold)


def _count_below_mode_at_most(m: float, threshold: float) -> int:
    """Number of i in 0..floor(m) with pmf(i) <= threshold (pmf rises on that range)."""
    top = math.floor(m)
    if stats.poisson.pmf(top, m) <= threshold:
        return top + 1
    if stats.poisson.pmf(0, m) > threshold:
        return 0
    # pmf(0) <= threshold < pmf(top): the first count above the threshold is how many lie at or below it
    return _first_true(0, top, lambda i: stats.poisson.pmf(i, m) > threshold)


def _first_true(low: int, high: int, true_at: Callable[[int], bool]) -> int:
    """Smallest i in (low, high] with ``true_at(i)``, by bisection: false at ``low``, true at ``high``, monotone."""
    while high - low > 1:
        mid = (low + high) // 2
        if true_at(mid):
            high = mid
        else:
            low = mid
    return high


def garwood_interval(
    events: float, time: float, *, confidence: float = 0.95, alternative: str = "two-sided"
) -> tuple[float, float]:
    """Exact (Garwood) confidence interval for a Poisson rate, per one unit of person-time.

    Parameters
    ----------
    events : float
        Observed count (a non-whole effective count is allowed, see Notes).
    time : float
        Person-time (or population), > 0.
    confidence : float
        Confidence level.
    alternative : {"two-sided", "greater", "less"}
        One-sided questions give an open upper (greater) or a zero lower (less) limit.

    Returns
    -------
    tuple of float
        (lower, upper) rate limits.

    Notes
    -----
    Limits are gamma quantiles, ``qgamma(alpha/2, x) / T`` and ``qgamma(1 -
    alpha/2, x + 1) / T`` (lower 0 when x = 0), exactly R's ``poisson.test``. The
    gamma quantile is defined for non-whole x, which the effective counts of a
    quasi-Poisson interval (x / dispersion) use.

    References
    ----------
    Garwood, F. (1936). Fiducial limits for the Poisson distribution. Biometrika
    28(3-4), 437-442. https://doi.org/10.1093/biomet/28.3-4.437

    Examples
    --------
    R's ``?poisson.test`` example: 137 cases over 24.19893 expected gives the 95%
    interval 4.753125 to 6.692709 (R output recalled from memory):

    >>> low, high = garwood_interval(137, 24.19893)
    >>> round(low, 6), round(high, 6)
    (4.753125, 6.692709)

    Garwood's limits for counts of 0 and 10 in one unit (0 to 3.689; 4.795 to 18.39):

    >>> [round(v, 3) for v in garwood_interval(0, 1.0) + garwood_interval(10, 1.0)]
    [0.0, 3.689, 4.795, 18.39]
    """
    if alternative == "two-sided":
        tail = (1.0 - confidence) / 2.0
        low = float(stats.gamma.ppf(tail, events)) / time if events > 0 else 0.0
        return low, float(stats.gamma.ppf(1.0 - tail, events + 1.0)) / time
    tail = 1.0 - confidence
    if alternative == "greater":
        low = float(stats.gamma.ppf(tail, events)) / time if events > 0 else 0.0
        return low, math.inf
    return 0.0, float(stats.gamma.ppf(1.0 - tail, events + 1.0)) / time


def _target(value: float) -> float:
    """A target rate per unit: a finite number above 0."""
    target = float(value)
    if not (math.isfinite(target) and target > 0):
        raise OptionError(coded(Refusal.TARGET_RATE, value=value))
    return target


def _per(value: float) -> float:
    per = float(value)
    if not (math.isfinite(per) and per > 0):
        raise OptionError(coded(Refusal.PER_UNIT, value=str(value)))
    return per


def one_rate(
    events: Any,
    time: Any,
    *,
    target: float,
    per: float = 1.0,
    label: str = "all",
    alternative: str = "two-sided",
    confidence: float = 0.95,
    seed: int = DEFAULT_SEED,
    strata: Sequence[Any] | None = None,
) -> Result:
    """One rate against a target: the exact Poisson test and the Garwood interval.

    Parameters
    ----------
    events, time : array-like
        Events and person-time (or population) of each row; rows with a missing
        value are left out.
    target : float
        Target rate per one unit of person-time (2 per 1,000 is 0.002), above 0.
    per : float
        Rates are reported per this many units (1000: per 1,000).
    label : str
        Label of the group summary.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the rate is above the target.
    confidence : float
        Level of the interval.
    seed : int
        Seed of the Monte Carlo dispersion test.
    strata : sequence, optional
        A label per row (sites, districts): extra variation is measured within
        each stratum, since differences between fixed strata are not sampling
        noise for the pooled count (see ``proportions.one_share``).

    Returns
    -------
    Result
        design ONE_SAMPLE_RATE, test POISSON_EXACT (QUASI_POISSON when rows vary
        more than Poisson sampling allows). ``estimate``: the rate per ``per`` with
        its interval and the target as ``reference``; ``groups``: events, total
        person-time, rate and interval; ``extra["dispersion"]``: the row dispersion.

    Notes
    -----
    Conditional on the person-time, the events are Poisson with mean target x T
    under the null; the p-value is R's ``poisson.test(x, T, r)`` (see
    :func:`poisson_exact_p`) and the interval R's (Garwood 1936). When the rows
    vary more than Poisson sampling allows (:func:`~statmargin.stats.aggregated.
    pearson_dispersion`), the test becomes the quasi-Poisson score test z = (x -
    r T) / sqrt(phi r T) against t on the dispersion's df, and the interval the
    Garwood interval of the effective count x / phi over T / phi (quasi-likelihood
    scaling, Wedderburn 1974; the effective-count form is our choice so that the
    interval stays inside 0 and matches the exact one when phi = 1).

    References
    ----------
    Garwood, F. (1936). Biometrika 28(3-4), 437-442. https://doi.org/10.1093/biomet/28.3-4.437
    Wedderburn, R. W. M. (1974). Biometrika 61(3), 439-447. https://doi.org/10.1093/biomet/61.3.439

    Examples
    --------
    R's ``?poisson.test`` example, ``poisson.test(137, 24.19893)``: rate 5.661407,
    95% interval 4.753125 to 6.692709, p < 2.2e-16 (R output recalled from memory):

    >>> result = one_rate([137], [24.19893], target=1.0)
    >>> result.test, round(result.estimate.value, 6), result.p_value < 2.2e-16
    ('poisson_exact', 5.661407, True)
    >>> round(result.estimate.ci_low, 6), round(result.estimate.ci_high, 6)
    (4.753125, 6.692709)
    """
    common.check_options(alternative, confidence)
    target = _target(target)
    per = _per(per)
    pooled = pool({str(label): (events, time)}, binomial=False)
    within = pooled if strata is None else pool(split_by(events, time, strata), binomial=False)
    dispersion = pearson_dispersion(within, seed=seed)
    x, total = int(pooled.events[0]), float(pooled.totals[0])
    expected = target * total
    notes: list[Coded] = []
    reasons: list[Coded] = []
    phi = scale_for(dispersion, notes, reasons)
    if phi is None:
        test, statistic_name, statistic, df = Test.POISSON_EXACT, "events", float(x), None
        p_value, p_method = poisson_exact_p(x, expected, alternative), PMethod.EXACT
    else:
        test, statistic_name, df = Test.QUASI_POISSON, "t", float(dispersion.df)
        statistic = (x - expected) / math.sqrt(phi * expected)
        p_value, p_method = common.p_from_t(statistic, df, alternative), PMethod.ASYMPTOTIC
    scale = 1.0 if phi is None else phi
    low, high = garwood_interval(x / scale, total / scale, confidence=confidence, alternative=alternative)
    return Result(
        outcome="",
        exposure=None,
        design=Design.ONE_SAMPLE_RATE,
        test=test,
        statistic_name=statistic_name,
        statistic=statistic,
        df=df,
        p_value=p_value,
        p_method=p_method,
        alternative=alternative,
        confidence=confidence,
        n=x,
        n_excluded=pooled.n_excluded,
        estimate=Estimate(EstimateKind.RATE, x * per / total, low * per, high * per, level=str(label),
                          reference=target * per, per=per),
        groups=rate_summaries(pooled, per=per, confidence=confidence, dispersion=phi),
        reasons=reasons,
        notes=notes,
        against=target * per,
        extra={**extras(pooled, dispersion, per), "expected_events": expected},
    )


def rate_summaries(
    pooled: Pooled, *, per: float = 1.0, confidence: float = 0.95, dispersion: float | None = None
) -> list[dict[str, Any]]:
    """Per-group events, person-time, rate per ``per`` and its Garwood interval, for ``Result.groups``.

    Parameters
    ----------
    pooled : Pooled
        Rows pooled per group.
    per : float
        Rates per this many units.
    confidence : float
        Level of each group's interval.
    dispersion : float, optional
        When given (rows vary more than Poisson sampling allows), each interval is
        the Garwood interval of the effective counts x / dispersion over T / dispersion.

    Returns
    -------
    list of dict
        One dict per group: label, events, total, rate, ci_low, ci_high, per, rows.

    Examples
    --------
    >>> from statmargin.stats.aggregated import pool
    >>> pooled = pool({"A": ([3, 4], [1000, 1500]), "B": ([9], [2000])}, binomial=False)
    >>> [(g["label"], g["events"], g["total"], g["rate"]) for g in rate_summaries(pooled, per=1000)]
    [('A', 7, 2500.0, 2.8), ('B', 9, 2000.0, 4.5)]
    """
    return summaries(pooled, _garwood, per=per, confidence=confidence, scale=dispersion)


def _garwood(events: float, time: float, confidence: float) -> tuple[float, float]:
    return garwood_interval(events, time, confidence=confidence)


# --------------------------------------------------------------------------- two rates


@dataclass(frozen=True)
class TwoRates:
    """The comparison of two pooled rates: test, rate ratio and rate difference with intervals."""

    test: Test
    statistic_name: str
    statistic: float
    df: float | None
    p_value: float
    p_method: PMethod
    ratio: float
    ratio_ci: tuple[float, float]
    difference: float
    difference_ci: tuple[float, float]
    smallest_expected: float


def compare_rates(
    x1: int,
    t1: float,
    x2: int,
    t2: float,
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    method: str = "auto",
    dispersion: float | None = None,
    df: float | None = None,
) -> TwoRates:
    """Rate ratio x1/t1 over x2/t2 and rate difference, with test and intervals.

    Parameters
    ----------
    x1, t1, x2, t2 : int, float
        Pooled events and person-time of the two groups (x1 + x2 > 0).
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the first rate is higher.
    confidence : float
        Level of the intervals.
    method : {"auto", "exact", "score"}
        ``auto`` takes the exact conditional test when an expected count under the
        null is below 5 (Cochran's rule, common practice), the score test otherwise.
    dispersion, df : float, optional
        A dispersion above 1 and its df switch to the quasi-Poisson version (see Notes).

    Returns
    -------
    TwoRates

    Notes
    -----
    Given x1 + x2 events, x1 is binomial with p0 = t1 / (t1 + t2) when the rates are
    equal. Exact: R's ``poisson.test(c(x1, x2), c(t1, t2))`` (the binomial test of
    x1, and the Clopper-Pearson limits of p mapped to the ratio by p / (1 - p) x
    t2 / t1). Score: z = (x1 - n p0) / sqrt(n p0 (1 - p0)), statsmodels'
    ``test_poisson_2indep(method="score")``; its ratio interval, the Wilson limits
    of p mapped the same way, equals statsmodels' ``confint_poisson_2indep(method=
    "score")`` in closed form. The difference interval is the score interval of
    statsmodels' ``confint_poisson_2indep(compare="diff", method="score")`` for every
    path (one-sided questions open one side), computed by
    :func:`score_difference_z`; the score interval covered closest to 95% among
    statsmodels' difference intervals in our simulation. Quasi-Poisson: z / sqrt(phi) against t on ``df``; intervals
    from the effective counts x / phi and times t / phi.

    References
    ----------
    Gu, K., Ng, H. K. T., Tang, M. L., & Schucany, W. R. (2008). Testing the ratio
    of two Poisson rates. Biometrical Journal 50(2), 283-298.
    https://doi.org/10.1002/bimj.200710403
    Ng, H. K. T., Gu, K., & Tang, M. L. (2007). A comparative study of tests for the
    difference of two Poisson means. CSDA 51(6), 3085-3099.
    https://doi.org/10.1016/j.csda.2006.02.004

    Examples
    --------
    R's ``?poisson.test`` example (Fredericia against three other cities, ages
    55-59): ``poisson.test(c(11, 6 + 8 + 7), c(800, 1083 + 1050 + 878))`` gives
    p = 0.07967 and the ratio 1.971488 with 95% interval 0.8584264 to 4.2772659
    (R output recalled from memory):

    >>> two = compare_rates(11, 800, 21, 3011, method="exact")
    >>> round(two.p_value, 5), round(two.ratio, 6), [round(v, 7) for v in two.ratio_ci]
    (0.07967, 1.971488, [0.8584264, 4.2772659])
    """
    if x1 + x2 == 0:
        raise NotEnoughDataError(coded(Skip.NO_EVENTS))
    n = int(x1 + x2)
    p0 = t1 / (t1 + t2)
    smallest = min(n * p0, n * (1.0 - p0))
    ratio = (x1 / t1) / (x2 / t2) if x2 > 0 else math.inf
    difference = x1 / t1 - x2 / t2

    def to_ratio(p: float) -> float:
        return math.inf if p >= 1.0 else p / (1.0 - p) * t2 / t1

    if dispersion is not None:
        z = (x1 - n * p0) / math.sqrt(n * p0 * (1.0 - p0)) / math.sqrt(dispersion)
        e1, e2, n_eff = x1 / dispersion, x2 / dispersion, n / dispersion
        low, high = wilson_interval(e1, n_eff, confidence=confidence, alternative=alternative)
        d_low, d_high = _difference_interval(e1, t1 / dispersion, e2, t2 / dispersion, alternative, confidence)
        return TwoRates(Test.QUASI_POISSON, "t", z, float(df or 0.0),
                        common.p_from_t(z, float(df or 0.0), alternative), PMethod.ASYMPTOTIC,
                        ratio, (to_ratio(low), to_ratio(high)), difference, (d_low, d_high), smallest)
    use_exact = method == "exact" or (method == "auto" and smallest < EXACT_BELOW_EXPECTED)
    d_low, d_high = _difference_interval(x1, t1, x2, t2, alternative, confidence)
    if use_exact:
        test = stats.binomtest(int(x1), n, p=p0, alternative=alternative)
        ci = test.proportion_ci(confidence_level=confidence, method="exact")
        return TwoRates(Test.RATE_RATIO_EXACT, "events in first group", float(x1), None,
                        float(test.pvalue), PMethod.EXACT, ratio,
                        (to_ratio(float(ci.low)), to_ratio(float(ci.high))), difference,
                        (d_low, d_high), smallest)
    if method not in ("auto", "score"):
        raise OptionError(coded(Refusal.RATE_METHOD, method=method))
    scored = sm_rates.test_poisson_2indep(x1, t1, x2, t2, method="score", compare="ratio",
                                 alternative=_SIDES[alternative])
    low, high = wilson_interval(int(x1), n, confidence=confidence, alternative=alternative)
    return TwoRates(Test.RATE_RATIO_SCORE, "z", float(scored.statistic), None, float(scored.pvalue),
                    PMethod.NORMAL_APPROXIMATION, ratio, (to_ratio(low), to_ratio(high)),
                    difference, (d_low, d_high), smallest)


def _difference_interval(
    x1: float, t1: float, x2: float, t2: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Score interval for x1/t1 - x2/t2; one-sided questions open one side."""
    q_lower, q_upper = common.z_quantiles(alternative, confidence)
    low = -math.inf if q_lower is None else _score_difference_root(x1, t1, x2, t2, q_lower, -1.0)
    high = math.inf if q_upper is None else _score_difference_root(x1, t1, x2, t2, q_upper, 1.0)
    return low, high


def score_difference_z(delta: float, x1: float, t1: float, x2: float, t2: float) -> float:
    """Score statistic for the rate difference ``delta``: (r1 - r2 - delta) / sd under the constrained fit.

    Parameters
    ----------
    delta : float
        Rate difference under the null (per one unit).
    x1, t1, x2, t2 : float
        Events and person-time of the two groups.

    Returns
    -------
    float
        Decreasing in ``delta``.

    Notes
    -----
    The rates maximising the likelihood under r1 = r2 + delta solve
    (t1 + t2) r2^2 + ((t1 + t2) delta - x1 - x2) r2 - x2 delta = 0 (the positive
    root, at least max(0, -delta)); the variance is r1 / t1 + r2 / t2 at that fit.
    This is statsmodels' ``confint_poisson_2indep(compare="diff", method="score")``
    statistic (Ng, Gu & Tang 2007). It is written here because statsmodels inverts
    it by Nelder-Mead (about 30 ms and 1e-8 tolerance per interval, too slow for the
    follow-ups of many groups); the test suite checks the two agree.

    References
    ----------
    Ng, H. K. T., Gu, K., & Tang, M. L. (2007). A comparative study of tests for the
    difference of two Poisson means. CSDA 51(6), 3085-3099.
    https://doi.org/10.1016/j.csda.2006.02.004

    Examples
    --------
    >>> round(score_difference_z(0.0, 41, 28010, 15, 19017), 6)
    2.081776
    >>> from statsmodels.stats.rates import test_poisson_2indep
    >>> check = test_poisson_2indep(41, 28010, 15, 19017, method="score", compare="diff", value=0)
    >>> math.isclose(score_difference_z(0.0, 41, 28010, 15, 19017), check.statistic)
    True
    """
    a = t1 + t2
    b = a * delta - (x1 + x2)
    r2 = (-b + math.sqrt(max(b * b + 4.0 * a * x2 * delta, 0.0))) / (2.0 * a)
    r2 = max(r2, 0.0, -delta)
    variance = (r2 + delta) / t1 + r2 / t2
    estimate = x1 / t1 - x2 / t2 - delta
    if variance <= 0:
        return 0.0 if estimate == 0 else math.copysign(math.inf, estimate)
    return estimate / math.sqrt(variance)


def _score_difference_root(x1: float, t1: float, x2: float, t2: float, target: float, side: float) -> float:
    """The difference where the score statistic equals ``target``, searching towards ``side``."""
    estimate = x1 / t1 - x2 / t2
    step = math.sqrt(max(x1, 0.5) / t1**2 + max(x2, 0.5) / t2**2)
    near, far = estimate, estimate + side * step
    while (score_difference_z(far, x1, t1, x2, t2) - target) * (score_difference_z(near, x1, t1, x2, t2) - target) > 0:
        near, step = far, step * 2.0
        far = estimate + side * step
    low, high = min(near, far), max(near, far)
    return float(optimize.brentq(lambda d: score_difference_z(d, x1, t1, x2, t2) - target, low, high,
                                 xtol=1e-14, rtol=1e-13))


def two_rates(
    groups: Mapping[str, tuple[Any, Any]],
    *,
    per: float = 1.0,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    method: str = "auto",
    seed: int = DEFAULT_SEED,
) -> Result:
    """Two groups' rates compared: rate ratio and rate difference with intervals and a test.

    Parameters
    ----------
    groups : mapping of label to (events, person-time)
        Exactly two groups' rows, first then second.
    per : float
        Rates (and the difference) are reported per this many units.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the first group's rate is higher.
    confidence : float
        Level of the intervals.
    method : {"auto", "exact", "score"}
        As for :func:`compare_rates`.
    seed : int
        Seed of the Monte Carlo dispersion test.

    Returns
    -------
    Result
        design GROUP_RATES, test RATE_RATIO_EXACT, RATE_RATIO_SCORE or QUASI_POISSON;
        ``estimate``: rate difference per ``per`` (first - second); ``effect``: rate
        ratio (first / second); ``groups``: events, person-time and rate per group.

    Notes
    -----
    See :func:`compare_rates`. The reason for the exact or score test is in
    ``reasons`` (smallest expected count under the null against 5).

    Examples
    --------
    Breast cancer after fluoroscopy (Boice & Monson 1977, as tabulated in Rothman,
    Greenland & Lash, Modern Epidemiology): 41 cases in 28,010 person-years against
    15 in 19,017. Rate ratio 1.855759 with the exact 95% interval 1.005684 to 3.6093
    (as printed by Stata's ``iri 41 15 28010 19017``, recalled from memory):

    >>> result = two_rates({"exposed": ([41], [28010]), "unexposed": ([15], [19017])},
    ...                    per=100000, method="exact")
    >>> round(result.effect.value, 6), round(result.effect.ci_low, 6), round(result.effect.ci_high, 4)
    (1.855759, 1.005684, 3.6093)
    >>> round(result.estimate.value, 2)
    67.5
    >>> import math
    >>> from statsmodels.stats.rates import test_poisson_2indep
    >>> check = test_poisson_2indep(41, 28010, 15, 19017, method="exact-cond")
    >>> math.isclose(result.p_value, check.pvalue)
    True
    """
    common.check_options(alternative, confidence)
    per = _per(per)
    first, second = common.labels_pair(groups.keys())
    pooled = pool(groups, binomial=False)
    dispersion = pearson_dispersion(pooled, seed=seed)
    notes: list[Coded] = []
    reasons: list[Coded] = []
    phi = scale_for(dispersion, notes, reasons)
    (x1, x2), (t1, t2) = pooled.events.tolist(), pooled.totals.tolist()
    compared = compare_rates(x1, t1, x2, t2, alternative=alternative, confidence=confidence,
                             method=method, dispersion=phi, df=float(dispersion.df))
    if phi is None:
        code = Reason.RATE_EXACT_SMALL if compared.test is Test.RATE_RATIO_EXACT else Reason.RATE_SCORE
        reasons.append(coded(code, smallest=compared.smallest_expected))
    for label, x in zip(pooled.labels, pooled.events, strict=True):
        if x == 0:
            common.caveat(notes, coded(Note.RATE_NO_EVENTS_GROUP, label=label))
    d_low, d_high = compared.difference_ci
    r_low, r_high = compared.ratio_ci
    return Result(
        outcome="",
        exposure=None,
        design=Design.GROUP_RATES,
        test=compared.test,
        statistic_name=compared.statistic_name,
        statistic=compared.statistic,
        df=compared.df,
        p_value=compared.p_value,
        p_method=compared.p_method,
        alternative=alternative,
        confidence=confidence,
        n=int(x1 + x2),
        n_excluded=pooled.n_excluded,
        estimate=Estimate(EstimateKind.RATE_DIFFERENCE, compared.difference * per, d_low * per,
                          d_high * per, levels=(first, second), per=per),
        effect=Effect(EffectKind.RATE_RATIO, compared.ratio, r_low, r_high, levels=(first, second)),
        groups=rate_summaries(pooled, per=per, confidence=confidence, dispersion=phi),
        reasons=reasons,
        notes=notes,
        extra={**extras(pooled, dispersion, per), "smallest_expected": compared.smallest_expected},
    )


# --------------------------------------------------------------------------- three or more rates


def rate_homogeneity(
    groups: Mapping[str, tuple[Any, Any]],
    *,
    per: float = 1.0,
    confidence: float = 0.95,
    seed: int = DEFAULT_SEED,
    resamples: int = DEFAULT_RESAMPLES,
    alternative: str = "two-sided",
) -> Result:
    """Chi-square test that two or more groups share one rate (expected events proportional to person-time).

    Parameters
    ----------
    groups : mapping of label to (events, person-time)
        Each group's rows, in display order.
    per : float
        Rates are reported per this many units.
    confidence : float
        Level of the group intervals.
    seed, resamples : int
        Seed and number of simulated samples for the Monte Carlo p-value (used when
        an expected count is below 5) and the dispersion test.
    alternative : str
        Accepted for a uniform call; the test has no direction (noted if not two-sided).

    Returns
    -------
    Result
        design GROUP_RATES, test RATE_HOMOGENEITY (QUASI_POISSON when rows vary
        more than Poisson sampling allows); ``estimate``: the largest difference
        between group rates (highest - lowest) per ``per``; ``effect``: the ratio of
        the highest to the lowest rate; both with the intervals of
        :func:`compare_rates` at :func:`~statmargin.stats.aggregated.pairs_level`,
        so they hold for all pairs of groups together.

    Notes
    -----
    Given the total events X, the groups' counts are multinomial with shares
    T_g / sum T under equal rates, so the test is the chi-square goodness-of-fit
    test of the counts against those shares, X2 = sum (x_g - E_g)^2 / E_g with
    E_g = X T_g / sum T on k - 1 df (Breslow & Day 1987, sec. 3.4); it reuses
    :func:`statmargin.stats.categorical.chi_square_goodness_of_fit`, including its
    Monte Carlo p-value when an expected count is below 5 (Cochran 1954, common
    practice). Quasi-Poisson: F = X2 / ((k - 1) phi) on (k - 1, df of phi).

    References
    ----------
    Breslow, N. E., & Day, N. E. (1987). Statistical Methods in Cancer Research,
    Vol. II: The Design and Analysis of Cohort Studies. IARC Scientific
    Publications 82.

    Examples
    --------
    Three invented districts' cases over person-years; the statistic equals a
    goodness-of-fit test against the person-time shares (SciPy cross-check):

    >>> import math
    >>> from scipy import optimize, stats
    >>> groups = {"North": ([30], [10000]), "Centre": ([52], [12000]), "South": ([21], [9000])}
    >>> result = rate_homogeneity(groups, per=1000)
    >>> result.test, round(result.statistic, 4), result.df, round(result.p_value, 4)
    ('rate_homogeneity', 6.6537, 2.0, 0.0359)
    >>> expected = [103 * t / 31000 for t in (10000, 12000, 9000)]
    >>> math.isclose(result.statistic, stats.chisquare([30, 52, 21], expected).statistic)
    True
    """
    common.check_options(alternative, confidence)
    per = _per(per)
    pooled = pool(groups, binomial=False)
    if len(pooled.labels) < 2:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_GROUPS, n=len(pooled.labels)))
    if int(pooled.events.sum()) == 0:
        raise NotEnoughDataError(coded(Skip.NO_EVENTS))
    dispersion = pearson_dispersion(pooled, seed=seed)
    notes: list[Coded] = []
    reasons: list[Coded] = []
    if alternative != "two-sided":
        notes.append(coded(Note.MULTIGROUP_TWO_SIDED, alternative=alternative))
    phi = scale_for(dispersion, notes, reasons)
    shares = pooled.totals / math.fsum(pooled.totals)
    fit = chi_square_goodness_of_fit(
        {label: int(x) for label, x in zip(pooled.labels, pooled.events, strict=True)},
        {label: float(s) for label, s in zip(pooled.labels, shares, strict=True)},
        confidence=confidence,
        seed=seed,
        monte_carlo_resamples=resamples,
        monte_carlo="auto" if phi is None else False,
    )
    assert fit.statistic is not None
    k = len(pooled.labels)
    extra: dict[str, Any] = {**extras(pooled, dispersion, per), "expected_events": fit.extra["expected"],
                             "min_expected": fit.extra["min_expected"]}
    for key in ("monte_carlo_resamples", "monte_carlo_se", "seed"):
        if key in fit.extra:
            extra[key] = fit.extra[key]
    if phi is None:
        test, statistic_name, statistic = Test.RATE_HOMOGENEITY, "chi-square", fit.statistic
        df: float | list[float] = float(k - 1)
        p_value, p_method = float(fit.p_value or 0.0), fit.p_method
        notes.extend(fit.notes)
    else:
        test, statistic_name = Test.QUASI_POISSON, "F"
        statistic = fit.statistic / ((k - 1) * phi)
        df = [float(k - 1), float(dispersion.df)]
        p_value, p_method = float(stats.f.sf(statistic, k - 1, dispersion.df)), PMethod.ASYMPTOTIC
    summaries = rate_summaries(pooled, per=per, confidence=confidence, dispersion=phi)
    high = max(summaries, key=lambda g: g["rate"])
    low = min(summaries, key=lambda g: g["rate"])
    ratio = high["rate"] / low["rate"] if low["rate"] > 0 else math.inf
    # The widest gap is picked after looking, so its intervals hold for all pairs together (Bonferroni).
    i, j = pooled.labels.index(high["label"]), pooled.labels.index(low["label"])
    widest = compare_rates(int(pooled.events[i]), float(pooled.totals[i]), int(pooled.events[j]),
                           float(pooled.totals[j]), confidence=pairs_level(confidence, k), dispersion=phi,
                           df=float(dispersion.df))
    return Result(
        outcome="",
        exposure=None,
        design=Design.GROUP_RATES,
        test=test,
        statistic_name=statistic_name,
        statistic=statistic,
        df=df,
        p_value=p_value,
        p_method=p_method,
        alternative="two-sided",
        confidence=confidence,
        n=int(pooled.events.sum()),
        n_excluded=pooled.n_excluded,
        estimate=Estimate(EstimateKind.LARGEST_RATE_GAP, high["rate"] - low["rate"],
                          widest.difference_ci[0] * per, widest.difference_ci[1] * per,
                          levels=(high["label"], low["label"]), per=per),
        effect=Effect(EffectKind.RATE_RATIO, ratio, widest.ratio_ci[0], widest.ratio_ci[1],
                      levels=(high["label"], low["label"])),
        groups=summaries,
        reasons=reasons,
        notes=notes,
        extra=extra,
    )


def pairwise_rate_ratios(
    groups: Mapping[str, tuple[Any, Any]],
    *,
    per: float = 1.0,
    confidence: float = 0.95,
    adjust: AdjustMethod | str = AdjustMethod.HOLM,
    alpha: float = 0.05,
    method: str = "auto",
    seed: int = DEFAULT_SEED,
) -> list[Followup]:
    """Every pair of groups' rate ratio with its interval and a Holm-adjusted p-value.

    Parameters
    ----------
    groups : mapping of label to (events, person-time)
        Each group's rows, in display order.
    per : float
        Accepted so a call mirrors :func:`rate_homogeneity`; ratios have no unit.
    confidence : float
        Level of each pair's interval with ``adjust="none"``; otherwise each pair's
        level is matched to its adjusted p (``adjust.matched_levels``), so an
        interval leaves out 1 exactly when the adjusted p is below ``alpha``.
    adjust : {"holm", "benjamini-hochberg", "none"}
        Adjustment of the pairs' p-values.
    alpha : float
        Level for ``flagged`` after adjustment.
    method : {"auto", "exact", "score"}
        Per pair, as for :func:`compare_rates`.
    seed : int
        Seed of the dispersion test (rows vary more than Poisson: quasi-Poisson pairs).

    Returns
    -------
    list of Followup
        Pairs in R's order, (g2, g1), (g3, g1), (g3, g2): the later group's rate over
        the earlier one's (``estimate`` kind RATE_RATIO).

    Notes
    -----
    Each pair is the two-rate comparison of :func:`compare_rates` on the pooled
    counts; Holm (1979) controls the family-wise error over the pairs.

    Examples
    --------
    >>> groups = {"North": ([30], [10000]), "Centre": ([52], [12000]), "South": ([21], [9000])}
    >>> for pair in pairwise_rate_ratios(groups):
    ...     print(pair.levels, round(pair.estimate.value, 4), round(pair.p_adjusted, 4))
    ('Centre', 'North') 1.4444 0.2135
    ('South', 'North') 0.7778 0.3758
    ('South', 'Centre') 0.5385 0.045

    Every expected count is large, so each pair is statsmodels' score test:

    >>> import math
    >>> from statsmodels.stats.rates import test_poisson_2indep
    >>> first = pairwise_rate_ratios(groups)[0]
    >>> math.isclose(first.p_value, test_poisson_2indep(52, 12000, 30, 10000, method="score").pvalue)
    True
    """
    common.check_confidence(confidence)
    _per(per)
    pooled = pool(groups, binomial=False)
    if len(pooled.labels) < 2:
        raise NotEnoughDataError(coded(Skip.PAIRWISE_ONE_GROUP))
    dispersion = pearson_dispersion(pooled, seed=seed)
    phi = dispersion.dispersion if dispersion.overdispersed else None
    rows: list[tuple[str, str, TwoRates]] = []
    k = len(pooled.labels)
    for i in range(k):
        for j in range(i + 1, k):
            later, earlier = j, i
            x1, t1 = int(pooled.events[later]), float(pooled.totals[later])
            x2, t2 = int(pooled.events[earlier]), float(pooled.totals[earlier])
            if x1 + x2 == 0:
                continue
            compared = compare_rates(x1, t1, x2, t2, confidence=confidence, method=method,
                                     dispersion=phi, df=float(dispersion.df))
            rows.append((pooled.labels[later], pooled.labels[earlier], compared))
    raw = [c.p_value for _, _, c in rows]
    adjusted = adjust_p(raw, adjust)
    if AdjustMethod(adjust) is not AdjustMethod.NONE:
        # Each pair's interval at the level its adjusted p is judged at, so the two agree.
        levels = matched_levels(raw, adjust, alpha)
        rows = [
            (a, b, replace(c, ratio_ci=compare_rates(*_pair_counts(pooled, a, b), confidence=1.0 - level,
                                                     method=method, dispersion=phi,
                                                     df=float(dispersion.df)).ratio_ci))
            if level is not None else (a, b, c)
            for (a, b, c), level in zip(rows, levels, strict=True)
        ]
    return [
        Followup(
            test=Test.PAIRWISE_RATE_RATIO,
            levels=(a, b),
            estimate=Estimate(EstimateKind.RATE_RATIO, c.ratio, c.ratio_ci[0], c.ratio_ci[1], levels=(a, b)),
            p_value=c.p_value,
            p_adjusted=p_adj,
            statistic=c.statistic,
            flagged=p_adj is not None and p_adj < alpha,
        )
        for (a, b, c), p_adj in zip(rows, adjusted, strict=True)
    ]


def _pair_counts(pooled: Pooled, a: str, b: str) -> tuple[int, float, int, float]:
    i, j = pooled.labels.index(a), pooled.labels.index(b)
    return int(pooled.events[i]), float(pooled.totals[i]), int(pooled.events[j]), float(pooled.totals[j])


def rows_dispersion(groups: Mapping[str, tuple[Any, Any]], *, seed: int = DEFAULT_SEED) -> Dispersion:
    """The Pearson dispersion of Poisson rows within groups (see ``aggregated.pearson_dispersion``).

    Examples
    --------
    Monthly cases over person-months at one invented clinic, far more variable than
    Poisson sampling allows:

    >>> d = rows_dispersion({"clinic": ([2, 25, 3, 30, 1], [100, 100, 100, 100, 100])})
    >>> round(d.dispersion, 2), d.overdispersed
    (16.29, True)

    statsmodels' quasi-Poisson scale of the same rows (Pearson X2 / df) agrees:

    >>> import math
    >>> import numpy as np
    >>> import statsmodels.api as sm
    >>> fit = sm.GLM(np.array([2, 25, 3, 30, 1]), np.ones((5, 1)), family=sm.families.Poisson(),
    ...              offset=np.log(np.full(5, 100.0))).fit(scale="X2")
    >>> math.isclose(d.dispersion, fit.scale)
    True
    """
    return pearson_dispersion(pool(groups, binomial=False), seed=seed)


def pooled_rates(groups: Mapping[str, tuple[Any, Any]]) -> Pooled:
    """Rows of events per person-time checked and pooled per group (for the design's summaries)."""
    return pool(groups, binomial=False)


__all__ = [
    "TwoRates",
    "compare_rates",
    "garwood_interval",
    "one_rate",
    "pairwise_rate_ratios",
    "poisson_exact_p",
    "pooled_rates",
    "rate_homogeneity",
    "rate_summaries",
    "rows_dispersion",
    "two_rates",
]

