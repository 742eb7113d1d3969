"""Sharing mode on results: each design's counts as a web of sums, protected, and what they give away hidden.

``layout(result)`` lays a result's counts out as a ``share_audit.CountWeb``
(cells, group totals, level totals and the analysis's n, with the sums that
link them) and notes every place in the result where each count is written
(groups, tables, series, JSON-bound extras). ``protect_results`` protects the
webs of a whole run, writes ``Hidden`` marks into those places, and hides the
numbers computed from hidden counts:

* a group's share of the records, its shares of each level, its rate or mean
  and their intervals, whenever its total or the count they come from is hidden
  (a share with its n gives the count back, a total less a shown count gives
  the other);
* expected counts whenever a row or column total is hidden (they add up to the
  totals);
* an estimate that names a group or level with a hidden count (a difference of
  shares or means, a rate ratio), and pairwise follow-ups and cell residuals
  that involve one;
* the statistic, p-values and standardized effect of the whole table when its
  hidden counts keep fewer than two free directions (``Protection.free``): one
  such number would then pin them down, as in a 2 x 2 table.

A group (or level, or period) hidden in one analysis is hidden in every
analysis of the run that shows the same column's label, so two analyses with
different complementary choices cannot be laid side by side.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, MutableMapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from ..results import Followup, Result
from ..vocabulary import Design, Test
from ..vocabulary.codes import Hidden
from .share_audit import CountWeb, Protection, protect

Place = tuple[Any, Any]  # (container, key): container[key] (or its attribute) holds the count
Name = tuple[str, str]  # (column, label): the same count across the analyses of a run

TABLES = (Design.TWO_CATEGORICAL, Design.GROUP_POOLED_SHARES, Design.PAIRED_CATEGORICAL)
LEVELS = (Design.ONE_SAMPLE_CATEGORICAL, Design.ONE_SAMPLE_POOLED_SHARE)
GROUP_LINES = (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS, Design.PERIOD_CENTRE,
               Design.GROUP_RATES, Design.ONE_SAMPLE_RATE)
WHOLE_TABLE = ("statistic", "p_value", "p_adjusted", "effect")


def is_small(value: Any, floor: int) -> bool:
    """A whole number from 1 to ``floor - 1``."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    if not math.isfinite(value) or float(value) != int(value):
        return False
    return 1 <= int(value) < floor


@dataclass
class Layout:
    """A result's counts, where each is written, and how to hide what they give away."""

    web: CountWeb = field(default_factory=CountWeb)
    places: list[list[Place]] = field(default_factory=list)
    names: dict[int, Name] = field(default_factory=dict)
    finish: Callable[[Result, Protection, int], set[str]] = lambda result, protection, floor: set()
    groups: dict[str, int] = field(default_factory=dict)  # label -> count index of its total

    def add(self, value: Any, places: Sequence[Place] = (), *, fixed: bool = False,
            name: Name | None = None) -> int:
        index = self.web.add(_number(value), fixed=fixed)
        self.places.append(list(places))
        if name is not None:
            self.names[index] = name
        return index


def _number(value: Any) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        return 0.0
    return number if math.isfinite(number) else 0.0


def mark(protection: Protection, index: int, floor: int) -> Hidden:
    """The mark a hidden count carries: small ("<N") or complementary ("suppressed")."""
    return Hidden(floor, small=index in protection.small)


def _put(place: Place, value: Any) -> None:
    holder, key = place
    if isinstance(holder, (MutableMapping, list)):
        holder[key] = value
    else:
        setattr(holder, key, value)


# ---------------------------------------------------------------- run-wide


def protect_results(results: list[Result], floor: int) -> dict[int, set[str]]:
    """Protect every result of a run in place; returns, by position, the fields each had hidden.

    Results whose design has no layout (one continuous sample, correlations,
    paired measurements) are left to the caller's group rule.
    """
    # A result suppressed before (a second pass) keeps its marks: its true counts are gone.
    layouts = {i: lay for i, result in enumerate(results)
               if not holds_hidden(result) and (lay := layout(result)) is not None}
    small = {i: {j for j, v in enumerate(lay.web.values) if is_small(v, floor)} for i, lay in layouts.items()}
    hidden_names: set[Name] = set()
    protections: dict[int, Protection] = {}
    for _ in range(6):  # run-wide agreement settles in a pass or two; bounded all the same
        before = set(hidden_names)
        for i, lay in layouts.items():
            also = {j for j, name in lay.names.items() if name in hidden_names}
            protections[i] = protect(lay.web, small[i], also)
            hidden_names |= {lay.names[j] for j in protections[i].hidden if j in lay.names}
        if hidden_names == before:
            break
    out: dict[int, set[str]] = {}
    for i, lay in layouts.items():
        protection = protections[i]
        for j in protection.hidden:
            for place in lay.places[j]:
                _put(place, mark(protection, j, floor))
        out[i] = lay.finish(results[i], protection, floor)
    return out


def holds_hidden(value: Any) -> bool:
    """Whether a result (or part of one) holds a hidden count anywhere."""
    if isinstance(value, Hidden):
        return True
    if isinstance(value, Result):
        return any(holds_hidden(v) for v in (value.n, value.n_excluded, value.groups, value.shape, value.extra,
                                             [p.n for p in value.periods or []]))
    if isinstance(value, Mapping):
        return any(holds_hidden(v) for v in value.values())
    if isinstance(value, (list, tuple)):
        return any(holds_hidden(v) for v in value)
    return False


def layout(result: Result) -> Layout | None:
    """The count web of one result, by design (None for designs without linked counts)."""
    if result.design in TABLES:
        return _table_layout(result)
    if result.design is Design.ONE_SAMPLE_CATEGORICAL:
        return _levels_layout(result)
    if result.design is Design.ONE_SAMPLE_POOLED_SHARE:
        return _pooled_share_layout(result)
    if result.design is Design.PERIOD_SHARES or _mean_of_two_values(result):
        return _period_shares_layout(result)
    if result.design in GROUP_LINES:
        return _group_line_layout(result)
    return None


# ---------------------------------------------------------------- helpers for finishing


def hide_group(group: MutableMapping[str, Any], keep: Sequence[str] = ("label", "n", "count", "normality_test")) -> None:
    """Remove every number of a group but its label and (hidden) size; mark it suppressed."""
    for key in list(group):
        if key not in keep:
            group[key] = None
    group["suppressed"] = True


def _whole_table(result: Result, protection: Protection) -> set[str]:
    """Statistic, p-values and effect go when the hidden counts keep fewer than two free directions."""
    if protection.hidden and protection.free < 2:
        return set(WHOLE_TABLE)
    return set()


def _estimate_names_hidden(result: Result, hidden_labels: set[str], anything_hidden: bool) -> bool:
    """An estimate naming a hidden group or level (or naming none while anything is hidden)."""
    estimate = result.estimate
    if estimate is None or not anything_hidden:
        return False
    named = {str(x) for x in estimate.levels} | ({str(estimate.level)} if estimate.level is not None else set())
    touched = named & hidden_labels
    return bool(touched) or not estimate.levels


def _followups_without(result: Result, hidden_labels: set[str], *, drop: bool) -> None:
    """Follow-ups involving a hidden label: dropped (``drop``) or kept without their estimate."""
    kept: list[Followup] = []
    for followup in result.followups:
        if not any(str(level) in hidden_labels for level in followup.levels):
            kept.append(followup)
        elif not drop:
            kept.append(replace(followup, estimate=None))
    result.followups = kept


def _groups_by_label(result: Result) -> dict[str, MutableMapping[str, Any]]:
    return {str(g.get("label")): g for g in result.groups if isinstance(g, MutableMapping)}


def _matrix(holder: Any, key: Any) -> list[list[Any]] | None:
    """The table at holder[key] as a list of lists (made one in place), or None."""
    value = holder.get(key) if isinstance(holder, Mapping) else None
    if value is None:
        return None
    if isinstance(value, Mapping):
        return _matrix(value, "values") if "values" in value else _matrix(value, "counts")
    if hasattr(value, "tolist"):
        value = value.tolist()
    if not (isinstance(value, Sequence) and value and all(isinstance(r, Sequence) for r in value)):
        return None
    table = [list(r) for r in value]
    holder[key] = table
    return table


def _labels(result: Result, n_rows: int, n_cols: int) -> tuple[list[str], list[str]]:
    """Row and column labels of a result's table, from wherever the design wrote them."""
    for holder in (result.extra.get("observed"), (result.shape or {}).get("counts"), result.extra):
        if isinstance(holder, Mapping):
            rows = holder.get("row_labels", holder.get("row_levels"))
            cols = holder.get("col_labels", holder.get("col_levels"))
            if isinstance(rows, Sequence) and isinstance(cols, Sequence) and len(rows) == n_rows \
                    and len(cols) == n_cols:
                return [str(r) for r in rows], [str(c) for c in cols]
    return [f"row {i + 1}" for i in range(n_rows)], [f"column {j + 1}" for j in range(n_cols)]


def _expected_hidden(result: Result, floor: int) -> None:
    """Expected counts add up to the row and column totals: all of them go when a total is hidden."""
    for holder in (result.extra, (result.shape or {}).get("counts"), result.shape):
        if not isinstance(holder, MutableMapping):
            continue
        for key in ("expected", "expected_events"):
            table = holder.get(key)
            if isinstance(table, MutableMapping) and "values" in table:
                table["values"] = _hidden_like(table["values"], floor)
            elif table is not None:
                holder[key] = _hidden_like(table, floor)
        for key in ("min_expected", "share_expected_below_5"):
            if key in holder:
                holder[key] = None


def _hidden_like(value: Any, floor: int) -> Any:
    if hasattr(value, "tolist"):
        value = value.tolist()
    if isinstance(value, (list, tuple)):
        return [_hidden_like(v, floor) for v in value]
    return Hidden(floor, small=False)


# ---------------------------------------------------------------- tables (rows by levels)


def _table_layout(result: Result) -> Layout | None:
    extra = result.extra if isinstance(result.extra, MutableMapping) else {}
    counts_holder = (result.shape or {}).get("counts")
    holders = [m for m in (
        _matrix(extra, "observed"),
        _matrix(counts_holder, "observed") if isinstance(counts_holder, MutableMapping) else None,
    ) if m is not None]
    if not holders:
        return None
    table = holders[0]
    n_rows, n_cols = len(table), len(table[0])
    holders = [h for h in holders if len(h) == n_rows and all(len(r) == n_cols for r in h)]
    rows, cols = _labels(result, n_rows, n_cols)
    paired = result.design is Design.PAIRED_CATEGORICAL
    pooled = result.design is Design.GROUP_POOLED_SHARES
    groups = _groups_by_label(result)
    categories = {str(c.get("label")): c for c in extra.get("categories", []) if isinstance(c, MutableMapping)}
    lay = Layout()
    cells: list[list[int]] = []
    for i, label in enumerate(rows):
        group, category = groups.get(label), categories.get(label)
        line = []
        for j, col in enumerate(cols):
            places: list[Place] = [(h[i], j) for h in holders]
            for holder in (group, category):
                if holder is not None and isinstance(holder.get("counts"), MutableMapping) \
                        and col in holder["counts"]:
                    places.append((holder["counts"], col))
            if pooled and j == 0 and group is not None and "events" in group:
                places.append((group, "events"))
            if paired and (i, j) in ((0, 1), (1, 0)):
                places.append((extra, "discordant_b" if (i, j) == (0, 1) else "discordant_c"))
            line.append(lay.add(table[i][j], places))
        cells.append(line)
    row_totals = []
    for i, label in enumerate(rows):
        places = []
        for holder in (groups.get(label), categories.get(label)):
            if holder is not None and not paired:
                places.extend((holder, key) for key in ("n", "count", "total") if key in holder)
        if paired and i == 0 and len(result.groups) > 0:
            places.append((result.groups[0], "count"))
        name = (str(result.exposure), label) if result.exposure and not paired else None
        row_totals.append(lay.add(sum(_number(v) for v in table[i]), places, name=name))
        lay.web.line(cells[i], row_totals[-1])
        lay.groups[label] = row_totals[-1]
    col_totals = []
    for j, col in enumerate(cols):
        places = [(result.groups[1], "count")] if paired and j == 0 and len(result.groups) > 1 else []
        name = (str(result.outcome), col) if result.design is Design.TWO_CATEGORICAL else None
        col_totals.append(lay.add(sum(_number(r[j]) for r in table), places, name=name))
        lay.web.line([line[j] for line in cells], col_totals[-1])
    total = lay.add(sum(_number(v) for r in table for v in r), [(result, "n")], fixed=True)
    lay.web.line(row_totals, total)
    lay.web.line(col_totals, total)

    def finish(res: Result, protection: Protection, floor: int) -> set[str]:
        hidden = protection.hidden
        hidden_rows = {label for i, label in enumerate(rows)
                       if row_totals[i] in hidden or any(c in hidden for c in cells[i])}
        for i, label in enumerate(rows):
            for holder in (groups.get(label), categories.get(label)):
                if holder is None:
                    continue
                if row_totals[i] in hidden and not paired:
                    hide_group(holder, keep=("label", "n", "count", "total", "counts", "events"))
                shares = holder.get("shares")
                if isinstance(shares, MutableMapping):
                    for j, col in enumerate(cols):
                        if col in shares and (cells[i][j] in hidden or row_totals[i] in hidden):
                            shares[col] = None
                if pooled and label in hidden_rows:
                    for key in ("rate", "ci_low", "ci_high"):
                        if key in holder:
                            holder[key] = None
        if paired:
            for g, index in zip(res.groups[:2], (row_totals[0], col_totals[0]), strict=False):
                if index in hidden and isinstance(g, MutableMapping):
                    g["share"] = None
        if any(i in hidden for i in (*row_totals, *col_totals)):
            _expected_hidden(res, floor)
        _write_margins(res, lay, protection, floor, row_totals, col_totals)
        out = _whole_table(res, protection)
        if hidden and n_rows == 2 and n_cols == 2:
            # A 2 x 2 table's p-value (Fisher's or McNemar's), its odds ratio and its difference of
            # shares are different functions of the cells: together they pin the cells down.
            out |= set(WHOLE_TABLE)
        if hidden and (paired or _estimate_names_hidden(res, hidden_rows, True)):
            out.add("estimate")
        if hidden:
            res.followups = [f for f in res.followups if f.test is not Test.ADJUSTED_RESIDUAL]
            _followups_without(res, hidden_rows, drop=True)
        if any(g.get("suppressed") for g in groups.values()):
            out.add("groups")
        return out

    lay.finish = finish
    return lay


def _write_margins(result: Result, lay: Layout, protection: Protection, floor: int, rows: list[int],
                   cols: list[int]) -> None:
    """Row and column totals beside the table (``extra["observed"]``), so sheets show the shown ones.

    Without them a sheet could only add up the shown cells, which gives a wrong total
    once one is hidden.
    """
    if not isinstance(result.extra, MutableMapping):
        return
    observed = result.extra.get("observed")
    if isinstance(observed, list):
        observed = result.extra["observed"] = {"values": observed}
    if not isinstance(observed, MutableMapping):
        return

    def shown(index: int) -> Any:
        return mark(protection, index, floor) if index in protection.hidden else int(lay.web.values[index])

    observed["row_totals"] = [shown(i) for i in rows]
    observed["col_totals"] = [shown(j) for j in cols]


# ---------------------------------------------------------------- one variable's levels


def _levels_layout(result: Result) -> Layout | None:
    groups = [g for g in result.groups if isinstance(g, MutableMapping)]
    if not groups:
        return None
    lay = Layout()
    levels = []
    listed = _level_list(result)
    for g in groups:
        label = str(g.get("label"))
        places = [(g, key) for key in ("count", "n") if key in g]
        if label in listed:
            places.append(listed[label])
        levels.append(lay.add(g.get("count", g.get("n")), places, name=(str(result.outcome), label)))
        lay.groups[label] = levels[-1]
    lay.web.line(levels, lay.add(result.n, [(result, "n")], fixed=True))

    def finish(res: Result, protection: Protection, floor: int) -> set[str]:
        hidden_labels = {label for label, index in lay.groups.items() if index in protection.hidden}
        for g in groups:
            if str(g.get("label")) in hidden_labels:
                g["share"] = None
        out = _whole_table(res, protection)
        if _estimate_names_hidden(res, hidden_labels, bool(hidden_labels)):
            out.add("estimate")
            if isinstance(res.extra, MutableMapping) and "clopper_pearson" in res.extra:
                res.extra["clopper_pearson"] = None
        return out

    lay.finish = finish
    return lay


def _level_list(result: Result) -> dict[str, Place]:
    """Where a goodness-of-fit result lists its observed counts again: ``extra["observed"]`` by ``categories``."""
    extra = result.extra if isinstance(result.extra, MutableMapping) else {}
    observed, labels = extra.get("observed"), extra.get("categories")
    if observed is not None and hasattr(observed, "tolist"):
        observed = extra["observed"] = observed.tolist()
    if not (isinstance(observed, list) and isinstance(labels, Sequence) and len(labels) == len(observed)):
        return {}
    if any(isinstance(v, Sequence) for v in observed):
        return {}
    return {str(label): (observed, i) for i, label in enumerate(labels)}


def _pooled_share_layout(result: Result) -> Layout | None:
    categories = [c for c in result.extra.get("categories", []) if isinstance(c, MutableMapping)]
    group = next((g for g in result.groups if isinstance(g, MutableMapping)), None)
    if len(categories) != 2:
        return None
    lay = Layout()
    event_places: list[Place] = [(categories[0], "count")] + ([(group, "events")] if group is not None else [])
    events = lay.add(categories[0].get("count"), event_places)
    others = lay.add(categories[1].get("count"), [(categories[1], "count")])
    total_places: list[Place] = [(result, "n")] + ([(group, "total")] if group is not None else [])
    lay.web.line([events, others], lay.add(result.n, total_places, fixed=True))

    def finish(res: Result, protection: Protection, floor: int) -> set[str]:
        if not protection.hidden:
            return set()
        for holder in (*categories, group):
            if holder is not None:
                for key in ("share", "rate", "ci_low", "ci_high"):
                    if key in holder:
                        holder[key] = None
        if isinstance(res.extra, MutableMapping) and "clopper_pearson" in res.extra:
            res.extra["clopper_pearson"] = None
        return _whole_table(res, protection) | {"estimate"}

    lay.finish = finish
    return lay


# ---------------------------------------------------------------- groups adding up to n


def _assessment_groups(result: Result) -> dict[str, list[MutableMapping[str, Any]]]:
    """Group summaries repeated under shape checks (``shape["assessment"]["groups"]``), by label."""
    out: dict[str, list[MutableMapping[str, Any]]] = {}
    assessment = (result.shape or {}).get("assessment")
    for g in (assessment or {}).get("groups", []) if isinstance(assessment, Mapping) else []:
        if isinstance(g, MutableMapping):
            out.setdefault(str(g.get("label")), []).append(g)
    return out


def two_valued_small(group: Mapping[str, Any], floor: int) -> bool:
    """A group whose values all sit at its minimum or maximum, with few at one of them.

    Its mean (with n) then gives those counts back, as a share does: the mean
    of a 0/1 column is the share of 1s. Detected from the summaries alone: the
    variance reaches its Bhatia-Davis upper bound (max - mean)(mean - min),
    times n/(n-1) for the sample variance, exactly when every value is at one
    of the two ends (Bhatia & Davis 2000, Am Math Mon 107(4):353-357,
    doi:10.1080/00029890.2000.12005203).
    """
    numbers = [group.get(k) for k in ("n", "mean", "sd", "min", "max")]
    if not all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in numbers):
        return False
    n, mean, sd, low, high = (_number(v) for v in numbers)
    if high <= low or n < 2:
        return False
    bound = (high - mean) * (mean - low) * n / (n - 1)
    if not math.isclose(sd * sd, bound, rel_tol=1e-6, abs_tol=1e-12):
        return False
    at_high = round(n * (mean - low) / (high - low))
    return is_small(at_high, floor) or is_small(n - at_high, floor)


def _group_line_layout(result: Result) -> Layout | None:
    groups = [g for g in result.groups if isinstance(g, MutableMapping) and g.get("label") is not None]
    if not groups:
        return None
    rates = result.design in (Design.GROUP_RATES, Design.ONE_SAMPLE_RATE)
    key = "events" if rates else "n"
    over_time = result.design is Design.PERIOD_CENTRE
    column = str(result.extra.get("period_column") if over_time else result.exposure)
    assessment = _assessment_groups(result)
    lay = Layout()
    members = []
    for g in groups:
        label = str(g["label"])
        places: list[Place] = [(g, key)] + [(a, key) for a in assessment.get(label, []) if key in a]
        if result.design is Design.ONE_SAMPLE_RATE:
            places.append((result, "n"))
        members.append(lay.add(g.get(key), places, name=(column, label)))
        lay.groups[label] = members[-1]
    if result.design is not Design.ONE_SAMPLE_RATE:
        lay.web.line(members, lay.add(result.n, [(result, "n")], fixed=True))

    def finish(res: Result, protection: Protection, floor: int) -> set[str]:
        hidden_labels = {label for label, index in lay.groups.items() if index in protection.hidden}
        out: set[str] = set()
        for g in groups:
            label = str(g["label"])
            small_group = label in hidden_labels and lay.groups[label] in protection.small
            if label in hidden_labels and rates and not small_group:
                for k in ("rate", "ci_low", "ci_high"):
                    if k in g:
                        g[k] = None  # the rate with its person-time gives the events back
            elif label in hidden_labels or (not rates and two_valued_small(g, floor)):
                hidden_labels.add(label)
                hide_group(g, keep=("label", key, "normality_test"))
                for a in assessment.get(label, []):
                    hide_group(a, keep=("label", key))
            if g.get("suppressed"):
                out.add("groups")
        if over_time and hidden_labels:
            _hide_points(res, hidden_labels, lay, protection, floor)
        if _estimate_names_hidden(res, hidden_labels, bool(hidden_labels)):
            out |= {"estimate", "effect"} if rates else {"estimate"}
        if rates:
            out |= _whole_table(res, protection)
            if hidden_labels and isinstance(res.extra, MutableMapping):
                for name in ("expected_events", "min_expected"):  # from each group's person-time
                    res.extra.pop(name, None)
        _followups_without(res, hidden_labels, drop=rates)
        return out

    lay.finish = finish
    return lay


# ---------------------------------------------------------------- series over time


def _hide_points(result: Result, hidden_labels: set[str], lay: Layout, protection: Protection,
                 floor: int, counts: Mapping[str, int] | None = None) -> None:
    """Periods with a hidden count lose value, interval and limits (and n when n is hidden)."""
    points = []
    for point in result.periods or []:
        if point.period not in hidden_labels:
            points.append(point)
            continue
        index = (counts or lay.groups).get(point.period)
        n: Any = mark(protection, index, floor) if index is not None and index in protection.hidden else point.n
        points.append(replace(point, n=n, value=None, ci_low=None, ci_high=None, lower_limit=None,
                              upper_limit=None))
    result.periods = points


def _mean_of_two_values(result: Result) -> bool:
    """A series of means of a column holding two values only: each mean is a share, laid out as one."""
    extra = result.extra if isinstance(result.extra, Mapping) else {}
    ends = extra.get("two_values")
    return (result.design is Design.PERIOD_CENTRE and extra.get("centre") == "mean"
            and isinstance(ends, Sequence) and len(ends) == 2 and ends[1] > ends[0])


def _period_share(group: Mapping[str, Any], result: Result) -> Any:
    """A period's share of the counted level; for means of two values, (mean - low) / (high - low)."""
    if not _mean_of_two_values(result):
        return group.get("share")
    low, high = result.extra["two_values"]
    mean = group.get("mean")
    return (mean - low) / (high - low) if isinstance(mean, (int, float)) else None


def _period_shares_layout(result: Result) -> Layout | None:
    groups = [g for g in result.groups if isinstance(g, MutableMapping) and g.get("label") is not None]
    if not groups:
        return None
    level = str(result.extra.get("level", ""))
    column = str(result.extra.get("period_column"))
    lay = Layout()
    sizes: dict[str, int] = {}
    yes, no = [], []
    for g in groups:
        label = str(g["label"])
        n = _number(g.get("n"))
        counts = g.get("counts") if isinstance(g.get("counts"), MutableMapping) else None
        share = _period_share(g, result)
        x = _number(counts.get(level)) if counts and level in counts else (
            round(_number(share) * n) if isinstance(share, (int, float)) else 0.0)
        yes.append(lay.add(x, [(counts, level)] if counts and level in counts else []))
        no.append(lay.add(n - x))
        sizes[label] = lay.add(n, [(g, "n")], name=(column, label))
        lay.web.line([yes[-1], no[-1]], sizes[label])
        lay.groups[label] = sizes[label]
    total = lay.add(result.n, [(result, "n")], fixed=True)
    lay.web.line(list(sizes.values()), total)
    all_yes = lay.add(sum(lay.web.values[i] for i in yes), name=(str(result.outcome), level))
    all_no = lay.add(sum(lay.web.values[i] for i in no))
    lay.web.line(yes, all_yes)
    lay.web.line(no, all_no)
    lay.web.line([all_yes, all_no], total)
    if result.trend is not None and result.design is Design.PERIOD_SHARES:
        # The trend test's numerator is a published linear function of the periods' counts.
        lay.web.equations.append({index: float(position) for position, index in enumerate(yes)})

    def finish(res: Result, protection: Protection, floor: int) -> set[str]:
        hidden = protection.hidden
        labels = [str(g["label"]) for g in groups]
        hidden_labels = {label for label, y, m in zip(labels, yes, no, strict=True)
                         if y in hidden or m in hidden or sizes[label] in hidden}
        if not hidden_labels:
            return set()
        for g in groups:
            if str(g["label"]) in hidden_labels:
                hide_group(g, keep=("label", "n"))
        _hide_points(res, hidden_labels, lay, protection, floor, counts=sizes)
        res.followups = [
            replace(f, estimate=None, statistic=None, p_value=None, p_adjusted=None)
            if any(str(level) in hidden_labels for level in f.levels) else f
            for f in res.followups
        ]
        return {"groups", "periods"}

    lay.finish = finish
    return lay


__all__ = ["Layout", "hide_group", "holds_hidden", "is_small", "layout", "mark", "protect_results", "two_valued_small"]
