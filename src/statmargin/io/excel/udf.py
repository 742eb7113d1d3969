"""Worksheet functions: one test, or one shape check, straight from cells.

``compare_cells`` takes an outcome range and a group range and returns the
chosen test's name, statistic, p-value and estimate with its interval;
``shape_cells`` returns the shape check of one range. Both return a small
two-column block (label, value) that Excel spills below the formula.

The cells go through the same reader as a workbook file (missing markers,
numbers stored as text, ``<5``, ``#N/A`` ... are handled as the data-notes sheet
describes) and the comparison through ``jobs.question.test_workbook``, the job
behind ``statmargin test``, with the cells as its workbook source, so a
worksheet function and the command line give the same numbers for the same
cells.

A problem with the cells comes back as a one-line text in the cell, never as
a Python traceback.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from ...errors import OptionError, StatmarginError
from ...words import excel_messages
from ...words.technical import TEST_NAMES


def cells_book(rows: list[list[Any]]) -> Any:
    """A one-sheet in-memory workbook holding the cells a worksheet function received."""
    from ..memory import MemoryWorkbook

    return MemoryWorkbook.from_sheets({excel_messages.CELLS_SHEET: rows}, name=excel_messages.CELLS_SHEET)


def column_values(cells: Any) -> list[Any]:
    """The values of a one-column (or one-row) range as a flat list; a single cell becomes a list of one.

    Examples
    --------
    >>> column_values([[1.0], [2.0]]), column_values(3.0), column_values([1.0, None])
    ([1.0, 2.0], [3.0], [1.0, None])
    """
    if isinstance(cells, (list, tuple)):
        flat: list[Any] = []
        for item in cells:
            flat.extend(item if isinstance(item, (list, tuple)) else [item])
        return flat
    return [cells]


def _split(values: list[Any], headers: bool, default: str, which: str) -> tuple[str, list[Any]]:
    if not headers:
        return default, values
    if not values:
        return default, []
    first = values[0]
    if isinstance(first, (int, float)) and not isinstance(first, bool):
        raise OptionError(excel_messages.header_is_a_number(which))
    name = "" if first is None else str(first).strip()
    return (name or default), values[1:]


def _read(name: str, values: list[Any]) -> Any:
    from ...read.reader import read_table

    rows = [[name]] + [[v] for v in values]
    return read_table(None, source=cells_book(rows), sheet=excel_messages.CELLS_SHEET, header_row=1)


def _number(value: Any) -> Any:
    """A number for a cell: NaN and infinities become empty; lists (two df) become text."""
    if value is None:
        return None
    if isinstance(value, (list, tuple)):
        return ", ".join(f"{float(v):.6g}" for v in value)
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def compare_cells(outcome: Any, groups: Any, headers: bool = True, confidence: float = 0.95) -> list[list[Any]]:
    """The test that fits an outcome compared across groups, as a two-column block.

    Parameters
    ----------
    outcome : range values
        The outcome cells, one column (or row), optionally with its header cell first.
    groups : range values
        The group of each row, the same number of cells.
    headers : bool
        Whether the first cell of each range is the column's name (default True).
    confidence : float
        Confidence level of the interval, between 0 and 1.

    Returns
    -------
    list of list
        Rows of (label, value): test, statistic name and value, df, p, estimate
        name and value, interval bounds, n used. A skipped test gives its reason;
        a problem with the cells gives one row with a one-line message.

    Notes
    -----
    The same job as ``statmargin test --outcome COL --by COL`` (shape checks
    choose between the normal-shaped and the rank-based test).
    Decisions about people's health or services belong to qualified analysts
    and local policy; the number informs them.
    """
    from ...jobs.question import test_workbook

    try:
        if isinstance(confidence, bool) or not isinstance(confidence, (int, float)) or not 0 < confidence < 1:
            raise OptionError(excel_messages.confidence_not_a_level(confidence))
        out_values, group_values = column_values(outcome), column_values(groups)
        if len(out_values) != len(group_values):
            raise OptionError(excel_messages.lengths_differ(len(out_values), len(group_values)))
        out_name, out_values = _split(out_values, bool(headers), excel_messages.DEFAULT_OUTCOME, "outcome")
        group_name, group_values = _split(group_values, bool(headers), excel_messages.DEFAULT_GROUP, "group")
        if group_name.casefold() == out_name.casefold():
            group_name = excel_messages.DEFAULT_GROUP if out_name != excel_messages.DEFAULT_GROUP else group_name + " 2"
        rows: list[list[Any]] = [[out_name, group_name]]
        rows.extend([o, g] for o, g in zip(out_values, group_values, strict=True))
        summary = test_workbook(
            excel_messages.CELLS_SHEET,
            outcome=out_name,
            by=group_name,
            confidence=float(confidence),
            sheet=excel_messages.CELLS_SHEET,
            source=cells_book(rows),
        )
        [result] = summary.results
    except StatmarginError as exc:
        return [[" ".join(str(exc).split())]]
    labels = excel_messages.compare_labels(float(confidence))
    test = TEST_NAMES.get(result.test or "", result.test or "")
    if result.skipped:
        from ...words.sentences import say

        return [[labels[0], excel_messages.not_run(say(result.skipped))]]
    estimate = result.estimate
    values = [
        test,
        result.statistic_name,
        _number(result.statistic),
        _number(result.df),
        _number(result.p_value),
        None if estimate is None else estimate.name,
        None if estimate is None else _number(estimate.value),
        None if estimate is None else _number(estimate.ci_low),
        None if estimate is None else _number(estimate.ci_high),
        result.n,
    ]
    return [[label, value] for label, value in zip(labels, values, strict=True)]


def shape_cells(values: Any, headers: bool = True) -> list[list[Any]]:
    """The shape check of one range of numbers, as a two-column block.

    Parameters
    ----------
    values : range values
        The cells, one column (or row), optionally with a header cell first.
    headers : bool
        Whether the first cell is the column's name (default True).

    Returns
    -------
    list of list
        Rows of (label, value): n, the check used, its statistic and p-value,
        skewness, excess kurtosis and the verdict, as the shape-check sheet
        shows them (``stats.shape.summarize``).
    """
    from ...stats.shape import summarize
    from ...words.shape_words import verdict
    from ...words.technical import CHECK_NAMES

    try:
        name, cells = _split(column_values(values), bool(headers), excel_messages.DEFAULT_VALUES, "values")
        table = _read(name, cells)
        numbers = table.columns[name].numbers
        summary = summarize(numbers[~_isnan(numbers)], name)
    except StatmarginError as exc:
        return [[" ".join(str(exc).split())]]
    row_values = [
        summary.n,
        CHECK_NAMES.get(summary.check, summary.check),  # the name the shape-check sheet shows
        _number(summary.check_statistic),
        _number(summary.check_p),
        _number(summary.skewness),
        _number(summary.excess_kurtosis),
        verdict(summary),
    ]
    return [[label, value] for label, value in zip(excel_messages.SHAPE_LABELS, row_values, strict=True)]


def _isnan(array: Sequence[float]) -> Any:
    import numpy as np

    return np.isnan(np.asarray(array, dtype=float))
