"""Paired t and paired Wilcoxon signed-rank against R 4.2.2 and published examples.

Reference values come from R 4.2.2 via tests/reference/r_cases.json (the R call is
stored beside each value as ``r_call`` and printed in failure messages).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reference_cases import assert_close, cases_by_design, load_case, paired_arrays
from statmargin.errors import NotEnoughDataError
from statmargin.stats.paired import paired_t, wilcoxon_paired

CASES = cases_by_design("paired_continuous")
HL_TOLERANCE = 2e-4  # R finds approximate Hodges-Lehmann values with uniroot(tol = 1e-4)


@pytest.mark.parametrize("case_id", CASES)
def test_paired_t_matches_r(case_id: str) -> None:
    """t, df, p, mean difference and CI equal R's t.test(x1, x2, paired = TRUE)."""
    case, frame = load_case(case_id)
    x1, x2 = paired_arrays(case, frame)
    ref = case["tests"]["t_test_paired"]  # R 4.2.2, r_cases.json
    call = ref["r_call"]
    result = paired_t(x1, x2)
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.df, ref["df"][0], rel=1e-12, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    assert_close(result.estimate.value, ref["estimate"]["mean difference"], rel=1e-12, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=1e-9, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=1e-9, context=call)
    assert result.n == case["n"]["n_pairs"]


@pytest.mark.parametrize("case_id", CASES)
@pytest.mark.parametrize(
    ("test_id", "options"),
    [
        ("wilcoxon_paired_approx_cc", {"exact": False, "correct": True}),
        ("wilcoxon_paired_approx_nocc", {"exact": False, "correct": False}),
        ("wilcoxon_paired_exact", {"exact": True}),
    ],
)
def test_wilcoxon_paired_matches_r(case_id: str, test_id: str, options: dict) -> None:
    """V, p, pseudo-median of differences and CI equal R's wilcox.test(x1, x2, paired = TRUE, conf.int = TRUE)."""
    case, frame = load_case(case_id)
    x1, x2 = paired_arrays(case, frame)
    ref = case["tests"][test_id]  # R 4.2.2, r_cases.json
    result = wilcoxon_paired(x1, x2, **options)
    assert result.test == "wilcoxon_signed_rank" and result.design == "paired_continuous"
    if "not_run" in ref:
        assert result.p_method != "exact", ref["not_run"]
        return
    call = ref["r_call"]
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    assert_close(result.estimate.value, ref["estimate"]["(pseudo)median"], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert result.extra["n_zero_differences"] == case["n"]["n_zero_differences"]


DEPRESSION_FIRST = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
DEPRESSION_SECOND = np.array([0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29])


def test_wilcoxon_paired_textbook_example() -> None:
    """Hollander & Wolfe depression example: V = 40, one-sided exact p = 0.01953."""
    # Hollander, M. & Wolfe, D. A. (1973). Nonparametric Statistical Methods, 1st ed.,
    # pp. 29f (Hamilton depression scale before/after tranquilizer); V = 40 and
    # p-value = 0.01953 recalled from that example (as reproduced in R's wilcox.test help), from memory.
    result = wilcoxon_paired(DEPRESSION_FIRST, DEPRESSION_SECOND, alternative="greater")
    assert result.statistic == 40
    assert result.p_method == "exact"
    assert round(result.p_value, 5) == 0.01953
    # r = 4 V / (n (n + 1)) - 1 = 160/90 - 1 (Kerby 2014 simple difference formula).
    assert result.effect.value == pytest.approx(160 / 90 - 1, rel=1e-12)


def test_paired_t_textbook_example() -> None:
    """Student's sleep data: mean difference 1.58 hours, t = 4.06 on 9 df (second drug minus first)."""
    # Student (1908). The probable error of a mean. Biometrika 6(1):1-25, p. 20: mean
    # difference +1.58 hours (from memory); t = 4.062127683382037 and p = 0.00283289019738427
    # agree with R 4.2.2 t.test(extra ~ group, sleep, paired = TRUE) in r_cases.json.
    first = np.array([0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0])
    second = np.array([1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4])
    result = paired_t(second, first, labels=("drug 2", "drug 1"))
    assert result.estimate.value == pytest.approx(1.58, abs=1e-12)
    assert result.statistic == pytest.approx(4.062127683382037, rel=1e-9)
    assert result.p_value == pytest.approx(0.00283289019738427, rel=1e-6)
    assert result.extra["d_z"] == pytest.approx(1.58 / 1.2299954832798732, rel=1e-9)


def test_all_differences_zero_is_refused() -> None:
    """Identical pairs raise NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="no difference"):
        wilcoxon_paired(np.array([1.0, 2.0, 3.0]), np.array([1.0, 2.0, 3.0]))


def test_constant_differences_are_refused_for_t() -> None:
    """Differences with no spread leave the paired t undefined."""
    with pytest.raises(NotEnoughDataError, match="same"):
        paired_t(np.array([2.0, 3.0, 4.0]), np.array([1.0, 2.0, 3.0]))


def test_incomplete_pairs_are_dropped() -> None:
    """A pair with a missing value is dropped and counted."""
    result = paired_t(np.array([1.0, 2.0, np.nan, 5.0]), np.array([0.5, 2.5, 1.0, 3.0]))
    assert (result.n, result.n_excluded) == (3, 1)


pairs = st.lists(
    st.tuples(st.integers(-100, 100).map(lambda v: v / 10), st.integers(-100, 100).map(lambda v: v / 10)),
    min_size=3,
    max_size=20,
)


@settings(max_examples=40, deadline=None)
@given(pairs)
def test_swapping_measurements_flips_estimate_and_keeps_p(data: list[tuple[float, float]]) -> None:
    """Swapping first and second flips the sign of the estimate and keeps p, for both paired tests."""
    a, b = np.array(data).T
    differences = a - b
    if np.all(differences == 0):
        return
    for function in (paired_t, wilcoxon_paired):
        if function is paired_t and np.ptp(differences) == 0:
            continue
        forward, backward = function(a, b), function(b, a)
        assert backward.estimate.value == pytest.approx(-forward.estimate.value, abs=1e-12)
        assert backward.p_value == pytest.approx(forward.p_value, rel=1e-9)
        assert 0.0 <= forward.p_value <= 1.0
