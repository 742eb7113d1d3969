"""An ordinal outcome of labels is read back in its labels, never as the codes 1..k it is ranked by.

Invented data: satisfaction ratings (Poor < Fair < Good < Very good) from two
outreach teams. The medians are counted directly from the rows below.
"""

from __future__ import annotations

import pandas as pd
import pytest

from statmargin import analyze

ORDER = "Satisfaction=ordinal:Poor,Fair,Good,Very good"
# Team Heron: 2 Poor, 3 Fair, 6 Good, 1 Very good -> 12 values, median between the 6th and 7th: Good, Good.
# Team Wren: 1 Fair, 3 Good, 8 Very good -> 12 values, median Very good.
RATINGS = pd.DataFrame({
    "Team": ["Heron"] * 12 + ["Wren"] * 12,
    "Satisfaction": ["Poor"] * 2 + ["Fair"] * 3 + ["Good"] * 6 + ["Very good"]
                    + ["Fair"] + ["Good"] * 3 + ["Very good"] * 8,
})


def test_group_medians_are_labels() -> None:
    """The reading lists each team's median rating by its label, and the shift in levels."""
    [result] = analyze(RATINGS, outcome="Satisfaction", by="Team", treat=[ORDER])
    assert result.extra["outcome_levels"] == ["Poor", "Fair", "Good", "Very good"]
    assert "Median Satisfaction: Heron Good, Wren Very good." in result.reading
    assert "1 level higher" in result.reading
    assert "4.00" not in result.reading and "3.00" not in result.reading


def test_a_median_between_two_levels_says_so() -> None:
    """An even group split evenly between two levels has the median 'between Good and Very good'."""
    data = pd.DataFrame({"Team": ["Heron"] * 4 + ["Wren"] * 4 + ["Kite"] * 4,
                         "Satisfaction": ["Good", "Good", "Very good", "Very good"] + ["Fair"] * 4 + ["Poor"] * 4})
    [result] = analyze(data, outcome="Satisfaction", by="Team", treat=[ORDER])
    assert "Heron between Good and Very good" in result.reading
    assert "Wren Fair" in result.reading and "Kite Poor" in result.reading


def test_equal_medians_in_many_groups_are_one_label() -> None:
    """Three groups with the same median rating get one sentence with the label, and no '(X - X)' gap name."""
    data = pd.DataFrame({"Team": ["Heron"] * 5 + ["Wren"] * 5 + ["Kite"] * 5,
                         "Satisfaction": ["Fair", "Good", "Good", "Good", "Very good"] * 3})
    [result] = analyze(data, outcome="Satisfaction", by="Team", treat=[ORDER])
    assert "Median Satisfaction was Good in each of the 3 groups of Team." in result.reading
    from statmargin.words.names import estimate_name
    assert "(Heron - Heron)" not in estimate_name(result.estimate)


def test_one_sample_median_against_a_level() -> None:
    """Against the code of Fair (2), the median of Wren's ratings reads 'Very good ..., against a stated Fair'."""
    wren = RATINGS[RATINGS["Team"] == "Wren"]
    [result] = analyze(wren, outcome="Satisfaction", against=2, treat=[ORDER])
    assert result.reading.startswith("Median Satisfaction was Very good")
    assert "against a stated Fair." in result.reading
    assert "2 levels above the stated value" in result.reading


@pytest.mark.parametrize("treat", [["Satisfaction=ordinal:1,2,3,4"], ["Satisfaction=ordinal"]])
def test_numbers_stay_numbers(treat: list[str]) -> None:
    """An ordinal column of numbers keeps its numbers: no labels are attached."""
    data = pd.DataFrame({"Team": ["Heron"] * 6 + ["Wren"] * 6, "Satisfaction": [1, 2, 2, 3, 3, 4, 2, 3, 3, 4, 4, 4]})
    [result] = analyze(data, outcome="Satisfaction", by="Team", treat=treat)
    assert "outcome_levels" not in result.extra


def test_plan_prints_the_type_the_user_set(tmp_path) -> None:
    """`statmargin plan --treat Satisfaction=ordinal:...` lists Satisfaction as ordinal, not its inferred type."""
    from click.testing import CliRunner

    from statmargin.cli import main

    book = tmp_path / "ratings.xlsx"
    RATINGS.to_excel(book, index=False, engine="xlsxwriter")
    done = CliRunner().invoke(main, ["plan", str(book), "--outcome", "Satisfaction", "--by", "Team", "--treat", ORDER])
    assert done.exit_code == 0, done.output
    assert "  Satisfaction: outcome (ordinal)" in done.output
    assert "  Team: compare by (categorical)" in done.output
