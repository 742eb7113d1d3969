"""Sentences about finding the workbook and its sheets, the same whichever back end reads it.

Every workbook back end (file, in-memory, Excel) resolves sheet names with
``io.protocol.resolve_sheet_name``, which words its refusal here.
"""

from __future__ import annotations

from collections.abc import Sequence


def sheet_not_found(sheet: str, workbook: str, names: Sequence[str]) -> str:
    """A sheet name that matches no worksheet, with the sheets there are."""
    listed = ", ".join(repr(n) for n in names)
    return f"Sheet {sheet!r} is not in {workbook!r}. Its sheets are: {listed}."


def no_workbook_given() -> str:
    """Neither a path nor an open workbook was passed."""
    return "No workbook was given. Pass the path of the workbook file."
