"""One continuous (or ordinal) outcome against a stated value: one-sample t, sign test or signed-rank (``rules``)."""

from __future__ import annotations

from ..errors import OptionError
from ..results import Result
from ..stats.shape import assess
from ..stats.weighted_shape import assess_weighted
from ..vocabulary import Design, MeasureType, Test
from ..vocabulary.codes import Skip, coded
from ..words import refusals
from .base import (
    Choice,
    DesignSpec,
    Prepared,
    Skipped,
    constant_reason,
    counted_sample,
    method_options,
)
from .continuous import rule_choice, run_chosen, tests_of
from .question import Question

TESTS = tests_of(Design.ONE_SAMPLE_CONTINUOUS)


class OneSampleContinuous(DesignSpec):
    design = Design.ONE_SAMPLE_CONTINUOUS
    tests = TESTS

    def accepts(self, question: Question) -> bool:
        return question.analysis.against is not None and question.outcome_info.type is not MeasureType.CATEGORICAL

    def prepare(self, question: Question) -> Prepared:
        name = question.outcome.name
        vals = question.values(question.outcome, question.outcome_info)
        kept, counts = question.weighted(vals.usable)
        n, n_excl = int(counts.sum()), question.left_out(vals.usable)
        x = vals.values[kept].astype(float)
        prepared = Prepared(self.design, n=n, n_excluded=n_excl)
        prepared.groups = {name: x}
        if question.counts is None:
            prepared.samples = {name: x}
        else:
            prepared.samples = {name: counted_sample(x, counts)}
            prepared.extra["counts"] = counts
        against = question.analysis.against
        if against is None or isinstance(against, dict):
            raise OptionError(refusals.shares_for_numbers(name))
        prepared.extra["mu"] = float(against)
        if n == 0:
            raise Skipped(coded(Skip.NO_USABLE_VALUES, name=name), prepared)
        shape = assess({name: x}) if question.counts is None else assess_weighted({name: (x, counts)})
        prepared.keep_shape(shape)
        constant = constant_reason(name, x)
        if constant and x[0] == prepared.extra["mu"]:  # every value on the stated value: nothing to test
            raise Skipped(constant, prepared, test=Test.SIGN_TEST)
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        name = question.outcome.name
        counts = prepared.extra.get("counts")
        ordinal = name if question.outcome_info.type is MeasureType.ORDINAL else None
        return rule_choice(self.design, prepared.groups, counts=None if counts is None else {name: counts},
                           outcome=name, by=None, ordinal_column=ordinal, handling=question.handling,
                           target=prepared.extra["mu"])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        x = prepared.groups[question.outcome.name]
        counts = prepared.extra.get("counts")
        args = (x,) if counts is None else (x, counts)
        return run_chosen(choice, *args, counted=counts is not None, mu=prepared.extra["mu"],
                          **method_options(question.settings))

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        result.against = prepared.extra["mu"]
        # The method labels its one sample "all", the shape check by the column's name: one sample,
        # so one row carries both (quartiles, range and shape beside the mean and median).
        if len(result.groups) == 1 and len(prepared.summaries) == 1:
            result.groups = [{**prepared.summaries[0], **result.groups[0]}]
