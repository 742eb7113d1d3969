"""Words of the periods sheet: its title, column headers, flags and chart titles."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..plan.periods import MIN_ROWS_PER_PERIOD
from ..results import Result
from ..vocabulary import Design
from . import context as ctx
from .numbers import is_number

TITLE = "statmargin periods"
INTRO = (
    "Each outcome over time: the series with its interval, the control chart's centre line and limits "
    "(from the periods before the latest), and any unusual period with the rule it met. The chart "
    "beside each table draws the same numbers, with the interval as a dotted band."
)
PARTIAL = "partial period: shown, not compared or flagged"
NO_ROWS = "no rows"
FEW_ROWS = f"fewer than {MIN_ROWS_PER_PERIOD} rows: read with care"
NO_LIMITS = "No control limits: too few periods before the latest to set them."
HIDDEN = "suppressed"
NOTHING_OVER_TIME = "No outcome was followed over time in this run: mark a date or period column 'period' on the roles sheet."


def limits_line(chart: str, periods: int, latest: str) -> str:
    """Where the control limits come from."""
    plural = "period" if periods == 1 else "periods"
    return f"Control limits: {chart}, from the {periods} {plural} before {latest}."


def side(value: Any, centre: Any) -> str:
    """'high: ' or 'low: ' before a rule, by the point's side of the centre line."""
    if not (is_number(value) and is_number(centre)) or value == centre:
        return ""
    return "high: " if value > centre else "low: "


def _extra(result: Result) -> Mapping[str, Any]:
    return result.extra if isinstance(result.extra, Mapping) else {}


def value_header(result: Result) -> str:
    """'Share Yes', 'Mean', 'Median'."""
    extra = _extra(result)
    if result.design == Design.PERIOD_SHARES:
        return f"Share {extra.get('level', '')}".strip()
    return str(extra.get("centre", "mean")).capitalize()


def column_headers(value_name: str) -> dict[str, str]:
    """The table's headers by column key (``sheets.periods.COLUMNS``)."""
    return {
        "period": "Period",
        "n": "n",
        "value": value_name,
        "ci_low": "CI low",
        "ci_high": "CI high",
        "centre": "Centre line",
        "lower": "Lower limit",
        "upper": "Upper limit",
        "flag": "Unusual or notable",
    }


def chart_title(result: Result, value_name: str) -> str:
    """'Vaccinated same day: share Yes by month' (with the group for a group's series)."""
    extra = _extra(result)
    group = extra.get("group")
    where = f" ({result.exposure} = {group})" if group is not None and result.exposure else ""
    return f"{result.outcome}{where}: {value_name[:1].lower()}{value_name[1:]} by {extra.get('grain', 'period')}"


def axis_title(result: Result, context: Any = None) -> str | None:
    """The value axis title: the outcome's units for a mean or median, none for a share."""
    if result.design == Design.PERIOD_SHARES:
        return None
    return ctx.units_for(context, result.outcome) or None
