"""The folder summary sheet: one row per workbook and analysis, with the key numbers and flags.

Built from the outcome of each workbook of a folder run (``jobs.folder``); a
workbook that could not be refreshed gets one row with its one-line reason.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..io.addresses import column_letter
from ..results import Result
from ..words import cautions, technical
from ..words.period_words import RULE_NAMES, SINCE_LAST_RUN_WORDS, summary_title
from .model import SheetModel

KIND = "summary"
SHEET_NAME = "Folder summary"

# (header, width, style)
COLUMNS: tuple[tuple[str, float, str], ...] = (
    ("Workbook", 28.0, "text"),
    ("Status", 11.0, "text"),
    ("Since last run", 22.0, "text"),
    ("Outcome", 20.0, "text"),
    ("Compared by", 18.0, "text"),
    ("Reading", 70.0, "wrap"),
    ("Test", 24.0, "text"),
    ("n", 9.0, "integer"),
    ("p-value", 10.0, "p_value"),
    ("Adjusted p", 10.0, "p_value"),
    ("Estimate", 30.0, "text"),
    ("Value", 10.0, "number"),
    ("CI low", 10.0, "number"),
    ("CI high", 10.0, "number"),
    ("Trend test", 24.0, "text"),
    ("Trend p", 10.0, "p_value"),
    ("Change per period", 12.0, "number"),
    ("Unusual periods", 40.0, "wrap"),
    ("Message", 50.0, "wrap"),
)
COL = {name: i for i, (name, _, _) in enumerate(COLUMNS)}
HEADER_ROW = 4


def _compared_by(result: Result) -> str:
    if result.exposure:
        return result.exposure
    if result.pairing:
        return result.pairing
    return "" if result.against is None else str(result.against)


def _unusual_text(result: Result) -> str:
    return "; ".join(f"{u.period}: {RULE_NAMES[u.rule]}" for u in result.unusual or [])


def _row(result: Result) -> dict[str, Any]:
    from ..words.sentences import say

    skipped = result.skipped is not None
    estimate = None if skipped else result.estimate
    trend = result.trend
    return {
        "Since last run": SINCE_LAST_RUN_WORDS[result.since_last_run] if result.since_last_run else "",
        "Outcome": result.outcome,
        "Compared by": _compared_by(result),
        "Reading": result.reading or "",
        "Test": technical.TEST_NAMES.get(result.test or "", str(result.test or "")),
        "n": result.n,
        "p-value": None if skipped else result.p_value,
        "Adjusted p": None if skipped else result.p_adjusted,
        "Estimate": estimate.name if estimate else "",
        "Value": estimate.value if estimate else None,
        "CI low": estimate.ci_low if estimate else None,
        "CI high": estimate.ci_high if estimate else None,
        "Trend test": technical.TEST_NAMES.get(trend.test, str(trend.test)) if trend else "",
        "Trend p": trend.p_value if trend else None,
        "Change per period": trend.estimate.value if trend and trend.estimate else None,
        "Unusual periods": _unusual_text(result),
        "Message": say(result.skipped) if result.skipped is not None else "",
    }


def summary_sheet(folder: str, outcomes: Sequence[Any]) -> SheetModel:
    """The summary sheet for a folder run.

    Parameters
    ----------
    folder : str
        The folder, for the title.
    outcomes : sequence of jobs.folder.WorkbookOutcome
        One per workbook, in the order they are listed.
    """
    model = SheetModel(name=SHEET_NAME, kind=KIND)
    failed = sum(1 for o in outcomes if not o.ok)
    model.put(0, 0, summary_title(folder, len(outcomes) - failed, failed), "title")
    model.put(1, 0, cautions.REVIEW_LINE, "caution")
    model.put(2, 0, cautions.OBSERVATIONAL_LINE, "caution")
    # The title and cautions span the columns up to the reading, so they read as lines, not narrow cells.
    model.merged.extend(f"A{r}:{column_letter(COL['Reading'])}{r}" for r in (1, 2, 3))
    model.put_row(HEADER_ROW, [name for name, _, _ in COLUMNS], "header")
    model.widths = {i: width for i, (_, width, _) in enumerate(COLUMNS)}
    model.freeze = (HEADER_ROW + 1, 1)
    row = HEADER_ROW + 1
    for outcome in outcomes:
        if not outcome.ok or not outcome.results:
            model.put(row, COL["Workbook"], outcome.name)
            model.put(row, COL["Status"], outcome.status)
            model.put(row, COL["Message"], outcome.message or "", "wrap")
            row += 1
            continue
        for result in outcome.results:
            model.put(row, COL["Workbook"], outcome.name)
            model.put(row, COL["Status"], outcome.status)
            for name, value in _row(result).items():
                if value is None or value == "":
                    continue
                style = COLUMNS[COL[name]][2]
                model.put(row, COL[name], value, style, is_count=(name == "n"))
            row += 1
    model.landscape = True
    model.fit_to_width = True
    model.print_title_rows = (HEADER_ROW, HEADER_ROW)
    return model
