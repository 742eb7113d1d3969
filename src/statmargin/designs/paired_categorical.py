"""A two-level category measured twice on the same units: McNemar's test (exact below 25 discordant pairs)."""

from __future__ import annotations

import numpy as np

from ..plan.levels import event_first
from ..results import Result
from ..stats import categorical
from ..vocabulary import Design, Test
from ..vocabulary.codes import Reason, Skip, coded
from .base import Choice, DesignSpec, Prepared, Skipped, method_options, tally
from .paired_continuous import decorate_pairs
from .pairing import is_categorical, is_paired, prepare_pairs
from .question import Question


def decide(*, outcome: str) -> Choice:
    """A two-level category measured twice on the same units takes McNemar's test."""
    return Choice(Design.PAIRED_CATEGORICAL, Test.MCNEMAR, False, [coded(Reason.MCNEMAR_PAIRED, outcome=outcome)])


class PairedCategorical(DesignSpec):
    design = Design.PAIRED_CATEGORICAL
    tests = (Test.MCNEMAR, Test.MCNEMAR)

    def accepts(self, question: Question) -> bool:
        return is_paired(question) and is_categorical(question)

    def prepare(self, question: Question) -> Prepared:
        prepared, data = prepare_pairs(question, self.design)
        a, b = data.first, data.second
        first, second = data.labels
        seen = set(a) | set(b)
        levels = [lev for lev in data.info.levels if lev in seen] or sorted(seen)
        levels = event_first(levels, question.event_level(levels))
        if len(levels) != 2:
            raise Skipped(coded(Skip.PAIRED_NOT_TWO_LEVELS, outcome=question.outcome.name, n=len(levels)),
                          prepared, test=Test.MCNEMAR)
        w = data.counts
        table = np.array([[tally((a == r) & (b == c), w) for c in levels] for r in levels])
        prepared.table = table
        prepared.row_labels = [f"{first}: {lv}" for lv in levels]
        prepared.col_labels = [f"{second}: {lv}" for lv in levels]
        prepared.extra["levels"] = levels
        prepared.shape = {"counts": {"observed": table.tolist(), "row_labels": prepared.row_labels,
                                     "col_labels": prepared.col_labels}}
        prepared.summaries = [
            {"label": first, "n": data.n, "counts": {lv: tally(a == lv, w) for lv in levels}},
            {"label": second, "n": data.n, "counts": {lv: tally(b == lv, w) for lv in levels}},
        ]
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        return decide(outcome=question.outcome.name)

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        assert prepared.table is not None
        return categorical.mcnemar(prepared.table, list(prepared.extra["levels"]),
                                   **method_options(question.settings))

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        decorate_pairs(result, question, prepared)
