"""Each analysis as a question in words, and the labels readings name."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..results import Result
from ..vocabulary import Design, EstimateKind, Test
from .numbers import fmt_percent, is_number

PAIRED = (Design.PAIRED_CONTINUOUS, Design.PAIRED_CATEGORICAL)
ONE_SAMPLE = (
    Design.ONE_SAMPLE_CONTINUOUS,
    Design.ONE_SAMPLE_CATEGORICAL,
    Design.ONE_SAMPLE_POOLED_SHARE,
    Design.ONE_SAMPLE_RATE,
)
# Rows of events with their totals (out of people, or per person-time), pooled per group.
EVENT_DESIGNS = (
    Design.ONE_SAMPLE_POOLED_SHARE,
    Design.GROUP_POOLED_SHARES,
    Design.ONE_SAMPLE_RATE,
    Design.GROUP_RATES,
)
OVER_TIME = (Design.PERIOD_SHARES, Design.PERIOD_CENTRE)
STEP_WORDS = {"week": "week to week", "month": "month to month", "quarter": "quarter to quarter",
              "year": "year to year"}


def period_question(result: Result) -> str:
    """'How has the share of Vaccinated = Yes changed month to month?' (for one group: 'in Team Heron')."""
    extra = result.extra if isinstance(result.extra, Mapping) else {}
    outcome = result.outcome or "the outcome"
    step = STEP_WORDS.get(str(extra.get("grain") or "month"), "period to period")
    if result.design == Design.PERIOD_SHARES and extra.get("level"):
        what = f"the share of {outcome} = {extra['level']}"
    elif extra.get("centre"):
        what = f"the {extra['centre']} {outcome}"
    else:
        what = outcome
    group = extra.get("group")
    where = f" in {named(result, str(group))}" if group is not None and result.exposure else ""
    if group is not None and result.exposure and named(result, str(group)) == str(group):
        where = f" for {result.exposure} = {group}"
    return f"How has {what} changed {step}{where}?"


def group_labels(result: Result) -> list[str]:
    """The labels of the result's groups, in order."""
    return [str(g.get("label")) for g in result.groups if isinstance(g, Mapping) and g.get("label") is not None]


def named(result: Result, label: str) -> str:
    """A group label that is a bare number gets its column's name: '2' -> 'group 2'."""
    try:
        float(label)
    except (TypeError, ValueError):
        return label
    return f"{result.exposure} {label}" if result.exposure else label


def wide_pair(result: Result) -> bool:
    """A pair of measurement columns (``pairing`` is the second column, no compare-by column)."""
    return result.design in PAIRED and not result.exposure and bool(result.pairing)


def two_labels(result: Result) -> tuple[str, str]:
    """The two compared labels, first minus second (from the estimate, else the groups)."""
    est = result.estimate
    if est is not None and est.kind is EstimateKind.PAIRED_SHARE_DIFFERENCE:
        if wide_pair(result):
            return result.outcome, str(result.pairing)
        conditions = result.extra.get("conditions") if isinstance(result.extra, Mapping) else None
        if isinstance(conditions, (list, tuple)) and len(conditions) == 2:
            return str(conditions[0]), str(conditions[1])
        return "the first measurement", "the second measurement"
    if est is not None and len(est.levels) >= 2:
        return est.levels[0], est.levels[1]
    labels = group_labels(result)
    if len(labels) >= 2:
        return labels[0], labels[1]
    return "the first group", "the second group"


def against_text(against: Any) -> str:
    """A stated value or stated shares as written in a question."""
    if isinstance(against, Mapping):
        return ", ".join(f"{k} {fmt_percent(v)}" for k, v in against.items())
    if is_number(against):
        return f"{float(against):g}"
    return str(against) if against is not None else "the stated value"


def share_label_and_target(result: Result) -> tuple[str, float | None]:
    """The counted label of a one-share question and its stated share."""
    est = result.estimate
    against = result.against if isinstance(result.against, Mapping) else {}
    label = None
    if isinstance(result.extra, Mapping):
        label = result.extra.get("level") or result.extra.get("label")
    if label is None and est is not None:
        label = est.level
    if label is None and len(against) == 1:
        label = next(iter(against))
    target = against.get(label, against.get(str(label))) if label is not None else None
    if target is None and is_number(result.against):
        target = result.against
    if target is None and isinstance(result.extra, Mapping):
        target = result.extra.get("target_share")
    return (str(label) if label is not None else "the counted value"), (float(target) if is_number(target) else None)


def rate_unit(result: Result) -> str:
    """The unit of a result's rates: 'per 1,000 person-years', 'per 1,000 Population' or 'per Person-years'."""
    from .rates_words import per_text

    extra = result.extra if isinstance(result.extra, Mapping) else {}
    per, noun, total = extra.get("per"), extra.get("per_noun"), extra.get("total_column") or "unit"
    if noun:
        return per_text(per, str(noun))
    if not is_number(per) or float(per) == 1.0:
        return f"per {total}"
    return f"{per_text(per)} {total}"


def events_subject(result: Result) -> str:
    """'Positive out of Screened' or 'Cases per 1,000 person-years': what an event design measures."""
    outcome = result.outcome or "the events"
    extra = result.extra if isinstance(result.extra, Mapping) else {}
    if extra.get("events_kind") == "out_of":
        return f"{outcome} out of {extra.get('total_column') or 'the totals'}"
    return f"{outcome} {rate_unit(result)}"


def _events_question(result: Result) -> str:
    subject = events_subject(result)
    extra = result.extra if isinstance(result.extra, Mapping) else {}
    if result.design == Design.ONE_SAMPLE_POOLED_SHARE:
        target = f"{float(result.against) * 100:.3g}%" if is_number(result.against) else "its target"
        return f"Does {subject} differ from the target {target}?"
    if result.design == Design.ONE_SAMPLE_RATE:
        target = f"the target {extra['target_text']}" if extra.get("target_text") else "its target"
        return f"Does the rate of {subject} differ from {target}?"
    what = "" if result.design == Design.GROUP_POOLED_SHARES else "the rate of "
    return f"Does {what}{subject} differ by {result.exposure or 'the groups'}?"


def question(result: Result) -> str:
    """The analysis as a question in words, e.g. 'Does Wait differ by District?'."""
    outcome, by = result.outcome or "the outcome", result.exposure or "the groups"
    design = result.design
    if design in EVENT_DESIGNS:
        return _events_question(result)
    if design in OVER_TIME:
        return period_question(result)
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        return f"Does {outcome} differ from {against_text(result.against)}?"
    if design == Design.ONE_SAMPLE_CATEGORICAL:
        if result.test == Test.BINOMIAL_EXACT:
            label, target = share_label_and_target(result)
            if target is not None:
                return f"Does the share of {outcome} = {label} differ from {fmt_percent(target)}?"
        return f"Do the shares of {outcome} differ from the stated shares ({against_text(result.against)})?"
    if design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS):
        return f"Does {outcome} differ by {by}?"
    if design == Design.TWO_CATEGORICAL:
        return f"Does the mix of {outcome} differ by {by}?"
    if design == Design.TWO_CONTINUOUS:
        return f"Do {outcome} and {by} go together?"
    if design in PAIRED:
        if wide_pair(result):
            what = "the mix of values" if design == Design.PAIRED_CATEGORICAL else "the value"
            return f"Does {what} change from {outcome} to {result.pairing} on the same records?"
        first, second = (named(result, label) for label in two_labels(result))
        pairing = f" (paired by {result.pairing})" if result.pairing else ""
        what = "the share of " if design == Design.PAIRED_CATEGORICAL else ""
        return f"Does {what}{outcome} change between {first} and {second}{pairing}?"
    return f"What does {outcome} show?"
