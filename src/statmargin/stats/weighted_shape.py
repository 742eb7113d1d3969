"""Shape and spread checks of counted rows (a count column): the checks of the repeated records.

The one judgement per analysis that chooses the test (``judge_shape_weighted``,
``judge_spread_weighted``) equals ``shape.judge_shape`` and ``shape.judge_spread``
of the repeated records, including the seeded subsample Shapiro-Wilk reads
above 5000 records (the same records are picked, found from cumulative counts).

A row with count c stands for c identical records, so the shape checks that
choose a test see what they would see on the records listed one per row: the
same summaries (n, mean, SD, quartiles, G1, G2, Tukey outliers), the same
verdict and the same Brown-Forsythe check of spread. Up to 50 records the rows
are repeated; above that every number is computed from the rows and their
counts in memory linear in the rows (Shapiro-Wilk reads at most 5000 records,
repeated from the rows).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from scipy import stats

from statmargin.stats.shape import (
    OUTLIER_FENCE,
    SHAPE_ALPHA,
    SHAPIRO_LIMIT,
    SPREAD_ALPHA,
    SPREAD_RATIO_LIMIT,
    SUBSAMPLE_SEED,
    GroupShape,
    GroupSummary,
    ShapeAssessment,
    ShapeJudgement,
    SpreadCheck,
    SpreadJudgement,
    combine,
    combine_shapes,
    group_shape,
    judge,
    shapiro,
    spread_verdict,
    summarize,
)
from statmargin.stats.weighted import weighted_mean, weighted_median
from statmargin.stats.weighted_select import collapse

# Up to this many records the summaries are those of the repeated records themselves (cheap,
# and exact by construction); above it they come from the rows and their counts.
REPEAT_UP_TO = 50

Counted = tuple[Any, Any]  # (values, counts) of one group


def _rows(values: Any, counts: Any) -> tuple[np.ndarray, np.ndarray]:
    """Rows with a count above 0, sorted by value; counts as int64."""
    x = np.asarray(values, dtype=float).ravel()
    w = np.asarray(counts, dtype=float).ravel()
    keep = np.isfinite(x) & np.isfinite(w) & (w > 0)
    x, w = x[keep], w[keep].astype(np.int64)
    order = np.argsort(x, kind="stable")
    return x[order], w[order]


def quantiles(values: Any, counts: Any, probabilities: Any) -> np.ndarray:
    """``np.quantile`` (linear interpolation, Hyndman & Fan type 7) of the repeated records.

    Examples
    --------
    >>> x, c = np.array([3.0, 1.0, 7.0]), np.array([2, 3, 1])
    >>> quantiles(x, c, [0.25, 0.5, 0.9]).tolist() == np.quantile(np.repeat(x, c), [0.25, 0.5, 0.9]).tolist()
    True
    """
    x, w = _rows(values, counts)
    n = int(w.sum())
    upper = np.cumsum(w)
    out = []
    for q in np.atleast_1d(np.asarray(probabilities, dtype=float)):
        h = (n - 1) * float(q)
        low = int(math.floor(h))
        a = float(x[np.searchsorted(upper, low, side="right")])
        b = float(x[np.searchsorted(upper, min(low + 1, n - 1), side="right")])
        t = h - low
        # NumPy's lerp: from the nearer end, so the result is exact at t = 0 and t = 1.
        out.append(b - (b - a) * (1.0 - t) if t >= 0.5 else a + (b - a) * t)
    return np.array(out)


def summarize_weighted(values: Any, counts: Any, label: str = "all") -> GroupSummary:
    """``shape.summarize`` of the repeated records.

    Parameters
    ----------
    values, counts : array-like
        One value and one count of records per row (rows with a count of 0 or a
        missing value stand for no record).
    label : str

    Returns
    -------
    GroupSummary
        Equal to ``summarize(np.repeat(values, counts))``: the moments and the
        adjusted G1 and G2 from weighted central moments (G1 = sqrt(n(n-1)) /
        (n-2) m3 / m2^1.5; G2 = ((n^2-1) m4 / m2^2 - 3 (n-1)^2) / ((n-2)(n-3)), the
        formulas of ``scipy.stats.skew``/``kurtosis`` with ``bias=False``), the
        quartiles by type-7 interpolation between order statistics found from
        cumulative counts, and the outliers as the records beyond Tukey's fences.

    Examples
    --------
    >>> rng = np.random.default_rng(7)
    >>> x, c = rng.lognormal(size=40), rng.integers(1, 6, size=40)
    >>> a, b = summarize_weighted(x, c), summarize(np.repeat(x, c))
    >>> a.n == b.n, math.isclose(a.skewness, b.skewness, rel_tol=1e-9), (a.check, a.departure) == (b.check, b.departure)
    (True, True, True)
    """
    x, w = _rows(values, counts)
    n = int(w.sum())
    if n <= REPEAT_UP_TO:
        return summarize(np.repeat(x, w), label)
    mean = weighted_mean(x, w)
    d = x - mean
    m2 = math.fsum(w * d**2) / n
    m3 = math.fsum(w * d**3) / n
    m4 = math.fsum(w * d**4) / n
    constant = bool(x[0] == x[-1])
    skew = kurt = None
    if not constant:
        skew = _finite(math.sqrt(n * (n - 1.0)) / (n - 2.0) * m3 / m2**1.5)
        kurt = _finite(((n * n - 1.0) * m4 / m2**2 - 3.0 * (n - 1.0) ** 2) / ((n - 2.0) * (n - 3.0)))
    q1, median, q3 = (float(v) for v in quantiles(x, w, [0.25, 0.5, 0.75]))
    iqr = q3 - q1
    outside = (x < q1 - OUTLIER_FENCE * iqr) | (x > q3 + OUTLIER_FENCE * iqr)
    base: dict[str, Any] = dict(
        label=label, n=n, mean=mean, sd=_finite(math.sqrt(m2 * n / (n - 1))), median=median, q1=q1, q3=q3,
        min=float(x[0]), max=float(x[-1]), skewness=skew, excess_kurtosis=kurt,
        n_outliers=int(w[outside].sum()),
    )
    # Shapiro-Wilk above 5000 records reads the records at seeded positions in row order: the rows as given.
    return judge(base, constant, None if constant else group_shape_weighted(label, values, counts))


def _finite(value: float) -> float | None:
    return value if math.isfinite(value) else None


def assess_weighted(groups: Mapping[str, Counted]) -> ShapeAssessment:
    """``shape.assess`` of the repeated records of each group ``{label: (values, counts)}``."""
    return combine([summarize_weighted(v, c, str(label)) for label, (v, c) in groups.items()])


def spread_check_weighted(groups: Mapping[str, Counted]) -> SpreadCheck | None:
    """``shape.spread_check`` (Brown-Forsythe) of the repeated records.

    Notes
    -----
    The one-way ANOVA on absolute deviations from each group's median
    (``scipy.stats.levene(center="median")``), with every sum over records
    written as a sum over rows weighted by their counts.

    Examples
    --------
    >>> from statmargin.stats.shape import spread_check
    >>> groups = {"a": (np.array([1.0, 2.0, 4.0]), np.array([3, 2, 1])),
    ...           "b": (np.array([2.0, 5.0, 9.0]), np.array([1, 4, 2]))}
    >>> plain = spread_check({k: np.repeat(v, c) for k, (v, c) in groups.items()})
    >>> math.isclose(spread_check_weighted(groups).p_value, plain.p_value)
    True
    """
    rows = [_rows(v, c) for v, c in groups.values()]
    k = len(rows)
    sizes = [int(w.sum()) for _, w in rows]
    total = sum(sizes)
    if k < 2 or total - k < 1 or any(size == 0 for size in sizes):
        return None
    deviations = [(np.abs(x - weighted_median(x, w)), w) for x, w in rows]
    every = np.concatenate([z for z, _ in deviations])
    if np.all(every == every[0]):
        return None
    means = [weighted_mean(z, w) for z, w in deviations]
    grand = math.fsum(m * size for m, size in zip(means, sizes, strict=True)) / total
    between = math.fsum(size * (m - grand) ** 2 for m, size in zip(means, sizes, strict=True))
    within = math.fsum(math.fsum(w * (z - m) ** 2) for (z, w), m in zip(deviations, means, strict=True))
    if within <= 0:
        return None
    f = (total - k) / (k - 1) * between / within
    p = float(stats.f.sf(f, k - 1, total - k))
    if not (math.isfinite(f) and math.isfinite(p)):
        return None
    return SpreadCheck(float(f), (float(k - 1), float(total - k)), p)


def _moments(x: np.ndarray, w: np.ndarray) -> tuple[float, float | None, float | None]:
    """SD (n - 1), G1 and G2 of the repeated records (formulas of ``shape.adjusted_moments``)."""
    n = int(w.sum())
    mean = weighted_mean(x, w)
    d = x - mean
    m2 = math.fsum(w * d**2) / n
    sd = math.sqrt(m2 * n / (n - 1))
    if m2 == 0.0:
        return sd, None, None
    m3 = math.fsum(w * d**3) / n
    m4 = math.fsum(w * d**4) / n
    skew = _finite(math.sqrt(n * (n - 1.0)) / (n - 2.0) * m3 / m2**1.5)
    kurt = _finite((n - 1.0) / ((n - 2.0) * (n - 3.0)) * ((n + 1.0) * m4 / (m2 * m2) - 3.0 * (n - 1.0)))
    return sd, skew, kurt


def group_shape_weighted(label: str, values: Any, counts: Any) -> GroupShape:
    """``shape.group_shape`` of the repeated records of one group.

    Up to ``SHAPIRO_LIMIT`` records the records are repeated (Shapiro-Wilk reads them
    all); above it the moments come from the rows and their counts, and Shapiro-Wilk
    reads the records at the positions ``shape.group_shape`` would draw from the
    records listed in row order, so the judgement is the same.

    Examples
    --------
    >>> rng = np.random.default_rng(3)
    >>> x, c = rng.lognormal(size=3000), rng.integers(1, 4, size=3000)
    >>> a, b = group_shape_weighted("a", x, c), group_shape("a", np.repeat(x, c))
    >>> a.n == b.n, math.isclose(a.shapiro_p, b.shapiro_p), math.isclose(a.skewness, b.skewness)
    (True, True, True)
    """
    v = np.asarray(values, dtype=float).ravel()
    w = np.asarray(counts, dtype=float).ravel()
    keep = np.isfinite(v) & np.isfinite(w) & (w > 0)
    v, w = v[keep], w[keep].astype(np.int64)
    n = int(w.sum())
    if n <= SHAPIRO_LIMIT:
        return group_shape(label, np.repeat(v, w))
    sd, skew, kurt = _moments(v, w)
    if not sd:
        return GroupShape(label, n, sd, None, None, None, 0)
    picked = np.random.default_rng(SUBSAMPLE_SEED).choice(n, SHAPIRO_LIMIT, replace=False)
    rows = np.searchsorted(np.cumsum(w), picked, side="right")
    w_statistic, p = shapiro(v[rows])
    ux, uw = collapse(v, w)  # distinct values with their records
    at_low, at_high = int(uw[0]), int(uw[-1])
    piled = (at_low if at_low >= 2 else 0) + (at_high if at_high >= 2 else 0)
    q1, q2, q7 = quantiles(ux, uw, [0.125, 0.5, 0.875])
    octile = None if q7 == q1 else _finite(float((q7 + q1 - 2 * q2) / (q7 - q1)))
    return GroupShape(label, n, sd, skew, kurt, p, piled, octile, w_statistic)


def judge_shape_weighted(groups: Mapping[str, Counted], *, alpha: float = SHAPE_ALPHA) -> ShapeJudgement:
    """``shape.judge_shape`` of the repeated records of each group ``{label: (values, counts)}``.

    Examples
    --------
    >>> from statmargin.stats.shape import judge_shape
    >>> rng = np.random.default_rng(4)
    >>> groups = {g: (rng.gamma(2.0, size=30), rng.integers(1, 5, size=30)) for g in ("a", "b")}
    >>> a = judge_shape_weighted(groups)
    >>> b = judge_shape({g: np.repeat(v, c) for g, (v, c) in groups.items()})
    >>> a.direction == b.direction, math.isclose(a.p_value, b.p_value)
    (True, True)
    """
    return combine_shapes([group_shape_weighted(str(label), v, c) for label, (v, c) in groups.items()], alpha)


def judge_spread_weighted(groups: Mapping[str, Counted], *, ratio_limit: float = SPREAD_RATIO_LIMIT,
                          alpha: float = SPREAD_ALPHA) -> SpreadJudgement:
    """``shape.judge_spread`` of the repeated records of each group ``{label: (values, counts)}``."""
    sds: dict[str, float] = {}
    kept: dict[str, Counted] = {}
    for label, (values, counts) in groups.items():
        x, w = _rows(values, counts)
        if int(w.sum()) >= 2:
            sds[str(label)] = _moments(x, w)[0]
            kept[str(label)] = (x, w)
    check = spread_check_weighted(kept) if len(sds) >= 2 else None
    return spread_verdict(sds, check, ratio_limit, alpha)
