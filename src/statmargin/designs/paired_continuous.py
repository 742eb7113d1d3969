"""Paired continuous (or ordinal) measurements: paired t, signed-rank or sign test (``rules``)."""

from __future__ import annotations

from ..results import Result
from ..stats.shape import assess
from ..stats.weighted_shape import assess_weighted
from ..vocabulary import Design, MeasureType, ShapeHandling
from ..vocabulary.codes import Skip, coded
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
from .pairing import is_categorical, is_paired, prepare_pairs
from .question import Question

TESTS = tests_of(Design.PAIRED_CONTINUOUS)


class PairedContinuous(DesignSpec):
    design = Design.PAIRED_CONTINUOUS
    tests = TESTS

    def accepts(self, question: Question) -> bool:
        return is_paired(question) and not is_categorical(question)

    def prepare(self, question: Question) -> Prepared:
        prepared, data = prepare_pairs(question, self.design)
        name = question.outcome.name
        a, b = data.first, data.second
        first, second = data.labels
        diff = a - b
        if data.counts is None:
            shape = assess({f"{first} - {second}": diff})
            halves = assess({first: a, second: b})
            prepared.samples = {first: a, second: b}
        else:
            w = data.counts
            shape = assess_weighted({f"{first} - {second}": (diff, w)})
            halves = assess_weighted({first: (a, w), second: (b, w)})
            prepared.samples = {first: counted_sample(a, w), second: counted_sample(b, w)}
            prepared.extra["counts"] = w
        prepared.keep_shape(shape, halves)
        prepared.groups = {first: a, second: b}
        ordinal = data.info.type is MeasureType.ORDINAL
        would = TESTS[1 if ordinal or question.handling is ShapeHandling.RANK else 0]
        if data.n == 0:
            prepared.summaries, prepared.shape = [], {}
            raise Skipped(coded(Skip.NO_COMPLETE_PAIRS, outcome=name), prepared, test=would)
        constant = constant_reason(f"the differences in {name}", diff)
        if constant and diff[0] == 0:  # no pair changed: nothing to test (equal non-zero changes get the sign test)
            raise Skipped(constant, prepared, test=would)
        prepared.extra["differences"] = diff
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        name = question.outcome.name
        counts = prepared.extra.get("counts")
        ordinal = name if question.outcome_info.type is MeasureType.ORDINAL else None
        return rule_choice(self.design, {name: prepared.extra["differences"]},
                           counts=None if counts is None else {name: counts}, outcome=name, by=None,
                           ordinal_column=ordinal, handling=question.handling)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        first, second = prepared.extra["labels"]
        counts = prepared.extra.get("counts")
        args = (prepared.groups[first], prepared.groups[second])
        return run_chosen(choice, *args, *(() if counts is None else (counts,)), counted=counts is not None,
                          labels=(first, second), **method_options(question.settings))

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        decorate_pairs(result, question, prepared)


def decorate_pairs(result: Result, question: Question, prepared: Prepared) -> None:
    """The pairing column, the incomplete pairs and their note, on every paired result."""
    result.pairing = prepared.extra.get("pairing")
    if question.partner is not None:
        result.exposure = None
    if "incomplete_pairs" in prepared.extra:
        result.extra["incomplete_pairs"] = prepared.extra["incomplete_pairs"]
    for note in prepared.extra.get("pair_notes", []):
        if note not in result.notes:
            result.notes.append(note)
