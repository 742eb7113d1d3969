"""The decision table: each design module's choice of test (statmargin.designs).

The table itself is common practice with no single source; refinements are
checked against the rules their sources state (Cochran 1954 for expected counts
below 5; Delacre, Lakens & Leys 2017 for Welch's t-test by default).
"""

from __future__ import annotations

import numpy as np
import pytest

from statmargin.designs import (
    multi_group_continuous,
    one_sample_categorical,
    paired_categorical,
    two_categorical,
    two_group_continuous,
)
from statmargin.designs.continuous import choose_family
from statmargin.designs.registry import REGISTRY, decision_table
from statmargin.results import DESIGNS, TESTS
from statmargin.stats.shape import SpreadCheck, assess
from statmargin.vocabulary import Design, MeasureType, ShapeHandling
from statmargin.words.sentences import say

RNG = np.random.default_rng(20261202)
NORMALISH = {"a": RNG.normal(10, 2, 30), "b": RNG.normal(12, 2, 30), "c": RNG.normal(11, 2, 30)}
SKEWED = {"a": RNG.lognormal(0, 1.2, 30), "b": RNG.lognormal(0.3, 1.2, 30), "c": RNG.lognormal(0, 1.2, 30)}


DECISION_TABLE = decision_table()


def choose_test(design, *, outcome, by=None, outcome_type=MeasureType.CONTINUOUS, by_type=None,
                shape_handling=ShapeHandling.AUTO, shape=None, spread=None, min_expected=None,
                table_shape=None, n_levels=None, single_share=False):
    """Ask the design module of ``design`` for its choice, from the facts its data would give."""
    design = Design(design)
    if design is Design.ONE_SAMPLE_CATEGORICAL:
        return one_sample_categorical.decide(outcome=outcome, n_levels=n_levels, single_share=single_share,
                                             min_expected=min_expected)
    if design is Design.TWO_CATEGORICAL:
        return two_categorical.decide(outcome=outcome, by=by, table_shape=table_shape, min_expected=min_expected)
    if design is Design.PAIRED_CATEGORICAL:
        return paired_categorical.decide(outcome=outcome)
    facts = dict(outcome=outcome, by=by, outcome_type=outcome_type, by_type=by_type, handling=shape_handling,
                 shape=shape)
    if design is Design.TWO_GROUP_CONTINUOUS:
        return two_group_continuous.decide(**facts)
    if design is Design.MULTI_GROUP_CONTINUOUS:
        return multi_group_continuous.decide(**facts, spread=spread)
    return choose_family(design, DECISION_TABLE[design], **facts)


def shape_of(groups: dict, k: int):
    """Shape assessment of the first k groups."""
    return assess({key: groups[key] for key in list(groups)[:k]})


def test_table_covers_every_design_with_known_tests():
    """Every design has an entry and every entry names a known test id."""
    assert set(DECISION_TABLE) == set(DESIGNS)
    for normal, rank in DECISION_TABLE.values():
        assert normal in TESTS and rank in TESTS


# (design, groups for the shape, k groups, expected test when normal-shaped data, when skewed data)
# Common practice, no single source (see statmargin/choose.py).
CONTINUOUS_ROWS = [
    ("one_sample_continuous", 1, "one_sample_t", "wilcoxon_signed_rank"),
    ("two_group_continuous", 2, "welch_t", "mann_whitney_u"),
    ("multi_group_continuous", 3, "one_way_anova", "kruskal_wallis"),
    ("two_continuous", 2, "pearson_r", "spearman_rho"),
    ("paired_continuous", 1, "paired_t", "wilcoxon_signed_rank"),
]


@pytest.mark.parametrize("design,k,normal_test,rank_test", CONTINUOUS_ROWS)
def test_continuous_rows(design, k, normal_test, rank_test):
    """Normal-shaped data take the means-based test and skewed data the rank-based one."""
    spread = SpreadCheck(0.5, (2.0, 87.0), 0.6)
    normal = choose_test(design, outcome="y", by="g", shape=shape_of(NORMALISH, k), spread=spread)
    assert normal.test == normal_test and not normal.rank_based
    skewed = choose_test(design, outcome="y", by="g", shape=shape_of(SKEWED, k), spread=spread)
    assert skewed.test == rank_test and skewed.rank_based
    assert "rank-based" in say(skewed.reasons[0])


def test_welch_anova_when_spreads_differ():
    """Brown-Forsythe p < 0.05 switches one-way ANOVA to Welch's ANOVA, and the reason says so."""
    c = choose_test("multi_group_continuous", outcome="y", by="site", shape=shape_of(NORMALISH, 3),
                    spread=SpreadCheck(5.0, (2.0, 87.0), 0.009))
    assert c.test == "welch_anova"
    assert "Brown-Forsythe p = 0.009" in say(c.reasons[1])


def test_welch_t_reason_names_source():
    """Two normal-shaped groups take Welch's t-test with its reason and source."""
    c = choose_test("two_group_continuous", outcome="y", by="g", shape=shape_of(NORMALISH, 2))
    assert c.test == "welch_t"
    assert any("Delacre, Lakens & Leys 2017" in say(r) for r in c.reasons)


def test_reason_counts_failing_groups():
    """The shape reason says in how many groups the check failed and what the check was."""
    mixed = assess({"a": NORMALISH["a"], "b": SKEWED["b"], "c": SKEWED["c"]})
    c = choose_test("multi_group_continuous", outcome="wait", by="site", shape=mixed)
    assert say(c.reasons[0]).startswith("wait is right-skewed in 2 of 3 groups of site (Shapiro-Wilk p")
    assert say(c.reasons[0]).endswith("so a rank-based test was used.")


@pytest.mark.parametrize("design,k,normal_test,rank_test", CONTINUOUS_ROWS)
def test_ordinal_always_rank(design, k, normal_test, rank_test):
    """An ordinal outcome takes the rank-based test even when the shape looks normal."""
    c = choose_test(design, outcome="y", by="g", outcome_type=MeasureType.ORDINAL, shape=shape_of(NORMALISH, k))
    assert c.test == rank_test


@pytest.mark.parametrize("design,k,normal_test,rank_test", CONTINUOUS_ROWS)
def test_user_shape_handling_overrides(design, k, normal_test, rank_test):
    """Shape handling 'rank-based' and 'assume normal' override the checks."""
    spread = SpreadCheck(0.5, (2.0, 87.0), 0.6)
    forced_rank = choose_test(design, outcome="y", by="g", shape_handling=ShapeHandling.RANK,
                              shape=shape_of(NORMALISH, k), spread=spread)
    assert forced_rank.test == rank_test
    forced_normal = choose_test(design, outcome="y", by="g", shape_handling=ShapeHandling.NORMAL,
                                shape=shape_of(SKEWED, k), spread=spread)
    assert forced_normal.test == normal_test
    assert forced_normal.notes, "a forced normal choice against the checks must leave a caveat"


def test_groups_too_small_take_rank_test():
    """A group with fewer than 3 values cannot be checked, so the rank-based test is used."""
    shape = assess({"a": np.array([1.0, 2.0]), "b": NORMALISH["b"]})
    c = choose_test("two_group_continuous", outcome="y", by="g", shape=shape)
    assert c.test == "mann_whitney_u"
    assert "too few values" in say(c.reasons[0])


@pytest.mark.parametrize(
    "min_expected,table_shape,expected_test",
    [
        (4.99, (2, 2), "fisher_exact"),  # Cochran 1954: any expected count < 5 in a 2x2 table
        (5.0, (2, 2), "chi_square_independence"),
        (1.1, (3, 3), "chi_square_independence"),  # larger tables keep chi-square (method may use Monte Carlo)
    ],
)
def test_two_categorical_rows(min_expected, table_shape, expected_test):
    """Fisher's exact test replaces chi-square only for a 2x2 table with an expected count below 5."""
    c = choose_test("two_categorical", outcome="a", by="b", min_expected=min_expected, table_shape=table_shape)
    assert c.test == expected_test


@pytest.mark.parametrize(
    "n_levels,single,min_expected,expected_test",
    [
        (2, True, 16.0, "binomial_exact"),
        (3, True, 16.0, "binomial_exact"),
        (2, False, 3.0, "binomial_exact"),  # two categories with a small expected count
        (2, False, 16.0, "chi_square_goodness_of_fit"),
        (3, False, 2.0, "chi_square_goodness_of_fit"),
    ],
)
def test_one_sample_categorical_rows(n_levels, single, min_expected, expected_test):
    """One share (or a small expected count with two levels) takes the exact binomial test."""
    c = choose_test("one_sample_categorical", outcome="a", n_levels=n_levels, single_share=single,
                    min_expected=min_expected)
    assert c.test == expected_test


def test_paired_categorical_is_mcnemar():
    """A paired two-level outcome takes McNemar's test."""
    assert choose_test("paired_categorical", outcome="a").test == "mcnemar"


def test_every_design_has_one_module():
    """Each design of the vocabulary is answered by exactly one registered design module."""
    designs = [spec.design for spec in REGISTRY]
    assert sorted(designs) == sorted(set(designs))
    assert set(designs) == set(Design)
