"""Numbers by the groups of a category column: the data of the two-group and several-group designs.

When the outcome is the category and the compare-by column holds numbers, the
numbers are compared across the outcome's levels (the reason says so). With a
count column each group keeps its rows' counts, and the shape checks, tests and
follow-ups are those of the rows repeated ``count`` times.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..plan.types import TypeInfo
from ..read.table import Column
from ..stats.shape import assess, spread_check
from ..stats.weighted_shape import assess_weighted, spread_check_weighted
from ..vocabulary import Design, MeasureType, ShapeHandling
from ..vocabulary.codes import Coded, Count, Reason, Skip, coded
from .base import Prepared, Skipped, constant_reason, counted_sample
from .question import Question

# At most this many groups in one comparison: beyond it the follow-up pairs (n(n-1)/2) and
# the results sheet stop being readable, and splitting the rows by group grows with n.
MAX_GROUPS = 50


@dataclass
class GroupData:
    """The numeric column, the grouping column and the usable values by group."""

    numbers: Column
    numbers_info: TypeInfo
    grouping: Column
    grouping_info: TypeInfo
    levels: list[str]
    groups: dict[str, np.ndarray]
    n: int
    n_excluded: int
    lead: list[Coded]  # the reason for swapping roles, when the outcome is the category
    usable: np.ndarray  # the table rows used (bool), to point at a group's cells
    labels: np.ndarray  # the group label of each usable row

    def cell_of(self, level: str, rows: np.ndarray | None) -> str | None:
        """The grouping cell of a group's first row (e.g. "B62"), None without sheet rows."""
        if rows is None:
            return None
        first = np.flatnonzero(self.usable)[np.flatnonzero(self.labels == level)[0]]
        return f"{self.grouping.letter}{int(rows[first])}"
    counts: dict[str, np.ndarray] | None = None  # records per row of each group (a count column)

    def counted(self) -> dict[str, tuple[np.ndarray, np.ndarray]]:
        """Each group's (values, counts); counts of 1 without a count column."""
        return {lev: (v, self.counts[lev] if self.counts is not None else np.ones(v.size, dtype=np.int64))
                for lev, v in self.groups.items()}


def levels_present(info: TypeInfo, labels: np.ndarray) -> list[str]:
    """Levels seen in the usable rows: the column's level order first, then any others."""
    present = {lab for lab in pd.unique(np.asarray(labels, dtype=object)) if lab is not None}  # one pass in C
    ordered = [lev for lev in info.levels if lev in present]
    rest = sorted(present - set(ordered))
    return ordered + rest


def is_grouped(question: Question) -> bool:
    """One column holds categories and the other numbers (not a long-form pairing)."""
    if question.by is None or question.key is not None or question.by_info is None:
        return False
    out_cat = question.outcome_info.type is MeasureType.CATEGORICAL
    by_cat = question.by_info.type is MeasureType.CATEGORICAL
    return out_cat != by_cat


def group_data(question: Question) -> GroupData:
    """The usable numbers by group (computed once per question)."""
    cached = question.cache.get("groups")
    if isinstance(cached, GroupData):
        return cached
    assert question.by is not None and question.by_info is not None
    lead: list[Coded] = []
    if question.outcome_info.type is MeasureType.CATEGORICAL:
        numbers, numbers_info = question.by, question.by_info
        grouping, grouping_info = question.outcome, question.outcome_info
        lead.append(coded(Reason.CATEGORY_BY_NUMBER, outcome=question.outcome.name, by=question.by.name))
    else:
        numbers, numbers_info = question.outcome, question.outcome_info
        grouping, grouping_info = question.by, question.by_info
    both = question.both(numbers, numbers_info, grouping, grouping_info)
    n_excluded, weights = both.n_excluded, both.weights
    values = both.first.values[both.kept].astype(float)
    labels = both.second.values[both.kept]
    levels = levels_present(grouping_info, labels)
    # Too many groups are refused in prepare_groups; splitting them would cost n x groups.
    few = len(levels) <= MAX_GROUPS
    # Integer codes (one hashing pass) instead of comparing every label string once per level.
    codes, uniques = pd.factorize(labels) if few else (np.empty(0, dtype=np.intp), [])
    code_of = {lev: i for i, lev in enumerate(uniques)}
    groups = {lev: values[codes == code_of[lev]] for lev in levels} if few else {}
    counts = None if question.counts is None or not few else {lev: weights[codes == code_of[lev]] for lev in levels}
    data = GroupData(numbers, numbers_info, grouping, grouping_info, levels, groups, int(weights.sum()),
                     n_excluded, lead, both.kept, labels, counts)
    question.cache["groups"] = data
    return data


def prepare_groups(question: Question, design: Design, would: tuple[object, object]) -> Prepared:
    """Prepared groups with their shape checks; skip fewer than two groups or a constant outcome."""
    data = group_data(question)
    name, by = data.numbers.name, data.grouping.name
    prepared = Prepared(design, n=data.n, n_excluded=data.n_excluded, groups=data.groups)
    if len(data.levels) > MAX_GROUPS:
        reason = coded(Skip.TOO_MANY_GROUPS, by=by, n=len(data.levels), limit=MAX_GROUPS)
        raise Skipped(reason, prepared, design=Design.MULTI_GROUP_CONTINUOUS, reasons=data.lead)
    if data.counts is None:
        shape = assess(data.groups)
        spread = spread_check(data.groups) if len(data.levels) >= 3 else None
        prepared.samples = dict(data.groups)  # the arrays themselves: no copy per analysis
    else:
        counted = data.counted()
        shape = assess_weighted(counted)
        spread = spread_check_weighted(counted) if len(data.levels) >= 3 else None
        prepared.samples = {label: counted_sample(v, c) for label, (v, c) in counted.items()}
        prepared.extra["counts"] = data.counts
    prepared.keep_shape(shape)
    prepared.shape["spread"] = spread.to_record() if spread else None
    prepared.extra.update(spread=spread, lead=data.lead)
    if len(data.levels) < 2:
        reason = coded(Skip.FEWER_THAN_TWO_GROUPS, by=by, level=data.levels[0] if data.levels else None)
        raise Skipped(reason, prepared, design=Design.TWO_GROUP_CONTINUOUS, reasons=data.lead)
    sizes = {lev: int(data.counts[lev].sum()) if data.counts is not None else data.groups[lev].size
             for lev in data.levels}
    single = next((lev for lev in data.levels if sizes[lev] == 1), None)
    if single is not None:  # often a typing slip; naming the cell lets the user find it
        reason = coded(Skip.GROUP_OF_ONE, by=by, level=single, n=Count(1), cell=data.cell_of(single, question.rows))
        raise Skipped(reason, prepared, reasons=data.lead)
    ordinal = data.numbers_info.type is MeasureType.ORDINAL
    rank = ordinal or question.handling is ShapeHandling.RANK
    constant = constant_reason(name, np.concatenate(list(data.groups.values())))
    if constant:
        raise Skipped(constant, prepared, test=would[1] if rank else would[0], reasons=data.lead)  # type: ignore[arg-type]
    return prepared
