"""Frequency weights (a count column) for the tests the choice rule adds: as if each row were repeated.

Brunner-Munzel, the ANOVA-type rank test, the sign test (one sample and pairs),
Alexander-Govern and the pairwise Brunner-Munzel follow-ups of rows that stand for
``count`` identical records. Each returns the ``Result`` of the matching unweighted
method on the repeated records. Placements (records of another group below a
value, ties one half) and the median come from cumulative counts, so memory is
linear in the rows. When every count is 1 the unweighted method runs directly; when
a p-value comes from permutations (small groups, at most
``relative.PERMUTATION_MAX_TOTAL`` records in all) the few records are repeated
and the unweighted method runs on them, so the seeded draws are the same.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from statmargin.errors import NotEnoughDataError
from statmargin.results import Followup, Result
from statmargin.stats import _common as common
from statmargin.stats import followup, multigroup, relative, signtest
from statmargin.stats.weighted import (
    Weighted,
    _all_ones,
    _check_two,
    _groups,
    _paired_rows,
    _two,
    _with_rows,
    clean_weighted,
    weighted_describe,
)
from statmargin.stats.weighted_followup import _clean_groups
from statmargin.stats.weighted_select import median_pairwise_difference_weighted
from statmargin.vocabulary import AdjustMethod, PMethod
from statmargin.vocabulary.codes import Skip, coded


def _repeated(values: np.ndarray, counts: np.ndarray) -> np.ndarray:
    return np.repeat(values, counts)


def brunner_munzel(x: Weighted, y: Weighted, *, labels: tuple[str, str] = ("A", "B"),
                   alternative: str = "two-sided", confidence: float = 0.95, p_method: str = "auto",
                   intervals: bool = True) -> Result:
    """``relative.brunner_munzel`` of the repeated records; ``x`` and ``y`` are (values, counts).

    Examples
    --------
    >>> import math
    >>> x, cx = np.array([1.0, 2.0, 4.0, 7.0]), np.array([40, 25, 10, 5])
    >>> y, cy = np.array([2.0, 3.0, 5.0]), np.array([30, 30, 20])
    >>> counted = brunner_munzel((x, cx), (y, cy))
    >>> plain = relative.brunner_munzel(np.repeat(x, cx), np.repeat(y, cy))
    >>> math.isclose(counted.p_value, plain.p_value), math.isclose(counted.estimate.ci_low, plain.estimate.ci_low)
    (True, True)
    """
    common.check_options(alternative, confidence)
    relative._check_p_method(p_method)
    a, ca, b, cb, dropped, no_count, first, second = _two(x, y, labels)
    _check_two(a, ca, b, cb, first, second)
    sizes = [int(ca.sum()), int(cb.sum())]
    if _all_ones(ca, cb) or relative.use_permutation(p_method, sizes):
        plain = relative.brunner_munzel(_repeated(a, ca), _repeated(b, cb), labels=(first, second),
                                        alternative=alternative, confidence=confidence, p_method=p_method,
                                        intervals=intervals)
        return _with_rows(plain, dropped, no_count)
    ps, se, t, df = relative.two_sample_t_counted(a, ca, b, cb)
    test = relative.BrunnerMunzel(ps, se, t, df, relative.asymptotic_p(t, df, alternative), PMethod.ASYMPTOTIC,
                                  None)
    if not intervals:
        bare = relative.result_without_intervals(test, sum(sizes), alternative, confidence)
        return _with_rows(bare, dropped, no_count)
    shift = median_pairwise_difference_weighted(a, ca, b, cb)
    result = relative.two_group_result(test, a, b, shift, (first, second), alternative, confidence, ca, cb)
    result.groups = [weighted_describe(first, a, ca), weighted_describe(second, b, cb)]
    return _with_rows(result, dropped, no_count)


def rank_anova_type(groups: Mapping[str, Weighted], *, alternative: str = "two-sided", confidence: float = 0.95,
                    p_method: str = "auto") -> Result:
    """``relative.rank_anova_type`` of the repeated records; each group is (values, counts).

    Examples
    --------
    >>> import math
    >>> rng = np.random.default_rng(6)
    >>> groups = {g: (rng.integers(1, 9, 12).astype(float), rng.integers(1, 30, 12)) for g in "abc"}
    >>> counted = rank_anova_type(groups)
    >>> plain = relative.rank_anova_type({g: np.repeat(v, c) for g, (v, c) in groups.items()})
    >>> math.isclose(counted.statistic, plain.statistic), math.isclose(counted.p_value, plain.p_value)
    (True, True)
    """
    relative._check_p_method(p_method)
    cleaned, dropped, no_count, notes = _groups(groups, alternative, confidence)
    sizes = [int(c.sum()) for _, c in cleaned.values()]
    if all(_all_ones(c) for _, c in cleaned.values()) or relative.use_permutation(p_method, sizes):
        plain = relative.rank_anova_type({label: _repeated(v, c) for label, (v, c) in cleaned.items()},
                                         alternative=alternative, confidence=confidence, p_method=p_method)
        return _with_rows(plain, dropped, no_count)
    records = [common.SortedRecords(v, c) for v, c in cleaned.values()]
    placements = [np.stack([other.below(v) for other in records])[None, :, :] for v, _ in cleaned.values()]
    rel = relative.relative_effects(placements, sizes, [c.astype(float) for _, c in cleaned.values()])
    ats = relative.anova_type(rel, sizes)
    p_value = relative.anova_type_p(float(ats.statistic[0]), float(ats.df1[0]), float(ats.df2[0]))
    summaries = [weighted_describe(label, v, c) for label, (v, c) in cleaned.items()]
    result = relative.anova_type_result(rel, ats, p_value, PMethod.ASYMPTOTIC, summaries, confidence, cleaned)
    result.notes = notes
    return _with_rows(result, dropped, no_count)


def sign_test(x: Any, counts: Any, *, mu: float = 0.0, alternative: str = "two-sided",
              confidence: float = 0.95) -> Result:
    """``signtest.sign_test`` of the repeated records.

    Examples
    --------
    >>> x, c = np.array([12.0, 25.0, 9.0]), np.array([3, 1, 4])
    >>> sign_test(x, c, mu=20).p_value == signtest.sign_test(np.repeat(x, c), mu=20).p_value
    True
    """
    common.check_options(alternative, confidence)
    v, c, dropped, no_count = clean_weighted(x, counts)
    if _all_ones(c):
        return _with_rows(signtest.sign_test(v, mu=mu, alternative=alternative, confidence=confidence), dropped,
                          no_count)
    if not c.size:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_VALUES, what="the outcome", n=0, minimum=1))
    result = signtest.sign_result(v, float(mu), alternative, confidence, "the outcome", c)
    result.groups = [weighted_describe("all", v, c)]
    result.against = float(mu)
    return _with_rows(result, dropped, no_count)


def sign_test_paired(x1: Any, x2: Any, counts: Any, *, labels: tuple[str, str] = ("first", "second"),
                     alternative: str = "two-sided", confidence: float = 0.95) -> Result:
    """``signtest.sign_test_paired`` of the repeated pairs."""
    common.check_options(alternative, confidence)
    a, b, c, dropped, no_count, first, second = _paired_rows(x1, x2, counts, labels)
    if _all_ones(c):
        plain = signtest.sign_test_paired(a, b, labels=(first, second), alternative=alternative,
                                          confidence=confidence)
        return _with_rows(plain, dropped, no_count)
    result = signtest.paired_sign_result(a, b, (first, second), alternative, confidence, c)
    result.groups = [weighted_describe(first, a, c), weighted_describe(second, b, c),
                     weighted_describe(f"{first} - {second}", a - b, c)]
    return _with_rows(result, dropped, no_count)


def alexander_govern(groups: Mapping[str, Weighted], *, alternative: str = "two-sided",
                     confidence: float = 0.95, p_method: str = "asymptotic") -> Result:
    """``multigroup.alexander_govern`` of the repeated records; each group is (values, counts).

    Examples
    --------
    >>> import math
    >>> from scipy import stats
    >>> rng = np.random.default_rng(2)
    >>> groups = {g: (rng.normal(size=8), rng.integers(1, 6, 8)) for g in "abc"}
    >>> check = stats.alexandergovern(*[np.repeat(v, c) for v, c in groups.values()])
    >>> math.isclose(alexander_govern(groups).p_value, check.pvalue)
    True
    """
    cleaned, dropped, no_count, notes = _groups(groups, alternative, confidence)
    sizes = [int(np.sum(c)) for _, c in cleaned.values()]
    if all(_all_ones(c) for _, c in cleaned.values()) or relative.use_permutation(p_method, sizes):
        # Permutations (at most 2000 records) shuffle records, so the few records are repeated.
        plain = multigroup.alexander_govern({label: _repeated(v, c) for label, (v, c) in cleaned.items()},
                                            alternative=alternative, confidence=confidence, p_method=p_method)
        return _with_rows(plain, dropped, no_count)
    summaries = [weighted_describe(label, v, c) for label, (v, c) in cleaned.items()]
    for summary in summaries:
        if summary["sd"] == 0.0:
            raise NotEnoughDataError(coded(Skip.GROUP_CONSTANT_WELCH, label=summary["label"], value=summary["mean"]))
    a, p = multigroup.alexander_govern_of_summaries(summaries)
    result = multigroup.alexander_govern_result(summaries, a, p, confidence)
    result.notes = notes
    return _with_rows(result, dropped, no_count)


def pairwise_brunner_munzel(groups: Mapping[str, Weighted], *, adjust: AdjustMethod | str = "holm",
                            alpha: float = followup.DEFAULT_ALPHA, confidence: float = 0.95,
                            p_method: str = "auto") -> list[Followup]:
    """``followup.pairwise_brunner_munzel`` of the repeated records; each group is (values, counts)."""
    items = [(label, (v, c)) for label, v, c in _clean_groups(groups)]

    def run(xa: Weighted, xb: Weighted, labels: tuple[str, str]) -> _CountedPair:
        return _CountedPair(xa, xb, labels, p_method)

    return followup.pairwise_of(run, items, adjust=adjust, alpha=alpha, confidence=confidence)


@dataclass(frozen=True)
class _CountedPair:
    """A pair of counted groups; its test is redone per level (few distinct values, so cheap)."""

    x: Weighted
    y: Weighted
    labels: tuple[str, str]
    p_method: str

    def result(self, confidence: float, intervals: bool = True) -> Result:
        return brunner_munzel(self.x, self.y, labels=self.labels, confidence=confidence, p_method=self.p_method,
                              intervals=intervals)
