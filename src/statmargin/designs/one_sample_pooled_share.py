"""Events out of totals against a target share: rows added up, the exact binomial test and Wilson interval.

The pooled count of events out of the pooled total is exactly the table of the
records listed one per row, so every number equals the record-level
one-share analysis (``one_sample_categorical``); rows that vary more than
binomial sampling allows switch to the quasi-binomial version, with a note.
"""

from __future__ import annotations

import numpy as np

from ..results import Result
from ..stats import proportions
from ..stats.shape import count_check
from ..vocabulary import Design, Test
from ..vocabulary.codes import Reason, coded
from .base import Choice, DesignSpec, Prepared
from .event_rows import decorate_events, independence_caution, shell
from .question import Question


class OneSamplePooledShare(DesignSpec):
    design = Design.ONE_SAMPLE_POOLED_SHARE
    tests = (Test.BINOMIAL_EXACT, Test.BINOMIAL_EXACT)

    def accepts(self, question: Question) -> bool:
        return bool(question.analysis.out_of) and question.analysis.against is not None

    def prepare(self, question: Question) -> Prepared:
        prepared, rows, pooled = shell(question, self.design)
        target = float(question.analysis.against)  # type: ignore[arg-type]  # a share, parsed in plan.expand
        prepared.extra["target"] = target
        n = prepared.n
        prepared.shape = {"counts": count_check(np.array([n * target, n * (1.0 - target)]))}
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        rows = prepared.extra["rows"]
        return Choice(self.design, Test.BINOMIAL_EXACT, False,
                      [coded(Reason.POOLED_SHARE_TARGET, events=rows.events, total=rows.total)])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        rows = prepared.extra["rows"]
        settings = question.settings
        events, totals = rows.groups["all"]
        return proportions.one_share(events, totals, target=prepared.extra["target"], label=rows.events,
                                     other_label=f"not {rows.events}", group="all",
                                     alternative=settings.alternative.value, confidence=settings.confidence,
                                     seed=settings.seed, strata=rows.strata)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        result.against = prepared.extra.get("target")
        decorate_events(result, question, prepared)

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        independence_caution(result, prepared.extra["rows"])
