"""Words for aggregated rows: events out of totals, events per person-time, count weights.

Templates for the codes these analyses report (registered with
``words.sentences.register``), display helpers for rates per unit, and the
one-line refusals of the unit and target settings.
"""

from __future__ import annotations

from typing import Any

from ..vocabulary.codes import Caution, Code, Note, Reason, Refusal, Skip
from .sentences import Facts, number, register


def per_text(per: float | None, noun: str | None = None) -> str:
    """'per 1,000' (or 'per 1,000 person-years'); whole numbers with thousands separators.

    Examples
    --------
    >>> per_text(1000), per_text(100000, "people"), per_text(1), per_text(2.5)
    ('per 1,000', 'per 100,000 people', 'per 1', 'per 2.5')
    """
    if per is None:
        return ""
    shown = f"{per:,.0f}" if float(per).is_integer() else f"{per:g}"
    return f"per {shown}" + (f" {noun}" if noun else "")


def _p_text(p: Any) -> str:
    if p is None:
        return "not tested"
    return "p < 0.001" if p < 0.001 else f"p = {p:.3f}"


def _overdispersed(kind: str, f: Facts) -> str:
    return (
        f"The rows within groups vary more than {kind} sampling allows (dispersion "
        f"{f['dispersion']:.2f} over {f['rows']} rows, {_p_text(f.get('p'))}), so the p-value and "
        f"intervals use the quasi-{kind} adjustment (variances multiplied by {f['dispersion']:.2f})."
    )


def _events_above_total(f: Facts) -> str:
    return (
        f"Row {f['row']} has {number(f['events'])} in {f.get('events_name', 'the events')} but only "
        f"{number(f['total'])} in {f.get('totals_name', 'the totals')}; events cannot exceed their "
        "total, so fix that row."
    )


def _events_without_time(f: Facts) -> str:
    return (
        f"Row {f['row']} has {number(f['events'])} in {f.get('events_name', 'the events')} but no "
        f"{f.get('totals_name', 'person-time')}; give the person-time of that row or leave its "
        "events blank."
    )


TEMPLATES: dict[Code, Any] = {
    Skip.NOT_WHOLE_COUNT: lambda f: (
        f"Row {f['row']} of {f['what']} holds {number(f['value'])}, which is not a whole number; "
        "counts must be whole numbers 0 or more."
    ),
    Skip.NEGATIVE_VALUE: lambda f: (
        f"Row {f['row']} of {f['what']} holds {number(f['value'])}; counts and totals cannot be "
        "below 0, so fix that row."
    ),
    Skip.EVENTS_ABOVE_TOTAL: _events_above_total,
    Skip.EVENTS_WITHOUT_TIME: _events_without_time,
    Skip.NO_PERSON_TIME: lambda f: (
        f"Group '{f['label']}' has no person-time (its total is 0), so its rate is not defined."
        if f.get("label") is not None
        else "The person-time adds up to 0, so no rate is defined."
    ),
    Skip.NO_EVENTS: "No events were counted in any group, so there is no rate difference to test.",
    Skip.NO_RECORDS: lambda f: (
        f"Group '{f['label']}' has no records (its totals add up to 0)."
        if f.get("label") is not None
        else "The totals add up to 0; there is nothing to test."
    ),
    Note.RATES_OVERDISPERSED: lambda f: _overdispersed("Poisson", f),
    Note.SHARES_OVERDISPERSED: lambda f: _overdispersed("binomial", f),
    Note.RATE_NO_EVENTS_GROUP: (
        "Group '{label}' has no events, so its rate is 0 and the rate ratio is 0 or has no finite "
        "value; the interval is still valid."
    ),
    Note.WEIGHTED_BOOTSTRAP: (
        "The interval of the effect size comes from {resamples} bootstrap resamples of the "
        "weighted rows; it varies by resampling error from the one computed on repeated rows."
    ),
    Reason.ONE_RATE_EXACT: (
        "{outcome} is a count of events over person-time compared with a target rate, so the exact "
        "Poisson test was used."
    ),
    Reason.RATE_EXACT_SMALL: (
        "An expected count of events is below 5 (smallest {smallest:.3g}), so the exact conditional "
        "test of the rate ratio was used (Cochran's rule)."
    ),
    Reason.RATE_SCORE: (
        "Every expected count of events is at least 5 (smallest {smallest:.3g}), so the score test of "
        "the rate ratio was used."
    ),
    Reason.RATE_HOMOGENEITY: (
        "{n} groups' rates are compared, so a chi-square test of homogeneity of rates was used."
    ),
    Reason.QUASI_POISSON: (
        "The rows vary more than Poisson sampling allows (dispersion {dispersion:.2f}), so the "
        "quasi-Poisson version of the test was used."
    ),
    Reason.QUASI_BINOMIAL: (
        "The rows vary more than binomial sampling allows (dispersion {dispersion:.2f}), so the "
        "quasi-binomial version of the test was used."
    ),
    Reason.POOLED_SHARE_TARGET: (
        "{events} counts events out of {total}, so the rows were added up and the share compared with "
        "its target by the exact binomial test."
    ),
    Reason.POOLED_SHARES_TABLE: lambda f: (
        f"{f['events']} counts events out of {f['total']}, so the rows of each group of {f['by']} were added "
        "up into one table of events and non-events"
        + ("." if f.get("exact") else ", compared by a chi-square test of independence.")
    ),
    Reason.POOLED_RATES: lambda f: (
        f"{f['events']} counts events per {f['per']}, so the rows"
        + (f" of each group of {f['by']}" if f.get("by") else "")
        + " were added up into events over person-time (or population)."
    ),
    Reason.SUGGEST_EVENTS_OUT_OF: (
        "{events} looks like a count of events out of {total}: both hold whole numbers and "
        "{events} is at most {total} in all {rows} rows."
    ),
    Reason.SUGGEST_EVENTS_PER: lambda f: (
        f"{f['events']} looks like a count of events per {f['per']}: {f['events']} holds whole "
        f"numbers, {f['per']} holds larger "
        f"{'whole numbers' if f.get('whole') else 'numbers'} in all {f['rows']} rows, and its name "
        "suggests person-time or a population."
    ),
    Reason.SUGGEST_COUNT: lambda f: (
        f"{f['count']} looks like a count of records for each row of "
        f"{', '.join(f['categories'])}; mark it as a count to weight each row by it."
    ),
    Caution.AGGREGATE_INDEPENDENCE: (
        "The test treats the events in {events} as independent: each person counted once in one row "
        "and one group. Repeat visits or the same people counted in several rows make the p-value "
        "too small."
    ),
    # refusals of the rate and share methods: the same sentences as the options' own
    Refusal.TARGET_RATE: lambda f: target_rate_refused(f["value"]),
    Refusal.PER_UNIT: lambda f: per_unit_refused(f["value"]),
    Refusal.RATE_METHOD: lambda f: rate_method_refused(f["method"]),
    Refusal.TARGET_SHARE: lambda f: target_share_refused(f["value"]),
    Refusal.SHARE_TEST: lambda f: share_test_refused(f["test"]),
}
register(TEMPLATES)


# ---------------------------------------------------------------- refusals of settings


def per_unit_refused(text: str) -> str:
    """A per-unit setting that cannot be read."""
    return (
        f"The rate unit {text!r} cannot be read; write it like 'per 1,000', "
        "'per 100,000 people', 'per 1,000 person-years' or just 1000."
    )


def target_refused(text: str) -> str:
    """A target that cannot be read."""
    return (
        f"The target {text!r} cannot be read; write a share like 0.04 or 4%, or a rate like "
        "'2 per 1000' or '2 per 1,000 person-years'."
    )


def target_rate_refused(value: Any) -> str:
    """A target rate that is not a number above 0."""
    return f"The target rate {value!r} must be a number above 0, such as '2 per 1000'."


def target_share_refused(value: Any) -> str:
    """A target share outside 0 to 1."""
    return f"The target share {value!r} must be between 0 and 1 (exclusive), such as 0.04 or 4%."


def target_is_rate_for_share(text: str) -> str:
    """A rate ('per ...') given as the target of a share."""
    return (
        f"The target {text!r} is a rate, but these events are counted out of a total; give a share "
        "such as 0.04 or 4%."
    )


def target_unit_mismatch(text: str, target_noun: str, unit_noun: str) -> str:
    """A target in a different unit from the one set for the rates."""
    return (
        f"The target {text!r} is per {target_noun} but the rates are per {unit_noun}; write both in "
        "the same unit."
    )


def rate_method_refused(method: Any) -> str:
    """An unknown choice of test for two rates."""
    return f"The method {method!r} is not known for two rates; use 'auto', 'exact' or 'score'."


def share_test_refused(test: Any) -> str:
    """A test that cannot compare pooled shares."""
    return (
        f"The test {test!r} cannot compare shares of events out of totals; use Fisher's exact test "
        "or the chi-square test."
    )


# ---------------------------------------------------------------- refusals of roles


def events_need_total(name: str) -> str:
    """An events column without a total."""
    return (
        f"Events column {name!r} needs its total: the column it is 'Out of' (people screened, "
        "inspections), the column it is 'Per' (person-time, population), or both."
    )


def total_is_events(name: str) -> str:
    """An events column named as its own total."""
    return f"Events column {name!r} cannot be out of or per itself; name the column of its totals."


def events_alone(name: str) -> str:
    """An events column with neither a target nor a compare-by column."""
    return (
        f"Events column {name!r} has nothing to be compared with; give a target in 'Compare with' "
        "(4%, 0.04 or 2 per 1000) or mark a compare-by column."
    )


def several_counts(names: str) -> str:
    """More than one count column."""
    return f"Only one count column is allowed, but {names} are marked; keep one."


def count_with_events(count: str, events: str) -> str:
    """A count weight together with rows of events."""
    return (
        f"Count column {count!r} cannot be used with events column {events!r}: rows of events already "
        "carry their totals; remove one of the two roles."
    )


def count_with_pairing_key(count: str, key: str) -> str:
    """A count weight on pairs matched across rows."""
    return (
        f"Count column {count!r} cannot weight pairs matched across rows by {key!r}; put both "
        "measurements of a pair in one row ('Paired with') or remove the count role."
    )


def groups_need_categories(events: str, by: str) -> str:
    """Events compared by a column of numbers."""
    return (
        f"{events} is compared across the groups of a category column, but {by!r} holds numbers; "
        f"set the type of {by!r} to categorical or use another compare-by column."
    )
