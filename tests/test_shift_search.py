"""Shift-interval bounds found at the exact step, against a search over all pairwise differences.

References: the bounds are defined by inverting the Brunner-Munzel test over shifts
(Brunner & Munzel 2000, doi:10.1002/(SICI)1521-4036(200001)42:1<17::AID-BIMJ17>3.0.CO;2-U);
the brute-force reference lists every difference a_i - b_j, as R's ``wilcox.test``
interval does for the Mann-Whitney statistic, and evaluates the statistic between each
pair of neighbouring differences. Data are invented and seeded.
"""

from __future__ import annotations

import numpy as np
import pytest

from statmargin.stats import _common as common
from statmargin.stats import followup, relative, shift_search


def _statistic(a: np.ndarray, b: np.ndarray):  # type: ignore[no-untyped-def]
    ra, rb = common.SortedRecords(a), common.SortedRecords(b)
    return lambda d: relative._shift_statistic(ra, rb, d)


def _listed_crossings(a: np.ndarray, b: np.ndarray, target: float) -> list[float]:
    """Every difference where the statistic minus target goes from above 0 to 0 or below (brute force)."""
    stat = _statistic(a, b)
    listed = np.unique(np.subtract.outer(np.unique(a), np.unique(b)).ravel())
    probes = np.concatenate(([listed[0] - 1.0], (listed[:-1] + listed[1:]) / 2.0, [listed[-1] + 1.0]))
    above = [stat(float(d)) - target > 0 for d in probes]
    return [float(listed[t]) for t in range(listed.size) if above[t] and not above[t + 1]]


def _data(seed: int, kind: str, m: int, n: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    if kind == "continuous":
        return rng.gamma(2.0, 3.0, m) + 0.5, rng.gamma(2.0, 3.5, n)
    if kind == "tenths":
        return np.round(rng.normal(1.0, 2.0, m), 1), np.round(rng.normal(0.0, 2.5, n), 1)
    return rng.integers(0, 7, m).astype(float), rng.integers(0, 6, n).astype(float)


@pytest.mark.parametrize("kind", ["continuous", "tenths", "whole"])
@pytest.mark.parametrize("seed", range(8))
@pytest.mark.parametrize("confidence", [0.8, 0.95, 0.99])
def test_bounds_are_the_listed_crossings(kind: str, seed: int, confidence: float) -> None:
    """Each bound is a difference where the statistic crosses its critical value (listing all differences)."""
    a, b = _data(seed, kind, 12 + 3 * seed, 30 - 2 * seed)
    critical = relative._critical_values("two-sided", confidence, 25.0, None)
    shift = common.median_pairwise_difference(a, b)
    low, high = relative._shift_interval(a, b, shift, critical)
    lows = _listed_crossings(a, b, critical.lower_bound)
    highs = _listed_crossings(a, b, -critical.upper_bound)
    if lows:
        assert low in lows or low == shift
    if highs:
        assert high in highs or high == shift
    if len(lows) == 1 and lows[0] <= shift:  # one crossing (monotone statistic): exactly it
        assert low == lows[0]
    if len(highs) == 1 and highs[0] >= shift:
        assert high == highs[0]


def test_step_crossing_counts_differences_above() -> None:
    """On the count of differences above d the crossing is the listed order statistic (brute force)."""
    rng = np.random.default_rng(11)
    a, b = np.sort(rng.normal(size=300)), np.sort(rng.normal(size=250))
    listed = np.sort(np.subtract.outer(a, b).ravel())
    for k in (1, 500, 37_000, 74_999):
        def f(d: float, k: int = k) -> float:
            return float(np.sum(listed > d)) - (listed.size - k) + 0.5

        found = shift_search.step_crossing(f, a, b, float(listed[0]) - 1.0, float(listed[-1]) + 1.0,
                                           f(float(listed[0]) - 1.0), f(float(listed[-1]) + 1.0))
        assert found == listed[k]  # f > 0 while at most k differences lie at or below d


def test_large_groups_agree_with_tolerance_search() -> None:
    """On 20,000 continuous values per group the bounds agree with a bracketing root search to 1e-7 of the range.

    The earlier implementation (SciPy's ``brentq`` to 1e-7 of the range of differences,
    then the nearest difference) is the reference for this tolerance.
    """
    from scipy import optimize

    rng = np.random.default_rng(5)
    a, b = rng.gamma(2.0, 12.0, 20_000), rng.gamma(2.0, 12.5, 20_000)
    stat = _statistic(a, b)
    shift = common.median_pairwise_difference(a, b)
    critical = relative._critical_values("two-sided", 0.99, 40_000.0, None)
    low, high = relative._shift_interval(a, b, shift, critical)
    span = float(np.ptp(a) + np.ptp(b))
    ref_low = optimize.brentq(lambda d: stat(d) - critical.lower_bound, shift - span, shift, xtol=1e-9 * span)
    ref_high = optimize.brentq(lambda d: stat(d) + critical.upper_bound, shift, shift + span, xtol=1e-9 * span)
    assert abs(low - ref_low) < 1e-7 * span and abs(high - ref_high) < 1e-7 * span
    assert stat(low - 1e-9 * span) > critical.lower_bound >= stat(low + 1e-9 * span)


def test_pairwise_intervals_cover_true_shifts() -> None:
    """Holm-matched pairwise shift intervals cover all true shifts in at least ~95% of seeded samples.

    Three groups from one skewed (gamma) shape moved by known amounts, so every
    pairwise median difference equals the difference in moves; 300 samples give a
    binomial standard error near 1.3 points, so 0.92 leaves over two of them.
    """
    rng = np.random.default_rng(20261205)
    moves = {"north": 0.0, "centre": 1.0, "south": 2.5}
    covered = 0
    reps = 300
    for _ in range(reps):
        groups = {g: rng.gamma(2.0, 2.0, 40) + move for g, move in moves.items()}
        pairs = followup.pairwise_brunner_munzel(groups, adjust="holm", p_method="asymptotic")
        covered += all(
            pair.estimate.ci_low <= moves[pair.levels[0]] - moves[pair.levels[1]] <= pair.estimate.ci_high
            for pair in pairs
        )
    assert covered / reps >= 0.92


@pytest.mark.parametrize("seed", range(5))
def test_shift_estimate_from_counts_equals_listing(seed: int) -> None:
    """With many ties the shift from distinct values and counts is np.median of all listed differences."""
    rng = np.random.default_rng(seed)
    a, b = np.round(rng.gamma(2.0, 3.0, 400), 0), np.round(rng.gamma(2.0, 3.4, 301), 0)
    assert relative.shift_estimate(a, b) == float(np.median(np.subtract.outer(a, b)))


def test_constant_group_without_df_gives_the_estimate() -> None:
    """A constant group leaves the Brunner-Munzel df undefined; the shift interval is then the estimate (as before)."""
    x = [-13.5, -13.5, -13.5]
    y = [16.0, 16.5, 3.0, 2.5, 8.5, 3.0, 10.0, -12.5, 11.5, 1.0, 10.0, 1.0]
    result = relative.brunner_munzel(x, y, p_method="asymptotic")
    assert result.estimate is not None
    assert result.estimate.ci_low == result.estimate.ci_high == result.estimate.value == -19.25
