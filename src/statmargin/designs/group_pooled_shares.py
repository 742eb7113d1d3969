"""Events out of totals compared across groups: rows added up per group into one table.

Chi-square on the pooled table, or Fisher's exact test for two groups with an
expected count below 5 (Cochran's rule, as for record-level tables), so every
number equals the record-level analysis of the same people
(``two_categorical``). Tables of three or more groups with a clear overall
result get each group's adjusted residual of events as a follow-up, with
Holm's adjustment across the groups (a group's non-event cell has the same
residual with the sign turned, so it is one question, not two).
"""

from __future__ import annotations

from dataclasses import replace

from ..plan.model import Settings
from ..results import Followup, Result
from ..stats import followup, proportions
from ..stats.adjust import adjust_p
from ..stats.shape import count_check, expected_counts
from ..vocabulary import AdjustMethod, Design, Test
from ..vocabulary.codes import Coded, Reason, Skip, coded
from ..words import refusals
from .base import Choice, DesignSpec, Prepared, Skipped
from .event_rows import decorate_events, independence_caution, shell
from .question import Question
from .two_categorical import RESIDUAL_FLAG, with_widest_gap
from .two_categorical import decide as decide_table


class GroupPooledShares(DesignSpec):
    design = Design.GROUP_POOLED_SHARES
    tests = (Test.CHI_SQUARE_INDEPENDENCE, Test.CHI_SQUARE_INDEPENDENCE)

    def accepts(self, question: Question) -> bool:
        return bool(question.analysis.out_of) and question.by is not None

    def prepare(self, question: Question) -> Prepared:
        assert question.by is not None and question.by_info is not None
        prepared, rows, pooled = shell(question, self.design)
        if len(pooled.labels) < 2:
            level = pooled.labels[0] if pooled.labels else None
            raise Skipped(coded(Skip.FEWER_THAN_TWO_GROUPS, by=question.by.name, level=level), prepared)
        table, _ = proportions.pooled_table(pooled)
        columns = [rows.events, f"not {rows.events}"]
        prepared.table, prepared.row_labels, prepared.col_labels = table, list(pooled.labels), columns
        if len(pooled.labels) == 2:
            question.require_order(question.by, question.by_info, list(pooled.labels))
        else:
            question.refuse_one_sided(refusals.UNDIRECTED_GROUP_SHARES)
        if int(table[:, 0].sum()) in (0, int(table.sum())):
            which = columns[1] if int(table[:, 0].sum()) == 0 else columns[0]
            raise Skipped(coded(Skip.ONE_LEVEL, column=rows.events, level=which), prepared)
        check = count_check(expected_counts(table))
        prepared.shape = {"counts": {**check, "observed": table.tolist(), "row_labels": list(pooled.labels),
                                     "col_labels": columns}}
        return prepared

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        assert prepared.table is not None and question.by is not None
        rows = prepared.extra["rows"]
        choice = decide_table(outcome=rows.events, by=question.by.name, table_shape=prepared.table.shape,
                              min_expected=prepared.shape["counts"]["min_expected"])
        exact = choice.test is Test.FISHER_EXACT
        lead = coded(Reason.POOLED_SHARES_TABLE, events=rows.events, total=rows.total, by=question.by.name,
                     exact=exact)
        # The record-level reason speaks of two category columns; the pooled one says what was tabled.
        return Choice(self.design, choice.test, False, [lead, *(choice.reasons if exact else [])])

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        rows = prepared.extra["rows"]
        settings = question.settings
        result = proportions.compare_shares(
            rows.groups, label=prepared.col_labels[0], other_label=prepared.col_labels[1], test=choice.test,
            alternative=settings.alternative.value, confidence=settings.confidence, seed=settings.seed,
            resamples=settings.monte_carlo_resamples)
        return with_widest_gap(result, prepared.table, prepared.row_labels, prepared.col_labels, settings.confidence)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        decorate_events(result, question, prepared)

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        independence_caution(result, prepared.extra["rows"])

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        if prepared.table is None or prepared.table.shape[0] < 3 or result.test is not Test.CHI_SQUARE_INDEPENDENCE:
            return [], []
        cells = followup.adjusted_residuals(prepared.table, prepared.row_labels, prepared.col_labels,
                                            threshold=RESIDUAL_FLAG)
        # In a table of events and non-events the two cells of a group are one question (their
        # residuals differ only in sign): keep the events' cell, labelled by its group, and adjust
        # across the groups.
        events = [cell for cell in cells if cell.levels[1] == prepared.col_labels[0]]
        adjusted = adjust_p([cell.p_value for cell in events], AdjustMethod.HOLM)
        kept = [replace(cell, levels=cell.levels[:1], p_adjusted=p) for cell, p in zip(events, adjusted, strict=True)]
        return kept, [coded(Reason.FOLLOWUP_RESIDUALS, threshold=RESIDUAL_FLAG)]
