"""Expand the user's roles into concrete analyses.

Each outcome is analysed:

- against its comparison value, when one is given (``ColumnChoice.against``);
- with its wide-form partner, when ``paired_with`` names another column;
- over time, when a column has the role ``period`` (the whole data; and, with
  the "Series by group" setting, each group of each compare-by column);
- by each compare-by column; with a pairing key and a two-level compare-by
  column this becomes a paired (long-form) analysis.

A period column is never a compare-by column: a compare-by column whose text
cells all read as periods (``2026-03``, ``Mar 2026``, ``2026 Q1``) is refused
with a one-line message pointing at the period role, unless its type was set
on the roles sheet.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

import numpy as np

from ..errors import RoleError
from ..options.against import parse_against
from ..read.table import Column, Table
from ..vocabulary import MeasureType, Precision, Role
from ..words import refusals
from .levels import look_alikes
from .model import ColumnChoice, Plan
from .types import category_labels, infer_type


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
    period: str | None = None  # the period column: the outcome over time (with ``by``: one group's series)
    group: str | None = None  # the level of ``by`` whose series this is


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
    period = _period_column(plan)
    for by in bys:
        _refuse_periods_as_groups(table.column(by.name), by)

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
        if period is not None:
            analyses.append(Analysis(out.name, period=period, outcome_choice=out))
        for by in bys:
            if by.name == out.name:
                continue
            analyses.append(Analysis(out.name, by=by.name, pairing_key=key, outcome_choice=out, by_choice=by))
            if period is not None and plan.settings.series_by_group and not key:
                analyses.extend(
                    Analysis(out.name, by=by.name, outcome_choice=out, by_choice=by, period=period, group=level)
                    for level in _group_levels(table.column(by.name), by, plan.settings.merge_look_alikes)
                )
        if len(analyses) == before:
            raise RoleError(refusals.outcome_alone(out.name))
    return analyses


# --------------------------------------------------------------------------- the period role


def _period_column(plan: Plan) -> str | None:
    """The one column marked ``period`` (None without one); refuse two."""
    from ..words.period_words import several_periods

    marked = [c.name for c in plan.columns if c.role is Role.PERIOD]
    if len(marked) > 1:
        raise RoleError(several_periods(marked))
    return marked[0] if marked else None


def _refuse_periods_as_groups(column: Column, choice: ColumnChoice) -> None:
    """Refuse a compare-by column whose text cells are all periods, unless the user set its type.

    A month column compared as unordered categories gives a chi-square with no
    trend; the period role gives the series, the trend and the flags instead.
    Years alone (``2025``, ``2026``) are left as groups: two years are a plain
    two-group comparison as often as a series.
    """
    from ..words.period_words import compare_by_holds_periods
    from .periods import read_period_text

    if choice.treat_as is not None:
        return
    if not bool(np.all(np.isnan(column.numbers))):
        return  # numbers (or dates) among the cells: not a column of period labels
    present = column.labels[column.labels != np.array(None)]  # elementwise: the cells holding text
    import pandas as pd

    distinct = pd.unique(present)
    if distinct.size < 2:
        return
    examples: list[str] = []
    for label in distinct:
        read = read_period_text(str(label))
        if read is None or read.precision is Precision.YEAR:
            return
        if len(examples) < 3:
            examples.append(str(label))
    raise RoleError(compare_by_holds_periods(column.name, examples))


def _group_levels(column: Column, choice: ColumnChoice, merge: bool) -> list[str]:
    """The groups of a compare-by column, in its level order, look-alike spellings merged as the run will."""
    info = infer_type(column, choice)
    if info.type not in (MeasureType.CATEGORICAL, MeasureType.ORDINAL) or not info.levels:
        return []
    kept: dict[str, str] = {}
    if merge:
        counts = Counter(label for label in category_labels(column) if label is not None)
        kept = {label: group.kept for group in look_alikes(counts) for label in group.labels}
    return list(dict.fromkeys(kept.get(level, level) for level in info.levels))
