"""The part of xlwings' open-source API the Excel bridge uses, declared in one place.

``USED`` maps each xlwings class (by its name in ``xlwings.main``) to the
members the bridge touches: attributes read or set and methods called. The
tests hold the bridge to this list from both sides: the in-memory stand-in
offers exactly these members and fails a test when anything else is asked
for, and a drift check confirms that every member exists on the real xlwings
classes and that both desktop engines (Windows and macOS) implement it.

Nothing here comes from ``xlwings.pro`` (server, remote, Office.js and reader
modes need a licence key); the bridge never imports that package.

``ENGINE_MAY_LACK`` lists the members the bridge tries but does without: in
xlwings 0.37 ``Sheet.freeze_panes`` is implemented only by the licensed
remote engines, so a desktop Excel raises ``NotImplementedError`` and the
sheets are written unfrozen.
"""

from __future__ import annotations

# The lowest xlwings release that has every member below (Sheet.move is not used;
# data validation, chart series and axes arrived in 0.37.5).
MIN_VERSION = (0, 37, 5)

USED: dict[str, frozenset[str]] = {
    "Book": frozenset({"caller", "name", "sheets", "app"}),
    "Sheets": frozenset({"__iter__", "add"}),
    "Sheet": frozenset(
        {
            "name",
            "visible",
            "names",
            "range",
            "used_range",
            "tables",
            "charts",
            "delete",
            "activate",
            "freeze_panes",
        }
    ),
    "Range": frozenset(
        {
            "options",
            "value",
            "row",
            "column",
            "shape",
            "width",
            "height",
            "number_format",
            "column_width",
            "row_height",
            "wrap_text",
            "merge",
            "merge_cells",
            "merge_area",
            "color",
            "font",
            "borders",
            "horizontal_alignment",
            "vertical_alignment",
            "data_validation",
        }
    ),
    "Font": frozenset({"bold", "italic", "color", "size"}),
    "Borders": frozenset({"set"}),
    "DataValidation": frozenset({"set_list"}),
    "Names": frozenset({"__iter__", "add"}),
    "Name": frozenset({"name", "refers_to", "delete"}),
    "App": frozenset({"screen_updating", "calculation", "status_bar", "alert"}),
    "Tables": frozenset({"__iter__"}),
    "Table": frozenset({"name", "range", "show_headers", "show_totals"}),
    "Charts": frozenset({"add"}),
    "Chart": frozenset(
        {"title", "series", "set_x_axis_values", "category_axis", "value_axis", "legend"}
    ),
    "ChartSeriesCollection": frozenset({"__iter__"}),
    "ChartSeries": frozenset({"name", "fill_color"}),
    "ChartAxis": frozenset({"title", "number_format"}),
    "ChartLegend": frozenset({"visible", "position"}),
    "FreezePanes": frozenset({"freeze_at"}),
}

# Options passed to ``Range.options``: read in two dimensions, errors such as #N/A as text.
RANGE_OPTIONS = frozenset({"ndim", "err_to_str"})

ENGINE_MAY_LACK: frozenset[tuple[str, str]] = frozenset(
    {("Sheet", "freeze_panes"), ("FreezePanes", "freeze_at")}
)
