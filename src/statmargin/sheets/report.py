"""Build the tool's sheets (results, shape checks, data notes, run log) as sheet models.

Nothing here touches a file: each function returns a ``sheets.model.SheetModel``
that a writer puts into the workbook. Values stay numeric; number formats are
named by style keys. Cells that hold counts of records are marked
(``Cell.is_count``), and the cells that would reveal a count (a group's share,
mean, SD, ...) are listed in ``SheetModel.count_dependents``, so sharing mode
(``share.suppress``) can hide small counts and everything that gives them away.
Each sheet has its own module; this one puts them together.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ..read.table import Table
from ..results import Result
from ..words import explain
from .context import SHEET_NAMES, ReportContext, analysis_key, quote_sheet
from .log import LOG_COLUMNS, log_sheet, parse_log_rows, run_info
from .model import SheetModel
from .notes import NOTE_COLUMNS, notes_sheet
from .periods import sheet_if_any
from .results import COL, RESULT_COLUMNS, RESULT_PAGE_BREAKS, RESULT_PRINT_SCALE, results_sheet
from .shapes import bin_edges, shape_sheet
from .share import suppress

__all__ = [
    "COL",
    "LOG_COLUMNS",
    "NOTE_COLUMNS",
    "RESULT_COLUMNS",
    "RESULT_PAGE_BREAKS",
    "RESULT_PRINT_SCALE",
    "SHEET_NAMES",
    "ReportContext",
    "analysis_key",
    "bin_edges",
    "build_sheets",
    "log_sheet",
    "notes_sheet",
    "parse_log_rows",
    "quote_sheet",
    "results_sheet",
    "run_info",
    "shape_sheet",
]


def build_sheets(
    results: Sequence[Result],
    table: Table | None = None,
    context: ReportContext | None = None,
    *,
    previous_log: Sequence[Sequence[Any] | Mapping[str, Any]] = (),
    extra_notes: Sequence[str] = (),
    keep_periods: bool = False,
) -> list[SheetModel]:
    """All four tool sheets for one run, with results linked to their shape blocks.

    Parameters
    ----------
    results : sequence of Result
        The run's results, readings filled (``explain.apply``).
    table : Table, optional
        The data as read; its notes go to the data-notes sheet.
    context : ReportContext, optional
        Built with ``ReportContext.from_run`` by the pipeline.
    previous_log : sequence
        Earlier runs' log rows (``parse_log_rows``).
    extra_notes : sequence of str
        Plain sentences for the data-notes sheet (e.g. incomplete pairs).
    keep_periods : bool
        Write the periods sheet even without results over time (the workbook
        has one from an earlier run, which must not keep an old series).

    Returns
    -------
    list of SheetModel
        Results, the periods sheet (when any result is over time), shape checks,
        data notes and run log, in that order.

    Notes
    -----
    In sharing mode (``context.share_mode``) the sheets are built from copies of
    the results passed through ``share.suppress`` with readings rewritten from
    those copies (so no reading quotes a hidden number), and the sheets are then
    suppressed too; the caller's results are not changed.
    """
    context = context or ReportContext()
    notes = list(table.notes) if table is not None else []
    extra = list(extra_notes)
    for result in results:
        pairs = result.extra.get("incomplete_pairs") if isinstance(result.extra, Mapping) else None
        if pairs:  # the keys themselves, or (sharing mode) only their number
            count = len(pairs) if isinstance(pairs, (list, tuple)) else pairs
            extra.append(explain.incomplete_pairs_note(result, count, context))
    if context.share_mode:
        family = explain.count_comparisons(results)
        results = suppress(list(results), context.share_min_count)
        explain.apply(results, context.settings, context, n_comparisons=family)
    shape = shape_sheet(results, context)
    periods = sheet_if_any(results, context, always=keep_periods)
    models = [
        results_sheet(results, context, shape.anchors, periods[0].anchors if periods else None),
        *periods,
        shape,
        notes_sheet(notes, extra, context),
        log_sheet(previous_log, run_info(context, results)),
    ]
    if context.share_mode:
        models = suppress(models, context.share_min_count)
    return models
