"""The choice rule: one table, every condition reachable, user choices and ordinal outcomes honoured."""

from __future__ import annotations

import numpy as np
import pytest

from statmargin.designs import rules
from statmargin.designs.rules import RULES, choose_continuous, rule_table
from statmargin.stats.shape import judge_shape, judge_spread
from statmargin.vocabulary import Design, ShapeCriterion, ShapeDirection, ShapeHandling, Test
from statmargin.vocabulary.codes import Caution, Note, Reason, Skip
from statmargin.words.sentences import TEMPLATES, say

RNG = np.random.default_rng(2024)
NORMAL_TWO = {"a": RNG.normal(10, 2, 40), "b": RNG.normal(10, 2, 40)}
SKEWED_TWO = {"a": RNG.lognormal(1, 1, 25), "b": RNG.lognormal(1, 1, 25)}


def test_every_design_and_condition_has_one_row() -> None:
    """The table has no duplicate (design, condition) and the rendered table lists every row."""
    keys = [(r.design, r.condition) for r in RULES]
    assert len(keys) == len(set(keys))
    assert len(rule_table()) == len(RULES)
    assert all(r.source for r in RULES)


def test_every_code_has_a_sentence() -> None:
    """Every skip, note, reason and caution code is worded (words.sentences and words.choice)."""
    for family in (Skip, Note, Reason, Caution):
        for code in family:
            assert code in TEMPLATES, code


@pytest.mark.parametrize(
    ("design", "groups", "expected"),
    [
        (Design.TWO_GROUP_CONTINUOUS, NORMAL_TWO, Test.WELCH_T),
        (Design.TWO_GROUP_CONTINUOUS, SKEWED_TWO, Test.BRUNNER_MUNZEL),
        (Design.MULTI_GROUP_CONTINUOUS, {**NORMAL_TWO, "c": RNG.normal(10, 2, 40)}, Test.ALEXANDER_GOVERN),
        (Design.MULTI_GROUP_CONTINUOUS, {**SKEWED_TWO, "c": RNG.lognormal(1, 1, 25)}, Test.RANK_ANOVA_TYPE),
        (Design.TWO_CONTINUOUS, {"x": RNG.normal(size=50), "y": RNG.normal(size=50)}, Test.PEARSON_R),
        (Design.TWO_CONTINUOUS, {"x": RNG.lognormal(size=50), "y": RNG.normal(size=50)}, Test.SPEARMAN_RHO),
        (Design.PAIRED_CONTINUOUS, {"d": RNG.normal(size=30)}, Test.PAIRED_T),
        (Design.PAIRED_CONTINUOUS, {"d": RNG.standard_t(1, size=20)}, Test.WILCOXON_SIGNED_RANK),
    ],
)
def test_heart_of_the_rule(design: Design, groups: dict, expected: Test) -> None:
    """Normal-shaped data get the mean-based test, clearly non-normal small samples the rank one."""
    choice = choose_continuous(design, groups, outcome="wait", by="site")
    assert choice.test == expected
    assert choice.rank_based == (expected in rules.RANK_TEST.values() or expected == Test.SIGN_TEST)
    assert say(choice.reason)  # worded without error


def test_user_choices_fix_the_family() -> None:
    """'assume normal' and 'rank-based' override the judgement; a departure is noted under 'normal'."""
    normal = choose_continuous(Design.TWO_GROUP_CONTINUOUS, SKEWED_TWO, handling=ShapeHandling.NORMAL)
    assert (normal.test, normal.reason.code) == (Test.WELCH_T, Reason.USER_NORMAL)
    assert [n.code for n in normal.notes] == [Note.SHAPE_DEPARTS_ASSUMED_NORMAL]
    rank = choose_continuous(Design.TWO_GROUP_CONTINUOUS, NORMAL_TWO, handling=ShapeHandling.RANK)
    assert (rank.test, rank.reason.code) == (Test.BRUNNER_MUNZEL, Reason.USER_RANK)


@pytest.mark.parametrize(
    ("design", "expected"),
    [
        (Design.ONE_SAMPLE_CONTINUOUS, Test.SIGN_TEST),
        (Design.PAIRED_CONTINUOUS, Test.SIGN_TEST),
        (Design.TWO_GROUP_CONTINUOUS, Test.BRUNNER_MUNZEL),
        (Design.MULTI_GROUP_CONTINUOUS, Test.RANK_ANOVA_TYPE),
        (Design.TWO_CONTINUOUS, Test.SPEARMAN_RHO),
    ],
)
def test_ordinal_outcomes_are_always_rank_based(design: Design, expected: Test) -> None:
    """Ordered categories have no distances: ranks (or signs for one sample and pairs)."""
    groups = {"a": np.array([1.0, 2, 2, 3, 4, 5]), "b": np.array([2.0, 3, 3, 4, 5, 5]), "c": np.array([1.0, 1, 2, 3, 3, 4])}
    if design in (Design.ONE_SAMPLE_CONTINUOUS, Design.PAIRED_CONTINUOUS):
        groups = {"a": groups["a"] - 3}
    elif design in (Design.TWO_GROUP_CONTINUOUS, Design.TWO_CONTINUOUS):
        groups = {"a": groups["a"], "b": groups["b"]}
    choice = choose_continuous(design, groups, ordinal=True, target=3.0, outcome="pain")
    assert (choice.test, choice.rank_based, choice.reason.code) == (expected, True, Reason.ORDINAL_RANK)


def test_small_groups_with_different_spreads_take_welch() -> None:
    """Heavy tails, SD 15 vs 4 and 6 vs 22 values: spreads judged different take Welch's t."""
    rng = np.random.default_rng(6)
    welch = 0
    for _ in range(100):
        groups = {"a": 15 * rng.standard_t(3, 6), "b": 4 * rng.standard_t(3, 22)}
        choice = choose_continuous(Design.TWO_GROUP_CONTINUOUS, groups)
        welch += choice.test == Test.WELCH_T
        if choice.shape.departs and not choice.shape.mean_based_fits and choice.spread.differ:
            assert (choice.test, choice.reason.code) == (Test.WELCH_T, Reason.SPREADS_DIFFER_SMALL_WELCH)
    assert welch >= 80  # the rest: samples whose spreads happened to look alike


def test_rank_tests_of_groups_take_studentized_permutations_whatever_the_spreads() -> None:
    """The p_method option is "auto" with or without unequal spreads, so a rank test's p depends on ranks only."""
    # Neubert & Brunner (2007): the studentized permutation test is asymptotically valid when
    # spreads differ; "permutation" at any size only without spread or with fewer than 3 values.
    similar = choose_continuous(Design.TWO_GROUP_CONTINUOUS, {"a": np.array([1.0, 1, 2, 9, 30, 2, 1, 3]),
                                                            "b": np.array([2.0, 1, 3, 8, 25, 1, 2, 4])})
    assert similar.test == Test.BRUNNER_MUNZEL and similar.options == {"p_method": "auto"}
    spread = choose_continuous(Design.MULTI_GROUP_CONTINUOUS, {f"g{i}": (1 + 5 * i) * RNG.lognormal(size=30)
                                                              for i in range(3)})
    assert spread.spread is not None and spread.spread.differ
    assert spread.test == Test.RANK_ANOVA_TYPE and spread.options == {"p_method": "auto"}
    few = choose_continuous(Design.TWO_GROUP_CONTINUOUS, {"a": np.array([1.0, 4.0]), "b": np.array([2.0, 9.0])})
    assert few.test == Test.BRUNNER_MUNZEL and few.options == {"p_method": "permutation"}


def test_judge_shape_reports_direction_and_size_rule() -> None:
    """A right-skewed sample: direction, criterion and the needed size 28 + 25 G1^2 (Sugden et al.)."""
    verdict = judge_shape({"a": RNG.lognormal(0, 0.8, 60)})
    assert verdict.direction == ShapeDirection.RIGHT_SKEWED
    assert verdict.criterion == ShapeCriterion.DEPARTURE_SMALL_N
    assert verdict.n_needed == pytest.approx(max(28 + 25 * verdict.skewness**2, 2 * verdict.excess_kurtosis))


def test_judge_shape_ignores_unequal_spreads() -> None:
    """Shapiro-Wilk's W does not change with scale, so groups of normal data with SDs 1 and 20 look normal."""
    rng = np.random.default_rng(9)
    departs = sum(judge_shape({"a": rng.normal(0, 1, 30), "b": rng.normal(0, 20, 30)}).departs for _ in range(200))
    assert departs / 200 <= 0.05 + 3 * (0.05 * 0.95 / 200) ** 0.5


def test_judge_spread_flags_ratio_or_test() -> None:
    """SD ratio at or above 2 (common practice) or Brown-Forsythe p < 0.05 (SciPy levene) flags."""
    from scipy import stats

    a, b = RNG.normal(0, 1, 200), RNG.normal(0, 1.6, 200)
    verdict = judge_spread({"a": a, "b": b})
    assert verdict.brown_forsythe_p == pytest.approx(stats.levene(a, b, center="median").pvalue)
    assert verdict.differ == (verdict.sd_ratio >= 2 or verdict.brown_forsythe_p < 0.05)
    assert judge_spread({"a": a}).differ is False
