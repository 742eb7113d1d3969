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
    if extra_notes:
        row += 1
        model.put(row, 0, "Other notes", "subtitle")
        row += 1
        for text in extra_notes:
            model.put(row, 0, text, "wrap")  # merged across the table so it prints whole
            model.merged.append(f"A{row + 1}:{last}{row + 1}")
            row += 1
    return model


