"""Cell values as Excel must receive them, and cells grouped into rectangles for bulk calls.

Excel treats a string assigned to a cell the way it treats typing: ``=...`` (and
``+``, ``-``, ``@`` followed by text) becomes a formula, ``007`` becomes 7,
``2026-03-01`` a date, ``TRUE`` a boolean. The tool's sheets hold text that came
from the user's data, so every string is sent with Excel's text prefix, a
leading apostrophe, which Excel keeps out of the cell's value. The only
formulas the bridge writes are its own ``HYPERLINK`` links.
"""

from __future__ import annotations

import datetime as dt
import math
import numbers
from collections.abc import Iterable
from typing import Any

from ...sheets.model import UNWRITABLE_TEXT, Cell

TEXT_PREFIX = "'"
# Excel's cell limit (Microsoft, "Excel specifications and limits"): 32,767 characters.
MAX_CELL_TEXT = 32_767
# Integers beyond double precision are written as text, as the file writer does.
MAX_EXACT_INTEGER = 2**53

Rect = tuple[int, int, int, int]  # first row, first col, last row, last col; 0-based, inclusive


def text_value(text: str) -> str:
    """A string as Excel must receive it to keep it text: prefixed, unwritable characters dropped.

    Examples
    --------
    >>> text_value("=1+1")
    "'=1+1"
    >>> text_value("007")
    "'007"
    """
    return TEXT_PREFIX + UNWRITABLE_TEXT.sub("", text)[: MAX_CELL_TEXT - 1]


def excel_value(value: Any) -> Any:
    """What a model cell's value becomes in the values sent to Excel.

    Parameters
    ----------
    value : Any
        A ``sheets.model.Cell`` value.

    Returns
    -------
    None, bool, float, datetime.datetime or str
        None for an empty cell (also for NaN, as the file writer leaves it empty),
        a number, a naive datetime (Excel has no time zones), or prefixed text.

    Notes
    -----
    The rules follow the file writer (``io.file.sheetxml``) so both back ends
    give the same cells: infinities become the text ``inf``/``-inf``, integers
    beyond 2**53 keep every digit as text, time zones are dropped.

    Examples
    --------
    >>> excel_value(float("nan")) is None, excel_value(float("inf")), excel_value(3)
    (True, "'inf", 3.0)
    """
    if value is None:
        return None
    if isinstance(value, bool) or type(value).__name__ == "bool_":
        return bool(value)
    if isinstance(value, numbers.Integral):
        # Excel holds every number as a double; a Python int beyond 32 bits would reach
        # COM as a 64-bit integer, which a cell cannot take.
        number = int(value)
        return text_value(str(number)) if abs(number) > MAX_EXACT_INTEGER else float(number)
    if isinstance(value, numbers.Real):
        real = float(value)
        if math.isnan(real):
            return None
        if math.isinf(real):
            return text_value("inf" if real > 0 else "-inf")
        return real
    if isinstance(value, dt.datetime):
        return value.replace(tzinfo=None)
    if isinstance(value, dt.date):
        return dt.datetime(value.year, value.month, value.day)
    return text_value(str(value))


def link_formula(location: str, value: Any) -> str:
    """A ``HYPERLINK`` formula that jumps to ``location`` in this workbook and shows ``value``.

    Parameters
    ----------
    location : str
        A resolved target such as ``'Data'!C17``.
    value : Any
        What the cell shows (the model cell's value).

    Returns
    -------
    str
        The formula, with double quotes inside the strings doubled.

    Notes
    -----
    ``#`` before a location makes HYPERLINK jump inside the workbook
    (Microsoft, HYPERLINK function). Links are written as formulas so a sheet
    with thousands of them still takes one call per block of cells.

    Examples
    --------
    >>> link_formula("'Data'!C17", "C17")
    '=HYPERLINK("#\\'Data\\'!C17","C17")'
    """
    shown = "" if value is None else UNWRITABLE_TEXT.sub("", str(value))
    target = "#" + location
    return f'=HYPERLINK("{_quoted(target)}","{_quoted(shown)}")'


def _quoted(text: str) -> str:
    return text.replace('"', '""')


def rectangles(cells: Iterable[tuple[int, int]]) -> list[Rect]:
    """Cover a set of cells with rectangles: row runs, stacked where rows repeat the same run.

    Parameters
    ----------
    cells : iterable of (int, int)
        0-based (row, col) pairs.

    Returns
    -------
    list of Rect
        Disjoint rectangles covering exactly the cells, in row order.

    Notes
    -----
    One call per rectangle sets a format on all of its cells; a column of
    numbers or a block of headers is one rectangle. The cover is greedy, not
    minimal, which is enough for the tool's regular sheets.

    Examples
    --------
    >>> rectangles([(0, 0), (0, 1), (1, 0), (1, 1), (3, 0)])
    [(0, 0, 1, 1), (3, 0, 3, 0)]
    """
    by_row: dict[int, list[int]] = {}
    for row, col in cells:
        by_row.setdefault(row, []).append(col)
    open_: dict[tuple[int, int], list[int]] = {}  # (first col, last col) -> [first row, last row]
    done: list[Rect] = []
    for row in sorted(by_row):
        runs = []
        cols = sorted(set(by_row[row]))
        start = prev = cols[0]
        for col in cols[1:]:
            if col != prev + 1:
                runs.append((start, prev))
                start = col
            prev = col
        runs.append((start, prev))
        still_open: dict[tuple[int, int], list[int]] = {}
        for run in runs:
            span = open_.pop(run, None)
            if span is not None and span[1] == row - 1:
                span[1] = row
                still_open[run] = span
            else:
                if span is not None:
                    done.append((span[0], run[0], span[1], run[1]))
                still_open[run] = [row, row]
        for (c1, c2), (r1, r2) in open_.items():
            done.append((r1, c1, r2, c2))
        open_ = still_open
    for (c1, c2), (r1, r2) in open_.items():
        done.append((r1, c1, r2, c2))
    return sorted(done)


def cell_grid(cells: dict[tuple[int, int], Cell], n_rows: int, n_cols: int,
              links: dict[tuple[int, int], str]) -> list[list[Any]]:
    """The whole model as rows of Excel values (links as HYPERLINK formulas).

    Parameters
    ----------
    cells : dict
        The model's cells by 0-based (row, col).
    n_rows, n_cols : int
        The block's size.
    links : dict
        Resolved link targets by cell.

    Returns
    -------
    list of list
        ``n_rows`` rows of ``n_cols`` values, None where the model has no cell.
    """
    grid: list[list[Any]] = [[None] * n_cols for _ in range(n_rows)]
    for (row, col), cell in cells.items():
        target = links.get((row, col))
        grid[row][col] = link_formula(target, cell.value) if target else excel_value(cell.value)
    return grid
