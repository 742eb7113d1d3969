"""A continuous (or ordinal) outcome over periods: the mean or median per period, its trend and flags.

Each period is summarised by its mean (t interval) or, when the outcome is
ordinal, the user chose rank-based handling, or the values within periods depart
from a normal shape and the smallest period is too small for its mean (the size
rule of ``stats.shape.judge_shape``), by its median (distribution-free interval). The
Mann-Kendall test on the period series is the analysis's test and the
Theil-Sen slope its estimate (units per period); an individuals chart (XmR) of
the period values flags unusual periods by the Western Electric rules; the
latest period is compared with the previous one and the same period a year
earlier by the two-group test the design table picks (``period_common``).
"""

from __future__ import annotations

import numpy as np

from ..results import Result
from ..stats.period_series import centre_periods
from ..stats.shape import judge_shape
from ..vocabulary import Design, MeasureType, ShapeHandling, Test
from ..vocabulary.codes import Coded, Reason, coded
from ..words import period_readings  # noqa: F401 - registers the design's words
from . import period_common
from .base import Choice, DesignSpec, Prepared
from .question import Question
from .rules import shape_facts


def choose_centre(question: Question, numbers: np.ndarray, positions: np.ndarray) -> tuple[str, Coded]:
    """'mean' or 'median' for the period summaries, with the reason.

    The shape is judged once, on the values within each period (``rules`` judges groups
    the same way): the mean when no clear departure from a normal shape is seen or the
    smallest period is large enough for its mean, else the median.
    """
    outcome = question.outcome.name
    if question.outcome_info.type is MeasureType.ORDINAL:
        return "median", coded(Reason.PERIOD_CENTRE, outcome=outcome, centre="median", cause="ordinal")
    if question.handling is ShapeHandling.RANK:
        return "median", coded(Reason.PERIOD_CENTRE, outcome=outcome, centre="median", cause="user")
    if question.handling is ShapeHandling.NORMAL:
        return "mean", coded(Reason.PERIOD_CENTRE, outcome=outcome, centre="mean", cause="user")
    order = np.argsort(positions, kind="stable")
    cuts = np.flatnonzero(np.diff(positions[order])) + 1
    shape = judge_shape({str(i): part for i, part in enumerate(np.split(numbers[order], cuts))})
    centre = "mean" if shape.mean_based_fits else "median"
    facts = shape_facts(Design.PERIOD_CENTRE, shape, outcome, None)
    return centre, coded(Reason.PERIOD_CENTRE, centre=centre, cause="shape", departs=shape.departs, **facts)


def two_values(values: np.ndarray) -> list[float] | None:
    """[low, high] when every value is one of two numbers (a 0/1 column read as numbers), else None.

    Examples
    --------
    >>> two_values(np.array([0.0, 1.0, 1.0])), two_values(np.array([0.0, 1.0, 2.0]))
    ([0.0, 1.0], None)
    """
    if values.size == 0:
        return None
    low, high = float(values.min()), float(values.max())
    if low == high or not bool(np.all((values == low) | (values == high))):
        return None
    return [low, high]


class PeriodCentre(DesignSpec):
    design = Design.PERIOD_CENTRE
    tests = (Test.MANN_KENDALL, Test.MANN_KENDALL)

    def accepts(self, question: Question) -> bool:
        return question.period is not None and question.outcome_info.type in (
            MeasureType.CONTINUOUS, MeasureType.ORDINAL
        )

    def prepare(self, question: Question) -> Prepared:
        settings = question.settings
        vals = question.values(question.outcome, question.outcome_info)
        prepared = Prepared(self.design)
        rows = period_common.period_rows(question, np.asarray(vals.usable, dtype=bool), prepared)
        numbers = np.where(rows.used, vals.values, np.nan).astype(float)
        centre, why = choose_centre(question, numbers[rows.used], rows.position[rows.used])
        analysis = centre_periods(rows.axis, rows.position, numbers, centre=centre,
                                  alternative=settings.alternative.value, confidence=settings.confidence)
        prepared.n = int(rows.used.sum())
        prepared.n_excluded = question.left_out(rows.used)
        prepared.summaries = [{"label": p.period, "n": p.n, centre: p.value} for p in analysis.points]
        prepared.extra.update(centre=centre, why_centre=why)
        ends = two_values(numbers[rows.used])
        if ends is not None:
            # Each period's mean is then a share of the higher value: sharing mode treats it as one.
            prepared.extra["two_values"] = ends
        period_common.fill_prepared(prepared, rows, analysis, question)
        prepared.extra["comparisons"] = period_common.compare_latest(
            question, rows, period_common.outcome_choice(question)
        )
        period_common.trend_or_skip(analysis, prepared, self._reasons(question, centre, why))
        return prepared

    def _reasons(self, question: Question, centre: str, why: Coded) -> list[Coded]:
        return [why, coded(Reason.TREND_SERIES, outcome=question.outcome.name, centre=centre)]

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        centre = prepared.extra["centre"]
        return Choice(self.design, Test.MANN_KENDALL, centre == "median",
                      self._reasons(question, centre, prepared.extra["why_centre"]))

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        return period_common.trend_result(prepared, question)

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        period_common.decorate(result, prepared)
