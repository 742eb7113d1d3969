"""Helpers shared by the test modules: input cleaning, checks, tails and t intervals.

Nothing here knows about sheets or files; inputs are numpy arrays and plain numbers.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np
from scipy import stats

from statmargin.errors import CaveatWarning, NotEnoughDataError, OptionError
from statmargin.vocabulary import PMethod
from statmargin.vocabulary.codes import Coded, Count, Note, Refusal, Skip, Subject, coded

ALTERNATIVES = ("two-sided", "greater", "less")


def check_options(alternative: str, confidence: float) -> None:
    """Refuse an unknown alternative or a confidence level outside (0, 1).

    Parameters
    ----------
    alternative : str
        One of ``"two-sided"``, ``"greater"``, ``"less"``.
    confidence : float
        Confidence level of intervals, strictly between 0 and 1.

    Raises
    ------
    OptionError
        With a one-line message saying which value to use.
    """
    if alternative not in ALTERNATIVES:
        raise OptionError(coded(Refusal.UNKNOWN_ALTERNATIVE, given=alternative))
    if not (isinstance(confidence, (int, float)) and 0.0 < float(confidence) < 1.0):
        raise OptionError(coded(Refusal.CONFIDENCE_RANGE, given=confidence))


def check_confidence(confidence: float) -> float:
    """The confidence level as a float; refuse one outside (0, 1) in one line.

    Raises
    ------
    OptionError
        When the level is not strictly between 0 and 1.
    """
    if not (0.0 < float(confidence) < 1.0):
        raise OptionError(coded(Refusal.CONFIDENCE_RANGE, given=confidence))
    return float(confidence)


def clean(values: Any, what: str = "the outcome") -> tuple[np.ndarray, int]:
    """Return the finite values as a float array and how many were dropped.

    Parameters
    ----------
    values : array-like
        Numbers; NaN (and infinite values) are dropped defensively.
    what : str
        Plain name of the values, used in error messages.

    Returns
    -------
    numpy.ndarray, int
        The kept values and the count of dropped ones.
    """
    try:
        array = np.asarray(values, dtype=float).ravel()
    except (TypeError, ValueError):
        raise NotEnoughDataError(coded(Skip.NOT_NUMBERS, what=what)) from None
    keep = np.isfinite(array)
    return array[keep], int(array.size - keep.sum())


def clean_pairs(first: Any, second: Any, what: str = "the pairs") -> tuple[np.ndarray, np.ndarray, int]:
    """Keep the positions where both arrays hold finite numbers.

    Returns
    -------
    numpy.ndarray, numpy.ndarray, int
        The kept first and second values and the count of dropped pairs.
    """
    a = np.asarray(first, dtype=float).ravel()
    b = np.asarray(second, dtype=float).ravel()
    if a.size != b.size:
        raise NotEnoughDataError(coded(Skip.LENGTH_MISMATCH, what=what, first=a.size, second=b.size))
    keep = np.isfinite(a) & np.isfinite(b)
    return a[keep], b[keep], int(a.size - keep.sum())


def require_count(values: np.ndarray, minimum: int, what: str) -> None:
    """Raise ``NotEnoughDataError`` when fewer than ``minimum`` values remain."""
    if values.size < minimum:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_VALUES, what=what, n=Count(values.size), minimum=minimum))


def require_spread(values: np.ndarray, what: str) -> None:
    """Raise ``NotEnoughDataError`` when every value is the same."""
    if values.size and np.all(values == values[0]):
        raise NotEnoughDataError(coded(Skip.NO_SPREAD, what=what, value=float(values[0])))


def format_number(value: float) -> str:
    """Short plain form of a number for messages (full precision stays in results)."""
    return f"{value:.6g}"


def accurate_mean(values: np.ndarray) -> float:
    """Mean with a correction pass, accurate when values share many leading digits.

    Notes
    -----
    First pass: NumPy's pairwise sum over n. Second pass adds the mean of the
    residuals, which removes the rounding left by the first pass, so the error
    scales with the spread, not the size, of the values (the NIST StRD tests
    check this on data with 13 shared leading digits). ``math.fsum`` did the
    same at ten times the cost, a second per million values.
    """
    n = values.size
    first = float(np.sum(values)) / n
    return first + float(np.sum(values - first)) / n


def sum_of_squares(values: np.ndarray, center: float) -> float:
    """Sum of squared deviations from ``center`` (NumPy's pairwise sum: the terms are all >= 0)."""
    deviations = values - center
    return float(np.sum(deviations * deviations))


def describe(label: str, values: np.ndarray) -> dict[str, Any]:
    """Per-group summary: label, n, mean, sd (n - 1 divisor), median."""
    n = int(values.size)
    mean = accurate_mean(values) if n else None
    sd = math.sqrt(sum_of_squares(values, mean) / (n - 1)) if mean is not None and n >= 2 else None
    median = float(np.median(values)) if n else None
    return {"label": str(label), "n": n, "mean": mean, "sd": sd, "median": median}


def p_from_t(t: float, df: float, alternative: str) -> float:
    """P-value of a t statistic; ``greater`` means large t is evidence."""
    if alternative == "greater":
        return float(stats.t.sf(t, df))
    if alternative == "less":
        return float(stats.t.cdf(t, df))
    return float(min(1.0, 2.0 * stats.t.sf(abs(t), df)))


def p_from_z(z: float, alternative: str) -> float:
    """P-value of a standard-normal statistic, as R computes it (two-sided = 2 min tail)."""
    if alternative == "greater":
        return float(stats.norm.sf(z))
    if alternative == "less":
        return float(stats.norm.cdf(z))
    return float(min(1.0, 2.0 * min(stats.norm.cdf(z), stats.norm.sf(z))))


def t_interval(
    estimate: float, standard_error: float, df: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Confidence interval ``estimate +/- t quantile * se``; one-sided for one-sided questions.

    Notes
    -----
    Follows R's ``t.test``: a ``greater`` question gives ``(lower, inf)`` and a ``less``
    question gives ``(-inf, upper)``.
    """
    if alternative == "two-sided":
        q = float(stats.t.ppf(1.0 - (1.0 - confidence) / 2.0, df))
        return estimate - q * standard_error, estimate + q * standard_error
    q = float(stats.t.ppf(confidence, df))
    if alternative == "greater":
        return estimate - q * standard_error, math.inf
    return -math.inf, estimate + q * standard_error


def z_quantiles(alternative: str, confidence: float) -> tuple[float | None, float | None]:
    """Normal quantiles bounding an interval: (for lower bound, for upper bound); None = open."""
    if alternative == "two-sided":
        q = float(stats.norm.ppf(1.0 - (1.0 - confidence) / 2.0))
        return q, -q
    q = float(stats.norm.ppf(confidence))
    return (q, None) if alternative == "greater" else (None, -q)


def check_exact(exact: bool | str) -> None:
    """Refuse an ``exact`` choice other than ``"auto"``, True or False."""
    if exact not in ("auto", True, False):
        raise OptionError(coded(Refusal.EXACT_CHOICE, given=exact))


def normal_approximation(correct: bool) -> tuple[PMethod, Coded]:
    """``p_method`` and the note for a rank test's normal approximation.

    Returns
    -------
    PMethod, Coded
        The p-method (with or without continuity correction) and the note
        for ``Result.notes``.
    """
    p_method = PMethod.NORMAL_APPROXIMATION_CONTINUITY if correct else PMethod.NORMAL_APPROXIMATION
    note = coded(Note.NORMAL_APPROXIMATION, continuity=bool(correct))
    return p_method, note


def continuity_correction(centred: float, alternative: str, correct: bool) -> float:
    """Half a unit towards the null for a centred rank statistic, as R's ``wilcox.test``."""
    if not correct:
        return 0.0
    return {"two-sided": float(np.sign(centred)) * 0.5, "greater": 0.5, "less": -0.5}[alternative]


def has_ties(values: np.ndarray) -> bool:
    """True when any value occurs more than once."""
    return np.unique(values).size != values.size


def tie_counts(values: np.ndarray) -> np.ndarray:
    """Sizes of groups of equal values (1 for untied values)."""
    _, counts = np.unique(values, return_counts=True)
    return counts.astype(float)


def caveat(notes: list[Coded], note: Coded) -> None:
    """Record a statistical caveat in ``notes`` and as a Python warning (``CaveatWarning``, worded by ``words``)."""
    notes.append(note)
    warnings.warn(CaveatWarning(note), stacklevel=3)


def prepare_groups(groups: Mapping[str, Any], alternative: str, confidence: float) -> tuple[dict[str, np.ndarray], int, list[Coded]]:
    """Clean every group, require two values each, at least two groups and some spread.

    Returns the cleaned groups, how many values were dropped, and the note that a
    comparison of several groups is two-sided whatever ``alternative`` asked.
    """
    check_options(alternative, confidence)
    notes: list[Coded] = []
    if alternative != "two-sided":
        notes.append(coded(Note.MULTIGROUP_TWO_SIDED, alternative=alternative))
    cleaned: dict[str, np.ndarray] = {}
    dropped = 0
    for label, values in groups.items():
        kept, lost = clean(values, f"group {label}")
        require_count(kept, 2, f"group {label}")
        cleaned[str(label)] = kept
        dropped += lost
    if len(cleaned) < 2:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_GROUPS, n=len(cleaned)))
    require_spread(np.concatenate(list(cleaned.values())), Subject.OUTCOME_EVERY_GROUP)
    return cleaned, dropped, notes


def labels_pair(labels: Iterable[str]) -> tuple[str, str]:
    """Two group labels as strings; refuse any other count."""
    pair = tuple(str(label) for label in labels)
    if len(pair) != 2:
        raise OptionError(coded(Refusal.TWO_LABELS, n=len(pair)))
    return pair[0], pair[1]


# ------------------------------------------------- order statistics of pairwise values
#
# Hodges-Lehmann estimates are medians of n * m pairwise differences (or n (n + 1) / 2
# Walsh averages). Listing them all needs gigabytes for groups of tens of thousands, so
# the helpers below select the k-th smallest without listing: every row of the implicit
# table (one value of the first sample against the sorted second sample) is sorted, so
# a row can be counted by binary search, and a pivot chosen as the weighted median of
# the row medians removes at least a quarter of the remaining candidates each round.

WORK_LIMIT_PER_VALUE = 8  # candidates gathered at once: this many per input value


def _first_position(
    value_at: Any, rows: np.ndarray, lo: np.ndarray, hi: np.ndarray, pivot: float, inclusive: bool,
    guess: Any = None,
) -> np.ndarray:
    """Per row, the first column in [lo, hi) whose value is above the pivot (or at/above it).

    ``value_at(rows, cols)`` gives the table entries; each row is non-decreasing in the
    column. ``inclusive=True`` counts entries ``<= pivot`` as below, otherwise ``< pivot``.
    ``guess(rows, pivot, inclusive)``, when given, proposes the positions (one binary
    search in C per row, e.g. ``np.searchsorted``); each proposal is checked against its
    neighbours with ``value_at`` and only rows where rounding made it wrong are searched
    again, so the answer is the same as without a guess.
    """
    lo, hi = lo.copy(), hi.copy()

    def is_below(values: np.ndarray) -> np.ndarray:
        return values <= pivot if inclusive else values < pivot

    if guess is not None:
        proposed = np.clip(guess(rows, pivot, inclusive), lo, hi)
        left_ok = proposed == lo
        check = np.flatnonzero(~left_ok)
        left_ok[check] = is_below(value_at(rows[check], proposed[check] - 1))
        right_ok = proposed == hi
        check = np.flatnonzero(~right_ok)
        right_ok[check] = ~is_below(value_at(rows[check], proposed[check]))
        good = left_ok & right_ok
        # Rows whose proposal holds are settled; the rest keep their full range.
        lo[good] = proposed[good]
        hi[good] = proposed[good]
    open_rows = np.flatnonzero(lo < hi)
    while open_rows.size:
        mid = (lo[open_rows] + hi[open_rows]) // 2
        below = is_below(value_at(rows[open_rows], mid))
        lo[open_rows] = np.where(below, mid + 1, lo[open_rows])
        hi[open_rows] = np.where(below, hi[open_rows], mid)
        open_rows = open_rows[lo[open_rows] < hi[open_rows]]
    return lo


SAMPLE_SIZE = 1 << 15  # entries drawn per round to place the two pivots (unweighted tables)
SAMPLE_SPREAD = 3.0  # pivots this many standard errors of a sample rank either side of the target
SAMPLE_SEED = 20261205  # the draws steer only the work, never the result


def _sampled_pivots(value_at: Any, rows: np.ndarray, lo: np.ndarray, widths: np.ndarray, target: int,
                    rng: np.random.Generator) -> tuple[float, float]:
    """Two entries that likely enclose the target-th of the remaining ones (Floyd & Rivest's sampling).

    ``target`` counts from the first remaining entry. Entries are drawn uniformly from the
    remaining cells; the pivots are the draws ranked a few standard errors below and
    above the target's expected rank among them.
    """
    cumulative = np.cumsum(widths)
    remaining = int(cumulative[-1])
    size = min(SAMPLE_SIZE, remaining)
    picks = rng.integers(0, remaining, size)
    row = np.searchsorted(cumulative, picks, side="right")
    col = lo[row] + (picks - (cumulative[row] - widths[row]))
    sample = np.sort(value_at(rows[row], col))
    centre = target / remaining * size
    spread = SAMPLE_SPREAD * math.sqrt(size)
    first = int(min(size - 1, max(0, math.floor(centre - spread))))
    last = int(min(size - 1, max(0, math.ceil(centre + spread))))
    return float(sample[first]), float(sample[last])


def _kth_in_sorted_rows(
    value_at: Any, lo: np.ndarray, hi: np.ndarray, k: int, work_limit: int, mass: Any = None,
    guess: Any = None,
) -> float:
    """The k-th smallest (0-based) entry of a table whose rows are sorted.

    Row i holds ``value_at(i, j)`` for columns ``lo[i] <= j < hi[i]``, non-decreasing in j.
    The result is one of the table's entries, computed by ``value_at`` exactly as when
    the whole table is listed, so it equals the listed table's order statistic bit for bit.
    With ``mass(rows, lo, hi)`` (the number of records in row r's columns [lo, hi)) each
    cell stands for that many equal entries (frequency weights) and k counts them; the
    pivot is still the cell-weighted median of the row medians, so each round removes a
    quarter of the remaining cells whatever their counts. Without ``mass`` each round
    takes two pivots from a seeded uniform sample of the remaining entries (Floyd &
    Rivest 1975), which usually keeps only a few percent of them, so a table of 10^10
    entries takes three or four rounds. ``guess`` is passed to :func:`_first_position`.

    References
    ----------
    Floyd, R. W., & Rivest, R. L. (1975). Expected time bounds for selection.
    Communications of the ACM 18(3):165-172. doi:10.1145/360680.360691
    """
    rows = np.arange(lo.size)
    lo, hi = lo.astype(np.int64), hi.astype(np.int64)
    below = 0  # entries known to be smaller than every remaining candidate
    rng = np.random.default_rng(SAMPLE_SEED)

    def position(pivot: float, inclusive: bool) -> np.ndarray:
        return _first_position(value_at, rows, lo, hi, pivot, inclusive, guess)

    def counted(start: np.ndarray, stop: np.ndarray) -> int:
        return int((stop - start).sum()) if mass is None else int(mass(rows, start, stop).sum())

    while True:
        widths = hi - lo
        remaining = int(widths.sum())
        if remaining <= work_limit:
            keep = widths > 0
            row_of = np.repeat(rows[keep], widths[keep])
            starts = np.repeat(lo[keep] - np.concatenate(([0], np.cumsum(widths[keep])[:-1])), widths[keep])
            cols = starts + np.arange(remaining)
            candidates = value_at(row_of, cols)
            if mass is None:
                return float(np.partition(candidates, k - below)[k - below])
            order = np.argsort(candidates, kind="stable")
            position_ = int(np.searchsorted(np.cumsum(mass(row_of, cols, cols + 1)[order]), k - below, side="right"))
            return float(candidates[order][position_])
        if mass is None:
            pivots = _sampled_pivots(value_at, rows, lo, widths, k - below, rng)
        else:
            live = np.flatnonzero(widths > 0)
            medians = value_at(live, (lo[live] + hi[live] - 1) // 2)
            order = np.argsort(medians, kind="stable")
            weight = np.cumsum(widths[live][order])
            median = float(medians[order][np.searchsorted(weight, weight[-1] / 2.0)])
            pivots = (median, median)
        # Entries below the first pivot, up to it, below the second, up to it: k falls in one
        # of five stretches, two of which are a pivot itself.
        under = position(pivots[0], False)
        n_under = below + counted(lo, under)
        if k < n_under:
            hi = under
            continue
        upto = position(pivots[0], True)
        n_upto = below + counted(lo, upto)
        if k < n_upto:
            return pivots[0]
        if pivots[1] == pivots[0]:
            below, lo = n_upto, upto
            continue
        under2 = position(pivots[1], False)
        n_under2 = below + counted(lo, under2)
        if k < n_under2:
            below, lo, hi = n_upto, upto, under2
            continue
        upto2 = position(pivots[1], True)
        n_upto2 = below + counted(lo, upto2)
        if k < n_upto2:
            return pivots[1]
        below, lo = n_upto2, upto2


def _checked_rank(k: int, total: int) -> int:
    """``k`` as an int in [0, total); refuse anything else in one line."""
    if not (0 <= int(k) < total):
        raise OptionError(f"k={k} outside 0 to {total - 1}")  # a caller's mistake, never a user's
    return int(k)


def _work_limit(work_limit: int | None, size: int) -> int:
    """Default number of candidates gathered at once: proportional to the input size."""
    return max(1, WORK_LIMIT_PER_VALUE * size if work_limit is None else int(work_limit))


def kth_pairwise_difference(a_sorted: np.ndarray, b_sorted: np.ndarray, k: int, *, work_limit: int | None = None) -> float:
    """The k-th smallest (0-based) of all n * m differences a_i - b_j, without listing them.

    Parameters
    ----------
    a_sorted, b_sorted : numpy.ndarray
        Finite values of the two samples, each sorted ascending.
    k : int
        Rank of the wanted difference, 0 <= k < n * m.
    work_limit : int, optional
        Most candidate differences held in memory at once (default 8 (n + m)).
        Smaller values only cost time; the result does not change.

    Returns
    -------
    float
        Exactly ``np.sort(np.subtract.outer(a_sorted, b_sorted).ravel())[k]``.

    Notes
    -----
    With ``b`` in descending order each row a_i - b_j is non-decreasing (floating-point
    subtraction is monotone), so the number of differences below a value is a binary
    search per row; a pivot taken as the weighted median of row medians removes at
    least a quarter of the candidates per round. Memory is O(n + m) and time
    O((n + m) log(m) log(n m)). The idea of selecting order statistics of pairwise
    differences without listing them is that of Johnson & Mizoguchi (1978) and
    Monahan (1984); this particular pivot rule is our own simple variant (the
    references are cited from memory).

    References
    ----------
    Johnson, D. B., & Mizoguchi, T. (1978). Selecting the Kth element in X + Y and
    X1 + X2 + ... + Xm. SIAM Journal on Computing 7(2):147-153. doi:10.1137/0207013
    Monahan, J. F. (1984). Algorithm 616: fast computation of the Hodges-Lehmann
    location estimator. ACM Transactions on Mathematical Software 10(3):265-270.
    doi:10.1145/1271.319414

    Examples
    --------
    >>> a = np.array([1.0, 4.0, 9.0])
    >>> b = np.array([0.5, 2.0])
    >>> np.sort(np.subtract.outer(a, b).ravel()).tolist()
    [-1.0, 0.5, 2.0, 3.5, 7.0, 8.5]
    >>> kth_pairwise_difference(a, b, 0), kth_pairwise_difference(a, b, 3, work_limit=1)
    (-1.0, 3.5)
    """
    a = np.asarray(a_sorted, dtype=float)
    b_descending = np.asarray(b_sorted, dtype=float)[::-1]
    k = _checked_rank(k, a.size * b_descending.size)

    def value_at(rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        return a[rows] - b_descending[cols]

    lo = np.zeros(a.size, dtype=np.int64)
    hi = np.full(a.size, b_descending.size, dtype=np.int64)
    return _kth_in_sorted_rows(value_at, lo, hi, k, _work_limit(work_limit, a.size + b_descending.size),
                               guess=difference_guess(a, b_descending[::-1]))


def difference_guess(a: np.ndarray, b_sorted: np.ndarray) -> Any:
    """Proposed positions of a pivot in the rows a_i - b_j (b descending along the row), by one search each.

    a_i - b_j < pivot when b_j > a_i - pivot (up to rounding, which ``_first_position``
    checks): the count of such b is found by ``np.searchsorted`` on ``b_sorted``.
    """
    def guess(rows: np.ndarray, pivot: float, inclusive: bool) -> np.ndarray:
        if inclusive:
            return b_sorted.size - np.searchsorted(b_sorted, a[rows] - pivot, side="left")
        return b_sorted.size - np.searchsorted(b_sorted, a[rows] - pivot, side="right")

    return guess


def walsh_guess(x_sorted: np.ndarray) -> Any:
    """Proposed positions of a pivot in the rows (x_i + x_j) / 2, j >= i, by one search each."""
    def guess(rows: np.ndarray, pivot: float, inclusive: bool) -> np.ndarray:
        if inclusive:
            return np.searchsorted(x_sorted, 2.0 * pivot - x_sorted[rows], side="right")
        return np.searchsorted(x_sorted, 2.0 * pivot - x_sorted[rows], side="left")

    return guess


def median_pairwise_difference(a: np.ndarray, b: np.ndarray, *, work_limit: int | None = None) -> float:
    """Hodges-Lehmann shift: the median of all differences a_i - b_j, without listing them.

    Parameters
    ----------
    a, b : numpy.ndarray
        Finite values of the two samples (any order), at least one each.
    work_limit : int, optional
        As for :func:`kth_pairwise_difference`.

    Returns
    -------
    float
        Exactly ``np.median(np.subtract.outer(a, b))``: the middle difference, or for an
        even count the mean of the two middle ones.

    Notes
    -----
    Memory O(n + m), so groups of a million values are fine. See
    :func:`kth_pairwise_difference` for the method.

    References
    ----------
    Hodges, J. L., & Lehmann, E. L. (1963). Estimates of location based on rank tests.
    Annals of Mathematical Statistics 34(2):598-611. doi:10.1214/aoms/1177704172

    Examples
    --------
    R's ``sleep`` data (datasets::sleep), drug 1 minus drug 2, checked against listing
    all 100 differences:

    >>> drug1 = np.array([0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0])
    >>> drug2 = np.array([1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4])
    >>> shift = median_pairwise_difference(drug1, drug2, work_limit=1)
    >>> shift == float(np.median(np.subtract.outer(drug1, drug2)))
    True
    >>> round(shift, 4)
    -1.35
    """
    a_sorted = np.sort(np.asarray(a, dtype=float).ravel())
    b_sorted = np.sort(np.asarray(b, dtype=float).ravel())
    b_descending = b_sorted[::-1]
    total = a_sorted.size * b_sorted.size
    if total == 0:
        raise NotEnoughDataError(coded(Skip.NO_VALUES_FOR_SHIFT))
    limit = _work_limit(work_limit, a_sorted.size + b_sorted.size)
    if total % 2:
        return kth_pairwise_difference(a_sorted, b_sorted, total // 2, work_limit=limit)
    lower = kth_pairwise_difference(a_sorted, b_sorted, total // 2 - 1, work_limit=limit)
    return _mean_with_next(lower, total // 2, lambda r, c: a_sorted[r] - b_descending[c],
                           np.zeros(a_sorted.size, dtype=np.int64), b_sorted.size, difference_guess(a_sorted, b_sorted))


def _mean_with_next(lower: float, k_next: int, value_at: Any, lo: np.ndarray, width: int,
                    guess: Any = None) -> float:
    """Mean of ``lower`` and the entry of rank ``k_next`` that follows it (np.median's even case).

    Rows i hold columns ``lo[i] <= j < width``; the mean is taken as ``np.median`` takes it.
    """
    rows = np.arange(lo.size)
    hi = np.full(rows.size, width, dtype=np.int64)
    upto = _first_position(value_at, rows, lo, hi, lower, True, guess)
    if int((upto - lo).sum()) > k_next:
        upper = lower
    else:  # the smallest entry above ``lower``: the first one past it in some row
        has_next = np.flatnonzero(upto < hi)
        upper = float(np.min(value_at(has_next, upto[has_next])))
    return float(np.mean(np.array([lower, upper])))


def kth_walsh_average(x_sorted: np.ndarray, k: int, *, work_limit: int | None = None) -> float:
    """The k-th smallest (0-based) Walsh average (x_i + x_j) / 2, i <= j, without listing them.

    Parameters
    ----------
    x_sorted : numpy.ndarray
        Finite values sorted ascending.
    k : int
        Rank of the wanted average, 0 <= k < n (n + 1) / 2.
    work_limit : int, optional
        Most candidate averages held in memory at once (default 8 n).

    Returns
    -------
    float
        Exactly the k-th entry of the sorted list of all n (n + 1) / 2 averages, each
        computed as ``(x_i + x_j) / 2``.

    Notes
    -----
    Row i holds (x_i + x_j) / 2 for j >= i, non-decreasing in j; the selection is that of
    :func:`kth_pairwise_difference` (Johnson & Mizoguchi 1978; Monahan 1984, whose
    Algorithm 616 does this for the one-sample Hodges-Lehmann estimate; cited from memory).

    References
    ----------
    Monahan, J. F. (1984). Algorithm 616: fast computation of the Hodges-Lehmann
    location estimator. ACM Transactions on Mathematical Software 10(3):265-270.
    doi:10.1145/1271.319414

    Examples
    --------
    >>> x = np.array([1.0, 2.0, 6.0])
    >>> sorted(float(x[i] + x[j]) / 2 for i in range(3) for j in range(i, 3))
    [1.0, 1.5, 2.0, 3.5, 4.0, 6.0]
    >>> kth_walsh_average(x, 3, work_limit=1)
    3.5
    """
    x = np.asarray(x_sorted, dtype=float)
    k = _checked_rank(k, x.size * (x.size + 1) // 2)

    def value_at(rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        return (x[rows] + x[cols]) / 2.0

    lo = np.arange(x.size, dtype=np.int64)
    hi = np.full(x.size, x.size, dtype=np.int64)
    return _kth_in_sorted_rows(value_at, lo, hi, k, _work_limit(work_limit, x.size), guess=walsh_guess(x))


def median_walsh_average(x: np.ndarray, *, work_limit: int | None = None) -> float:
    """One-sample Hodges-Lehmann estimate (pseudo-median): the median of the Walsh averages.

    Parameters
    ----------
    x : numpy.ndarray
        Finite values (any order), at least one.
    work_limit : int, optional
        As for :func:`kth_walsh_average`.

    Returns
    -------
    float
        Exactly ``np.median`` of all (x_i + x_j) / 2 with i <= j, in O(n) memory.

    References
    ----------
    Hodges, J. L., & Lehmann, E. L. (1963). Estimates of location based on rank tests.
    Annals of Mathematical Statistics 34(2):598-611. doi:10.1214/aoms/1177704172

    Examples
    --------
    First measurements of the depression data in R's ``?wilcox.test`` example
    (Hollander & Wolfe 1973, p. 29), whose pseudo-median R gives as 1.725:

    >>> x = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
    >>> round(median_walsh_average(x, work_limit=1), 4)
    1.725
    """
    x_sorted = np.sort(np.asarray(x, dtype=float).ravel())
    n = x_sorted.size
    total = n * (n + 1) // 2
    if total == 0:
        raise NotEnoughDataError(coded(Skip.NO_VALUES_FOR_PSEUDO_MEDIAN))
    limit = _work_limit(work_limit, n)
    if total % 2:
        return kth_walsh_average(x_sorted, total // 2, work_limit=limit)
    lower = kth_walsh_average(x_sorted, total // 2 - 1, work_limit=limit)
    return _mean_with_next(lower, total // 2, lambda r, c: (x_sorted[r] + x_sorted[c]) / 2.0,
                           np.arange(n, dtype=np.int64), n, walsh_guess(x_sorted))


def open_at_null(low: float, high: float, null: float, rejected: bool) -> tuple[float, float]:
    """Keep an inverted interval's verdict on the null value when a bound lands exactly on it.

    An interval found by inverting a test on data with ties can end exactly at the null
    value while the test rejects it (the set of values not rejected is open there). The
    bound is then moved inward by the smallest representable step, so ``low > null`` (or
    ``high < null``) agrees with the test; the printed number is unchanged.
    """
    if rejected and low == null:
        low = math.nextafter(null, math.inf)
    if rejected and high == null:
        high = math.nextafter(null, -math.inf)
    return low, high


class SortedRecords:
    """Values sorted with the cumulative counts of the records they stand for (1 each without counts).

    ``below(points)`` counts the records below each point, ties counting one half: the
    placement of a value among these records, in O(log n) per point.

    Examples
    --------
    >>> records = SortedRecords(np.array([3.0, 1.0, 2.0]), np.array([1, 2, 1]))
    >>> records.below(np.array([2.0, 3.0, 0.5])).tolist()
    [2.5, 3.5, 0.0]
    """

    def __init__(self, values: np.ndarray, counts: np.ndarray | None = None) -> None:
        # Equal values are merged into one with their summed counts, so ``below`` needs one
        # binary search per point (the tie half is then that one value's count).
        distinct, where = np.unique(values, return_inverse=True)
        weights = np.ones(values.size) if counts is None else np.asarray(counts, dtype=float)
        self.values = distinct
        self.weights = np.bincount(where.ravel(), weights=weights, minlength=distinct.size)
        self.cumulative = np.concatenate(([0.0], np.cumsum(self.weights)))

    def shifted(self, d: float) -> SortedRecords:
        """The same records with every value moved by ``-d``: order and counts stay, so nothing is sorted again."""
        moved = object.__new__(SortedRecords)
        moved.values = self.values - d
        moved.weights = self.weights
        moved.cumulative = self.cumulative
        return moved

    def below(self, points: np.ndarray) -> np.ndarray:
        """Records below each point, ties counting one half."""
        at = np.searchsorted(self.values, points, "left")
        if self.values.size == 0:
            return np.zeros(np.shape(points))
        inside = np.minimum(at, self.values.size - 1)
        tied = np.where(self.values[inside] == points, self.weights[inside], 0.0)
        return self.cumulative[at] + tied / 2.0
