"""Two measurements on the same units: paired t and Wilcoxon signed-rank on differences.

Differences are first minus second, in the order of ``labels``.
"""

from __future__ import annotations

import numpy as np

from statmargin.results import Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats.onesample import mean_t, signed_rank_result
from statmargin.vocabulary import Design, EffectKind, EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Count, Skip, coded


def _differences(
    x1: np.ndarray, x2: np.ndarray, labels: tuple[str, str], minimum: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray, int, str, str]:
    """Complete pairs and their differences; refuse too few pairs or all-zero differences."""
    first, second = common.labels_pair(labels)
    a, b, dropped = common.clean_pairs(x1, x2, "the paired measurements")
    if a.size < minimum:
        raise common.NotEnoughDataError(
            coded(Skip.TOO_FEW_PAIRS, n=Count(a.size), minimum=minimum, first=first, second=second)
        )
    differences = a - b
    if np.all(differences == 0):
        raise common.NotEnoughDataError(coded(Skip.ALL_DIFFERENCES_ZERO, first=first, second=second))
    return a, b, differences, dropped, first, second


def paired_t(
    x1: np.ndarray,
    x2: np.ndarray,
    *,
    labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
) -> Result:
    """Paired t-test of the mean difference x1 - x2.

    Parameters
    ----------
    x1, x2 : numpy.ndarray
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
        Estimate "mean difference (first - second)" with a t interval; effect Hedges'
        g_z = J(n-1) mean(d) / sd(d) with a noncentral-t interval; ``extra["d_z"]``
        holds the uncorrected d_z.

    Notes
    -----
    Matches R's ``t.test(x1, x2, paired = TRUE)``. Assumes independent units and
    differences whose mean is close to normal.

    References
    ----------
    Lakens, D. (2013). Calculating and reporting effect sizes to facilitate cumulative
    science. Frontiers in Psychology 4:863. doi:10.3389/fpsyg.2013.00863

    Examples
    --------
    R's ``sleep`` data (datasets::sleep): the same ten patients under two drugs,
    as ``t.test(extra[group == 1], extra[group == 2], paired = TRUE)``:

    >>> import math
    >>> from scipy import stats
    >>> drug1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
    >>> drug2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]
    >>> result = paired_t(drug1, drug2, labels=("drug 1", "drug 2"))
    >>> round(result.statistic, 4), result.df, round(result.p_value, 4)
    (-4.0621, 9.0, 0.0028)
    >>> result.estimate.value, round(result.estimate.ci_low, 4), round(result.estimate.ci_high, 4)
    (-1.58, -2.4599, -0.7001)
    >>> math.isclose(result.p_value, stats.ttest_rel(drug1, drug2).pvalue)
    True
    """
    common.check_options(alternative, confidence)
    a, b, differences, dropped, first, second = _differences(x1, x2, labels, 2)
    common.require_spread(differences, f"the differences {first} - {second}")
    tested = mean_t(differences, 0.0, f"{first} - {second}", EffectKind.HEDGES_G_Z, alternative, confidence)
    mean = tested.summary["mean"]
    return Result(
        outcome="",
        exposure=None,
        design=Design.PAIRED_CONTINUOUS,
        test=Test.PAIRED_T,
        statistic_name="t",
        statistic=tested.t,
        df=float(tested.df),
        p_value=common.p_from_t(tested.t, tested.df, alternative),
        p_method=PMethod.ASYMPTOTIC,
        alternative=alternative,
        confidence=confidence,
        n=int(differences.size),
        n_excluded=dropped,
        estimate=Estimate(EstimateKind.PAIRED_MEAN_DIFFERENCE, mean, tested.ci_low, tested.ci_high, levels=(first, second)),
        effect=tested.effect,
        groups=[common.describe(first, a), common.describe(second, b), tested.summary],
        extra={"d_z": mean / tested.summary["sd"]},
    )


def wilcoxon_paired(
    x1: np.ndarray,
    x2: np.ndarray,
    *,
    labels: tuple[str, str] = ("first", "second"),
    alternative: str = "two-sided",
    confidence: float = 0.95,
    exact: bool | str = "auto",
    correct: bool = True,
) -> Result:
    """Wilcoxon signed-rank test on paired differences x1 - x2.

    Parameters
    ----------
    x1, x2, labels, alternative, confidence
        As for :func:`paired_t`.
    exact, correct
        As for :func:`statmargin.stats.onesample.wilcoxon_signed_rank`.

    Returns
    -------
    Result
        Statistic V; estimate pseudo-median of the differences (Hodges-Lehmann) with
        its interval; effect matched-pairs rank-biserial r. Zero differences are
        dropped from the ranking and counted in ``extra["n_zero_differences"]``.

    Notes
    -----
    Matches R's ``wilcox.test(x1, x2, paired = TRUE, conf.int = TRUE)``. Assumes the
    differences are symmetric about their centre.

    References
    ----------
    Wilcoxon, F. (1945). Individual comparisons by ranking methods. Biometrics
    Bulletin 1(6):80-83. doi:10.2307/3001968

    Examples
    --------
    Hamilton depression scores at two visits, from R's ``?wilcox.test`` example
    (Hollander & Wolfe 1973, p. 29); no ties, so the p-value is exact:

    >>> import math
    >>> from scipy import stats
    >>> x = [1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30]
    >>> y = [0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29]
    >>> result = wilcoxon_paired(x, y, labels=("first", "second"), alternative="greater")
    >>> result.statistic, result.p_method, round(result.p_value, 4)
    (40.0, 'exact', 0.0195)
    >>> scipy_p = stats.wilcoxon(x, y, alternative="greater", method="exact").pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True

    R's ``sleep`` data has one zero difference and ties, so the zero is dropped and
    the normal approximation (tie and continuity corrections) is used:

    >>> drug1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
    >>> drug2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]
    >>> result = wilcoxon_paired(drug1, drug2, labels=("drug 1", "drug 2"))
    >>> result.statistic, result.extra["n_zero_differences"], round(result.p_value, 4)
    (0.0, 1, 0.0091)
    >>> scipy_p = stats.wilcoxon(drug1, drug2, zero_method="wilcox", correction=True,
    ...                          method="approx").pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True
    """
    common.check_options(alternative, confidence)
    a, b, differences, dropped, first, second = _differences(x1, x2, labels, 1)
    result = signed_rank_result(
        differences,
        mu=0.0,
        alternative=alternative,
        confidence=confidence,
        exact=exact,
        correct=correct,
        what=f"the differences {first} - {second}",
    )
    assert result.estimate is not None
    result.design = Design.PAIRED_CONTINUOUS
    result.n_excluded = dropped
    result.estimate = Estimate(
        EstimateKind.PAIRED_PSEUDO_MEDIAN,
        result.estimate.value,
        result.estimate.ci_low,
        result.estimate.ci_high,
        levels=(first, second),
    )
    result.groups = [
        common.describe(first, a),
        common.describe(second, b),
        common.describe(f"{first} - {second}", differences),
    ]
    return result
