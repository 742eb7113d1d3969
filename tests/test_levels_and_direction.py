"""Levels and direction chosen by the user, never by the alphabet (statmargin.plan.levels, designs).

All data here are invented; reference values are direct counts of the invented rows and
scipy.stats.fisher_exact / scipy.stats.ttest_ind as named beside each check.
"""

from __future__ import annotations

import math

import pandas as pd
import pytest
from scipy import stats

from statmargin import analyze
from statmargin.errors import OptionError
from statmargin.plan.levels import event_first, infer_event, label_key, look_alikes

# Invented: same-day vaccination ("Yes"/"No") at two settings.
VISITS = pd.DataFrame(
    {
        "Vaccinated": ["Yes"] * 30 + ["No"] * 10 + ["Yes"] * 20 + ["No"] * 20,
        "Setting": ["Clinic"] * 40 + ["Van"] * 40,
    }
)


class TestEventLevel:
    def test_common_words_name_the_event(self) -> None:
        """Yes, Pass, Positive and 1 are events; a pair with no such word has none."""
        assert infer_event(["No", "Yes"]) == "Yes"
        assert infer_event(["Fail", "Pass"]) == "Pass"
        assert infer_event(["negative", "Positive "]) == "Positive "
        assert infer_event(["0", "1"]) == "1"
        assert infer_event(["Female", "Male"]) is None
        assert infer_event(["Yes", "No", "Unsure"]) is None
        assert event_first(["No", "Yes"], "Yes") == ["Yes", "No"]

    def test_share_difference_is_of_the_event_level(self) -> None:
        """The 2x2 estimate is the share of Yes (30/40 - 20/40 = 0.25), not of the alphabetical No."""
        [result] = analyze(VISITS, outcome="Vaccinated", by="Setting")
        assert result.estimate.level == "Yes"
        assert result.estimate.value == pytest.approx(30 / 40 - 20 / 40)  # direct count of the rows
        # scipy.stats.fisher_exact / chi-square p does not depend on which level is counted
        assert "Share with Vaccinated = Yes: 75% in Clinic, 50% in Van." in result.reading

    def test_user_event_wins(self) -> None:
        """--event Vaccinated=No makes the readings report the share of No."""
        [result] = analyze(VISITS, outcome="Vaccinated", by="Setting", event="No")
        assert result.estimate.level == "No"
        assert result.estimate.value == pytest.approx(10 / 40 - 20 / 40)
        assert "Share with Vaccinated = No: 25% in Clinic, 50% in Van." in result.reading


class TestDirection:
    WAITS = pd.DataFrame(
        {
            "Wait": [22.0, 25.0, 19.0, 30.0, 27.0, 24.0, 12.0, 15.0, 11.0, 14.0, 16.0, 13.0],
            "Site": ["South"] * 6 + ["North"] * 6,
        }
    )  # invented: South clearly slower

    def test_one_sided_needs_the_group_order(self) -> None:
        """A one-sided question without a stated group order is refused in one line."""
        with pytest.raises(OptionError, match="one-sided question compares Site's groups") as info:
            analyze(self.WAITS, outcome="Wait", by="Site", alternative="greater")
        assert "\n" not in str(info.value)

    def test_one_sided_follows_the_stated_order(self) -> None:
        """South first and 'greater' tests South > North; p equals scipy's one-sided Welch test."""
        [result] = analyze(self.WAITS, outcome="Wait", by="Site", alternative="greater",
                           treat=["Site=categorical:South,North"])
        south, north = self.WAITS.Wait[:6], self.WAITS.Wait[6:]
        expected = stats.ttest_ind(south, north, equal_var=False, alternative="greater").pvalue
        assert result.test == "welch_t"
        assert math.isclose(result.p_value, expected, rel_tol=1e-12)
        assert result.estimate.levels == ("South", "North")
        assert "one-sided" in result.reading

    def test_one_sided_refused_where_there_is_no_direction(self) -> None:
        """Three groups have no direction: 'greater' is refused, not silently ignored."""
        three = pd.DataFrame({"Wait": [1.0, 2, 3, 4, 5, 6, 7, 8, 9], "Site": ["A", "B", "C"] * 3})
        with pytest.raises(OptionError, match="has no direction"):
            analyze(three, outcome="Wait", by="Site", alternative="greater")


class TestLookAlikes:
    def test_case_spacing_and_trailing_punctuation_match(self) -> None:
        """Labels typed with a double space, another case or a trailing full stop share one key."""
        assert label_key("Old  Mill") == label_key("old mill") == label_key("Old Mill.")
        assert label_key("Riverside") != label_key("River side")

    def test_groups_report_counts_and_the_kept_label(self) -> None:
        """The most common spelling is kept; each spelling keeps its count."""
        groups = look_alikes({"Old Mill": 180, "Old  Mill": 1, "Riverside": 40, "riverside ": 2, "Hill": 9})
        assert [(g.kept, g.labels) for g in groups] == [
            ("Old Mill", {"Old Mill": 180, "Old  Mill": 1}),
            ("Riverside", {"Riverside": 40, "riverside ": 2}),
        ]
