"""Adjustment families: the run, each outcome, or none, against hand computations of Holm and BH.

Definitions: Holm (1979), Scand J Statist 6(2):65-70, adjusted p_(i) = max_{j<=i} min(1, (m-j+1) p_(j));
Benjamini & Hochberg (1995), JRSS B 57(1):289-300, adjusted p_(i) = min_{j>=i} min(1, m p_(j) / j).
"""

from __future__ import annotations

import pytest

from statmargin.errors import OptionError
from statmargin.results import Result
from statmargin.stats.adjust import adjust_by_family
from statmargin.vocabulary import AdjustFamily, Design, Test
from statmargin.vocabulary.codes import Skip, coded


def _run(pairs: list[tuple[str, float | None]]) -> list[Result]:
    return [
        Result(outcome, "Site", Design.TWO_GROUP_CONTINUOUS, Test.WELCH_T, p_value=p,
               skipped=None if p is not None else coded(Skip.NO_P_VALUE))
        for outcome, p in pairs
    ]


RUN = [("Wait", 0.010), ("Score", 0.020), ("Wait", 0.030), ("Score", 0.040), ("Wait", None), ("Visits", 0.045)]


def test_holm_by_outcome_by_hand() -> None:
    """Holm within each outcome: Wait 0.01, 0.03 -> 0.02, 0.03; Score 0.02, 0.04 -> 0.04, 0.04; Visits alone."""
    adjusted = [r.p_adjusted for r in adjust_by_family(_run(RUN), "holm", AdjustFamily.OUTCOME)]
    assert adjusted == pytest.approx([0.02, 0.04, 0.03, 0.04, None, 0.045])


def test_holm_across_the_run_by_hand() -> None:
    """Holm over the run's five p-values: 5 x 0.01, 4 x 0.02, 3 x 0.03, 2 x 0.04, 1 x 0.045 with running max."""
    adjusted = [r.p_adjusted for r in adjust_by_family(_run(RUN), "holm", "this run")]
    assert adjusted == pytest.approx([0.05, 0.08, 0.09, 0.09, None, 0.09])


def test_bh_by_outcome_by_hand() -> None:
    """BH within each outcome: Wait 2/1 x 0.01 = 0.02, 2/2 x 0.03 = 0.03; Score 0.04, 0.04."""
    adjusted = [r.p_adjusted for r in adjust_by_family(_run(RUN), "benjamini-hochberg", "each outcome")]
    assert adjusted == pytest.approx([0.02, 0.04, 0.03, 0.04, None, 0.045])


def test_adding_a_question_leaves_other_outcomes_alone() -> None:
    """With the family fixed to each outcome, a new question about one outcome moves only that outcome's p-values."""
    before = [r.p_adjusted for r in adjust_by_family(_run(RUN), "holm", "each outcome")]
    after = [r.p_adjusted for r in adjust_by_family(_run(RUN + [("Visits", 0.2)]), "holm", "each outcome")]
    assert after[:4] == before[:4]
    assert after[5] == pytest.approx(0.09) and before[5] == pytest.approx(0.045)
    across_before = [r.p_adjusted for r in adjust_by_family(_run(RUN), "holm", "this run")]
    across_after = [r.p_adjusted for r in adjust_by_family(_run(RUN + [("Visits", 0.2)]), "holm", "this run")]
    assert across_after[0] == pytest.approx(0.06) != across_before[0]


def test_no_family_leaves_p_values_as_they_are() -> None:
    """Family 'none' sets each adjusted p to its own p-value."""
    adjusted = [r.p_adjusted for r in adjust_by_family(_run(RUN), "holm", "none")]
    assert adjusted == [0.01, 0.02, 0.03, 0.04, None, 0.045]


def test_unknown_family_is_refused_in_one_line() -> None:
    """A family that is not one of the choices is refused with the choices listed."""
    with pytest.raises(OptionError, match="'this run', 'each outcome', 'none'"):
        adjust_by_family(_run(RUN), "holm", "each site")
    assert AdjustFamily(" ".join("Each  Outcome".split()).lower()) is AdjustFamily.OUTCOME
