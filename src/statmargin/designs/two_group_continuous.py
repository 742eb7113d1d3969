"""A continuous (or ordinal) outcome by two groups: Welch's t-test or the Brunner-Munzel test (``rules``)."""

from __future__ import annotations

from dataclasses import replace

from ..results import Result
from ..vocabulary import Design, EffectKind, MeasureType
from .base import Choice, DesignSpec, Prepared, method_options
from .continuous import rule_choice, run_chosen, tests_of
from .groups import group_data, is_grouped, prepare_groups
from .question import Question

TESTS = tests_of(Design.TWO_GROUP_CONTINUOUS)


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
        ordinal = data.numbers.name if data.numbers_info.type is MeasureType.ORDINAL else None
        return rule_choice(self.design, prepared.groups, counts=prepared.extra.get("counts"),
                           outcome=data.numbers.name, by=data.grouping.name, ordinal_column=ordinal,
                           handling=question.handling, lead=data.lead)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        first, second = list(prepared.groups)[:2]
        counts = prepared.extra.get("counts")
        if counts is None:
            args: tuple[object, object] = (prepared.groups[first], prepared.groups[second])
        else:
            args = ((prepared.groups[first], counts[first]), (prepared.groups[second], counts[second]))
        return run_chosen(choice, *args, counted=counts is not None, labels=(first, second),
                          **method_options(question.settings))

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        effect = result.effect
        if effect is None or effect.kind is not EffectKind.PROBABILITY_OF_SUPERIORITY or effect.value is None:
            return
        # The chance that a record of the first group exceeds one of the second (ties half),
        # kept under its own key for callers that read it beside any other effect.
        result.extra[EffectKind.PROBABILITY_OF_SUPERIORITY.value] = effect.value
        result.extra["probability_of_superiority_levels"] = list(effect.levels)
        shift = result.estimate.value if result.estimate is not None else None
        if result.alternative == "two-sided" and shift is not None and shift < 0 and len(effect.levels) == 2:
            # The reading names the higher group first, so the effect is stated the same way round:
            # P(second > first) = 1 - P(first > second), its interval mirrored.
            result.effect = replace(effect, value=1.0 - effect.value,
                                    ci_low=None if effect.ci_high is None else 1.0 - effect.ci_high,
                                    ci_high=None if effect.ci_low is None else 1.0 - effect.ci_low,
                                    levels=(effect.levels[1], effect.levels[0]))
