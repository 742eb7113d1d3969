"""Sheet layout shared by every back end: A1 references, link targets, wrapped-row heights.

The file writer and the Excel bridge both place the tool's sheets from these
helpers, so a reference, a link and a row height come out the same either way.
"""

from __future__ import annotations

import re

from ..errors import WriteError
from ..io.addresses import column_index, column_letter
from ..words import sheet_messages
from .looks import LOOKS
from .model import SheetModel

_PLACEHOLDER = re.compile(r"\{([A-Za-z0-9_]+)\}")
_CELL_REF = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+)$")
DEFAULT_COLUMN_WIDTH = 8.43
LINE_HEIGHT = 15.0
# Characters of ordinary text per unit of column width (one unit is the width of
# a digit); kept a little low so estimated rows err on the tall side.
CHARS_PER_WIDTH = 1.2
BOLD_CHARS_PER_WIDTH = 1.05
MAX_ROW_HEIGHT = 409.0

def cell_ref(row: int, col: int) -> str:
    """A1-style reference for 0-based row and column."""
    return f"{column_letter(col)}{row + 1}"


def parse_cell_ref(ref: str) -> tuple[int, int]:
    """0-based (row, col) of an A1-style reference such as ``"$H$3"``.

    Raises
    ------
    WriteError
        If the text is not a single cell reference.
    """
    match = _CELL_REF.match(ref.strip())
    if not match:
        raise WriteError(sheet_messages.not_a_cell(ref))
    return int(match.group(2)) - 1, column_index(match.group(1))


def quote_sheet(name: str) -> str:
    """A sheet name as it appears in a reference: always quoted, quotes doubled."""
    return "'" + name.replace("'", "''") + "'"


def resolve_link(link: str, kind_to_name: dict[str, str]) -> str:
    """Replace ``{kind}`` placeholders with the final quoted tool sheet name.

    Parameters
    ----------
    link : str
        A target such as ``"'Data'!C17"`` or ``"{shape}!A40"``.
    kind_to_name : dict
        Sheet kind -> final sheet name, for every tool sheet in the workbook.

    Returns
    -------
    str
        The target with placeholders resolved.

    Raises
    ------
    WriteError
        If a placeholder names a kind with no sheet.
    """

    def replace(match: re.Match[str]) -> str:
        kind = match.group(1)
        if kind not in kind_to_name:
            raise WriteError(sheet_messages.link_to_missing_sheet(kind))
        return quote_sheet(kind_to_name[kind])

    return _PLACEHOLDER.sub(replace, link)


def _wrapped_lines(text: str, chars_per_line: int) -> int:
    """Lines a text takes when wrapped greedily at word boundaries."""
    total = 0
    for paragraph in text.split("\n"):
        lines, used = 1, 0
        for word in paragraph.split():
            length = len(word)
            if used and used + 1 + length > chars_per_line:
                lines += 1
                used = 0
            # A word longer than a line is broken across lines.
            while length > chars_per_line:
                lines += 1
                length -= chars_per_line
            used = length if used == 0 else used + 1 + length
        total += lines
    return total


def wrapped_row_heights(model: SheetModel) -> dict[int, float]:
    """Row heights (points) for rows whose wrapped text needs more than one line.

    Parameters
    ----------
    model : SheetModel
        The sheet.

    Returns
    -------
    dict
        0-based row -> height in points, only for rows that need more than one line.

    Notes
    -----
    Not every spreadsheet program fits row heights to wrapped text when it opens
    a file, so the writer sets them. The estimate errs on the tall side: a
    column (or merged range) of width w (in digit widths) is taken to hold about
    1.2 w characters of ordinary text (1.05 w in bold), and a line is 15 points
    for the 11-point default font. Rendered with LibreOffice, a 40-wide column
    held 45 to 50 characters of plain sentences a line (our measurement).
    The default column width 8.43 is Excel's for an 11-point Calibri workbook
    (common practice; value recalled from Excel's column width documentation,
    from memory). Row height is capped at 409 points, Excel's maximum
    (Microsoft, Excel specifications and limits).
    """
    spans: dict[tuple[int, int], list[int]] = {}
    for ref in model.merged:
        if ":" not in ref:
            continue
        (r1, c1), (r2, c2) = (parse_cell_ref(part) for part in ref.split(":", 1))
        spans[(r1, c1)] = [] if r1 != r2 else list(range(c1, c2 + 1))
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                if (r, c) != (r1, c1):
                    spans[(r, c)] = []
    heights: dict[int, float] = {}
    for (row, col), cell in model.cells.items():
        look = LOOKS.get(cell.style, LOOKS["text"])
        if not look.wrap or not isinstance(cell.value, str):
            continue
        columns = spans.get((row, col), [col])
        if not columns:  # inside a merge over several rows: leave it alone
            continue
        width = sum(float(model.widths.get(c, DEFAULT_COLUMN_WIDTH)) for c in columns)
        # Bold letters are wider, so a bold line holds fewer of them.
        per_width = BOLD_CHARS_PER_WIDTH if look.font.bold else CHARS_PER_WIDTH
        lines = _wrapped_lines(cell.value, max(1, int(width * per_width)))
        if lines > 1:
            heights[row] = min(MAX_ROW_HEIGHT, max(heights.get(row, 0.0), lines * LINE_HEIGHT))
    return heights


def print_titles(model: SheetModel, sheet_name: str) -> str | None:
    """The print-titles reference of a sheet model (e.g. ``'results'!$A:$A,'results'!$14:$14``), or None."""
    quoted = quote_sheet(sheet_name)
    parts = []
    if model.print_title_cols:
        last = column_letter(model.print_title_cols - 1)
        parts.append(f"{quoted}!$A:${last}")
    if model.print_title_rows:
        first, last_row = model.print_title_rows
        parts.append(f"{quoted}!${first + 1}:${last_row + 1}")
    return ",".join(parts) or None


def print_area(model: SheetModel, sheet_name: str) -> str | None:
    """The print-area reference of a sheet model (e.g. ``'results'!$A$1:$D$30,'results'!$E$12:$X$30``), or None."""
    quoted = quote_sheet(sheet_name)
    parts = [
        f"{quoted}!${column_letter(c0)}${r0 + 1}:${column_letter(c1)}${r1 + 1}"
        for r0, c0, r1, c1 in model.print_areas
    ]
    return ",".join(parts) or None


def print_names(model: SheetModel, sheet_name: str) -> list[tuple[str, str]]:
    """The built-in sheet-scoped names a sheet's printing needs: (name without ``_xlnm.``, reference)."""
    named = (("Print_Titles", print_titles(model, sheet_name)), ("Print_Area", print_area(model, sheet_name)))
    return [(name, ref) for name, ref in named if ref]
