"""Where a rank statistic of a shifted group crosses a critical value: the exact step, in few evaluations.

Inverting a two-group rank test over shifts d (group a moved by -d against group b)
gives a statistic that falls in steps as d grows and jumps only where some a_i - d
meets some b_j, that is at the pairwise differences a_i - b_j. An interval bound is the
difference at which the statistic crosses the critical value. With continuous data
there are about n_a n_b such differences (10^10 for two groups of 100,000), so the
search works in two phases, each evaluation of the statistic costing O(n log n):

1. regula falsi (the Illinois variant, with bisection when it stalls) on the statistic
   as if it were smooth, from a bracket found by stepping out from the estimate, until
   the bracket holds at most ``ENUMERATE_AT`` pairs of values;
2. those pairs are listed (their differences sorted) and the step is found among them
   by interpolation search, evaluating the statistic between neighbouring differences.

The answer is the data difference at which the statistic crosses, the same exact step
a search over all differences would give, with memory O(n_a + n_b + ENUMERATE_AT).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

ENUMERATE_AT = 4096  # pairs in the bracket at which they are listed and searched directly
MAX_EVALUATIONS = 200  # a safety net; the searches take about 10 to 20


def _finite(value: float) -> float:
    """The value, with infinities as the largest float of their sign (the searches compare signs)."""
    if math.isnan(value):
        return 0.0
    return value if math.isfinite(value) else math.copysign(1e300, value)


def pairs_between(a: np.ndarray, b: np.ndarray, left: float, right: float) -> int:
    """How many pairs (a_i, b_j) of the sorted arrays change order with the shift from left to right.

    Pair (i, j) has b_j at or below a_i - d for d = left but not below it for d = right;
    its difference a_i - b_j lies in [left, right] up to rounding (a pair tied at
    ``left`` counts: a tie is half a step there). The comparisons are those the
    statistic makes (``a - d`` against ``b``), so no step is missed.
    """
    return int(np.sum(np.searchsorted(b, a - left, "right") - np.searchsorted(b, a - right, "left")))


def differences_between(a: np.ndarray, b: np.ndarray, left: float, right: float) -> np.ndarray:
    """The distinct differences a_i - b_j of the pairs counted by :func:`pairs_between`, sorted."""
    start = np.searchsorted(b, a - right, "left")
    stop = np.searchsorted(b, a - left, "right")
    widths = stop - start
    keep = widths > 0
    rows = np.repeat(np.flatnonzero(keep), widths[keep])
    offsets = np.arange(int(widths.sum())) - np.repeat(np.cumsum(widths[keep]) - widths[keep], widths[keep])
    cols = np.repeat(start[keep], widths[keep]) + offsets
    return np.unique(a[rows] - b[cols])


def outward_bracket(f: Callable[[float], float], start: float, f_start: float, width: float, limit: float,
                    f_limit: Callable[[], float]) -> tuple[float, float, float, float]:
    """A bracket for :func:`step_crossing` found by stepping from ``start`` towards ``limit``.

    ``f(start)`` is ``f_start`` and lies on one side of 0; steps of ``width``, growing
    fourfold, move towards ``limit`` until f is on the other side (``f_limit()`` is f at
    ``limit``, used when the steps pass it). Returns (left, right, f(left), f(right))
    ordered by d; when even ``limit`` is on the start's side, both ends are ``limit``.
    """
    downward = limit < start
    positive = f_start > 0  # searching down from f <= 0 for f > 0, or up from f > 0 for f <= 0
    near, f_near = start, f_start
    step = width if math.isfinite(width) and width > 0 else abs(limit - start)
    for _ in range(MAX_EVALUATIONS):
        d = start - step if downward else start + step
        if not math.isfinite(d) or ((d <= limit) if downward else (d >= limit)):
            d, value = limit, f_limit()
        else:
            value = f(d)
        if (value > 0) != positive:
            break
        near, f_near = d, value
        if d == limit:
            return limit, limit, value, value
        step *= 4.0
    else:  # steps of growing size reach any finite limit long before this; a NaN f never settles
        return limit, limit, f_near, f_near
    return (d, near, value, f_near) if downward else (near, d, f_near, value)


def step_crossing(
    f: Callable[[float], float],
    a: np.ndarray,
    b: np.ndarray,
    left: float,
    right: float,
    f_left: float,
    f_right: float,
) -> float:
    """The difference a_i - b_j at which a falling step function ``f`` goes from above 0 to 0 or below.

    Parameters
    ----------
    f : callable
        The statistic minus its target, as a function of the shift d; non-increasing
        where it matters, changing only at the pairwise differences of ``a`` and ``b``.
    a, b : numpy.ndarray
        Distinct values of the two groups, sorted ascending (the jump points are a_i - b_j).
    left, right : float
        A bracket with ``f(left) > 0 >= f(right)``; ``f_left`` and ``f_right`` are those values.

    Returns
    -------
    float
        The difference d* in (left, right] with f above 0 just below it and at most 0
        just above it (when f is not monotone, one such crossing).

    Notes
    -----
    Regula falsi with the Illinois modification (Dowell & Jarratt 1971) while the
    bracket holds many pairs, then interpolation search over the listed differences.
    Written here because SciPy's root finders stop at a tolerance in d, not at a jump of
    a step function; checked against a search over all differences in the tests.

    References
    ----------
    Dowell, M., & Jarratt, P. (1971). A modified regula falsi method for computing the
    root of an equation. BIT 11(2):168-174. doi:10.1007/BF01934364

    Examples
    --------
    The number of differences above d minus 2.5, for a = (1, 4, 9) and b = (0.5, 2): the
    differences are -1, 0.5, 2, 3.5, 7, 8.5; three or more lie above d while d is below 3.5:

    >>> a, b = np.array([1.0, 4.0, 9.0]), np.array([0.5, 2.0])
    >>> above = lambda d: float(np.sum(np.subtract.outer(a, b) > d)) - 2.5
    >>> step_crossing(above, a, b, -10.0, 10.0, above(-10.0), above(10.0))
    3.5
    """
    f_left, f_right = _finite(f_left), _finite(f_right)
    # Per end, the pairs not yet past it: b_j at or below a_i - left, below a_i - right.
    past_left = np.searchsorted(b, a - left, "right")
    past_right = np.searchsorted(b, a - right, "left")
    evaluations = 0
    side = 0  # which end moved last (Illinois: halve the other end's value when one end keeps moving)
    while evaluations < MAX_EVALUATIONS:
        if int(np.sum(past_left - past_right)) <= ENUMERATE_AT:
            return _search_listed(f, differences_between(a, b, left, right), left, right, f_left, f_right)
        bisect = not (abs(f_left) < 1e299 and abs(f_right) < 1e299)
        d = 0.5 * (left + right) if bisect else (left * f_right - right * f_left) / (f_right - f_left)
        if not (left < d < right):
            d = 0.5 * (left + right)
            if not (left < d < right):  # no float between the ends: the jump is at one of them
                break
        value = _finite(f(d))
        evaluations += 1
        if value > 0:
            left, f_left = d, value
            past_left = np.searchsorted(b, a - left, "right")
            if side == 1:
                f_right *= 0.5
            side = 1
        else:
            right, f_right = d, value
            past_right = np.searchsorted(b, a - right, "left")
            if side == -1:
                f_left *= 0.5
            side = -1
    listed = differences_between(a, b, left, right)
    return float(listed[0]) if listed.size else right


def _search_listed(f: Callable[[float], float], listed: np.ndarray, left: float, right: float,
                   f_left: float, f_right: float) -> float:
    """The step among the sorted differences ``listed`` (all the jumps in (left, right]) where f crosses 0.

    Between neighbouring differences f is constant; probing at midpoints ``P_t`` finds
    the first t with f(P_t) <= 0, the jump being ``listed[t]`` (P_0 = left, P_K = right).
    """
    if listed.size == 0:  # no pair changes order (only rounding could do this): the bracket's end
        return right
    mids = np.concatenate(([left], (listed[:-1] + listed[1:]) / 2.0, [right]))
    lo, hi = 0, listed.size  # f(mids[lo]) > 0 >= f(mids[hi])
    f_lo, f_hi = f_left, f_right
    interpolate = True
    while hi - lo > 1:
        guess = lo + (hi - lo) // 2
        if interpolate and f_lo < 1e299 and f_hi > -1e299 and f_lo > f_hi:
            guess = lo + int(round((hi - lo) * f_lo / (f_lo - f_hi)))
            guess = min(max(guess, lo + 1), hi - 1)
        value = _finite(f(float(mids[guess])))
        before = hi - lo
        if value > 0:
            lo, f_lo = guess, value
        else:
            hi, f_hi = guess, value
        interpolate = (hi - lo) * 2 <= before  # bisect next when interpolation did not halve the range
    return float(listed[hi - 1])
