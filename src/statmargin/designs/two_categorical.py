"""Two categorical columns: the chi-square test of independence or Fisher's exact test.

Tables larger than 2x2 with a clear overall result get each cell's adjusted
standardized residual as a follow-up.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..plan.levels import event_first
from ..plan.model import Settings
from ..results import Followup, Result
from ..stats import categorical, followup, proportions
from ..stats.shape import count_check, expected_counts
from ..vocabulary import Design, MeasureType, Test
from ..vocabulary.codes import Coded, Derived, Reason, Skip, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, Skipped, method_options, tally
from .groups import MAX_GROUPS, levels_present
from .question import Question

COCHRAN_MIN_EXPECTED = 5.0  # Cochran 1954, Biometrics 10(4):417-451, doi:10.2307/3001616
# |adjusted residual| > 2 flags a cell (common practice; Agresti 2013, Categorical Data Analysis, 3rd ed., sec. 3.3.1)
RESIDUAL_FLAG = 2.0


def decide(*, outcome: str, by: str, table_shape: tuple[int, ...], min_expected: float) -> Choice:
    """Fisher's exact test for a 2x2 table with an expected count below 5 (Cochran's rule), else chi-square."""
    design = Design.TWO_CATEGORICAL
    if tuple(table_shape) == (2, 2) and min_expected < COCHRAN_MIN_EXPECTED:
        return Choice(design, Test.FISHER_EXACT, False, [coded(Reason.SMALL_EXPECTED_FISHER, smallest=Derived(min_expected))])
    # Larger tables with small expected counts: the method reports its own caveat and p method.
    return Choice(design, Test.CHI_SQUARE_INDEPENDENCE, False,
                  [coded(Reason.CHI_SQUARE_INDEPENDENCE, outcome=outcome, by=by)])


class TwoCategorical(DesignSpec):
    design = Design.TWO_CATEGORICAL
    tests = (Test.CHI_SQUARE_INDEPENDENCE, Test.CHI_SQUARE_INDEPENDENCE)

    def accepts(self, question: Question) -> bool:
        return (
            question.by_info is not None
            and question.key is None
            and question.outcome_info.type is MeasureType.CATEGORICAL
            and question.by_info.type is MeasureType.CATEGORICAL
        )

    def prepare(self, question: Question) -> Prepared:
        assert question.by is not None and question.by_info is not None
        name, by = question.outcome.name, question.by.name
        both = question.both(question.outcome, question.outcome_info, question.by, question.by_info)
        n_excl, weights = both.n_excluded, both.weights
        out_labels, by_labels = both.first.values[both.kept], both.second.values[both.kept]
        rows = levels_present(question.by_info, by_labels)
        cols = levels_present(question.outcome_info, out_labels)
        if len(cols) == 2:
            cols = event_first(cols, question.event_level(cols))
        for column, levels in ((by, rows), (name, cols)):
            if len(levels) > MAX_GROUPS:
                reason = coded(Skip.TOO_MANY_GROUPS, by=column, n=len(levels), limit=MAX_GROUPS)
                raise Skipped(reason, Prepared(self.design, n=int(weights.sum()), n_excluded=n_excl))
        # Records per cell: each row counts its records (one without a count column).
        counts = weights if question.counts is not None else None
        observed = np.array([[tally((by_labels == r) & (out_labels == c), counts) for c in cols] for r in rows])
        prepared = Prepared(self.design, n=int(weights.sum()), n_excluded=n_excl, table=observed,
                            row_labels=rows, col_labels=cols)
        prepared.summaries = [
            {"label": r, "n": int(observed[i].sum()), "counts": {c: int(observed[i, j]) for j, c in enumerate(cols)}}
            for i, r in enumerate(rows)
        ]
        if len(rows) < 2 or len(cols) < 2:
            which, levels = (by, rows) if len(rows) < 2 else (name, cols)
            raise Skipped(coded(Skip.ONE_LEVEL, column=which, level=levels[0] if levels else None), prepared)
        if observed.shape == (2, 2):
            question.require_order(question.by, question.by_info, rows)
        else:
            question.refuse_one_sided(refusals.UNDIRECTED_LARGE_TABLE)
        check = count_check(expected_counts(observed))
        prepared.shape = {"counts": {**check, "observed": observed.tolist(), "row_labels": rows, "col_labels": cols}}
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        assert prepared.table is not None and question.by is not None
        return decide(outcome=question.outcome.name, by=question.by.name, table_shape=prepared.table.shape,
                      min_expected=prepared.shape["counts"]["min_expected"])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        settings = question.settings
        table, rows, cols = prepared.table, prepared.row_labels, prepared.col_labels
        if choice.test is Test.FISHER_EXACT:
            return categorical.fisher_exact(table, rows, cols, **method_options(settings))
        result = categorical.chi_square_independence(table, rows, cols, confidence=settings.confidence,
                                                     seed=settings.seed, resamples=settings.monte_carlo_resamples)
        return with_widest_gap(result, table, rows, cols, settings.confidence)

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        if prepared.table is None or prepared.table.size <= 4:
            return [], []
        cells = followup.adjusted_residuals(prepared.table, prepared.row_labels, prepared.col_labels,
                                            threshold=RESIDUAL_FLAG)
        return list(cells), [coded(Reason.FOLLOWUP_RESIDUALS, threshold=RESIDUAL_FLAG)]


def with_widest_gap(result: Result, table: Any, rows: list[str], cols: list[str], confidence: float) -> Result:
    """Three or more groups and a two-level outcome: the widest gap in shares, as the estimate a reading states.

    Rows that vary more than binomial sampling allows count as fewer records (the
    counts divided by the dispersion, as the quasi-binomial test does); the shares stay the same.
    """
    if result.estimate is None and len(cols) == 2:
        dispersion = result.extra.get("dispersion") if isinstance(result.extra, dict) else None
        counts = np.asarray(table, dtype=float)
        if isinstance(dispersion, dict) and dispersion.get("overdispersed"):
            counts = counts / float(dispersion["dispersion"])
        result.estimate = proportions.widest_share_gap(counts, rows, cols[0], confidence=confidence)
    return result
