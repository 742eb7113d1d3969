"""The results sheet: the answers first, then one row per analysis and its follow-ups."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ..read.table import column_letter
from ..results import Result
from ..words import explain
from ..words.sentences import say, say_all
from .context import (
    SHEET_NAMES,
    ReportContext,
    _a1,
    _finite,
    _num,
    _run_time_text,
    _suppressed_fields,
    _value,
)
from .model import Cell, SheetModel
from .shapes import shape_sheet

# ---------------------------------------------------------------- results sheet

# Plain columns first (question, reading, cautions), then the technical ones.
# Printed landscape at RESULT_PRINT_SCALE, each page's columns (split by
# RESULT_PAGE_BREAKS) fit a Letter or A4 page inside the default margins, also
# where a wider substitute font replaces Calibri (measured with LibreOffice).
RESULT_COLUMNS: tuple[tuple[str, float], ...] = (
    ("Question", 24),
    ("Reading", 56),
    ("Cautions", 40),
    ("Outcome", 16),
    ("Compared by / against", 20),
    ("n used", 8),
    ("n excluded", 10),
    ("Test", 22),
    ("Why this test", 40),
    ("Statistic", 10),
    ("Statistic value", 11),
    ("df", 9),
    ("p", 9),
    ("Adjusted p", 10),
    ("Estimate", 22),
    ("Estimate value", 11),
    ("CI low", 10),
    ("CI high", 10),
    ("CI", 14),
    ("Effect size", 18),
    ("Effect value", 10),
    ("Effect CI low", 10),
    ("Effect CI high", 10),
    ("Details", 12),
)
COL = {name: i for i, (name, _) in enumerate(RESULT_COLUMNS)}
# First column of each printed page after the first: the plain columns print
# together, then who/what was tested, then statistics and estimates, then effects.
RESULT_PAGE_BREAKS = (COL["Outcome"], COL["Statistic"], COL["Effect size"])
RESULT_PRINT_SCALE = 80
PLAIN_SPAN = f"A{{row}}:{column_letter(COL['Cautions'])}{{row}}"

SHARE_OFF = "off (all counts shown)"
SHARE_ON = "on: counts from 1 to {top} are hidden, with anything that would reveal them"


def _against_or_by(result: Result) -> str:
    if result.exposure:
        return result.exposure
    if result.pairing:
        return f"paired by {result.pairing}"
    if result.against is None:
        return ""
    if isinstance(result.against, Mapping):
        return ", ".join(
            f"{k} = {v:g}" if _finite(v) else f"{k} = {v}" for k, v in result.against.items()
        )
    return f"against {result.against:g}" if _finite(result.against) else f"against {result.against}"


def _df_cell(df: Any) -> Cell:
    if isinstance(df, (list, tuple)):
        return Cell(", ".join(f"{float(d):g}" for d in df if _finite(d)), "text")
    value = _num(df)
    return Cell(value, "number") if value is not None else Cell(None)


def _ci_text(low: Any, high: Any) -> str:
    if not (_finite(low) and _finite(high)):
        return ""
    decimals = explain.decimals_for(low, high)
    return explain.fmt_ci(low, high, decimals)


def _merge_plain(model: SheetModel, row: int) -> None:
    """Merge a header-block line across the plain columns so it shows and prints whole."""
    model.merged.append(PLAIN_SPAN.format(row=row + 1))


def _header_block(
    model: SheetModel,
    context: ReportContext,
    results: Sequence[Result],
    run_wide: Sequence[str],
) -> int:
    """Title, run-wide cautions and run facts; returns the next free row.

    Every line spans the plain columns (merged), and each fact's value sits in
    the wide Reading column, so nothing is cut off on screen or on paper.
    """
    model.put(0, 0, "statmargin results", "title")
    model.put(
        1,
        0,
        "One row per analysis: the question, a plain reading and that result's own cautions "
        "first; test details to the right and on the shape-check sheet.",
        "muted",
    )
    _merge_plain(model, 1)
    row = 3
    model.put(row, 0, explain.RUN_WIDE_HEADING, "subtitle")
    _merge_plain(model, row)
    row += 1
    for line in run_wide:
        model.put(row, 0, line, "caution")
        _merge_plain(model, row)
        row += 1
    model.anchors["share_note"] = _a1(row, 0)
    if context.share_mode:
        model.put(row, 0, explain.SHARE_NOTE.format(floor=context.share_min_count), "caution")
    _merge_plain(model, row)  # the sharing sentence goes here (share.suppress_model)
    row += 2
    settings = context.settings
    share = SHARE_ON.format(top=context.share_min_count - 1) if context.share_mode else SHARE_OFF
    facts: list[tuple[str, Any, str, bool]] = [
        ("Workbook", context.workbook, "text", False),
        ("Data sheet", context.data_sheet, "text", False),
        ("Header row", context.header_row, "integer", False),
        ("Rows read", context.rows_read, "integer", True),
        ("Rows used", context.rows_used, "integer", True),
        ("Analyses", len(results), "integer", False),
        ("Run time (UTC)", _run_time_text(context), "text", False),
        ("Tool version", context.version, "text", False),
        ("Confidence", settings.confidence, "percent", False),
        (
            "Adjustment",
            explain.ADJUST_NAMES.get(getattr(settings.adjust, "value", ""), str(settings.adjust)),
            "text",
            False,
        ),
        (
            "Sidedness",
            getattr(settings.alternative, "value", str(settings.alternative)),
            "text",
            False,
        ),
        ("Sharing mode", share, "text", False),
    ]
    value_col = COL["Reading"]
    for label, value, style, is_count in facts:
        model.put(row, 0, label, "label")
        # Left-aligned text in the wide column: numbers read as text would align
        # right, far from their label, so counts keep their number style.
        model.put(row, value_col, value, style, is_count=is_count)
        row += 1
    return row + 1


def results_sheet(
    results: Sequence[Result],
    context: ReportContext,
    shape_anchors: Mapping[str, str] | None = None,
) -> SheetModel:
    """The results sheet: run facts, then one row per analysis and its follow-ups.

    Parameters
    ----------
    results : sequence of Result
        The run's results, with readings and cautions filled (``explain.apply``);
        a result without a reading gets one here.
    context : ReportContext
    shape_anchors : mapping, optional
        ``"analysis_<i>"`` -> cell of each analysis block on the shape sheet
        (``shape_sheet(...).anchors``); computed when not given.

    Returns
    -------
    SheetModel
        Kind "results"; the header row is frozen with the question column.

    Notes
    -----
    The "Details" cell links to ``{shape}!<cell>``; the writer resolves the
    placeholder to the shape sheet's final name. Follow-up rows sit under their
    analysis with an indented label.
    """
    model = SheetModel(name=SHEET_NAMES["results"], kind="results")
    if shape_anchors is None:
        shape_anchors = shape_sheet(results, context).anchors
    n_comparisons = explain.count_comparisons(results)
    run_wide = explain.run_wide_cautions(
        results, settings=context.settings, context=context, n_comparisons=n_comparisons
    )
    header = _header_block(model, context, results, run_wide)
    model.put_row(header, [name for name, _ in RESULT_COLUMNS], "header")
    model.freeze = (header + 1, 1)
    model.widths = {i: width for i, (_, width) in enumerate(RESULT_COLUMNS)}
    model.landscape = True
    model.print_scale = RESULT_PRINT_SCALE
    model.column_breaks = list(RESULT_PAGE_BREAKS)
    model.page_numbers = True
    model.print_title_rows = (header, header)  # column headers on every page
    model.print_title_cols = 1  # and the question beside the technical columns
    row = header + 1
    for index, result in enumerate(results):
        reading_text, caution_list = result.reading, result.cautions
        if not reading_text:
            reading_text, caution_list = explain.explain(
                result, settings=context.settings, context=context, n_comparisons=n_comparisons
            )
        hidden = _suppressed_fields(result)
        put = model.put
        put(row, COL["Question"], explain.question(result), "wrap")
        put(row, COL["Outcome"], result.outcome)
        put(row, COL["Compared by / against"], _against_or_by(result))
        put(row, COL["n used"], int(result.n), "integer", is_count=True)
        put(row, COL["n excluded"], int(result.n_excluded), "integer", is_count=True)
        put(row, COL["Test"], explain.TEST_NAMES.get(result.test or "", result.test or "none"))
        why = "; ".join(say_all(result.reasons))
        if result.skipped:
            why = (why + "; " if why else "") + f"not run: {say(result.skipped)}"
        put(row, COL["Why this test"], why, "wrap")
        put(row, COL["Statistic"], result.statistic_name or "")
        _value(
            model, row, COL["Statistic value"], result.statistic, "number", "statistic" in hidden
        )
        model.cells[(row, COL["df"])] = _df_cell(result.df)
        _value(model, row, COL["p"], result.p_value, "p_value", "p_value" in hidden)
        _value(model, row, COL["Adjusted p"], result.p_adjusted, "p_value", "p_adjusted" in hidden)
        est, eff = result.estimate, result.effect
        if est is not None:
            est_hidden = "estimate" in hidden
            put(row, COL["Estimate"], est.name, "wrap")
            _value(model, row, COL["Estimate value"], est.value, "number", est_hidden)
            _value(model, row, COL["CI low"], est.ci_low, "number", est_hidden)
            _value(model, row, COL["CI high"], est.ci_high, "number", est_hidden)
            ci = "suppressed" if est_hidden else _ci_text(est.ci_low, est.ci_high)
            put(row, COL["CI"], ci, "suppressed" if est_hidden else "text")
        if eff is not None:
            eff_hidden = "effect" in hidden
            put(row, COL["Effect size"], eff.name, "wrap")
            _value(model, row, COL["Effect value"], eff.value, "number", eff_hidden)
            _value(model, row, COL["Effect CI low"], eff.ci_low, "number", eff_hidden)
            _value(model, row, COL["Effect CI high"], eff.ci_high, "number", eff_hidden)
        put(row, COL["Reading"], reading_text or "", "wrap")
        own = explain.row_cautions(caution_list or [], run_wide)
        if own:
            put(row, COL["Cautions"], "\n".join(own), "wrap")
        else:
            put(row, COL["Cautions"], explain.NO_ROW_CAUTIONS, "muted")
        anchor = shape_anchors.get(f"analysis_{index}")
        if anchor:
            put(row, COL["Details"], "shape checks", "link", link=f"{{shape}}!{anchor}")
        row += 1
        for followup in result.followups:
            put(row, COL["Question"], f"  {explain.followup_label(followup)}", "wrap")
            put(row, COL["Test"], explain.TEST_NAMES.get(followup.test, followup.test), "muted")
            _value(model, row, COL["Statistic value"], followup.statistic, "number", False)
            _value(model, row, COL["p"], followup.p_value, "p_value", False)
            _value(model, row, COL["Adjusted p"], followup.p_adjusted, "p_value", False)
            if followup.estimate is not None:
                fe = followup.estimate
                put(row, COL["Estimate"], fe.name, "wrap")
                _value(model, row, COL["Estimate value"], fe.value, "number", False)
                _value(model, row, COL["CI low"], fe.ci_low, "number", False)
                _value(model, row, COL["CI high"], fe.ci_high, "number", False)
                put(row, COL["CI"], _ci_text(fe.ci_low, fe.ci_high))
            text = followup.reading or explain.followup_reading(
                followup, result, settings=context.settings, context=context
            )
            put(row, COL["Reading"], text, "wrap")
            row += 1
    if not results:
        model.put(row, 0, "No analyses were run: no column has the role 'outcome'.", "muted")
    return model


