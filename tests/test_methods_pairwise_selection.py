"""Selecting order statistics of pairwise differences and Walsh averages without listing them.

The selections must equal, bit for bit, what listing all values and calling ``np.sort``
or ``np.median`` gives (the brute-force definition of the Hodges-Lehmann estimates,
Hodges & Lehmann 1963, doi:10.1214/aoms/1177704172), and must stay feasible for
sheet-sized groups.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from statmargin.errors import OptionError
from statmargin.stats._common import (
    kth_pairwise_difference,
    kth_walsh_average,
    median_pairwise_difference,
    median_walsh_average,
)
from statmargin.stats.onesample import wilcoxon_signed_rank
from statmargin.stats.twogroup import mann_whitney_u

# Small values on a coarse grid give many ties; the float grid (tenths) also exercises
# rounding in the differences, which the selection must reproduce exactly.
tied_values = st.lists(
    st.integers(min_value=-6, max_value=6).map(lambda v: v / 10.0), min_size=1, max_size=25
)
mixed_values = st.lists(
    st.one_of(
        st.integers(min_value=-4, max_value=4).map(float),
        st.floats(min_value=-1e3, max_value=1e3, allow_nan=False, allow_infinity=False),
    ),
    min_size=1,
    max_size=25,
)
samples = st.one_of(tied_values, mixed_values)
work_limits = st.integers(min_value=1, max_value=30)


def _walsh(values: np.ndarray) -> np.ndarray:
    """All (x_i + x_j) / 2 for i <= j (the definition, listed)."""
    i, j = np.triu_indices(values.size)
    return (values[i] + values[j]) / 2.0


@settings(max_examples=150, deadline=None)
@given(samples, samples, work_limits)
def test_median_pairwise_difference_equals_listing(x: list[float], y: list[float], limit: int) -> None:
    """The selected median difference equals np.median of all listed differences exactly."""
    a, b = np.array(x), np.array(y)
    brute = float(np.median(np.subtract.outer(a, b)))  # Hodges & Lehmann (1963), by definition
    assert median_pairwise_difference(a, b, work_limit=limit) == brute
    assert median_pairwise_difference(a, b) == brute


@settings(max_examples=100, deadline=None)
@given(samples, samples, work_limits, st.data())
def test_kth_pairwise_difference_equals_listing(
    x: list[float], y: list[float], limit: int, data: st.DataObject
) -> None:
    """Any order statistic of the differences equals the sorted listing's entry exactly."""
    a, b = np.sort(np.array(x)), np.sort(np.array(y))
    listed = np.sort(np.subtract.outer(a, b).ravel())
    k = data.draw(st.integers(min_value=0, max_value=listed.size - 1))
    assert kth_pairwise_difference(a, b, k, work_limit=limit) == listed[k]


@settings(max_examples=150, deadline=None)
@given(samples, work_limits)
def test_median_walsh_average_equals_listing(x: list[float], limit: int) -> None:
    """The selected pseudo-median equals np.median of all listed Walsh averages exactly."""
    a = np.array(x)
    brute = float(np.median(_walsh(a)))  # Hodges & Lehmann (1963), by definition
    assert median_walsh_average(a, work_limit=limit) == brute
    assert median_walsh_average(a) == brute


@settings(max_examples=100, deadline=None)
@given(samples, work_limits, st.data())
def test_kth_walsh_average_equals_listing(x: list[float], limit: int, data: st.DataObject) -> None:
    """Any order statistic of the Walsh averages equals the sorted listing's entry exactly."""
    a = np.sort(np.array(x))
    listed = np.sort(_walsh(a))
    k = data.draw(st.integers(min_value=0, max_value=listed.size - 1))
    assert kth_walsh_average(a, k, work_limit=limit) == listed[k]


def test_seeded_medium_groups_equal_listing() -> None:
    """On 3,000-value groups (default work limit, so the selection loop runs) the results equal listing."""
    rng = np.random.default_rng(20261202)
    a = np.round(rng.gamma(2.0, 10.0, 3000), 1)  # invented, tied like sheet data
    b = np.concatenate([rng.standard_cauchy(1500), np.round(rng.normal(20.0, 5.0, 1499))])  # invented
    assert median_pairwise_difference(a, b) == float(np.median(np.subtract.outer(a, b)))
    assert median_walsh_average(b) == float(np.median(_walsh(b)))


def test_rank_outside_range_is_refused() -> None:
    """Asking for an order statistic beyond the number of differences is refused in one line."""
    with pytest.raises(OptionError, match="outside 0 to 5"):
        kth_pairwise_difference(np.array([1.0, 2.0]), np.array([0.0, 1.0, 2.0]), 6)


def test_mann_whitney_on_200000_per_group() -> None:
    """Two groups of 200,000, one an exact copy of the other shifted by 3, give shift 3.0 and scipy's W and p."""
    rng = np.random.default_rng(7)
    x = rng.integers(0, 4000, 200_000) / 4.0  # invented; quarters keep every difference exact
    y = x - 3.0
    result = mann_whitney_u(x, y, labels=("x", "y"))
    # {x_i - y_j} = 3 + {x_i - x_j}, and {x_i - x_j} is symmetric about 0, so its median is exactly 3.
    assert result.estimate.value == 3.0
    assert result.estimate.ci_low < 3.0 < result.estimate.ci_high
    # scipy 1.17 stats.mannwhitneyu(method="asymptotic"), tie and continuity corrected like R.
    check = stats.mannwhitneyu(x, y, method="asymptotic", use_continuity=True)
    assert result.statistic == float(check.statistic)
    assert result.p_value == pytest.approx(check.pvalue, rel=1e-9)


def test_signed_rank_on_200000_values() -> None:
    """200,000 values symmetric about 12.5 give pseudo-median 12.5 exactly and scipy's V and p."""
    rng = np.random.default_rng(11)
    half = rng.integers(1, 2000, 100_000) / 4.0  # invented; quarters keep every average exact
    values = np.concatenate([12.5 + half, 12.5 - half])
    result = wilcoxon_signed_rank(values, mu=10.0)
    # The Walsh averages of values symmetric about c are symmetric about c, so their median is c.
    assert result.estimate.value == 12.5
    assert result.estimate.ci_low < 12.5 < result.estimate.ci_high
    # scipy 1.17 stats.wilcoxon(method="approx", correction=True): V and p with R's conventions.
    check = stats.wilcoxon(values - 10.0, method="approx", correction=True)
    v_less = result.extra["n_ranked"] * (result.extra["n_ranked"] + 1) / 2 - result.statistic
    assert float(check.statistic) == min(result.statistic, v_less)
    assert result.p_value == pytest.approx(check.pvalue, rel=1e-9)
