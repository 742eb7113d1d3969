"""The shape-check sheet's table for rows of events: each group's events, total, share or rate and interval.

Rows of events out of a total (positives out of people screened) and per
person-time (cases per person-years) are pooled per group; this table shows
what each group pooled to, the share or the rate in the unit the user set with
its interval, and how many rows it came from, with a column chart of the
shares or rates.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..results import Result
from ..vocabulary import Design
from ..vocabulary.codes import Hidden
from ..words import rate_readings
from .context import _a1, _finite, _num
from .model import Chart, ChartSeries, SheetModel


def _binomial(result: Result) -> bool:
    return result.design in (Design.ONE_SAMPLE_POOLED_SHARE, Design.GROUP_POOLED_SHARES)


def put_event_table(model: SheetModel, row: int, result: Result) -> tuple[int, Chart | None]:
    """Group | events | total | share or rate | interval | rows, from ``result.groups``; and a bar chart.

    Events (and totals of people) are marked as counts, so sharing mode hides a
    small one and the share, rate and interval that would give it back.
    """
    groups = [g for g in result.groups if isinstance(g, Mapping) and g.get("label") is not None]
    if not groups:
        return row, None
    binomial = _binomial(result)
    headers = rate_readings.table_headers(result)
    model.put_row(row, headers, "header")
    top = row + 1
    value_style = "percent" if binomial else "number"
    for i, g in enumerate(groups):
        r = top + i
        model.put(r, 0, str(g["label"]), "label")
        _count(model, r, 1, g.get("events"))
        if binomial:
            _count(model, r, 2, g.get("total"))
        else:
            total = _num(g.get("total"))
            model.put(r, 2, total, "fixed1" if total is not None else "text")  # person-time as typed, to 0.1
        hidden = bool(g.get("suppressed")) or isinstance(g.get("events"), Hidden)
        for col, key in ((3, "rate"), (4, "ci_low"), (5, "ci_high")):
            value = _num(g.get(key))
            if value is None and hidden:
                model.put(r, col, "suppressed", "suppressed")  # sharing mode: it would give the events back
            else:
                model.put(r, col, value, value_style if value is not None else "text")
        _count(model, r, 6, g.get("rows"), counts_records=False)
        # The share or rate and its interval give the events back with the total.
        model.count_dependents[(r, 1)] = [(r, 3), (r, 4), (r, 5)]
    bottom = top + len(groups) - 1
    if len(groups) < 2:
        return bottom + 2, None  # one pooled share or rate: the table says it all
    chart = Chart(
        kind="column",
        title=rate_readings.chart_title(result),
        categories=f"{_a1(top, 0, True)}:{_a1(bottom, 0, True)}",
        series=[ChartSeries(headers[3], f"{_a1(top, 3, True)}:{_a1(bottom, 3, True)}")],
        anchor="",
        y_title=headers[3],
    )
    return bottom + 2, chart


def _count(model: SheetModel, row: int, col: int, value: Any, *, counts_records: bool = True) -> None:
    if _finite(value):
        model.put(row, col, int(value), "integer", is_count=counts_records)
    else:
        model.put(row, col, value, "text")  # a count hidden by sharing mode shows itself
