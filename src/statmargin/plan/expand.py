"""Expand the user's roles into concrete analyses, and parse one-sample comparison values.

Each outcome is analysed:

- against its comparison value, when one is given (``ColumnChoice.against``);
- with its wide-form partner, when ``paired_with`` names another column;
- by each compare-by column; with a pairing key and a two-level compare-by
  column this becomes a paired (long-form) analysis.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import OptionError, RoleError
from ..read.table import Table
from ..vocabulary import MeasureType, Role
from .model import ColumnChoice, Plan
from .types import TypeInfo, infer_type


@dataclass
class Analysis:
    """One question to answer: an outcome and what it is compared with."""

    outcome: str
    by: str | None = None
    against: float | dict[str, float] | None = None  # parsed comparison value or shares
    against_text: str | None = None  # as the user typed it
    pairing_key: str | None = None  # long-form pairing: key column (with ``by``)
    paired_with: str | None = None  # wide-form pairing: the second measurement column
    outcome_choice: ColumnChoice | None = None
    by_choice: ColumnChoice | None = None


def _number(text: str, what: str) -> float:
    t = text.strip()
    percent = t.endswith("%")
    if percent:
        t = t[:-1].strip()
    try:
        value = float(t)
    except ValueError:
        raise OptionError(f"{what}: {text.strip()!r} is not a number.") from None
    if not math.isfinite(value):
        raise OptionError(f"{what}: {text.strip()!r} is not a finite number.")
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
    """
    text = (text or "").strip()
    where = f"Comparison value for {column}"
    if not text:
        raise OptionError(f"{where} is empty; give a number, or LABEL=SHARE for categories.")
    kind = type_info.type
    if kind in (MeasureType.CONTINUOUS, MeasureType.ORDINAL):
        if "=" in text:
            raise OptionError(
                f"{where}: {text!r} gives shares, but {column} holds numbers; give one number such as 20."
            )
        return _number(text, where)
    if kind is not MeasureType.CATEGORICAL:
        raise RoleError(f"{column} is {kind.value}, so it cannot be compared with a fixed value; set its type.")
    if "=" not in text:
        raise OptionError(
            f"{where}: {text!r} is a single number, but {column} holds categories; write LABEL=SHARE"
            f" (e.g. {type_info.levels[0] if type_info.levels else 'yes'}=0.5)."
        )
    shares: dict[str, float] = {}
    for part in text.split(","):
        if not part.strip():
            continue
        if "=" not in part:
            raise OptionError(f"{where}: {part.strip()!r} is not LABEL=SHARE.")
        label, _, value = part.partition("=")
        label = label.strip()
        if label not in type_info.levels:
            known = ", ".join(type_info.levels)
            raise OptionError(f"{where}: {label!r} is not a category of {column} (categories: {known}).")
        if label in shares:
            raise OptionError(f"{where}: {label!r} is given twice.")
        share = _number(value, where)
        if not 0.0 < share < 1.0:
            raise OptionError(f"{where}: the share for {label!r} must be between 0 and 1, got {value.strip()}.")
        shares[label] = share
    if len(shares) > 1:
        missing = [lev for lev in type_info.levels if lev not in shares]
        if missing:
            raise OptionError(
                f"{where}: shares are missing for {', '.join(repr(m) for m in missing)}; give one share"
                " per category, or one LABEL=SHARE only."
            )
        total = sum(shares.values())
        if abs(total - 1.0) > 1e-6:
            raise OptionError(f"{where}: the shares add up to {total:g}, not 1.")
    return shares


def expand(plan: Plan, table: Table) -> list[Analysis]:
    """Turn the roles of a plan into the analyses to run, in a stable order.

    Parameters
    ----------
    plan : roles.Plan
        Column roles and choices.
    table : table.Table
        The data (used to check names and to read types and levels).

    Returns
    -------
    list of Analysis
        For each outcome in plan order: its comparison value, its wide-form pair,
        then each compare-by column in plan order.

    Raises
    ------
    RoleError
        No outcome, more than one pairing key, or an outcome with nothing to compare.
    ColumnNotFoundError
        A named column is not in the table (with the closest names).
    OptionError
        A comparison value does not fit its outcome.
    """
    for choice in plan.columns:
        if choice.role is not Role.IGNORE:  # ignored columns may have left the sheet; that is fine
            table.column(choice.name)
        if choice.paired_with and choice.role is Role.OUTCOME:
            table.column(choice.paired_with)
    outcomes = [c for c in plan.columns if c.role is Role.OUTCOME]
    bys = [c for c in plan.columns if c.role is Role.COMPARE_BY]
    keys = [c for c in plan.columns if c.role is Role.PAIRING_KEY]
    if not outcomes:
        raise RoleError("No column has the role 'outcome'; mark at least one outcome column.")
    if len(keys) > 1:
        names = ", ".join(repr(k.name) for k in keys)
        raise RoleError(f"Only one pairing key is allowed, but {names} are marked; keep one.")
    key = keys[0].name if keys else None
    if key and not bys:
        raise RoleError(
            f"Pairing key {key!r} needs a compare-by column that says which measurement each row is"
            " (e.g. before/after)."
        )

    analyses: list[Analysis] = []
    for out in outcomes:
        before = len(analyses)
        if out.against is not None and str(out.against).strip() != "":
            info = infer_type(table.column(out.name), out)
            value = parse_against(str(out.against), info, column=out.name)
            analyses.append(Analysis(out.name, against=value, against_text=str(out.against), outcome_choice=out))
        if out.paired_with:
            if out.paired_with == out.name:
                raise RoleError(f"{out.name!r} cannot be paired with itself; name the other measurement column.")
            partner = plan.choice(out.paired_with)
            analyses.append(
                Analysis(out.name, paired_with=out.paired_with, outcome_choice=out, by_choice=partner)
            )
        for by in bys:
            if by.name == out.name:
                continue
            analyses.append(Analysis(out.name, by=by.name, pairing_key=key, outcome_choice=out, by_choice=by))
        if len(analyses) == before:
            raise RoleError(
                f"Outcome {out.name!r} has nothing to be compared with; mark a compare-by column, give a"
                " comparison value, or name a column to pair it with."
            )
    return analyses
