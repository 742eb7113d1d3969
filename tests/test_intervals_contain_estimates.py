"""Every estimate and effect lies inside its own interval, for every method, on random data."""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from statmargin.errors import NotEnoughDataError
from statmargin.results import Followup, Result
from statmargin.stats import (
    categorical,
    correlation,
    followup,
    multigroup,
    onesample,
    paired,
    relative,
    signtest,
    twogroup,
)

# Values on a grid of 0.5 so ties happen, as in real sheets.
values = st.lists(st.integers(-40, 40).map(lambda v: v / 2), min_size=2, max_size=14)
counts = st.integers(0, 40)


def _inside(item: Any, context: str) -> None:
    """value within [ci_low, ci_high] (None bounds are open), up to rounding."""
    if item is None or item.value is None:
        return
    low = -math.inf if item.ci_low is None else item.ci_low
    high = math.inf if item.ci_high is None else item.ci_high
    slack = 1e-9 * max(1.0, abs(item.value))
    assert low - slack <= item.value <= high + slack, f"{context}: {item}"
    assert low <= high, f"{context}: {item}"


def _check(result: Result | list[Followup], context: str) -> None:
    if isinstance(result, list):
        for pair in result:
            _inside(pair.estimate, f"{context} {pair.levels}")
        return
    _inside(result.estimate, f"{context} estimate")
    _inside(result.effect, f"{context} effect")


def _run(function: Callable[[], Result | list[Followup]], context: str) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            result = function()
        except NotEnoughDataError:
            return
    _check(result, context)


SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@SETTINGS
@given(values, st.sampled_from(["two-sided", "greater", "less"]), st.integers(-10, 10).map(lambda v: v / 2))
def test_one_sample_methods(x: list[float], alternative: str, mu: float) -> None:
    """One-sample t, signed-rank and sign test keep their estimate and effect inside the intervals."""
    for name, function in (("t", onesample.one_sample_t), ("signed-rank", onesample.wilcoxon_signed_rank),
                           ("sign", signtest.sign_test)):
        _run(lambda f=function: f(x, mu=mu, alternative=alternative), name)


@SETTINGS
@given(values, values, st.sampled_from(["two-sided", "greater", "less"]))
def test_paired_methods(a: list[float], b: list[float], alternative: str) -> None:
    """Paired t, signed-rank and sign test keep their estimate and effect inside the intervals."""
    size = min(len(a), len(b))
    x, y = a[:size], b[:size]
    for name, function in (("paired t", paired.paired_t), ("paired signed-rank", paired.wilcoxon_paired),
                           ("paired sign", signtest.sign_test_paired)):
        _run(lambda f=function: f(x, y, alternative=alternative), name)


@SETTINGS
@given(values, values, st.sampled_from(["two-sided", "greater", "less"]))
def test_two_group_methods(x: list[float], y: list[float], alternative: str) -> None:
    """Welch, Student, Mann-Whitney, Brunner-Munzel, Pearson and Spearman keep estimates inside."""
    for name, function in (("welch", twogroup.welch_t), ("student", twogroup.student_t),
                           ("mann-whitney", twogroup.mann_whitney_u), ("brunner-munzel", relative.brunner_munzel)):
        _run(lambda f=function: f(x, y, alternative=alternative), name)
    _run(lambda: relative.brunner_munzel(x, y, alternative=alternative, p_method="asymptotic"), "bm asymptotic")
    size = min(len(x), len(y))
    for name, function in (("pearson", correlation.pearson_r), ("spearman", correlation.spearman_rho)):
        _run(lambda f=function: f(x[:size], y[:size], alternative=alternative), name)


@SETTINGS
@given(st.lists(values, min_size=3, max_size=5))
def test_multi_group_methods_and_followups(raw: list[list[float]]) -> None:
    """ANOVA, Welch, Alexander-Govern, Kruskal-Wallis, the rank ANOVA-type test and follow-ups."""
    groups = {f"g{i}": np.array(v) for i, v in enumerate(raw)}
    for name, function in (("anova", multigroup.one_way_anova), ("welch anova", multigroup.welch_anova),
                           ("alexander-govern", multigroup.alexander_govern),
                           ("kruskal", multigroup.kruskal_wallis), ("rank ats", relative.rank_anova_type)):
        _run(lambda f=function: f(groups), name)
    for name, function in (("tukey", followup.tukey_hsd), ("games-howell", followup.games_howell),
                           ("dunn", followup.dunn), ("pairwise bm", followup.pairwise_brunner_munzel)):
        _run(lambda f=function: f(groups), name)


@SETTINGS
@given(st.lists(st.lists(counts, min_size=2, max_size=4), min_size=2, max_size=4))
def test_count_methods(rows: list[list[int]]) -> None:
    """Goodness of fit, independence, Fisher, McNemar and the binomial test keep effects inside."""
    width = min(len(r) for r in rows)
    table = np.array([r[:width] for r in rows])
    row_labels = [f"r{i}" for i in range(table.shape[0])]
    col_labels = [f"c{j}" for j in range(width)]
    _run(lambda: categorical.chi_square_independence(table, row_labels, col_labels, monte_carlo=False), "chi2")
    first = {label: int(v) for label, v in zip(col_labels, table[0], strict=True)}
    shares = {label: 1.0 / width for label in col_labels}
    _run(lambda: categorical.chi_square_goodness_of_fit(first, shares, monte_carlo=False), "gof")
    two = table[:2, :2]
    _run(lambda: categorical.fisher_exact(two, ["a", "b"], ["x", "y"]), "fisher")
    _run(lambda: categorical.mcnemar(two, ["x", "y"]), "mcnemar")
    _run(lambda: categorical.binomial_exact(int(two[0, 0]), int(two[0].sum()), share=0.3, label="x"), "binomial")


@pytest.mark.parametrize("seed", range(5))
def test_near_null_tables_keep_v_inside(seed: int) -> None:
    """Tables with X2 below its df (where the plug-in V escaped its interval) keep V inside."""
    rng = np.random.default_rng(seed)
    table = rng.multinomial(300, [1 / 20] * 20).reshape(5, 4)
    result = categorical.chi_square_independence(table, list("abcde"), list("wxyz"), monte_carlo=False)
    _inside(result.effect, "V")


def test_a_statistic_of_floating_point_noise_size_keeps_the_effect_inside_its_interval() -> None:
    """Constant groups but one (a found case): the ANOVA-type statistic is about 1.7e33, and epsilon-squared stays capped and inside."""
    raw = [[0.0, 0.0], [0.0, 0.0], [0.0, 0.0], [0.5, 0.5], [0.0, 0.0, 0.0]]
    result = relative.rank_anova_type({f"g{i}": np.array(v) for i, v in enumerate(raw)})
    effect = result.effect
    assert effect.ci_low <= effect.value <= effect.ci_high <= (25 - 1) / 25  # the largest share for 5 groups
