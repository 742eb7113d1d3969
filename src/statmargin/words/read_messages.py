"""Refusals of the reading step: no data where it was looked for, or a header row or table that is not there.

Each is the one-line message a typed error carries (``read.reader``,
``read.table``): what is wrong and what to do.
"""

from __future__ import annotations

from collections.abc import Sequence


def no_data_sheet(workbook: str) -> str:
    return f"No sheet in {workbook!r} holds data. Put the data on a sheet with a header row, then run again."


def empty_sheet(sheet: str, workbook: str) -> str:
    return f"Sheet {sheet!r} in {workbook!r} has no data. Choose the sheet that holds the data."


def table_not_on_sheet(table: str, sheet: str, tables: Sequence[str]) -> str:
    listed = ", ".join(repr(name) for name in tables) or "none"
    return f"Table {table!r} is not on sheet {sheet!r}. Tables there: {listed}."


def bad_header_row(header_row: object) -> str:
    return f"Header row must be a whole number from 1 up; got {header_row!r}."


def header_row_below_data(header_row: int, last_row: int, sheet: str) -> str:
    return (
        f"Header row {header_row} is below the last row with data (row {last_row}) "
        f"on sheet {sheet!r}. Give the row that holds the column headers."
    )


def blank_header_row(header_row: int, sheet: str) -> str:
    return f"Row {header_row} on sheet {sheet!r} is blank. Give the row that holds the column headers."


def formulas_without_values(sheet: str, workbook: str) -> str:
    return (
        f"Every value read from sheet {sheet!r} in {workbook!r} comes from a formula with no saved value. "
        "The file must be recalculated and saved by a spreadsheet program first."
    )


def no_data_below_headers(sheet: str, header_row: int, *, columns_named: bool) -> str:
    """Headers but no data under them (in the columns asked for, when some were named)."""
    where = " in the columns asked for." if columns_named else "."
    return f"Sheet {sheet!r} has headers in row {header_row} but no data below them{where} Check the sheet and the header row."


def not_a_header(name: str, sheet: str, header_row: int, close: Sequence[str] = (),
                 headers: Sequence[str] = ()) -> str:
    """A column name that is no header of the sheet: the closest headers when some are near, else the first few."""
    if close:
        hint = f" Did you mean {', '.join(repr(c) for c in close)}?"
    elif headers:
        shown = ", ".join(repr(h) for h in list(headers)[:MAX_HEADERS_SHOWN])
        more = f" and {len(headers) - MAX_HEADERS_SHOWN} more" if len(headers) > MAX_HEADERS_SHOWN else ""
        hint = f" Its headers are {shown}{more}."
    else:
        hint = ""
    return f"Column {name!r} is not a header on sheet {sheet!r}.{hint} Headers are read from row {header_row}."


MAX_HEADERS_SHOWN = 8  # enough to recognise the sheet, short enough for one line
