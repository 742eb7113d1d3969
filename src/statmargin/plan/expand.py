"""Expand the user's roles into concrete analyses.

Each outcome is analysed:

- against its comparison value, when one is given (``ColumnChoice.against``);
- with its wide-form partner, when ``paired_with`` names another column;
- over time, when a column has the role ``period`` (the whole data; and, with
  the "Series by group" setting, each group of each compare-by column);
- by each compare-by column; with a pairing key and a two-level compare-by
  column this becomes a paired (long-form) analysis.

Each events column (rows of events out of a total, or per person-time) is
analysed the same way: against its target, then by each compare-by column. A
count column weights every analysis (each row stands for that many records).
Impossible event rows and counts are refused here, once, in one line.

A period column is never a compare-by column: a compare-by column whose text
cells all read as periods (``2026-03``, ``Mar 2026``, ``2026 Q1``) is refused
with a one-line message pointing at the period role, unless its type was set
on the roles sheet.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

import numpy as np

from ..errors import NotEnoughDataError, RoleError
from ..options.against import parse_against
from ..read.table import Column, Table
from ..vocabulary import MeasureType, Precision, Role
from ..vocabulary.codes import Skip, coded
from ..words import rates_words, refusals
from ..words.sentences import say
from .clean import NUMBERS
from .levels import look_alikes
from .model import ColumnChoice, Plan, Settings
from .rates_units import parse_per_unit, parse_target, rate_target, share_target
from .types import category_labels, infer_type, usable_values


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
    out_of: str | None = None  # events: the column of totals (people, inspections) they are out of
    per: str | None = None  # events: the column of person-time or population they are per
    count: str | None = None  # a frequency weight: each row stands for this many records
    strata: tuple[str, ...] = ()  # events against a target: groups within which rows should agree (sites)

    @property
    def events(self) -> bool:
        """An analysis of rows of events (the outcome is a count of events with its total)."""
        return bool(self.out_of or self.per)
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
        No outcome, more than one pairing key, or an outcome with nothing to compare;
        an events column without one total, or with an impossible row (a count that
        is not a whole number, events above their total); a count column that is not
        whole numbers 0 or more, or that cannot weight the analyses asked for.
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
    events = [c for c in plan.columns if c.role is Role.EVENTS]
    if not outcomes and not events:
        raise RoleError(refusals.no_outcome_role())
    if len(keys) > 1:
        names = ", ".join(repr(k.name) for k in keys)
        raise RoleError(refusals.several_keys(names))
    key = keys[0].name if keys else None
    if key and not bys:
        raise RoleError(refusals.key_needs_by(key))
    count = _count_column(plan, table, events, key)
    period = _period_column(plan)
    if period is not None and (count or events):
        from ..words.period_words import period_with_aggregated

        other = (Role.COUNT, count) if count else (Role.EVENTS, events[0].name)
        raise RoleError(period_with_aggregated(period, other[1], other[0].value))
    for by in bys:
        _refuse_periods_as_groups(table.column(by.name), by)

    analyses: list[Analysis] = []
    for out in outcomes:
        before = len(analyses)
        if out.against is not None and str(out.against).strip() != "":
            info = infer_type(table.column(out.name), out)
            value = parse_against(str(out.against), info, column=out.name)
            analyses.append(Analysis(out.name, against=value, against_text=str(out.against), outcome_choice=out,
                                     count=count))
        if out.paired_with:
            if out.paired_with == out.name:
                raise RoleError(refusals.paired_with_itself(out.name))
            partner = plan.choice(out.paired_with)
            analyses.append(
                Analysis(out.name, paired_with=out.paired_with, outcome_choice=out, by_choice=partner, count=count)
            )
        if period is not None:
            analyses.append(Analysis(out.name, period=period, outcome_choice=out))
        for by in bys:
            if by.name == out.name:
                continue
            analyses.append(Analysis(out.name, by=by.name, pairing_key=key, outcome_choice=out, by_choice=by,
                                     count=count))
            if period is not None and plan.settings.series_by_group and not key:
                analyses.extend(
                    Analysis(out.name, by=by.name, outcome_choice=out, by_choice=by, period=period, group=level)
                    for level in _group_levels(table.column(by.name), by, plan.settings.merge_look_alikes)
                )
        if len(analyses) == before:
            raise RoleError(refusals.outcome_alone(out.name))
    for choice in events:
        analyses.extend(_event_analyses(choice, bys, table, plan.settings))
    return analyses


# ---------------------------------------------------------------- count weights and events


def _numbers(table: Table, name: str) -> np.ndarray:
    """A column's numbers (NaN where blank or text), as the analyses read counts and totals."""
    return usable_values(table.column(name), NUMBERS).values


def _first_bad_row(table: Table, name: str, values: np.ndarray) -> None:
    """Refuse a count column holding a number below 0 or not whole, naming the first such row."""
    finite = np.isfinite(values)
    bad = np.flatnonzero(finite & ((values < 0) | (values != np.floor(values))))
    if bad.size:
        i = int(bad[0])
        code = Skip.NEGATIVE_VALUE if values[i] < 0 else Skip.NOT_WHOLE_COUNT
        raise RoleError(say(coded(code, what=name, row=int(table.rows[i]), value=float(values[i]))))


def _count_column(plan: Plan, table: Table, events: list[ColumnChoice], key: str | None) -> str | None:
    """The count column (a frequency weight), checked; None when there is none."""
    counts = [c.name for c in plan.columns if c.role is Role.COUNT]
    if not counts:
        return None
    if len(counts) > 1:
        raise RoleError(rates_words.several_counts(", ".join(repr(n) for n in counts)))
    name = counts[0]
    if events:
        raise RoleError(rates_words.count_with_events(name, events[0].name))
    if key:
        raise RoleError(rates_words.count_with_pairing_key(name, key))
    _first_bad_row(table, name, _numbers(table, name))
    return name


def _event_analyses(choice: ColumnChoice, bys: list[ColumnChoice], table: Table, settings: Settings) -> list[Analysis]:
    """An events column against its target, then by each compare-by column, for each of its totals.

    A column may have both totals (positives out of people screened and per 1,000
    person-years). It has one target: a rate written with "per" ('2 per 1000') is
    for its Per total; anything else (4%, 0.04) is a share for its Out of total,
    and a bare number is a rate when the column has only a Per total.
    """
    name = choice.name
    totals = [(t, binomial) for t, binomial in ((choice.out_of, True), (choice.per, False)) if t]
    if not totals:
        raise RoleError(rates_words.events_need_total(name))
    for total, binomial in totals:
        if total == name:
            raise RoleError(rates_words.total_is_events(name))
        table.column(total)  # a missing column is refused with the closest names
        try:
            check_rows_of(table, name, total, binomial=binomial)
        except NotEnoughDataError as err:
            assert err.reason is not None
            raise RoleError(say(err.reason)) from None
    analyses: list[Analysis] = []
    if choice.against is not None and str(choice.against).strip() != "":
        target = _against_target(choice, str(choice.against), settings)
        # Sites differ for reasons of their own: extra variation is looked for within them.
        target.strata = tuple(by.name for by in bys if by.name not in (name, choice.out_of, choice.per))
        analyses.append(target)
    for total, binomial in totals:
        links = (total, None) if binomial else (None, total)
        for by in bys:
            if by.name not in (name, total):
                analyses.append(Analysis(name, by=by.name, outcome_choice=choice, by_choice=by, out_of=links[0],
                                         per=links[1]))
    if not analyses:
        raise RoleError(rates_words.events_alone(name))
    return analyses


def _against_target(choice: ColumnChoice, text: str, settings: Settings) -> Analysis:
    """The events column against its target: a share of its Out of total, or a rate of its Per total."""
    target = parse_target(text)
    as_rate = choice.per is not None and (choice.out_of is None or (target.unit is not None and not target.percent))
    if as_rate:
        unit = parse_per_unit(settings.per_unit) if settings.per_unit else None
        return Analysis(choice.name, against=rate_target(target, unit), against_text=text, outcome_choice=choice,
                        per=choice.per)
    return Analysis(choice.name, against=share_target(target), against_text=text, outcome_choice=choice,
                    out_of=choice.out_of)


def check_rows_of(table: Table, events: str, total: str, *, binomial: bool) -> None:
    """Refuse (``NotEnoughDataError``) the first row of events that cannot be: see ``aggregated.check_rows``."""
    from ..stats.aggregated import check_rows

    check_rows(_numbers(table, events), _numbers(table, total), binomial=binomial, events_name=events,
               totals_name=total, row_numbers=table.rows)


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
