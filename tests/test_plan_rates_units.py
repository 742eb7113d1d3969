"""Reading rate units and targets as users type them, and recognising summary layouts (invented tables)."""

from __future__ import annotations

import pandas as pd
import pytest

from statmargin.errors import OptionError
from statmargin.plan.aggregate import suggest_roles
from statmargin.plan.rates_units import parse_per_unit, parse_target, rate_target, share_target
from statmargin.read.table import Table
from statmargin.results import Effect, Estimate
from statmargin.vocabulary import EffectKind, EstimateKind
from statmargin.vocabulary.codes import Reason
from statmargin.words.sentences import say


@pytest.mark.parametrize(
    "text, per, noun",
    [("per 1,000", 1000.0, None), ("per 100,000 people", 100000.0, "people"),
     ("per 1,000 person-years", 1000.0, "person-years"), ("1000", 1000.0, None), (1000, 1000.0, None),
     ("per 1 000 py", 1000.0, "py"), ("per thousand", 1000.0, None), ("per 10k residents", 10000.0, "residents"),
     ("per person-year", 1.0, "person-year"), ("person-years", 1.0, "person-years"), ("%", 100.0, None)],
)
def test_per_unit_forms(text, per, noun) -> None:
    """Every documented way of writing the unit gives its multiplier and noun."""
    unit = parse_per_unit(text)
    assert (unit.per, unit.noun) == (per, noun)


@pytest.mark.parametrize("text", ["", "per", "per 0", "per -5", "abc 12", "per 1,00", "0", float("nan")])
def test_per_unit_refusals(text) -> None:
    """Anything else is refused in one line that shows how to write it."""
    with pytest.raises(OptionError, match="cannot be read; write it like 'per 1,000'") as info:
        parse_per_unit(text)
    assert "\n" not in str(info.value)


@pytest.mark.parametrize(
    "text, value", [("0.04", 0.04), ("4%", 0.04), ("4.5 percent", 0.045), ("2 per 1000", 0.002),
                    ("2 per 1,000 person-years", 0.002), ("2/1000", 0.002), (0.04, 0.04)]
)
def test_target_forms(text, value) -> None:
    """Shares, percentages and 'per' forms give the target per one unit."""
    assert parse_target(text).value == pytest.approx(value)


@pytest.mark.parametrize("text", ["0,04", "-1", "abc", "2 per", "4 per 0", "two percent"])
def test_target_refusals(text) -> None:
    """Unreadable targets are refused in one line."""
    with pytest.raises(OptionError, match="cannot be read") as info:
        parse_target(text)
    assert "\n" not in str(info.value)


def test_rate_targets_follow_the_stated_unit() -> None:
    """A bare number is read in the rate unit; a unit with a different noun is refused."""
    assert rate_target(parse_target("2"), parse_per_unit("per 1,000")) == pytest.approx(0.002)
    assert rate_target(parse_target("2 per 1,000 person-year"), parse_per_unit("per 100 person years")) == 0.002
    assert rate_target(parse_target("2 per 1000 persons"), parse_per_unit("per 100,000 population")) == 0.002
    with pytest.raises(OptionError, match="is per person-years but the rates are per people"):
        rate_target(parse_target("2 per 1000 person-years"), parse_per_unit("per 100,000 people"))
    with pytest.raises(OptionError, match="above 0"):
        rate_target(parse_target("0"), None)


def test_share_targets_refuse_rates_and_out_of_range() -> None:
    """A share target must lie in (0, 1) and cannot be per person-time."""
    assert share_target(parse_target("2 per 1,000 screened")) == pytest.approx(0.002)
    with pytest.raises(OptionError, match="is a rate"):
        share_target(parse_target("2 per 1000 person-years"))
    with pytest.raises(OptionError, match="between 0 and 1"):
        share_target(parse_target("140%"))


def test_layouts_are_suggested_with_evidence_and_never_applied() -> None:
    """Inspections with failures, clinic person-years and a count column are recognised; other tables are not."""
    inspections = Table.from_frame(pd.DataFrame({"District": ["A", "A", "B"], "Month": [1, 2, 1],
                                                 "Inspections": [40, 38, 52], "Failed": [3, 5, 9]}))
    (found,) = suggest_roles(inspections)
    assert (found.reason.code, found.events, found.total) == (Reason.SUGGEST_EVENTS_OUT_OF, "Failed", "Inspections")
    assert say(found.reason) == ("Failed looks like a count of events out of Inspections: both hold whole "
                                 "numbers and Failed is at most Inspections in all 3 rows.")
    clinics = Table.from_frame(pd.DataFrame({"Clinic": ["A", "A", "B"], "New cases": [4, 7, 2],
                                             "Person-years": [120.5, 130.2, 98.0]}))
    (found,) = suggest_roles(clinics)
    assert (found.reason.code, found.events, found.total) == (Reason.SUGGEST_EVENTS_PER, "New cases", "Person-years")
    weights = Table.from_frame(pd.DataFrame({"Outcome": ["pass", "fail", "pass"], "Site": ["A", "A", "B"],
                                             "n": [40, 3, 52]}))
    (found,) = suggest_roles(weights)
    assert (found.reason.code, found.count) == (Reason.SUGGEST_COUNT, "n")
    # Events above the denominator in one row, or fractional events: no suggestion.
    wrong = Table.from_frame(pd.DataFrame({"Screened": [10, 20, 5], "Positive": [3, 4, 6]}))
    assert suggest_roles(wrong) == []
    waits = Table.from_frame(pd.DataFrame({"Site": ["A", "B"], "Wait": [12.5, 14.0]}))
    assert suggest_roles(waits) == []


def test_rate_estimates_have_names_with_their_unit() -> None:
    """Display names of the rate kinds say the unit and the groups."""
    assert Estimate(EstimateKind.RATE_DIFFERENCE, 1.0, levels=("North", "South"), per=1000).name == (
        "difference in rates per 1,000 (North - South)")
    assert Estimate(EstimateKind.RATE_RATIO, 1.4, levels=("North", "South")).name == "rate ratio (North / South)"
    assert Estimate(EstimateKind.RATE, 2.0, per=100000, reference=1.5).name == "rate per 100,000 (target 1.5)"
    assert Estimate(EstimateKind.LARGEST_RATE_GAP, 2.0, levels=("B", "A"), per=1000).name == (
        "largest difference between group rates per 1,000 (B - A)")
    assert Effect(EffectKind.RATE_RATIO, 1.4, levels=("North", "South")).name == "rate ratio (North / South)"
