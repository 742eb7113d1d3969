"""Follow-up comparisons after a count-weighted test of three or more groups.

Each function returns what the matching function of ``statmargin.stats.followup``
returns for the repeated rows (every row repeated ``count`` times), computed from
the rows and their counts: Tukey and Games-Howell from weighted means and sums of
squares, Dunn and the pairwise Mann-Whitney tests from mid-ranks of the counted
values, Hodges-Lehmann shifts by weighted selection. Groups are given as
``{label: (values, counts)}``; when every count is 1 the unweighted function runs.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping

import numpy as np

from statmargin.errors import NotEnoughDataError
from statmargin.results import Followup
from statmargin.stats import _common as common
from statmargin.stats import followup, twogroup
from statmargin.stats.weighted import (
    Weighted,
    clean_weighted,
    midranks,
    weighted_mean,
    weighted_sum_of_squares,
)
from statmargin.stats.weighted_select import median_pairwise_difference_weighted
from statmargin.vocabulary import AdjustMethod, EstimateKind, Test
from statmargin.vocabulary.codes import Count, Skip, coded

Counted = tuple[str, np.ndarray, np.ndarray]  # label, values, counts


def _clean_groups(groups: Mapping[str, Weighted], minimum: int = 2) -> list[Counted]:
    """As ``followup._clean_groups``: finite values with counts, ``minimum`` records per group, two groups."""
    cleaned = []
    for label, (values, counts) in groups.items():
        v, c, _, _ = clean_weighted(values, counts, what=f"group '{label}'")
        if int(c.sum()) < minimum:
            raise NotEnoughDataError(
                coded(Skip.PAIRWISE_TOO_FEW, label=str(label), n=Count(int(c.sum())), minimum=minimum)
            )
        cleaned.append((str(label), v, c))
    if len(cleaned) < 2:
        raise NotEnoughDataError(coded(Skip.PAIRWISE_ONE_GROUP))
    return cleaned


def _plain(items: list[Counted]) -> dict[str, np.ndarray] | None:
    """The groups' values when every count is 1, else None."""
    if all(bool(np.all(c == 1)) for _, _, c in items):
        return {label: v for label, v, _ in items}
    return None


def _summaries(items: list[Counted]) -> list[followup.Summary]:
    out = []
    for label, v, c in items:
        mean = weighted_mean(v, c)
        out.append((label, mean, weighted_sum_of_squares(v, c, mean), float(c.sum())))
    return out


def _of_means(
    of_values: Callable[..., list[Followup]],
    of_summaries: Callable[..., list[Followup]],
    groups: Mapping[str, Weighted],
    confidence: float,
    alpha: float,
) -> list[Followup]:
    """A comparison of means on the plain values when every count is 1, else on the counted summaries."""
    confidence = common.check_confidence(confidence)
    items = _clean_groups(groups)
    plain = _plain(items)
    if plain is not None:
        return of_values(plain, confidence=confidence, alpha=alpha)
    return of_summaries(_summaries(items), confidence=confidence, alpha=alpha)


def tukey_hsd(groups: Mapping[str, Weighted], *, confidence: float = 0.95,
              alpha: float = followup.DEFAULT_ALPHA) -> list[Followup]:
    """``followup.tukey_hsd`` of the repeated rows.

    Examples
    --------
    >>> from statmargin.stats import followup
    >>> groups = {"north": (np.array([4.2, 5.1, 3.9]), np.array([2, 1, 2])),
    ...           "centre": (np.array([5.9, 6.4]), np.array([3, 2])),
    ...           "south": (np.array([4.9, 5.6, 6.0]), np.array([1, 2, 2]))}
    >>> mine = tukey_hsd(groups)[0]
    >>> plain = followup.tukey_hsd({k: np.repeat(v, c) for k, (v, c) in groups.items()})[0]
    >>> math.isclose(mine.p_adjusted, plain.p_adjusted, rel_tol=1e-12)
    True
    """
    return _of_means(followup.tukey_hsd, followup.tukey_hsd_of_summaries, groups, confidence, alpha)


def games_howell(groups: Mapping[str, Weighted], *, confidence: float = 0.95,
                 alpha: float = followup.DEFAULT_ALPHA) -> list[Followup]:
    """``followup.games_howell`` of the repeated rows."""
    return _of_means(followup.games_howell, followup.games_howell_of_summaries, groups, confidence, alpha)


def dunn(groups: Mapping[str, Weighted], *, adjust: AdjustMethod | str = "holm",
         alpha: float = followup.DEFAULT_ALPHA, confidence: float = 0.95) -> list[Followup]:
    """``followup.dunn`` of the repeated rows (mean mid-ranks of the counted values)."""
    confidence = common.check_confidence(confidence)
    items = _clean_groups(groups)
    plain = _plain(items)
    if plain is not None:
        return followup.dunn(plain, adjust=adjust, alpha=alpha, confidence=confidence)
    ranks, ties = midranks(np.concatenate([v for _, v, _ in items]), np.concatenate([c for _, _, c in items]))
    mean_ranks, start = [], 0
    for label, v, c in items:
        n = float(c.sum())
        mean_ranks.append((label, math.fsum(c * ranks[start : start + v.size]) / n, n))
        start += v.size
    by_label = {label: (v, c) for label, v, c in items}
    return followup.dunn_of_mean_ranks(mean_ranks, ties, by_label, adjust=adjust, alpha=alpha,
                                       confidence=confidence)


def pairwise_mann_whitney(groups: Mapping[str, Weighted], *, adjust: AdjustMethod | str = "holm",
                          correct: bool = True, alpha: float = followup.DEFAULT_ALPHA) -> list[Followup]:
    """``followup.pairwise_mann_whitney`` of the repeated rows (each pair ranked on its own)."""
    items = _clean_groups(groups)
    plain = _plain(items)
    if plain is not None:
        return followup.pairwise_mann_whitney(plain, adjust=adjust, correct=correct, alpha=alpha)
    rows = []
    for (a, xa, ca), (b, xb, cb) in followup._pairs(items):
        ranks, ties = midranks(np.concatenate([xa, xb]), np.concatenate([ca, cb]))
        n_a, n_b = float(ca.sum()), float(cb.sum())
        rank_sum = math.fsum(ca * ranks[: xa.size])
        z = twogroup.rank_sum_z(rank_sum, n_a, n_b, ties, "two-sided", correct)
        p = common.p_from_z(z, "two-sided")
        u = rank_sum - n_a * (n_a + 1) / 2.0
        rows.append((a, b, median_pairwise_difference_weighted(xa, ca, xb, cb), u, p))
    return followup._adjusted_followups(Test.PAIRWISE_MANN_WHITNEY, EstimateKind.LOCATION_SHIFT, rows, adjust,
                                        alpha)
