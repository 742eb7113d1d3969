"""Events per person-time (or population) against a target rate: the exact Poisson test and Garwood interval.

Rows that vary more than Poisson sampling allows switch to the quasi-Poisson
version (``stats.rates.one_rate``), with a note.
"""

from __future__ import annotations

from ..results import Result
from ..stats import rates
from ..vocabulary import Design, Test
from ..vocabulary.codes import Reason, coded
from .base import Choice, DesignSpec, Prepared
from .event_rows import decorate_events, independence_caution, shell
from .question import Question


class OneSampleRate(DesignSpec):
    design = Design.ONE_SAMPLE_RATE
    tests = (Test.POISSON_EXACT, Test.POISSON_EXACT)

    def accepts(self, question: Question) -> bool:
        return bool(question.analysis.per) and question.analysis.against is not None

    def prepare(self, question: Question) -> Prepared:
        prepared, rows, _ = shell(question, self.design)
        prepared.extra["target"] = float(question.analysis.against)  # type: ignore[arg-type]  # per one unit
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        rows = prepared.extra["rows"]
        return Choice(self.design, Test.POISSON_EXACT, False, [
            coded(Reason.POOLED_RATES, events=rows.events, per=rows.total),
            coded(Reason.ONE_RATE_EXACT, outcome=rows.events),
        ])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        rows = prepared.extra["rows"]
        settings = question.settings
        events, time = rows.groups["all"]
        return rates.one_rate(events, time, target=prepared.extra["target"], per=rows.per, label="all",
                              alternative=settings.alternative.value, confidence=settings.confidence,
                              seed=settings.seed, strata=rows.strata)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        rows = prepared.extra.get("rows")
        if "target" in prepared.extra and rows is not None:
            result.against = prepared.extra["target"] * rows.per
        decorate_events(result, question, prepared)

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        independence_caution(result, prepared.extra["rows"])
