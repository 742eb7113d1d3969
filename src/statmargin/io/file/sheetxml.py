"""Render a ``SheetModel`` as SpreadsheetML worksheet XML.

Text goes into the cell itself (``t="inlineStr"``) so the workbook's shared
string table is never touched. Text is always text: a value beginning with
``=``, ``+``, ``-`` or ``@`` is written as a string, never as a formula.
"""

from __future__ import annotations

import datetime as dt
import math
import numbers
import re
from collections.abc import Callable
from typing import TypeGuard

from ...errors import WriteError
from ...sheets.layout import cell_ref as cell_ref  # the A1 helpers stay importable from here
from ...sheets.layout import parse_cell_ref as parse_cell_ref
from ...sheets.layout import quote_sheet as quote_sheet
from ...sheets.layout import resolve_link as resolve_link
from ...sheets.layout import wrapped_row_heights as wrapped_row_heights
from ...sheets.model import UNWRITABLE_TEXT, SheetModel, Validation
from ...words import file_messages as messages
from ..addresses import column_letter as column_letter  # kept importable from here

MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"

_ILLEGAL_XML = UNWRITABLE_TEXT
# Spreadsheet programs decode "_xHHHH_" in cell text as a character escape
# (ECMA-376 Part 1, 22.9.2.19 ST_Xstring), so a literal one is protected by
# escaping its leading underscore as _x005F_.
_XSTRING_ESCAPE = re.compile(r"_(x[0-9A-Fa-f]{4}_)")
_EXCEL_EPOCH = dt.datetime(1899, 12, 30)
_EXCEL_EPOCH_1904 = dt.datetime(1904, 1, 1)
# Excel's limit on a list validation written inline (ECMA-376 leaves it open;
# Excel refuses longer lists: common practice, Microsoft support article
# "Apply data validation to cells").
MAX_LIST_CHARS = 255
# The most characters a cell holds (Excel specifications and limits, common knowledge).
MAX_CELL_CHARS = 32_767


def clean_text(text: str) -> str:
    """Strip characters XML 1.0 cannot carry and protect literal ``_xHHHH_`` runs.

    Parameters
    ----------
    text : str
        Any text.

    Returns
    -------
    str
        Text safe to escape into an XML element.
    """
    return _XSTRING_ESCAPE.sub(r"_x005F_\1", _ILLEGAL_XML.sub("", text))


def escape(text: str) -> str:
    """Escape text for XML element content or a double-quoted attribute."""
    return (
        _ILLEGAL_XML.sub("", text)
        .replace("&", "&amp;")
        .replace("<", "&lt;")
        .replace(">", "&gt;")
        .replace('"', "&quot;")
    )


def _number_text(value: float) -> str:
    # repr gives the shortest text that reads back to the same double.
    return repr(float(value))


def _is_number(value: object) -> TypeGuard[numbers.Real]:
    return (
        isinstance(value, numbers.Real)
        and not isinstance(value, bool)
        and type(value).__name__ != "bool_"
    )


def render_sheet(
    model: SheetModel,
    style_index: dict[str, int],
    kind_to_name: dict[str, str],
    *,
    drawing_rel_id: str | None = None,
    date1904: bool = False,
    on_note: Callable[[str], None] | None = None,
) -> bytes:
    """Worksheet XML for a sheet model.

    Parameters
    ----------
    model : SheetModel
        The sheet to render.
    style_index : dict
        Style key -> cell format index, from :func:`statmargin.io.file.styles.add_styles`.
    kind_to_name : dict
        Sheet kind -> final sheet name, for resolving ``{kind}`` link targets.
    drawing_rel_id : str, optional
        Relationship id of the sheet's drawing part, when it has charts.
    date1904 : bool
        Whether the workbook counts dates from 1904 (old Mac workbooks).
    on_note : callable, optional
        Called with a sentence for each value that could not be written as is.

    Returns
    -------
    bytes
        UTF-8 worksheet XML.

    Raises
    ------
    WriteError
        If a style key, link or validation cannot be written.

    Notes
    -----
    Numbers keep full double precision; the cell format decides what is shown.
    NaN becomes an empty (styled) cell and infinities become the text "inf" /
    "-inf", because the file format has no non-finite numbers.
    """
    rows: dict[int, list[int]] = {}
    for row, col in model.cells:
        if row < 0 or col < 0 or row >= 1_048_576 or col >= 16_384:
            raise WriteError(messages.cell_outside_sheet(row, col, model.name))
        rows.setdefault(row, []).append(col)

    parts: list[str] = [
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n',
        f'<worksheet xmlns="{MAIN_NS}" xmlns:r="{REL_NS}">',
    ]
    if model.fit_to_width:
        # sheetPr is the first child of worksheet (ECMA-376 Part 1, 18.3.1.99).
        parts.append('<sheetPr><pageSetUpPr fitToPage="1"/></sheetPr>')
    n_rows, n_cols = model.n_rows, model.n_cols
    dimension = "A1" if not model.cells else f"A1:{cell_ref(n_rows - 1, n_cols - 1)}"
    parts.append(f'<dimension ref="{dimension}"/>')
    parts.append(_sheet_views(model))
    parts.append('<sheetFormatPr defaultRowHeight="15"/>')
    if model.widths:
        parts.append("<cols>")
        for col in sorted(model.widths):
            width = float(model.widths[col])
            parts.append(
                f'<col min="{col + 1}" max="{col + 1}" width="{width:g}" customWidth="1"/>'
            )
        parts.append("</cols>")

    heights = wrapped_row_heights(model)
    hyperlinks: list[str] = []
    parts.append("<sheetData>")
    for row in sorted(rows):
        height = heights.get(row)
        if height:
            parts.append(f'<row r="{row + 1}" ht="{height:g}" customHeight="1">')
        else:
            parts.append(f'<row r="{row + 1}">')
        for col in sorted(rows[row]):
            cell = model.cells[(row, col)]
            if cell.style not in style_index:
                raise WriteError(messages.unknown_style(cell.style, model.name))
            ref = cell_ref(row, col)
            parts.append(
                _cell_xml(ref, cell.value, style_index[cell.style], date1904, model.name, on_note)
            )
            if cell.link:
                location = resolve_link(cell.link, kind_to_name)
                display = "" if cell.value is None else str(cell.value)
                hyperlinks.append(
                    f'<hyperlink ref="{ref}" location="{escape(location)}" display="{escape(display)}"/>'
                )
        parts.append("</row>")
    parts.append("</sheetData>")

    if model.merged:
        parts.append(f'<mergeCells count="{len(model.merged)}">')
        parts.extend(f'<mergeCell ref="{escape(ref)}"/>' for ref in model.merged)
        parts.append("</mergeCells>")
    if model.validations:
        parts.append(f'<dataValidations count="{len(model.validations)}">')
        parts.extend(_validation_xml(v, model.name) for v in model.validations)
        parts.append("</dataValidations>")
    if hyperlinks:
        parts.append("<hyperlinks>")
        parts.extend(hyperlinks)
        parts.append("</hyperlinks>")
    parts.append(
        '<pageMargins left="0.7" right="0.7" top="0.75" bottom="0.75" header="0.3" footer="0.3"/>'
    )
    parts.extend(print_settings_xml(model))
    if drawing_rel_id:
        parts.append(f'<drawing r:id="{drawing_rel_id}"/>')
    parts.append("</worksheet>")
    return "".join(parts).encode("utf-8")


def print_settings_xml(model: SheetModel) -> list[str]:
    """The pageSetup, headerFooter and colBreaks elements of a sheet, in schema order.

    Parameters
    ----------
    model : SheetModel
        Its ``landscape``, ``print_scale``, ``fit_to_width``, ``page_numbers`` and
        ``column_breaks``.

    Returns
    -------
    list of str
        XML fragments to place after ``pageMargins`` and before ``drawing``.

    Notes
    -----
    CT_Worksheet (ECMA-376 Part 1, 18.3.1.99) orders these children as
    ... hyperlinks, printOptions, pageMargins, pageSetup, headerFooter,
    rowBreaks, colBreaks, ..., drawing; Excel refuses a sheet whose children
    are out of order. ``fitToHeight="0"`` means "as many pages tall as needed"
    (18.3.1.63); ``scale`` is a percentage from 10 to 400. A ``brk`` id is the 0-based column left of which the page
    breaks (18.3.1.2), and ``max`` its last row (1048575 is the whole column).
    Header/footer text uses codes (18.3.1.46): ``&L``/``&R`` left/right part,
    ``&A`` sheet name, ``&P`` page, ``&N`` page count.
    """
    parts: list[str] = []
    attrs = []
    if model.landscape:
        attrs.append('orientation="landscape"')
    if model.print_scale is not None and not model.fit_to_width:
        attrs.append(f'scale="{min(400, max(10, int(model.print_scale)))}"')
    if model.fit_to_width:
        attrs.append('fitToWidth="1" fitToHeight="0"')
    if attrs:
        parts.append(f"<pageSetup {' '.join(attrs)}/>")
    if model.page_numbers:
        parts.append(
            "<headerFooter><oddFooter>"
            + escape(messages.PAGE_FOOTER)
            + "</oddFooter></headerFooter>"
        )
    breaks = sorted({int(c) for c in model.column_breaks if 0 < int(c) < 16_384})
    if breaks:
        parts.append(f'<colBreaks count="{len(breaks)}" manualBreakCount="{len(breaks)}">')
        parts.extend(f'<brk id="{c}" max="1048575" man="1"/>' for c in breaks)
        parts.append("</colBreaks>")
    return parts


def _sheet_views(model: SheetModel) -> str:
    if not model.freeze or model.freeze == (0, 0):
        return '<sheetViews><sheetView workbookViewId="0"/></sheetViews>'
    rows, cols = model.freeze
    top_left = cell_ref(rows, cols)
    if rows and cols:
        pane_name = "bottomRight"
    elif rows:
        pane_name = "bottomLeft"
    else:
        pane_name = "topRight"
    split = (f' xSplit="{cols}"' if cols else "") + (f' ySplit="{rows}"' if rows else "")
    return (
        '<sheetViews><sheetView workbookViewId="0">'
        f'<pane{split} topLeftCell="{top_left}" activePane="{pane_name}" state="frozen"/>'
        f'<selection pane="{pane_name}" activeCell="{top_left}" sqref="{top_left}"/>'
        "</sheetView></sheetViews>"
    )


def _cell_xml(
    ref: str,
    value: object,
    style: int,
    date1904: bool,
    sheet: str,
    on_note: Callable[[str], None] | None,
) -> str:
    head = f'<c r="{ref}" s="{style}"'
    if value is None:
        return head + "/>"
    # Most cells are text or floats: skip the ABC checks below, which cost more than the text.
    if type(value) is str:
        return _text_xml(head, value, sheet, ref, on_note)
    if type(value) is float:
        return _number_xml(head, value, sheet, ref, on_note)
    if isinstance(value, bool) or type(value).__name__ == "bool_":
        return head + f' t="b"><v>{int(bool(value))}</v></c>'
    if isinstance(value, numbers.Integral) and abs(int(value)) > 2**53:
        # Beyond double precision: keep every digit as text rather than round.
        return _string_cell(head, str(int(value)))
    if isinstance(value, numbers.Integral):
        return head + f"><v>{int(value)}</v></c>"
    if _is_number(value):
        return _number_xml(head, float(value), sheet, ref, on_note)
    if isinstance(value, dt.datetime | dt.date):
        moment = (
            value
            if isinstance(value, dt.datetime)
            else dt.datetime(value.year, value.month, value.day)
        )
        if moment.tzinfo is not None:
            moment = moment.replace(tzinfo=None)
        epoch = _EXCEL_EPOCH_1904 if date1904 else _EXCEL_EPOCH
        serial = (moment - epoch).total_seconds() / 86400.0
        return head + f"><v>{_number_text(serial)}</v></c>"
    return _text_xml(head, str(value), sheet, ref, on_note)


def _number_xml(head: str, number: float, sheet: str, ref: str, on_note: Callable[[str], None] | None) -> str:
    """A number cell; NaN is left empty (with a note) and infinities are written as text."""
    if math.isnan(number):
        if on_note:
            on_note(messages.missing_number_left_empty(f"{sheet}!{ref}"))
        return head + "/>"
    if math.isinf(number):
        return _string_cell(head, "inf" if number > 0 else "-inf")
    return head + f"><v>{_number_text(number)}</v></c>"


def _text_xml(head: str, value: str, sheet: str, ref: str, on_note: Callable[[str], None] | None) -> str:
    """A text cell, cut to the most a cell holds (with a note) when longer."""
    text = clean_text(value)
    if len(text) > MAX_CELL_CHARS // 2 and _utf16_units(text) > MAX_CELL_CHARS:
        # A longer text makes spreadsheet programs refuse or "repair" the whole file.
        if on_note:
            on_note(messages.text_cut(f"{sheet}!{ref}", MAX_CELL_CHARS))
        text = text[: MAX_CELL_CHARS - 1]
        while _utf16_units(text) > MAX_CELL_CHARS - 1:
            text = text[:-1]
        text += "\u2026"
    return _string_cell(head, text, cleaned=True)


def _utf16_units(text: str) -> int:
    """Length as spreadsheet programs count it (characters beyond U+FFFF count twice)."""
    return len(text.encode("utf-16-le")) // 2


def _string_cell(head: str, text: str, *, cleaned: bool = False) -> str:
    text = text if cleaned else clean_text(text)
    return head + f' t="inlineStr"><is><t xml:space="preserve">{escape(text)}</t></is></c>'


def _validation_xml(validation: Validation, sheet: str) -> str:
    items = []
    for choice in validation.choices:
        text = clean_text(str(choice))
        if "," in text:
            raise WriteError(messages.dropdown_comma(text, sheet))
        items.append(text.replace('"', '""'))
    formula = '"' + ",".join(items) + '"'
    if len(formula) - 2 > MAX_LIST_CHARS:
        raise WriteError(messages.dropdown_too_long(validation.cells, sheet, MAX_LIST_CHARS))
    attrs = f'type="list" allowBlank="1" showInputMessage="1" showErrorMessage="1" sqref="{escape(validation.cells.replace(",", " "))}"'
    if validation.prompt:
        attrs += f' prompt="{escape(validation.prompt[:255])}"'
    return f"<dataValidation {attrs}><formula1>{escape(formula)}</formula1></dataValidation>"
