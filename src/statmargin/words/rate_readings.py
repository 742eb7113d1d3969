"""Readings of rows of events: shares out of totals and rates per person-time, against a target or by group.

Line one gives the figures: each group's share (with its events out of its
total) or its rate in the unit the user set ("Cases per 1,000 person-years:
2.1 in East, 3.4 in West"); against a target, the pooled share or rate with its
interval and the target. Line two gives the answer: the difference in
percentage points, or how many times one rate is the other and by how much it
is higher, with intervals and the strength of evidence. Test names and sources
stay on the shape-check sheet (``technical``), as for every design.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..plan.model import Settings
from ..results import Followup, Result
from ..vocabulary import AdjustMethod, Design, EstimateKind
from .numbers import (
    decimals_for,
    evidence_words,
    fmt_ci,
    fmt_number,
    fmt_p,
    followup_ci_label,
    is_number,
)
from .questions import events_subject, named, rate_unit
from .readings import (
    MAX_LISTED_GROUPS,
    Parts,
    _evidence,
    _excludes_null,
    _interval,
    _n,
    _one_sided,
    _percent,
    _share_decimals,
    _share_difference_answer,
    _table_answer,
    _verdict,
    register_parts,
    widest_gap_clause,
)


def _groups(result: Result) -> list[Mapping[str, Any]]:
    return [g for g in result.groups if isinstance(g, Mapping) and g.get("label") is not None]


def _count(value: Any) -> str:
    """A count of events or people with thousands separators (a hidden count words itself)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return str(value) if value is not None else "a hidden number"
    return f"{value:,.0f}"


def _binomial(result: Result) -> bool:
    return result.design in (Design.ONE_SAMPLE_POOLED_SHARE, Design.GROUP_POOLED_SHARES)


def _value_text(result: Result, value: Any, decimals: int) -> str:
    """A share as a percentage, a rate as a number in its unit."""
    return _percent(value, decimals) if _binomial(result) else _n(value, decimals)


def _decimals(result: Result, *values: Any) -> int:
    if _binomial(result):
        return _share_decimals(*values)
    return decimals_for(*values)


def _figures(result: Result) -> str:
    """'Positive out of Screened: 3.2% in North (40 of 1,240), 4.9% in South (61 of 1,245).'"""
    groups = _groups(result)
    rates = [g.get("rate") for g in groups]
    if not any(is_number(r) for r in rates):
        return ""
    decimals = _decimals(result, *rates)
    subject = events_subject(result)
    if len(groups) > MAX_LISTED_GROUPS:
        known = [g for g in groups if is_number(g.get("rate"))]
        low = min(known, key=lambda g: g["rate"])
        high = max(known, key=lambda g: g["rate"])
        return (
            f"{subject} ranged from {_value_text(result, low['rate'], decimals)} ({named(result, str(low['label']))}) "
            f"to {_value_text(result, high['rate'], decimals)} ({named(result, str(high['label']))}) across "
            f"{len(groups)} groups of {result.exposure}."
        )
    parts = []
    for g in groups:
        if g.get("suppressed"):  # sharing mode: a small count of events
            parts.append(f"hidden in {named(result, str(g['label']))}")
            continue
        text = f"{_value_text(result, g.get('rate'), decimals)} in {named(result, str(g['label']))}"
        if _binomial(result):
            text += f" ({_count(g.get('events'))} of {_count(g.get('total'))})"
        parts.append(text)
    return f"{subject}: {', '.join(parts)}."


def _target_figures(result: Result) -> tuple[str, str, float | None, int]:
    """The pooled share or rate with its interval against the target; the size text; target; decimals."""
    est = result.estimate
    target = float(result.against) if is_number(result.against) else None
    if est is None or not is_number(est.value):
        return "", "", target, 2
    group = (_groups(result) or [{}])[0]
    decimals = _decimals(result, est.value, target)
    scale, units = (100.0, "%") if _binomial(result) else (1.0, "")
    interval = _interval(result, est.ci_low, est.ci_high, decimals, units, scale=scale)
    shown = _value_text(result, est.value, decimals)
    if _binomial(result):
        counts = f"{_count(group.get('events'))} of {_count(group.get('total'))}"
        against = f"{float(target) * 100:.3g}%" if target is not None else "its target"
    else:
        total = group.get("total")
        extra = result.extra if isinstance(result.extra, Mapping) else {}
        noun = extra.get("per_noun") or extra.get("total_column") or ""
        counts = (f"{_count(group.get('events'))} over {_count(total)} {noun}".rstrip() if is_number(total)
                  else _count(group.get("events")))
        against = f"{float(target):,.4g} {rate_unit(result)}" if target is not None else "its target"
    inside = f"{counts}; {interval}" if interval else counts
    figures = f"{events_subject(result)}: {shown} overall ({inside}), against a target of {against}."
    size = f"{shown} ({interval})" if interval else shown
    return figures, size, target, decimals


def _against_target(result: Result, settings: Settings, context: Any, n_family: int | None) -> Parts:
    figures, size, target, decimals = _target_figures(result)
    ev = _evidence(result, settings, n_family)
    est = result.estimate
    if est is None or not is_number(est.value) or target is None:
        return figures, f"{ev.words.capitalize()} ({ev.p_text}).", size, f"{ev.words} ({ev.p_text})"
    gap = float(est.value) - target
    side = "above" if gap >= 0 else "below"
    if _binomial(result):
        amount = f"{_n(abs(gap) * 100, 1)} percentage points"
    else:
        amount = f"{_n(abs(gap), decimals)} {rate_unit(result)}"
    low, high = est.ci_low, est.ci_high
    outside = is_number(low) and is_number(high) and not (float(low) <= target <= float(high))
    verdict = _verdict(ev, "a difference", interval_excludes=outside)
    return figures, f"That is {amount} {side} the target: {verdict}.", size, f"{ev.words} ({ev.p_text})"


def _flipped(result: Result, value: float, low: Any, high: Any, *, ratio: bool) -> tuple[float, Any, Any, bool]:
    """A difference or ratio turned round so the first group is the higher one (two-sided questions)."""
    below = value < 1.0 if ratio else value < 0.0
    if not below or _one_sided(result):
        return value, low, high, False
    if ratio:
        return (
            1.0 / value if value > 0 else float("inf"),
            1.0 / high if is_number(high) and high > 0 else None,
            1.0 / low if is_number(low) and low > 0 else None,
            True,
        )
    return -value, (-high if is_number(high) else None), (-low if is_number(low) else None), True


def _two_shares(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    est = result.estimate
    if est is None or not is_number(est.value) or est.kind is not EstimateKind.SHARE_DIFFERENCE:
        return _groups_answer(result, settings, n_family)
    return _share_difference_answer(result, settings, n_family, subject=events_subject(result))


def _two_rates(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    eff, est = result.effect, result.estimate
    if eff is None or not is_number(eff.value) or len(eff.levels) < 2:
        return _groups_answer(result, settings, n_family)
    ev = _evidence(result, settings, n_family)
    first, second = (named(result, label) for label in eff.levels[:2])
    ratio, r_low, r_high, flipped = _flipped(result, float(eff.value), eff.ci_low, eff.ci_high, ratio=True)
    if flipped:
        first, second = second, first
    r_decimals = 2
    r_interval = _interval(result, r_low, r_high, r_decimals)
    times = f"{_n(ratio, r_decimals)} times"
    answer = f"The rate in {first} was {times} the rate in {second}"
    if r_interval:
        answer += f" ({r_interval})"
    if est is not None and is_number(est.value):
        diff, d_low, d_high, _ = _flipped(result, float(est.value), est.ci_low, est.ci_high, ratio=False)
        if flipped and diff < 0:  # the ratio and the difference always point the same way
            diff, d_low, d_high = -diff, (-d_high if is_number(d_high) else None), (-d_low if is_number(d_low) else None)
        decimals = decimals_for(diff, d_low, d_high)
        d_interval = _interval(result, d_low, d_high, decimals)
        higher = f"{_n(diff, decimals)} {rate_unit(result)} higher"
        answer += f", {higher}" + (f" ({d_interval})" if d_interval else "")
    size = f"{times} ({r_interval})" if r_interval else times
    verdict = _verdict(ev, "a difference", interval_excludes=_excludes_null(r_low, r_high, 1.0))
    return f"{answer}: {verdict}.", size, f"{ev.words} ({ev.p_text})"


def _groups_answer(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    """Three or more groups: the evidence of a difference, the widest gap, the pairs that stand out."""
    ev = _evidence(result, settings, n_family)
    by = result.exposure or "the groups"
    gap = size = ""
    est, eff = result.estimate, result.effect
    if _binomial(result) and est is not None and est.kind is EstimateKind.LARGEST_SHARE_GAP and is_number(est.value):
        low = _n(float(est.ci_low) * 100, 1) if is_number(est.ci_low) else ""
        high = _n(float(est.ci_high) * 100, 1) if is_number(est.ci_high) else ""
        size, gap = widest_gap_clause(result, low, high, f"{_n(float(est.value) * 100, 1)} percentage points")
    elif not _binomial(result) and eff is not None and is_number(eff.value) and len(eff.levels) == 2:
        low = _n(eff.ci_low, 2) if is_number(eff.ci_low) else ""
        high = _n(eff.ci_high, 2) if is_number(eff.ci_high) else ""
        size, gap = widest_gap_clause(result, low, high, f"a rate {_n(eff.value, 2)} times as high")
    what = events_subject(result) if _binomial(result) else f"the rate of {events_subject(result)}"
    if ev.significant:
        flagged = [f for f in result.followups if f.flagged]
        noun = "groups" if _binomial(result) else "pairs"
        verb = "stands" if len(flagged) == 1 else "stand"
        stand = f"; {len(flagged)} of the {noun} below {verb} out" if flagged else ""
        text = f"{ev.words.capitalize()} that {what} differs by {by} ({ev.p_text}){gap}{stand}."
    else:
        text = f"With {ev.words} ({ev.p_text}) the data are compatible with no difference by {by}{gap}."
    return text, size, f"{ev.words} ({ev.p_text})"


def event_parts(result: Result, settings: Settings, context: Any, n_family: int | None) -> Parts:
    """(figures, answer, size, evidence) of an event design's result (``readings.register_parts``)."""
    if result.design in (Design.ONE_SAMPLE_POOLED_SHARE, Design.ONE_SAMPLE_RATE):
        return _against_target(result, settings, context, n_family)
    figures = _figures(result)
    if len(_groups(result)) == 2:
        maker = _two_shares if _binomial(result) else _two_rates
        answer, size, evidence = maker(result, settings, n_family)
    else:
        answer, size, evidence = _groups_answer(result, settings, n_family)
    if not answer:
        answer, size, evidence = _table_answer(result, settings, n_family)
    return figures, answer, size, evidence


for _design in (Design.ONE_SAMPLE_POOLED_SHARE, Design.GROUP_POOLED_SHARES, Design.ONE_SAMPLE_RATE,
                Design.GROUP_RATES):
    register_parts(_design, event_parts)


# ---------------------------------------------------------------- follow-ups


def _p_text(followup: Followup) -> str:
    p = followup.p_adjusted if is_number(followup.p_adjusted) else followup.p_value
    word = "adjusted p" if is_number(followup.p_adjusted) else "p"
    return fmt_p(p).replace("p ", f"{word} ", 1)


def pair_reading(followup: Followup, parent: Result, settings: Settings) -> str:
    """'South vs North: the rate in South was 2.01 times the rate in North (95% CI ...); strong evidence ...'."""
    first, second = (list(followup.levels) + ["", ""])[:2]
    est = followup.estimate
    size = ""
    if est is not None and is_number(est.value) and est.value > 0:
        ratio, low, high = float(est.value), est.ci_low, est.ci_high
        if ratio < 1:
            first, second = second, first
            ratio, low, high = (1.0 / ratio, 1.0 / high if is_number(high) and high > 0 else None,
                                1.0 / low if is_number(low) and low > 0 else None)
        ci = fmt_ci(low, high, 2)
        label = followup_ci_label(followup.test, parent.confidence, settings.adjust != AdjustMethod.NONE)
        ci_part = f" ({label} {ci})" if ci else ""
        size = f"the rate in {first} was {fmt_number(ratio, 2)} times the rate in {second}{ci_part}; "
    p = followup.p_adjusted if is_number(followup.p_adjusted) else followup.p_value
    significant = is_number(p) and p < settings.alpha
    verdict = f"{evidence_words(p)} of a difference" if significant else "compatible with no difference"
    label = " vs ".join(str(x) for x in followup.levels)
    return f"{label}: {size}{verdict} ({_p_text(followup)})."


def residual_reading(followup: Followup, parent: Result) -> str:
    """'South: more Positive than expected if the share were the same in every Site; adjusted residual 2.81 ...'."""
    group = str(followup.levels[0]) if followup.levels else "a group"
    z = followup.statistic
    if not is_number(z):
        return f"{group}: no residual could be computed."
    more = "more" if z > 0 else "fewer"
    flag = " (stands out: beyond 2 in size)" if abs(z) > 2 else " (within the range expected by chance)"
    return (
        f"{group}: {more} {parent.outcome or 'events'} than expected if the share were the same in every "
        f"group of {parent.exposure or 'the groups'}; adjusted residual {fmt_number(z, 2)}{flag}."
    )



# ---------------------------------------------------------------- the shape-check sheet's table


def table_headers(result: Result) -> list[str]:
    """Headers of the table of pooled groups: group, events, total, share or rate, interval, rows."""
    extra = result.extra if isinstance(result.extra, Mapping) else {}
    total = str(extra.get("total_column") or "Total")
    value = "Share" if _binomial(result) else f"Rate {rate_unit(result)}"
    return ["Group", str(result.outcome or "Events"), total, value, "CI low", "CI high", "Rows"]


def chart_title(result: Result) -> str:
    """'Positive out of Screened by Site' or 'Positive per 1,000 person-years' for one group."""
    by = f" by {result.exposure}" if result.exposure else ""
    return f"{events_subject(result)}{by}"
