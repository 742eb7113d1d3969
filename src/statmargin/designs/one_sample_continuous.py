"""One continuous (or ordinal) outcome against a stated value: one-sample t or Wilcoxon signed-rank."""

from __future__ import annotations

from ..errors import OptionError
from ..results import Result
from ..stats import onesample, weighted
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
from .continuous import choose_family
from .question import Question

TESTS = (Test.ONE_SAMPLE_T, Test.WILCOXON_SIGNED_RANK)


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
            prepared.samples = {name: x.tolist()}
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
        prepared.shape = {"assessment": shape.to_record()}
        prepared.extra["assessment"] = shape
        prepared.summaries = [s.to_record() for s in shape.summaries]
        constant = constant_reason(name, x)
        if constant:
            raise Skipped(constant, prepared, test=TESTS[0])
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        return choose_family(
            self.design, TESTS, outcome=question.outcome.name, by=None,
            outcome_type=question.outcome_info.type, by_type=None, handling=question.handling,
            shape=prepared.extra["assessment"],
        )

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        x = prepared.groups[question.outcome.name]
        counts = prepared.extra.get("counts")
        if counts is not None:
            counted = weighted.one_sample_t if choice.test is Test.ONE_SAMPLE_T else weighted.wilcoxon_signed_rank
            return counted(x, counts, mu=prepared.extra["mu"], **method_options(question.settings))
        fn = onesample.one_sample_t if choice.test is Test.ONE_SAMPLE_T else onesample.wilcoxon_signed_rank
        return fn(x, mu=prepared.extra["mu"], **method_options(question.settings))

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        result.against = prepared.extra["mu"]
