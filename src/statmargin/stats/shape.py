"""Shape checks: per-group summaries, a normal-shape verdict, spread equality, expected counts.

The verdict rule lives in one table, ``SHAPE_RULES`` (by sample size):

============  =====================================================================
n             rule
============  =====================================================================
n < 3         cannot be checked: treated as not normal-shaped (rank-based test)
3 <= n <= 50  Shapiro-Wilk p < 0.05 means not normal-shaped
              (Shapiro & Wilk 1965, Biometrika 52:591-611, doi:10.1093/biomet/52.3-4.591;
              Kim 2013 for the 50 cut-off)
51..300       |z| > 3.29 for skewness or excess kurtosis (z = estimate / standard error)
              means not normal-shaped (Kim 2013, Restor Dent Endod 38(1):52-54,
              doi:10.5395/rde.2013.38.1.52)
n > 300       |skewness| > 2 or |excess kurtosis| > 7 means not normal-shaped
              (Kim 2013; West, Finch & Curran 1995, in Hoyle (ed.) Structural
              Equation Modeling, Sage, pp. 56-75)
============  =====================================================================

Formal tests flag trivial departures in large samples, which is why the bands
switch from a test to effect-size style thresholds as n grows.

Skewness and excess kurtosis are the adjusted Fisher-Pearson estimators G1 and G2
(``scipy.stats.skew/kurtosis`` with ``bias=False``; the same formulas as
``skewness_G1`` and ``excess_kurtosis_G2`` in tests/reference/README.md).
Quartiles use linear interpolation (Hyndman & Fan 1996 type 7, R's default).
Outliers are counted with Tukey's 1.5 IQR fences (Tukey 1977, Exploratory Data
Analysis, Addison-Wesley).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import asdict, dataclass
from typing import Any

import numpy as np
from scipy import stats

NORMALITY_ALPHA = 0.05  # Shapiro-Wilk level (common practice)
MEDIUM_Z_LIMIT = 3.29  # two-sided 0.001 normal quantile (Kim 2013)
LARGE_SKEW_LIMIT = 2.0  # |G1| (Kim 2013; West, Finch & Curran 1995)
LARGE_KURTOSIS_LIMIT = 7.0  # |G2| (Kim 2013; West, Finch & Curran 1995)
OUTLIER_FENCE = 1.5  # IQR multiples (Tukey 1977)

# (lowest n, highest n, check name). Evaluated top to bottom; the first band containing n applies.
SHAPE_RULES: tuple[tuple[int, float, str], ...] = (
    (0, 2, "too_few"),
    (3, 50, "shapiro_wilk"),
    (51, 300, "moment_z"),
    (301, math.inf, "moment_limits"),
)


@dataclass
class GroupSummary:
    """Descriptive numbers and the normal-shape verdict for one group of values."""

    label: str
    n: int
    mean: float | None
    sd: float | None
    median: float | None
    q1: float | None
    q3: float | None
    min: float | None
    max: float | None
    skewness: float | None  # adjusted Fisher-Pearson G1
    excess_kurtosis: float | None  # adjusted G2
    n_outliers: int
    check: str  # "too_few", "shapiro_wilk", "moment_z", "moment_limits", "constant"
    check_statistic: float | None  # W for Shapiro-Wilk, else the largest |z| or None
    check_p: float | None
    normal_shaped: bool | None  # None when it could not be checked
    verdict: str  # one short phrase, e.g. "right-skewed (Shapiro-Wilk p = 0.003)"
    direction: str = ""  # "close to normal", "right-skewed", "left-skewed", "heavy- or light-tailed", ...
    evidence: str = ""  # the check behind the verdict, e.g. "Shapiro-Wilk p = 0.003"

    def to_record(self) -> dict:
        return asdict(self)


def _float(value) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None


def skewness_se(n: int) -> float:
    """Standard error of G1: sqrt(6n(n-1) / ((n-2)(n+1)(n+3))) (as used by Kim 2013)."""
    return math.sqrt(6.0 * n * (n - 1) / ((n - 2) * (n + 1) * (n + 3)))


def kurtosis_se(n: int) -> float:
    """Standard error of G2: 2 SE(G1) sqrt((n^2-1) / ((n-3)(n+5))) (as used by Kim 2013)."""
    return 2.0 * skewness_se(n) * math.sqrt((n * n - 1.0) / ((n - 3) * (n + 5)))


def _rule_for(n: int) -> str:
    for low, high, check in SHAPE_RULES:
        if low <= n <= high:
            return check
    return "too_few"


def _direction(skew: float | None) -> str:
    if skew is None:
        return "not normal-shaped"
    if skew > 0.5:
        return "right-skewed"
    if skew < -0.5:
        return "left-skewed"
    return "heavy- or light-tailed"


def fmt_p(p: float) -> str:
    """A p-value for a reason sentence: 'p < 0.001' or 'p = 0.012'."""
    return "p < 0.001" if p < 0.001 else f"p = {p:.3f}"


def summarize(values, label: str = "all") -> GroupSummary:
    """Summaries and the normal-shape verdict for one group (see :func:`_summarize`)."""
    return with_direction(_summarize(values, label))


def with_direction(summary: GroupSummary) -> GroupSummary:
    """The summary with its verdict split into the direction and the evidence behind it."""
    head, _, tail = summary.verdict.partition(" (")
    summary.direction = head
    summary.evidence = tail.rstrip(")")
    return summary


def _summarize(values, label: str) -> GroupSummary:
    """Summaries and the normal-shape verdict for one group.

    Parameters
    ----------
    values : array_like
        The group's values (NaN already removed).
    label : str
        The group's label, kept in the summary.

    Returns
    -------
    GroupSummary
        n, mean, sd (n-1), median, quartiles (type 7), range, G1, G2, Tukey outlier
        count, the check used (see ``SHAPE_RULES``) with its statistic and p-value,
        and the verdict.

    Notes
    -----
    A constant group has no shape to check; its verdict is "constant" and
    ``normal_shaped`` is None. G1 needs n >= 3 and G2 needs n >= 4.
    """
    x = np.asarray(values, dtype=float)
    n = int(x.size)
    if n == 0:
        return GroupSummary(label, 0, None, None, None, None, None, None, None, None, None, 0,
                            "too_few", None, None, None, "no values")
    q1, median, q3 = (float(v) for v in np.quantile(x, [0.25, 0.5, 0.75]))
    iqr = q3 - q1
    n_out = int(np.sum((x < q1 - OUTLIER_FENCE * iqr) | (x > q3 + OUTLIER_FENCE * iqr)))
    sd = _float(np.std(x, ddof=1)) if n > 1 else None
    constant = bool(np.all(x == x[0])) and n >= 3  # fewer than 3 values: "too few" says more
    skew = kurt = None
    if not constant:
        if n >= 3:
            skew = _float(stats.skew(x, bias=False))
        if n >= 4:
            kurt = _float(stats.kurtosis(x, bias=False, fisher=True))
    base: dict[str, Any] = dict(label=label, n=n, mean=float(np.mean(x)), sd=sd, median=median, q1=q1, q3=q3,
                min=float(np.min(x)), max=float(np.max(x)), skewness=skew,
                excess_kurtosis=kurt, n_outliers=n_out)
    return judge(base, constant, x)


def judge(base: dict[str, Any], constant: bool, x: np.ndarray | None) -> GroupSummary:
    """The verdict of ``SHAPE_RULES`` for a group's summaries (``x``: its values, for Shapiro-Wilk)."""
    n, skew, kurt = base["n"], base["skewness"], base["excess_kurtosis"]
    if constant:
        return GroupSummary(**base, check="constant", check_statistic=None, check_p=None,
                            normal_shaped=None, verdict="all values are equal")
    check = _rule_for(n)
    if check == "too_few":
        return GroupSummary(**base, check=check, check_statistic=None, check_p=None,
                            normal_shaped=None, verdict=f"too few values to check the shape (n = {n})")
    if check == "shapiro_wilk":
        assert x is not None  # up to 50 values the check reads them
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # scipy warns on ties/small n; the verdict stands
            w, p = stats.shapiro(x)
        ok = bool(p >= NORMALITY_ALPHA)
        verdict = ("close to normal" if ok else _direction(skew)) + f" (Shapiro-Wilk {fmt_p(float(p))})"
        return GroupSummary(**base, check=check, check_statistic=_float(w), check_p=_float(p),
                            normal_shaped=ok, verdict=verdict)
    if check == "moment_z":
        z_skew = (skew or 0.0) / skewness_se(n)
        z_kurt = (kurt or 0.0) / kurtosis_se(n)
        z = max(abs(z_skew), abs(z_kurt))
        ok = z <= MEDIUM_Z_LIMIT
        verdict = ("close to normal" if ok else _direction(skew if abs(z_skew) > MEDIUM_Z_LIMIT else None))
        verdict += f" (skewness z = {z_skew:.2f}, kurtosis z = {z_kurt:.2f})"
        return GroupSummary(**base, check=check, check_statistic=z, check_p=None,
                            normal_shaped=ok, verdict=verdict)
    ok = abs(skew or 0.0) <= LARGE_SKEW_LIMIT and abs(kurt or 0.0) <= LARGE_KURTOSIS_LIMIT
    verdict = ("close to normal" if ok else _direction(skew if abs(skew or 0) > LARGE_SKEW_LIMIT else None))
    verdict += f" (skewness {skew:.2f}, excess kurtosis {kurt:.2f})"
    return GroupSummary(**base, check=check, check_statistic=None, check_p=None,
                        normal_shaped=ok, verdict=verdict)


@dataclass
class ShapeAssessment:
    """The shape verdict over all groups of one analysis."""

    summaries: list[GroupSummary]
    normal_shaped: bool  # every checkable group passed and none was too small to check
    failing: list[str]  # labels of groups judged not normal-shaped
    unchecked: list[str]  # labels of groups too small to check
    constant: list[str]  # labels of groups whose values are all equal

    def to_record(self) -> dict:
        return {
            "normal_shaped": self.normal_shaped,
            "failing": list(self.failing),
            "unchecked": list(self.unchecked),
            "constant": list(self.constant),
            "groups": [s.to_record() for s in self.summaries],
        }


def assess(groups: dict[str, np.ndarray]) -> ShapeAssessment:
    """Summarize every group and combine the verdicts.

    Parameters
    ----------
    groups : dict of str to array_like
        Values per group (for paired designs pass the differences as one group).

    Returns
    -------
    ShapeAssessment
        Per-group summaries; the data count as normal-shaped only when every group
        was checked and passed (constant groups count as not checked). Groups too small to check lead to a rank-based
        test (the safer choice when shape is unknown).
    """
    return combine([summarize(v, str(k)) for k, v in groups.items()])


def combine(summaries: list[GroupSummary]) -> ShapeAssessment:
    """The verdict over all groups from each group's summary (see :func:`assess`)."""
    failing = [s.label for s in summaries if s.normal_shaped is False]
    unchecked = [s.label for s in summaries if s.normal_shaped is None and s.check != "constant"]
    constant = [s.label for s in summaries if s.check == "constant"]
    # A constant group has no shape to judge; like a group too small to check, it leads to a rank test.
    ok = not failing and not unchecked and not constant
    return ShapeAssessment(summaries, ok, failing, unchecked, constant)


@dataclass(frozen=True)
class SpreadCheck:
    """Brown-Forsythe test of equal spreads (Levene's test centred on medians)."""

    statistic: float
    df: tuple[float, float]
    p_value: float
    name: str = "brown_forsythe"

    def to_record(self) -> dict:
        return {"name": self.name, "statistic": self.statistic, "df": list(self.df), "p_value": self.p_value}


def spread_check(groups: dict[str, np.ndarray]) -> SpreadCheck | None:
    """Brown-Forsythe test that the groups have equal spread.

    Parameters
    ----------
    groups : dict of str to array_like
        Values per group.

    Returns
    -------
    SpreadCheck or None
        F, df (k-1, N-k) and p; None when it cannot be computed (fewer than two
        groups, no residual df, or every absolute deviation equal).

    Notes
    -----
    ``scipy.stats.levene(center="median")``: a one-way ANOVA on absolute deviations
    from group medians (Brown & Forsythe 1974, JASA 69:364-367,
    doi:10.1080/01621459.1974.10482955).
    """
    arrays = [np.asarray(v, dtype=float) for v in groups.values()]
    k = len(arrays)
    total = sum(a.size for a in arrays)
    if k < 2 or total - k < 1 or any(a.size == 0 for a in arrays):
        return None
    deviations = np.concatenate([np.abs(a - np.median(a)) for a in arrays])
    if np.all(deviations == deviations[0]):
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        f, p = stats.levene(*arrays, center="median")
    if not (math.isfinite(f) and math.isfinite(p)):
        return None
    return SpreadCheck(float(f), (float(k - 1), float(total - k)), float(p))


def expected_counts(observed) -> np.ndarray:
    """Expected counts under independence: row total x column total / grand total."""
    obs = np.asarray(observed, dtype=float)
    total = obs.sum()
    return np.outer(obs.sum(axis=1), obs.sum(axis=0)) / total


def count_check(expected) -> dict:
    """The smallest expected count and how many cells fall below 5 (Cochran 1954)."""
    exp = np.asarray(expected, dtype=float)
    return {
        "expected": exp.tolist(),
        "min_expected": float(exp.min()),
        "n_expected_lt_5": int(np.sum(exp < 5)),
        "n_cells": int(exp.size),
    }
