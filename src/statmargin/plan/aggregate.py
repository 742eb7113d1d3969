"""Recognising summary tables: count columns, events out of a total, events per person-time.

The plan step calls :func:`suggest_roles` on the data table and shows its
suggestions on the roles sheet; it never applies them. Each suggestion carries
a ``Reason`` code with the evidence (column names and how many rows were
checked) so the wording is made in ``words``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..read.table import Column, Table, not_none
from ..vocabulary import MeasureType
from ..vocabulary.codes import Coded, Reason, coded
from .types import infer_type

# Words that name a count of events (numerators). Generic count words also mark a
# frequency-weight column when no denominator fits.
EVENT_WORDS = frozenset({
    "positive", "positives", "cases", "case", "deaths", "death", "events", "event", "failed",
    "fails", "failures", "fail", "infections", "admissions", "readmissions", "incidents",
    "complaints", "defects", "errors", "detected", "confirmed", "violations", "deficiencies",
    "screened", "reactive", "abnormal", "referred", "referrals", "hits", "outbreaks",
})
COUNT_WORDS = frozenset({"n", "count", "counts", "number", "num", "freq", "frequency", "records", "tally"})
# Denominators of people or things (events out of a total).
OUT_OF_WORDS = frozenset({
    "screened", "tested", "tests", "inspections", "inspected", "visits", "enrolled", "eligible",
    "attendees", "samples", "examined", "patients", "clients", "households", "births", "total",
    "denominator", "checked", "audited", "reviewed", "contacts", "participants", "registered",
})
# Denominators of person-time or population (events per unit).
PER_PHRASES = ("person years", "person year", "person months", "person days", "patient years",
               "years at risk", "time at risk", "follow up years")
PER_WORDS = frozenset({"population", "pop", "py", "pyears", "residents", "inhabitants", "exposure",
                       "catchment"})
MIN_ROWS = 2  # a suggestion needs at least this many rows holding both columns


@dataclass(frozen=True)
class Suggestion:
    """A role the columns seem to play, with the evidence; applied only if the user agrees.

    ``reason.code`` says which: ``SUGGEST_EVENTS_OUT_OF`` (``events`` out of
    ``total``), ``SUGGEST_EVENTS_PER`` (``events`` per ``total``, person-time or
    population) or ``SUGGEST_COUNT`` (``count`` is a frequency weight of the rows).
    """

    reason: Coded
    events: str | None = None
    total: str | None = None
    count: str | None = None


def _words(name: str) -> tuple[str, set[str]]:
    """A header as lower-case words joined by single spaces, and the set of its words."""
    text = " ".join(re.split(r"[^a-z0-9]+", name.lower())).strip()
    return text, set(text.split())


def _is_events_name(name: str) -> bool:
    _, words = _words(name)
    return bool(words & (EVENT_WORDS | COUNT_WORDS))


def _denominator_kind(name: str) -> Reason | None:
    text, words = _words(name)
    if words & PER_WORDS or any(phrase in text for phrase in PER_PHRASES):
        return Reason.SUGGEST_EVENTS_PER
    if words & OUT_OF_WORDS:
        return Reason.SUGGEST_EVENTS_OUT_OF
    return None


def _numbers(column: Column) -> np.ndarray | None:
    """The column's numbers (NaN where blank) when it holds numbers 0 or more and no text."""
    if not_none(column.labels).any():  # any text: not counts
        return None
    finite = np.isfinite(column.numbers)
    if finite.sum() < MIN_ROWS or np.any(column.numbers[finite] < 0):
        return None
    return column.numbers


def _whole(values: np.ndarray) -> bool:
    finite = values[np.isfinite(values)]
    return bool(np.all(finite == np.floor(finite)))


def suggest_roles(table: Table) -> list[Suggestion]:
    """Suggest events/out-of, events/per and count roles for a summary table.

    Parameters
    ----------
    table : Table
        The data sheet as read.

    Returns
    -------
    list of Suggestion
        For each whole-number column named like a count of events, the nearest
        column named like a denominator of people (events out of a total) and the
        nearest named like person-time or a population (events per unit) in which
        every row holds at least as much, and more in some row; then, when no such
        pair uses it, a whole-number column named like a count ("n", "count") beside
        categorical columns, as a frequency weight. Nothing is applied.

    Notes
    -----
    Names are matched on whole words of the header (``EVENT_WORDS``, ``COUNT_WORDS``,
    ``OUT_OF_WORDS``, ``PER_WORDS``); values must be numbers 0 or more with no text,
    events whole numbers, people whole numbers (person-time may be fractional).
    These are rules of thumb of our own; a suggestion only pre-fills the roles sheet.

    Examples
    --------
    >>> import pandas as pd
    >>> frame = pd.DataFrame({"Site": ["A", "A", "B"], "Screened": [120, 98, 140],
    ...                       "Positive": [6, 3, 9], "Population": [15000, 15000, 22000]})
    >>> for s in suggest_roles(Table.from_frame(frame)):
    ...     print(s.reason.code, s.events, s.total)
    suggest_events_per Screened Population
    suggest_events_out_of Positive Screened
    suggest_events_per Positive Population
    """
    names = list(table.columns)
    numeric = {name: _numbers(table.columns[name]) for name in names}
    suggestions: list[Suggestion] = []
    used: set[str] = set()
    for i, name in enumerate(names):
        events = numeric[name]
        if events is None or not _whole(events) or not _is_events_name(name):
            continue
        best: dict[Reason, tuple[int, str, int, bool]] = {}
        for j, other in enumerate(names):
            totals = numeric[other]
            kind = _denominator_kind(other)
            if other == name or totals is None or kind is None:
                continue
            if kind is Reason.SUGGEST_EVENTS_OUT_OF and not _whole(totals):
                continue
            both = np.isfinite(events) & np.isfinite(totals)
            rows = int(both.sum())
            if rows < MIN_ROWS or np.any(events[both] > totals[both]) or not np.any(totals[both] > events[both]):
                continue
            distance = abs(i - j)
            if kind not in best or distance < best[kind][0]:
                best[kind] = (distance, other, rows, _whole(totals))
        for kind in (Reason.SUGGEST_EVENTS_OUT_OF, Reason.SUGGEST_EVENTS_PER):
            if kind in best:
                _, other, rows, whole = best[kind]
                facts: dict[str, object] = {"events": name, "rows": rows}
                if kind is Reason.SUGGEST_EVENTS_OUT_OF:
                    facts["total"] = other
                else:
                    facts.update(per=other, whole=whole)
                suggestions.append(Suggestion(coded(kind, **facts), events=name, total=other))
                used.update({name, other})
    suggestions.extend(_count_suggestions(table, numeric, used))
    return suggestions


def _count_suggestions(table: Table, numeric: dict[str, np.ndarray | None], used: set[str]) -> list[Suggestion]:
    """A lone whole-number count column beside categorical columns: a frequency weight."""
    categories = [
        name for name, column in table.columns.items()
        if numeric[name] is None and infer_type(column).type is MeasureType.CATEGORICAL
    ]
    if not categories:
        return []
    out = []
    for name, values in numeric.items():
        _, words = _words(name)
        if values is None or name in used or not _whole(values) or not words & COUNT_WORDS:
            continue
        out.append(Suggestion(coded(Reason.SUGGEST_COUNT, count=name, categories=tuple(categories)), count=name))
    return out
