"""The periods sheet: for each outcome over time, the series table and a native line chart beside it.

One block per period result, top to bottom, in the run's order:

1. the question, then the trend in one line and where the control limits come from;
2. the table: period, n, the share (or mean or median) with its interval, the
   control chart's centre line and limits, and a flag column saying which
   period is unusual and by which rule (or partial, small, empty);
3. a line chart beside the table: the series with its interval as error bars,
   the centre line, and the limits dashed.

Counts are marked for sharing mode: each period's n is a count, and its share,
interval and limits reveal it (the limits of a p chart are computed from n).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from ..io.addresses import column_letter
from ..results import PeriodPoint, Result
from ..vocabulary import ChartKind, Design
from ..vocabulary.codes import Hidden
from ..words import explain, period_readings, periods_sheet_words
from ..words.period_words import CHART_NAMES, RULE_NAMES
from .context import SHEET_NAMES, ReportContext
from .model import Chart, ChartSeries, SheetModel

KIND = "periods"
OVER_TIME = (Design.PERIOD_SHARES, Design.PERIOD_CENTRE)
# (header key, width); the value column's header names the share or the centre.
COLUMNS: tuple[tuple[str, float], ...] = (
    ("period", 11),
    ("n", 8),
    ("value", 13),
    ("ci_low", 10),
    ("ci_high", 10),
    ("centre", 11),
    ("lower", 11),
    ("upper", 11),
    ("flag", 58),
)
COL = {key: i for i, (key, _) in enumerate(COLUMNS)}
CHART_COL = len(COLUMNS) + 1  # one empty column between the table and its chart
CHART_WIDTH = 8
CHART_MIN_ROWS = 16


def has_periods(results: Sequence[Result]) -> bool:
    """Whether any result has a series to show."""
    return any(r.design in OVER_TIME and r.periods for r in results)


def _style(result: Result, context: ReportContext) -> str:
    if result.design == Design.PERIOD_SHARES:
        return "percent"
    own = context.decimals.get(result.outcome or "")
    return "number" if own is None else f"fixed{max(0, min(4, own + 1))}"


def _has_rows(point: PeriodPoint) -> bool:
    """Whether a period has rows (a count hidden by sharing mode is at least one)."""
    return isinstance(point.n, Hidden) or point.n > 0


def _flag(result: Result, point: PeriodPoint) -> str:
    """Why a period stands out: the rules it met, or partial, small, empty."""
    words = []
    for flag in result.unusual or []:
        if flag.period == point.period:
            side = periods_sheet_words.side(point.value, point.centre)
            words.append(f"{side}{RULE_NAMES[flag.rule]}")
    if point.partial:
        words.append(periods_sheet_words.PARTIAL)
    if not _has_rows(point):
        words.append(periods_sheet_words.NO_ROWS)
    elif point.few:
        words.append(periods_sheet_words.FEW_ROWS)
    return "; ".join(words)


def _baseline_line(result: Result) -> str:
    """'Control limits: p chart (Shewhart), from the 6 periods before 2026-07.' or why there are none."""
    kind = result.extra.get("chart") if isinstance(result.extra, dict) else None
    latest = result.extra.get("latest")
    points = result.periods or []
    before = sum(1 for p in points if p.period < str(latest) and _has_rows(p)) if latest else 0
    if kind is None:
        return periods_sheet_words.NO_LIMITS
    return periods_sheet_words.limits_line(CHART_NAMES[ChartKind(kind)], before, str(latest))


def _block(model: SheetModel, row: int, result: Result, context: ReportContext, family: int) -> int:
    """One result's block from ``row``; returns the first free row after it."""
    points = result.periods or []
    model.put(row, 0, explain.question(result), "subtitle")
    row += 1
    if result.skipped is not None:
        line = explain.reading(result, settings=context.settings, context=context, n_comparisons=family)
    else:
        line, _, _ = period_readings.trend_answer(result, context.settings, context, family)
    model.put(row, 0, line, "wrap")
    model.merged.append(f"A{row + 1}:{column_letter(len(COLUMNS) - 1)}{row + 1}")
    row += 1
    model.put(row, 0, _baseline_line(result), "muted")
    row += 1
    header = row
    value_name = periods_sheet_words.value_header(result)
    titles = periods_sheet_words.column_headers(value_name)
    model.put_row(header, [titles[key] for key, _ in COLUMNS], "header")
    style = _style(result, context)
    first = header + 1
    for i, point in enumerate(points):
        r = first + i
        model.put(r, COL["period"], point.period)
        model.put(r, COL["n"], point.n if isinstance(point.n, Hidden) else int(point.n), "integer", is_count=True)
        dependents = []
        for key, value in (("value", point.value), ("ci_low", point.ci_low), ("ci_high", point.ci_high),
                           ("centre", point.centre), ("lower", point.lower_limit), ("upper", point.upper_limit)):
            if value is not None:
                model.put(r, COL[key], float(value), style)
                dependents.append((r, COL[key]))
            elif key == "value" and _has_rows(point):
                model.put(r, COL[key], periods_sheet_words.HIDDEN, "suppressed")
        model.count_dependents[(r, COL["n"])] = dependents
        flag = _flag(result, point)
        if flag:
            model.put(r, COL["flag"], flag, "caution" if any(u.period == point.period for u in result.unusual or [])
                      else "muted")
    last = first + max(len(points), 1) - 1
    if points:
        model.charts.append(_chart(result, value_name, first, last, header, style, context))
    chart_rows = max(CHART_MIN_ROWS, last - header + 3)
    return max(last + 1, header + chart_rows) + 2


def _chart(result: Result, value_name: str, first: int, last: int, header: int, style: str,
           context: ReportContext) -> Chart:
    def span(key: str) -> str:
        letter = column_letter(COL[key])
        return f"${letter}${first + 1}:${letter}${last + 1}"

    titles = periods_sheet_words.column_headers(value_name)
    series = [
        ChartSeries(value_name, span("value"), "main"),
        ChartSeries(titles["ci_low"], span("ci_low"), "band"),
        ChartSeries(titles["ci_high"], span("ci_high"), "band"),
    ]
    if any(p.centre is not None for p in result.periods or []):
        series += [
            ChartSeries(titles["centre"], span("centre"), "centre"),
            ChartSeries(titles["lower"], span("lower"), "limit"),
            ChartSeries(titles["upper"], span("upper"), "limit"),
        ]
    bounds = axis_bounds(result.periods or [], shares=style == "percent")
    return Chart(
        kind="line",
        title=periods_sheet_words.chart_title(result, value_name),
        categories=span("period"),
        series=series,
        anchor=f"{column_letter(CHART_COL)}{header + 1}",
        width_cells=CHART_WIDTH,
        height_rows=max(CHART_MIN_ROWS, last - header + 1),
        y_title=periods_sheet_words.axis_title(result, context),
        y_format="0%" if style == "percent" else None,
        y_min=bounds.get("y_min"),
        y_max=bounds.get("y_max"),
    )


def axis_bounds(points: Sequence[PeriodPoint], *, shares: bool) -> dict[str, float]:
    """Value-axis bounds that frame the series, its intervals and limits (round numbers).

    Spreadsheet programs start a line chart's axis at zero, which flattens a
    share moving between 65% and 85% into a thin line; the bounds here leave a
    step of room around what is drawn.

    Examples
    --------
    >>> axis_bounds([PeriodPoint("2026-01", 150, 0.78, 0.71, 0.84, lower_limit=0.68, upper_limit=0.89)], shares=True)
    {'y_min': 0.6, 'y_max': 0.9}
    """
    numbers = [v for p in points for v in (p.value, p.ci_low, p.ci_high, p.lower_limit, p.upper_limit)
               if v is not None and math.isfinite(v)]
    if not numbers:
        return {}
    low, high = min(numbers), max(numbers)
    span = high - low
    step = 0.1 if shares else (10 ** math.floor(math.log10(span)) if span > 0 else max(abs(high), 1.0))
    y_min = math.floor(low / step - 1e-9) * step
    y_max = math.ceil(high / step + 1e-9) * step
    if y_max - y_min < 2 * step:
        y_min -= step if y_min - step >= 0 or low < 0 else 0
    if low >= 0:
        y_min = max(y_min, 0.0)
    if shares:
        y_max = min(y_max, 1.0)
    return {"y_min": round(y_min, 10), "y_max": round(y_max, 10)}


def periods_sheet(results: Sequence[Result], context: ReportContext) -> SheetModel:
    """The periods sheet for a run's results over time (an empty model when there are none).

    Parameters
    ----------
    results : sequence of Result
        The run's results; those of the period designs get a block each.
    context : ReportContext

    Returns
    -------
    SheetModel
        Kind "periods"; ``anchors["analysis_<i>"]`` is each block's first cell,
        by the result's position in ``results``.
    """
    model = SheetModel(name=SHEET_NAMES[KIND], kind=KIND)
    model.put(0, 0, periods_sheet_words.TITLE, "title")
    model.put(1, 0, periods_sheet_words.INTRO, "wrap")
    model.merged.append(f"A2:{column_letter(len(COLUMNS) - 1)}2")  # wrapped over the table, not the chart
    model.widths = {i: width for i, (_, width) in enumerate(COLUMNS)}
    model.widths[len(COLUMNS)] = 2
    model.landscape = True
    model.fit_to_width = True
    model.page_numbers = True
    family = explain.count_comparisons(results)
    row = 3
    for index, result in enumerate(results):
        if result.design not in OVER_TIME or not result.periods:
            continue
        model.anchors[f"analysis_{index}"] = f"A{row + 1}"
        row = _block(model, row, result, context, family)
    if not model.anchors:
        model.put(row, 0, periods_sheet_words.NOTHING_OVER_TIME, "muted")
    return model


def sheet_if_any(results: Sequence[Result], context: ReportContext, *, always: bool = False) -> list[Any]:
    """The periods sheet in a list when the run has results over time (or ``always``), else an empty list.

    ``always`` replaces a periods sheet an earlier run wrote, so it never shows
    an old series after the period role was taken away.
    """
    return [periods_sheet(results, context)] if always or has_periods(results) else []
