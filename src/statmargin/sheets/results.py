"""The results sheet: the answers first, then one row per analysis and its follow-ups.

Layout, top to bottom:

1. the title and one run line (workbook, sheet, rows read, when, how the run
   was set) and a status line (how many questions were answered, how many could
   not be run);
2. the answer block: one line per question with what the data show, the size
   with its interval and the strength of evidence, or why it could not run;
3. the cautions that apply to every result (the review line first);
4. the full table: the question, the two- or three-line reading and that
   result's own cautions, then every technical column.

Only the table's header row is frozen, and only when the rows above it fit a
laptop screen; printing puts the plain columns on the first page of each row
band and the technical ones on the following pages, with the header row and
the question repeated.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ..io.addresses import column_letter
from ..results import Result
from ..vocabulary import SINCE_LAST_RUN_ORDER, EstimateKind, SinceLastRun
from ..words import explain, results_text
from ..words.period_words import SINCE_LAST_RUN_WORDS
from ..words.sentences import say, say_all
from .context import (
    SHEET_NAMES,
    ReportContext,
    _finite,
    _num,
    _run_time_text,
    _suppressed_fields,
)
from .model import Cell, SheetModel
from .shapes import shape_sheet

# Plain columns first (question, reading, cautions), then the technical ones.
# Printed landscape at RESULT_PRINT_SCALE; each printed page's columns (split by
# RESULT_PAGE_BREAKS) fit a Letter or A4 page inside the default margins.
RESULT_COLUMNS: tuple[tuple[str, float], ...] = (
    ("Question", 26),
    ("Reading", 54),
    ("Cautions", 32),
    ("Since last run", 14),
    ("Outcome", 16),
    ("Compared by / against", 20),
    ("n used", 9),
    ("n excluded", 10),
    ("Test", 22),
    ("Why this test", 48),
    ("Statistic", 11),
    ("Statistic value", 11),
    ("df", 9),
    ("p", 9),
    ("Adjusted p", 10),
    (results_text.HOW_P_FOUND, 18),
    ("Estimate", 26),
    ("Estimate value", 11),
    ("CI low", 10),
    ("CI high", 10),
    ("Effect size", 20),
    ("Effect value", 10),
    ("Effect CI low", 10),
    ("Effect CI high", 10),
    ("Details", 13),
)
COL = {name: i for i, (name, _) in enumerate(RESULT_COLUMNS)}
RESULT_PAGE_BREAKS = (COL["Outcome"], COL["Statistic"], COL["Estimate"])
RESULT_PRINT_SCALE = 75
# Changes since the last run shown in the caution colour.
ALERTS = frozenset({SinceLastRun.DIRECTION_REVERSED, SinceLastRun.NOW_BELOW_LEVEL,
                    SinceLastRun.NO_LONGER_BELOW_LEVEL, SinceLastRun.MOVED_OUTSIDE_INTERVAL})
# Freeze the table's header row only when the rows above it leave most of a laptop screen free
# (about 35 rows show at 100%; common practice, our own measure).
FREEZE_MAX_ROW = 20
PLAIN_SPAN = f"A{{row}}:{column_letter(COL['Since last run'])}{{row}}"
SHARE_KINDS = (
    EstimateKind.SHARE,
    EstimateKind.SHARE_FURTHEST,
    EstimateKind.SHARE_DIFFERENCE,
    EstimateKind.PAIRED_SHARE_DIFFERENCE,
    EstimateKind.SHARE_CHANGE_PER_PERIOD,
    EstimateKind.LARGEST_SHARE_GAP,
)
RATE_KINDS = (
    EstimateKind.RATE,
    EstimateKind.RATE_DIFFERENCE,
    EstimateKind.RATE_RATIO,
    EstimateKind.LARGEST_RATE_GAP,
)


def _merge_plain(model: SheetModel, row: int) -> None:
    """Merge a top-block line across the plain columns so it shows and prints whole."""
    model.merged.append(PLAIN_SPAN.format(row=row + 1))


def _against_or_by(result: Result) -> str:
    if result.exposure:
        return result.exposure
    if result.pairing:
        return f"paired by {result.pairing}"
    if result.against is None:
        return ""
    typed = result.extra.get("target_text") if isinstance(result.extra, Mapping) else None
    if typed:
        return f"against {typed}"  # a target of events as typed ("4%", "2 per 1000")
    if isinstance(result.against, Mapping):
        return ", ".join(f"{k} = {v:g}" if _finite(v) else f"{k} = {v}" for k, v in result.against.items())
    return f"against {result.against:g}" if _finite(result.against) else f"against {result.against}"


def _df_cell(df: Any) -> Cell:
    """Degrees of freedom: whole numbers as integers, others to two decimals; a pair as text."""
    if isinstance(df, (list, tuple)):
        return Cell(", ".join(f"{float(d):g}" for d in df if _finite(d)), "text")
    value = _num(df)
    if value is None:
        return Cell(None)
    return Cell(value, "integer" if float(value).is_integer() else "decimal2")


def _fixed(decimals: int) -> str:
    return f"fixed{max(0, min(4, decimals))}"


def _estimate_style(result: Result, context: ReportContext) -> str:
    """The display style of an estimate: a percentage for shares, else the outcome's precision plus one."""
    est = result.estimate
    if est is not None and est.kind in SHARE_KINDS:
        return "percent"
    if est is not None and est.kind in RATE_KINDS:
        return "number"  # rates per unit and ratios are not in the counts' own precision
    own = context.decimals.get(result.outcome or "")
    return "number" if own is None else _fixed(own + 1)


def _number(model: SheetModel, row: int, col: int, value: Any, style: str, *, hidden: bool = False) -> None:
    """A number cell (full precision, shown by ``style``), or the sharing-mode mark."""
    if hidden:
        model.put(row, col, "suppressed", "suppressed")
        return
    number = _num(value)
    model.put(row, col, number, style if number is not None else "text")


def _top_block(model: SheetModel, context: ReportContext, results: Sequence[Result], family: int) -> int:
    """Title, run line and status line; returns the next free row."""
    settings = context.settings
    model.put(0, 0, results_text.TITLE, "title")
    run_line = results_text.run_line(
        workbook=context.workbook, sheet=context.data_sheet, rows_read=context.rows_read,
        when=_run_time_text(context), version=context.version, confidence=settings.confidence,
        adjust=explain.ADJUST_NAMES.get(str(settings.adjust), str(settings.adjust)), family=family,
        sides=str(settings.alternative), hidden_rows=results_text.hidden_rows_note(context.hidden_rows, settings.rows),
        across=str(settings.family),
    )
    model.put(1, 0, run_line, "wrap")  # wrapped across the plain columns: it is longer than a page is wide
    _merge_plain(model, 1)
    not_run = sum(1 for r in results if r.skipped)
    model.put(2, 0, results_text.status_line(len(results) - not_run, not_run), "subtitle")
    _merge_plain(model, 2)
    row = 3
    for n, line in enumerate(context.changes):  # what changed since the last run, most important first
        model.put(row, 0, line, "subtitle" if n == 0 else "wrap")
        _merge_plain(model, row)
        row += 1
    model.anchors["share_note"] = f"A{row + 1}"
    if context.share_mode:
        model.put(row, 0, explain.SHARE_NOTE.format(floor=context.share_min_count), "caution")
        _merge_plain(model, row)
        row += 1
    return row + 1


def _answer_block(model: SheetModel, row: int, results: Sequence[Result], context: ReportContext,
                  family: int) -> int:
    """One line per question: what the data show, size and evidence; or why it was not run."""
    if not results:
        return row
    model.put(row, 0, results_text.ANSWERS, "subtitle")
    row += 1
    model.put_row(row, list(results_text.ANSWER_HEADERS), "header")
    row += 1
    for result in changed_first(results):
        line = explain.headline(result, settings=context.settings, context=context, n_comparisons=family)
        model.put(row, 0, line.question, "wrap")
        if line.not_run:
            model.put(row, 1, results_text.NOT_RUN.format(reason=line.not_run), "caution")
        else:
            model.put(row, 1, line.answer, "wrap")
            model.put(row, 2, results_text.size_and_evidence(line.size, line.evidence), "wrap")
        row += 1
    return row + 1


def changed_first(results: Sequence[Result]) -> list[Result]:
    """The results with those that changed since the last run first (most important change first)."""
    order: dict[SinceLastRun | None, int] = {
        flag: i for i, flag in enumerate(SINCE_LAST_RUN_ORDER) if flag is not SinceLastRun.UNCHANGED
    }
    return sorted(results, key=lambda r: order.get(r.since_last_run, len(order)))


def _cautions_block(model: SheetModel, row: int, run_wide: Sequence[str]) -> int:
    model.put(row, 0, results_text.KEEP_IN_MIND, "subtitle")
    _merge_plain(model, row)
    row += 1
    for line in run_wide:
        model.put(row, 0, line, "caution")
        _merge_plain(model, row)
        row += 1
    return row + 1


def _technical(model: SheetModel, row: int, result: Result, context: ReportContext) -> None:
    """The technical columns of one analysis row."""
    put = model.put
    hidden = _suppressed_fields(result)
    put(row, COL["Outcome"], result.outcome)
    put(row, COL["Compared by / against"], _against_or_by(result))
    put(row, COL["n used"], result.n, "integer", is_count=True)
    put(row, COL["n excluded"], result.n_excluded, "integer", is_count=True)
    put(row, COL["Test"], explain.TEST_NAMES.get(result.test or "", result.test or "none"))
    why = "; ".join(say_all(result.reasons))
    if result.skipped:
        why = (why + "; " if why else "") + f"not run: {say(result.skipped)}"
    put(row, COL["Why this test"], why, "wrap")
    put(row, COL["Statistic"], result.statistic_name or "")
    _number(model, row, COL["Statistic value"], result.statistic, "number", hidden="statistic" in hidden)
    model.cells[(row, COL["df"])] = _df_cell(result.df)
    _number(model, row, COL["p"], result.p_value, "p_value", hidden="p_value" in hidden)
    _number(model, row, COL["Adjusted p"], result.p_adjusted, "p_value", hidden="p_adjusted" in hidden)
    put(row, COL[results_text.HOW_P_FOUND], str(result.p_method).replace("_", " ") if result.p_method else "")
    est, eff = result.estimate, result.effect
    if est is not None:
        style = _estimate_style(result, context)
        est_hidden = "estimate" in hidden
        put(row, COL["Estimate"], est.name, "wrap")
        for name, value in (("Estimate value", est.value), ("CI low", est.ci_low), ("CI high", est.ci_high)):
            _number(model, row, COL[name], value, style, hidden=est_hidden)
    if eff is not None:
        eff_hidden = "effect" in hidden
        put(row, COL["Effect size"], eff.name, "wrap")
        for name, value in (("Effect value", eff.value), ("Effect CI low", eff.ci_low), ("Effect CI high", eff.ci_high)):
            _number(model, row, COL[name], value, "number", hidden=eff_hidden)


def results_sheet(
    results: Sequence[Result],
    context: ReportContext,
    shape_anchors: Mapping[str, str] | None = None,
    periods_anchors: Mapping[str, str] | None = None,
) -> SheetModel:
    """The results sheet: run line, answers, run-wide cautions, then one row per analysis.

    Parameters
    ----------
    results : sequence of Result
        The run's results, with readings and cautions filled (``explain.apply``);
        a result without a reading gets one here.
    context : ReportContext
    shape_anchors : mapping, optional
        ``"analysis_<i>"`` -> cell of each analysis block on the shape sheet
        (``shape_sheet(...).anchors``); computed when not given.
    periods_anchors : mapping, optional
        The same for the periods sheet: a result over time links to its series
        and chart there instead.

    Returns
    -------
    SheetModel
        Kind "results". ``anchors["table"]`` is the table's header cell.

    Notes
    -----
    The "Details" cell links to ``{shape}!<cell>``; the writer resolves the
    placeholder to the shape sheet's final name. Follow-up rows sit under their
    analysis with an indented label.
    """
    model = SheetModel(name=SHEET_NAMES["results"], kind="results")
    if shape_anchors is None:
        shape_anchors = shape_sheet(results, context).anchors
    family = explain.count_comparisons(results)
    run_wide = explain.run_wide_cautions(results, settings=context.settings, context=context, n_comparisons=family)
    row = _top_block(model, context, results, family)
    row = _answer_block(model, row, results, context, family)
    row = _cautions_block(model, row, run_wide)
    model.put(row, 0, results_text.ALL_RESULTS, "subtitle")
    _merge_plain(model, row)
    header = row + 1
    model.anchors["table"] = f"A{header + 1}"
    model.put_row(header, [name for name, _ in RESULT_COLUMNS], "header")
    if header + 1 <= FREEZE_MAX_ROW:
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
                result, settings=context.settings, context=context, n_comparisons=family
            )
        model.put(row, COL["Question"], explain.question(result), "wrap")
        model.put(row, COL["Reading"], reading_text or "", "wrap")
        own = explain.row_cautions(caution_list or [], run_wide)
        if own:
            model.put(row, COL["Cautions"], "\n".join(own), "wrap")
        else:
            model.put(row, COL["Cautions"], results_text.NO_ROW_CAUTIONS, "muted")
        if result.since_last_run is not None:
            model.put(row, COL["Since last run"], SINCE_LAST_RUN_WORDS[result.since_last_run],
                      "caution" if result.since_last_run in ALERTS else "wrap")
        _technical(model, row, result, context)
        series = (periods_anchors or {}).get(f"analysis_{index}")
        anchor = shape_anchors.get(f"analysis_{index}")
        if series:
            model.put(row, COL["Details"], results_text.SERIES_LINK, "link", link=f"{{periods}}!{series}")
        elif anchor:
            model.put(row, COL["Details"], "shape checks", "link", link=f"{{shape}}!{anchor}")
        row += 1
        for followup in result.followups:
            model.put(row, COL["Question"], results_text.FOLLOWUP_PREFIX + explain.followup_label(followup), "wrap")
            model.put(row, COL["Test"], explain.TEST_NAMES.get(followup.test, followup.test), "muted")
            _number(model, row, COL["Statistic value"], followup.statistic, "number")
            _number(model, row, COL["p"], followup.p_value, "p_value")
            _number(model, row, COL["Adjusted p"], followup.p_adjusted, "p_value")
            if followup.estimate is not None:
                fe = followup.estimate
                style = (
                    "percent" if fe.kind in SHARE_KINDS
                    else _fixed(context.decimals[result.outcome] + 1)
                    if result.outcome in context.decimals and fe.kind not in RATE_KINDS
                    else "number"
                )
                model.put(row, COL["Estimate"], fe.name, "wrap")
                for name, value in (("Estimate value", fe.value), ("CI low", fe.ci_low), ("CI high", fe.ci_high)):
                    _number(model, row, COL[name], value, style)
            text = followup.reading or explain.followup_reading(
                followup, result, settings=context.settings, context=context
            )
            model.put(row, COL["Reading"], text, "wrap")
            row += 1
    if not results:
        model.put(row, 0, results_text.NO_ANALYSES, "muted")
    # The answer block and plain columns print first; the technical columns follow
    # with the table only, so their pages do not repeat a cut-off answer block.
    last = max(row, header + 1)
    first_technical = COL["Outcome"]
    model.print_areas = [(0, 0, last, first_technical - 1),
                         (header, first_technical, last, len(RESULT_COLUMNS) - 1)]
    return model
