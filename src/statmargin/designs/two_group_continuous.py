"""A continuous (or ordinal) outcome by two groups: Welch's t-test or the Mann-Whitney U test."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from scipy import stats

from ..results import Effect, Result
from ..stats import twogroup, weighted
from ..stats.shape import ShapeAssessment
from ..vocabulary import Design, EffectKind, MeasureType, ShapeHandling, Test
from ..vocabulary.codes import Coded, Reason, coded
from .base import Choice, DesignSpec, Prepared, method_options
from .continuous import choose_family
from .groups import group_data, is_grouped, prepare_groups
from .question import Question

TESTS = (Test.WELCH_T, Test.MANN_WHITNEY_U)


def decide(*, outcome: str, by: str, outcome_type: MeasureType, by_type: MeasureType | None,
           handling: ShapeHandling, shape: ShapeAssessment, lead: Sequence[Coded] = ()) -> Choice:
    """The rank-based test when the shape calls for it, else Welch's t-test by default."""
    choice = choose_family(Design.TWO_GROUP_CONTINUOUS, TESTS, outcome=outcome, by=by, outcome_type=outcome_type,
                           by_type=by_type, handling=handling, shape=shape)
    choice.reasons[:0] = lead
    if not choice.rank_based:
        choice.reasons.append(coded(Reason.WELCH_DEFAULT))
    return choice


class TwoGroupContinuous(DesignSpec):
    design = Design.TWO_GROUP_CONTINUOUS
    tests = TESTS

    def accepts(self, question: Question) -> bool:
        return is_grouped(question) and len(group_data(question).levels) <= 2

    def prepare(self, question: Question) -> Prepared:
        prepared = prepare_groups(question, self.design, TESTS)
        data = group_data(question)
        question.require_order(data.grouping, data.grouping_info, data.levels)
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        data = group_data(question)
        return decide(outcome=data.numbers.name, by=data.grouping.name, outcome_type=data.numbers_info.type,
                      by_type=data.grouping_info.type, handling=question.handling,
                      shape=prepared.extra["assessment"], lead=data.lead)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        levels = list(prepared.groups)
        counts = prepared.extra.get("counts")
        if counts is not None:
            counted = {Test.WELCH_T: weighted.welch_t, Test.STUDENT_T: weighted.student_t,
                       Test.MANN_WHITNEY_U: weighted.mann_whitney_u}[choice.test]
            first, second = ((prepared.groups[lev], counts[lev]) for lev in levels[:2])
            return counted(first, second, labels=(levels[0], levels[1]), **method_options(question.settings))
        fn = {Test.WELCH_T: twogroup.welch_t, Test.STUDENT_T: twogroup.student_t,
              Test.MANN_WHITNEY_U: twogroup.mann_whitney_u}[choice.test]
        return fn(prepared.groups[levels[0]], prepared.groups[levels[1]], labels=(levels[0], levels[1]),
                  **method_options(question.settings))

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        data = group_data(question)
        ordinal = data.numbers_info.type is MeasureType.ORDINAL
        if not (choice.rank_based or ordinal):
            return
        levels = list(prepared.groups)
        counts = prepared.extra.get("counts") or {}
        ps = probability_of_superiority(prepared.groups[levels[0]], prepared.groups[levels[1]],
                                        counts.get(levels[0]), counts.get(levels[1]))
        result.extra[EffectKind.PROBABILITY_OF_SUPERIORITY.value] = ps
        result.extra["probability_of_superiority_levels"] = [levels[0], levels[1]]
        if ordinal and result.effect is not None and result.effect.kind is EffectKind.RANK_BISERIAL:
            # For ordered labels the chance that a record of the first group ranks above one
            # of the second (ties half) reads more plainly than r; r = 2 * PS - 1 exactly
            # (Kerby 2014, Comprehensive Psychology 3:11.IT.3.1), so its interval maps across.
            rank_r = result.effect
            result.extra["rank_biserial_r"] = rank_r.to_record()
            result.effect = Effect(
                EffectKind.PROBABILITY_OF_SUPERIORITY,
                ps,
                None if rank_r.ci_low is None else (rank_r.ci_low + 1) / 2,
                None if rank_r.ci_high is None else (rank_r.ci_high + 1) / 2,
            )


def probability_of_superiority(x: np.ndarray, y: np.ndarray, x_counts: np.ndarray | None = None,
                               y_counts: np.ndarray | None = None) -> float:
    """P(X > Y) + P(X = Y) / 2 over all pairs of one value from each group.

    With counts (a count column) each value stands for that many records, and the
    pairs are those of the repeated records.

    Notes
    -----
    Equals U / (n_x n_y) for the Mann-Whitney U of ``x`` (ties count one half);
    also called the common-language effect size or probability of superiority
    (McGraw & Wong 1992, Psychol Bull 111(2):361-365, doi:10.1037/0033-2909.111.2.361;
    Grissom & Kim 2012, Effect Sizes for Research, 2nd ed.). 0.5 means no tendency.
    Computed from mid-ranks of the pooled values, U = (rank sum of ``x``) -
    n_x (n_x + 1) / 2, so memory is O(n_x + n_y) rather than one cell per pair; rank
    sums are whole or half numbers, so the result equals the pair count exactly.

    Examples
    --------
    Invented values; of the six pairs ``x`` wins 2 (3 > 2, 5 > 2), ties 1 (5 = 5)
    and loses 3:

    >>> probability_of_superiority(np.array([1.0, 3.0, 5.0]), np.array([2.0, 5.0]))
    0.4166666666666667
    >>> (2 + 0.5 * 1) / 6
    0.4166666666666667

    The same records given as counted rows:

    >>> probability_of_superiority(np.array([1.0, 3.0, 5.0]), np.array([2.0, 5.0]),
    ...                            np.array([1, 1, 1]), np.array([1, 1]))
    0.4166666666666667
    """
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    if x_counts is not None and y_counts is not None:
        cx, cy = np.asarray(x_counts, dtype=float), np.asarray(y_counts, dtype=float)
        ranks, _ = weighted.midranks(np.concatenate([x, y]), np.concatenate([cx, cy]))
        nx, ny = float(cx.sum()), float(cy.sum())
        u = float(np.dot(cx, ranks[: x.size])) - nx * (nx + 1) / 2.0
        return float(u / (nx * ny))
    ranks = stats.rankdata(np.concatenate([x, y]))
    u = float(ranks[: x.size].sum()) - x.size * (x.size + 1) / 2.0
    return float(u / (x.size * y.size))
