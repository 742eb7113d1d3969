"""Count-weighted continuous and table methods equal the unweighted methods on the repeated rows.

The reference for every check is statmargin's own unweighted method (itself checked
against R 4.2.2 and SciPy in the other test modules) applied to ``np.repeat(values,
counts)``; data are seeded random rows with many ties, missing values and zero counts.
"""

from __future__ import annotations

import math
import warnings
from collections import Counter

import numpy as np
import pytest

from statmargin.errors import NotEnoughDataError
from statmargin.results import Result
from statmargin.stats import (
    categorical,
    correlation,
    followup,
    multigroup,
    onesample,
    paired,
    twogroup,
)
from statmargin.stats import weighted as w
from statmargin.stats import weighted_followup as wf
from statmargin.stats._common import median_pairwise_difference, median_walsh_average
from statmargin.stats.weighted_select import (
    median_pairwise_difference_weighted,
    median_walsh_average_weighted,
)
from statmargin.vocabulary.codes import Skip

REL = 1e-12
REL_INTERVAL = 1e-9  # bounds found by root search (noncentral t, rank-statistic inversion)


def _close(a, b, rel: float) -> bool:
    if a is None or b is None:
        return a is b
    if isinstance(a, (list, tuple)):
        return len(a) == len(b) and all(_close(x, y, rel) for x, y in zip(a, b, strict=True))
    if math.isinf(a) or math.isinf(b):
        return a == b
    return math.isclose(a, b, rel_tol=rel, abs_tol=1e-12)


def assert_same(weighted: Result, plain: Result) -> None:
    """Every number people read is the same (to 1e-12; root-searched bounds to 1e-9)."""
    assert weighted.test == plain.test and weighted.design == plain.design
    assert weighted.n == plain.n and weighted.n_excluded == plain.n_excluded
    assert weighted.p_method == plain.p_method
    assert _close(weighted.statistic, plain.statistic, REL)
    assert _close(weighted.df, plain.df, REL)
    assert _close(weighted.p_value, plain.p_value, 1e-10)
    for part in ("estimate", "effect"):
        mine, theirs = getattr(weighted, part), getattr(plain, part)
        assert (mine is None) == (theirs is None)
        if mine is not None:
            assert mine.kind == theirs.kind and mine.levels == theirs.levels
            assert _close(mine.value, theirs.value, REL)
            assert _close(mine.ci_low, theirs.ci_low, REL_INTERVAL)
            assert _close(mine.ci_high, theirs.ci_high, REL_INTERVAL)
    assert len(weighted.groups) == len(plain.groups)
    for g, h in zip(weighted.groups, plain.groups, strict=True):
        assert g["label"] == h["label"] and g["n"] == h["n"]
        for key in ("mean", "sd", "median"):
            assert _close(g[key], h[key], REL)
    assert [n.code for n in weighted.notes] == [n.code for n in plain.notes]
    assert [n.facts for n in weighted.notes] == [n.facts for n in plain.notes]


def _rows(rng: np.random.Generator, size: int, shift: float = 0.0, missing: bool = True):
    """Half-unit values (many ties), counts 0 to 4, one missing value."""
    values = rng.integers(0, 12, size) / 2.0 + shift
    counts = rng.integers(0, 5, size).astype(float)
    counts[0] = max(counts[0], 1.0)
    if missing:
        values[1] = np.nan
        counts[1] = 3.0
    return values, counts


def _repeat(values, counts):
    return np.repeat(values, counts.astype(int))


SEEDS = [1, 2, 3, 4, 5]


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield


@pytest.mark.parametrize("seed", SEEDS)
@pytest.mark.parametrize("alternative", ["two-sided", "greater", "less"])
def test_one_sample_tests_equal_repeated_rows(seed: int, alternative: str) -> None:
    """One-sample t and Wilcoxon signed-rank with counts equal the unweighted tests of the repeated rows."""
    rng = np.random.default_rng(seed)
    x, c = _rows(rng, 40)
    assert_same(w.one_sample_t(x, c, mu=2.5, alternative=alternative),
                onesample.one_sample_t(_repeat(x, c), mu=2.5, alternative=alternative))
    assert_same(w.wilcoxon_signed_rank(x, c, mu=2.5, alternative=alternative),
                onesample.wilcoxon_signed_rank(_repeat(x, c), mu=2.5, alternative=alternative))


@pytest.mark.parametrize("seed", SEEDS)
@pytest.mark.parametrize("alternative", ["two-sided", "greater"])
def test_two_group_tests_equal_repeated_rows(seed: int, alternative: str) -> None:
    """Welch, Student and Mann-Whitney (with the Hodges-Lehmann interval) equal the repeated rows."""
    rng = np.random.default_rng(seed)
    (x, cx), (y, cy) = _rows(rng, 30), _rows(rng, 25, shift=0.5)
    ex, ey = _repeat(x, cx), _repeat(y, cy)
    labels = ("North", "South")
    for weighted, plain in ((w.welch_t, twogroup.welch_t), (w.student_t, twogroup.student_t),
                            (w.mann_whitney_u, twogroup.mann_whitney_u)):
        assert_same(weighted((x, cx), (y, cy), labels=labels, alternative=alternative),
                    plain(ex, ey, labels=labels, alternative=alternative))


@pytest.mark.parametrize("seed", SEEDS)
def test_paired_tests_equal_repeated_pairs(seed: int) -> None:
    """Paired t and Wilcoxon on counted pairs (zero differences included) equal the repeated pairs."""
    rng = np.random.default_rng(seed)
    first, c = _rows(rng, 30)
    second = first + rng.integers(-2, 3, 30) / 2.0  # many zero and tied differences
    a, b = _repeat(first, c), _repeat(second, c)
    assert_same(w.paired_t(first, second, c, labels=("before", "after")),
                paired.paired_t(a, b, labels=("before", "after")))
    assert_same(w.wilcoxon_paired(first, second, c, labels=("before", "after")),
                paired.wilcoxon_paired(a, b, labels=("before", "after")))


@pytest.mark.parametrize("seed", SEEDS)
def test_multigroup_tests_equal_repeated_rows(seed: int) -> None:
    """One-way ANOVA, Welch's ANOVA and Kruskal-Wallis (with its bootstrap) equal the repeated rows."""
    rng = np.random.default_rng(seed)
    groups = {label: _rows(rng, 20, shift=s) for label, s in (("A", 0.0), ("B", 0.5), ("C", 1.0))}
    plain = {label: _repeat(v, c) for label, (v, c) in groups.items()}
    assert_same(w.one_way_anova(groups), multigroup.one_way_anova(plain))
    assert_same(w.welch_anova(groups), multigroup.welch_anova(plain))
    assert_same(w.kruskal_wallis(groups), multigroup.kruskal_wallis(plain))


@pytest.mark.parametrize("seed", SEEDS)
def test_correlations_equal_repeated_pairs(seed: int) -> None:
    """Pearson and Spearman with counted pairs equal the repeated pairs."""
    rng = np.random.default_rng(seed)
    x, c = _rows(rng, 40)
    y = x + rng.integers(-3, 4, 40) / 2.0
    assert_same(w.pearson_r(x, y, c, labels=("x", "y")), correlation.pearson_r(_repeat(x, c), _repeat(y, c), labels=("x", "y")))
    assert_same(w.spearman_rho(x, y, c, labels=("x", "y")),
                correlation.spearman_rho(_repeat(x, c), _repeat(y, c), labels=("x", "y")))


def test_counts_of_one_give_the_unweighted_result_exactly() -> None:
    """With every count 1 the rows are the records: the exact Mann-Whitney p-value of R's example appears.

    Data: R's ``?wilcox.test`` two-sample example (Hollander & Wolfe 1973, p. 69),
    exact p = 0.1272 (one-sided), as in ``test_methods_twogroup``.
    """
    x = [0.80, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46]
    y = [1.15, 0.88, 0.90, 0.74, 1.21]
    result = w.mann_whitney_u((x, np.ones(10)), (y, np.ones(5)), labels=("x", "y"), alternative="greater")
    assert result.p_method == "exact"
    assert result.p_value == pytest.approx(0.1272, abs=5e-5)


def test_large_kruskal_wallis_effect_equals_the_repeated_rows() -> None:
    """Thousands of records: H, p, epsilon-squared and its interval equal the repeated rows' (all from H)."""
    rng = np.random.default_rng(7)
    groups = {g: (rng.integers(0, 20, 30) / 2.0, rng.integers(50, 150, 30).astype(float)) for g in "ABC"}
    result = w.kruskal_wallis(groups)
    plain = multigroup.kruskal_wallis({g: _repeat(v, c) for g, (v, c) in groups.items()})
    assert result.statistic == pytest.approx(plain.statistic, rel=1e-12)
    assert result.p_value == pytest.approx(plain.p_value, rel=1e-10)
    for attribute in ("value", "ci_low", "ci_high"):
        assert getattr(result.effect, attribute) == pytest.approx(getattr(plain.effect, attribute), rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("seed", range(20))
def test_weighted_hodges_lehmann_selection_is_exact(seed: int) -> None:
    """The weighted shift and pseudo-median are bit-for-bit the medians of the repeated values."""
    rng = np.random.default_rng(seed)
    a, b = rng.integers(0, 9, 15) / 4.0, rng.integers(0, 9, 11) / 4.0
    wa, wb = rng.integers(1, 6, 15), rng.integers(1, 6, 11)
    assert median_pairwise_difference_weighted(a, wa, b, wb, work_limit=3) == median_pairwise_difference(
        np.repeat(a, wa), np.repeat(b, wb))
    assert median_walsh_average_weighted(a, wa, work_limit=2) == median_walsh_average(np.repeat(a, wa))


def test_weighted_tables_equal_tables_of_records() -> None:
    """Chi-square, Fisher, McNemar, goodness of fit and binomial on weighted tables equal the record-level tables."""
    rng = np.random.default_rng(11)
    size = 60
    rows = rng.choice(["A", "B", "C"], size)
    cols = rng.choice(["yes", "no"], size)
    counts = rng.integers(0, 6, size).astype(float)
    table, row_levels, col_levels = w.weighted_table(rows, cols, counts)
    records = [(r, k) for r, k, c in zip(rows, cols, counts, strict=True) for _ in range(int(c))]
    tally = Counter(records)
    expected = np.array([[tally[(r, k)] for k in col_levels] for r in row_levels])
    assert table.tolist() == expected.tolist()
    weighted_result = categorical.chi_square_independence(table, row_levels, col_levels)
    assert weighted_result.statistic == pytest.approx(
        categorical.chi_square_independence(expected, row_levels, col_levels).statistic, rel=1e-15)
    two = w.weighted_table(rows[rows != "C"], cols[rows != "C"], counts[rows != "C"])[0]
    assert categorical.fisher_exact(two, ["A", "B"], ["no", "yes"]).p_value == pytest.approx(
        categorical.fisher_exact(expected[:2], ["A", "B"], ["no", "yes"]).p_value, rel=1e-15)
    per_label = w.weighted_counts(cols, counts)
    assert per_label == dict(Counter(k for _, k in records))
    result = categorical.binomial_exact(per_label["yes"], sum(per_label.values()), share=0.5, label="yes")
    assert result.p_value == pytest.approx(
        categorical.binomial_exact(sum(k == "yes" for _, k in records), len(records), share=0.5, label="yes").p_value)
    second = np.where(rng.random(size) < 0.3, np.where(cols == "yes", "no", "yes"), cols)
    paired_table, levels, _ = w.weighted_table(cols, second, counts, row_levels=["yes", "no"], col_levels=["yes", "no"])
    pairs = Counter((k, s) for k, s, c in zip(cols, second, counts, strict=True) for _ in range(int(c)))
    assert paired_table.tolist() == [[pairs[("yes", "yes")], pairs[("yes", "no")]],
                                     [pairs[("no", "yes")], pairs[("no", "no")]]]
    assert categorical.mcnemar(paired_table, levels).n == len(records)


@pytest.mark.parametrize("bad, code", [(-1.0, Skip.NEGATIVE_VALUE), (2.5, Skip.NOT_WHOLE_COUNT)])
def test_bad_counts_are_refused_with_their_row(bad: float, code: Skip) -> None:
    """A negative or fractional count is refused in one line naming its row."""
    with pytest.raises(NotEnoughDataError) as info:
        w.one_sample_t([1.0, 2.0, 3.0], [1.0, bad, 2.0])
    assert info.value.reason is not None and info.value.reason.code == code
    assert info.value.reason.facts["row"] == 2
    assert "\n" not in str(info.value)


def _same_followups(mine, theirs) -> None:
    """Pairs, estimates, intervals, statistics and p-values of two follow-up lists agree."""
    assert [f.levels for f in mine] == [f.levels for f in theirs]
    for f, g in zip(mine, theirs, strict=True):
        assert f.test == g.test and f.flagged == g.flagged
        assert _close(f.statistic, g.statistic, REL)
        assert _close(f.p_value, g.p_value, 1e-10) and _close(f.p_adjusted, g.p_adjusted, 1e-10)
        assert _close(f.estimate.value, g.estimate.value, REL)
        assert _close(f.estimate.ci_low, g.estimate.ci_low, REL_INTERVAL)
        assert _close(f.estimate.ci_high, g.estimate.ci_high, REL_INTERVAL)


@pytest.mark.parametrize("seed", SEEDS)
def test_followups_equal_repeated_rows(seed: int) -> None:
    """Tukey, Games-Howell, Dunn and pairwise Mann-Whitney with counts equal the repeated rows."""
    rng = np.random.default_rng(seed)
    groups = {label: _rows(rng, 20, shift=s, missing=False) for label, s in (("A", 0.0), ("B", 0.5), ("C", 1.5))}
    plain = {label: _repeat(v, c) for label, (v, c) in groups.items()}
    _same_followups(wf.tukey_hsd(groups), followup.tukey_hsd(plain))
    _same_followups(wf.games_howell(groups), followup.games_howell(plain))
    _same_followups(wf.dunn(groups), followup.dunn(plain))
    _same_followups(wf.pairwise_mann_whitney(groups), followup.pairwise_mann_whitney(plain))
