"""Two continuous (or ordinal) measures of the same records: Pearson or Spearman correlation."""

from __future__ import annotations

from ..results import Result
from ..stats.shape import assess
from ..stats.weighted_shape import assess_weighted
from ..vocabulary import Design, MeasureType
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
from .question import Question

TESTS = tests_of(Design.TWO_CONTINUOUS)


class TwoContinuous(DesignSpec):
    design = Design.TWO_CONTINUOUS
    tests = TESTS

    def accepts(self, question: Question) -> bool:
        return (
            question.by_info is not None
            and question.key is None
            and question.outcome_info.type is not MeasureType.CATEGORICAL
            and question.by_info.type is not MeasureType.CATEGORICAL
        )

    def prepare(self, question: Question) -> Prepared:
        assert question.by is not None and question.by_info is not None
        name, by = question.outcome.name, question.by.name
        both = question.both(question.outcome, question.outcome_info, question.by, question.by_info)
        n_excl, counts = both.n_excluded, both.weights
        x = both.first.values[both.kept].astype(float)
        y = both.second.values[both.kept].astype(float)
        prepared = Prepared(self.design, n=int(counts.sum()), n_excluded=n_excl, groups={name: x, by: y})
        if question.counts is None:
            shape = assess({name: x, by: y})
            prepared.samples = {name: x, by: y}
        else:
            shape = assess_weighted({name: (x, counts), by: (y, counts)})
            prepared.samples = {name: counted_sample(x, counts), by: counted_sample(y, counts)}
            prepared.extra["counts"] = counts
        prepared.keep_shape(shape)
        for column, values in ((name, x), (by, y)):
            constant = constant_reason(column, values)
            if constant or x.size == 0:
                raise Skipped(constant or coded(Skip.NO_ROWS_WITH_BOTH, outcome=name, by=by), prepared,
                              test=TESTS[0])
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        assert question.by_info is not None and question.by is not None
        name, by = question.outcome.name, question.by.name
        ordinal = (name if question.outcome_info.type is MeasureType.ORDINAL
                   else by if question.by_info.type is MeasureType.ORDINAL else None)
        counts = prepared.extra.get("counts")
        return rule_choice(self.design, prepared.groups,
                           counts=None if counts is None else dict.fromkeys(prepared.groups, counts),
                           outcome=name, by=by, ordinal_column=ordinal, handling=question.handling)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        x, y = prepared.groups.values()
        counts = prepared.extra.get("counts")
        return run_chosen(choice, x, y, *(() if counts is None else (counts,)), counted=counts is not None,
                          **method_options(question.settings))
