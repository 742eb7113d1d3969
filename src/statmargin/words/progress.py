"""The words of the progress lines the command line shows on long steps.

Steps are named by the pipeline (``jobs``) with the phrases here and in
``words.console``; the command line's display (``progress``) adds the counts,
a bar on a terminal, and the seconds so far.
"""

from __future__ import annotations

from .console import RUNNING as RUNNING_ANALYSES

READING_ROWS = "reading rows"
FINDING_DATA = "looking for the sheet that holds the data"
FOLLOW_UPS = "running follow-up comparisons"  # p-values are adjusted just before, in no time
BUILDING_SHEETS = "building the results sheets"
INFERRING_TYPES = "looking at each column's values"
WRITING_ROLES = "writing the roles sheet"

# Units of the counts shown after a counted step.
_UNITS = {READING_ROWS: "rows", RUNNING_ANALYSES: "analyses", INFERRING_TYPES: "columns"}


def step_line(message: str, seconds: float | None = None) -> str:
    """A plain line for a step, with the seconds it has taken so far when that is long."""
    if seconds is None or seconds < 1:
        return f"statmargin: {message} ..."
    return f"statmargin: {message} ... {seconds:.0f} s"


def count_text(message: str, done: int, total: int) -> str:
    """How far a counted step is, e.g. ``reading rows: 412,000 of 1,048,575 (39%)``."""
    unit = _UNITS.get(message, "")
    share = f" ({100 * done // total}%)" if total else ""
    return f"{message}: {done:,} of {total:,}{' ' + unit if unit else ''}{share}"
