"""One-sample comparison values: a number for measures, LABEL=SHARE for categories."""

from __future__ import annotations

import math

from ..errors import OptionError, RoleError
from ..plan.types import TypeInfo
from ..vocabulary import MeasureType
from ..words import refusals


def _number(text: str, where: str) -> float:
    t = text.strip()
    percent = t.endswith("%")
    if percent:
        t = t[:-1].strip()
    try:
        value = float(t)
    except ValueError:
        raise OptionError(refusals.not_a_number(where, text.strip())) from None
    if not math.isfinite(value):
        raise OptionError(refusals.not_finite(where, text.strip()))
    return value / 100.0 if percent else value


def parse_against(text: str, type_info: TypeInfo, *, column: str = "the outcome") -> float | dict[str, float]:
    """Parse a one-sample comparison value for an outcome of the given type.

    Parameters
    ----------
    text : str
        A number for a continuous or ordinal outcome (e.g. ``"20"``); for a
        categorical outcome, ``"LABEL=SHARE"`` for one category or
        ``"A=0.25,B=0.25,C=0.5"`` for every category. Shares may be written as
        percentages (``"A=25%"``).
    type_info : TypeInfo
        The outcome's type and levels.
    column : str
        The outcome's name, for messages.

    Returns
    -------
    float or dict of str to float
        The value, or shares by label.

    Raises
    ------
    OptionError
        The text does not fit the outcome's type or levels (one-line message).

    Notes
    -----
    A full set of shares must name every category and add up to 1 (within 1e-6).
    A single share must lie strictly between 0 and 1.

    Examples
    --------
    >>> parse_against("Fail=10%", TypeInfo(MeasureType.CATEGORICAL, 2, ("Fail", "Pass")))
    {'Fail': 0.1}
    """
    text = (text or "").strip()
    where = refusals.against_where(column)
    if not text:
        raise OptionError(refusals.against_empty(where))
    kind = type_info.type
    if kind in (MeasureType.CONTINUOUS, MeasureType.ORDINAL):
        if "=" in text:
            raise OptionError(refusals.shares_for_number_column(where, text, column))
        return _number(text, where)
    if kind is not MeasureType.CATEGORICAL:
        raise RoleError(refusals.cannot_compare_kind(column, kind.value))
    if "=" not in text:
        example = type_info.levels[0] if type_info.levels else "yes"
        raise OptionError(refusals.number_for_categories(where, text, column, example))
    shares: dict[str, float] = {}
    for part in text.split(","):
        if not part.strip():
            continue
        if "=" not in part:
            raise OptionError(refusals.not_label_share(where, part.strip()))
        label, _, value = part.partition("=")
        label = label.strip()
        if label not in type_info.levels:
            raise OptionError(refusals.unknown_category(where, label, column, ", ".join(type_info.levels)))
        if label in shares:
            raise OptionError(refusals.share_twice(where, label))
        share = _number(value, where)
        if not 0.0 < share < 1.0:
            raise OptionError(refusals.share_out_of_range(where, label, value.strip()))
        shares[label] = share
    if len(shares) > 1:
        missing = [lev for lev in type_info.levels if lev not in shares]
        if missing:
            raise OptionError(refusals.shares_missing(where, ", ".join(repr(m) for m in missing)))
        total = sum(shares.values())
        if abs(total - 1.0) > 1e-6:
            raise OptionError(refusals.shares_total(where, total))
    return shares
