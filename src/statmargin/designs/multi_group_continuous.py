"""A continuous (or ordinal) outcome by three or more groups: ANOVA, Welch's ANOVA or Kruskal-Wallis.

After a clear overall result (adjusted p below the level), pairs of groups are
compared: Tukey HSD after the one-way ANOVA, Games-Howell after Welch's ANOVA,
Dunn's test with Holm adjustment after Kruskal-Wallis.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..plan.model import Settings
from ..results import Followup, Result
from ..stats import followup, multigroup, weighted, weighted_followup
from ..stats.shape import ShapeAssessment, SpreadCheck
from ..vocabulary import Design, MeasureType, ShapeHandling, Test
from ..vocabulary.codes import Coded, Reason, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, method_options
from .continuous import choose_family
from .groups import group_data, is_grouped, prepare_groups
from .question import Question

TESTS = (Test.ONE_WAY_ANOVA, Test.KRUSKAL_WALLIS)
SPREAD_ALPHA = 0.05  # Brown-Forsythe level for switching to Welch's ANOVA (common practice)


def decide(*, outcome: str, by: str, outcome_type: MeasureType, by_type: MeasureType | None,
           handling: ShapeHandling, shape: ShapeAssessment, spread: SpreadCheck | None,
           lead: Sequence[Coded] = ()) -> Choice:
    """Kruskal-Wallis when the shape calls for it; else the one-way ANOVA, or Welch's when spreads differ."""
    choice = choose_family(Design.MULTI_GROUP_CONTINUOUS, TESTS, outcome=outcome, by=by, outcome_type=outcome_type,
                           by_type=by_type, handling=handling, shape=shape)
    choice.reasons[:0] = lead
    if choice.rank_based:
        return choice
    if spread is None:
        choice.test = Test.WELCH_ANOVA
        choice.reasons.append(coded(Reason.SPREAD_UNCHECKED, outcome=outcome, by=by))
    elif spread.p_value < SPREAD_ALPHA:
        choice.test = Test.WELCH_ANOVA
        choice.reasons.append(coded(Reason.SPREAD_DIFFERS, outcome=outcome, by=by, p=spread.p_value))
    else:
        choice.reasons.append(coded(Reason.SPREAD_SIMILAR, outcome=outcome, by=by, p=spread.p_value))
    return choice


class MultiGroupContinuous(DesignSpec):
    design = Design.MULTI_GROUP_CONTINUOUS
    tests = TESTS

    def accepts(self, question: Question) -> bool:
        return is_grouped(question) and len(group_data(question).levels) >= 3

    def prepare(self, question: Question) -> Prepared:
        question.refuse_one_sided(refusals.UNDIRECTED_GROUP_CENTRES)
        return prepare_groups(question, self.design, TESTS)

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        data = group_data(question)
        return decide(outcome=data.numbers.name, by=data.grouping.name, outcome_type=data.numbers_info.type,
                      by_type=data.grouping_info.type, handling=question.handling,
                      shape=prepared.extra["assessment"], spread=prepared.extra["spread"], lead=data.lead)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        counted = _counted(prepared)
        if counted is not None:
            weighted_fn = {Test.ONE_WAY_ANOVA: weighted.one_way_anova, Test.WELCH_ANOVA: weighted.welch_anova,
                           Test.KRUSKAL_WALLIS: weighted.kruskal_wallis}[choice.test]
            return weighted_fn(counted, **method_options(question.settings))
        fn = {Test.ONE_WAY_ANOVA: multigroup.one_way_anova, Test.WELCH_ANOVA: multigroup.welch_anova,
              Test.KRUSKAL_WALLIS: multigroup.kruskal_wallis}[choice.test]
        return fn(prepared.groups, **method_options(question.settings))

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        if len(prepared.groups) < 3:
            return [], []
        counted = _counted(prepared)
        # The same follow-ups on counted rows, from stats.weighted_followup.
        source: Any = weighted_followup if counted is not None else followup
        groups: Any = counted if counted is not None else prepared.groups
        if result.test == Test.ONE_WAY_ANOVA:
            pairs = source.tukey_hsd(groups, confidence=settings.confidence, alpha=settings.alpha)
        elif result.test == Test.WELCH_ANOVA:
            pairs = source.games_howell(groups, confidence=settings.confidence, alpha=settings.alpha)
        elif result.test == Test.KRUSKAL_WALLIS:
            pairs = source.dunn(groups, adjust="holm", alpha=settings.alpha, confidence=settings.confidence)
        else:
            return [], []
        pairs = list(pairs)
        test = pairs[0].test if pairs else None
        reason = coded(Reason.FOLLOWUP_PAIRS, alpha=settings.alpha, test=test,
                       holm=result.test == Test.KRUSKAL_WALLIS)
        return pairs, [reason]


def _counted(prepared: Prepared) -> dict[str, tuple[Any, Any]] | None:
    """Each group's (values, counts) when the rows carry a count column, else None."""
    counts = prepared.extra.get("counts")
    if counts is None:
        return None
    return {label: (values, counts[label]) for label, values in prepared.groups.items()}
