"""Pairs of measurements on the same units: two columns of one row (wide) or two rows of one key (long).

Long form: a pairing key column plus a two-level compare-by column saying which
measurement each row is. Wide form: an outcome column paired with another
column. Incomplete pairs are kept so the data notes can list them.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import RoleError
from ..plan.types import TypeInfo, category_labels
from ..vocabulary import Design, MeasureType
from ..vocabulary.codes import Coded, Count, Note, Skip, coded
from ..words import refusals
from .base import Prepared, Skipped
from .groups import levels_present
from .question import Question


@dataclass
class PairData:
    """Complete pairs (first, second), their labels, and what was left out."""

    info: TypeInfo  # the outcome's type (levels shared by both halves for categories)
    first: np.ndarray
    second: np.ndarray
    labels: tuple[str, str]
    n_excluded: int
    pairing: str  # the key column (long form) or the second measurement column (wide form)
    incomplete: list[Any] = field(default_factory=list)
    notes: list[Coded] = field(default_factory=list)
    counts: np.ndarray | None = None  # pairs each row stands for (a count column; wide form only)

    @property
    def n(self) -> int:
        return int(self.first.size) if self.counts is None else int(self.counts.sum())


def is_paired(question: Question) -> bool:
    return question.partner is not None or question.key is not None


def is_categorical(question: Question) -> bool:
    return question.outcome_info.type is MeasureType.CATEGORICAL


def _level_key(label: str) -> tuple[int, float, str]:
    try:
        return (0, float(label), label)
    except ValueError:
        return (1, 0.0, label)


def pair_data(question: Question, design: Design) -> PairData:
    """The complete pairs of a question (computed once per question)."""
    cached = question.cache.get("pairs")
    if isinstance(cached, PairData):
        return cached
    data = _wide(question, design) if question.partner is not None else _long(question, design)
    question.cache["pairs"] = data
    return data


def _wide(question: Question, design: Design) -> PairData:
    a_col, a_info = question.outcome, question.outcome_info
    b_col, b_info = question.partner, question.partner_info
    assert b_col is not None and b_info is not None
    a_cat = a_info.type is MeasureType.CATEGORICAL
    if a_cat != (b_info.type is MeasureType.CATEGORICAL):
        raise RoleError(refusals.mixed_pair(a_col.name, b_col.name))
    if a_cat:
        # Both columns must share one set of levels.
        levels = tuple(sorted(set(a_info.levels) | set(b_info.levels), key=_level_key))
        a_info = TypeInfo(MeasureType.CATEGORICAL, len(levels), levels, a_info.reason, a_info.inferred)
    both = question.both(a_col, a_info, b_col, b_info)
    a, b, usable, n_excl, counts = both.first, both.second, both.usable, both.n_excluded, both.weights
    x, z = a.values[both.kept], b.values[both.kept]
    if not a_cat:
        x, z = x.astype(float), z.astype(float)
    # Sheet rows whose pair had one half missing or unreadable, so the data notes can list them.
    half = ~usable & (a.present | b.present)
    rows = question.rows
    incomplete: list[Any] = (
        [f"row {int(r)}" for r in rows[half]] if rows is not None else np.flatnonzero(half).tolist()
    )
    return PairData(a_info, x, z, (a_col.name, b_col.name), n_excl, b_col.name, incomplete,
                    counts=None if question.counts is None else counts)


def _long(question: Question, design: Design) -> PairData:
    out_col, out_info = question.outcome, question.outcome_info
    by_col, by_info, key_col = question.by, question.by_info, question.key
    assert by_col is not None and by_info is not None and key_col is not None
    name, by, key = out_col.name, by_col.name, key_col.name
    cat = out_info.type is MeasureType.CATEGORICAL
    y = question.values(out_col, out_info)
    g = question.values(by_col, by_info)
    keys = category_labels(key_col)
    key_present = np.array([lab is not None for lab in keys], dtype=bool)
    conditions = levels_present(by_info, g.values[g.usable])
    if len(conditions) > 2:
        # Reported under the design the rows would need (several conditions per unit).
        raise Skipped(coded(Skip.TOO_MANY_CONDITIONS, by=by, n=len(conditions), key=key),
                      design=design if cat else Design.MULTI_GROUP_CONTINUOUS)
    if len(conditions) < 2:
        raise Skipped(coded(Skip.NEED_TWO_CONDITIONS, by=by, outcome=name, key=key))
    question.require_order(by_col, by_info, conditions)
    first, second = conditions
    cells: dict[str, dict[str, Any]] = {}
    order: list[str] = []
    duplicates: list[str] = []
    for i in range(len(keys)):
        if not key_present[i] or not g.usable[i]:
            continue
        k, cond = keys[i], g.values[i]
        if k not in cells:
            cells[k] = {}
            order.append(k)
        if cond in cells[k]:
            duplicates.append(k)
        cells[k][cond] = y.values[i] if y.usable[i] else None
    if duplicates:
        raise Skipped(coded(Skip.DUPLICATE_KEYS, key=key, by=by, keys=list(dict.fromkeys(duplicates))))
    complete = [k for k in order if cells[k].get(first) is not None and cells[k].get(second) is not None]
    done = set(complete)
    incomplete = [k for k in order if k not in done]
    n_excl = int(np.sum(y.present | g.present | key_present)) - 2 * len(complete)
    a = np.array([cells[k][first] for k in complete], dtype=object if cat else float)
    b = np.array([cells[k][second] for k in complete], dtype=object if cat else float)
    notes = []
    if incomplete:
        notes.append(coded(Note.INCOMPLETE_PAIRS, n=Count(len(incomplete)), key=key, outcome=name,
                           first=first, second=second))
    return PairData(out_info, a, b, (first, second), n_excl, key, incomplete, notes)


def prepare_pairs(question: Question, design: Design) -> tuple[Prepared, PairData]:
    """The Prepared shell of a paired design (pairing facts kept for every result)."""
    try:
        data = pair_data(question, design)
    except Skipped as skip:
        skip.prepared = Prepared(skip.design or design)
        skip.prepared.extra["pairing"] = question.key.name if question.key is not None else None
        raise
    prepared = Prepared(design, n=data.n, n_excluded=data.n_excluded)
    prepared.extra.update(pairing=data.pairing, incomplete_pairs=data.incomplete, pair_notes=data.notes,
                          labels=data.labels)
    return prepared, data
