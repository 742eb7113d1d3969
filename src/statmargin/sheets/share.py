"""Sharing mode: hide small counts, and whatever would reveal them, in every output.

Default threshold: counts from 1 to 10 are hidden (``DEFAULT_MIN_COUNT = 11``).
This follows a common public-health practice of not publishing cells under 11
(for example the US Centers for Medicare & Medicaid Services cell-size
suppression policy, recalled from memory); many agencies use 5 instead, so the
threshold is a setting. It is common practice, not a guarantee of anonymity.

Results first (``suppress_results``, before any sentence is made), so the
JSON, the terminal summary and the sheets carry the same hidden values; the
rules by design are in ``share_results`` and the audit in ``share_audit``:

* every count from 1 to N-1 is hidden (``vocabulary.codes.Hidden``, worded
  "fewer than N", shown "<N", null in JSON); zeros stay, except beside a hidden
  total ("0 failed" beside a hidden number of inspections says all passed);
* a result's counts are laid out as the sums they form (cells, row and column
  totals, groups adding up to n, a series' periods and its trend test's
  weighted sum), and while any hidden count can be worked out from the shown
  ones by adding and subtracting, the smallest shown count beside it is hidden
  too (complementary cells, shown "suppressed"); a group hidden in one analysis
  is hidden in every analysis of the run;
* numbers computed from a hidden count go with it: shares, rates, means and
  every other summary of a hidden group (and of a group whose values are all at
  two ends, whose mean is a share), intervals, control limits, expected counts
  (with any hidden total), estimates naming a hidden group, follow-ups and cell
  residuals involving one;
* the statistic, p-values and standardized effect of a table go when its hidden
  counts keep fewer than two free directions (a 2 x 2 table with a hidden cell),
  since any one of them would then pin the counts down; otherwise they stay, as
  do a series' trend test (its sum is in the audit) and the statistics of
  continuous comparisons: functions of the whole data that single out no cell.

Then the sheets (``suppress_model``), for what only a sheet shows (histogram
bins, the data notes' counts): counts marked ``Cell.is_count`` from 1 to N-1
are hidden, a set of counts linked by a shown total (``SheetModel.count_sets``,
total last) never keeps exactly one hidden member, zeros beside a hidden total
go, and cells listed in ``SheetModel.count_dependents`` go with their count.

Also hidden: small counts of rows left out of an analysis, of rows hidden by a
filter and of data notes (the notes are counted, not listed, so no cell
address or value is written); the reason a question could not be run names no
cell and no minimum when it would say a group has one record. Not protected:
rows read less rows used gives a small count of rows left out back (these
count missing values, not members of a group; hiding n for every analysis
with a few blanks would cost far more); bounds from non-negativity, and
nonlinear whole-series diagnostics (dispersion, autocorrelation).

The data sheet itself is not touched and still holds record-level data; the
results header says so.
"""

from __future__ import annotations

import copy
import math
from collections.abc import Iterable, Mapping, MutableMapping, Sequence
from dataclasses import replace
from typing import Any, cast, overload

from ..io.addresses import column_index
from ..results import Result
from ..vocabulary import Design
from ..vocabulary.codes import Coded, Count, Derived, Hidden, Note, coded
from ..words import explain, refusals
from .model import Cell, SheetModel
from .share_results import hide_group, holds_hidden, protect_results

DEFAULT_MIN_COUNT = 11
SUPPRESSED_TEXT = "suppressed"



def is_small_count(value: Any, min_count: int = DEFAULT_MIN_COUNT) -> bool:
    """True for a whole number from 1 to ``min_count - 1`` (the counts sharing mode hides)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    if not math.isfinite(value) or float(value) != int(value):
        return False
    return 1 <= int(value) < min_count


def _check_min_count(min_count: int) -> None:
    from ..errors import OptionError

    if isinstance(min_count, bool) or not isinstance(min_count, int) or min_count < 2:
        raise OptionError(refusals.bad_share_threshold(min_count, DEFAULT_MIN_COUNT))


# ---------------------------------------------------------------- sheet models


def _parse_a1(address: str) -> tuple[int, int] | None:
    letters = "".join(ch for ch in address if ch.isalpha())
    digits = "".join(ch for ch in address if ch.isdigit())
    if not letters or not digits:
        return None
    return int(digits) - 1, column_index(letters)


def _numeric(cell: Cell | None) -> float | None:
    if cell is None or isinstance(cell.value, bool) or not isinstance(cell.value, (int, float)):
        return None
    return float(cell.value) if math.isfinite(cell.value) else None


def suppress_model(model: SheetModel, min_count: int = DEFAULT_MIN_COUNT) -> SheetModel:
    """A copy of one sheet model with small counts and what reveals them hidden.

    Parameters
    ----------
    model : SheetModel
        A tool sheet built by ``report`` (counts marked, dependents and sets listed).
    min_count : int
        Counts from 1 to ``min_count - 1`` are hidden.

    Returns
    -------
    SheetModel
        Hidden cells hold ``"<N>"``-style text (a small count itself) or
        "suppressed" (a complementary cell or a dependent), style "suppressed".
        On a results sheet the sharing sentence is written at ``anchors["share_note"]``.
        Text is not touched: it was written from suppressed results.
    """
    _check_min_count(min_count)
    out = copy.deepcopy(model)
    cells = out.cells
    primary = {
        pos
        for pos, cell in cells.items()
        if cell.is_count and is_small_count(cell.value, min_count)
    }
    hidden = set(primary) | {pos for pos, cell in cells.items() if cell.style == "suppressed"}
    changed = True
    while changed:
        changed = False
        for members in out.count_sets:
            present = [pos for pos in members if pos in cells]
            if present and present[-1] in hidden:
                for pos in present[:-1]:  # a zero beside a hidden total says the hidden rest is all of it
                    if pos not in hidden and _numeric(cells[pos]) == 0.0:
                        hidden.add(pos)
                        changed = True
            if sum(pos in hidden for pos in present) != 1:
                continue
            # Inner cells before the total (listed last), then the smallest non-zero.
            candidates = [
                (i == len(present) - 1, value, pos)
                for i, pos in enumerate(present)
                if pos not in hidden and (value := _numeric(cells[pos])) is not None and value > 0
            ]
            if candidates:
                hidden.add(min(candidates)[2])
                changed = True
        for pos in list(hidden):
            for dependent in out.count_dependents.get(pos, []):
                if dependent not in hidden and dependent in cells:
                    hidden.add(dependent)
                    changed = True
    for pos in hidden:
        old = cells[pos]
        if old.style == "suppressed":  # hidden earlier (keeps a second pass idempotent)
            continue
        text = f"<{min_count}" if pos in primary else SUPPRESSED_TEXT
        cells[pos] = Cell(text, "suppressed", None, old.is_count)
    if out.kind == "results":
        spot = _parse_a1(out.anchors.get("share_note", ""))
        if spot is not None:
            cells[spot] = Cell(explain.SHARE_NOTE.format(floor=min_count), "caution")
    return out


# ---------------------------------------------------------------- results


def suppress_results(results: Sequence[Result], min_count: int = DEFAULT_MIN_COUNT) -> list[Result]:
    """Copies of a run's results with small counts, and the numbers that would reveal them, removed.

    Parameters
    ----------
    results : sequence of Result
        All results of one run: a group hidden in one of them is hidden in
        every other that shows the same column's label.
    min_count : int

    Returns
    -------
    list of Result
        Hidden counts become ``Hidden`` marks (null in JSON); numbers computed
        from them become None, and their field names are listed in
        ``extra["suppressed"]`` so the sheets show them as suppressed; a plain
        caution is added when readings are written afterwards. See
        ``share_results`` for the rules by design.
    """
    _check_min_count(min_count)
    out = [copy.deepcopy(result) for result in results]
    hidden_fields = protect_results(out, min_count)
    for index, result in enumerate(out):
        fields = hidden_fields.get(index)
        if fields is None:
            fields = _without_layout(result, min_count)
        _remove(result, fields, min_count)
    return out


def suppress_result(result: Result, min_count: int = DEFAULT_MIN_COUNT) -> Result:
    """One result through ``suppress_results`` (a copy; the input is not changed)."""
    return suppress_results([result], min_count)[0]


def _without_layout(result: Result, min_count: int) -> set[str]:
    """Designs without linked counts (one sample, pairs, two measures): small groups lose their summaries."""
    hidden: set[str] = set()
    for group in result.groups:
        if isinstance(group, MutableMapping) and is_small_count(group.get("n", group.get("count")), min_count):
            hide_group(group)
            hidden.add("groups")
    if hidden and result.design in (Design.PAIRED_CONTINUOUS, Design.ONE_SAMPLE_CONTINUOUS):
        hidden.add("estimate")  # the mean (difference) of a handful of records, as their summaries are
    return hidden


def _remove(result: Result, hidden: set[str], min_count: int) -> None:
    """Clear the hidden fields, hide every remaining small count, and note that numbers are hidden."""
    if "estimate" in hidden and result.estimate is not None:
        result.estimate = replace(result.estimate, value=None, ci_low=None, ci_high=None)
    if "effect" in hidden and result.effect is not None:
        result.effect = replace(result.effect, value=None, ci_low=None, ci_high=None)
    for name in ("statistic", "p_value", "p_adjusted"):
        if name in hidden:
            setattr(result, name, None)
    if "effect" in hidden and isinstance(result.extra, dict):
        for key in [k for k in result.extra if k.startswith(("omega", "odds", "risk"))]:
            result.extra[key] = None
    pairs = result.extra.get("incomplete_pairs") if isinstance(result.extra, Mapping) else None
    if isinstance(pairs, (list, tuple)):
        # The keys of incomplete pairs are record-level data; sharing mode keeps only their number.
        result.extra["incomplete_pairs"] = len(pairs)
    _hide_counts(result, min_count)
    if hidden or holds_hidden(result):
        previous = result.extra.get("suppressed", []) if isinstance(result.extra, Mapping) else []
        result.extra = dict(result.extra or {})
        result.extra["suppressed"] = sorted(set(previous) | hidden)
        caution = coded(Note.SHARE_HIDDEN, floor=min_count)
        if caution not in result.notes:  # keeps a second pass idempotent
            result.notes = list(result.notes) + [caution]


# Keys whose values are counts of records, wherever they sit in a result's groups, tables and series.
COUNT_KEYS = frozenset({"n", "count", "events", "total", "n_pairs", "observed", "counts", "n_outliers",
                        "discordant_b", "discordant_c", "incomplete_pairs"})


def _hidden_count(value: Any, min_count: int) -> Any:
    return Hidden(min_count) if is_small_count(value, min_count) else value


def _hide_in(value: Any, min_count: int, *, counting: bool) -> Any:
    """A copy of a nested structure with every small count (under a count key) hidden."""
    if isinstance(value, Mapping):
        return {k: _hide_in(v, min_count, counting=counting or k in COUNT_KEYS) for k, v in value.items()}
    if isinstance(value, list):
        return [_hide_in(v, min_count, counting=counting) for v in value]
    return _hidden_count(value, min_count) if counting else value


def _hide_fact(value: Any, min_count: int) -> Any:
    """A fact with small counts hidden and numbers derived from counts dropped, inside lists and tuples too."""
    if isinstance(value, Derived):
        return None
    if isinstance(value, Count):
        return _hidden_count(int(value), min_count)
    if isinstance(value, (list, tuple)):
        return type(value)(_hide_fact(v, min_count) for v in value)
    return value


def _hide_facts(item: Coded, min_count: int) -> Coded:
    """A code with small counts hidden and facts derived from counts dropped."""
    facts = {key: _hide_fact(value, min_count) for key, value in item.facts.items()}
    if item.code is Note.PERIOD_FEW_ROWS:
        # Listing the hidden periods under "fewer than 10 rows" would narrow their hidden n (one not
        # listed would have exactly 10 under the default of 11): only periods with a shown n are listed.
        facts["periods"] = [(label, n) for label, n in facts.get("periods", []) if not isinstance(n, Hidden)]
    return Coded(item.code, facts)


def _hide_counts(result: Result, min_count: int) -> None:
    """Hide every small count of a result: n, groups, tables, series and the facts of its codes."""
    result.n = _hidden_count(result.n, min_count)
    result.n_excluded = _hidden_count(result.n_excluded, min_count)
    result.groups = [_hide_in(g, min_count, counting=False) for g in result.groups]
    result.shape = _hide_in(result.shape, min_count, counting=False)
    result.extra = _hide_in(result.extra, min_count, counting=False)
    result.reasons = [_hide_facts(r, min_count) for r in result.reasons]
    result.notes = [note for n in result.notes if _worth_saying(note := _hide_facts(n, min_count))]
    if result.skipped is not None:
        result.skipped = _hide_facts(result.skipped, min_count)
    if result.periods:
        # A hidden n loses its "few rows" flag too: the flag's own limit would narrow the hidden count.
        points = []
        for point in result.periods:
            n: Any = _hidden_count(point.n, min_count)
            points.append(replace(point, n=cast(int, n), few=False) if isinstance(n, Hidden) else point)
        result.periods = points


def _worth_saying(note: Coded) -> bool:
    """A note left with nothing to list (every period it named is hidden) is dropped."""
    return not (note.code is Note.PERIOD_FEW_ROWS and not note.facts.get("periods"))


# ---------------------------------------------------------------- entry point


@overload
def suppress(items: SheetModel, min_count: int = ...) -> SheetModel: ...
@overload
def suppress(items: Result, min_count: int = ...) -> Result: ...
@overload
def suppress(items: Iterable[Any], min_count: int = ...) -> list[Any]: ...


def suppress(items: Any, min_count: int = DEFAULT_MIN_COUNT) -> Any:
    """Sharing mode for sheet models or results (one or a list); inputs are not changed.

    Parameters
    ----------
    items : SheetModel, Result, or an iterable of them
        Results: call before ``explain.apply`` so readings never quote hidden
        numbers. Sheet models: call on the built sheets before writing.
    min_count : int, default 11
        Counts from 1 to ``min_count - 1`` are hidden (see the module notes for
        the practice behind the default).

    Returns
    -------
    The same shape of input, suppressed.

    Raises
    ------
    OptionError
        ``min_count`` is not a whole number of at least 2, or an item is neither
        a sheet model nor a result.
    """
    _check_min_count(min_count)
    if isinstance(items, SheetModel):
        return suppress_model(items, min_count)
    if isinstance(items, Result):
        return suppress_result(items, min_count)
    items = list(items)
    for item in items:
        if not isinstance(item, (SheetModel, Result)):
            from ..errors import OptionError

            raise OptionError(refusals.cannot_share(type(item).__name__))
    # Results are protected together, so one group is hidden alike in every analysis.
    results = iter(suppress_results([item for item in items if isinstance(item, Result)], min_count))
    return [suppress_model(item, min_count) if isinstance(item, SheetModel) else next(results) for item in items]


__all__ = [
    "DEFAULT_MIN_COUNT",
    "SUPPRESSED_TEXT",
    "is_small_count",
    "suppress",
    "suppress_model",
    "suppress_result",
    "suppress_results",
]
