"""What the words need to know about a run besides a result: units, display precision, sharing mode.

The context is the sheets' ``ReportContext`` or a plain mapping (``{"units":
{...}}`` or ``{column: units}``); everything here reads it defensively so a
result can be worded on its own, without a run.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

from ..vocabulary.codes import Hidden
from .numbers import decimals_for, is_number

DEFAULT_SHARE_FLOOR = 11  # the sharing-mode default (sheets.share.DEFAULT_MIN_COUNT)


def get(context: Any, name: str, default: Any = None) -> Any:
    """A field of the context, whether it is an object or a mapping."""
    if context is None:
        return default
    if isinstance(context, Mapping):
        return context.get(name, default)
    return getattr(context, name, default)


def units_for(context: Any, column: str | None) -> str:
    """The units of ``column`` from ``context`` (a ReportContext, or a dict column -> units)."""
    if not column:
        return ""
    units = get(context, "units", None)
    if units is None and isinstance(context, Mapping):
        units = context
    if isinstance(units, Mapping):
        value = units.get(column)
        return str(value) if isinstance(value, str) and value.strip() else ""
    return ""


def display_units(context: Any, column: str | None) -> str:
    """Units to write after numbers; none when the column name already says them."""
    units = units_for(context, column)
    said = units and re.search(rf"\b{re.escape(units.lower())}\b", (column or "").lower())
    return "" if said else units


def column_decimals(context: Any, column: str | None) -> int | None:
    """The number of decimals the column's own values carry (its precision), when known."""
    decimals = get(context, "decimals", None)
    if isinstance(decimals, Mapping) and column in decimals:
        value = decimals[column]
        return int(value) if isinstance(value, int) else None
    return None


def reading_decimals(context: Any, column: str | None, *values: Any, extra: int = 1) -> int:
    """One number of decimals for the numbers of a reading: the column's precision plus ``extra``.

    Medians and shifts of whole numbers stay whole (no ``extra`` when every value
    shown already has the column's precision); without a known precision, about
    three significant digits.
    """
    own = column_decimals(context, column)
    if own is None:
        return decimals_for(*values)
    shown = [float(v) for v in values if is_number(v)]
    if extra and shown and all(round(v, own) == v for v in shown):
        extra = 0
    return min(own + extra, 4)


def observational(context: Any) -> bool:
    value = get(context, "observational", True)
    return bool(value) if isinstance(value, bool) else True


def share_floor(context: Any) -> int | None:
    """The sharing-mode minimum count, when sharing mode is on."""
    if not get(context, "share_mode", False):
        return None
    floor = get(context, "share_min_count", None)
    return int(floor) if isinstance(floor, int) and floor > 1 else DEFAULT_SHARE_FLOOR


def positive(count: Any) -> bool:
    """A count above zero; a count hidden by sharing mode is one (it hides 1 to N-1)."""
    return isinstance(count, Hidden) or (isinstance(count, int) and count > 0)


def below(count: Any, limit: int) -> bool:
    """A count above zero and under ``limit``; a hidden count is, whenever the limit reaches its floor."""
    if isinstance(count, Hidden):
        return count.small and limit >= count.floor  # a count hidden to protect another may be large
    return isinstance(count, int) and 0 < count < limit


def count_text(count: Any, context: Any = None) -> str:
    """A record count for a sentence; in sharing mode a small count becomes 'fewer than N'."""
    if count is None:
        return "a hidden number of"
    if not isinstance(count, int):
        return str(count)  # a Hidden marker from sharing mode formats itself
    floor = share_floor(context)
    if floor is not None and 0 < count < floor:
        return f"fewer than {floor}"
    return f"{count:,}"
