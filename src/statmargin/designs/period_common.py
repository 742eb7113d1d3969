"""What the two period designs share: the period axis of a question, and the latest-period comparisons.

A question over time has an outcome and a period column (``plan.periods``); a
series by group also has a compare-by column and one of its levels. The steps
here read the period column once per run (``ColumnTypes.periods``), lay out the
axis over the rows the analysis uses, and compare the latest period with the
previous one and with the same period a year earlier.

The comparisons are asked of the record-level designs themselves: the rows of
the two periods become a two-group question (the outcome by a column of period
labels, the latest first), and the registered design answers it exactly as it
answers any two-group question, so the test is the one the decision table picks
(chi-square or Fisher's exact test for a two-level outcome; for a continuous one
the rule table of ``designs.rules``, as for any two groups: Welch's t-test or the
Brunner-Munzel test). Their
p-values are adjusted together within the analysis (one or two comparisons,
the run's method), as follow-ups are; the trend test is the analysis's own
test and joins the run's adjustment family.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import RoleError
from ..plan.expand import Analysis
from ..plan.model import ColumnChoice
from ..plan.periods import PeriodAxis, PeriodKeys, period_axis, period_label, rows_in
from ..read.table import Column, Table
from ..results import Followup, Result
from ..stats.adjust import adjust_p
from ..stats.period_series import PeriodAnalysis
from ..vocabulary import MeasureType, PeriodComparison, Role, ShapeHandling
from ..vocabulary.codes import Coded, Reason, Skip, coded
from .base import Prepared, Skipped
from .question import Question


@dataclass
class PeriodRows:
    """The rows an analysis over time uses, their axis positions, and the axis."""

    keys: PeriodKeys
    axis: PeriodAxis
    used: np.ndarray  # bool per row: usable outcome, readable period (and in the group)
    position: np.ndarray  # int64 per row: axis position, -1 where not used


def group_mask(question: Question) -> np.ndarray | None:
    """Rows of the question's group (None for the whole data)."""
    group = question.analysis.group
    if group is None or question.by is None or question.by_info is None:
        return None
    values = question.values(question.by, question.by_info)
    return np.asarray(values.usable & (values.values == group), dtype=bool)


def period_rows(question: Question, usable: np.ndarray, prepared: Prepared) -> PeriodRows:
    """The period axis over the rows with a usable outcome (in the question's group).

    Raises
    ------
    Skipped
        No row has both a usable outcome and a period; or, for a group's series,
        the group has no rows in the latest period of the whole data.
    RoleError
        The latest period set on the roles sheet is not a period of the data.
    """
    assert question.period is not None
    settings = question.settings
    keys: Any = question.types.periods(question.period.name, settings.grain)
    used = usable & keys.valid
    latest, last_is_partial = settings.latest_period, None
    group = group_mask(question)
    if group is not None:
        # A group's series shares the whole data's latest period, so every series of a run
        # compares the same months.
        whole = _axis(keys, used, latest, None)
        latest = period_label(whole.grain, whole.latest)
        last_is_partial = whole.partial is not None
        used = used & group
    if not used.any():
        what = question.period.name
        raise Skipped(coded(Skip.NO_ROWS_WITH_BOTH, outcome=question.outcome.name, by=what), prepared)
    try:
        axis = _axis(keys, used, latest, last_is_partial)
    except RoleError:
        if group is None:
            raise
        raise Skipped(coded(Skip.PERIOD_LATEST_MISSING, period=latest, group=question.analysis.group),
                      prepared) from None
    position = np.where(used, keys.keys - axis.first, -1).astype(np.int64)
    return PeriodRows(keys, axis, used, position)


def _axis(keys: PeriodKeys, used: np.ndarray, latest: str | None, last_is_partial: bool | None) -> PeriodAxis:
    return period_axis(keys, latest=latest, last_is_partial=last_is_partial, mask=used)


def fill_prepared(prepared: Prepared, rows: PeriodRows, analysis: PeriodAnalysis, question: Question) -> None:
    """Keep the series, trend and flags for the Result, with the facts the sheets and words need."""
    axis = rows.axis
    prepared.extra.update(
        period_analysis=analysis,
        axis=axis,
        latest=period_label(axis.grain, axis.latest),
        previous=period_label(axis.grain, axis.previous) if axis.previous is not None else None,
        year_earlier=period_label(axis.grain, axis.year_earlier) if axis.year_earlier is not None else None,
        partial=period_label(axis.grain, axis.partial) if axis.partial is not None else None,
        grain=axis.grain,
        period_column=question.period.name if question.period is not None else None,
        chart=analysis.chart.kind if analysis.chart is not None else None,
        group=question.analysis.group,
    )


def decorate(result: Result, prepared: Prepared) -> None:
    """The period fields of a Result, run or skipped: series, trend, flags, comparisons and notes."""
    analysis: PeriodAnalysis | None = prepared.extra.get("period_analysis")
    if analysis is None:
        return
    result.periods = list(analysis.points)
    result.trend = analysis.trend
    result.unusual = list(analysis.unusual)
    comparisons: list[tuple[PeriodComparison, Followup]] = prepared.extra.get("comparisons", [])
    result.followups = [f for _, f in comparisons]
    for key in ("latest", "previous", "year_earlier", "partial", "grain", "period_column", "chart",
                "centre", "level", "group", "two_values"):
        value = prepared.extra.get(key)
        if value is not None:
            result.extra[key] = value
    result.extra["comparisons"] = [kind.value for kind, _ in comparisons]
    axis: PeriodAxis = prepared.extra["axis"]
    extra_notes = list(axis.notes) + list(analysis.notes)
    extra_notes += [s for s in analysis.skips if result.skipped is None or s != result.skipped]
    result.notes = list(result.notes) + [n for n in extra_notes if n not in result.notes]
    if comparisons:
        reason = coded(Reason.PERIOD_COMPARISONS, latest=prepared.extra["latest"],
                       against=[(kind, f.levels[1]) for kind, f in comparisons])
        if reason not in result.reasons:
            result.reasons.append(reason)


def trend_or_skip(analysis: PeriodAnalysis, prepared: Prepared, reasons: list[Coded]) -> None:
    """Skip the analysis when no trend could be tested (the series and comparisons are still kept)."""
    if analysis.trend is None:
        reason = analysis.skips[0] if analysis.skips else coded(Skip.NO_P_VALUE)
        raise Skipped(reason, prepared, reasons=reasons)


# --------------------------------------------------------------------------- the latest period against others


def outcome_choice(question: Question, levels: list[str] | None = None, event: str | None = None) -> ColumnChoice:
    """The outcome as the comparisons must read it: the type (and level order) of the whole data."""
    own = question.analysis.outcome_choice
    info = question.outcome_info
    choice = ColumnChoice(question.outcome.name, role=Role.OUTCOME, treat_as=info.type,
                          shape=own.shape if own is not None else ShapeHandling.AUTO)
    if info.type is MeasureType.CATEGORICAL and levels:
        choice.order = list(levels)
        choice.event = event
    elif info.type is MeasureType.ORDINAL:
        choice.order = list(info.levels) or (own.order if own is not None else None)
    return choice


def compare_latest(question: Question, rows: PeriodRows, choice: ColumnChoice) -> list[tuple[PeriodComparison, Followup]]:
    """The latest period against the previous one and the same period a year earlier, as follow-ups.

    Each comparison is the two-group question the registered designs answer for
    the rows of the two periods; a comparison the data cannot support (one
    level in both periods, a constant outcome) is left out.
    """
    axis = rows.axis
    settings = question.settings
    wanted = [(PeriodComparison.PREVIOUS, axis.previous), (PeriodComparison.YEAR_EARLIER, axis.year_earlier)]
    latest_rows = rows_in(rows.keys, axis.latest) & rows.used
    found: list[tuple[PeriodComparison, Result]] = []
    for kind, key in wanted:
        if key is None or (kind is PeriodComparison.YEAR_EARLIER and key == axis.previous):
            continue  # a year earlier that is also the previous period is compared once
        other_rows = rows_in(rows.keys, key) & rows.used
        labels = (period_label(axis.grain, axis.latest), period_label(axis.grain, key))
        result = _two_periods(question, latest_rows, other_rows, labels, choice)
        if result is not None:
            found.append((kind, result))
    adjusted = adjust_p([r.p_value for _, r in found], settings.adjust)
    out = []
    for (kind, result), p_adj in zip(found, adjusted, strict=True):
        levels = (result.estimate.levels if result.estimate is not None and len(result.estimate.levels) == 2
                  else ())
        out.append((kind, Followup(
            test=result.test,  # type: ignore[arg-type]  # a two-group test, run as a follow-up of the trend
            levels=tuple(levels) or _labels(result),
            estimate=result.estimate,
            p_value=result.p_value,
            p_adjusted=p_adj,
            statistic=result.statistic,
            flagged=p_adj is not None and p_adj < settings.alpha,
        )))
    return out


def _labels(result: Result) -> tuple[str, ...]:
    return tuple(str(g.get("label")) for g in result.groups[:2] if isinstance(g, dict))


def _two_periods(question: Question, first: np.ndarray, second: np.ndarray, labels: tuple[str, str],
                 choice: ColumnChoice) -> Result | None:
    """The two-group result for the rows of two periods (latest first), or None when it cannot run."""
    from .engine import run_analysis

    assert question.period is not None
    idx = np.flatnonzero(first | second)
    if idx.size == 0 or not first.any() or not second.any():
        return None
    outcome = question.outcome
    sub_outcome = Column(outcome.name, outcome.letter, outcome.numbers[idx], outcome.labels[idx],
                         header=outcome.header, units=outcome.units)
    name = question.period.name
    period_labels = np.where(first[idx], labels[0], labels[1]).astype(object)
    sub_period = Column(name, question.period.letter, np.full(idx.size, np.nan), period_labels, header=name)
    rows = question.table.rows[idx] if question.table.rows is not None else np.arange(idx.size)
    table = Table(question.table.sheet, question.table.header_row, rows, {outcome.name: sub_outcome,
                                                                         name: sub_period})
    by_choice = ColumnChoice(name, role=Role.COMPARE_BY, treat_as=MeasureType.CATEGORICAL, order=list(labels))
    analysis = Analysis(outcome.name, by=name, outcome_choice=choice, by_choice=by_choice)
    result, _ = run_analysis(table, analysis, question.settings)
    if result.skipped is not None or result.p_value is None:
        return None
    return result


def trend_result(prepared: Prepared, question: Question) -> Result:
    """The analysis's Result from its trend test (the design fills the rest)."""
    analysis: PeriodAnalysis = prepared.extra["period_analysis"]
    trend = analysis.trend
    assert trend is not None  # trend_or_skip ran in prepare
    settings = question.settings
    return Result(
        outcome="", exposure=None, design=prepared.design, test=trend.test,
        statistic_name=trend.statistic_name, statistic=trend.statistic, p_value=trend.p_value,
        p_method=trend.p_method, alternative=settings.alternative.value, confidence=settings.confidence,
        estimate=trend.estimate,
    )
