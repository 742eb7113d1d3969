"""Why a cell was skipped, converted or changed: the kinds of data note.

Values are identifiers; the words the data-notes sheet shows for each kind are
made in ``statmargin.words.notes_words``.
"""

from __future__ import annotations

from .base import Word


class NoteKind(Word):
    """Why a cell was skipped or converted (one data note each)."""

    MISSING_MARKER = "missing_marker"  # NA, N/A, n/a, -, .
    ERROR_VALUE = "error_value"  # #N/A, #DIV/0!, ...
    SUPPRESSED = "suppressed"  # "<5" and the like
    TEXT_NUMBER = "text_number"  # a number stored as text, converted
    NOT_A_NUMBER = "not_a_number"  # text in a numeric column, skipped
    NOT_A_LABEL = "not_a_label"  # a number in a text column, kept as a label
    NO_CACHED_VALUE = "no_cached_value"  # a formula without a saved value
    DATE = "date"  # converted to a number of days
    HEADER = "header"  # blank, duplicate or merged header made unique
    BLANK = "blank"  # blank cell in a used column
    INCOMPLETE_PAIR = "incomplete_pair"
    MERGED_LABEL = "merged_label"  # case, spacing or trailing punctuation
    NOT_A_LEVEL = "not_a_level"  # not one of the listed levels
    OTHER = "other"
