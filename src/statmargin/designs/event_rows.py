"""Rows of events with their totals (out of people, or per person-time), by group: the data of the event designs.

An events column counts events in each row; its total is the column it is
``out_of`` (people screened, inspections) or ``per`` (person-time, a
population). Rows are used when both numbers are there (and the group label,
for a comparison); the tests pool them per group (``stats.aggregated``).
Impossible rows were refused when the analyses were planned (``plan.expand``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import NotEnoughDataError
from ..plan.expand import NUMBERS
from ..plan.rates_units import parse_per_unit
from ..plan.types import category_labels
from ..results import Result
from ..stats.aggregated import Pooled, pool
from ..vocabulary import Design, MeasureType
from ..vocabulary.codes import Caution, Skip, coded
from .base import Prepared, Skipped
from .groups import levels_present
from .question import Question


@dataclass
class EventRows:
    """Each group's usable rows of (events, totals), in display order, and what was left out."""

    events: str  # the events column
    total: str  # the column of totals (people) or of person-time / population
    binomial: bool  # events out of people (True) or per person-time (False)
    groups: dict[str, tuple[np.ndarray, np.ndarray]]
    n_excluded: int  # rows holding anything that could not be used
    per: float  # rates are given per this many units of the total (1 for shares)
    noun: str | None  # the unit's noun as the user wrote it ("person-years"), if any
    strata: list[str] | None = None  # against a target: each row's site (compare-by labels), if any

    def pool(self, prepared: Prepared) -> Pooled:
        """The rows added up per group; a group with no people or no person-time skips the analysis."""
        try:
            return pool(self.groups, binomial=self.binomial)
        except NotEnoughDataError as err:
            assert err.reason is not None
            raise Skipped(err.reason, prepared) from None


def event_rows(question: Question) -> EventRows:
    """The question's rows of events and totals by group (one group, "all", without a compare-by column)."""
    cached = question.cache.get("event_rows")
    if isinstance(cached, EventRows):
        return cached
    analysis = question.analysis
    total = str(analysis.out_of or analysis.per)
    events = question.values(question.outcome, NUMBERS)
    totals = question.values(question.table.column(total), NUMBERS)
    usable = events.usable & totals.usable
    if question.by is not None and question.by_info is not None:
        by = question.values(question.by, question.by_info)
        usable &= by.usable
        labels = by.values[usable]
        levels = levels_present(question.by_info, labels)
    else:
        labels = np.full(int(usable.sum()), "all", dtype=object)
        levels = ["all"]
    e, t = events.values[usable], totals.values[usable]
    groups = {level: (e[labels == level], t[labels == level]) for level in levels}
    unit = parse_per_unit(question.settings.per_unit) if question.settings.per_unit else None
    per = 1.0 if analysis.out_of or unit is None else unit.per
    rows = EventRows(question.outcome.name, total, bool(analysis.out_of), groups, question.left_out(usable),
                     per, unit.noun if unit is not None else None, _strata(question, usable))
    question.cache["event_rows"] = rows
    return rows


def _strata(question: Question, usable: np.ndarray) -> list[str] | None:
    """Each used row's combination of compare-by labels (category columns only), or None without any."""
    names = [name for name in question.analysis.strata
             if question.types.info(name, None).type is MeasureType.CATEGORICAL]
    if not names or question.by is not None:
        return None
    columns = [category_labels(question.table.column(name))[usable] for name in names]
    return [" | ".join("" if label is None else str(label) for label in row) for row in zip(*columns, strict=True)]


def shell(question: Question, design: Design) -> tuple[Prepared, EventRows, Pooled]:
    """The Prepared of an event design: pooled groups as summaries, the sample size, the rows left out.

    ``n`` is the number of people for events out of a total (the records the rows
    stand for) and the number of events for events per person-time.
    """
    rows = event_rows(question)
    prepared = Prepared(design, n_excluded=rows.n_excluded)
    prepared.extra.update(rows=rows)
    if not rows.groups or not any(e.size for e, _ in rows.groups.values()):
        raise Skipped(coded(Skip.NO_USABLE_VALUES, name=rows.events), prepared)
    pooled = rows.pool(prepared)
    prepared.n = int(round(float(pooled.totals.sum()))) if rows.binomial else int(pooled.events.sum())
    prepared.summaries = [
        {"label": label, "events": int(x), "total": int(round(t)) if rows.binomial else float(t), "rows": int(r)}
        for label, x, t, r in zip(pooled.labels, pooled.events, pooled.totals, pooled.rows, strict=True)
    ]
    prepared.extra["pooled"] = pooled
    return prepared, rows, pooled


def decorate_events(result: Result, question: Question, prepared: Prepared) -> None:
    """What every result of an event design carries: the total's column, the unit and the target as typed."""
    rows: EventRows | None = prepared.extra.get("rows")
    if rows is None:
        return
    result.extra.update(total_column=rows.total, per=rows.per, per_noun=rows.noun,
                        events_kind="out_of" if rows.binomial else "per")
    if question.analysis.against_text is not None:
        result.extra["target_text"] = question.analysis.against_text
    if rows.strata is not None:
        result.extra["dispersion_within"] = list(question.analysis.strata)


def independence_caution(result: Result, rows: EventRows) -> None:
    """Counts of events are read as independent people (or events); say so with the result."""
    caution = coded(Caution.AGGREGATE_INDEPENDENCE, events=rows.events, total=rows.total)
    if caution not in result.notes:
        result.notes.append(caution)
