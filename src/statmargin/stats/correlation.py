"""Two continuous measurements on the same units: Pearson's r and Spearman's rho."""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from statmargin.results import Effect, Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats import effects
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Count, Note, Skip, coded


def _pairs(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, int]:
    """Complete pairs; at least three, and both variables must vary."""
    a, b, dropped = common.clean_pairs(x, y, "the two measurements")
    if a.size < 3:
        raise common.NotEnoughDataError(coded(Skip.TOO_FEW_PAIRS, n=Count(a.size), minimum=3))
    common.require_spread(a, "the first measurement")
    common.require_spread(b, "the second measurement")
    return a, b, dropped


def _pearson_coefficient(a: np.ndarray, b: np.ndarray) -> float:
    """Pearson r from centred values (two-pass, compensated sums), clipped to [-1, 1]."""
    da = a - common.accurate_mean(a)
    db = b - common.accurate_mean(b)
    r = math.fsum(da * db) / math.sqrt(math.fsum(da * da) * math.fsum(db * db))
    return max(-1.0, min(1.0, r))


def _t_of_r(r: float, df: int) -> float:
    """t = r sqrt(df / (1 - r^2)); infinite for a perfect correlation."""
    if abs(r) >= 1.0:
        return math.copysign(math.inf, r)
    return r * math.sqrt(df / (1.0 - r * r))


def _p_of_t(t: float, df: int, alternative: str) -> float:
    """P-value of t on ``df``; a perfect correlation (infinite t) gives 0, or 1 against its direction."""
    if math.isinf(t):
        return 0.0 if alternative == "two-sided" or (t > 0) == (alternative == "greater") else 1.0
    return common.p_from_t(t, df, alternative)


def _summaries(a: np.ndarray, b: np.ndarray, labels: tuple[str, str]) -> list[dict]:
    return [common.describe(labels[0], a), common.describe(labels[1], b)]


def pearson_r(
    x: np.ndarray,
    y: np.ndarray,
    *,
    labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Pearson correlation with a t test and a Fisher-z interval.

    Parameters
    ----------
    x, y : numpy.ndarray
        Paired measurements (pairs with a missing value are dropped).
    labels : tuple of str
        Names of the two measurements, for the group summaries.
    alternative : {"two-sided", "greater", "less"}
        ``greater``: a positive association.
    confidence : float
        Level of the interval.

    Returns
    -------
    Result
        Statistic t on n - 2 df; estimate and effect both r with the Fisher-z
        interval ``tanh(atanh(r) +/- z / sqrt(n - 3))`` (the interval needs n >= 4);
        ``extra["r_squared"]``.

    Notes
    -----
    Matches R's ``cor.test(x, y)``. Measures straight-line association only; assumes
    independent pairs and roughly bivariate-normal data for the p-value.

    References
    ----------
    Fisher, R. A. (1921). On the "probable error" of a coefficient of correlation
    deduced from a small sample. Metron 1:3-32.

    Examples
    --------
    The data of R's ``?cor.test`` example (Hollander & Wolfe 1973, p. 187f.):

    >>> import math
    >>> from scipy import stats
    >>> x = [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1]
    >>> y = [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8]
    >>> result = pearson_r(x, y, labels=("x", "y"))
    >>> round(result.estimate.value, 4), round(result.statistic, 4), result.df, round(result.p_value, 4)
    (0.5712, 1.8411, 7.0, 0.1082)
    >>> round(result.estimate.ci_low, 4), round(result.estimate.ci_high, 4)
    (-0.1497, 0.8956)
    >>> check = stats.pearsonr(x, y)
    >>> math.isclose(result.p_value, check.pvalue)
    True
    >>> math.isclose(result.estimate.ci_low, check.confidence_interval().low)
    True
    """
    common.check_options(alternative, confidence)
    a, b, dropped = _pairs(x, y)
    n = a.size
    r = _pearson_coefficient(a, b)
    df = n - 2
    t = _t_of_r(r, df)
    notes: list[Coded] = []
    low, high = _fisher_interval(r, n, alternative, confidence, notes)
    if abs(r) == 1.0:
        notes.append(coded(Note.PERFECT_LINE))
    return Result(
        outcome="",
        exposure=None,
        design=Design.TWO_CONTINUOUS,
        test=Test.PEARSON_R,
        statistic_name="t",
        statistic=t,
        df=float(df),
        p_value=_p_of_t(t, df, alternative),
        p_method=PMethod.ASYMPTOTIC,
        alternative=alternative,
        confidence=confidence,
        n=int(n),
        n_excluded=dropped,
        estimate=Estimate(EstimateKind.PEARSON_R, r, low, high),
        effect=Effect(EffectKind.PEARSON_R, r, low, high),
        groups=_summaries(a, b, labels),
        notes=notes,
        extra={"r_squared": r * r},
    )


def _fisher_interval(
    r: float, n: int, alternative: str, confidence: float, notes: list[Coded], se: float | None = None
) -> tuple[float | None, float | None]:
    """Fisher-z interval; None when n < 4 leaves no degrees of freedom for it."""
    if n < 4:
        notes.append(coded(Note.NO_CI_FEW_PAIRS))
        return None, None
    return effects.fisher_z_interval(r, se if se is not None else 1.0 / math.sqrt(n - 3), alternative, confidence)


def spearman_rho(
    x: np.ndarray,
    y: np.ndarray,
    *,
    labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Spearman rank correlation with R's t approximation and a Bonett-Wright interval.

    Parameters
    ----------
    x, y, labels, alternative, confidence
        As for :func:`pearson_r`.

    Returns
    -------
    Result
        Statistic S = (n^3 - n)(1 - rho) / 6 (R's statistic) with the t statistic in
        ``extra["t"]``; p from the t distribution on n - 2 df; estimate and effect rho
        with the interval ``tanh(atanh(rho) +/- z sqrt((1 + rho^2 / 2) / (n - 3)))``.

    Notes
    -----
    rho is Pearson's r of the mid-ranks. The p-value reproduces R's
    ``cor.test(x, y, method = "spearman", exact = FALSE)``: t = rho sqrt((n - 2) /
    (1 - rho^2)) on n - 2 df. Measures monotone association.

    References
    ----------
    Bonett, D. G., & Wright, T. A. (2000). Sample size requirements for estimating
    Pearson, Kendall and Spearman correlations. Psychometrika 65(1):23-28.
    doi:10.1007/BF02294183

    Examples
    --------
    The data of R's ``?cor.test`` example (Hollander & Wolfe 1973, p. 187f.):

    >>> import math
    >>> from scipy import stats
    >>> x = [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1]
    >>> y = [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8]
    >>> result = spearman_rho(x, y, labels=("x", "y"))
    >>> round(result.estimate.value, 4), result.statistic, round(result.p_value, 4)
    (0.6, 48.0, 0.0876)
    >>> check = stats.spearmanr(x, y)
    >>> math.isclose(result.estimate.value, check.statistic), math.isclose(result.p_value, check.pvalue)
    (True, True)
    """
    common.check_options(alternative, confidence)
    a, b, dropped = _pairs(x, y)
    n = a.size
    rho = _pearson_coefficient(stats.rankdata(a), stats.rankdata(b))
    total = (n**3 - n) / 6.0
    s = total * (1.0 - rho)
    df = n - 2
    t = _t_of_r(rho, df)
    notes: list[Coded] = []
    se = math.sqrt((1.0 + rho * rho / 2.0) / (n - 3)) if n >= 4 else None
    low, high = _fisher_interval(rho, n, alternative, confidence, notes, se)
    return Result(
        outcome="",
        exposure=None,
        design=Design.TWO_CONTINUOUS,
        test=Test.SPEARMAN_RHO,
        statistic_name="S",
        statistic=s,
        df=None,
        p_value=_p_of_t(t, df, alternative),
        p_method=PMethod.ASYMPTOTIC,
        alternative=alternative,
        confidence=confidence,
        n=int(n),
        n_excluded=dropped,
        estimate=Estimate(EstimateKind.SPEARMAN_RHO, rho, low, high),
        effect=Effect(EffectKind.SPEARMAN_RHO, rho, low, high),
        groups=_summaries(a, b, labels),
        notes=notes,
        extra={"t": t, "t_df": float(df)},
    )
