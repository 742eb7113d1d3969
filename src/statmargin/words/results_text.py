"""Text of the results sheet's top block: what was run, on what, and what the answers are."""

from __future__ import annotations

from typing import Any

from ..vocabulary import RowsToUse
from .numbers import fmt_percent
from .roles_words import SETTING_LABELS

TITLE = "statmargin results"
ANSWERS = "Answers"
KEEP_IN_MIND = "Keep in mind"
ALL_RESULTS = "All results, with the test details to the right"
ANSWER_HEADERS = ("Question asked", "What the data show", "Size and evidence")
NOT_RUN = "Not run: {reason}"
NO_ANALYSES = "No analyses were run: no column has the role 'outcome'."
NO_ROW_CAUTIONS = "None beyond those above."
FOLLOWUP_PREFIX = "  "
SERIES_LINK = "series and chart"
HOW_P_FOUND = "How p was found"  # a technical column's header


def run_line(*, workbook: str, sheet: str, rows_read: int, when: str, version: str, confidence: float,
             adjust: str, family: int, sides: str, hidden_rows: str, across: str = "this run") -> str:
    """One line saying what was read and how the run was set.

    ``across`` is the adjustment family the run used (the roles sheet's "Adjust
    across": ``this run``, ``each outcome`` or ``none``), stated in the line.
    """
    if family <= 1:
        adjusted = "one question"
    elif across == "none":
        adjusted = "p-values not adjusted (adjust across: none)"
    elif adjust == "no adjustment":
        adjusted = "p-values not adjusted"
    elif across == "each outcome":
        adjusted = f"p-values adjusted within each outcome's questions ({adjust})"
    else:
        adjusted = f"p-values adjusted across the {family} questions of this run ({adjust})"
    return (
        f"{workbook}, sheet {sheet}: {rows_read:,} rows read{hidden_rows}. Run {when} with statmargin "
        f"{version}; {fmt_percent(confidence, 0)} intervals, {sides}, {adjusted}."
    )


def hidden_rows_note(hidden: Any, rows: RowsToUse) -> str:
    """What the run line adds about rows a filter or the user hid ("" when there were none).

    ``hidden`` is a count, None (not recorded) or, in sharing mode, a hidden small count.
    """
    if rows is RowsToUse.VISIBLE:
        if hidden is None:
            return "; this file does not record which rows are hidden, so all rows were used"
        return f"; {hidden:,} hidden or filtered {_rows(hidden)} left out ({SETTING_LABELS['rows']}: {rows})" if hidden else ""
    if not hidden:
        return ""
    return (
        f", {hidden:,} of them hidden or filtered in the sheet and used like the others"
        f" ({SETTING_LABELS['rows']} on the roles sheet can leave them out)"
    )


def hidden_rows_line(hidden: Any, rows: RowsToUse) -> str:
    """The same as :func:`hidden_rows_note`, as a sentence of its own for the terminal ("" when there is nothing to say)."""
    if rows is RowsToUse.VISIBLE:
        if hidden is None:
            return "This file does not record which rows are hidden, so all rows were used."
        if not hidden:
            return ""
        line = f"{hidden:,} hidden or filtered {_rows(hidden)} left out ({SETTING_LABELS['rows']}: {rows})."
        return line[:1].upper() + line[1:]
    if not hidden:
        return ""
    were = "was" if hidden == 1 else "were"
    line = (
        f"{hidden:,} {_rows(hidden)} hidden or filtered in the sheet {were} used like the others"
        f" ({SETTING_LABELS['rows']} on the roles sheet can leave them out)."
    )
    return line[:1].upper() + line[1:]  # "Fewer than 11 rows ..." in sharing mode


def _rows(n: Any) -> str:
    return "row" if n == 1 else "rows"


def status_line(answered: int, not_run: int) -> str:
    """How many questions were answered, and how many could not be run."""
    if not answered and not not_run:
        return NO_ANALYSES
    if not_run:
        plural = "question" if not_run == 1 else "questions"
        return f"{answered} answered; {not_run} {plural} could not be run (the reason is beside each)."
    return f"All {answered} questions were answered." if answered != 1 else "The question was answered."


def size_and_evidence(size: str, evidence: str) -> str:
    """The headline's last cell: the size with its interval over the strength of evidence."""
    return "\n".join(part for part in (size, evidence[:1].upper() + evidence[1:] if evidence else "") if part)
