"""Expand the user's roles into concrete analyses.

Each outcome is analysed:

- against its comparison value, when one is given (``ColumnChoice.against``);
- with its wide-form partner, when ``paired_with`` names another column;
- by each compare-by column; with a pairing key and a two-level compare-by
  column this becomes a paired (long-form) analysis.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import RoleError
from ..options.against import parse_against
from ..read.table import Table
from ..vocabulary import Role
from ..words import refusals
from .model import ColumnChoice, Plan
from .types import infer_type


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
        raise RoleError(refusals.no_outcome_role())
    if len(keys) > 1:
        names = ", ".join(repr(k.name) for k in keys)
        raise RoleError(refusals.several_keys(names))
    key = keys[0].name if keys else None
    if key and not bys:
        raise RoleError(refusals.key_needs_by(key))

    analyses: list[Analysis] = []
    for out in outcomes:
        before = len(analyses)
        if out.against is not None and str(out.against).strip() != "":
            info = infer_type(table.column(out.name), out)
            value = parse_against(str(out.against), info, column=out.name)
            analyses.append(Analysis(out.name, against=value, against_text=str(out.against), outcome_choice=out))
        if out.paired_with:
            if out.paired_with == out.name:
                raise RoleError(refusals.paired_with_itself(out.name))
            partner = plan.choice(out.paired_with)
            analyses.append(
                Analysis(out.name, paired_with=out.paired_with, outcome_choice=out, by_choice=partner)
            )
        for by in bys:
            if by.name == out.name:
                continue
            analyses.append(Analysis(out.name, by=by.name, pairing_key=key, outcome_choice=out, by_choice=by))
        if len(analyses) == before:
            raise RoleError(refusals.outcome_alone(out.name))
    return analyses
