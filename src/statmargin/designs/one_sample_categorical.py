"""One categorical outcome against stated shares: chi-square goodness of fit or the exact binomial test."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..plan.levels import event_first
from ..results import Result
from ..stats import categorical
from ..stats.shape import count_check
from ..vocabulary import Design, MeasureType, Test
from ..vocabulary.codes import Derived, Reason, Skip, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, Skipped, tally
from .question import Question

COCHRAN_MIN_EXPECTED = 5.0  # Cochran 1954, Biometrics 10(4):417-451, doi:10.2307/3001616


def decide(*, outcome: str, n_levels: int, single_share: bool, min_expected: float) -> Choice:
    """One share (or two categories with an expected count below 5) takes the exact binomial test."""
    design = Design.ONE_SAMPLE_CATEGORICAL
    if single_share:
        return Choice(design, Test.BINOMIAL_EXACT, False, [coded(Reason.ONE_SHARE_BINOMIAL, outcome=outcome)])
    if n_levels == 2 and min_expected < COCHRAN_MIN_EXPECTED:
        return Choice(design, Test.BINOMIAL_EXACT, False,
                      [coded(Reason.SMALL_EXPECTED_BINOMIAL, smallest=Derived(min_expected))])
    # Small expected counts with 3+ categories: the method says how its p-value was
    # obtained (and switches to Monte Carlo), so no second caveat is added here.
    return Choice(design, Test.CHI_SQUARE_GOODNESS_OF_FIT, False, [coded(Reason.GOODNESS_OF_FIT, outcome=outcome)])


class OneSampleCategorical(DesignSpec):
    design = Design.ONE_SAMPLE_CATEGORICAL
    tests = (Test.CHI_SQUARE_GOODNESS_OF_FIT, Test.CHI_SQUARE_GOODNESS_OF_FIT)

    def accepts(self, question: Question) -> bool:
        return question.analysis.against is not None and question.outcome_info.type is MeasureType.CATEGORICAL

    def prepare(self, question: Question) -> Prepared:
        info = question.outcome_info
        name = question.outcome.name
        vals = question.values(question.outcome, info)
        kept, weights = question.weighted(vals.usable)
        n, n_excl = int(weights.sum()), question.left_out(vals.usable)
        shares = question.analysis.against
        assert isinstance(shares, dict)  # a categorical outcome always parses to shares by label
        labels = vals.values[kept]
        levels = list(info.levels) or sorted(set(labels))
        if len(levels) == 2:
            levels = event_first(levels, question.event_level(levels))
        counted = weights if question.counts is not None else None
        counts = {lev: tally(labels == lev, counted) for lev in levels}
        prepared = Prepared(self.design, n=n, n_excluded=n_excl)
        prepared.summaries = [{"label": lev, "n": c, "share": c / n if n else None} for lev, c in counts.items()]
        prepared.extra.update(shares=dict(shares), counts=counts, levels=levels)
        if n == 0:
            raise Skipped(coded(Skip.NO_USABLE_VALUES, name=name), prepared)
        if len(shares) > 1:
            question.refuse_one_sided(refusals.UNDIRECTED_SEVERAL_SHARES)
        if len(shares) == 1:
            share = next(iter(shares.values()))
            expected = np.array([n * share, n * (1 - share)])
        else:
            expected = np.array([n * shares[lev] for lev in levels])
        prepared.shape = {"counts": count_check(expected)}
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        return decide(outcome=question.outcome.name, n_levels=len(prepared.extra["levels"]),
                      single_share=len(prepared.extra["shares"]) == 1,
                      min_expected=prepared.shape["counts"]["min_expected"])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        settings = question.settings
        shares: dict[str, float] = prepared.extra["shares"]
        counts: dict[str, int] = prepared.extra["counts"]
        if choice.test is Test.BINOMIAL_EXACT:
            if len(shares) == 1:
                label, share = next(iter(shares.items()))
            else:
                label = prepared.extra["levels"][0]
                share = shares[label]
            return categorical.binomial_exact(counts.get(label, 0), prepared.n, share=share, label=label,
                                              alternative=settings.alternative.value,
                                              confidence=settings.confidence)
        return categorical.chi_square_goodness_of_fit(
            counts, dict(shares), confidence=settings.confidence, seed=settings.seed,
            monte_carlo_resamples=settings.monte_carlo_resamples)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        shares: Any = prepared.extra.get("shares")
        result.against = shares
