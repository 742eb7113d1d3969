"""Texts of the shape-checks and run-log sheets (the results, roles, notes and periods sheets have their own modules)."""

from __future__ import annotations

# ---------------------------------------------------------------- shape checks

SHAPE_INTRO = "How each test was chosen: the data's shape, spread and counts, with charts."
SHAPE_NO_ANALYSES = "No analyses were run."
EXPECTED_IF_UNRELATED = "Expected counts if the two were unrelated"
# Sharing mode: the 100% bars are drawn from a copy of the counts in which a row with a hidden count is left empty.
CHART_ROWS_SHOWN = "Counts drawn in the chart (a row with a hidden count is left out)"


def shares_chart_title(outcome: str) -> str:
    return f"{outcome}: observed and stated shares"


# ---------------------------------------------------------------- run log


def log_intro(keep: int) -> str:
    return f"One row per run, oldest first; the last {keep} runs are kept."
