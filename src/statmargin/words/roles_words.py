"""Words of the roles sheet: its title, instructions, statuses and the refusals of its cells."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

TITLE = "Column roles"
INSTRUCTIONS = (
    "Pick a role for each column in the shaded cells, then press Run in Excel, or save and run: "
    "statmargin run <this file>.",
    "Each outcome is compared by every 'compare by' column, against its 'Compare with' value (85, "
    "Fail=0.10, 4%), with its 'Paired with' column, and over time by the 'period' column; 'events' "
    "are counted 'Out of' a total or 'Per' person-time.",
)
# The settings block's labels, by the ``Settings`` field each one sets.
SETTING_LABELS = {
    "sheet": "Data sheet",
    "header_row": "Header row",
    "confidence": "Confidence level",
    "adjust": "Multiple comparisons",
    "family": "Adjust across",
    "alternative": "Sides",
    "rows": "Rows to use",
    "merge_look_alikes": "Merge look-alike labels",
    "grain": "Period length",
    "latest_period": "Latest period",
    "series_by_group": "Series by group",
    "per_unit": "Rates per",
}
STATUS_MISSING = "not in the data any more"
STATUS_NEW = "new column"


def cell_of(cell: str, sheet: str) -> str:
    return f"cell {cell} of sheet {sheet!r}"


def not_a_choice(where: str, word: str, choices: Sequence[str]) -> str:
    return f"The {where} says {word!r}; choose one of: {', '.join(choices)}."


def no_table(sheet: str, row: int, headers: list[str]) -> str:
    return (
        f"Sheet {sheet!r} has no column table (a row starting 'Column' ... 'Role'); put its header row "
        f"back (row {row}: {', '.join(headers)} ...), or delete the sheet and run 'statmargin plan' to "
        "make a fresh one."
    )


def bad_confidence(cell: str, sheet: str, raw: Any) -> str:
    return f"The confidence level in cell {cell} of sheet {sheet!r} is {raw!r}; use a value such as 0.95 (or 95%)."


def not_a_number(cell: str, sheet: str, raw: Any) -> str:
    return f"Cell {cell} of sheet {sheet!r} should hold a number but holds {raw!r}."


def bad_header_row(cell: str, sheet: str) -> str:
    return f"The header row in cell {cell} of sheet {sheet!r} must be a whole number from 1 up."


def look_alike_text(labels: dict[str, int]) -> str:
    """'Old Mill (180), Old  Mill (1)': look-alike labels as typed, with their counts."""
    return ", ".join(f"{label} ({count})" for label, count in labels.items())


def suggested_status(parts: Sequence[str]) -> str:
    """The roles sheet's status of a column the plan step recognised: 'suggested: events out of Screened'."""
    return "suggested: " + "; ".join(parts)


def suggested_out_of(total: str) -> str:
    return f"events out of {total}"


def suggested_per(total: str) -> str:
    return f"events per {total}"


SUGGESTED_COUNT = "count (each row stands for that many records)"


def suggestion_line(evidence: str, advice: str) -> str:
    """One suggestion for the plan summary: the evidence, then how to take it up (never applied here)."""
    return f"{evidence.rstrip('.')}; to use it, {advice}."


def advice_out_of(events: str, total: str) -> str:
    return f"set the role of {events} to 'events' and its 'Out of' to {total}"


def advice_per(events: str, total: str) -> str:
    return f"set the role of {events} to 'events' and its 'Per' to {total}"


def advice_count(count: str) -> str:
    return f"set the role of {count} to 'count'"
