"""A continuous (or ordinal) outcome by three or more groups: Alexander-Govern or the ANOVA-type rank test.

The test comes from the rule table (``rules``). After a clear overall result
(adjusted p below the level) pairs of groups are compared: Games-Howell after
Alexander-Govern (neither assumes equal spreads), pairwise Brunner-Munzel tests with
Holm adjustment after the ANOVA-type rank test.
"""

from __future__ import annotations

from typing import Any

from ..plan.model import Settings
from ..results import Followup, Result
from ..stats import followup, weighted_followup, weighted_relative
from ..vocabulary import Design, MeasureType, Test
from ..vocabulary.codes import Coded, Reason, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, method_options
from .continuous import rule_choice, run_chosen, tests_of
from .groups import group_data, is_grouped, prepare_groups
from .question import Question

TESTS = tests_of(Design.MULTI_GROUP_CONTINUOUS)


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
        ordinal = data.numbers.name if data.numbers_info.type is MeasureType.ORDINAL else None
        choice = rule_choice(self.design, prepared.groups, counts=prepared.extra.get("counts"),
                             outcome=data.numbers.name, by=data.grouping.name, ordinal_column=ordinal,
                             handling=question.handling, lead=data.lead)
        prepared.extra["p_method"] = choice.options.get("p_method", "auto")
        return choice

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        counted = _counted(prepared)
        groups: Any = counted if counted is not None else prepared.groups
        return run_chosen(choice, groups, counted=counted is not None, **method_options(question.settings))

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        if len(prepared.groups) < 3:
            return [], []
        counted = _counted(prepared)
        groups: Any = counted if counted is not None else prepared.groups
        if result.test == Test.ALEXANDER_GOVERN:
            # The same follow-ups on counted rows, from stats.weighted_followup.
            source: Any = weighted_followup if counted is not None else followup
            pairs = source.games_howell(groups, confidence=settings.confidence, alpha=settings.alpha)
        elif result.test == Test.RANK_ANOVA_TYPE:
            pairwise = (weighted_relative.pairwise_brunner_munzel if counted is not None
                        else followup.pairwise_brunner_munzel)
            pairs = pairwise(groups, adjust="holm", alpha=settings.alpha, confidence=settings.confidence,
                             p_method=prepared.extra.get("p_method", "auto"))
        else:
            return [], []
        pairs = list(pairs)
        test = pairs[0].test if pairs else None
        reason = coded(Reason.FOLLOWUP_PAIRS, alpha=settings.alpha, test=test,
                       holm=result.test == Test.RANK_ANOVA_TYPE)
        return pairs, [reason]


def _counted(prepared: Prepared) -> dict[str, tuple[Any, Any]] | None:
    """Each group's (values, counts) when the rows carry a count column, else None."""
    counts = prepared.extra.get("counts")
    if counts is None:
        return None
    return {label: (values, counts[label]) for label, values in prepared.groups.items()}
