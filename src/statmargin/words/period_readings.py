"""Readings of the period designs: the latest period against the previous one, the trend, unusual periods.

A period result reads in two lines:

1. the latest period's share (or mean or median) against the previous period
   and, when the data reach back that far, the same period a year earlier, with
   how clear each change is; then any unusual period with the rule it met;
2. the trend across the periods: the change per period with its interval and
   the strength of evidence (the analysis's own p-value, adjusted across the
   run's family).

The answer block shows line 1 under "What the data show" and the trend's size
and evidence beside it. Wording for the designs' codes, their follow-ups
(the latest-period comparisons) and their cautions is registered here.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from ..plan.model import Settings
from ..results import Followup, PeriodPoint, Result
from ..vocabulary import ControlRule, Design, EstimateKind, PeriodComparison
from ..vocabulary.codes import Reason, Skip
from . import context as ctx
from . import sentences
from .cautions import register_lines
from .choice import shape_numbers
from .followups import register_followup_reading
from .numbers import ci_label, decimals_for, evidence_words, fmt_number, fmt_p, is_number
from .period_words import RULE_NAMES
from .questions import against_text
from .readings import Parts, _evidence, _family_tail, _verdict, p_used, register_parts
from .sentences import Facts, capitalized

OVER_TIME = (Design.PERIOD_SHARES, Design.PERIOD_CENTRE)
TIME_LINE = (
    "A change over time does not show what caused it: changes in who was seen, in staff or in how "
    "records were kept can move a series as much as a change in the service."
)
COMPARISON_WORDS = {
    PeriodComparison.PREVIOUS.value: "the previous period",
    PeriodComparison.YEAR_EARLIER.value: "a year earlier",
}
SHORT_RULES: dict[ControlRule, str] = {
    ControlRule.BEYOND_3_SIGMA: "beyond a 3-sigma control limit, Western Electric rule 1",
    ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA: "2 of 3 periods beyond 2 sigma, Western Electric rule 2",
    ControlRule.FOUR_OF_FIVE_BEYOND_1_SIGMA: "4 of 5 periods beyond 1 sigma, Western Electric rule 3",
    ControlRule.EIGHT_ON_ONE_SIDE: "8 periods in a row on one side, Western Electric rule 4",
}


# --------------------------------------------------------------------------- small pieces


def _extra(result: Result) -> Mapping[str, Any]:
    return result.extra if isinstance(result.extra, Mapping) else {}


def _shares(result: Result) -> bool:
    return result.design == Design.PERIOD_SHARES


def _points(result: Result) -> dict[str, PeriodPoint]:
    return {p.period: p for p in result.periods or []}


def _decimals(result: Result, context: Any, *values: Any) -> int:
    own = ctx.column_decimals(context, result.outcome)
    if own is None:
        return decimals_for(*values)
    return min(own + 1, 4)


def _value(result: Result, value: Any, context: Any, decimals: int | None = None) -> str:
    """A period's share as '64.7%', or its mean or median in the outcome's units."""
    if not is_number(value):
        return "hidden"
    if _shares(result):
        return f"{float(value) * 100:.1f}%"
    units = ctx.display_units(context, result.outcome)
    shown = fmt_number(value, decimals if decimals is not None else _decimals(result, context, value))
    return f"{shown} {units}" if units else shown


def _grain(result: Result) -> str:
    return str(_extra(result).get("grain") or "period")


def _what(result: Result) -> str:
    outcome = result.outcome or "the outcome"
    extra = _extra(result)
    if _shares(result):
        return f"Share with {outcome} = {extra.get('level', '')}"
    return f"{str(extra.get('centre', 'mean')).capitalize()} {outcome}"


@dataclass(frozen=True)
class _Change:
    """One latest-period comparison in words: its direction, size, interval and verdict."""

    word: str  # "up", "down" or "" (no change, or no estimate)
    size: str  # "16.6 points", "typically 1.0", "mean 0.4 minutes"
    interval: str  # "95% CI 7.1 to 26.1" (turned round with the direction), or ""
    verdict: str  # "strong evidence of a change, p = 0.001"

    def detail(self, *, with_word: bool) -> str:
        """'16.6 points lower, 95% CI 7.1 to 26.1; strong evidence ...' (the word as higher/lower)."""
        than = {"up": " higher", "down": " lower"}.get(self.word, "") if with_word else ""
        size = f"{self.size}{than}" if self.size else ""
        head = ", ".join(part for part in (size, self.interval) if part)
        return f"{head}; {self.verdict}" if head else self.verdict


def _comparison(followup: Followup, result: Result, context: Any) -> _Change:
    """One latest-period comparison in words (the direction taken from the estimate's sign)."""
    est = followup.estimate
    p = followup.p_adjusted if is_number(followup.p_adjusted) else followup.p_value
    adjusted = is_number(followup.p_adjusted) and len(result.followups) > 1  # two comparisons, adjusted together
    p_text = fmt_p(p).replace("p ", "adjusted p " if adjusted else "p ", 1)
    clear = is_number(p) and followup.flagged
    verdict = f"{evidence_words(p)} of a change, {p_text}" if clear else f"not a clear change, {p_text}"
    if est is None or not is_number(est.value):
        return _Change("", "", "", verdict)
    value, low, high = float(est.value), est.ci_low, est.ci_high
    word = "up" if value > 0 else "down" if value < 0 else ""
    if value < 0:
        value, low, high = -value, (-high if is_number(high) else None), (-low if is_number(low) else None)
    label = ci_label(result.confidence)
    if est.kind is EstimateKind.SHARE_DIFFERENCE:
        size = f"{value * 100:.1f} points"
        interval = f"{label} {low * 100:.1f} to {high * 100:.1f}" if is_number(low) and is_number(high) else ""
    else:
        decimals = _decimals(result, context, value, low, high)
        units = ctx.display_units(context, result.outcome)
        kind = "typically " if est.kind is EstimateKind.LOCATION_SHIFT else "mean "
        size = f"{kind}{fmt_number(value, decimals)}{' ' + units if units else ''}"
        interval = (f"{label} {fmt_number(low, decimals)} to {fmt_number(high, decimals)}"
                    if is_number(low) and is_number(high) else "")
    return _Change(word, size, interval, verdict)


def latest_line(result: Result, context: Any = None) -> str:
    """The latest period against the previous one (and a year earlier), with how clear each change is.

    'Share with X = Yes: 64.7% in 2026-07, down from 81.3% in 2026-06 (16.6 points, 95% CI
    7.1 to 26.1; strong evidence of a change, p = 0.001).' A mean or median is set
    against the earlier one and the comparison's own estimate (a mean difference or
    a typical shift) says which way it went.
    """
    extra = _extra(result)
    latest = extra.get("latest")
    points = _points(result)
    if latest is None or latest not in points:
        return ""
    shown = [f"{_what(result)}: {_value(result, points[latest].value, context)} in {latest}"]
    kinds = list(extra.get("comparisons") or [])
    for kind, followup in zip(kinds, result.followups, strict=False):
        other = followup.levels[1] if len(followup.levels) > 1 else None
        if other is None or other not in points:
            continue
        change = _comparison(followup, result, context)
        before = _value(result, points[other].value, context)
        when = f"a year earlier ({other})" if kind == PeriodComparison.YEAR_EARLIER.value else f"in {other}"
        if _shares(result) and change.word:
            shown.append(f"{change.word} from {before} {when} ({change.detail(with_word=False)})")
        else:
            shown.append(f"against {before} {when} ({change.detail(with_word=True)})")
    previous = extra.get("previous")
    if previous is not None and previous in points and PeriodComparison.PREVIOUS.value not in kinds:
        shown.append(f"against {_value(result, points[previous].value, context)} in {previous}")
    return ", ".join(shown[:2]) + "".join(f"; {part}" for part in shown[2:]) + "."


def unusual_line(result: Result) -> str:
    """'Unusual: 2026-07 (low; beyond a 3-sigma control limit, Western Electric rule 1).' or ''."""
    if not result.unusual:
        return ""
    points = _points(result)
    parts = []
    for flag in result.unusual:
        point = points.get(flag.period)
        side = ""
        if point is not None and is_number(point.value) and is_number(point.centre):
            side = "high; " if point.value > point.centre else "low; " if point.value < point.centre else ""
        parts.append(f"{flag.period} ({side}{SHORT_RULES.get(flag.rule, str(flag.rule))})")
    return f"Unusual: {', '.join(parts)}."


def _slope_decimals(result: Result, context: Any, *values: Any) -> int:
    """Decimals for a change per period: the outcome's precision plus two (a month's change is small)."""
    own = ctx.column_decimals(context, result.outcome)
    return min(own + 2, 4) if own is not None else decimals_for(*values)


def _trend_size(result: Result, context: Any, *, signed: bool = False) -> tuple[str, str, float | None]:
    """('2.1 percentage points a month', '95% CI 0.9 to 3.3', signed slope).

    Unsigned (the default) the sign is left to the words ("fell by"), and the
    interval is turned round with it; ``signed`` keeps both as computed.
    """
    trend = result.trend
    est = trend.estimate if trend is not None else None
    if est is None or not is_number(est.value):
        return "", "", None
    value, low, high = float(est.value), est.ci_low, est.ci_high
    if value < 0 and not signed:
        value, low, high = -value, (-high if is_number(high) else None), (-low if is_number(low) else None)
    label = ci_label(result.confidence)
    grain = _grain(result)
    if _shares(result):
        size = f"{fmt_number(value * 100, 1)} percentage points a {grain}"
        bounds = (low * 100 if is_number(low) else None, high * 100 if is_number(high) else None)
        decimals = 1
    else:
        decimals = _slope_decimals(result, context, value, low, high)
        units = ctx.display_units(context, result.outcome)
        size = f"{fmt_number(value, decimals)}{' ' + units if units else ''} a {grain}"
        bounds = (low, high)
    if is_number(bounds[0]) and is_number(bounds[1]):
        interval = f"{label} {fmt_number(bounds[0], decimals)} to {fmt_number(bounds[1], decimals)}"
    elif is_number(bounds[0]):
        interval = f"one-sided {label}: at least {fmt_number(bounds[0], decimals)}"
    elif is_number(bounds[1]):
        interval = f"one-sided {label}: at most {fmt_number(bounds[1], decimals)}"
    else:
        interval = ""
    return size, interval, float(est.value)


def trend_answer(result: Result, settings: Settings, context: Any, n_family: int | None) -> tuple[str, str, str]:
    """The trend sentence, its size with interval, and the evidence."""
    trend = result.trend
    ev = _evidence(result, settings, n_family)
    if trend is None:
        return "", "", f"{ev.words} ({ev.p_text})"
    size, interval, slope = _trend_size(result, context)
    subject = "the share" if _shares(result) else f"the {_extra(result).get('centre', 'mean')}"
    plural = f"{trend.periods} {_grain(result)}s"
    if slope is None:
        moved = "changed"
    elif slope > 0:
        moved = f"rose by {size}"
    elif slope < 0:
        moved = f"fell by {size}"
    else:
        moved = f"stayed level (0 a {_grain(result)})"
    est = trend.estimate
    excludes = est is not None and (
        (is_number(est.ci_low) and est.ci_low > 0) or (is_number(est.ci_high) and est.ci_high < 0)
    )
    verdict = _verdict(ev, "a trend", interval_excludes=excludes)
    answer = f"Over {plural} {subject} {moved}{f' ({interval})' if interval else ''}: {verdict}."
    shown, signed_interval, _ = _trend_size(result, context, signed=True)
    size_text = f"Trend {shown} ({signed_interval})" if shown and signed_interval else (
        f"Trend {shown}" if shown else "")
    return answer, size_text, f"{ev.words} ({ev.p_text})"


def period_parts(result: Result, settings: Settings, context: Any, n_family: int | None) -> Parts:
    """(figures, answer, size, evidence) of a period result (``readings.register_parts``)."""
    figures = " ".join(part for part in (latest_line(result, context), unusual_line(result)) if part)
    answer, size, evidence = trend_answer(result, settings, context, n_family)
    return figures, answer, size, evidence


def period_followup_reading(followup: Followup, parent: Result, *, settings: Settings, context: Any = None) -> str:
    """'2026-07 vs 2026-06: down 16.6 points, 95% CI 7.1 to 26.1; strong evidence of a change, adjusted p = 0.001.'"""
    label = " vs ".join(str(x) for x in followup.levels)
    return f"{label}: {_comparison(followup, parent, context).detail(with_word=True)}."


def trend_evidence(result: Result, settings: Settings, n_family: int | None) -> str:
    """The p-value text a sheet puts beside a trend ('p = 0.006 after allowing for the 3 questions in this run')."""
    p, _ = p_used(result)
    return fmt_p(p) + _family_tail(result, settings, n_family)


# --------------------------------------------------------------------------- what changed since the last run


def _subject(result: Result) -> str:
    extra = _extra(result)
    outcome = result.outcome or "the outcome"
    subject = (f"{outcome} = {extra.get('level', '')}" if _shares(result)
               else f"{extra.get('centre', 'mean')} {outcome}")
    group = extra.get("group")
    return f"{subject} ({result.exposure} = {group})" if group is not None and result.exposure else subject


def change_label(result: Result | None, part: str | None, key: str) -> str:
    """How the top of the results sheet names an analysis (or one part of it) whose result changed.

    ``part`` is None for the analysis itself, ``trend`` for its trend test, or a
    latest-period comparison (``PeriodComparison``); ``key`` is the history's
    identifier, used when the analysis is no longer run.
    """
    if result is None:
        designs = {d.value for d in Design}
        pieces = [p for p in key.split(" | ") if p not in designs and p != "trend"
                  and p not in {c.value for c in PeriodComparison}]
        return " ".join(pieces)
    if result.design in OVER_TIME:
        subject = _subject(result)
        comparisons = dict(zip(_extra(result).get("comparisons") or [], result.followups, strict=False))
        followup = comparisons.get(part) if part is not None else None
        if followup is not None and len(followup.levels) == 2:
            tail = ", a year earlier" if part == PeriodComparison.YEAR_EARLIER.value else ""
            return f"{subject}, {followup.levels[0]} against {followup.levels[1]}{tail}"
        return f"{subject}, trend across {_grain(result)}s"
    outcome = result.outcome or "the outcome"
    if result.exposure:
        return f"{outcome} by {result.exposure}"
    if result.pairing:
        return f"{outcome} with {result.pairing}"
    return f"{outcome} against {against_text(result.against)}"


def run_time_text(stamp: str) -> str:
    """A history time stamp as the sheets show it: '2026-07-02 08:00 UTC'."""
    import datetime as dt

    try:
        moment = dt.datetime.fromisoformat(stamp)
    except ValueError:
        return stamp
    return moment.strftime("%Y-%m-%d %H:%M") + (" UTC" if moment.utcoffset() is not None else "")


# --------------------------------------------------------------------------- code templates


def _centre_reason(f: Facts) -> str:
    centre, outcome, cause = f["centre"], f["outcome"], f["cause"]
    if cause == "ordinal":
        return f"{outcome} is ordinal, so each period is summarised by its median."
    if cause == "user":
        return f"The shape setting of {outcome} asks for it, so each period is summarised by its {centre}."
    if not f.get("departs"):
        if f.get("p") is None:
            return capitalized(
                f"{outcome} has too few values in its periods to judge their shape, so each period is "
                f"summarised by its {centre}."
            )
        return capitalized(
            f"{outcome} within periods shows no clear departure from a normal shape{shape_numbers(f)}, so each "
            f"period is summarised by its {centre}."
        )
    n, needed = f["n_smallest"], math.ceil(f["n_needed"])
    if centre == "mean":
        return capitalized(
            f"{outcome} within periods is {f['direction']}{shape_numbers(f)}, but with {n} values in the smallest "
            f"period its mean is well approximated (about {needed} are enough for this shape), so each period is "
            "summarised by its mean."
        )
    return capitalized(
        f"{outcome} within periods is {f['direction']}{shape_numbers(f)}, and with {n} values in the smallest "
        f"period (about {needed} would be needed) a mean would mislead, so each period is summarised by its median."
    )


def _comparisons_reason(f: Facts) -> str:
    against = [f"{label} ({COMPARISON_WORDS.get(str(kind), str(kind))})" for kind, label in f["against"]]
    return (
        f"The latest period, {f['latest']}, is compared with {' and with '.join(against)} by the test the "
        "design table picks for two groups; those comparisons' p-values are adjusted together."
    )


def _latest_missing(f: Facts) -> str:
    return f"The group {f['group']} has no rows in {f['period']}, the latest period of the whole data."


TEMPLATES: dict[Any, Any] = {
    Skip.PERIOD_MANY_LEVELS: (
        "{outcome} has {n} levels; a series by period follows the share of one level, so it needs an "
        "outcome with two levels."
    ),
    Skip.PERIOD_LATEST_MISSING: _latest_missing,
    Reason.PERIOD_CENTRE: _centre_reason,
    Reason.PERIOD_COMPARISONS: _comparisons_reason,
}
sentences.register(TEMPLATES)
for _design in OVER_TIME:
    register_parts(_design, period_parts)
    register_followup_reading(_design, period_followup_reading)
    register_lines(_design, (TIME_LINE,))


def rule_name(rule: ControlRule) -> str:
    """The full name of a control-chart rule, as the periods sheet shows it."""
    return RULE_NAMES[rule]


__all__: Sequence[str] = (
    "latest_line",
    "period_followup_reading",
    "period_parts",
    "rule_name",
    "trend_answer",
    "trend_evidence",
    "unusual_line",
)
