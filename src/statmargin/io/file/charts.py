"""Native, editable charts for tool sheets: a drawing part and DrawingML chart parts.

Series point at ranges on the tool sheet itself (prefixed with its final name),
so a user can restyle or extend a chart in their spreadsheet program. Cached
values are included so viewers that do not recalculate still draw the chart.
"""

from __future__ import annotations

import re

from ...errors import WriteError
from ...sheets.layout import parse_cell_ref, quote_sheet
from ...sheets.looks import SERIES_COLOURS
from ...sheets.model import Chart, SheetModel
from ...words import file_messages as messages
from .sheetxml import escape

C_NS = "http://schemas.openxmlformats.org/drawingml/2006/chart"
A_NS = "http://schemas.openxmlformats.org/drawingml/2006/main"
R_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
XDR_NS = "http://schemas.openxmlformats.org/drawingml/2006/spreadsheetDrawing"

CHART_KINDS = ("column", "percent_bar", "line")
# How each line of a line chart is drawn: (width in EMU, dash, marker symbol).
LINE_STYLES = {
    "main": (22225, None, "circle"),
    "band": (12700, "sysDot", None),
    "limit": (12700, "dash", None),
    "centre": (9525, None, None),
}
LIMIT_COLOUR = "B07156"
CENTRE_COLOUR = "9A9A8E"
BAND_COLOUR = "7D93A6"

_RANGE = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+):\$?([A-Za-z]{1,3})\$?(\d+)$")


def _range_cells(ref: str, sheet: str) -> list[tuple[int, int]]:
    """0-based cells of a one-row or one-column range such as "$C$5:$C$14"."""
    match = _RANGE.match(ref.strip())
    if not match:
        raise WriteError(messages.chart_range_not_a_range(ref, sheet))
    r1, c1 = parse_cell_ref(f"{match.group(1)}{match.group(2)}")
    r2, c2 = parse_cell_ref(f"{match.group(3)}{match.group(4)}")
    if r1 != r2 and c1 != c2:
        raise WriteError(messages.chart_range_not_a_line(ref, sheet))
    return [
        (r, c)
        for r in range(min(r1, r2), max(r1, r2) + 1)
        for c in range(min(c1, c2), max(c1, c2) + 1)
    ]


def absolute(ref: str) -> str:
    """A range with $ anchors on every part: "C5:C14" -> "$C$5:$C$14"."""
    match = _RANGE.match(ref.strip())
    if not match:
        raise WriteError(messages.not_a_range(ref))
    c1, r1, c2, r2 = match.groups()
    return f"${c1.upper()}${r1}:${c2.upper()}${r2}"


def chart_xml(chart: Chart, sheet_name: str, model: SheetModel) -> bytes:
    """A ``c:chartSpace`` part for one chart.

    Parameters
    ----------
    chart : Chart
        The chart description; ranges are on ``model``'s sheet.
    sheet_name : str
        The final name of the sheet the ranges are on.
    model : SheetModel
        The sheet's model, used to fill the cached values.

    Returns
    -------
    bytes
        UTF-8 chart XML.

    Raises
    ------
    WriteError
        For an unknown chart kind, a bad range, or a chart without series.

    Notes
    -----
    "column" is a clustered column chart with a small gap (a histogram over
    computed bins); "percent_bar" is a 100 % stacked horizontal bar chart.
    Element order follows ECMA-376 Part 1, 21.2 (DrawingML charts).
    """
    if chart.kind not in CHART_KINDS:
        raise WriteError(messages.unknown_chart_kind(chart.kind, sheet_name))
    if not chart.series:
        raise WriteError(messages.chart_without_series(chart.title, sheet_name))
    prefix = quote_sheet(sheet_name) + "!"
    cat_cells = _range_cells(chart.categories, sheet_name)
    labels = [
        ""
        if model.cells.get(rc) is None or model.cells[rc].value is None
        else str(model.cells[rc].value)
        for rc in cat_cells
    ]
    if chart.kind == "line":
        return _line_chart_xml(chart, sheet_name, model, prefix, labels)
    histogram = chart.kind == "column"
    bar_dir = "col" if histogram else "bar"
    grouping = "clustered" if histogram else "percentStacked"

    series_xml = []
    for i, series in enumerate(chart.series):
        val_cells = _range_cells(series.values, sheet_name)
        points = []
        for n, rc in enumerate(val_cells):
            cell = model.cells.get(rc)
            value = None if cell is None else cell.value
            if isinstance(value, int | float) and not isinstance(value, bool) and value == value:
                points.append(f'<c:pt idx="{n}"><c:v>{float(value)!r}</c:v></c:pt>')
        str_pts = "".join(
            f'<c:pt idx="{n}"><c:v>{escape(t)}</c:v></c:pt>' for n, t in enumerate(labels)
        )
        colour = SERIES_COLOURS[i % len(SERIES_COLOURS)]
        series_xml.append(
            f'<c:ser><c:idx val="{i}"/><c:order val="{i}"/>'
            f"<c:tx><c:v>{escape(series.name)}</c:v></c:tx>"
            f'<c:spPr><a:solidFill><a:srgbClr val="{colour}"/></a:solidFill>'
            f'<a:ln w="6350"><a:solidFill><a:srgbClr val="FFFFFF"/></a:solidFill></a:ln></c:spPr>'
            '<c:invertIfNegative val="0"/>'
            f"<c:cat><c:strRef><c:f>{escape(prefix + absolute(chart.categories))}</c:f>"
            f'<c:strCache><c:ptCount val="{len(labels)}"/>{str_pts}</c:strCache></c:strRef></c:cat>'
            f"<c:val><c:numRef><c:f>{escape(prefix + absolute(series.values))}</c:f>"
            f'<c:numCache><c:formatCode>General</c:formatCode><c:ptCount val="{len(val_cells)}"/>'
            f"{''.join(points)}</c:numCache></c:numRef></c:val>"
            "</c:ser>"
        )

    gap = 6 if histogram else 60
    overlap = '<c:overlap val="100"/>' if not histogram else ""
    cat_pos, val_pos = ("b", "l") if histogram else ("l", "b")
    val_format = "General" if histogram else "0%"
    legend = (
        '<c:legend><c:legendPos val="b"/><c:overlay val="0"/></c:legend>'
        if len(chart.series) > 1 or not histogram
        else ""
    )
    plot = (
        f'<c:barChart><c:barDir val="{bar_dir}"/><c:grouping val="{grouping}"/><c:varyColors val="0"/>'
        f"{''.join(series_xml)}"
        f'<c:gapWidth val="{gap}"/>{overlap}'
        '<c:axId val="50010"/><c:axId val="50020"/></c:barChart>'
        f"{_axes(chart, cat_pos=cat_pos, val_pos=val_pos, val_format=val_format)}"
    )
    return _chart_space(chart, plot, legend)


def _cached_numbers(ref: str, sheet_name: str, model: SheetModel) -> tuple[list[float | None], str]:
    """The values a range holds on the model (None where a cell holds no number) and their numCache."""
    cells = _range_cells(ref, sheet_name)
    values: list[float | None] = []
    for rc in cells:
        cell = model.cells.get(rc)
        value = None if cell is None else cell.value
        number = value if isinstance(value, int | float) and not isinstance(value, bool) else None
        values.append(float(number) if number is not None and number == number else None)
    points = "".join(f'<c:pt idx="{n}"><c:v>{v!r}</c:v></c:pt>' for n, v in enumerate(values) if v is not None)
    cache = f'<c:numCache><c:formatCode>General</c:formatCode><c:ptCount val="{len(cells)}"/>{points}</c:numCache>'
    return values, cache


def _line_chart_xml(chart: Chart, sheet_name: str, model: SheetModel, prefix: str, labels: list[str]) -> bytes:
    """A line chart: the main series with markers (and its interval as error bars), limits dashed."""
    str_pts = "".join(f'<c:pt idx="{n}"><c:v>{escape(t)}</c:v></c:pt>' for n, t in enumerate(labels))
    series_xml = []
    main_n = 0
    for i, series in enumerate(chart.series):
        _, cache = _cached_numbers(series.values, sheet_name, model)
        width, dash, symbol = LINE_STYLES.get(series.line, LINE_STYLES["main"])
        if series.line == "limit":
            colour = LIMIT_COLOUR
        elif series.line == "centre":
            colour = CENTRE_COLOUR
        elif series.line == "band":
            colour = BAND_COLOUR
        else:
            colour = SERIES_COLOURS[main_n % len(SERIES_COLOURS)]
            main_n += 1
        dash_xml = f'<a:prstDash val="{dash}"/>' if dash else ""
        marker = (
            f'<c:marker><c:symbol val="{symbol}"/><c:size val="6"/><c:spPr><a:solidFill><a:srgbClr val="{colour}"/>'
            f'</a:solidFill><a:ln w="9525"><a:solidFill><a:srgbClr val="{colour}"/></a:solidFill></a:ln></c:spPr></c:marker>'
            if symbol else '<c:marker><c:symbol val="none"/></c:marker>'
        )
        series_xml.append(
            f'<c:ser><c:idx val="{i}"/><c:order val="{i}"/>'
            f"<c:tx><c:v>{escape(series.name)}</c:v></c:tx>"
            f'<c:spPr><a:ln w="{width}" cap="rnd"><a:solidFill><a:srgbClr val="{colour}"/></a:solidFill>'
            f"{dash_xml}<a:round/></a:ln></c:spPr>"
            f"{marker}"
            f"<c:cat><c:strRef><c:f>{escape(prefix + absolute(chart.categories))}</c:f>"
            f'<c:strCache><c:ptCount val="{len(labels)}"/>{str_pts}</c:strCache></c:strRef></c:cat>'
            f"<c:val><c:numRef><c:f>{escape(prefix + absolute(series.values))}</c:f>{cache}</c:numRef></c:val>"
            '<c:smooth val="0"/></c:ser>'
        )
    val_format = escape(chart.y_format or "General")
    # CT_Scaling: orientation, then max, then min (ECMA-376 Part 1, 21.2.2.195).
    bounds = (f'<c:max val="{float(chart.y_max)!r}"/>' if chart.y_max is not None else "") + (
        f'<c:min val="{float(chart.y_min)!r}"/>' if chart.y_min is not None else "")
    plot = (
        '<c:lineChart><c:grouping val="standard"/><c:varyColors val="0"/>'
        f"{''.join(series_xml)}"
        '<c:marker val="1"/><c:axId val="50010"/><c:axId val="50020"/></c:lineChart>'
        f"{_axes(chart, cat_pos='b', val_pos='l', val_format=val_format, bounds=bounds, labels='low')}"
    )
    return _chart_space(chart, plot, '<c:legend><c:legendPos val="b"/><c:overlay val="0"/></c:legend>')


def _axes(chart: Chart, *, cat_pos: str, val_pos: str, val_format: str, bounds: str = "",
          labels: str = "nextTo") -> str:
    """The category and value axes (ids 50010 and 50020) every chart here has."""
    return (
        '<c:catAx><c:axId val="50010"/><c:scaling><c:orientation val="minMax"/></c:scaling>'
        f'<c:delete val="0"/><c:axPos val="{cat_pos}"/>'
        f"{_title(chart.x_title, 1000) if chart.x_title else ''}"
        '<c:numFmt formatCode="General" sourceLinked="1"/><c:majorTickMark val="none"/>'
        f'<c:minorTickMark val="none"/><c:tickLblPos val="{labels}"/>'
        '<c:crossAx val="50020"/><c:crosses val="autoZero"/><c:auto val="1"/>'
        '<c:lblAlgn val="ctr"/><c:lblOffset val="100"/><c:noMultiLvlLbl val="0"/></c:catAx>'
        f'<c:valAx><c:axId val="50020"/><c:scaling><c:orientation val="minMax"/>{bounds}</c:scaling>'
        f'<c:delete val="0"/><c:axPos val="{val_pos}"/>'
        '<c:majorGridlines><c:spPr><a:ln w="6350"><a:solidFill><a:srgbClr val="E3DFD8"/></a:solidFill></a:ln></c:spPr></c:majorGridlines>'
        f"{_title(chart.y_title, 1000) if chart.y_title else ''}"
        f'<c:numFmt formatCode="{val_format}" sourceLinked="0"/><c:majorTickMark val="none"/>'
        '<c:minorTickMark val="none"/><c:tickLblPos val="nextTo"/>'
        '<c:crossAx val="50010"/><c:crosses val="autoZero"/><c:crossBetween val="between"/></c:valAx>'
    )


def _chart_space(chart: Chart, plot: str, legend: str) -> bytes:
    """A whole chart part around its plot area (chart and axes) and legend."""
    xml = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<c:chartSpace xmlns:c="{C_NS}" xmlns:a="{A_NS}" xmlns:r="{R_NS}">'
        '<c:roundedCorners val="0"/>'
        "<c:chart>"
        f"{_title(chart.title, 1200)}"
        '<c:autoTitleDeleted val="0"/>'
        f"<c:plotArea><c:layout/>{plot}</c:plotArea>"
        f"{legend}"
        '<c:plotVisOnly val="1"/><c:dispBlanksAs val="gap"/>'
        "</c:chart>"
        "</c:chartSpace>"
    )
    return xml.encode("utf-8")


def _title(text: str, size: int) -> str:
    return (
        "<c:title><c:tx><c:rich><a:bodyPr/><a:lstStyle/><a:p><a:pPr>"
        f'<a:defRPr sz="{size}" b="0"><a:solidFill><a:srgbClr val="2F3B45"/></a:solidFill></a:defRPr></a:pPr>'
        f'<a:r><a:rPr lang="en-US" sz="{size}" b="0"><a:solidFill><a:srgbClr val="2F3B45"/></a:solidFill></a:rPr>'
        f"<a:t>{escape(text)}</a:t></a:r></a:p></c:rich></c:tx>"
        '<c:overlay val="0"/></c:title>'
    )


def drawing_xml(charts: list[Chart], chart_rel_ids: list[str], sheet_name: str) -> bytes:
    """The drawing part that places each chart over the sheet's cells.

    Parameters
    ----------
    charts : list of Chart
        Charts in the order of ``chart_rel_ids``.
    chart_rel_ids : list of str
        Relationship ids (in the drawing's rels part) of the chart parts.
    sheet_name : str
        The sheet's final name, for messages.

    Returns
    -------
    bytes
        UTF-8 ``xdr:wsDr`` XML with one two-cell anchor per chart.
    """
    anchors = []
    for n, (chart, rel_id) in enumerate(zip(charts, chart_rel_ids, strict=True)):
        row, col = parse_cell_ref(chart.anchor)
        width, height = max(1, int(chart.width_cells)), max(1, int(chart.height_rows))
        anchors.append(
            '<xdr:twoCellAnchor editAs="oneCell">'
            f"<xdr:from><xdr:col>{col}</xdr:col><xdr:colOff>0</xdr:colOff><xdr:row>{row}</xdr:row><xdr:rowOff>0</xdr:rowOff></xdr:from>"
            f"<xdr:to><xdr:col>{col + width}</xdr:col><xdr:colOff>0</xdr:colOff><xdr:row>{row + height}</xdr:row><xdr:rowOff>0</xdr:rowOff></xdr:to>"
            '<xdr:graphicFrame macro="">'
            f'<xdr:nvGraphicFramePr><xdr:cNvPr id="{n + 2}" name="{escape(chart.title or f"Chart {n + 1}")}"/><xdr:cNvGraphicFramePr/></xdr:nvGraphicFramePr>'
            '<xdr:xfrm><a:off x="0" y="0"/><a:ext cx="0" cy="0"/></xdr:xfrm>'
            f'<a:graphic><a:graphicData uri="{C_NS}">'
            f'<c:chart xmlns:c="{C_NS}" xmlns:r="{R_NS}" r:id="{rel_id}"/>'
            "</a:graphicData></a:graphic></xdr:graphicFrame><xdr:clientData/></xdr:twoCellAnchor>"
        )
    xml = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<xdr:wsDr xmlns:xdr="{XDR_NS}" xmlns:a="{A_NS}">{"".join(anchors)}</xdr:wsDr>'
    )
    return xml.encode("utf-8")
