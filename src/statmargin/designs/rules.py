"""Which test a continuous question gets, and why: one table, one judgement of shape per analysis.

``choose_continuous`` judges the shape once (``stats.shape.judge_shape``: within-group
residuals, sizes taken into account, no size bands) and, for groups, the spreads
(``judge_spread``); it names the condition that holds and looks the test up in
``RULES``. The rule keeps the heart of the job: data of a normal shape (or groups
large enough for their means to be close to normal) get the mean-based test;
otherwise the rank-based one, chosen among methods that stay valid when spreads
differ. The reason is a ``Coded`` with the facts; ``statmargin.words`` words it.

The table (``RULES``; rendered by :func:`rule_table`, printed in README "Which test
is chosen"):

==========================  ====================================  ======================  ======
design                      condition                             test                    rank
==========================  ====================================  ======================  ======
any continuous              ordinal outcome                       rank family (below)     yes
any continuous              user: assume normal                   mean family             no
any continuous              user: rank-based                      rank family             yes
one sample                  ordinal, or no spread (all one value) sign test               yes
one sample                  no clear departure from normal        one-sample t            no
one sample                  skewed or piled (asymmetric)          sign test               yes
one sample                  tails only, n large enough            one-sample t            no
one sample                  tails only, n too small               signed-rank             yes
one sample                  too few values (< 3)                  sign test               yes
paired                      ordinal, or all differences equal     sign test               yes
paired                      no clear departure                    paired t                no
paired                      departure, n large enough             paired t                no
paired                      departure, n too small / too few      signed-rank             yes
two groups                  no clear departure                    Welch's t               no
two groups                  departure, smallest group large       Welch's t               no
two groups                  departure, spreads similar            Brunner-Munzel          yes
two groups                  departure, spreads differ, n >= 15    Brunner-Munzel          yes
two groups                  departure, spreads differ, n < 15     Welch's t               no
two groups                  a group without spread / too few      Brunner-Munzel          yes
3+ groups                   no clear departure / large groups     Alexander-Govern        no
3+ groups                   departure (any spreads)               ANOVA-type rank test    yes
3+ groups                   a group without spread / too few      ANOVA-type rank test    yes
two measures                no clear departure in either          Pearson r               no
two measures                any departure / ordinal / too few     Spearman rho            yes
==========================  ====================================  ======================  ======

"n large enough" is the size rule of ``judge_shape``: the smallest group has at least
28 + 25 G1^2 values (Sugden, Smith & Jones 2000, refining Cochran 1977) and at least
2 G2. Sources for the tests: Welch (1947); Brunner & Munzel (2000) with the
studentized permutation p of Neubert & Brunner (2007) below 15 per group (valid
when spreads differ; at most 2000 values in all); Alexander & Govern (1994); Brunner,
Dette & Munk (1997) and Brunner, Konietschke, Pauly & Puri (2017) for the ANOVA-type
rank test (its p uses the same studentized permutations below 15 per group);
Dixon & Mood (1946) for
the sign test; Wilcoxon (1945), valid for paired differences because under "no
change" the two measurements of a unit are exchangeable, so their difference is
symmetric about 0. Why these and not others is in each reason's facts and in
README; the simulation that checks the whole procedure is
``simulations/choose_then_test.py``.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..stats.shape import ShapeJudgement, SpreadJudgement, judge_shape, judge_spread
from ..stats.weighted_shape import judge_shape_weighted, judge_spread_weighted
from ..vocabulary import Design, ShapeDirection, ShapeHandling, Test
from ..vocabulary.codes import Coded, Count, Note, Reason, coded

SMALL_UNEQUAL = 15  # below this many values in the smallest group, unequal spreads take Welch's t
# (in simulation Brunner-Munzel reached 0.07 at 5 vs 19 values with SDs 15 and 4; Welch 0.045)

MEAN_TEST: dict[Design, Test] = {
    Design.ONE_SAMPLE_CONTINUOUS: Test.ONE_SAMPLE_T,
    Design.PAIRED_CONTINUOUS: Test.PAIRED_T,
    Design.TWO_GROUP_CONTINUOUS: Test.WELCH_T,
    Design.MULTI_GROUP_CONTINUOUS: Test.ALEXANDER_GOVERN,
    Design.TWO_CONTINUOUS: Test.PEARSON_R,
}
RANK_TEST: dict[Design, Test] = {
    Design.ONE_SAMPLE_CONTINUOUS: Test.WILCOXON_SIGNED_RANK,
    Design.PAIRED_CONTINUOUS: Test.WILCOXON_SIGNED_RANK,
    Design.TWO_GROUP_CONTINUOUS: Test.BRUNNER_MUNZEL,
    Design.MULTI_GROUP_CONTINUOUS: Test.RANK_ANOVA_TYPE,
    Design.TWO_CONTINUOUS: Test.SPEARMAN_RHO,
}


@dataclass(frozen=True)
class Rule:
    """One row of the table: in this design, under this condition, this test, for this reason."""

    design: Design
    condition: str
    test: Test
    rank_based: bool
    reason: Reason

    @property
    def source(self) -> str:
        """Where the rule comes from, in words (``words.rule_sources``)."""
        from ..words.rule_sources import rule_source

        return rule_source(self.design, self.condition)


def _rows() -> tuple[Rule, ...]:
    one, paired = Design.ONE_SAMPLE_CONTINUOUS, Design.PAIRED_CONTINUOUS
    two, many, corr = Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS, Design.TWO_CONTINUOUS
    rows: list[Rule] = []
    for design in (one, paired, two, many, corr):
        mean, rank = MEAN_TEST[design], RANK_TEST[design]
        ordinal_test = Test.SIGN_TEST if design in (one, paired) else rank
        rows += [
            Rule(design, "ordinal", ordinal_test, True, Reason.ORDINAL_RANK),
            Rule(design, "user_normal", mean, False, Reason.USER_NORMAL),
            Rule(design, "user_rank", rank, True, Reason.USER_RANK),
            Rule(design, "no_clear_departure", mean, False, Reason.SHAPE_NO_CLEAR_DEPARTURE),
        ]
    rows += [
        Rule(one, "user_rank_asymmetric", Test.SIGN_TEST, True, Reason.ASYMMETRIC_TARGET_SIGN_TEST),
        Rule(one, "no_spread", Test.SIGN_TEST, True, Reason.NO_SPREAD_SIGN_TEST),
        Rule(one, "too_few", Test.SIGN_TEST, True, Reason.SHAPE_TOO_FEW),
        Rule(one, "asymmetric", Test.SIGN_TEST, True, Reason.ASYMMETRIC_TARGET_SIGN_TEST),
        Rule(one, "tails_large_n", Test.ONE_SAMPLE_T, False, Reason.SHAPE_DEPARTS_LARGE_N),
        Rule(one, "tails_small_n", Test.WILCOXON_SIGNED_RANK, True, Reason.SHAPE_DEPARTS_SMALL_N),
        Rule(paired, "no_spread", Test.SIGN_TEST, True, Reason.NO_SPREAD_SIGN_TEST),
        Rule(paired, "too_few", Test.WILCOXON_SIGNED_RANK, True, Reason.SHAPE_TOO_FEW),
        Rule(paired, "departure_large_n", Test.PAIRED_T, False, Reason.SHAPE_DEPARTS_LARGE_N),
        Rule(paired, "departure_small_n", Test.WILCOXON_SIGNED_RANK, True, Reason.SHAPE_DEPARTS_SMALL_N),
        Rule(two, "departure_large_n", Test.WELCH_T, False, Reason.SHAPE_DEPARTS_LARGE_N),
        Rule(two, "departure_small_n", Test.BRUNNER_MUNZEL, True, Reason.SHAPE_DEPARTS_SMALL_N),
        Rule(two, "departure_spreads_differ", Test.BRUNNER_MUNZEL, True, Reason.SPREADS_DIFFER_BRUNNER_MUNZEL),
        Rule(two, "departure_spreads_differ_small_n", Test.WELCH_T, False, Reason.SPREADS_DIFFER_SMALL_WELCH),
        Rule(two, "no_spread", Test.BRUNNER_MUNZEL, True, Reason.GROUP_WITHOUT_SPREAD_RANK),
        Rule(two, "too_few", Test.BRUNNER_MUNZEL, True, Reason.SHAPE_TOO_FEW),
        Rule(many, "departure_large_n", Test.ALEXANDER_GOVERN, False, Reason.SHAPE_DEPARTS_LARGE_N),
        Rule(many, "departure_small_n", Test.RANK_ANOVA_TYPE, True, Reason.SHAPE_DEPARTS_SMALL_N),
        Rule(many, "departure_spreads_differ", Test.RANK_ANOVA_TYPE, True, Reason.SPREADS_DIFFER_RANK_ANOVA_TYPE),
        Rule(many, "no_spread", Test.RANK_ANOVA_TYPE, True, Reason.GROUP_WITHOUT_SPREAD_RANK),
        Rule(many, "too_few", Test.RANK_ANOVA_TYPE, True, Reason.SHAPE_TOO_FEW),
        Rule(corr, "departure", Test.SPEARMAN_RHO, True, Reason.NON_NORMAL_SPEARMAN),
        Rule(corr, "too_few", Test.SPEARMAN_RHO, True, Reason.SHAPE_TOO_FEW),
    ]
    return tuple(rows)


RULES: tuple[Rule, ...] = _rows()
_LOOKUP: dict[tuple[Design, str], Rule] = {(r.design, r.condition): r for r in RULES}


def rule_table() -> list[tuple[str, str, str, str, str]]:
    """The table as rows of text: design, condition, test, rank-based, source (for docs)."""
    return [(r.design.value, r.condition, r.test.value, "yes" if r.rank_based else "no", r.source) for r in RULES]


@dataclass(frozen=True)
class ContinuousChoice:
    """The test for one continuous analysis, the judgements behind it and why."""

    design: Design
    test: Test
    rank_based: bool
    condition: str
    reason: Coded
    shape: ShapeJudgement | None
    spread: SpreadJudgement | None
    notes: tuple[Coded, ...] = ()
    options: Mapping[str, Any] = field(default_factory=dict)  # keyword arguments for the method

    @property
    def reasons(self) -> list[Coded]:
        return [self.reason]


def _clean(groups: Mapping[str, Any],
           counts: Mapping[str, Any] | None) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray] | None]:
    """Finite values per group (with a count above 0), and their counts when given."""
    values: dict[str, np.ndarray] = {}
    kept_counts: dict[str, np.ndarray] = {}
    for label, raw in groups.items():
        x = np.asarray(raw, dtype=float).ravel()
        keep = np.isfinite(x)
        if counts is not None:
            c = np.asarray(counts[label], dtype=float).ravel()
            keep &= np.isfinite(c) & (c > 0)
            kept_counts[str(label)] = c[keep].astype(np.int64)
        values[str(label)] = x[keep]
    return values, (kept_counts if counts is not None else None)


def shape_facts(design: Design, shape: ShapeJudgement, outcome: str | None, by: str | None) -> dict[str, Any]:
    """The facts a reason about the shape judgement is worded from."""
    return {
        "design": design,
        "outcome": outcome,
        "by": by,
        "direction": shape.direction,
        "p": shape.p_value,
        "skewness": shape.skewness,
        "excess_kurtosis": shape.excess_kurtosis,
        "n_smallest": Count(shape.n_smallest),
        "n_needed": shape.n_needed,
        "groups": len(shape.groups),
    }


def _spread_facts(spread: SpreadJudgement | None) -> dict[str, Any]:
    if spread is None:
        return {}
    return {"sd_ratio": spread.sd_ratio, "largest": spread.largest, "smallest": spread.smallest,
            "spread_p": spread.brown_forsythe_p}


def _condition(design: Design, values: dict[str, np.ndarray], shape: ShapeJudgement,
               spread: SpreadJudgement | None, handling: ShapeHandling, ordinal: bool,
               target: float | None) -> str:
    """The row of ``RULES`` that applies (the order of checks is the table's precedence)."""
    all_values = np.concatenate(list(values.values())) if values else np.empty(0)
    if ordinal:
        return "ordinal"
    if design in (Design.ONE_SAMPLE_CONTINUOUS, Design.PAIRED_CONTINUOUS):
        reference = 0.0 if design == Design.PAIRED_CONTINUOUS else (target if target is not None else 0.0)
        if all_values.size and np.all(all_values == all_values[0]) and all_values[0] != reference:
            return "no_spread"
    if handling is ShapeHandling.NORMAL:
        return "user_normal"
    asymmetric = shape.direction in (ShapeDirection.RIGHT_SKEWED, ShapeDirection.LEFT_SKEWED,
                                     ShapeDirection.PILED_AT_LIMIT)
    if handling is ShapeHandling.RANK:
        if design == Design.ONE_SAMPLE_CONTINUOUS and shape.departs and asymmetric:
            return "user_rank_asymmetric"
        return "user_rank"
    grouped = design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS)
    if grouped and any(v.size >= 2 and np.all(v == v[0]) for v in values.values()):
        return "no_spread"
    if shape.direction in (ShapeDirection.TOO_FEW, ShapeDirection.NO_SPREAD):
        return "too_few"
    if not shape.departs:
        return "no_clear_departure"
    if design == Design.TWO_CONTINUOUS:
        return "departure"
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        if asymmetric:
            return "asymmetric"
        return "tails_large_n" if shape.mean_based_fits else "tails_small_n"
    if shape.mean_based_fits:
        return "departure_large_n"
    if grouped and spread is not None and spread.differ:
        if design == Design.TWO_GROUP_CONTINUOUS and shape.n_smallest < SMALL_UNEQUAL:
            return "departure_spreads_differ_small_n"
        return "departure_spreads_differ"
    return "departure_small_n"


def choose_continuous(
    design: Design,
    groups: Mapping[str, Any],
    *,
    handling: ShapeHandling = ShapeHandling.AUTO,
    ordinal: bool = False,
    target: float | None = None,
    outcome: str | None = None,
    by: str | None = None,
    counts: Mapping[str, Any] | None = None,
    ordinal_column: str | None = None,
) -> ContinuousChoice:
    """Choose the test for a continuous question from the data's shape and spreads.

    Parameters
    ----------
    design : Design
        One of the continuous designs.
    groups : mapping of str to array_like
        The values: one group for a one-sample question (the outcome), one for a
        paired question (the differences, first minus second), one per level for
        group comparisons, and the two variables for a correlation.
    handling : ShapeHandling
        AUTO lets the judgements decide; NORMAL and RANK fix the family.
    ordinal : bool
        True when the outcome (or a correlated variable) is ordinal: always
        rank-based (the sign test for one sample and pairs).
    target : float, optional
        The stated value of a one-sample question (a column of one repeated value
        different from it is tested by the sign test).
    outcome, by : str, optional
        Column names, carried in the reason's facts for wording.
    counts : mapping of str to array_like, optional
        Records each value stands for (a count column), by the keys of ``groups``; the
        judgements are those of the repeated records
        (``stats.weighted_shape.judge_shape_weighted``).
    ordinal_column : str, optional
        The ordinal column the reason names (default ``outcome``).

    Returns
    -------
    ContinuousChoice
        The test, whether it is rank-based, the condition (a key of ``RULES``), the
        reason with its facts, both judgements, notes, and ``options`` to pass to the
        method (``p_method`` for the rank tests of groups: "auto", studentized
        permutations below 15 per group; "permutation" at any size when a group has
        no spread or every group has fewer than 3 values).

    Examples
    --------
    Forty invented waiting times in two clinics, strongly right-skewed (same population
    spread, but samples of a skewed measure often show SD ratios of 2 or more):

    >>> rng = np.random.default_rng(1)
    >>> waits = {"north": rng.lognormal(2.5, 0.9, 20), "south": rng.lognormal(2.5, 0.9, 20)}
    >>> choice = choose_continuous(Design.TWO_GROUP_CONTINUOUS, waits)
    >>> choice.test, choice.rank_based, choice.reason.code
    ('brunner_munzel', True, 'spreads_differ_brunner_munzel')

    One invented sample of waits against a target of 20 days:

    >>> choice = choose_continuous(Design.ONE_SAMPLE_CONTINUOUS, {"wait": rng.lognormal(3, 0.9, 40)}, target=20)
    >>> choice.test, choice.reason.code
    ('sign_test', 'asymmetric_target_sign_test')
    """
    if design not in MEAN_TEST:  # a caller's mistake, never the user's: only continuous designs ask
        raise KeyError(design)
    values, kept = _clean(groups, counts)
    grouped = design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS)
    if kept is None:
        shape = judge_shape(values)
        spread = judge_spread(values) if grouped else None
    else:
        counted = {label: (v, kept[label]) for label, v in values.items()}
        shape = judge_shape_weighted(counted)
        spread = judge_spread_weighted(counted) if grouped else None
    condition = _condition(design, values, shape, spread, handling, ordinal, target)
    rule = _LOOKUP[(design, condition)]  # every condition _condition returns has a row (tests/test_rules.py)
    facts = shape_facts(design, shape, outcome, by)
    facts.update(_spread_facts(spread))
    if condition == "no_spread" and not grouped:
        every = np.concatenate(list(values.values()))
        facts.update(value=float(every[0]), target=0.0 if design == Design.PAIRED_CONTINUOUS else target)
    if condition == "ordinal":
        facts["column"] = ordinal_column or outcome
    notes: list[Coded] = []
    if condition == "user_normal" and shape.departs:
        notes.append(coded(Note.SHAPE_DEPARTS_ASSUMED_NORMAL, **facts))
    options: dict[str, Any] = {}
    if rule.test in (Test.BRUNNER_MUNZEL, Test.RANK_ANOVA_TYPE):
        # Studentized permutations (Neubert & Brunner 2007) below 15 per group whatever the spreads:
        # they stay valid when spreads differ, and a rank test's p then depends on the ranks only.
        # Too few values for any approximation, or a group without spread: permutations at any size.
        exact = condition in ("no_spread", "too_few")
        options["p_method"] = "permutation" if exact else "auto"
    elif rule.test is Test.ALEXANDER_GOVERN:
        # Its chi-square p is too small in small groups (8 groups of 10 skewed values: 0.093
        # at 0.05); permutations of the studentized statistic below 15 per group held 0.03-0.066
        # in every shape tried, unequal spreads included (multigroup.alexander_govern_permutation_p).
        options["p_method"] = "auto"
    return ContinuousChoice(design, rule.test, rule.rank_based, condition, coded(rule.reason, **facts),
                            shape, spread, tuple(notes), options)


def method_for(test: Test, design: Design, *, counted: bool = False) -> Callable[..., Any]:
    """The ``stats`` function that runs a chosen continuous test.

    One-sample functions take ``(values, mu=...)``, paired ones ``(first, second)``, two
    groups ``(x, y, labels=...)``, several groups ``(groups)``, correlations ``(x, y)``;
    a choice's ``options`` are extra keyword arguments. With ``counted`` the functions
    of rows that stand for several records: one sample ``(values, counts, mu=...)``,
    paired ``(first, second, counts)``, groups as ``(values, counts)`` pairs,
    correlations ``(x, y, counts)``.
    """
    from ..stats import correlation, multigroup, onesample, paired, relative, signtest, twogroup
    from ..stats import weighted as w
    from ..stats import weighted_relative as wr

    if design == Design.PAIRED_CONTINUOUS:
        by_test: dict[Test, Callable[..., Any]] = (
            {Test.PAIRED_T: w.paired_t, Test.WILCOXON_SIGNED_RANK: w.wilcoxon_paired,
             Test.SIGN_TEST: wr.sign_test_paired} if counted else
            {Test.PAIRED_T: paired.paired_t, Test.WILCOXON_SIGNED_RANK: paired.wilcoxon_paired,
             Test.SIGN_TEST: signtest.sign_test_paired}
        )
        return by_test[test]
    if counted:
        weighted_table: dict[Test, Callable[..., Any]] = {
            Test.ONE_SAMPLE_T: w.one_sample_t,
            Test.WILCOXON_SIGNED_RANK: w.wilcoxon_signed_rank,
            Test.SIGN_TEST: wr.sign_test,
            Test.WELCH_T: w.welch_t,
            Test.BRUNNER_MUNZEL: wr.brunner_munzel,
            Test.ALEXANDER_GOVERN: wr.alexander_govern,
            Test.RANK_ANOVA_TYPE: wr.rank_anova_type,
            Test.PEARSON_R: w.pearson_r,
            Test.SPEARMAN_RHO: w.spearman_rho,
        }
        return weighted_table[test]
    table: dict[Test, Callable[..., Any]] = {
        Test.ONE_SAMPLE_T: onesample.one_sample_t,
        Test.WILCOXON_SIGNED_RANK: onesample.wilcoxon_signed_rank,
        Test.SIGN_TEST: signtest.sign_test,
        Test.WELCH_T: twogroup.welch_t,
        Test.BRUNNER_MUNZEL: relative.brunner_munzel,
        Test.ALEXANDER_GOVERN: multigroup.alexander_govern,
        Test.RANK_ANOVA_TYPE: relative.rank_anova_type,
        Test.PEARSON_R: correlation.pearson_r,
        Test.SPEARMAN_RHO: correlation.spearman_rho,
    }
    return table[test]
