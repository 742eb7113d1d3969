"""Explain a run: fill every result's reading, cautions and follow-up readings.

The words themselves are made in the modules this one ties together:
``readings`` (the plain reading and the headline), ``cautions``,
``followups``, ``technical`` (the shape-check sheet's note) and
``questions``. The names below are re-exported so a caller needs one import.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import Any

from ..plan.model import Settings
from ..results import Result
from .cautions import (
    CAUSATION_LINE,
    MULTIPLE_LINE,
    NO_ROW_CAUTIONS,
    OBSERVATIONAL_LINE,
    REVIEW_LINE,
    RUN_WIDE_HEADING,
    SHARE_CAUTION,
    SHARE_NOTE,
    SMALL_GROUP_LIMIT,
    cautions,
    count_comparisons,
    incomplete_pairs_note,
    row_cautions,
    run_wide_cautions,
)
from .followups import followup_label, followup_reading
from .numbers import ci_label, decimals_for, evidence_words, fmt_ci, fmt_number, fmt_p, fmt_percent
from .questions import question, two_labels
from .readings import SHARE_HIDDEN_READING, Headline, effect_magnitude, headline, reading
from .technical import (
    ADJUST_NAMES,
    CHECK_NAMES,
    TEST_NAMES,
    spread_name,
    technical_lines,
    technical_note,
)

__all__ = [
    "ADJUST_NAMES",
    "CAUSATION_LINE",
    "CHECK_NAMES",
    "MULTIPLE_LINE",
    "NO_ROW_CAUTIONS",
    "OBSERVATIONAL_LINE",
    "REVIEW_LINE",
    "RUN_WIDE_HEADING",
    "SHARE_CAUTION",
    "SHARE_HIDDEN_READING",
    "SHARE_NOTE",
    "SMALL_GROUP_LIMIT",
    "TEST_NAMES",
    "Headline",
    "apply",
    "cautions",
    "ci_label",
    "count_comparisons",
    "decimals_for",
    "effect_magnitude",
    "evidence_words",
    "explain",
    "fmt_ci",
    "fmt_number",
    "fmt_p",
    "fmt_percent",
    "followup_label",
    "followup_reading",
    "headline",
    "incomplete_pairs_note",
    "question",
    "reading",
    "row_cautions",
    "run_wide_cautions",
    "spread_name",
    "technical_lines",
    "technical_note",
    "two_labels",
]


def explain(
    result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None
) -> tuple[str, list[str]]:
    """The plain reading and the cautions of one result.

    Parameters
    ----------
    result : Result
    settings : Settings
    context : ReportContext or Mapping, optional
        Units and decimals per column (``context.units``, ``context.decimals``, or a
        mapping column -> units), ``observational`` and the sharing-mode fields.
    n_comparisons : int, optional
        Number of questions with a p-value in the run.

    Returns
    -------
    (str, list of str)
        The reading and the cautions (review line last).
    """
    return (
        reading(result, settings=settings, context=context, n_comparisons=n_comparisons),
        cautions(result, settings=settings, context=context, n_comparisons=n_comparisons),
    )


def apply(
    results: Sequence[Result],
    settings: Settings,
    context: Any = None,
    *,
    n_comparisons: int | None = None,
) -> list[Result]:
    """Fill ``reading`` and ``cautions`` of every result (and each follow-up's reading).

    Parameters
    ----------
    results : sequence of Result
        One run's results, after p-value adjustment. Changed in place.
    settings : Settings
    context : ReportContext or Mapping, optional
    n_comparisons : int, optional
        The size of the run's family; by default the results with a p-value.

    Returns
    -------
    list of Result
        The same objects.
    """
    if n_comparisons is None:
        n_comparisons = count_comparisons(results)
    out = list(results)
    for result in out:
        result.reading, result.cautions = explain(
            result, settings=settings, context=context, n_comparisons=n_comparisons
        )
        result.followups = [
            replace(f, reading=followup_reading(f, result, settings=settings, context=context))
            for f in result.followups
        ]
    return out
