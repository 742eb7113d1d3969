"""Sharing mode: hide small counts, and whatever would reveal them, on the tool's sheets.

Default threshold: counts from 1 to 10 are hidden (``DEFAULT_MIN_COUNT = 11``).
This follows a common public-health practice of not publishing cells under 11
(for example the US Centers for Medicare & Medicaid Services cell-size
suppression policy, recalled from memory); many agencies use 5 instead, so the
threshold is a setting. It is common practice, not a guarantee of anonymity.

What is hidden (decisions):

* every cell marked as a count (``Cell.is_count``) holding 1 .. N-1; zeros stay
  (they are shown by most such policies and reveal no person), except in a set
  of counts with a hidden member, where a zero beside it tells that the hidden
  count is the whole of its row (every inspection of a small district passed);
* complementary cells: in every set of counts linked by a shown total
  (``SheetModel.count_sets``: a row or column with its total, histogram bins
  with the group's n), a single hidden member could be recovered by
  subtraction, so the smallest other non-zero member is hidden too, repeated
  until no set has exactly one hidden member;
* everything listed as revealing a hidden count (``SheetModel.count_dependents``):
  a group's share, mean, SD, median, quartiles, min/max, skewness, kurtosis,
  normality p and outlier count when the group's n is hidden, and expected
  counts when a margin is hidden;
* on the results themselves (``suppress_result``, run before readings are
  written): the summaries of groups with n < N; the difference estimate of a
  continuous comparison with such a group (with the other group's mean it
  would give the hidden mean back); the estimate (a share or a difference of
  shares) of a categorical analysis with a small cell; and for a 2 x 2 table
  with a small cell also its effect, statistic and p-values (with the margins,
  any of them would give the cell back); adjusted-residual follow-ups of
  tables with a small cell are dropped; in a series over time, each period with
  a small n (or, for shares, a small count of either level) loses its value,
  interval and limits, and a latest-period comparison with it its estimate
  (and, for shares, its statistic and p-values). Standardized effects, statistics and
  p-values of larger tables and of continuous comparisons are kept: they are
  functions of the whole data that do not single out a cell or a group mean.

Everything is hidden on values, before any sentence exists: counts in the
results (groups, tables, ``n``) and in the facts of reason and caution codes
become ``vocabulary.codes.Hidden`` (worded "fewer than N", shown "<N", written
to JSON as null), and numbers derived from counts that could give one back
(``Derived``, such as the smallest expected count) are dropped. No text is
rewritten afterwards, so the JSON, the terminal summary and the sheets carry
the same suppressed values.

The data sheet itself is not touched and still holds record-level data; the
results header says so.
"""

from __future__ import annotations

import copy
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import replace
from typing import Any, overload

from ..io.addresses import column_index
from ..results import Result
from ..vocabulary import Design, Test
from ..vocabulary.codes import Coded, Count, Derived, Hidden, Note, coded
from ..words import explain, refusals
from ..words.questions import EVENT_DESIGNS
from .model import Cell, SheetModel

DEFAULT_MIN_COUNT = 11
SUPPRESSED_TEXT = "suppressed"

_CATEGORICAL = (Design.ONE_SAMPLE_CATEGORICAL, Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL)
_GROUPED_CONTINUOUS = (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS, Design.PAIRED_CONTINUOUS)
_OVER_TIME = (Design.PERIOD_SHARES, Design.PERIOD_CENTRE)


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
            if any(pos in hidden for pos in present):
                for pos in present:  # a zero beside a hidden count says the hidden one is all of it
                    if pos not in hidden and _numeric(cells[pos]) == 0.0:
                        hidden.add(pos)
                        changed = True
            if sum(pos in hidden for pos in present) != 1:
                continue
            candidates = [
                (value, pos)
                for pos in present
                if pos not in hidden and (value := _numeric(cells[pos])) is not None and value > 0
            ]
            if candidates:
                hidden.add(min(candidates)[1])
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


def _group_size(group: Mapping[str, Any]) -> Any:
    return group.get("n", group.get("count"))


def _small_group(group: Mapping[str, Any], design: Any, min_count: int) -> bool:
    """A group with a small count of records, or (rows of events) of events or of people without one."""
    if is_small_count(_group_size(group), min_count):
        return True
    if design not in EVENT_DESIGNS:
        return False
    events, total = group.get("events"), group.get("total")
    if is_small_count(events, min_count):
        return True
    people = design in (Design.ONE_SAMPLE_POOLED_SHARE, Design.GROUP_POOLED_SHARES)
    return people and isinstance(events, int) and isinstance(total, int) and is_small_count(total - events, min_count)


def _small_cells(result: Result, min_count: int) -> bool:
    """True when a categorical result has a cell or level count from 1 to N-1."""
    values: list[Any] = [_group_size(g) for g in result.groups if isinstance(g, Mapping)]
    observed: Any = result.extra.get("observed") if isinstance(result.extra, Mapping) else None
    counts = result.shape.get("counts") if isinstance(result.shape, Mapping) else None
    if observed is None and isinstance(counts, Mapping):
        observed = counts.get("observed")
    if isinstance(observed, Mapping):
        observed = observed.get("values", observed.get("counts"))
    if hasattr(observed, "tolist"):
        observed = observed.tolist()
    if isinstance(observed, Sequence):
        for line in observed:
            values.extend(line if isinstance(line, Sequence) else [line])
    return any(is_small_count(v, min_count) for v in values)


def _is_two_by_two(result: Result) -> bool:
    if result.test in (Test.FISHER_EXACT, Test.MCNEMAR):
        return True
    df = result.df
    return (
        result.design in (Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL)
        and isinstance(df, (int, float))
        and df == 1
    )


def suppress_result(result: Result, min_count: int = DEFAULT_MIN_COUNT) -> Result:
    """A copy of one result with the numbers that would reveal small counts removed.

    Parameters
    ----------
    result : Result
    min_count : int

    Returns
    -------
    Result
        Removed values become None; their field names are listed in
        ``extra["suppressed"]`` so the sheets show them as suppressed, and a
        plain caution is added when readings are written afterwards.
    """
    _check_min_count(min_count)
    out = copy.deepcopy(result)
    hidden: set[str] = set()
    small_group = False
    for g in out.groups:
        if not isinstance(g, Mapping) or not _small_group(g, out.design, min_count):
            continue
        small_group = True
        keep = {"label", "n", "count", "normality_test"}
        for key in list(g):
            if key not in keep:
                g[key] = None
        g["suppressed"] = True
    if out.design in _CATEGORICAL and _small_cells(out, min_count):
        hidden.add("estimate")
        if _is_two_by_two(out):
            hidden |= {"effect", "statistic", "p_value", "p_adjusted"}
        out.followups = [f for f in out.followups if f.test != Test.ADJUSTED_RESIDUAL]
    elif out.design in _GROUPED_CONTINUOUS and small_group:
        hidden.add("estimate")
    elif out.design in EVENT_DESIGNS and small_group:
        # A group's share or rate with its total gives its events back; so do the pooled
        # estimate and its effect with the other groups' figures.
        hidden |= {"estimate", "effect"}
        out.followups = []
    elif out.design in _OVER_TIME and _suppress_periods(out, min_count):
        hidden.add("periods")
    if "estimate" in hidden and out.estimate is not None:
        out.estimate = replace(out.estimate, value=None, ci_low=None, ci_high=None)
    if "effect" in hidden and out.effect is not None:
        out.effect = replace(out.effect, value=None, ci_low=None, ci_high=None)
    if "statistic" in hidden:
        out.statistic = None
    if "p_value" in hidden:
        out.p_value = None
    if "p_adjusted" in hidden:
        out.p_adjusted = None
    _hide_counts(out, min_count)
    if hidden or small_group:
        previous = out.extra.get("suppressed", []) if isinstance(out.extra, Mapping) else []
        out.extra = dict(out.extra or {})
        out.extra["suppressed"] = sorted(
            set(previous) | hidden | ({"groups"} if small_group else set())
        )
        caution = coded(Note.SHARE_HIDDEN, floor=min_count)
        if caution not in out.notes:  # keeps a second pass idempotent
            out.notes = list(out.notes) + [caution]
    return out


# Keys whose values are counts of records, wherever they sit in a result's groups, tables and series.
COUNT_KEYS = frozenset({"n", "count", "events", "total", "n_pairs", "observed", "counts"})


def _hidden_count(value: Any, min_count: int) -> Any:
    return Hidden(min_count) if is_small_count(value, min_count) else value


def _hide_in(value: Any, min_count: int, *, counting: bool) -> Any:
    """A copy of a nested structure with every small count (under a count key) hidden."""
    if isinstance(value, Mapping):
        return {k: _hide_in(v, min_count, counting=counting or k in COUNT_KEYS) for k, v in value.items()}
    if isinstance(value, list):
        return [_hide_in(v, min_count, counting=counting) for v in value]
    return _hidden_count(value, min_count) if counting else value


def _hide_facts(item: Coded, min_count: int) -> Coded:
    """A code with small counts hidden and facts derived from counts dropped."""
    facts: dict[str, Any] = {}
    for key, value in item.facts.items():
        if isinstance(value, Derived):
            facts[key] = None
        elif isinstance(value, Count):
            facts[key] = _hidden_count(int(value), min_count)
        else:
            facts[key] = value
    return Coded(item.code, facts)


def _hide_counts(result: Result, min_count: int) -> None:
    """Hide every small count of a result: n, groups, tables, series and the facts of its codes."""
    result.n = _hidden_count(result.n, min_count)
    result.n_excluded = _hidden_count(result.n_excluded, min_count)
    result.groups = [_hide_in(g, min_count, counting=False) for g in result.groups]
    result.shape = _hide_in(result.shape, min_count, counting=False)
    result.extra = _hide_in(result.extra, min_count, counting=False)
    result.reasons = [_hide_facts(r, min_count) for r in result.reasons]
    result.notes = [_hide_facts(n, min_count) for n in result.notes]
    if result.skipped is not None:
        result.skipped = _hide_facts(result.skipped, min_count)


def _small_period(point: Any, design: Design, min_count: int) -> bool:
    """A period whose n, or (for shares) whose count of either level, is a small count."""
    if is_small_count(point.n, min_count):
        return True
    if design is Design.PERIOD_SHARES and point.value is not None and point.n:
        count = round(point.value * point.n)
        return is_small_count(count, min_count) or is_small_count(point.n - count, min_count)
    return False


def _suppress_periods(result: Result, min_count: int) -> bool:
    """Hide what reveals a small count in a series over time; True when anything was hidden.

    A period's share (or mean) and interval are hidden with its n, and so are its
    p-chart limits (computed from n); for shares, a period with a small count of
    either level is hidden too, as a small cell of a table is. A latest-period
    comparison that involves such a period loses its estimate and, for shares
    (a 2 x 2 table), its statistic and p-values. The trend and the flags are kept:
    they are functions of the whole series.
    """
    small = {p.period for p in result.periods or [] if _small_period(p, result.design, min_count)}
    if not small:
        return False
    result.periods = [
        replace(p, n=_hidden_count(p.n, min_count), value=None, ci_low=None, ci_high=None, lower_limit=None,
                upper_limit=None)
        if p.period in small else p
        for p in result.periods or []
    ]
    for g in result.groups:
        if isinstance(g, dict) and str(g.get("label")) in small:
            for key in list(g):
                if key not in ("label", "n"):
                    g[key] = None
            g["suppressed"] = True
    shares = result.design is Design.PERIOD_SHARES
    result.followups = [
        replace(f, estimate=None, statistic=None if shares else f.statistic,
                p_value=None if shares else f.p_value, p_adjusted=None if shares else f.p_adjusted)
        if any(level in small for level in f.levels) else f
        for f in result.followups
    ]
    return True


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
    out: list[SheetModel | Result] = []
    for item in items:
        if isinstance(item, SheetModel):
            out.append(suppress_model(item, min_count))
        elif isinstance(item, Result):
            out.append(suppress_result(item, min_count))
        else:
            from ..errors import OptionError

            raise OptionError(refusals.cannot_share(type(item).__name__))
    return out


__all__ = [
    "DEFAULT_MIN_COUNT",
    "SUPPRESSED_TEXT",
    "is_small_count",
    "suppress",
    "suppress_model",
    "suppress_result",
]
