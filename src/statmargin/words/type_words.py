"""Why a column was read as the type it was, and why some of its filled cells cannot be used.

The reasons are shown on the roles sheet and inside refusals (``refusals.unusable_type``);
``plan.types`` picks one with its facts.
"""

from __future__ import annotations

from .notes_words import NOT_A_LEVEL

# Why filled cells of a column are left out for its type (``plan.types.ColumnValues.excluded``).
TEXT_IN_NUMBERS = "text in a numeric column"
NOT_LISTED = NOT_A_LEVEL
NOT_ORDERED = "not one of the ordered levels"
COUNTS_AND_TOTALS = "counts and totals"  # events, totals and weights are read as numbers


def no_values(name: str) -> str:
    return f"{name} has no values."


def dates(name: str, n_dates: int, n_filled: int) -> str:
    return f"{name} holds dates in {n_dates} of {n_filled} cells."


def few_whole_numbers(name: str, n_distinct: int, most: int) -> str:
    return (
        f"{name} holds only {n_distinct} distinct whole numbers, so it is read as"
        f" categories (at most {most}; set its type to continuous if they are amounts)."
    )


def whole_number_identifier(name: str) -> str:
    return f"{name} holds a different whole number in every row, so it is read as an identifier."


def numbers(name: str, n_distinct: int) -> str:
    return f"{name} holds numbers with {n_distinct} distinct values."


def text_identifier(name: str, n_distinct: int, n_rows: int) -> str:
    return f"{name} holds {n_distinct} different texts in {n_rows} rows, so it is read as an identifier."


def labels(name: str, n_levels: int) -> str:
    return f"{name} holds text with {n_levels} distinct labels."


def as_chosen(name: str, kind: str) -> str:
    return f"{name} is treated as {kind}, as chosen."


def ordinal_needs_order(name: str) -> str:
    """Refusal: an ordinal column of text needs its labels' order."""
    return (
        f"Column {name!r} is set to ordinal but holds text; give the order of its"
        " labels, lowest first (e.g. low,medium,high)."
    )
