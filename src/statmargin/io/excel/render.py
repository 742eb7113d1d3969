"""Put a sheet model into an Excel sheet through xlwings, in few, bulk calls.

Values go in one call per block of rows; each format (number format, bold,
colours, fill, borders, wrap, alignment) is set once per rectangle of cells
that share it; widths once per run of equal columns, heights once per run of
equal rows. The look of every style key is ``sheets.looks.LOOKS``, the same
the file writer uses, and row heights come from ``sheets.layout``, so both
back ends give the same sheet.

What xlwings' open-source core cannot do from inside desktop Excel is left
out and said in the README: frozen panes (``Sheet.freeze_panes`` works only
in xlwings' licensed remote modes, so it is tried and skipped), a dropdown's
input prompt, underlined link text, and print layout (landscape, fit to page
width, page-number footer, page breaks).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from ...errors import WriteError
from ...sheets.layout import parse_cell_ref, resolve_link, wrapped_row_heights
from ...sheets.looks import INPUT_BORDER, LOOKS, RULE, SERIES_COLOURS, SLATE, number_format_code
from ...sheets.model import Chart, SheetModel
from ...words import excel_messages
from ..addresses import column_letter
from .cells import Rect, cell_grid, rectangles

# Cells per call when values are written or read: large enough that a 100,000-row
# sheet takes a handful of calls, small enough that one call's data stays a few MB.
CELLS_PER_CALL = 250_000

# xlwings' own words for the attributes set below (checked against xlwings by the tests).
CHART_TYPES = {"column": "column_clustered", "percent_bar": "bar_stacked_100", "line": "line_markers"}
PLOT_BY = "columns"
LEGEND_POSITION = "bottom"
LINE_STYLE = "continuous"
LINE_WEIGHT = "thin"
BOX_SIDES = "all"
RULE_SIDES = ("edge_bottom", "inside_horizontal")
VERTICAL = "top"
DEFAULT_BASE_FONT_SIZE = 11.0


def hex_colour(argb: str) -> str:
    """An ARGB colour of ``sheets.looks`` as the ``#RRGGBB`` text xlwings takes.

    Examples
    --------
    >>> hex_colour("FF2F3B45")
    '#2F3B45'
    """
    return "#" + argb[-6:]


def cell_range(sheet: Any, rect: Rect) -> Any:
    """The xlwings range of a 0-based rectangle."""
    r1, c1, r2, c2 = rect
    return sheet.range((r1 + 1, c1 + 1), (r2 + 1, c2 + 1))


def style_groups(model: SheetModel, base_font_size: float) -> dict[tuple[str, Any], list[tuple[int, int]]]:
    """Cells by (attribute, value) for every attribute that differs from the sheet's baseline.

    Parameters
    ----------
    model : SheetModel
        The sheet.
    base_font_size : float
        The workbook's default font size; titles and subtitles are a few points larger.

    Returns
    -------
    dict
        ``(attribute, value) -> cells``; attributes are ``number_format``, ``bold``,
        ``italic``, ``font_color``, ``font_size``, ``fill``, ``border``, ``wrap`` and
        ``horizontal``.

    Raises
    ------
    WriteError
        For a style key that has no look.
    """
    groups: dict[tuple[str, Any], list[tuple[int, int]]] = {}
    for rc, cell in model.cells.items():
        look = LOOKS.get(cell.style)
        if look is None:
            raise WriteError(excel_messages.unknown_style(cell.style, model.name))
        attrs: list[tuple[str, Any]] = []
        code = number_format_code(cell.style)
        if code != "General":
            attrs.append(("number_format", code))
        if look.font.bold:
            attrs.append(("bold", True))
        if look.font.italic:
            attrs.append(("italic", True))
        if look.font.color != SLATE:
            attrs.append(("font_color", hex_colour(look.font.color)))
        if look.font.size_step:
            attrs.append(("font_size", base_font_size + look.font.size_step))
        if look.fill:
            attrs.append(("fill", hex_colour(look.fill)))
        if look.border:
            attrs.append(("border", look.border))
        if look.wrap:
            attrs.append(("wrap", True))
        if look.horizontal:
            attrs.append(("horizontal", look.horizontal))
        for key in attrs:
            groups.setdefault(key, []).append(rc)
    return groups


def _apply(sheet: Any, rect: Rect, attribute: str, value: Any) -> None:
    rng = cell_range(sheet, rect)
    if attribute == "number_format":
        rng.number_format = value
    elif attribute == "bold":
        rng.font.bold = value
    elif attribute == "italic":
        rng.font.italic = value
    elif attribute == "font_color":
        rng.font.color = value
    elif attribute == "font_size":
        rng.font.size = value
    elif attribute == "fill":
        rng.color = value
    elif attribute == "border":
        if value == "box":
            rng.borders.set(BOX_SIDES, line_style=LINE_STYLE, weight=LINE_WEIGHT, color=hex_colour(INPUT_BORDER))
        else:  # a rule below each cell
            sides = list(RULE_SIDES) if rect[2] > rect[0] else [RULE_SIDES[0]]
            rng.borders.set(sides, line_style=LINE_STYLE, weight=LINE_WEIGHT, color=hex_colour(RULE))
    elif attribute == "wrap":
        rng.wrap_text = value
    elif attribute == "horizontal":
        rng.horizontal_alignment = value


def runs(values: dict[int, float]) -> list[tuple[int, int, float]]:
    """Consecutive indexes with equal values as (first, last, value).

    Examples
    --------
    >>> runs({0: 30.0, 1: 30.0, 2: 12.0, 5: 12.0})
    [(0, 1, 30.0), (2, 2, 12.0), (5, 5, 12.0)]
    """
    out: list[tuple[int, int, float]] = []
    for index in sorted(values):
        value = float(values[index])
        if out and out[-1][1] == index - 1 and out[-1][2] == value:
            out[-1] = (out[-1][0], index, value)
        else:
            out.append((index, index, value))
    return out


def write_values(sheet: Any, grid: list[list[Any]]) -> None:
    """Write rows of values from A1, in as few calls as ``CELLS_PER_CALL`` allows."""
    if not grid or not grid[0]:
        return
    n_cols = len(grid[0])
    step = max(1, CELLS_PER_CALL // n_cols)
    for start in range(0, len(grid), step):
        block = grid[start : start + step]
        cell_range(sheet, (start, 0, start + len(block) - 1, n_cols - 1)).value = block


def frozen_area(rows: int, cols: int) -> str:
    """The frozen top-left area in the form ``FreezePanes.freeze_at`` takes.

    Examples
    --------
    >>> frozen_area(3, 0), frozen_area(0, 2), frozen_area(3, 1)
    ('1:3', 'A:B', 'A1:A3')
    """
    if rows and cols:
        return f"A1:{column_letter(cols - 1)}{rows}"
    if rows:
        return f"1:{rows}"
    return f"A:{column_letter(cols - 1)}"


def render(
    sheet: Any,
    model: SheetModel,
    kind_to_name: dict[str, str],
    *,
    base_font_size: float = DEFAULT_BASE_FONT_SIZE,
    on_note: Callable[[str], None] | None = None,
) -> None:
    """Write a sheet model into an empty xlwings sheet.

    Parameters
    ----------
    sheet : xlwings.Sheet
        A new, empty sheet.
    model : SheetModel
        What to put there.
    kind_to_name : dict
        Tool sheet kind -> final sheet name, for links between tool sheets.
    base_font_size : float
        The workbook's default font size.
    on_note : callable, optional
        Called with a sentence for anything that could not be written as modelled.

    Raises
    ------
    WriteError
        For a style key, link or chart that cannot be written.
    """
    note = on_note or (lambda _: None)
    links = {rc: resolve_link(cell.link, kind_to_name) for rc, cell in model.cells.items() if cell.link}
    n_rows, n_cols = model.n_rows, model.n_cols
    if model.cells:
        write_values(sheet, cell_grid(model.cells, n_rows, n_cols, links))
        whole = cell_range(sheet, (0, 0, n_rows - 1, n_cols - 1))
        whole.font.color = hex_colour(SLATE)
        whole.vertical_alignment = VERTICAL
        groups = style_groups(model, base_font_size)
        for attribute, value in sorted(groups, key=lambda k: (k[0], str(k[1]))):
            for rect in rectangles(groups[(attribute, value)]):
                _apply(sheet, rect, attribute, value)
    for first, last, width in runs(model.widths):
        cell_range(sheet, (0, first, 0, last)).column_width = width
    for first, last, height in runs(wrapped_row_heights(model)):
        cell_range(sheet, (first, 0, last, 0)).row_height = height
    for ref in model.merged:
        sheet.range(ref).merge()
    for validation in model.validations:
        for area in validation.cells.replace(" ", ",").split(","):
            if area:
                sheet.range(area).data_validation.set_list(list(validation.choices), in_cell_dropdown=True)
    for chart in model.charts:
        add_chart(sheet, chart, model, note)
    if model.freeze and model.freeze != (0, 0):
        try:
            sheet.freeze_panes.freeze_at(frozen_area(*model.freeze))
        except NotImplementedError:
            pass  # desktop engines of xlwings 0.37 cannot freeze panes; see the module notes


def add_chart(sheet: Any, chart: Chart, model: SheetModel, note: Callable[[str], None]) -> None:
    """A native chart over the model's ranges: series from contiguous columns, labels beside them.

    Notes
    -----
    The chart is made from the block of series values plotted by columns, and
    the category labels are set separately, so Excel never guesses which row or
    column holds names. A line chart's lines take Excel's own styles (xlwings'
    open-source core sets a series' name and fill only), and its value axis
    Excel's automatic scale. A chart whose series are not side by side on the same
    rows is left out with a note (the sheet models always place them so).
    """
    block = _series_block(chart)
    if chart.kind not in CHART_TYPES or block is None:
        note(excel_messages.chart_left_out(chart.title, model.name))
        return
    row, col = parse_cell_ref(chart.anchor)
    area = cell_range(sheet, (row, col, row + max(1, chart.height_rows) - 1, col + max(1, chart.width_cells) - 1))
    made = sheet.charts.add(
        source=cell_range(sheet, block),
        chart_type=CHART_TYPES[chart.kind],
        plot_by=PLOT_BY,
        anchor=cell_range(sheet, (row, col, row, col)),
        width=area.width,
        height=area.height,
    )
    made.set_x_axis_values(sheet.range(chart.categories))
    for n, (series, spec) in enumerate(zip(made.series, chart.series, strict=False)):
        series.name = spec.name
        series.fill_color = "#" + SERIES_COLOURS[n % len(SERIES_COLOURS)]
    made.title = chart.title
    if chart.x_title:
        made.category_axis.title = chart.x_title
    if chart.y_title:
        made.value_axis.title = chart.y_title
    if chart.kind == "percent_bar":
        made.value_axis.number_format = "0%"
    elif chart.y_format:
        made.value_axis.number_format = chart.y_format
    histogram = chart.kind == "column"
    made.legend.visible = len(chart.series) > 1 or not histogram
    if len(chart.series) > 1 or not histogram:
        made.legend.position = LEGEND_POSITION


def _series_block(chart: Chart) -> Rect | None:
    """The rectangle holding every series as one column, side by side, or None."""
    spans = [_span(s.values) for s in chart.series]
    if not spans or any(s is None for s in spans):
        return None
    first = spans[0]
    assert first is not None
    r1, c1, r2, _ = first
    for n, span in enumerate(spans):
        if span != (r1, c1 + n, r2, c1 + n):
            return None
    return (r1, c1, r2, c1 + len(spans) - 1)


def _span(ref: str) -> Rect | None:
    try:
        start, _, end = ref.partition(":")
        (r1, c1), (r2, c2) = parse_cell_ref(start), parse_cell_ref(end or start)
    except WriteError:
        return None
    return (min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2))
