"""Brunner-Munzel, the ANOVA-type rank test and Alexander-Govern against SciPy and their definitions."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from reference_cases import cases_by_design, load_case
from statmargin.stats import multigroup, relative
from statmargin.stats.followup import pairwise_brunner_munzel

# Brunner & Munzel (2000) pain scores, as in SciPy's brunnermunzel documentation.
PAIN_X = [1, 2, 1, 1, 1, 1, 1, 1, 1, 1, 2, 4, 1, 1]
PAIN_Y = [3, 3, 4, 3, 1, 2, 3, 1, 1, 5, 4]


def _two_groups(case_id: str) -> tuple[np.ndarray, np.ndarray]:
    case, frame = load_case(case_id)
    outcome, group = case["variables"]["outcome"], case["variables"]["group"]
    first, second = case["group_levels"]
    return (frame.loc[frame[group] == first, outcome].to_numpy(float),
            frame.loc[frame[group] == second, outcome].to_numpy(float))


@pytest.mark.parametrize("case_id", ["sleep_extra_by_group", "toothgrowth_len_by_supp"])
def test_brunner_munzel_matches_scipy_on_reference_data(case_id: str) -> None:
    """t (sign flipped), df and p equal scipy.stats.brunnermunzel on R's datasets."""
    x, y = _two_groups(case_id)
    result = relative.brunner_munzel(x, y, p_method="asymptotic")
    check = stats.brunnermunzel(x, y)
    assert result.statistic == pytest.approx(-check.statistic, rel=1e-12)
    assert result.p_value == pytest.approx(check.pvalue, rel=1e-10)


def test_brunner_munzel_pain_scores() -> None:
    """Brunner & Munzel's pain scores: SciPy's t = 3.1375, p = 0.0058; P(X > Y) by counting pairs."""
    result = relative.brunner_munzel(PAIN_X, PAIN_Y, p_method="asymptotic")
    assert result.p_value == pytest.approx(stats.brunnermunzel(PAIN_X, PAIN_Y).pvalue, rel=1e-12)
    x, y = np.array(PAIN_X), np.array(PAIN_Y)
    pairs = np.subtract.outer(x, y)
    assert result.effect.value == pytest.approx(np.mean(pairs > 0) + 0.5 * np.mean(pairs == 0), rel=1e-12)
    assert result.estimate.value == float(np.median(pairs))  # Hodges-Lehmann (1963), brute force


@pytest.mark.parametrize("p_method", ["asymptotic", "permutation"])
@pytest.mark.parametrize("seed", range(8))
def test_brunner_munzel_intervals_agree_with_p(p_method: str, seed: int) -> None:
    """Both intervals exclude their null value (1/2 and 0) exactly when p < 0.05."""
    rng = np.random.default_rng(seed)
    x = np.round(rng.normal(0.4 * (seed % 3), 1 + seed % 2, 9 + seed), 1)
    y = np.round(rng.normal(0.0, 1.0, 12), 1)
    result = relative.brunner_munzel(x, y, p_method=p_method)
    significant = result.p_value < 0.05
    assert (result.effect.ci_low > 0.5 or result.effect.ci_high < 0.5) == significant
    assert (result.estimate.ci_low > 0 or result.estimate.ci_high < 0) == significant
    assert result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    assert result.estimate.ci_low <= result.estimate.value <= result.estimate.ci_high


def test_permutation_p_is_exact_for_separated_groups() -> None:
    """Groups that do not overlap: the permutation p is near the exact 2 / C(10, 5) = 0.0079."""
    # Exact: only the two arrangements that split the values the same way are as extreme.
    result = relative.brunner_munzel([1.0, 2, 3, 4, 5], [6.0, 7, 8, 9, 10], p_method="permutation")
    exact = 2 / math.comb(10, 5)
    se = math.sqrt(exact * (1 - exact) / relative.PERMUTATIONS)
    assert abs(result.p_value - exact) < 4 * se + 1 / relative.PERMUTATIONS
    assert result.effect.value == 0.0


def test_rank_anova_type_with_two_groups_is_brunner_munzel() -> None:
    """For two groups the ANOVA-type F is the square of the Brunner-Munzel t (SciPy), same p."""
    x, y = _two_groups("sleep_extra_by_group")
    result = relative.rank_anova_type({"1": x, "2": y}, p_method="asymptotic")
    check = stats.brunnermunzel(x, y)
    assert result.statistic == pytest.approx(check.statistic**2, rel=1e-10)
    assert result.p_value == pytest.approx(check.pvalue, rel=1e-9)


@pytest.mark.parametrize("case_id", cases_by_design("multi_group_continuous"))
def test_relative_effects_follow_their_definition(case_id: str) -> None:
    """p_i = (1/k) sum_j [P(X_j < X_i) + P(X_j = X_i)/2], counted over all pairs (brute force)."""
    case, frame = load_case(case_id)
    outcome, group = case["variables"]["outcome"], case["variables"]["group"]
    groups = {lev: frame.loc[frame[group] == lev, outcome].dropna().to_numpy(float) for lev in case["group_levels"]}
    result = relative.rank_anova_type(groups, p_method="asymptotic")
    arrays = list(groups.values())
    for summary, xi in zip(result.groups, arrays, strict=True):
        wins = [np.mean(np.subtract.outer(xi, xj) > 0) + 0.5 * np.mean(np.subtract.outer(xi, xj) == 0) for xj in arrays]
        assert summary["relative_effect"] == pytest.approx(np.mean(wins), rel=1e-12)
    assert result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    assert 0.0 <= result.p_value <= 1.0


@pytest.mark.parametrize("case_id", cases_by_design("multi_group_continuous"))
def test_alexander_govern_matches_scipy(case_id: str) -> None:
    """A and p equal scipy.stats.alexandergovern on R's datasets; the effect lies in its interval."""
    case, frame = load_case(case_id)
    outcome, group = case["variables"]["outcome"], case["variables"]["group"]
    groups = {lev: frame.loc[frame[group] == lev, outcome].dropna().to_numpy(float) for lev in case["group_levels"]}
    result = multigroup.alexander_govern(groups)
    check = stats.alexandergovern(*groups.values())
    assert result.statistic == pytest.approx(check.statistic, rel=1e-12)
    assert result.p_value == pytest.approx(check.pvalue, rel=1e-10)
    assert result.effect.ci_low <= result.effect.value <= result.effect.ci_high


def test_pairwise_brunner_munzel_intervals_agree_with_adjusted_p() -> None:
    """Each pair's interval excludes 0 exactly when its Holm-adjusted p is below 0.05."""
    rng = np.random.default_rng(4)
    groups = {f"g{i}": rng.normal(0.5 * i, 1 + i, 25) for i in range(4)}
    for pair in pairwise_brunner_munzel(groups, adjust="holm", p_method="asymptotic"):
        assert (pair.estimate.ci_low > 0 or pair.estimate.ci_high < 0) == (pair.p_adjusted < 0.05)
