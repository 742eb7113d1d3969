"""Order statistics of pairwise differences and Walsh averages when each value stands for many.

With frequency weights (a count column), value a_i stands for w_i equal records.
The Hodges-Lehmann estimates and their intervals are order statistics of all
pairwise differences (or Walsh averages) of the repeated records. These helpers
select them from the distinct values and their weights, without repeating
anything: the implicit table has one cell per pair of distinct values and the
cell counts w_i v_j times (Walsh: w_i w_j, or w_i (w_i + 1) / 2 on the diagonal).
The selection is that of ``statmargin.stats._common`` given the cells' counts,
so it returns exactly the entry the repeated data would give.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from statmargin.errors import NotEnoughDataError
from statmargin.stats._common import _kth_in_sorted_rows, _work_limit, difference_guess, walsh_guess
from statmargin.vocabulary.codes import Skip, coded


def collapse(values: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Distinct values in ascending order with their summed weights (rows of weight 0 dropped).

    Examples
    --------
    >>> u, w = collapse(np.array([3.0, 1.0, 3.0, 2.0]), np.array([2, 1, 1, 0]))
    >>> u.tolist(), w.tolist()
    ([1.0, 3.0], [1, 3])
    """
    keep = weights > 0
    u, inverse = np.unique(np.asarray(values, dtype=float)[keep], return_inverse=True)
    w = np.bincount(inverse, weights=np.asarray(weights)[keep], minlength=u.size)
    return u, np.rint(w).astype(np.int64)


def kth_pairwise_difference_weighted(
    a: np.ndarray, wa: np.ndarray, b: np.ndarray, wb: np.ndarray, k: int, *, work_limit: int | None = None
) -> float:
    """The k-th smallest (0-based) difference a_i - b_j of the repeated records.

    Parameters
    ----------
    a, b : numpy.ndarray
        Distinct values of the two samples, sorted ascending (see :func:`collapse`).
    wa, wb : numpy.ndarray
        Whole-number weights (records per value), all above 0.
    k : int
        Rank among the sum(wa) * sum(wb) differences.
    work_limit : int, optional
        Most cells gathered at once (default 8 (distinct values of both samples)).

    Returns
    -------
    float
        Exactly ``np.sort(np.subtract.outer(np.repeat(a, wa), np.repeat(b, wb)).ravel())[k]``.

    Examples
    --------
    >>> a, wa, b, wb = np.array([1.0, 4.0]), np.array([2, 1]), np.array([0.5, 2.0]), np.array([1, 3])
    >>> listed = np.sort(np.subtract.outer(np.repeat(a, wa), np.repeat(b, wb)).ravel())
    >>> all(kth_pairwise_difference_weighted(a, wa, b, wb, k, work_limit=1) == listed[k] for k in range(12))
    True
    """
    b_descending = np.asarray(b, dtype=float)[::-1]
    a = np.asarray(a, dtype=float)
    wa = np.asarray(wa, dtype=np.int64)
    cumulative = np.concatenate(([0], np.cumsum(np.asarray(wb, dtype=np.int64)[::-1])))

    def value_at(rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        return a[rows] - b_descending[cols]

    def mass(rows: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        return wa[rows] * (cumulative[hi] - cumulative[lo])

    lo = np.zeros(a.size, dtype=np.int64)
    hi = np.full(a.size, b_descending.size, dtype=np.int64)
    return _kth_in_sorted_rows(value_at, lo, hi, int(k), _work_limit(work_limit, a.size + b_descending.size), mass,
                               difference_guess(a, b_descending[::-1]))


def kth_walsh_average_weighted(x: np.ndarray, w: np.ndarray, k: int, *, work_limit: int | None = None) -> float:
    """The k-th smallest (0-based) Walsh average (x_i + x_j) / 2, i <= j, of the repeated records.

    Parameters
    ----------
    x : numpy.ndarray
        Distinct values sorted ascending.
    w : numpy.ndarray
        Whole-number weights, all above 0.
    k : int
        Rank among the N (N + 1) / 2 averages, N = sum(w).
    work_limit : int, optional
        Most cells gathered at once (default 8 (distinct values)).

    Returns
    -------
    float
        Exactly the k-th of the sorted averages of the repeated records.

    Examples
    --------
    >>> x, w = np.array([1.0, 2.0, 6.0]), np.array([2, 1, 2])
    >>> r = np.repeat(x, w)
    >>> listed = np.sort([(r[i] + r[j]) / 2 for i in range(5) for j in range(i, 5)])
    >>> all(kth_walsh_average_weighted(x, w, k, work_limit=1) == listed[k] for k in range(15))
    True
    """
    x = np.asarray(x, dtype=float)
    w = np.asarray(w, dtype=np.int64)
    cumulative = np.concatenate(([0], np.cumsum(w)))

    def value_at(rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        return (x[rows] + x[cols]) / 2.0

    def mass(rows: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        full = w[rows] * (cumulative[hi] - cumulative[lo])
        diagonal = (lo == rows) & (hi > lo)  # the cell (i, i) counts w_i (w_i + 1) / 2, not w_i^2
        return full - np.where(diagonal, w[rows] * (w[rows] - 1) // 2, 0)

    lo = np.arange(x.size, dtype=np.int64)
    hi = np.full(x.size, x.size, dtype=np.int64)
    return _kth_in_sorted_rows(value_at, lo, hi, int(k), _work_limit(work_limit, x.size), mass, walsh_guess(x))


def _median_of(kth: Any, total: int) -> float:
    """np.median's rule over ``total`` ordered entries: the middle one, or the mean of the middle two."""
    if total % 2:
        return kth(total // 2)
    return float(np.mean(np.array([kth(total // 2 - 1), kth(total // 2)])))


def median_pairwise_difference_weighted(
    a: np.ndarray, wa: np.ndarray, b: np.ndarray, wb: np.ndarray, *, work_limit: int | None = None
) -> float:
    """Hodges-Lehmann shift of repeated records: the median of all differences a_i - b_j.

    Parameters
    ----------
    a, wa, b, wb : numpy.ndarray
        Values (any order, repeats allowed) and their whole-number weights.
    work_limit : int, optional
        As for :func:`kth_pairwise_difference_weighted`.

    Returns
    -------
    float
        Exactly ``statmargin.stats._common.median_pairwise_difference`` of the
        repeated records, in memory linear in the number of distinct values.

    References
    ----------
    Hodges, J. L., & Lehmann, E. L. (1963). Estimates of location based on rank tests.
    Annals of Mathematical Statistics 34(2):598-611. doi:10.1214/aoms/1177704172

    Examples
    --------
    >>> from statmargin.stats._common import median_pairwise_difference
    >>> a, wa, b, wb = np.array([1.0, 4.0, 9.0]), np.array([3, 1, 2]), np.array([0.5, 2.0]), np.array([2, 5])
    >>> median_pairwise_difference_weighted(a, wa, b, wb) == median_pairwise_difference(
    ...     np.repeat(a, wa), np.repeat(b, wb))
    True
    """
    ua, ca = collapse(a, wa)
    ub, cb = collapse(b, wb)
    total = int(ca.sum()) * int(cb.sum())
    if total == 0:
        raise NotEnoughDataError(coded(Skip.NO_VALUES_FOR_SHIFT))
    return _median_of(lambda k: kth_pairwise_difference_weighted(ua, ca, ub, cb, k, work_limit=work_limit), total)


def median_walsh_average_weighted(x: np.ndarray, w: np.ndarray, *, work_limit: int | None = None) -> float:
    """One-sample Hodges-Lehmann estimate (pseudo-median) of repeated records.

    Parameters
    ----------
    x, w : numpy.ndarray
        Values (any order) and their whole-number weights.
    work_limit : int, optional
        As for :func:`kth_walsh_average_weighted`.

    Returns
    -------
    float
        Exactly ``statmargin.stats._common.median_walsh_average`` of the repeated records.

    Examples
    --------
    >>> from statmargin.stats._common import median_walsh_average
    >>> x, w = np.array([1.83, 0.50, 1.62, 2.48]), np.array([2, 1, 3, 1])
    >>> median_walsh_average_weighted(x, w) == median_walsh_average(np.repeat(x, w))
    True
    """
    u, c = collapse(x, w)
    n = int(c.sum())
    total = n * (n + 1) // 2
    if total == 0:
        raise NotEnoughDataError(coded(Skip.NO_VALUES_FOR_PSEUDO_MEDIAN))
    return _median_of(lambda k: kth_walsh_average_weighted(u, c, k, work_limit=work_limit), total)
