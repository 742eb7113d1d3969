"""What the data-notes sheet says: why a cell was noted and what it became."""

from __future__ import annotations

from collections.abc import Sequence

from ..vocabulary import NoteKind
from .numbers import noun

NO_NOTES = "Every cell used was read as it stood."
NOT_A_LEVEL = "not one of the listed levels"  # also why plan.types leaves such a label out

# The "What was wrong" column: the words for each kind of note.
KIND_WORDS: dict[NoteKind, str] = {
    NoteKind.MISSING_MARKER: "missing marker",
    NoteKind.ERROR_VALUE: "error value",
    NoteKind.SUPPRESSED: "suppressed count",
    NoteKind.TEXT_NUMBER: "number stored as text",
    NoteKind.NOT_A_NUMBER: "not a number",
    NoteKind.NOT_A_LABEL: "number in a text column",
    NoteKind.NO_CACHED_VALUE: "formula without a saved value",
    NoteKind.DATE: "date",
    NoteKind.HEADER: "header",
    NoteKind.BLANK: "blank",
    NoteKind.INCOMPLETE_PAIR: "incomplete pair",
    NoteKind.MERGED_LABEL: "label merged with a look-alike",
    NoteKind.NOT_A_LEVEL: NOT_A_LEVEL,
    NoteKind.OTHER: "other",
}

# What became of a cell the reader could not use as it stood.
COUNTED_AS_MISSING = "counted as missing"
ERROR_SKIPPED = "skipped: an error value"
SUPPRESSED_NOT_USED = "not used: a suppressed small count"
NO_SAVED_VALUE = "skipped: the file must be recalculated and saved by a spreadsheet program first"


def kind_words(kind: NoteKind) -> str:
    """The words the data-notes sheet shows for a kind of note."""
    return KIND_WORDS[kind]


def cells_noted(count: str) -> str:
    """The notes sheet's first line; ``count`` is the number as shown (hidden in sharing mode)."""
    if count == "0":
        return "No cell was skipped, converted or merged while reading."
    cells = "1 cell was" if count == "1" else f"{count} cells were"
    return f"{cells} skipped, converted or merged while reading; each cell address links to the cell."


def cells_noted_shared(count: str) -> str:
    """The notes sheet's first line in sharing mode, where notes are counted, not listed cell by cell."""
    if count == "0":
        return "No cell was skipped, converted or merged while reading."
    cells = "1 cell was" if count == "1" else f"{count} cells were"
    return (
        f"{cells} skipped, converted or merged while reading. Sharing mode counts them by column and "
        "kind, without cell addresses or values (those are record-level data)."
    )


def merged_into(kept: str) -> str:
    return f"merged into {kept!r}"


def left_out_as(kind: NoteKind) -> str:
    return f"left out: {kind_words(kind)}"


def more_like_this(more: int) -> str:
    return f"and {more} more like this from this cell down (not listed one by one)"


def converted_to(number: str, percent: bool) -> str:
    """A number stored as text, converted; a percent keeps the unit the sheet showed."""
    shown = " (the % sign dropped; value kept in percent)" if percent else ""
    return f"converted to {number}{shown}"


# ---------------------------------------------------------------- headers and tables


def merged_header(name: str) -> str:
    return f"part of a merged header; named {name!r}"


def blank_header(name: str) -> str:
    return f"blank header; named {name!r}"


def duplicate_header(name: str, earlier: str = "") -> str:
    """A header met before (compared without case); ``earlier`` is what was already done to it."""
    return f"{earlier}, then {name!r} as a duplicate" if earlier else f"duplicate header; named {name!r}"


def blank_header_column(letter: str) -> str:
    """The name a column with a blank header gets."""
    return f"Column {letter}"


def title_skipped(header_row: int) -> str:
    return f"taken as a title, not headers; headers read from row {header_row}. Give the header row to choose another."


def several_tables(first: str, others: Sequence[str]) -> str:
    """The sheet has several tables and the first was read."""
    listed = ", ".join(repr(name) for name in others)
    return (
        f"sheet has {len(others) + 1} tables; read the first, {first!r}; "
        f"the others ({listed}) were not read. Name a table to read another."
    )


def values_without_header(count: int) -> str:
    were = "was" if count == 1 else "were"
    return (f"{count} {noun(count, 'value')} in a column with no header {were} not read; "
            "give the column a header to use them")
