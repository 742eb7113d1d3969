"""Pearson's r and Spearman's rho against R 4.2.2 and a published example.

Reference values come from R 4.2.2 via tests/reference/r_cases.json (the R call is
stored beside each value as ``r_call`` and printed in failure messages).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reference_cases import assert_close, cases_by_design, load_case
from statmargin.errors import NotEnoughDataError
from statmargin.stats.correlation import pearson_r, spearman_rho

CASES = cases_by_design("two_continuous")
TINY_P = 1e-90  # absolute floor: R's rho for `women` is 1 - 2e-16, so its p is 3.5e-101, ours 0


def _columns(case_id: str) -> tuple[dict, np.ndarray, np.ndarray]:
    case, frame = load_case(case_id)
    first, second = case["variables"]["var1"], case["variables"]["var2"]
    complete = frame.dropna(subset=[first, second])
    return case, complete[first].to_numpy(float), complete[second].to_numpy(float)


@pytest.mark.parametrize("case_id", CASES)
def test_pearson_matches_r(case_id: str) -> None:
    """t, df, p, r and the Fisher-z CI equal R's cor.test(x, y)."""
    case, x, y = _columns(case_id)
    ref = case["tests"]["pearson"]  # R 4.2.2, r_cases.json
    call = ref["r_call"]
    result = pearson_r(x, y)
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.df, ref["df"][0], rel=1e-12, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    assert_close(result.estimate.value, ref["estimate"]["cor"], rel=1e-12, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=1e-9, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=1e-9, context=call)


@pytest.mark.parametrize("case_id", CASES)
def test_spearman_matches_r(case_id: str) -> None:
    """S, p and rho equal R's cor.test(x, y, method = "spearman", exact = FALSE)."""
    case, x, y = _columns(case_id)
    ref = case["tests"]["spearman"]  # R 4.2.2, r_cases.json
    call = ref["r_call"]
    result = spearman_rho(x, y)
    n = x.size
    # S is (n^3 - n)(1 - rho)/6; near rho = 1 compare on the scale of (n^3 - n)/6.
    assert_close(result.statistic, ref["statistic"], rel=1e-9, abs_floor=1e-9 * (n**3 - n) / 6, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, abs_floor=TINY_P, context=call)
    assert_close(result.estimate.value, ref["estimate"]["rho"], rel=1e-12, context=call)


def test_spearman_interval_uses_bonett_wright_se() -> None:
    """The rho interval is tanh(atanh(rho) +/- 1.96 sqrt((1 + rho^2/2)/(n - 3)))."""
    # Bonett & Wright (2000), Psychometrika 65:23-28, eq. for the Spearman SE.
    case, x, y = _columns("mtcars_mpg_vs_wt")
    result = spearman_rho(x, y)
    rho, n = result.estimate.value, x.size
    half = 1.959963984540054 * math.sqrt((1 + rho**2 / 2) / (n - 3))
    assert result.estimate.ci_low == pytest.approx(math.tanh(math.atanh(rho) - half), rel=1e-9)
    assert result.estimate.ci_high == pytest.approx(math.tanh(math.atanh(rho) + half), rel=1e-9)


def test_pearson_textbook_example() -> None:
    """Hollander & Wolfe aorta/insulin example: r = 0.5712, t = 1.8411 on 7 df, p = 0.1082."""
    # Hollander, M. & Wolfe, D. A. (1973). Nonparametric Statistical Methods, 1st ed.,
    # pp. 187f; Pearson values as reproduced in R's cor.test help: t = 1.8411, df = 7,
    # p-value = 0.1082, 95% CI -0.1497426 to 0.8955795, cor 0.5711816 (from memory).
    x = np.array([44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1])
    y = np.array([2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8])
    result = pearson_r(x, y)
    assert result.estimate.value == pytest.approx(0.5711816, abs=5e-8)
    assert result.statistic == pytest.approx(1.8411, abs=5e-5)
    assert result.p_value == pytest.approx(0.1082, abs=5e-5)
    assert result.estimate.ci_low == pytest.approx(-0.1497426, abs=5e-8)
    assert result.estimate.ci_high == pytest.approx(0.8955795, abs=5e-8)
    spearman = spearman_rho(x, y)
    # Same help page, Spearman: S = 48, rho = 0.6 (from memory); exact p not compared (we use the t approximation).
    assert spearman.statistic == pytest.approx(48, abs=1e-9)
    assert spearman.estimate.value == pytest.approx(0.6, abs=1e-12)


def test_perfect_correlation_gives_p_zero_not_nan() -> None:
    """Points on a line give r = 1, p = 0 and a note, never NaN."""
    x = np.arange(10.0)
    result = pearson_r(x, 2 * x + 1)
    assert result.estimate.value == 1.0
    assert result.p_value == 0.0
    assert result.notes


def test_too_few_pairs_is_refused() -> None:
    """Fewer than three complete pairs raise NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="at least 3"):
        spearman_rho(np.array([1.0, 2.0, np.nan]), np.array([3.0, 1.0, 2.0]))


def test_constant_variable_is_refused() -> None:
    """A measurement with no spread raises NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="same"):
        pearson_r(np.array([1.0, 2.0, 3.0, 4.0]), np.array([5.0, 5.0, 5.0, 5.0]))


pairs = st.lists(
    st.tuples(st.integers(-100, 100).map(lambda v: v / 10), st.integers(-100, 100).map(lambda v: v / 10)),
    min_size=4,
    max_size=25,
)


@settings(max_examples=50, deadline=None)
@given(pairs)
def test_spearman_invariant_to_increasing_transform(data: list[tuple[float, float]]) -> None:
    """rho, S and p are unchanged by the strictly increasing transforms exp(v) and v**3 + 5."""
    x, y = np.array(data).T
    if np.ptp(x) == 0 or np.ptp(y) == 0:
        return
    before = spearman_rho(x, y)
    after = spearman_rho(np.exp(x), y**3 + 5)
    assert after.estimate.value == before.estimate.value
    assert after.p_value == before.p_value
    assert 0.0 <= before.p_value <= 1.0
    assert -1.0 <= before.estimate.ci_low <= before.estimate.value <= before.estimate.ci_high <= 1.0
