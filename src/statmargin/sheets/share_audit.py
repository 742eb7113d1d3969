"""Which hidden counts the shown numbers still give away, and what else to hide so none is.

Sharing mode hides small counts (the primary cells). A published table links its
counts by sums: a row's cells add up to the row's total, the totals to the
grand total. With a total shown, one hidden member of a sum is the total minus
the others, so a second member is hidden with it (complementary suppression).
Checking sum by sum misses what several sums give together (a hidden row total
recovered from the column totals, then a cell from its row), so this module
checks the whole web of sums at once, as linear algebra:

the hidden counts ``x_H`` satisfy ``A_H x_H = b`` (``A`` one row per published
sum, ``b`` known from the shown counts). A hidden count can be worked out
exactly when every solution gives it the same value, i.e. when it is zero in
every vector of the null space of ``A_H``. While one can, the smallest shown
non-zero count that shares a sum with it is hidden too (the usual choice of
the complementary cell: it costs the least information), and the check repeats.

A zero that shares a sum with a hidden total is hidden as well: "0 failed" beside
a hidden number of inspections tells that every inspection of that small group
passed.

The null space's dimension (``free``) says how many independent ways the hidden
counts can still move. A single further number computed from the whole table
(a chi-square statistic, its p-value, Cramer's V) pins down a table with one
free direction (a 2 x 2 table with its margins shown is the classic case), so
callers hide those numbers unless ``free >= 2``.

Notes
-----
Written here because the general-purpose libraries have no small-cell
suppression. Sums with one or two hidden members are solved first by sparse
elimination; what remains is a small dense system whose row space comes from
SciPy's pivoted QR (``scipy.linalg.qr``); the test suite checks both against
numpy's SVD rank on random tables.
Complementary suppression and the check for exact disclosure by linear
relations are the textbook approach (Hundepool et al., *Statistical
Disclosure Control*, Wiley 2012, ch. 4, doi:10.1002/9781118348239); bounds
from non-negativity (interval disclosure) are not checked.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

import numpy as np

_TOL = 1e-9


@dataclass
class CountWeb:
    """Counts of one result and the sums that link them.

    ``lines`` are (members, total) pairs: the members add up to the total.
    ``equations`` are other published linear combinations of the counts (a
    trend test's numerator), as {count index: coefficient}. ``fixed`` counts
    are never chosen as complementary cells (the analysis's n, shown in many
    places); they may still be hidden as small counts themselves.
    """

    values: list[float] = field(default_factory=list)
    lines: list[tuple[tuple[int, ...], int]] = field(default_factory=list)
    equations: list[dict[int, float]] = field(default_factory=list)
    fixed: set[int] = field(default_factory=set)

    def add(self, value: float, *, fixed: bool = False) -> int:
        """A new count; returns its index."""
        self.values.append(float(value))
        index = len(self.values) - 1
        if fixed:
            self.fixed.add(index)
        return index

    def line(self, members: Iterable[int], total: int) -> None:
        """The members add up to the total."""
        self.lines.append((tuple(members), total))

    def rows(self) -> list[dict[int, float]]:
        """One row per sum (members +1, total -1) and per equation, as {count index: coefficient}."""
        out: list[dict[int, float]] = []
        for members, total in self.lines:
            row = dict.fromkeys(members, 1.0)
            row[total] = row.get(total, 0.0) - 1.0
            out.append(row)
        out.extend(dict(coefficients) for coefficients in self.equations)
        return out

    def matrix(self, columns: Sequence[int] | None = None) -> np.ndarray:
        """The rows as a dense matrix, over all counts or only ``columns`` (rows touching none are dropped).

        Only the hidden counts' columns are ever needed, so a long series never
        makes a matrix over all of its counts.
        """
        rows = self.rows()
        columns = list(range(len(self.values))) if columns is None else list(columns)
        position = {index: j for j, index in enumerate(columns)}
        touching = [row for row in rows if any(i in position for i in row)] if columns else []
        out = np.zeros((len(touching), len(columns)))
        for r, row in enumerate(touching):
            for index, coefficient in row.items():
                if index in position:
                    out[r, position[index]] += coefficient
        return out


@dataclass(frozen=True)
class Protection:
    """What to hide: the small counts, the counts hidden to protect them, and the freedom left."""

    small: frozenset[int]
    hidden: frozenset[int]  # small ones included
    free: int  # dimension of the hidden counts' null space (0 when nothing is hidden)

    @property
    def complementary(self) -> frozenset[int]:
        return self.hidden - self.small


def exposed(web: CountWeb, hidden: Sequence[int]) -> tuple[list[int], int]:
    """The hidden counts the shown ones determine, and the null space's dimension.

    Parameters
    ----------
    web : CountWeb
    hidden : sequence of int
        Indices of hidden counts.

    Returns
    -------
    (list of int, int)
        Hidden indices fixed by the published sums, and the number of free
        directions the hidden counts keep.

    Examples
    --------
    A 2 x 2 table with all margins shown: one hidden cell is the row total minus
    the other; all four hidden keep one free direction.

    >>> web = CountWeb()
    >>> a, b, c, d = (web.add(v) for v in (3, 9, 12, 14))
    >>> r1, r2, c1, c2 = (web.add(v) for v in (12, 26, 15, 23))
    >>> n = web.add(38, fixed=True)
    >>> for members, total in (((a, b), r1), ((c, d), r2), ((a, c), c1), ((b, d), c2), ((r1, r2), n)):
    ...     web.line(members, total)
    >>> exposed(web, [a])
    ([0], 0)
    >>> exposed(web, [a, b, c, d])
    ([], 1)
    """
    hidden = list(hidden)
    if not hidden:
        return [], 0
    rows, via = _eliminate(web, hidden)
    rest = sorted({v for row in rows for v in row} | {h for h in hidden if h not in via})
    position = {v: j for j, v in enumerate(rest)}
    sub = np.zeros((len(rows), len(rest)))
    for r, row in enumerate(rows):
        for v, c in row.items():
            sub[r, position[v]] = c
    span = _row_space(sub) if sub.size else np.zeros((len(rest), 0))
    # Each hidden count as a combination of the counts left: fixed when that combination lies in
    # the row space of the sums (it is then a combination of published numbers).
    combinations = np.zeros((len(hidden), len(rest)))
    for k, h in enumerate(hidden):
        for v, c in (via[h].items() if h in via else [(h, 1.0)]):
            combinations[k, position[v]] += c
    outside = combinations - (combinations @ span) @ span.T
    moves = np.linalg.norm(outside, axis=1) if len(rest) else np.zeros(len(hidden))
    return [h for h, move in zip(hidden, moves, strict=True) if move < 1e-7], len(rest) - span.shape[1]


def _eliminate(web: CountWeb, hidden: Sequence[int]) -> tuple[list[dict[int, float]], dict[int, dict[int, float]]]:
    """Sparse elimination first: sums with one or two hidden members are solved before any dense algebra.

    A sum whose only hidden member is one count fixes it; a sum with two gives
    one as a multiple of the other (plus a known number). Substituting these
    leaves a small dense system (on a long series, the few sums across all
    periods) whose null space decides the rest. Returns the remaining rows and,
    for every eliminated count, its expression in the counts that remain (the
    known part left out; an empty expression is a fixed count). The null space's
    dimension does not change: each step removes one count and one independent
    row.
    """
    keep = set(hidden)
    rows: dict[int, dict[int, float]] = {}
    holding: dict[int, set[int]] = {}
    for r, row in enumerate(web.rows()):
        part = {v: c for v, c in row.items() if v in keep and abs(c) > _TOL}
        if part:
            rows[r] = part
            for v in part:
                holding.setdefault(v, set()).add(r)
    via: dict[int, dict[int, float]] = {}
    used_in: dict[int, set[int]] = {}  # count -> eliminated counts whose expression holds it
    queue = [r for r, row in rows.items() if len(row) <= 2]
    while queue:
        r = queue.pop()
        current = rows.get(r)
        if current is None or len(current) > 2:
            continue
        del rows[r]
        for v in current:
            holding[v].discard(r)
        if not current:
            continue
        pivot, *others = sorted(current, key=lambda v: (len(holding.get(v, ())), v))
        expression = {u: -current[u] / current[pivot] for u in others}  # pivot = expression + a known number
        for target in [pivot, *used_in.pop(pivot, set())]:
            base = via.get(target, {pivot: 1.0}) if target != pivot else {pivot: 1.0}
            factor = base.pop(pivot, 0.0)
            for u, c in expression.items():
                base[u] = base.get(u, 0.0) + factor * c
                used_in.setdefault(u, set()).add(target)
            via[target] = {u: c for u, c in base.items() if abs(c) > _TOL}
        for other in list(holding.pop(pivot, set())):
            line = rows[other]
            factor = line.pop(pivot)
            for u, c in expression.items():
                line[u] = line.get(u, 0.0) + factor * c
                holding.setdefault(u, set()).add(other)
            for u in [u for u, c in line.items() if abs(c) <= _TOL]:
                del line[u]
                holding[u].discard(other)
            if len(line) <= 2:
                queue.append(other)
    return list(rows.values()), via


def _row_space(matrix: np.ndarray) -> np.ndarray:
    """An orthonormal basis (as columns) of the row space, from a QR decomposition with column pivoting.

    Rows are scaled to unit length first (the row space does not change); a
    direction counts where its diagonal entry of R is above 1e-10 of the
    largest. SciPy's pivoted QR (LAPACK geqp3) reveals the rank of these small
    integer systems reliably; the test suite checks it against numpy's SVD rank.
    """
    from scipy.linalg import (
        qr,  # here, not at the top: a run reads its sheet before SciPy is loaded
    )

    scaled = matrix / np.linalg.norm(matrix, axis=1, keepdims=True)
    q, r, _ = qr(scaled.T, mode="economic", pivoting=True)
    diagonal = np.abs(np.diag(r))
    rank = int(np.sum(diagonal > 1e-10 * max(float(diagonal[0]), 1.0))) if diagonal.size else 0
    return np.asarray(q[:, :rank])


def protect(web: CountWeb, small: Iterable[int], also: Iterable[int] = ()) -> Protection:
    """Hide the small counts and enough others that none can be worked out from what is shown.

    Parameters
    ----------
    web : CountWeb
    small : iterable of int
        The counts to hide because they are small (shown as "<N").
    also : iterable of int
        Counts hidden for another reason (the same group hidden in another
        analysis of the run); protected like the small ones.

    Returns
    -------
    Protection

    Examples
    --------
    Three groups of 20, 22 and 1 records (n = 43 shown): hiding the 1 alone
    leaves it as 43 - 20 - 22, so the 20 is hidden too.

    >>> web = CountWeb()
    >>> groups = [web.add(v) for v in (20, 22, 1)]
    >>> web.line(groups, web.add(43, fixed=True))
    >>> sorted(protect(web, [2]).hidden)
    [0, 2]
    """
    small_set = frozenset(small)
    hidden = set(small_set) | set(also)
    sums_of = _sums_of(web)
    free = 0
    while True:
        hidden |= _zeros_beside_hidden_totals(web, hidden)
        if not hidden:
            return Protection(small_set, frozenset(), 0)
        determined, free = exposed(web, sorted(hidden))
        if not determined:
            break
        chosen = _complements(web, determined, sums_of, hidden)
        if not chosen:
            break  # only fixed counts are left to hide: nothing more can be done here
        hidden |= chosen
    return Protection(small_set, frozenset(hidden), free)


def _sums_of(web: CountWeb) -> dict[int, list[list[int]]]:
    """For each count, the member lists (totals included) of the sums and equations it is in."""
    out: dict[int, list[list[int]]] = {}
    groups = [[*members, total] for members, total in web.lines] + [list(eq) for eq in web.equations]
    for group in groups:
        for index in group:
            out.setdefault(index, []).append(group)
    return out


def _complements(web: CountWeb, determined: list[int], sums_of: dict[int, list[list[int]]],
                 hidden: set[int]) -> set[int]:
    """Counts to hide in one round.

    Where a sum has an exposed count as its only hidden member, an inner cell of
    that sum is hidden beside it, for every such count at once (each is given
    away by its own sum alone). Otherwise the counts are given away by several
    sums together, and one count is hidden before checking again: one may be
    enough for all.
    """
    totals = {total for _, total in web.lines}
    chosen: set[int] = set()
    for index in determined:
        alone = [group for group in sums_of.get(index, []) if sum(i in hidden for i in group) == 1]
        if not alone or any(chosen.intersection(group) for group in alone):
            continue
        pick = _complement(web, alone, hidden | chosen)
        if pick is not None and pick not in totals:
            chosen.add(pick)
    if chosen:
        return chosen
    for index in determined:
        pick = _complement(web, sums_of.get(index, []), hidden)
        if pick is not None:
            return {pick}
    return set()


def _complement(web: CountWeb, sums: list[list[int]], taken: set[int]) -> int | None:
    """The count to hide beside an exposed one: a shown one sharing a sum with it.

    From the sums with the fewest hidden members first (a sum whose only hidden
    member is the exposed count is what gives it away); within them inner cells
    before totals (a hidden total sits in more sums, so it costs more hiding
    further on), non-zero before zero, then the smallest.
    """
    totals = {total for _, total in web.lines}
    for level in sorted({sum(i in taken for i in group) for group in sums}):
        candidates = {i for group in sums if sum(j in taken for j in group) == level
                      for i in group if i not in taken and i not in web.fixed}
        if candidates:
            return min(candidates, key=lambda i: (i in totals, web.values[i] <= 0, web.values[i], i))
    return None


def _zeros_beside_hidden_totals(web: CountWeb, hidden: set[int]) -> set[int]:
    return {
        member
        for members, total in web.lines
        if total in hidden
        for member in members
        if member not in hidden and web.values[member] == 0
    }


__all__ = ["CountWeb", "Protection", "exposed", "protect"]
