"""Cleaning after reading: look-alike labels merged, and a note for every cell a column's type leaves out.

Both steps run once per column the roles use, before any analysis, so every
analysis of a column sees the same labels and the data notes list every cell
that was changed or left out, whatever analysis it would have been part of.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from typing import Any

import numpy as np

from ..read.reader import NOTE_CAP
from ..read.table import Column, DataNote, NoteKind, Table
from ..vocabulary import MeasureType, Role
from ..words import notes_words, roles_words, type_words
from .levels import infer_event, look_alikes
from .model import Plan
from .types import TypeInfo, category_labels, infer_type, usable_values

# Counts of events, totals, person-time and count weights are read as numbers whatever
# their inferred type (a column of small whole numbers would otherwise be categories).
NUMBERS = TypeInfo(MeasureType.CONTINUOUS, reason=type_words.COUNTS_AND_TOTALS, inferred=False)


def merge_look_alikes(table: Table, names: Iterable[str]) -> list[DataNote]:
    """Merge labels that differ only in case, spacing or trailing punctuation; one note per cell changed.

    Each group of look-alikes keeps its most common spelling (``plan.levels.LookAlike.kept``).
    Only text labels change; numbers are left as they are.
    """
    notes: list[DataNote] = []
    for name in names:
        column = table.columns.get(name)
        if column is None:
            continue
        labels = column.labels
        counts = Counter(label for label in labels if label is not None)
        mapping = {label: group.kept for group in look_alikes(counts) for label in group.labels if label != group.kept}
        if not mapping:
            continue
        for i in np.flatnonzero(np.fromiter((label in mapping for label in labels), dtype=bool, count=len(labels))):
            label = labels[i]
            kept = mapping[label]
            notes.append(DataNote(table.sheet, f"{column.letter}{int(table.rows[i])}", name, str(label),
                                  NoteKind.MERGED_LABEL, notes_words.merged_into(kept)))
            labels[i] = kept
    return notes


def left_out_notes(table: Table, name: str, info: TypeInfo) -> list[DataNote]:
    """A note for each filled cell of a column that its type leaves out (capped, the rest summed up).

    Text in a numeric column and labels outside a listed order are found only once
    the column's type is known, after reading; the reader has already noted error
    values, suppressed counts and formulas without a value.
    """
    column = table.columns[name]
    values = usable_values(column, info)
    left_out = np.flatnonzero(values.present & ~values.usable)
    # Ordinal text labels outside their order, and categories outside a listed set, are
    # levels left out; anything else a numeric type cannot read is text among numbers.
    numeric = info.type in (MeasureType.CONTINUOUS, MeasureType.DATE) or (
        info.type is MeasureType.ORDINAL and not info.levels
    )
    kind = NoteKind.NOT_A_NUMBER if numeric else NoteKind.NOT_A_LEVEL
    notes = []
    for i in left_out[:NOTE_CAP]:
        shown = column.labels[i] if column.labels[i] is not None else column.numbers[i]
        notes.append(DataNote(table.sheet, f"{column.letter}{int(table.rows[i])}", name, str(shown), kind,
                              notes_words.left_out_as(kind)))
    if left_out.size > NOTE_CAP:
        first = int(table.rows[left_out[NOTE_CAP]])
        notes.append(DataNote(table.sheet, f"{column.letter}{first}", name, "", kind,
                              notes_words.more_like_this(int(left_out.size - NOTE_CAP))))
    return notes


def prepare_table(table: Table, plan: Plan) -> list[DataNote]:
    """Merge look-alike labels (when the setting is on) and note the cells each used column leaves out.

    The notes are added to ``table.notes`` and returned. Columns the plan does not
    use are left alone.
    """
    names = [c.name for c in plan.columns if c.role is not Role.IGNORE and c.name in table.columns]
    names += [c.paired_with for c in plan.columns if c.paired_with and c.paired_with in table.columns]
    # Events, their totals and count weights are read as numbers whatever their inferred type.
    numbers = {c.name for c in plan.columns if c.role in (Role.EVENTS, Role.COUNT)}
    numbers |= {str(t) for c in plan.columns if c.role is Role.EVENTS for t in (c.out_of, c.per) if t}
    names += [name for name in numbers if name in table.columns]
    names = list(dict.fromkeys(names))
    notes = merge_look_alikes(table, [n for n in names if n not in numbers]) if plan.settings.merge_look_alikes else []
    for name in names:
        info = NUMBERS if name in numbers else infer_type(table.columns[name], plan.choice(name))
        if info.type in (MeasureType.CONTINUOUS, MeasureType.CATEGORICAL, MeasureType.ORDINAL):
            notes.extend(left_out_notes(table, name, info))
    table.notes.extend(notes)
    return notes


def level_facts(column: Column, info: TypeInfo) -> dict[str, Any]:
    """For the roles sheet: a category column's number of levels, its look-alike labels, its event level."""
    if info.type not in (MeasureType.CATEGORICAL, MeasureType.ORDINAL):
        return {}
    counts = Counter(label for label in category_labels(column) if label is not None)
    similar = "; ".join(roles_words.look_alike_text(group.labels) for group in look_alikes(counts))
    levels = list(info.levels)
    return {"n_levels": len(levels), "look_alikes": similar, "event": infer_event(levels)}
