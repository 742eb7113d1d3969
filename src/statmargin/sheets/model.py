"""Sheet models: what the tool's sheets contain, independent of the file format.

``report`` builds these; a writer back end (the package-level xlsx writer, or
the xlwings bridge later) puts them into a workbook. Values stay typed: numbers
are floats, and formatting is named by a style key the writer maps to a format.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

from ..vocabulary.codes import Hidden

# Characters a workbook cell cannot hold: those XML 1.0 forbids (section 2.2) and lone
# surrogates. Every writer drops them, so all back ends show the same text.
UNWRITABLE_TEXT = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff\ud800-\udfff]")

# Style keys a writer must support. Number formats are applied at write time only.
STYLES = (
    "text",  # plain text
    "wrap",  # wrapped text (readings, reasons)
    "title",  # sheet title line
    "subtitle",  # section heading inside a sheet
    "header",  # column header row
    "label",  # left-hand label in a key/value block
    "number",  # general number, 3 significant decimals shown
    "fixed0",  # a number shown with a fixed number of decimals (0 to 4), by the outcome's precision
    "fixed1",
    "fixed2",
    "fixed3",
    "fixed4",
    "integer",  # counts
    "decimal2",  # two decimals
    "p_value",  # shows <0.001 below 0.001, full value kept in the cell
    "percent",  # 0.0%
    "date",  # yyyy-mm-dd hh:mm
    "link",  # hyperlink look
    "input",  # a cell the user is meant to edit (roles sheet)
    "muted",  # secondary information
    "caution",  # cautions and warnings
    "suppressed",  # a value hidden in sharing mode
)


@dataclass
class Cell:
    """One cell: a typed value, a style key, and optionally a link.

    ``link`` is an internal target: a user sheet and cell such as ``"'Data'!C17"``,
    or a tool sheet named by its kind in braces, ``"{shape}!A40"``, because the
    writer may have to give a tool sheet another name than the preferred one; it
    resolves the placeholder to the final, quoted sheet name. Text values are
    always written as text, never as a formula, whatever they start with.
    """

    value: Any
    style: str = "text"
    link: str | None = None
    is_count: bool = False  # a count of records; sharing mode suppresses small ones


def hidden_cell(value: Hidden) -> Cell:
    """The cell of a count hidden by sharing mode: "<N" for a small one, "suppressed" for a complementary one."""
    return Cell(f"<{value.floor}" if value.small else "suppressed", "suppressed", None, True)


@dataclass
class ChartSeries:
    """One series of a chart. Line charts also say how the line is drawn and where its interval is.

    ``line`` is "main" (a line with markers), "band" (a light dotted line
    without markers: one edge of an interval band), "limit" (a dashed line
    without markers) or "centre" (a thin line without markers); bar charts
    ignore it.
    """

    name: str
    values: str  # range on the chart's own sheet, without a sheet name: "$C$5:$C$14"
    line: str = "main"


@dataclass
class Chart:
    """A native, editable chart over ranges of a tool sheet."""

    kind: str  # "column" (histogram over computed bins), "percent_bar" (stacked 100% bars) or "line"
    title: str
    categories: str  # range on the chart's own sheet holding the labels, e.g. "$B$5:$B$14"
    series: list[ChartSeries]
    anchor: str  # top-left cell, e.g. "H3"
    width_cells: int = 8
    height_rows: int = 15
    x_title: str | None = None
    y_title: str | None = None
    y_format: str | None = None  # number format of the value axis, e.g. "0%" (default: General)
    y_min: float | None = None  # value axis bounds (default: the program's automatic scale)
    y_max: float | None = None


@dataclass
class Validation:
    """A dropdown list on a range of cells (roles sheet)."""

    cells: str  # e.g. "D5:D40"
    choices: list[str]
    prompt: str | None = None


@dataclass
class SheetModel:
    """A whole tool sheet. ``kind`` is the marker that identifies it on re-runs."""

    name: str  # preferred sheet name; the writer picks another if a user sheet has it
    kind: str  # "roles", "results", "shape", "notes", "log", "periods", "history", ...
    cells: dict[tuple[int, int], Cell] = field(default_factory=dict)  # (row, col), 0-based
    widths: dict[int, float] = field(default_factory=dict)  # column index -> width in characters
    freeze: tuple[int, int] | None = None  # (rows, cols) frozen above/left
    validations: list[Validation] = field(default_factory=list)
    charts: list[Chart] = field(default_factory=list)
    merged: list[str] = field(default_factory=list)  # ranges such as "A1:F1"
    anchors: dict[str, str] = field(default_factory=dict)  # named spot -> cell, for links
    # Sharing mode (see share.py): cells that reveal a count (a group's share, mean,
    # SD, ...) are suppressed with it; each set in ``count_sets`` is linked by one sum
    # (its members, then their shown total last), so one hidden member would be recoverable.
    count_dependents: dict[tuple[int, int], list[tuple[int, int]]] = field(default_factory=dict)
    count_sets: list[list[tuple[int, int]]] = field(default_factory=list)
    # Printing (all optional). ``column_breaks`` holds the 0-based index of the first
    # column of each new printed page; ``fit_to_width`` prints every column on one
    # page width (scaling down), which spreadsheet programs apply instead of manual
    # column breaks, so use one or the other. ``page_numbers`` adds a footer with the
    # sheet name and "page n of m". ``print_scale`` (10..400 percent) shrinks the
    # print without changing the sheet; it is ignored when ``fit_to_width`` is on.
    landscape: bool = False
    print_scale: int | None = None
    fit_to_width: bool = False
    column_breaks: list[int] = field(default_factory=list)
    page_numbers: bool = False
    # Rows (0-based, first and last) and columns (0-based count from A) repeated on
    # every printed page, so each page keeps its header row and question column.
    print_title_rows: tuple[int, int] | None = None
    print_title_cols: int = 0
    # Blocks printed, each (first row, first col, last row, last col), 0-based and
    # inclusive, each starting on a new page; empty prints the whole sheet.
    print_areas: list[tuple[int, int, int, int]] = field(default_factory=list)
    # A sheet the tool keeps for itself (the run history): written hidden, read back on the next run.
    hidden: bool = False

    def put(
        self,
        row: int,
        col: int,
        value: Any,
        style: str = "text",
        link: str | None = None,
        is_count: bool = False,
    ) -> None:
        """Set one cell (0-based row and column); a count hidden by sharing mode shows as "<N"."""
        if isinstance(value, Hidden):
            self.cells[(row, col)] = hidden_cell(value)
            return
        self.cells[(row, col)] = Cell(value, style, link, is_count)

    def put_row(self, row: int, values: list[Any], style: str = "text", start_col: int = 0) -> None:
        """Set a row of cells with one style; a value that is already a Cell keeps its own."""
        for offset, value in enumerate(values):
            cell = value if isinstance(value, Cell) else Cell(value, style)
            self.cells[(row, start_col + offset)] = cell

    @property
    def n_rows(self) -> int:
        return 1 + max((r for r, _ in self.cells), default=-1)

    @property
    def n_cols(self) -> int:
        return 1 + max((c for _, c in self.cells), default=-1)
