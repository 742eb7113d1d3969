"""Events per person-time compared across groups: rate ratio and difference, or homogeneity of rates.

Two groups: the rate ratio and the rate difference with intervals (the exact
conditional test when an expected count under equal rates is below 5, the score
test otherwise; ``stats.rates.two_rates``). Three or more: the chi-square test
of homogeneity of rates, followed after a clear result by every pair's rate
ratio with Holm-adjusted p-values. Rows that vary more than Poisson sampling
allows switch to the quasi-Poisson versions, with a note.
"""

from __future__ import annotations

from ..plan.model import Settings
from ..results import Followup, Result
from ..stats import rates
from ..vocabulary import AdjustMethod, Design, Test
from ..vocabulary.codes import Coded, Reason, Skip, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, Skipped
from .event_rows import decorate_events, independence_caution, shell
from .question import Question


class GroupRates(DesignSpec):
    design = Design.GROUP_RATES
    tests = (Test.RATE_HOMOGENEITY, Test.RATE_HOMOGENEITY)

    def accepts(self, question: Question) -> bool:
        return bool(question.analysis.per) and question.by is not None

    def prepare(self, question: Question) -> Prepared:
        assert question.by is not None and question.by_info is not None
        prepared, _, pooled = shell(question, self.design)
        if len(pooled.labels) < 2:
            level = pooled.labels[0] if pooled.labels else None
            raise Skipped(coded(Skip.FEWER_THAN_TWO_GROUPS, by=question.by.name, level=level), prepared)
        if len(pooled.labels) == 2:
            question.require_order(question.by, question.by_info, list(pooled.labels))
        else:
            question.refuse_one_sided(refusals.UNDIRECTED_GROUP_RATES)
        if int(pooled.events.sum()) == 0:
            raise Skipped(coded(Skip.NO_EVENTS), prepared)
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        assert question.by is not None
        rows, pooled = prepared.extra["rows"], prepared.extra["pooled"]
        lead = coded(Reason.POOLED_RATES, events=rows.events, per=rows.total, by=question.by.name)
        if len(pooled.labels) >= 3:
            return Choice(self.design, Test.RATE_HOMOGENEITY, False,
                          [lead, coded(Reason.RATE_HOMOGENEITY, n=len(pooled.labels))])
        # The test stats.rates.compare_rates will choose (Cochran's rule on the expected events).
        n = int(pooled.events.sum())
        share = float(pooled.totals[0] / pooled.totals.sum())
        smallest = min(n * share, n * (1.0 - share))
        test = Test.RATE_RATIO_EXACT if smallest < rates.EXACT_BELOW_EXPECTED else Test.RATE_RATIO_SCORE
        return Choice(self.design, test, False, [lead])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        rows = prepared.extra["rows"]
        settings = question.settings
        if choice.test is Test.RATE_HOMOGENEITY:
            return rates.rate_homogeneity(rows.groups, per=rows.per, confidence=settings.confidence,
                                          seed=settings.seed, resamples=settings.monte_carlo_resamples)
        return rates.two_rates(rows.groups, per=rows.per, alternative=settings.alternative.value,
                               confidence=settings.confidence, seed=settings.seed)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        decorate_events(result, question, prepared)

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        independence_caution(result, prepared.extra["rows"])

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        rows = prepared.extra.get("rows")
        if rows is None or len(rows.groups) < 3:
            return [], []
        pairs = rates.pairwise_rate_ratios(rows.groups, per=rows.per, confidence=settings.confidence,
                                           adjust=AdjustMethod.HOLM, alpha=settings.alpha, seed=settings.seed)
        return pairs, [coded(Reason.FOLLOWUP_PAIRS, alpha=settings.alpha, test=Test.PAIRWISE_RATE_RATIO,
                             holm=True)]
