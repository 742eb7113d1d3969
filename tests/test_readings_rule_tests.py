"""Readings of the tests the rule table added: typical values per group in units, the difference with its interval.

Data are invented and seeded. The figures in each reading are checked against
NumPy's medians and means of the same values and against the result's own
estimate; the wording against the plain-language rules of ``words.readings``
(two or three lines, no test names, no citations).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

from statmargin import analyze
from statmargin.plan.model import Settings
from statmargin.words.readings import reading

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")
RNG = np.random.default_rng(20261205)
UNITS = {"Wait": "minutes"}
JARGON = re.compile(r"Brunner|Munzel|Alexander|Govern|ANOVA|sign test|Hodges|Lehmann|epsilon|eta|\d{4}\)")
TWO = pd.DataFrame({"Clinic": ["North"] * 12 + ["South"] * 12,
                    "Wait": np.round(np.r_[RNG.lognormal(2.3, 0.9, 12), RNG.lognormal(3.2, 0.9, 12)], 1)})
THREE = pd.DataFrame({"Site": np.repeat(["Mill", "Quay", "Ford"], 10),
                      "Wait": np.round(np.r_[RNG.lognormal(2.3, 0.9, 10), RNG.lognormal(3.4, 0.9, 10),
                                             RNG.lognormal(2.5, 0.2, 10)], 1)})


def _plain(text: str) -> list[str]:
    lines = text.split("\n")
    assert 2 <= len(lines) <= 3 and not JARGON.search(text), text
    return lines


def test_brunner_munzel_reads_medians_and_the_typical_difference() -> None:
    """Two groups by the Brunner-Munzel test: medians per group in minutes, then the typical difference and interval."""
    [result] = analyze(TWO, outcome="Wait", by="Clinic", shape="rank")
    assert result.test == "brunner_munzel"
    first, second = _plain(reading(result, settings=Settings(), context=UNITS))
    north, south = (np.median(TWO.Wait[TWO.Clinic == c]) for c in ("North", "South"))
    assert first == f"Median Wait: North {north:.1f}, South {south:.1f} minutes."
    est = result.estimate
    assert second.startswith(f"Values in South were typically {-est.value:.1f} minutes higher than in North "
                             f"(95% CI {-est.ci_high:.1f} to {-est.ci_low:.1f})")


def test_sign_test_reads_the_median_against_the_stated_value() -> None:
    """One sample by the sign test: the median in minutes with its interval, then the gap to the stated value."""
    [result] = analyze(TWO, outcome="Wait", against=20)
    assert result.test == "sign_test"
    first, second = _plain(reading(result, settings=Settings(), context=UNITS))
    median = np.median(TWO.Wait)
    assert first == (f"Median Wait was {median:.1f} minutes (95% CI {result.estimate.ci_low:.1f} to "
                     f"{result.estimate.ci_high:.1f}), against a stated 20 minutes.")
    assert second.startswith(f"That is {abs(median - 20):.1f} minutes {'below' if median < 20 else 'above'} the stated value")


@pytest.mark.parametrize("shape,test,centre", [("auto", "rank_anova_type", "Median"),
                                               ("normal", "alexander_govern", "Mean")])
def test_three_groups_read_their_typical_values_and_the_widest_gap(shape: str, test: str, centre: str) -> None:
    """Three groups: medians (ANOVA-type rank test) or means (Alexander-Govern) per group, then the widest gap."""
    [result] = analyze(THREE, outcome="Wait", by="Site", shape=shape)
    assert result.test == test
    lines = _plain(reading(result, settings=Settings(), context=UNITS))
    values = THREE.groupby("Site").Wait.agg("median" if centre == "Median" else "mean")
    listed = ", ".join(f"{site} {value:.1f}" for site, value in values.items())
    assert lines[0] == f"{centre} Wait: {listed} minutes."
    high, low = result.estimate.levels
    assert f"the widest gap is {high} over {low}, {result.estimate.value:.1f} minutes" in lines[1]
    assert result.estimate.value == pytest.approx(values[high] - values[low], rel=1e-12)
