"""Sentences about the tool's sheets: names changed to avoid the user's sheets, copies kept.

Shared by every back end (see ``io.placement``), so a run from the command line
and a run from inside Excel report the same names in the same words.
"""

from __future__ import annotations


def same_kind_twice() -> str:
    return "Two sheets of the same kind were given to write; the file was left as it was."


def copy_kept(sheet: str, kind: str) -> str:
    return f"The sheet '{sheet}' looks like a copy of statmargin's {kind} sheet; it was kept as your own sheet."


def name_not_allowed(wanted: str, kind: str, name: str) -> str:
    return f"The sheet name '{wanted}' is not allowed in a workbook, so the {kind} sheet is called '{name}'."


def name_taken(wanted: str, kind: str, name: str) -> str:
    return f"A sheet of yours is already called '{wanted}', so statmargin's {kind} sheet is called '{name}'."


def kind_renamed(kind: str, name: str) -> str:
    return f"The {kind} sheet is called '{name}'."


def not_a_cell(ref: str) -> str:
    return f"'{ref}' is not a cell reference such as H3; the file was left as it was."


def link_to_missing_sheet(kind: str) -> str:
    return (
        f"A link points to the '{kind}' sheet, which is not being written and not in the "
        "workbook; the file was left as it was."
    )

