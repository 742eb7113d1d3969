"""Welch's t, Student's t and Mann-Whitney U against R 4.2.2 and published examples.

Reference values come from R 4.2.2 via tests/reference/r_cases.json (the R call is
stored beside each value as ``r_call`` and printed in failure messages).
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from reference_cases import assert_close, cases_by_design, group_arrays, load_case
from statmargin.errors import NotEnoughDataError
from statmargin.stats.twogroup import mann_whitney_u, rank_sum_counts, student_t, welch_t

CASES = cases_by_design("two_group_continuous")
HL_TOLERANCE = 2e-4  # R finds approximate Hodges-Lehmann values with uniroot(tol = 1e-4)


def _groups(case_id: str) -> tuple[dict, tuple[str, str], np.ndarray, np.ndarray]:
    case, frame = load_case(case_id)
    arrays = group_arrays(case, frame)
    first, second = case["group_levels"]  # R's factor order: differences are first - second
    return case, (first, second), arrays[first], arrays[second]


@pytest.mark.parametrize("case_id", CASES)
@pytest.mark.parametrize(("test_id", "function"), [("t_test_welch", welch_t), ("t_test_student", student_t)])
def test_t_tests_match_r(case_id: str, test_id: str, function) -> None:
    """t, df, p, group means and CI of the difference equal R's t.test (Welch and var.equal = TRUE)."""
    case, labels, x, y = _groups(case_id)
    ref = case["tests"][test_id]  # R 4.2.2, r_cases.json
    call = ref["r_call"]
    result = function(x, y, labels=labels)
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.df, ref["df"][0], rel=1e-9, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    means = {g["label"]: g["mean"] for g in result.groups}
    for label in labels:
        assert_close(means[label], ref["estimate"][f"mean in group {label}"], rel=1e-12, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=1e-9, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=1e-9, context=call)


def _centred_rank_sum(x: np.ndarray, y: np.ndarray, shift: float) -> float:
    """Rank sum of x - shift among y minus its null mean (independent of the module's code)."""
    ranks = stats.rankdata(np.concatenate([x - shift, y]))
    n1, n2 = x.size, y.size
    return ranks[:n1].sum() - n1 * (n1 + 1) / 2 - n1 * n2 / 2


@pytest.mark.parametrize("case_id", CASES)
@pytest.mark.parametrize(
    ("test_id", "options"),
    [
        ("mann_whitney_approx_cc", {"exact": False, "correct": True}),
        ("mann_whitney_approx_nocc", {"exact": False, "correct": False}),
        ("mann_whitney_exact", {"exact": True}),
    ],
)
def test_mann_whitney_matches_r(case_id: str, test_id: str, options: dict) -> None:
    """W, p, location shift and its CI equal R's wilcox.test(y ~ g, conf.int = TRUE)."""
    case, labels, x, y = _groups(case_id)
    ref = case["tests"][test_id]  # R 4.2.2, r_cases.json
    result = mann_whitney_u(x, y, labels=labels, **options)
    if "not_run" in ref:
        assert result.p_method != "exact", ref["not_run"]
        return
    call = ref["r_call"]
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=0, abs_floor=HL_TOLERANCE, context=call)
    r_estimate = ref["estimate"]["difference in location"]
    if abs(result.estimate.value - r_estimate) > HL_TOLERANCE:
        # R's approximate estimate is any root of the uncorrected statistic found by
        # uniroot; where that statistic is zero over a whole stretch of shifts, R
        # stops inside the stretch. Then both values must lie in the same stretch.
        assert _centred_rank_sum(x, y, r_estimate) == 0, call
        assert _centred_rank_sum(x, y, result.estimate.value) == 0, call
        lower, upper = sorted((r_estimate, result.estimate.value))
        differences = np.subtract.outer(x, y).ravel()
        assert not np.any((differences > lower) & (differences < upper)), call


def test_rank_sum_distribution_matches_enumeration() -> None:
    """Exact null counts of U equal a brute-force count over all arrangements (definition, Mann & Whitney 1947)."""
    for n1, n2 in [(1, 1), (2, 3), (3, 3), (4, 2), (4, 5)]:
        brute = [0] * (n1 * n2 + 1)
        for chosen in itertools.combinations(range(1, n1 + n2 + 1), n1):
            brute[sum(chosen) - n1 * (n1 + 1) // 2] += 1
        assert rank_sum_counts(n1, n2) == brute
        assert sum(brute) == math.comb(n1 + n2, n1)


def test_mann_whitney_textbook_example() -> None:
    """Hollander & Wolfe permeability example: W = 35, one-sided exact p = 0.1272, shift 0.305."""
    # Hollander, M. & Wolfe, D. A. (1973). Nonparametric Statistical Methods, 1st ed.,
    # pp. 69f (permeability constants, at term vs 12-26 weeks); W = 35, p = 0.1272 and
    # estimate 0.305 recalled from that example (as reproduced in R's wilcox.test help), from memory.
    term = np.array([0.80, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46])
    early = np.array([1.15, 0.88, 0.90, 0.74, 1.21])
    result = mann_whitney_u(term, early, labels=("term", "early"), alternative="greater")
    assert result.statistic == 35
    assert result.p_method == "exact"
    assert round(result.p_value, 4) == 0.1272
    assert result.estimate.value == pytest.approx(0.305, abs=1e-12)
    assert result.estimate.ci_high == math.inf


def test_hedges_g_from_pooled_sd() -> None:
    """Hedges' g equals J(n1+n2-2) * difference / pooled SD for the sleep groups."""
    # Hedges & Olkin (1985), Statistical Methods for Meta-Analysis, ch. 5: g = J(m) d,
    # J(m) ~ 1 - 3 / (4 m - 1) (approximation from that chapter, from memory; exact J differs < 1e-3 at m = 18).
    _, labels, x, y = _groups("sleep_extra_by_group")
    result = student_t(x, y, labels=labels)
    pooled = math.sqrt((np.var(x, ddof=1) + np.var(y, ddof=1)) / 2)
    d = (x.mean() - y.mean()) / pooled
    assert result.effect.value == pytest.approx((1 - 3 / (4 * 18 - 1)) * d, rel=1e-3)
    assert result.effect.ci_low < result.effect.value < result.effect.ci_high


def test_group_of_one_is_refused() -> None:
    """A group with a single value raises NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="Group B"):
        welch_t(np.array([1.0, 2.0, 3.0]), np.array([4.0]), labels=("A", "B"))


def test_constant_outcome_is_refused() -> None:
    """No spread across both groups raises NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="same"):
        mann_whitney_u(np.array([2.0, 2.0]), np.array([2.0, 2.0, 2.0]))


samples = st.lists(st.integers(-300, 300).map(lambda v: v / 10), min_size=2, max_size=15)


def _has_spread(x: list[float], y: list[float]) -> bool:
    return len(set(x) | set(y)) > 1


@settings(max_examples=40, deadline=None)
@given(samples, samples)
def test_mann_whitney_invariant_to_increasing_transform(x: list[float], y: list[float]) -> None:
    """W and p are unchanged by the strictly increasing transform v**3 + 5."""
    if not _has_spread(x, y):
        return
    a, b = np.array(x), np.array(y)
    before = mann_whitney_u(a, b)
    after = mann_whitney_u(a**3 + 5, b**3 + 5)
    assert after.statistic == before.statistic
    assert after.p_value == pytest.approx(before.p_value, rel=1e-12)
    assert 0.0 <= before.p_value <= 1.0


@settings(max_examples=40, deadline=None)
@given(samples, samples)
def test_swapping_groups_flips_estimates_and_keeps_p(x: list[float], y: list[float]) -> None:
    """Swapping the groups flips the sign of every difference estimate and keeps p."""
    if not _has_spread(x, y):
        return
    a, b = np.array(x), np.array(y)
    for function in (welch_t, student_t, mann_whitney_u):
        if function is welch_t and (np.ptp(a) == 0 or np.ptp(b) == 0):
            continue  # Welch's df needs spread in both groups
        try:
            forward = function(a, b)
        except NotEnoughDataError:
            # e.g. each group one repeated value: the refusal must not depend on the order
            with pytest.raises(NotEnoughDataError):
                function(b, a)
            continue
        backward = function(b, a)
        assert backward.estimate.value == pytest.approx(-forward.estimate.value, abs=1e-12)
        assert backward.p_value == pytest.approx(forward.p_value, rel=1e-9, abs=1e-300)
        assert 0.0 <= forward.p_value <= 1.0


def test_no_spread_within_groups_is_refused() -> None:
    """Two constant groups with different values raise NotEnoughDataError (no within-group spread)."""
    with pytest.raises(NotEnoughDataError, match="single repeated value"):
        student_t(np.array([1.0, 1.0]), np.array([3.0, 3.0, 3.0]))


def test_rank_biserial_interval_for_complete_separation() -> None:
    """Complete separation gives r = -1 and a finite interval inside [-1, 1] that is not a single point."""
    # Kerby (2014), Comprehensive Psychology 3:11.IT.3.1: r = -1 when every value of the first group is lower.
    result = mann_whitney_u(np.arange(3.0), np.arange(3.0) + 10)
    assert result.effect.value == -1.0
    assert -1.0 <= result.effect.ci_low < result.effect.ci_high < 0.0
    assert result.effect.ci_high - result.effect.ci_low > 0.1
    # Exact p for n = 3, 3 with complete separation: 2 / C(6, 3) = 0.1 (R 4.2.2 wilcox.test(0:2, 10:12) gives p-value = 0.1; from memory).
    assert result.p_value == pytest.approx(0.1, rel=1e-12)
