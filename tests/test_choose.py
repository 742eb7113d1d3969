"""The decision table: each design module's choice of test (statmargin.designs).

The categorical rows are common practice with no single source; refinements are
checked against the rules their sources state (Cochran 1954 for expected counts
below 5). The continuous rows come from the one rule table of
``statmargin.designs.rules`` (sources in its docstring; its judgements are tested in
tests/test_rules.py and tests/test_choice_regressions.py); here each continuous
design module is asked through ``continuous.rule_choice``, as the engine asks it.
"""

from __future__ import annotations

import numpy as np
import pytest

from statmargin.designs import (
    one_sample_categorical,
    paired_categorical,
    two_categorical,
)
from statmargin.designs.continuous import rule_choice
from statmargin.designs.registry import REGISTRY, decision_table
from statmargin.results import DESIGNS, TESTS
from statmargin.vocabulary import Design, ShapeHandling
from statmargin.words.sentences import say

RNG = np.random.default_rng(20261202)
NORMALISH = {"a": RNG.normal(10, 2, 30), "b": RNG.normal(12, 2, 30), "c": RNG.normal(11, 2, 30)}
SKEWED = {"a": RNG.lognormal(0, 1.2, 30), "b": RNG.lognormal(0.3, 1.2, 30), "c": RNG.lognormal(0, 1.2, 30)}


DECISION_TABLE = decision_table()


def choose_test(design, *, outcome, by=None, min_expected=None, table_shape=None, n_levels=None,
                single_share=False):
    """Ask a categorical design module for its choice, from the facts its data would give."""
    design = Design(design)
    if design is Design.ONE_SAMPLE_CATEGORICAL:
        return one_sample_categorical.decide(outcome=outcome, n_levels=n_levels, single_share=single_share,
                                             min_expected=min_expected)
    if design is Design.TWO_CATEGORICAL:
        return two_categorical.decide(outcome=outcome, by=by, table_shape=table_shape, min_expected=min_expected)
    return paired_categorical.decide(outcome=outcome)


def continuous_choice(design, data, k, *, ordinal=False, handling=ShapeHandling.AUTO):
    """The continuous design's choice for the first k groups of ``data`` (one sample: the first group)."""
    groups = {key: data[key] for key in list(data)[:k]}
    return rule_choice(Design(design), groups, counts=None, outcome="y", by="g",
                       ordinal_column="y" if ordinal else None, handling=handling, target=1.0)


def test_table_covers_every_design_with_known_tests():
    """Every design has an entry and every entry names a known test id."""
    assert set(DECISION_TABLE) == set(DESIGNS)
    for normal, rank in DECISION_TABLE.values():
        assert normal in TESTS and rank in TESTS


# (design, k groups, test for normal-shaped data, for skewed data, the rank family's test)
# From designs.rules.RULES: 30 lognormal values (sigma 1.2, G1 near 3) are far fewer than the
# 28 + 25 G1^2 the size rule asks for (Sugden, Smith & Jones 2000), so the rank-based row applies;
# a one-sample question on a skewed measure takes the sign test (Dixon & Mood 1946).
CONTINUOUS_ROWS = [
    ("one_sample_continuous", 1, "one_sample_t", "sign_test", "wilcoxon_signed_rank"),
    ("two_group_continuous", 2, "welch_t", "brunner_munzel", "brunner_munzel"),
    ("multi_group_continuous", 3, "alexander_govern", "rank_anova_type", "rank_anova_type"),
    ("two_continuous", 2, "pearson_r", "spearman_rho", "spearman_rho"),
    ("paired_continuous", 1, "paired_t", "wilcoxon_signed_rank", "wilcoxon_signed_rank"),
]


@pytest.mark.parametrize("design,k,normal_test,skewed_test,rank_test", CONTINUOUS_ROWS)
def test_continuous_rows(design, k, normal_test, skewed_test, rank_test):
    """Normal-shaped data take the means-based test and small skewed samples a rank-based one."""
    normal = continuous_choice(design, NORMALISH, k)
    assert normal.test == normal_test and not normal.rank_based
    skewed = continuous_choice(design, SKEWED, k)
    assert skewed.test == skewed_test and skewed.rank_based
    assert "right-skewed" in say(skewed.reasons[0])


def test_welch_t_reason_names_source():
    """Two normal-shaped groups take Welch's t-test with its reason and source."""
    c = continuous_choice("two_group_continuous", NORMALISH, 2)
    assert c.test == "welch_t"
    assert any("Delacre, Lakens & Leys 2017" in say(r) for r in c.reasons)


@pytest.mark.parametrize("design,k,normal_test,skewed_test,rank_test", CONTINUOUS_ROWS)
def test_ordinal_always_rank(design, k, normal_test, skewed_test, rank_test):
    """An ordinal outcome takes a rank-based test (the sign test for one sample and pairs)."""
    c = continuous_choice(design, NORMALISH, k, ordinal=True)
    assert c.rank_based
    assert c.test == ("sign_test" if design in ("one_sample_continuous", "paired_continuous") else rank_test)
    assert say(c.reasons[0]) == "y is ordinal, so a rank-based test was used."


@pytest.mark.parametrize("design,k,normal_test,skewed_test,rank_test", CONTINUOUS_ROWS)
def test_user_shape_handling_overrides(design, k, normal_test, skewed_test, rank_test):
    """Shape handling 'rank-based' and 'assume normal' override the checks."""
    forced_rank = continuous_choice(design, NORMALISH, k, handling=ShapeHandling.RANK)
    assert forced_rank.test == rank_test
    forced_normal = continuous_choice(design, SKEWED, k, handling=ShapeHandling.NORMAL)
    assert forced_normal.test == normal_test
    assert forced_normal.notes, "a forced normal choice against the checks must leave a caveat"


def test_groups_too_small_take_rank_test():
    """Two groups of two values cannot be judged, so the rank-based test (permutation p) is used."""
    c = rule_choice(Design.TWO_GROUP_CONTINUOUS, {"a": np.array([1.0, 2.0]), "b": np.array([3.0, 5.0])},
                    counts=None, outcome="y", by="g", ordinal_column=None, handling=ShapeHandling.AUTO)
    assert c.test == "brunner_munzel" and c.options == {"p_method": "permutation"}
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
