"""The data-notes sheet: every cell that was skipped, converted or merged, with a link to it."""

from __future__ import annotations

from collections.abc import Sequence

from ..io.addresses import column_letter
from ..read.table import DataNote
from ..words import notes_words
from ..words.context import count_text
from .context import SHEET_NAMES, ReportContext, quote_sheet
from .model import SheetModel

# ---------------------------------------------------------------- data notes

# Narrow enough (95 units) to print portrait at a readable scale; long text wraps.
NOTE_COLUMNS: tuple[tuple[str, float], ...] = (
    ("Sheet", 14),
    ("Cell", 7),
    ("Column", 18),
    ("Value", 14),
    ("What was wrong", 20),
    ("Action", 22),
)


def notes_sheet(
    table_notes: Sequence[DataNote], extra_notes: Sequence[str], context: ReportContext
) -> SheetModel:
    """The data-notes sheet: every skipped or converted cell, linked to the cell itself.

    Parameters
    ----------
    table_notes : sequence of DataNote
        Notes made while reading (``Table.notes``) and by the engine.
    extra_notes : sequence of str
        Plain sentences about the run (e.g. incomplete pairs) listed below.
    context : ReportContext

    Returns
    -------
    SheetModel
        Kind "notes"; each cell address links to ``'<sheet>'!<cell>``.
    """
    model = SheetModel(name=SHEET_NAMES["notes"], kind="notes")
    model.fit_to_width = True
    model.page_numbers = True
    last = column_letter(len(NOTE_COLUMNS) - 1)
    if context.share_mode:
        row = _counted_notes(model, table_notes, context)
        return _other_notes(model, row, extra_notes, last)
    model.put(0, 0, "statmargin data notes", "title")
    model.put(
        1,
        0,
        notes_words.cells_noted(count_text(len(table_notes), context)),
        "wrap",
    )
    model.merged.append(f"A2:{last}2")
    header = 3
    model.put_row(header, [name for name, _ in NOTE_COLUMNS], "header")
    model.freeze = (header + 1, 0)
    model.widths = {i: width for i, (_, width) in enumerate(NOTE_COLUMNS)}
    row = header + 1
    for note in table_notes:
        model.put(row, 0, note.sheet, "wrap")
        model.put(row, 1, note.cell, "link", link=f"{quote_sheet(note.sheet)}!{note.cell}")
        model.put(row, 2, note.column, "wrap")
        model.put(row, 3, note.value)
        model.put(row, 4, notes_words.kind_words(note.kind), "wrap")
        model.put(row, 5, note.action, "wrap")
        row += 1
    if not table_notes:
        model.put(row, 0, notes_words.NO_NOTES, "muted")
        row += 1
    return _other_notes(model, row, extra_notes, last)


def _other_notes(model: SheetModel, row: int, extra_notes: Sequence[str], last: str) -> SheetModel:
    """The sentences about the run (incomplete pairs and the like) under the table."""
    if extra_notes:
        row += 1
        model.put(row, 0, "Other notes", "subtitle")
        row += 1
        for text in extra_notes:
            model.put(row, 0, text, "wrap")  # merged across the table so it prints whole
            model.merged.append(f"A{row + 1}:{last}{row + 1}")
            row += 1
    return model


SHARED_NOTE_COLUMNS: tuple[tuple[str, float], ...] = (
    ("Sheet", 14),
    ("Column", 18),
    ("What was wrong", 24),
    ("Action", 26),
    ("Cells", 10),
)


def _counted_notes(model: SheetModel, table_notes: Sequence[DataNote], context: ReportContext) -> int:
    """Sharing mode: notes counted by sheet, column, kind and action; small counts are hidden later.

    Cell addresses and values are record-level data, like the data sheet itself.
    The counts and their total form one sum, so sharing mode can protect a small one.
    """
    model.put(1, 0, notes_words.cells_noted_shared(count_text(len(table_notes), context)), "wrap")
    model.merged.append(f"A2:{column_letter(len(SHARED_NOTE_COLUMNS) - 1)}2")
    header = 3
    model.put_row(header, [name for name, _ in SHARED_NOTE_COLUMNS], "header")
    model.freeze = (header + 1, 0)
    model.widths = {i: width for i, (_, width) in enumerate(SHARED_NOTE_COLUMNS)}
    counts: dict[tuple[str, str, str, str], int] = {}
    for note in table_notes:
        key = (note.sheet, note.column, notes_words.kind_words(note.kind), note.action)
        counts[key] = counts.get(key, 0) + 1
    row = header + 1
    cells = []
    for (sheet, column, kind, action), count in counts.items():
        model.put_row(row, [sheet, column, kind, action], "wrap")
        model.put(row, 4, count, "integer", is_count=True)
        cells.append((row, 4))
        row += 1
    if not counts:
        model.put(row, 0, notes_words.NO_NOTES, "muted")
        return row + 1
    model.put(row, 0, "Total", "label")
    model.put(row, 4, len(table_notes), "integer", is_count=True)
    model.count_sets.append(cells + [(row, 4)])
    return row + 1
