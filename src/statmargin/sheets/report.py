"""Build the tool's sheets (results, shape checks, data notes, run log) as sheet models.

Nothing here touches a file: each function returns a ``sheets.model.SheetModel``
that a writer puts into the workbook. Values stay numeric; number formats are
named by style keys. Cells that hold counts of records are marked
(``Cell.is_count``), and the cells that would reveal a count (a group's share,
mean, SD, ...) are listed in ``SheetModel.count_dependents``, so sharing mode
(``share.suppress``) can hide small counts and everything that gives them away.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any, TypeGuard

import numpy as np

from .._version import __version__
from ..plan.model import Settings
from ..read.table import DataNote, Table, column_letter
from ..results import Result
from ..vocabulary import Design
from ..words import context as words_context
from ..words import explain, technical
from ..words.sentences import say, say_all
from .model import Cell, Chart, ChartSeries, SheetModel
from .share import DEFAULT_MIN_COUNT, suppress

# Preferred sheet names (the writer picks others if a user sheet has the name).
SHEET_NAMES = {
    "results": "statmargin results",
    "shape": "statmargin shape checks",
    "notes": "statmargin data notes",
    "log": "statmargin run log",
}

# Histogram bins: NumPy's "auto" rule, held between these counts so charts stay readable.
MIN_BINS = 8
MAX_BINS = 15


@dataclass
class ReportContext:
    """What the sheets say about the run besides the results (filled by the pipeline).

    ``samples`` holds the values behind each continuous analysis for the histograms,
    keyed by ``analysis_key(result)`` and then by group label (or variable name for
    two measures); analyses without samples get no histogram. ``share_mode`` and
    ``share_min_count`` describe sharing mode (see ``share``).
    """

    workbook: str = ""
    data_sheet: str = ""
    header_row: int = 1
    rows_read: int = 0
    rows_used: int = 0
    run_time: datetime | None = None
    version: str = __version__
    settings: Settings = field(default_factory=Settings)
    units: dict[str, str] = field(default_factory=dict)
    share_mode: bool = False
    share_min_count: int = DEFAULT_MIN_COUNT
    link_sheet: str | None = None  # sheet for links to data cells; defaults to data_sheet
    column_letters: dict[str, str] = field(default_factory=dict)
    observational: bool = True
    samples: dict[tuple[str, str, str], Mapping[str, Sequence[float]]] = field(default_factory=dict)
    fingerprint: str = ""

    @classmethod
    def from_run(
        cls,
        *,
        workbook: str,
        table: Table | None = None,
        results: Sequence[Result] = (),
        samples: Sequence[Mapping[str, Sequence[float]]] = (),
        settings: Settings | None = None,
        version: str = __version__,
        started: datetime | None = None,
        seconds: float | None = None,
        share_min_count: int | None = None,
        units: Mapping[str, str] | None = None,
    ) -> ReportContext:
        """A context filled from a finished run (as the workbook pipeline has it).

        Parameters
        ----------
        workbook : str
            The workbook's file name.
        table : Table, optional
            The data as read: sheet, header row, rows read, fingerprint, column
            letters and units come from it.
        results : sequence of Result
            The run's results; rows used is the largest ``n`` among them.
        samples : sequence of mappings, optional
            The values behind each result, by group label (``designs.base.Prepared.samples``),
            in the order of ``results``; what the histograms draw.
        settings : Settings, optional
        version : str
        started : datetime, optional
            When the run started (UTC); now when not given.
        seconds : float, optional
            Not shown; accepted so callers can pass the run's duration.
        share_min_count : int, optional
            Sharing mode is on when this is given (counts below it are hidden).
        units : mapping, optional
            Units per column; by default each column's ``units`` from the table.
        """
        del seconds  # the run time shown is the start time
        unit_map: dict[str, str] = dict(units or {})
        letters: dict[str, str] = {}
        if table is not None:
            for name, column in table.columns.items():
                letters[name] = column.letter
                if column.units and name not in unit_map:
                    unit_map[name] = column.units
        drawn = {
            analysis_key(result): values
            for result, values in zip(results, samples, strict=False)
            if values and not result.skipped
        }
        used = max((int(r.n) for r in results if not r.skipped), default=0)
        return cls(
            workbook=workbook,
            data_sheet=table.sheet if table is not None else "",
            header_row=table.header_row if table is not None else 1,
            rows_read=int(table.n_rows_read) if table is not None else 0,
            rows_used=used,
            run_time=started,
            version=version,
            settings=settings or Settings(),
            units=unit_map,
            share_mode=share_min_count is not None,
            share_min_count=share_min_count if share_min_count is not None else DEFAULT_MIN_COUNT,
            link_sheet=table.sheet if table is not None else None,
            column_letters=letters,
            samples=drawn,
            fingerprint=table.fingerprint if table is not None else "",
        )


def analysis_key(result: Result) -> tuple[str, str, str]:
    """The key of a result in ``ReportContext.samples``: (outcome, exposure, pairing)."""
    return (result.outcome or "", result.exposure or "", result.pairing or "")


def quote_sheet(name: str) -> str:
    """A sheet name quoted for a cell reference: ``'Site visits'`` (inner quotes doubled)."""
    return "'" + name.replace("'", "''") + "'"


def _finite(value: Any) -> TypeGuard[int | float]:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _num(value: Any) -> Any:
    """A finite number as float, else None (the cell stays empty)."""
    if hasattr(value, "item") and not isinstance(value, (list, tuple, dict)):
        value = value.item()
    return float(value) if _finite(value) else None


def _a1(row: int, col: int, absolute: bool = False) -> str:
    if absolute:
        return f"${column_letter(col)}${row + 1}"
    return f"{column_letter(col)}{row + 1}"


def _run_time_text(context: ReportContext) -> str:
    when = context.run_time or datetime.now(timezone.utc)
    if when.tzinfo is not None:
        when = when.astimezone(timezone.utc)
    return when.replace(microsecond=0, tzinfo=None).isoformat() + "Z"


def _settings_text(settings: Settings) -> str:
    adjust = getattr(settings.adjust, "value", str(settings.adjust))
    alternative = getattr(settings.alternative, "value", str(settings.alternative))
    return f"confidence {settings.confidence:g}; adjustment {adjust}; {alternative}; alpha {settings.alpha:g}"


def _suppressed_fields(result: Result) -> set[str]:
    marks = result.extra.get("suppressed") if isinstance(result.extra, Mapping) else None
    return set(marks) if isinstance(marks, (list, tuple, set)) else set()


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


def _value(model: SheetModel, row: int, col: int, value: Any, style: str, hidden: bool) -> None:
    if hidden:
        model.put(row, col, "suppressed", "suppressed")
    else:
        number = _num(value)
        model.put(row, col, number, style if number is not None else "text")


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


# ---------------------------------------------------------------- shape sheet

# (header, group-dict keys in order of preference, style). The engine's shape
# summaries use check/check_p/n_outliers/verdict; the other names are accepted too.
GROUP_COLUMNS: tuple[tuple[str, tuple[str, ...], str], ...] = (
    ("n", ("n",), "integer"),
    ("Mean", ("mean",), "number"),
    ("SD", ("sd",), "number"),
    ("Median", ("median",), "number"),
    ("Q1", ("q1",), "number"),
    ("Q3", ("q3",), "number"),
    ("Min", ("min",), "number"),
    ("Max", ("max",), "number"),
    ("Skewness", ("skewness",), "number"),
    ("Excess kurtosis", ("excess_kurtosis",), "number"),
    ("Normality check", ("normality_test", "check"), "text"),
    ("Normality p", ("normality_p", "check_p"), "p_value"),
    ("Outliers (1.5 IQR)", ("outliers", "n_outliers"), "integer"),
    ("Shape", ("verdict",), "text"),
)
# The group table prints in two parts so the sheet fits a portrait page: the
# summaries, then the shape checks (text columns last, wrapped; the verdict merged
# over the table's last columns).
GROUP_TABLE_PARTS: tuple[tuple[str, ...], ...] = (
    ("n", "Mean", "SD", "Median", "Q1", "Q3", "Min", "Max"),
    (
        "Skewness",
        "Excess kurtosis",
        "Normality p",
        "Outliers (1.5 IQR)",
        "Normality check",
        "Shape",
    ),
)
SHAPE_TEXT_SPAN = 3  # the last column of the second part (the shape verdict) spans G:I
SHAPE_LAST_COL = 8  # columns A..I; text lines are merged across them
SHAPE_WIDTHS = {0: 20.0, **{i: 10.5 for i in range(1, SHAPE_LAST_COL + 1)}}
CHART_COL = 1  # charts sit under their block's tables, from column B
CHART_COLS = SHAPE_LAST_COL
CHART_ROWS = 16


def _continuous_groups(result: Result) -> bool:
    return any(isinstance(g, Mapping) and ("mean" in g or "median" in g) for g in result.groups)


def _group_value(group: Mapping[str, Any], keys: tuple[str, ...]) -> Any:
    for key in keys:
        if key in group and group[key] is not None:
            value = group[key]
            if key in ("outliers",) and isinstance(value, (list, tuple)):
                return len(value)
            if key == "check":
                return explain.CHECK_NAMES.get(str(value), str(value))
            return value
    return None


def _put_group_table(
    model: SheetModel, row: int, result: Result
) -> tuple[int, dict[str, tuple[int, int]]]:
    """Per-group summaries in two parts; returns the next row and the cell of each group's n."""
    columns = {header: (keys, style) for header, keys, style in GROUP_COLUMNS}
    n_cells: dict[str, tuple[int, int]] = {}
    groups = [g for g in result.groups if isinstance(g, Mapping)]
    cells_of: dict[int, list[tuple[int, int]]] = {i: [] for i in range(len(groups))}
    for part in GROUP_TABLE_PARTS:
        model.put_row(row, ["Group", *part], "header")
        row += 1
        for index, g in enumerate(groups):
            label = str(g.get("label", ""))
            model.put(row, 0, label, "label")
            hidden = bool(g.get("suppressed"))  # summaries removed in sharing mode
            for offset, header in enumerate(part, start=1):
                keys, style = columns[header]
                value = _group_value(g, keys)
                if hidden and header not in ("n", "Normality check"):
                    model.put(row, offset, "suppressed", "suppressed", is_count=style == "integer")
                elif style == "text":
                    model.put(row, offset, "" if value is None else str(value), "wrap")
                    if offset == len(part) and offset + SHAPE_TEXT_SPAN - 1 <= SHAPE_LAST_COL:
                        last = column_letter(offset + SHAPE_TEXT_SPAN - 1)
                        model.merged.append(f"{_a1(row, offset)}:{last}{row + 1}")
                elif style == "integer" and _finite(value):
                    model.put(row, offset, int(value), "integer", is_count=True)
                else:
                    number = _num(value)
                    model.put(row, offset, number, style if number is not None else "text")
                if header == "n":
                    n_cells[label] = (row, offset)
                else:
                    cells_of[index].append((row, offset))
            row += 1
        row += 1
    for index, g in enumerate(groups):
        n_cell = n_cells.get(str(g.get("label", "")))
        if n_cell is not None:
            model.count_dependents[n_cell] = cells_of[index]
    return row - 1, n_cells


def _put_level_table(model: SheetModel, row: int, result: Result) -> tuple[int, Chart | None]:
    """One categorical variable: counts and shares per level (and stated shares), with bars."""
    against = result.against if isinstance(result.against, Mapping) else {}
    model.put_row(row, ["Level", "Count", "Share", "Stated share", "Expected count"], "header")
    row += 1
    count_cells: list[tuple[int, int]] = []
    total = 0
    expected_rows: list[tuple[int, Any]] = []
    for g in result.groups:
        if not isinstance(g, Mapping):
            continue
        label = str(g.get("label", ""))
        count = g.get("count", g.get("n"))
        model.put(row, 0, label, "label")
        if _finite(count):
            model.put(row, 1, int(count), "integer", is_count=True)
            total += int(count)
        else:
            model.put(
                row,
                1,
                "suppressed" if g.get("suppressed") else None,
                "suppressed" if g.get("suppressed") else "text",
            )
        share = _num(g.get("share"))
        model.put(row, 2, share, "percent" if share is not None else "text")
        stated = _num(against.get(label, against.get(g.get("label"))) if against else None)
        model.put(row, 3, stated, "percent" if stated is not None else "text")
        expected_rows.append((row, g.get("expected")))
        model.count_dependents[(row, 1)] = [(row, 2)]
        count_cells.append((row, 1))
        row += 1
    model.put(row, 0, "Total", "label")
    model.put(row, 1, total, "integer", is_count=True)
    total_cell = (row, 1)
    for r, expected in expected_rows:
        value = _num(expected)
        if value is None and _finite(model.cells[(r, 3)].value):
            value = float(model.cells[(r, 3)].value) * total
        model.put(r, 4, value, "number" if value is not None else "text")
    model.count_sets.append(count_cells + [total_cell])
    # Expected counts reveal the total (they sum to it).
    model.count_dependents.setdefault(total_cell, []).extend((r, 4) for r, _ in expected_rows)
    row += 1
    if not count_cells:
        return row, None
    # Observed and stated shares as two 100% bars, levels as series.
    bar_top = row + 1
    model.put(bar_top, 0, "Bars", "subtitle")
    model.put(bar_top + 1, 0, "Observed", "label")
    model.put(bar_top + 2, 0, "Stated", "label")
    series = []
    for i, (r, _) in enumerate(count_cells):
        col = 1 + i
        model.put(bar_top, col, model.cells[(r, 0)].value, "header")
        observed = model.cells[(r, 1)]
        model.cells[(bar_top + 1, col)] = Cell(
            observed.value, observed.style, None, observed.is_count
        )
        model.count_dependents.setdefault((r, 1), []).append((bar_top + 1, col))
        expected = model.cells[(r, 4)].value
        model.put(bar_top + 2, col, expected, "number" if _finite(expected) else "text")
        series.append(
            ChartSeries(
                str(model.cells[(r, 0)].value),
                f"{_a1(bar_top + 1, col, True)}:{_a1(bar_top + 2, col, True)}",
            )
        )
    chart = Chart(
        kind="percent_bar",
        title=f"{result.outcome}: observed and stated shares",
        categories=f"{_a1(bar_top + 1, 0, True)}:{_a1(bar_top + 2, 0, True)}",
        series=series,
        anchor="",
        y_title="share of records",
    )
    return bar_top + 4, chart


def _crosstab(result: Result) -> tuple[list[list[Any]], list[str], list[str]] | None:
    """The observed table of a two-categorical result, from ``extra`` (defensive about layout)."""
    extra: Mapping[str, Any] = result.extra if isinstance(result.extra, Mapping) else {}
    counts = result.shape.get("counts") if isinstance(result.shape, Mapping) else None
    if not isinstance(extra.get("observed"), (Mapping, Sequence)) and isinstance(counts, Mapping):
        extra = counts  # the engine's shape checks keep the table under "counts"
    observed: Any = extra.get("observed")
    rows = extra.get("row_labels")
    cols = extra.get("col_labels")
    if isinstance(observed, Mapping):
        rows = observed.get("row_labels", observed.get("row_levels", rows))
        cols = observed.get("col_labels", observed.get("col_levels", cols))
        observed = observed.get("values", observed.get("counts"))
    if hasattr(observed, "tolist"):
        observed = observed.tolist()
    if not (isinstance(observed, Sequence) and observed and isinstance(observed[0], Sequence)):
        return None
    n_rows, n_cols = len(observed), len(observed[0])
    rows = (
        [str(x) for x in rows]
        if isinstance(rows, Sequence) and len(rows) == n_rows
        else [f"row {i + 1}" for i in range(n_rows)]
    )
    cols = (
        [str(x) for x in cols]
        if isinstance(cols, Sequence) and len(cols) == n_cols
        else [f"column {j + 1}" for j in range(n_cols)]
    )
    return [list(r) for r in observed], rows, cols


def _put_crosstab(model: SheetModel, row: int, result: Result) -> tuple[int, Chart | None]:
    """Observed counts with totals (and expected counts), plus 100% bars per row."""
    table = _crosstab(result)
    if table is None:
        return row, None
    observed, row_labels, col_labels = table
    model.put(row, 0, "Observed counts", "subtitle")
    row += 1
    top = row
    model.put_row(row, [""] + col_labels + ["Total"], "header")
    n_cols = len(col_labels)
    row_total_cells = []
    body_cells: list[list[tuple[int, int]]] = []
    for i, label in enumerate(row_labels):
        r = top + 1 + i
        model.put(r, 0, label, "label")
        line = []
        for j in range(n_cols):
            value = observed[i][j]
            if _finite(value):
                model.put(r, 1 + j, int(value), "integer", is_count=True)
            else:
                model.put(r, 1 + j, None)
            line.append((r, 1 + j))
        total = int(sum(v for v in observed[i] if _finite(v)))
        model.put(r, 1 + n_cols, total, "integer", is_count=True)
        row_total_cells.append((r, 1 + n_cols))
        body_cells.append(line)
        model.count_sets.append(line + [(r, 1 + n_cols)])
    total_row = top + 1 + len(row_labels)
    model.put(total_row, 0, "Total", "label")
    col_total_cells = []
    for j in range(n_cols):
        total = int(sum(observed[i][j] for i in range(len(row_labels)) if _finite(observed[i][j])))
        model.put(total_row, 1 + j, total, "integer", is_count=True)
        col_total_cells.append((total_row, 1 + j))
        model.count_sets.append([line[j] for line in body_cells] + [(total_row, 1 + j)])
    grand = (total_row, 1 + n_cols)
    model.put(
        *grand, int(sum(model.cells[c].value for c in col_total_cells)), "integer", is_count=True
    )
    model.count_sets.append(col_total_cells + [grand])
    model.count_sets.append(row_total_cells + [grand])
    row = total_row + 2
    expected = None
    for source in (result.shape, (result.shape or {}).get("counts"), result.extra):
        if isinstance(source, Mapping) and source.get("expected") is not None:
            expected = source["expected"]
            break
    if isinstance(expected, Mapping):
        expected = expected.get("values")
    if isinstance(expected, Sequence) and len(expected) == len(row_labels):
        model.put(row, 0, "Expected counts if the two were unrelated", "subtitle")
        row += 1
        model.put_row(row, [""] + col_labels, "header")
        for i, label in enumerate(row_labels):
            r = row + 1 + i
            model.put(r, 0, label, "label")
            for j in range(min(n_cols, len(expected[i]))):
                value = _num(expected[i][j])
                model.put(r, 1 + j, value, "number" if value is not None else "text")
                # Expected counts are built from the margins, so they reveal them.
                model.count_dependents.setdefault(row_total_cells[i], []).append((r, 1 + j))
                model.count_dependents.setdefault(col_total_cells[j], []).append((r, 1 + j))
        row = row + 1 + len(row_labels) + 1
    series = [
        ChartSeries(
            col_labels[j], f"{_a1(top + 1, 1 + j, True)}:{_a1(top + len(row_labels), 1 + j, True)}"
        )
        for j in range(n_cols)
    ]
    chart = Chart(
        kind="percent_bar",
        title=f"{result.outcome or 'Outcome'} by {result.exposure or 'group'}",
        categories=f"{_a1(top + 1, 0, True)}:{_a1(top + len(row_labels), 0, True)}",
        series=series,
        anchor="",
        y_title="share of records",
    )
    return row, chart


def bin_edges(values: Sequence[float]) -> np.ndarray:
    """Shared histogram bin edges: NumPy's "auto" rule held to 8 to 15 bins.

    Parameters
    ----------
    values : sequence of float
        All values to be binned (every group together, so groups share bins).

    Returns
    -------
    numpy.ndarray
        Increasing edges; a single bin around the value when all values are equal.

    Notes
    -----
    "auto" is the larger-bin choice of the Sturges and Freedman-Diaconis rules
    (NumPy documentation); its count is clamped to 8..15 and the edges are then
    spread evenly over the data range.
    """
    data = np.asarray([v for v in values if _finite(v)], dtype=float)
    if data.size == 0:
        return np.array([0.0, 1.0])
    low, high = float(data.min()), float(data.max())
    if low == high:
        return np.array([low - 0.5, high + 0.5])
    count = len(np.histogram_bin_edges(data, bins="auto")) - 1
    count = min(MAX_BINS, max(MIN_BINS, count))
    return np.linspace(low, high, count + 1)


def _bin_labels(edges: np.ndarray) -> list[str]:
    step = float(edges[1] - edges[0]) if len(edges) > 1 else 1.0
    # Two significant digits of the bin width are enough to tell bins apart.
    decimals = int(min(6, max(0, 1 - math.floor(math.log10(step))))) if step > 0 else 0
    return [
        f"{explain.fmt_number(float(a), decimals)} to {explain.fmt_number(float(b), decimals)}"
        for a, b in zip(edges[:-1], edges[1:], strict=True)
    ]


def _put_histogram(
    model: SheetModel,
    row: int,
    title: str,
    samples: Mapping[str, Sequence[float]],
    n_cells: Mapping[str, tuple[int, int]],
    units: str,
) -> tuple[int, Chart]:
    """Counts per shared bin for each group, and a column chart over them."""
    labels = list(samples)
    edges = bin_edges([v for label in labels for v in samples[label]])
    model.put_row(row, ["Bin"] + labels, "header")
    bin_text = _bin_labels(edges)
    top = row + 1
    for i, text in enumerate(bin_text):
        model.put(top + i, 0, text, "label")
    for j, label in enumerate(labels):
        data = np.asarray([v for v in samples[label] if _finite(v)], dtype=float)
        counts, _ = np.histogram(data, bins=edges)
        column = []
        for i, count in enumerate(counts):
            model.put(top + i, 1 + j, int(count), "integer", is_count=True)
            column.append((top + i, 1 + j))
        if label in n_cells:  # the bins add up to the group's n shown above
            model.count_sets.append(column + [n_cells[label]])
    bottom = top + len(bin_text) - 1
    chart = Chart(
        kind="column",
        title=title,
        categories=f"{_a1(top, 0, True)}:{_a1(bottom, 0, True)}",
        series=[
            ChartSeries(label, f"{_a1(top, 1 + j, True)}:{_a1(bottom, 1 + j, True)}")
            for j, label in enumerate(labels)
        ],
        anchor="",
        x_title=units or None,
        y_title="records",
    )
    return bottom + 2, chart


def _samples_for(result: Result, context: ReportContext) -> dict[str, Sequence[float]]:
    samples = context.samples.get(analysis_key(result))
    if samples is None and isinstance(result.extra, Mapping):
        samples = result.extra.get("values")
    if not isinstance(samples, Mapping):
        return {}
    return {str(k): list(v) for k, v in samples.items() if isinstance(v, (Sequence, np.ndarray))}


def shape_sheet(results: Sequence[Result], context: ReportContext) -> SheetModel:
    """The shape-check sheet: for each analysis, its technical note, checks and charts.

    Parameters
    ----------
    results : sequence of Result
    context : ReportContext
        ``samples`` gives the values for histograms (see ``ReportContext``).

    Returns
    -------
    SheetModel
        Kind "shape"; ``anchors["analysis_<i>"]`` is the first cell of block i,
        so results rows can link to it.

    Notes
    -----
    Each block: a title, the technical note one sentence a row, the per-group
    summaries (continuous) or counts and shares (categorical), the spread check,
    expected counts for chi-square tests, and chart data. Histograms use shared
    bin edges per analysis (``bin_edges``). Each chart sits under its block's
    tables in rows of its own (column B onwards), so it never covers text and
    prints next to the numbers it draws; the sheet prints portrait, fitted to
    the page width (columns A to I).
    """
    model = SheetModel(name=SHEET_NAMES["shape"], kind="shape")
    model.put(0, 0, "statmargin shape checks", "title")
    model.put(
        1, 0, "How each test was chosen: the data's shape, spread and counts, with charts.", "muted"
    )
    model.widths = dict(SHAPE_WIDTHS)
    model.fit_to_width = True
    model.page_numbers = True
    span = f"A{{row}}:{column_letter(SHAPE_LAST_COL)}{{row}}"
    model.merged.append(span.format(row=2))
    row = 3
    for index, result in enumerate(results):
        model.anchors[f"analysis_{index}"] = _a1(row, 0)
        model.put(row, 0, f"{index + 1}. {explain.question(result)}", "subtitle")
        model.merged.append(span.format(row=row + 1))
        row += 1
        for sentence in explain.technical_lines(result, context.settings, context):
            # Merged across the table's width and wrapped, so it prints whole.
            model.put(row, 0, sentence, "wrap")
            model.merged.append(span.format(row=row + 1))
            row += 1
        row += 1
        charts: list[Chart] = []
        n_cells: dict[str, tuple[int, int]] = {}
        if result.groups and _continuous_groups(result):
            row, n_cells = _put_group_table(model, row, result)
            row += 1
        elif result.groups and result.design in (Design.ONE_SAMPLE_CATEGORICAL,):
            row, chart = _put_level_table(model, row, result)
            if chart:
                charts.append(chart)
        if result.design in (Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL):
            row, chart = _put_crosstab(model, row, result)
            if chart:
                charts.append(chart)
        spread = technical.spread_check(result)
        if spread is not None:
            # The check's name runs on into the empty column C.
            model.put(row, 0, "Spread check", "label")
            model.put(row, 1, explain.spread_name(spread))
            model.put(row, 3, "statistic", "muted")
            _value(model, row, 4, spread.get("statistic"), "number", False)
            model.put(row, 5, "p", "muted")
            _value(model, row, 6, spread.get("p_value"), "p_value", False)
            row += 2
        samples = _samples_for(result, context)
        units = words_context.units_for(context, result.outcome)
        if samples and result.design == Design.TWO_CONTINUOUS:
            for name, values in samples.items():
                row, chart = _put_histogram(
                    model,
                    row,
                    f"{name}: distribution",
                    {name: values},
                    {},
                    words_context.units_for(context, name),
                )
                charts.append(chart)
        elif samples:
            row, chart = _put_histogram(
                model, row, f"{result.outcome}: distribution by group", samples, n_cells, units
            )
            charts.append(chart)
        for chart in charts:  # under the tables, each in its own empty rows
            chart.anchor = _a1(row, CHART_COL)
            chart.width_cells = CHART_COLS
            chart.height_rows = CHART_ROWS
            row += CHART_ROWS + 1
        model.charts.extend(charts)
        row += 1
    if not results:
        model.put(row, 0, "No analyses were run.", "muted")
    return model


# ---------------------------------------------------------------- data notes

# Narrow enough (95 units) to print portrait at a readable scale; long text wraps.
NOTE_COLUMNS: tuple[tuple[str, float], ...] = (
    ("Sheet", 14),
    ("Cell", 7),
    ("Column", 18),
    ("Value", 14),
    ("What was wrong", 20),
    ("Action", 22),
)


def notes_sheet(
    table_notes: Sequence[DataNote], extra_notes: Sequence[str], context: ReportContext
) -> SheetModel:
    """The data-notes sheet: every skipped or converted cell, linked to the cell itself.

    Parameters
    ----------
    table_notes : sequence of DataNote
        Notes made while reading (``Table.notes``) and by the engine.
    extra_notes : sequence of str
        Plain sentences about the run (e.g. incomplete pairs) listed below.
    context : ReportContext

    Returns
    -------
    SheetModel
        Kind "notes"; each cell address links to ``'<sheet>'!<cell>``.
    """
    model = SheetModel(name=SHEET_NAMES["notes"], kind="notes")
    model.fit_to_width = True
    model.page_numbers = True
    last = column_letter(len(NOTE_COLUMNS) - 1)
    model.put(0, 0, "statmargin data notes", "title")
    model.put(
        1,
        0,
        f"{len(table_notes)} cells were skipped or converted while reading; each cell address links to the cell.",
        "wrap",
    )
    model.merged.append(f"A2:{last}2")
    header = 3
    model.put_row(header, [name for name, _ in NOTE_COLUMNS], "header")
    model.freeze = (header + 1, 0)
    model.widths = {i: width for i, (_, width) in enumerate(NOTE_COLUMNS)}
    row = header + 1
    for note in table_notes:
        kind = getattr(note.kind, "value", str(note.kind))
        model.put(row, 0, note.sheet, "wrap")
        model.put(row, 1, note.cell, "link", link=f"{quote_sheet(note.sheet)}!{note.cell}")
        model.put(row, 2, note.column, "wrap")
        model.put(row, 3, note.value)
        model.put(row, 4, kind, "wrap")
        model.put(row, 5, note.action, "wrap")
        row += 1
    if not table_notes:
        model.put(row, 0, "Every cell used was read as it stood.", "muted")
        row += 1
    if extra_notes:
        row += 1
        model.put(row, 0, "Other notes", "subtitle")
        row += 1
        for text in extra_notes:
            model.put(row, 0, text, "wrap")  # merged across the table so it prints whole
            model.merged.append(f"A{row + 1}:{last}{row + 1}")
            row += 1
    return model


# ---------------------------------------------------------------- run log

LOG_COLUMNS: tuple[tuple[str, str, float], ...] = (
    # (header, run_info key, width)
    ("Time (UTC)", "time", 21),
    ("Tool version", "version", 12),
    ("Workbook", "workbook", 24),
    ("Data sheet", "data_sheet", 18),
    ("Settings", "settings", 48),
    ("Rows read", "rows_read", 10),
    ("Rows used", "rows_used", 10),
    ("Analyses run", "analyses", 12),
    ("Data fingerprint", "fingerprint", 24),
)
_LOG_COUNTS = ("rows_read", "rows_used")


def run_info(context: ReportContext, results: Sequence[Result]) -> dict[str, Any]:
    """This run's log row as a dict keyed like ``LOG_COLUMNS``."""
    return {
        "time": _run_time_text(context),
        "version": context.version,
        "workbook": context.workbook,
        "data_sheet": context.data_sheet,
        "settings": _settings_text(context.settings),
        "rows_read": context.rows_read,
        "rows_used": context.rows_used,
        "analyses": len(results),
        "fingerprint": context.fingerprint,
    }


def log_sheet(
    previous_rows: Sequence[Sequence[Any] | Mapping[str, Any]], run_info: Mapping[str, Any]
) -> SheetModel:
    """The run log: earlier runs' rows (read back by the pipeline) and this run's row.

    Parameters
    ----------
    previous_rows : sequence
        Earlier rows, each a sequence in ``LOG_COLUMNS`` order or a mapping keyed by
        the run-info keys (or by the headers).
    run_info : mapping
        This run, keyed like ``LOG_COLUMNS`` (see ``run_info()``).

    Returns
    -------
    SheetModel
        Kind "log", oldest run first.
    """
    model = SheetModel(name=SHEET_NAMES["log"], kind="log")
    model.landscape = True
    model.fit_to_width = True
    model.page_numbers = True
    model.put(0, 0, "statmargin run log", "title")
    model.put(1, 0, "One row per run, oldest first.", "muted")
    header = 3
    model.put_row(header, [h for h, _, _ in LOG_COLUMNS], "header")
    model.freeze = (header + 1, 0)
    model.widths = {i: width for i, (_, _, width) in enumerate(LOG_COLUMNS)}
    row = header + 1
    for old in list(previous_rows) + [run_info]:
        for col, (heading, key, _) in enumerate(LOG_COLUMNS):
            if isinstance(old, Mapping):
                value = old.get(key, old.get(heading))
            else:
                value = old[col] if col < len(old) else None
            if key in _LOG_COUNTS + ("analyses",) and _finite(value):
                model.put(row, col, int(value), "integer", is_count=key in _LOG_COUNTS)
            else:
                model.put(row, col, value, "text")
        row += 1
    return model


def parse_log_rows(rows: Iterable[Sequence[Any]]) -> list[list[Any]]:
    """Earlier runs' rows from a log sheet as read back (rows of raw cell values).

    Parameters
    ----------
    rows : iterable of sequences
        The old log sheet's rows from row 1 (title, note, header, data).

    Returns
    -------
    list of list
        Each run's row in ``LOG_COLUMNS`` order (padded with None), oldest first;
        rows above the header and blank rows are dropped.
    """
    width = len(LOG_COLUMNS)
    out: list[list[Any]] = []
    seen_header = False
    for row in rows:
        cells = list(row)[:width]
        if not seen_header:
            seen_header = bool(cells) and cells[0] == LOG_COLUMNS[0][0]
            continue
        if all(c is None or (isinstance(c, str) and not c.strip()) for c in cells):
            continue
        out.append(cells + [None] * (width - len(cells)))
    return out


def build_sheets(
    results: Sequence[Result],
    table: Table | None = None,
    context: ReportContext | None = None,
    *,
    previous_log: Sequence[Sequence[Any] | Mapping[str, Any]] = (),
    extra_notes: Sequence[str] = (),
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

    Returns
    -------
    list of SheetModel
        Results, shape checks, data notes and run log, in that order.

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
        if pairs:
            extra.append(explain.incomplete_pairs_note(result, len(pairs), context))
    if context.share_mode:
        family = explain.count_comparisons(results)
        results = suppress(list(results), context.share_min_count)
        explain.apply(results, context.settings, context, n_comparisons=family)
    shape = shape_sheet(results, context)
    models = [
        results_sheet(results, context, shape.anchors),
        shape,
        notes_sheet(notes, extra, context),
        log_sheet(previous_log, run_info(context, results)),
    ]
    if context.share_mode:
        models = suppress(models, context.share_min_count)
    return models
