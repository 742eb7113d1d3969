"""The shape-check sheet: how each test was chosen, with group tables, tables of counts and charts."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from ..io.addresses import column_letter
from ..results import Result
from ..vocabulary import Design
from ..vocabulary.codes import Hidden
from ..words import context as words_context
from ..words import explain, sheet_texts, technical
from ..words.questions import EVENT_DESIGNS
from .context import SHEET_NAMES, ReportContext, _a1, _finite, _num, _value, analysis_key
from .event_tables import put_event_table
from .model import Cell, Chart, ChartSeries, SheetModel

# ---------------------------------------------------------------- shape sheet

MIN_BINS = 8  # histogram bins: fewer hide the shape, more make noise (common practice)
MAX_BINS = 15

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
    counted = 0
    expected_rows: list[tuple[int, Any]] = []
    for g in result.groups:
        if not isinstance(g, Mapping):
            continue
        label = str(g.get("label", ""))
        count = g.get("count", g.get("n"))
        model.put(row, 0, label, "label")
        _count_cell(model, row, 1, count, suppressed=bool(g.get("suppressed")))
        counted += int(count) if _finite(count) else 0
        share = _num(g.get("share"))
        if isinstance(count, Hidden):
            model.put(row, 2, "suppressed", "suppressed")  # a share with the total gives the count back
        else:
            model.put(row, 2, share, "percent" if share is not None else "text")
        stated = _num(against.get(label, against.get(g.get("label"))) if against else None)
        model.put(row, 3, stated, "percent" if stated is not None else "text")
        expected_rows.append((row, g.get("expected")))
        model.count_dependents[(row, 1)] = [(row, 2)]
        count_cells.append((row, 1))
        row += 1
    model.put(row, 0, "Total", "label")
    # The analysis's n: adding up the shown counts would give a wrong total once one is hidden.
    total = result.n if _finite(result.n) or isinstance(result.n, Hidden) else counted
    _count_cell(model, row, 1, total)
    total_cell = (row, 1)
    for r, expected in expected_rows:
        value = _num(expected)
        if value is None and _finite(model.cells[(r, 3)].value) and _finite(total):
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
    copies = [(bar_top + 1, 1 + i) for i in range(len(count_cells))]
    for i, (r, _) in enumerate(count_cells):
        col = 1 + i
        model.put(bar_top, col, model.cells[(r, 0)].value, "header")
        observed = model.cells[(r, 1)]
        model.cells[(bar_top + 1, col)] = Cell(
            observed.value, observed.style, None, observed.is_count
        )
        # One hidden level empties the whole observed bar: the others alone would be drawn as 100%.
        model.count_dependents.setdefault((r, 1), []).extend(copies)
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
        title=sheet_texts.shares_chart_title(result.outcome),
        categories=f"{_a1(bar_top + 1, 0, True)}:{_a1(bar_top + 2, 0, True)}",
        series=series,
        anchor="",
        y_title="share of records",
    )
    return bar_top + 4, chart


def _count_cell(model: SheetModel, row: int, col: int, value: Any, *, suppressed: bool = False) -> None:
    """A count: a whole number, a count hidden by sharing mode (its own mark), or empty."""
    if isinstance(value, Hidden):
        model.put(row, col, value)
    elif _finite(value):
        model.put(row, col, int(value), "integer", is_count=True)
    elif suppressed:
        model.put(row, col, "suppressed", "suppressed", is_count=True)
    else:
        model.put(row, col, None)


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


def _margins(result: Result, observed: list[list[Any]], row_labels: list[str]) -> tuple[list[Any], list[Any], Any]:
    """Row totals, column totals and the grand total of a table, hidden where sharing mode hid them.

    A total is the sum of its cells when every cell is shown; else the total the
    result gives (a group's n, or the margins sharing mode wrote beside the
    table), else a hidden mark: never the sum of the shown cells alone.
    """
    marks = [v for line in observed for v in line if isinstance(v, Hidden)]
    floor = marks[0].floor if marks else 0
    given = result.extra.get("observed") if isinstance(result.extra, Mapping) else None
    given = given if isinstance(given, Mapping) else {}
    groups = {str(g.get("label")): g for g in result.groups if isinstance(g, Mapping)}

    def known(value: Any) -> bool:
        return _finite(value) or isinstance(value, Hidden)

    def total(cells: list[Any], fallback: Any) -> Any:
        if all(_finite(v) for v in cells):
            return int(sum(cells))
        return fallback if known(fallback) else Hidden(floor, small=False)

    rows = []
    for i, label in enumerate(row_labels):
        listed = given.get("row_totals")
        group = groups.get(label, {})
        fallback = listed[i] if isinstance(listed, Sequence) and i < len(listed) else next(
            (group[k] for k in ("n", "count", "total") if known(group.get(k))), None)
        rows.append(total(list(observed[i]), fallback))
    columns = []
    for j in range(len(observed[0])):
        listed = given.get("col_totals")
        fallback = listed[j] if isinstance(listed, Sequence) and j < len(listed) else None
        columns.append(total([line[j] for line in observed], fallback))
    grand = result.n if known(result.n) and not all(_finite(v) for v in rows) else None
    return rows, columns, total(rows, grand) if grand is None else grand


def _put_crosstab(model: SheetModel, row: int, result: Result) -> tuple[int, Chart | None]:
    """Observed counts with totals (and expected counts), plus 100% bars per row."""
    table = _crosstab(result)
    if table is None:
        return row, None
    observed, row_labels, col_labels = table
    row_sums, col_sums, grand_total = _margins(result, observed, row_labels)
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
            _count_cell(model, r, 1 + j, observed[i][j])
            line.append((r, 1 + j))
        _count_cell(model, r, 1 + n_cols, row_sums[i])
        row_total_cells.append((r, 1 + n_cols))
        body_cells.append(line)
        model.count_sets.append(line + [(r, 1 + n_cols)])
    total_row = top + 1 + len(row_labels)
    model.put(total_row, 0, "Total", "label")
    col_total_cells = []
    for j in range(n_cols):
        _count_cell(model, total_row, 1 + j, col_sums[j])
        col_total_cells.append((total_row, 1 + j))
        model.count_sets.append([line[j] for line in body_cells] + [(total_row, 1 + j)])
    grand = (total_row, 1 + n_cols)
    _count_cell(model, *grand, grand_total)
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
        model.put(row, 0, sheet_texts.EXPECTED_IF_UNRELATED, "subtitle")
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
    first, drawn = top + 1, top
    if any(model.cells[c].style == "suppressed" for line in body_cells for c in line):
        # 100% bars of a row with a hidden count would show the other counts as the whole row.
        model.put(row, 0, sheet_texts.CHART_ROWS_SHOWN, "subtitle")
        model.put_row(row + 1, [""] + col_labels, "header")
        drawn, first = row + 1, row + 2
        for i, label in enumerate(row_labels):
            model.put(first + i, 0, label, "label")
            for j, cell in enumerate(body_cells[i]):
                source = model.cells[cell]
                model.cells[(first + i, 1 + j)] = Cell(source.value, source.style, None, source.is_count)
                # Each cell of a row hides the row's whole copy with it.
                model.count_dependents.setdefault(cell, []).extend((first + i, 1 + k) for k in range(n_cols))
        row = first + len(row_labels) + 1
    series = [
        ChartSeries(
            col_labels[j], f"{_a1(first, 1 + j, True)}:{_a1(first + len(row_labels) - 1, 1 + j, True)}"
        )
        for j in range(n_cols)
    ]
    chart = Chart(
        kind="percent_bar",
        title=f"{result.outcome or 'Outcome'} by {result.exposure or 'group'}",
        categories=f"{_a1(first, 0, True)}:{_a1(first + len(row_labels) - 1, 0, True)}",
        series=series,
        anchor="",
        y_title="share of records",
    )
    del drawn
    return row, chart


def bin_edges(values: Sequence[float] | np.ndarray, counts: Sequence[float] | np.ndarray | None = None) -> np.ndarray:
    """Shared histogram bin edges: NumPy's "auto" rule held to 8 to 15 bins.

    Parameters
    ----------
    values : sequence of float
        All values to be binned (every group together, so groups share bins).
    counts : sequence of float, optional
        Records per value (a count column); the edges are those of the values
        repeated that many times.

    Returns
    -------
    numpy.ndarray
        Increasing edges; a single bin around the value when all values are equal.

    Notes
    -----
    "auto" is the larger-bin choice of the Sturges and Freedman-Diaconis rules
    (NumPy documentation); its count is clamped to 8..15 and the edges are then
    spread evenly over the data range. With counts the same rule is computed
    from the counted values (``_auto_bins``), without repeating them.
    """
    data = np.asarray(values, dtype=float).ravel()
    weights = None if counts is None else np.asarray(counts, dtype=float).ravel()
    keep = np.isfinite(data) if weights is None else np.isfinite(data) & np.isfinite(weights) & (weights > 0)
    data = data[keep]
    if data.size == 0:
        return np.array([0.0, 1.0])
    low, high = float(data.min()), float(data.max())
    if low == high:
        return np.array([low - 0.5, high + 0.5])
    if weights is None:
        count = len(np.histogram_bin_edges(data, bins="auto")) - 1
    else:
        count = _auto_bins(data, weights[keep])
    count = min(MAX_BINS, max(MIN_BINS, count))
    return np.linspace(low, high, count + 1)


def _auto_bins(values: np.ndarray, counts: np.ndarray) -> int:
    """The number of bins NumPy's "auto" rule gives the values repeated ``counts`` times.

    NumPy 2: width = min(max(FD, sqrt / 2), Sturges), with FD = 2 IQR n^(-1/3),
    sqrt = range / sqrt(n) and Sturges = range / (log2 n + 1); bins = ceil(range / width).
    """
    from ..stats.weighted_shape import quantiles

    n = float(counts.sum())
    spread = float(values.max() - values.min())
    q75, q25 = quantiles(values, counts, [0.75, 0.25])
    fd = 2.0 * float(q75 - q25) * n ** (-1.0 / 3.0)
    width = min(max(fd, spread / np.sqrt(n) / 2.0), spread / (np.log2(n) + 1.0))
    return int(np.ceil(spread / width)) if width else 1


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
    samples: Mapping[str, Any],
    n_cells: Mapping[str, tuple[int, int]],
    units: str,
) -> tuple[int, Chart]:
    """Counts per shared bin for each group, and a column chart over them."""
    labels = list(samples)
    values = {label: _values_and_counts(samples[label]) for label in labels}
    weighted = any(c is not None for _, c in values.values())
    # One array per group, joined once: a million-row outcome stays in NumPy, never in Python floats.
    edges = bin_edges(
        np.concatenate([values[label][0] for label in labels]),
        np.concatenate([_counts_or_ones(*values[label]) for label in labels]) if weighted else None,
    )
    model.put_row(row, ["Bin"] + labels, "header")
    bin_text = _bin_labels(edges)
    top = row + 1
    for i, text in enumerate(bin_text):
        model.put(top + i, 0, text, "label")
    for j, label in enumerate(labels):
        data, weights = values[label]
        keep = np.isfinite(data)
        counts, _ = np.histogram(data[keep], bins=edges, weights=None if weights is None else weights[keep])
        column = []
        for i, count in enumerate(counts):
            model.put(top + i, 1 + j, int(count), "integer", is_count=True)
            column.append((top + i, 1 + j))
        if label in n_cells:  # the bins add up to the group's n shown above
            model.count_sets.append(column + [n_cells[label]])
            # A group whose n is hidden has its whole distribution hidden with it.
            model.count_dependents.setdefault(n_cells[label], []).extend(column)
        else:  # no n above: the bins' total goes under them, so a hidden bin is never the only unknown
            total = (top + len(bin_text), 1 + j)
            model.put(*total, int(counts.sum()), "integer", is_count=True)
            model.count_sets.append(column + [total])
    bottom = top + len(bin_text) - 1
    if any(label not in n_cells for label in labels):
        model.put(bottom + 1, 0, "Total", "label")
        bottom_table = bottom + 1
    else:
        bottom_table = bottom
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
    return bottom_table + 2, chart


def _values_and_counts(sample: Any) -> tuple[np.ndarray, np.ndarray | None]:
    """A sample's values and, for counted rows (``{"values", "counts"}``), the records per value."""
    if isinstance(sample, Mapping):
        return _floats(sample.get("values", ())), _floats(sample.get("counts", ()))
    return _floats(sample), None


def _floats(values: Any) -> np.ndarray:
    return np.asarray(values, dtype=float).ravel()


def _counts_or_ones(values: np.ndarray, counts: np.ndarray | None) -> np.ndarray:
    return counts if counts is not None else np.ones(len(values))


def _samples_for(result: Result, context: ReportContext) -> dict[str, Any]:
    samples = context.samples.get(analysis_key(result))
    if samples is None and isinstance(result.extra, Mapping):
        samples = result.extra.get("values")
    if not isinstance(samples, Mapping):
        return {}
    # Arrays are passed on as they are (no copy); a million values as a list would cost ~30 MB per group.
    return {
        str(k): v
        for k, v in samples.items()
        if isinstance(v, (Sequence, np.ndarray, Mapping))
    }


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
    model.put(1, 0, sheet_texts.SHAPE_INTRO, "muted")
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
        elif result.design in EVENT_DESIGNS:
            row, chart = put_event_table(model, row, result)
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
        model.put(row, 0, sheet_texts.SHAPE_NO_ANALYSES, "muted")
    return model


