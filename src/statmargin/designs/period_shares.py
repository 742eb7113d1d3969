"""A two-level outcome over periods: the share per period, its Cochran-Armitage trend and p-chart flags.

The share of the counted level (the event level: the user's choice, else
inferred from common words) is summarised per period with Wilson intervals;
the Cochran-Armitage test across the periods up to the latest is the
analysis's test and its change in share per period the estimate; a p chart
(widened by Laney's factor when the baseline periods vary more than their
sizes explain) flags unusual periods by the Western Electric rules; the latest
period is compared with the previous one and with the same period a year
earlier by the two-group test the design table picks (``period_common``).
"""

from __future__ import annotations

import numpy as np

from ..plan.levels import event_first
from ..results import Result
from ..stats.period_series import share_periods
from ..vocabulary import Design, MeasureType, Test
from ..vocabulary.codes import Reason, Skip, coded
from ..words import period_readings  # noqa: F401 - registers the design's words
from . import period_common
from .base import Choice, DesignSpec, Prepared, Skipped
from .groups import levels_present
from .question import Question


class PeriodShares(DesignSpec):
    design = Design.PERIOD_SHARES
    tests = (Test.COCHRAN_ARMITAGE, Test.COCHRAN_ARMITAGE)

    def accepts(self, question: Question) -> bool:
        return question.period is not None and question.outcome_info.type is MeasureType.CATEGORICAL

    def prepare(self, question: Question) -> Prepared:
        settings = question.settings
        values = question.values(question.outcome, question.outcome_info)
        prepared = Prepared(self.design)
        labels = values.values[values.usable]
        levels = levels_present(question.outcome_info, labels)
        if len(levels) > 2:
            prepared.n = int(values.usable.sum())
            raise Skipped(coded(Skip.PERIOD_MANY_LEVELS, outcome=question.outcome.name, n=len(levels)), prepared)
        levels = event_first(levels, question.event_level(levels)) if len(levels) == 2 else levels
        level = levels[0] if levels else ""
        rows = period_common.period_rows(question, np.asarray(values.usable, dtype=bool), prepared)
        success = rows.used & (values.values == level)
        analysis = share_periods(rows.axis, rows.position, success, level=level,
                                 alternative=settings.alternative.value, confidence=settings.confidence)
        prepared.n = int(rows.used.sum())
        prepared.n_excluded = question.left_out(rows.used)
        prepared.summaries = [
            {"label": p.period, "n": p.n, "share": p.value, "counts": _counts(p.n, p.value, level)}
            for p in analysis.points
        ]
        prepared.extra.update(level=level, levels=levels)
        period_common.fill_prepared(prepared, rows, analysis, question)
        choice = period_common.outcome_choice(question, levels, level)
        prepared.extra["comparisons"] = period_common.compare_latest(question, rows, choice)
        period_common.trend_or_skip(analysis, prepared, self._reasons(question, level))
        return prepared

    def _reasons(self, question: Question, level: str) -> list:
        return [coded(Reason.TREND_SHARES, outcome=question.outcome.name, level=level)]

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        return Choice(self.design, Test.COCHRAN_ARMITAGE, False, self._reasons(question, prepared.extra["level"]))

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        return period_common.trend_result(prepared, question)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        period_common.decorate(result, prepared)


def _counts(n: int, share: float | None, level: str) -> dict[str, int] | None:
    """The period's count of the level (shares are counts over n, so this is exact)."""
    if share is None or n == 0:
        return None
    return {level: int(round(share * n))}
