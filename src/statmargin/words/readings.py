"""The reading of a result: two or three plain lines a manager can act on, and its headline.

Line one gives the figures people ask for first: the rate in each group for
a yes/no outcome, the mean or median in each group in the outcome's units, the
share against its target. Line two gives the answer: the difference (or
estimate) with its interval and the strength of evidence, from the adjusted
p-value when there is one. A third line, when it helps, gives the size by a
common rule of thumb. Test names, effect-size names and their sources stay on
the shape-check sheet (``technical``).

Nothing here says a result "proves" anything; a result that is not
statistically clear is read as "compatible with no difference", never as "no
difference". Numbers in one reading share one number of decimals, taken from
the outcome's own precision when the run knows it.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from ..plan.model import Settings
from ..results import Result
from ..vocabulary import AdjustFamily, AdjustMethod, Design, EstimateKind, Test
from . import context as ctx
from .magnitude import NEGLIGIBLE, Magnitude, magnitude
from .numbers import ci_label, evidence_words, fmt_number, fmt_p, is_number
from .questions import (
    EVENT_DESIGNS,
    ONE_SAMPLE,
    PAIRED,
    group_labels,
    named,
    question,
    share_label_and_target,
    two_labels,
    wide_pair,
)
from .sentences import capitalized, say

SHARE_HIDDEN_READING = (
    "The numbers for this analysis are hidden in sharing mode because some counts are small; "
    'the question was "{question}".'
)
# Groups listed by name in a reading; more are summarised by their range.
MAX_LISTED_GROUPS = 6
RANK_TESTS = (Test.MANN_WHITNEY_U, Test.KRUSKAL_WALLIS, Test.WILCOXON_SIGNED_RANK, Test.SPEARMAN_RHO,
              Test.BRUNNER_MUNZEL, Test.RANK_ANOVA_TYPE, Test.SIGN_TEST)


@dataclass(frozen=True)
class Headline:
    """One line of the results sheet's answer block."""

    question: str
    answer: str  # the figures or the finding, in words
    size: str  # the estimate with its interval, in the outcome's units
    evidence: str  # the strength of evidence with its p-value
    not_run: str = ""  # the reason, when no test could be run


# ---------------------------------------------------------------- small pieces


def p_used(result: Result) -> tuple[float | None, bool]:
    """The p-value the reading uses (adjusted when present) and whether it is adjusted."""
    if is_number(result.p_adjusted):
        return float(result.p_adjusted), True
    return (float(result.p_value) if is_number(result.p_value) else None), False


def _units(context: Any, column: str | None) -> str:
    units = ctx.display_units(context, column)
    return f" {units}" if units else ""


def _n(number: Any, decimals: int) -> str:
    return fmt_number(number, decimals)


def _percent(share: Any, decimals: int = 0) -> str:
    if not is_number(share):
        return "hidden"
    return f"{float(share) * 100:.{decimals}f}%"


def _share_decimals(*shares: Any) -> int:
    """Whole percentages, one decimal when a share is within 10 points of 0% or 100%."""
    values = [float(s) for s in shares if is_number(s)]
    return 1 if any(v < 0.1 or v > 0.9 for v in values) else 0


def _family_tail(result: Result, settings: Settings, n_family: int | None) -> str:
    _, adjusted = p_used(result)
    if not adjusted or settings.adjust is AdjustMethod.NONE or settings.family is AdjustFamily.NONE:
        return ""
    if settings.family is AdjustFamily.OUTCOME:
        if result.p_adjusted == result.p_value:
            return ""  # the only question about its outcome, or one at p = 1
        return f" after allowing for the other questions about {result.outcome or 'this outcome'}"
    if n_family and n_family > 1:
        return f" after allowing for the {n_family} questions in this run"
    if n_family is None:
        return " after allowing for the other questions in this run"
    return ""


def _one_sided(result: Result) -> bool:
    return result.alternative in ("greater", "less")


def _interval(result: Result, low: Any, high: Any, decimals: int, units: str = "", scale: float = 1.0) -> str:
    """'95% CI 2.1 to 9.1 minutes', or the one-sided bound, or '' without bounds."""
    label = ci_label(result.confidence)
    lo = float(low) * scale if is_number(low) else None
    hi = float(high) * scale if is_number(high) else None
    if lo is not None and hi is not None:
        return f"{label} {_n(lo, decimals)} to {_n(hi, decimals)}{units}"
    if lo is not None:
        return f"one-sided {label}: at least {_n(lo, decimals)}{units}"
    if hi is not None:
        return f"one-sided {label}: at most {_n(hi, decimals)}{units}"
    return ""


def _excludes_null(low: Any, high: Any, null: float = 0.0) -> bool:
    if is_number(low) and float(low) > null:
        return True
    return is_number(high) and float(high) < null


@dataclass(frozen=True)
class _Evidence:
    significant: bool
    words: str
    p_text: str


def _evidence(result: Result, settings: Settings, n_family: int | None) -> _Evidence:
    p, _ = p_used(result)
    p_text = fmt_p(p) + _family_tail(result, settings, n_family)
    return _Evidence(is_number(p) and p < settings.alpha, evidence_words(p), p_text)


def _verdict(ev: _Evidence, noun: str, *, interval_excludes: bool) -> str:
    """'strong evidence of a difference (p = 0.004)' or the compatible-with-no-difference clause."""
    if ev.significant:
        return f"{ev.words} of {noun} ({ev.p_text})"
    if interval_excludes:
        return (
            f"the interval leaves out no {noun.split()[-1]}, but the evidence is weak once the other "
            f"questions are allowed for ({ev.p_text})"
        )
    return f"with {ev.words} ({ev.p_text}) the data are compatible with no {noun.split()[-1]}"


# ---------------------------------------------------------------- figures by design


def _group_stat(result: Result, key: str) -> list[tuple[str, Any, Any]]:
    rows = []
    for g in result.groups:
        if isinstance(g, Mapping) and g.get("label") is not None and key in g:
            rows.append((str(g["label"]), g.get(key), g.get("n", g.get("count"))))
    return rows


def _centre_key(result: Result) -> str:
    return "median" if result.test in RANK_TESTS else "mean"


def _listed(rows: Sequence[tuple[str, str]], by: str | None) -> str:
    """'North 12.5, South 14.0' or, for many groups, the range with the two extremes named."""
    if len(rows) <= MAX_LISTED_GROUPS:
        return ", ".join(f"{label} {value}" for label, value in rows)
    return f"{len(rows)} groups of {by or 'the groups'}"


def _ordinal_labels(result: Result) -> list[str]:
    """The labels an ordinal outcome's codes 1..k stand for (``extra["outcome_levels"]``); empty otherwise."""
    labels = result.extra.get("outcome_levels") if isinstance(result.extra, Mapping) else None
    return list(labels or [])


def _labelled(result: Result) -> bool:
    """True for an ordinal outcome whose values are the codes 1..k of its labels."""
    return bool(_ordinal_labels(result))


def _level_units(value: Any) -> str:
    """' level' or ' levels': differences of an ordinal outcome's codes count levels."""
    return " level" if is_number(value) and abs(float(value)) == 1 else " levels"


def _level_decimals(*values: Any) -> int:
    """0 decimals for whole numbers of levels (the usual case), else 1."""
    return 0 if all(float(v).is_integer() for v in values if is_number(v)) else 1


def _level_of(result: Result, value: Any) -> str | None:
    """An ordinal outcome's centre as its label ('Good', 'between Good and Very good'); None without labels."""
    labels = _ordinal_labels(result)
    if not labels or not is_number(value):
        return None
    position = float(value) - 1.0  # labels stand for the codes 1..k
    low = min(max(int(math.floor(position + 1e-9)), 0), len(labels) - 1)
    if abs(position - low) < 1e-9 or low == len(labels) - 1:
        return str(labels[low])
    return f"between {labels[low]} and {labels[low + 1]}"


def _groups_line(result: Result, context: Any) -> tuple[str, int]:
    """'Mean Wait: North 12.5, South 14.0 minutes.' with the decimals used."""
    key = _centre_key(result)
    rows = [(label, value) for label, value, _ in _group_stat(result, key) if is_number(value)]
    if result.design in PAIRED:
        rows = rows[:2]  # the third summary is of the differences
    outcome = result.outcome or "the outcome"
    values = [v for _, v in rows]
    decimals = ctx.reading_decimals(context, outcome, *values)
    units = _units(context, outcome)
    if rows and _labelled(result):
        return _level_groups_line(result, rows, key, outcome), decimals
    if not rows:
        return "", decimals
    if len(rows) > 2 and len({v for _, v in rows}) == 1:
        return (
            f"{key.capitalize()} {outcome} was {_n(rows[0][1], decimals)}{units} in each of the "
            f"{len(rows)} groups of {result.exposure}."
        ), decimals
    if len(rows) > MAX_LISTED_GROUPS:
        low = min(rows, key=lambda r: r[1])
        high = max(rows, key=lambda r: r[1])
        return (
            f"{key.capitalize()} {outcome} ranged from {_n(low[1], decimals)}{units} ({low[0]}) to "
            f"{_n(high[1], decimals)}{units} ({high[0]}) across {len(rows)} groups of {result.exposure}."
        ), decimals
    shown = [(named(result, label), _n(value, decimals)) for label, value in rows]
    if wide_pair(result):  # the labels are the two measurement columns: naming the outcome again repeats one
        return f"{key.capitalize()}s: {_listed(shown, result.exposure)}{units}.", decimals
    return f"{key.capitalize()} {outcome}: {_listed(shown, result.exposure)}{units}.", decimals


def _level_groups_line(result: Result, rows: Sequence[tuple[str, Any]], key: str, outcome: str) -> str:
    """'Median Satisfaction: North Good, South Very good.' for an ordinal outcome with labels."""
    levels = [(label, _level_of(result, value) or "") for label, value in rows]
    if len(rows) > 2 and len({level for _, level in levels}) == 1:
        return f"{key.capitalize()} {outcome} was {levels[0][1]} in each of the {len(rows)} groups of {result.exposure}."
    shown = [(named(result, label), level) for label, level in levels]
    return f"{key.capitalize()} {outcome}: {_listed(shown, result.exposure)}."


def _two_group_answer(result: Result, settings: Settings, context: Any, n_family: int | None,
                      decimals: int) -> tuple[str, str, str]:
    est = result.estimate
    outcome = result.outcome or "the outcome"
    units = _units(context, outcome)
    if est is None or not is_number(est.value):
        return "", "", ""
    if _labelled(result):  # a shift of 1..k codes counts levels
        units, decimals = _level_units(est.value), _level_decimals(est.value, est.ci_low, est.ci_high)
    first, second = (named(result, label) for label in two_labels(result))
    value, low, high = float(est.value), est.ci_low, est.ci_high
    if value < 0 and not _one_sided(result):
        first, second = second, first
        value, low, high = -value, (-high if is_number(high) else None), (-low if is_number(low) else None)
    ev = _evidence(result, settings, n_family)
    typical = est.kind in (EstimateKind.LOCATION_SHIFT, EstimateKind.PAIRED_PSEUDO_MEDIAN,
                           EstimateKind.PAIRED_MEDIAN_DIFFERENCE)
    paired = result.design in PAIRED
    within = f" within the same {_pair_noun(result)}" if paired and not wide_pair(result) else (
        " on the same records" if paired else ""
    )
    where = "at" if paired and not wide_pair(result) else "in"
    if typical:
        subject, verb, second = f"Values {where} {first}", "were typically", f"{where} {second}"
    elif paired and not wide_pair(result):
        subject, verb, second = f"Mean {outcome} at {first}", "was", f"at {second}"
    elif paired:
        subject, verb = f"Mean {first}", "was"
    else:
        subject, verb = capitalized(first), "was"
    interval = _interval(result, low, high, decimals, units if _labelled(result) else "")
    size = f"{_n(value, decimals)}{units} ({interval})" if interval else f"{_n(value, decimals)}{units}"
    if value == 0:
        answer = f"{subject} {verb} the same as {second}{within}"
    else:
        answer = f"{subject} {verb} {_n(value, decimals)}{units} higher than {second}{within}"
    if interval:
        answer += f" ({interval})"
    verdict = _verdict(ev, "a difference", interval_excludes=_excludes_null(low, high))
    return f"{answer}: {verdict}.", size, f"{ev.words} ({ev.p_text})"


def _pair_noun(result: Result) -> str:
    if result.pairing and not wide_pair(result):
        return result.pairing
    return "records"


def _multi_group_answer(result: Result, settings: Settings, context: Any, n_family: int | None,
                        decimals: int) -> tuple[str, str, str]:
    ev = _evidence(result, settings, n_family)
    outcome, by = result.outcome or "the outcome", result.exposure or "the groups"
    est = result.estimate
    units = _units(context, outcome)
    size = ""
    gap = ""
    if est is not None and is_number(est.value) and _labelled(result):
        units, decimals = _level_units(est.value), _level_decimals(est.value)
    if est is not None and is_number(est.value) and est.value != 0 and len(est.levels) == 2:
        value = f"{_n(est.value, decimals)}{units}"
        if is_number(est.ci_low) and is_number(est.ci_high):
            size, gap = widest_gap_clause(result, _n(est.ci_low, decimals), f"{_n(est.ci_high, decimals)}{units}",
                                          value)
        else:
            high, low = (named(result, label) for label in est.levels)
            size = f"{value} ({high} over {low}, the widest gap)"
            gap = f"; the widest gap is {high} over {low}, {value}"
    if ev.significant:
        pairs = "; the pairs of groups that stand out are marked below" if any(f.flagged for f in result.followups) else ""
        text = f"{ev.words.capitalize()} that {outcome} differs by {by} ({ev.p_text}){gap}{pairs}."
    else:
        text = f"With {ev.words} ({ev.p_text}) the data are compatible with no difference by {by}{gap}."
    return text, size, f"{ev.words} ({ev.p_text})"


# ---------------------------------------------------------------- shares


def _rates(result: Result, level: str | None) -> list[tuple[str, Any, Any]]:
    """(label, share of ``level``, n) for each group of a table."""
    rows: list[tuple[str, Any, Any]] = []
    for g in result.groups:
        if not isinstance(g, Mapping) or g.get("label") is None:
            continue
        counts = g.get("counts")
        n = g.get("n")
        if isinstance(counts, Mapping) and level is not None and is_number(n) and n > 0:
            count = counts.get(level)
            rows.append((str(g["label"]), (count / n) if is_number(count) else None, n))
        else:
            rows.append((str(g["label"]), None, n))
    return rows


def _table_levels(result: Result) -> list[str]:
    observed = result.extra.get("observed") if isinstance(result.extra, Mapping) else None
    if isinstance(observed, Mapping):
        cols = observed.get("col_labels")
        if isinstance(cols, (list, tuple)):
            return [str(c) for c in cols]
    counts = result.shape.get("counts") if isinstance(result.shape, Mapping) else None
    if isinstance(counts, Mapping) and isinstance(counts.get("col_labels"), (list, tuple)):
        return [str(c) for c in counts["col_labels"]]
    return []


def _event_level(result: Result) -> str | None:
    est = result.estimate
    if est is not None and est.level is not None:
        return est.level
    levels = _table_levels(result)
    return levels[0] if len(levels) == 2 else None


def _level_that_differs_most(result: Result) -> str | None:
    """Of an outcome with several levels, the one whose share varies most across the groups."""
    spreads = []
    for level in _table_levels(result):
        shares = [share for _, share, _ in _rates(result, level) if is_number(share)]
        if len(shares) >= 2:
            spreads.append((max(shares) - min(shares), level))
    return max(spreads)[1] if spreads else None


def _shares_line(result: Result) -> tuple[str, str | None]:
    """'Share with Result = Fail: 12% in North, 22% in South.' and the level counted.

    An outcome of more than two levels is shown by the level whose share differs
    most between the groups, and the line says why that level.
    """
    outcome = result.outcome or "the outcome"
    level = _event_level(result)
    most = ""
    if level is None:
        level = _level_that_differs_most(result)
        most = " (the level whose share differs most)"
    if level is None:
        return f"This compares the mix of {outcome} across the groups of {result.exposure or 'the groups'}.", None
    rows = _rates(result, level)
    if not any(is_number(share) for _, share, _ in rows):
        return "", level
    decimals = _share_decimals(*[share for _, share, _ in rows])
    shown = [(f"in {named(result, label)}", _percent(share, decimals)) for label, share, _ in rows]
    if len(shown) > MAX_LISTED_GROUPS:
        known = [(label, share) for label, share, _ in rows if is_number(share)]
        low = min(known, key=lambda r: r[1])
        high = max(known, key=lambda r: r[1])
        return (
            f"Share with {outcome} = {level}{most} ranged from {_percent(low[1], decimals)} ({low[0]}) to "
            f"{_percent(high[1], decimals)} ({high[0]}) across {len(rows)} groups of {result.exposure}."
        ), level
    listed = ", ".join(f"{value} {where}" for where, value in shown)
    return f"Share with {outcome} = {level}{most}: {listed}.", level


def _share_difference_answer(result: Result, settings: Settings, n_family: int | None,
                             subject: str | None = None) -> tuple[str, str, str]:
    """The difference in a share in percentage points; ``subject`` names the share (default: from the outcome)."""
    est = result.estimate
    ev = _evidence(result, settings, n_family)
    if est is None or not is_number(est.value):
        return _table_answer(result, settings, n_family)
    first, second = (named(result, label) for label in two_labels(result))
    value, low, high = float(est.value), est.ci_low, est.ci_high
    if value < 0 and not _one_sided(result):
        first, second = second, first
        value, low, high = -value, (-high if is_number(high) else None), (-low if is_number(low) else None)
    where = "at" if result.design == Design.PAIRED_CATEGORICAL else "in"
    first, second = f"{where} {first}", f"{where} {second}"
    decimals = 1
    interval = _interval(result, low, high, decimals, scale=100.0)
    points = f"{_n(value * 100, decimals)} percentage points"
    size = f"{points} ({interval})" if interval else points
    level = est.level
    outcome = result.outcome or "the outcome"
    subject = subject or (
        f"The share with the value {level}" if level is not None and wide_pair(result)
        else f"The share with {outcome} = {level}" if level is not None
        else "The share"
    )
    answer = f"{subject} was {points} higher {first} than {second}"
    if interval:
        answer += f" ({interval})"
    verdict = _verdict(ev, "a difference", interval_excludes=_excludes_null(low, high))
    return f"{answer}: {verdict}.", size, f"{ev.words} ({ev.p_text})"


def widest_gap_clause(result: Result, low: Any, high: Any, gap: str) -> tuple[str, str]:
    """(size, clause) of a widest gap between groups: '8.0 percentage points (95% CI ...)' and its sentence part.

    The interval holds for all pairs of groups together (the widest is picked after
    looking), and the clause says so in words.
    """
    est = result.estimate
    assert est is not None and len(est.levels) == 2
    high_name, low_name = (named(result, label) for label in est.levels)
    pairs = len(result.groups) * (len(result.groups) - 1) // 2 if result.groups else 0
    allowing = f", allowing for the {pairs} pairs of groups" if pairs > 1 else ""
    interval = f"{low} to {high}" if low and high else ""
    label = ci_label(result.confidence)
    stated = f"{gap} ({label} {interval}{allowing})" if interval else gap
    clause = f"; the widest gap is {high_name} over {low_name}, {stated}"
    return f"{gap}, {high_name} over {low_name}" + (f" ({label} {interval})" if interval else ""), clause


def _widest_share_answer(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    """Three or more groups, a two-level outcome: the evidence and the widest gap in points with its interval."""
    est = result.estimate
    assert est is not None and is_number(est.value)
    scale = 100.0
    low = _n(float(est.ci_low) * scale, 1) if is_number(est.ci_low) else ""
    high = _n(float(est.ci_high) * scale, 1) if is_number(est.ci_high) else ""
    size, clause = widest_gap_clause(result, low, high, f"{_n(float(est.value) * scale, 1)} percentage points")
    ev = _evidence(result, settings, n_family)
    outcome, by = result.outcome or "the outcome", result.exposure or "the groups"
    if ev.significant:
        text = f"{ev.words.capitalize()} that {outcome} differs by {by} ({ev.p_text}){clause}."
    else:
        text = f"With {ev.words} ({ev.p_text}) the data are compatible with no difference by {by}{clause}."
    return text, size, f"{ev.words} ({ev.p_text})"


def _table_answer(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    ev = _evidence(result, settings, n_family)
    outcome, by = result.outcome or "the outcome", result.exposure or "the groups"
    if ev.significant:
        text = f"{ev.words.capitalize()} that {outcome} differs by {by} ({ev.p_text})."
    else:
        text = f"With {ev.words} ({ev.p_text}) the data are compatible with no difference by {by}."
    return text, "", f"{ev.words} ({ev.p_text})"


# ---------------------------------------------------------------- one sample and two measures


def _one_share(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str, str]:
    est = result.estimate
    outcome = result.outcome or "the outcome"
    label, target = share_label_and_target(result)
    ev = _evidence(result, settings, n_family)
    if est is None or not is_number(est.value):
        return "", *_table_answer(result, settings, n_family)
    decimals = _share_decimals(est.value, target)
    interval = _interval(result, est.ci_low, est.ci_high, decimals, "%", scale=100.0)
    n = ctx.count_text(result.n)
    if result.test == Test.BINOMIAL_EXACT:
        figures = f"{_percent(est.value, decimals)} of {n} records had {outcome} = {label} ({interval})."
    else:
        figures = (
            f"The share furthest from its stated value was {label}: {_percent(est.value, decimals)} of {n} "
            f"records ({interval})."
        )
    if target is None:
        return figures, f"{ev.words.capitalize()} ({ev.p_text}).", _percent(est.value, decimals), f"{ev.words} ({ev.p_text})"
    gap = float(est.value) - target
    side = "above" if gap >= 0 else "below"
    points = f"{_n(abs(gap) * 100, 1)} points {side} the stated {_percent(target, decimals)}"
    low, high = est.ci_low, est.ci_high
    outside = is_number(low) and is_number(high) and not (float(low) <= target <= float(high))
    verdict = _verdict(ev, "a difference", interval_excludes=outside)
    return figures, f"That is {points}: {verdict}.", f"{_percent(est.value, decimals)} ({interval})", f"{ev.words} ({ev.p_text})"


def _one_value(result: Result, settings: Settings, context: Any, n_family: int | None) -> tuple[str, str, str, str]:
    est = result.estimate
    outcome = result.outcome or "the outcome"
    units = _units(context, outcome)
    ev = _evidence(result, settings, n_family)
    mu = float(result.against) if is_number(result.against) else None
    if est is None or not is_number(est.value) or mu is None:
        return "", f"{ev.words.capitalize()} ({ev.p_text}).", "", f"{ev.words} ({ev.p_text})"
    if est.kind is EstimateKind.MEAN_DIFFERENCE_FROM_VALUE:
        centre, low, high, word = mu + float(est.value), _shift(est.ci_low, mu), _shift(est.ci_high, mu), "Mean"
    else:
        word = "Median" if est.kind is EstimateKind.MEDIAN else "Typical"
        centre, low, high = float(est.value), est.ci_low, est.ci_high
    decimals = ctx.reading_decimals(context, outcome, centre, low, high)
    interval = _interval(result, low, high, decimals)
    figures = f"{word} {outcome} was {_n(centre, decimals)}{units} ({interval}), against a stated {mu:g}{units}."
    gap = centre - mu
    if _labelled(result):  # codes 1..k read back as their labels; the gap counts levels
        bounds = f"{_level_of(result, low)} to {_level_of(result, high)}" if is_number(low) and is_number(high) else ""
        figures = (f"{word} {outcome} was {_level_of(result, centre)}" + (f" ({ci_label(result.confidence)} {bounds})" if bounds else "")
                   + f", against a stated {_level_of(result, mu)}.")
        units, decimals = _level_units(gap), _level_decimals(gap)
    side = "above" if gap >= 0 else "below"
    outside = is_number(low) and is_number(high) and not (float(low) <= mu <= float(high))
    verdict = _verdict(ev, "a difference", interval_excludes=outside)
    answer = f"That is {_n(abs(gap), decimals)}{units} {side} the stated value: {verdict}."
    return figures, answer, f"{_n(centre, decimals)}{units} ({interval})", f"{ev.words} ({ev.p_text})"


def _shift(value: Any, mu: float) -> float | None:
    return float(value) + mu if is_number(value) else None


def _correlation(result: Result, settings: Settings, n_family: int | None) -> tuple[str, str, str]:
    est = result.estimate
    outcome, by = result.outcome or "the outcome", result.exposure or "the other measure"
    ev = _evidence(result, settings, n_family)
    if est is None or not is_number(est.value):
        return "", "", f"{ev.words} ({ev.p_text})"
    kind = "rank correlation" if result.test == Test.SPEARMAN_RHO else "correlation"
    decimals = 2
    interval = _interval(result, est.ci_low, est.ci_high, decimals)
    value = float(est.value)
    tendency = (
        f"higher {by} went with higher {outcome}" if value > 0
        else f"higher {by} went with lower {outcome}" if value < 0
        else f"{by} and {outcome} did not move together"
    )
    figures = f"The {kind} between {outcome} and {by} was {_n(value, decimals)} ({interval}): {tendency}."
    verdict = _verdict(ev, "an association", interval_excludes=_excludes_null(est.ci_low, est.ci_high))
    return figures, f"{verdict[:1].upper()}{verdict[1:]}.", f"{_n(value, decimals)} ({interval})"


# ---------------------------------------------------------------- size words


def _count_sources(result: Result) -> list[Mapping[str, Any]]:
    """Where counts may sit: the shape checks, their "counts" entry, or ``extra``."""
    sources: list[Mapping[str, Any]] = []
    for source in (result.shape, result.extra):
        if isinstance(source, Mapping):
            sources.append(source)
            if isinstance(source.get("counts"), Mapping):
                sources.append(source["counts"])
    return sources


def min_expected(result: Result) -> float | None:
    for source in _count_sources(result):
        if isinstance(source, Mapping) and is_number(source.get("min_expected")):
            return float(source["min_expected"])
    return None



def _table_min_dim(result: Result) -> int | None:
    """The smaller side of a contingency table, from the expected or observed counts."""
    for source in (result.shape, result.extra, result.shape.get("counts") if isinstance(result.shape, Mapping) else None):
        if not isinstance(source, Mapping):
            continue
        for key in ("expected", "observed"):
            table = source.get(key)
            if isinstance(table, Mapping):
                table = table.get("values")
            if isinstance(table, Sequence) and table and isinstance(table[0], Sequence):
                return min(len(table), len(table[0]))
    return None


def effect_magnitude(result: Result) -> Magnitude | None:
    """The size word for the result's effect (None when no convention applies).

    Rows of events get none: Cohen's h and Cramer's V call any gap between shares
    of rare events negligible, and rate ratios have no convention; their readings
    give the difference in points or how many times one rate is the other.
    """
    eff = result.effect
    if eff is None or result.design in EVENT_DESIGNS:
        return None
    return magnitude(eff.kind, eff.value, table_min_dim=_table_min_dim(result))


def _size_line(result: Result, settings: Settings) -> str:
    """'By a common rule of thumb this is a medium difference.' for a clear result with a size word."""
    p, _ = p_used(result)
    mag = effect_magnitude(result)
    if mag is None or not is_number(p) or p >= settings.alpha:
        return ""
    if result.estimate is not None and result.estimate.kind in (
        EstimateKind.SHARE_DIFFERENCE, EstimateKind.PAIRED_SHARE_DIFFERENCE
    ):
        return ""  # points of difference speak for themselves; odds-ratio words would mislead
    noun = "association" if result.design == Design.TWO_CONTINUOUS else (
        "departure" if result.design in ONE_SAMPLE else "difference"
    )
    if mag.word == NEGLIGIBLE:
        return f"By a common rule of thumb this is a negligible {noun}: judge whether it matters in practice."
    return f"By a common rule of thumb this is a {mag.word} {noun}."


def _one_sided_line(result: Result) -> str:
    if not _one_sided(result):
        return ""
    first, second = two_labels(result)
    if result.design in ONE_SAMPLE:
        return f"This was a one-sided question: is the value {'above' if result.alternative == 'greater' else 'below'} the stated one?"
    direction = "higher" if result.alternative == "greater" else "lower"
    return f"This was a one-sided question: is {named(result, first)} {direction} than {named(result, second)}?"


# ---------------------------------------------------------------- the reading


Parts = tuple[str, str, str, str]  # figures, answer, size, evidence
PartsMaker = Callable[[Result, Settings, Any, "int | None"], Parts]
# Designs whose words live in another module register their maker here (``register_parts``).
PARTS_BY_DESIGN: dict[Design, PartsMaker] = {}


def register_parts(design: Design, maker: PartsMaker) -> None:
    """Let a design's own words module make its reading parts (figures, answer, size, evidence)."""
    PARTS_BY_DESIGN[design] = maker


def _parts(result: Result, settings: Settings, context: Any, n_family: int | None) -> Parts:
    """(figures, answer, size, evidence) for a result that was run."""
    design = result.design
    if design in PARTS_BY_DESIGN:
        return PARTS_BY_DESIGN[design](result, settings, context, n_family)
    if design in (Design.TWO_GROUP_CONTINUOUS, Design.PAIRED_CONTINUOUS):
        figures, decimals = _groups_line(result, context)
        answer, size, evidence = _two_group_answer(result, settings, context, n_family, decimals)
        return figures, answer, size, evidence
    if design == Design.MULTI_GROUP_CONTINUOUS:
        figures, decimals = _groups_line(result, context)
        answer, size, evidence = _multi_group_answer(result, settings, context, n_family, decimals)
        return figures, answer, size, evidence
    if design in (Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL):
        figures, _ = _shares_line(result)
        if result.estimate is not None and result.estimate.kind in (
            EstimateKind.SHARE_DIFFERENCE, EstimateKind.PAIRED_SHARE_DIFFERENCE
        ):
            answer, size, evidence = _share_difference_answer(result, settings, n_family)
        elif (result.estimate is not None and result.estimate.kind is EstimateKind.LARGEST_SHARE_GAP
              and is_number(result.estimate.value)):
            answer, size, evidence = _widest_share_answer(result, settings, n_family)
        else:
            answer, size, evidence = _table_answer(result, settings, n_family)
        return figures, answer, size, evidence
    if design == Design.ONE_SAMPLE_CATEGORICAL:
        return _one_share(result, settings, n_family)
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        return _one_value(result, settings, context, n_family)
    if design == Design.TWO_CONTINUOUS:
        figures, answer, size = _correlation(result, settings, n_family)
        ev = _evidence(result, settings, n_family)
        return figures, answer, size, f"{ev.words} ({ev.p_text})"
    ev = _evidence(result, settings, n_family)
    return "", f"{ev.words.capitalize()} ({ev.p_text}).", "", f"{ev.words} ({ev.p_text})"


def _hidden(result: Result) -> bool:
    hidden = result.extra.get("suppressed", ()) if isinstance(result.extra, Mapping) else ()
    return "p_value" in hidden


def reading(result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None) -> str:
    """The two- or three-line plain reading of a result (lines separated by newlines).

    Parameters
    ----------
    result : Result
        A finished (or skipped) analysis.
    settings : Settings
        Run settings (``alpha`` separates "statistically clear" from not).
    context : ReportContext or Mapping, optional
        Supplies ``units`` and ``decimals`` per column (or is itself a dict column -> units).
    n_comparisons : int, optional
        How many questions with a p-value the run asked (the family adjusted together).
    """
    if result.skipped:
        return f'No test was run for the question "{question(result)}": {say(result.skipped).rstrip(".")}.'
    if _hidden(result):
        return SHARE_HIDDEN_READING.format(question=question(result))
    figures, answer, _, _ = _parts(result, settings, context, n_comparisons)
    lines = [line for line in (figures, answer, _one_sided_line(result), _size_line(result, settings)) if line]
    return "\n".join(lines[:3])


def headline(result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None) -> Headline:
    """The result's line in the answer block: the finding, its size with interval, the evidence."""
    asked = question(result)
    if result.skipped:
        return Headline(asked, "", "", "", not_run=say(result.skipped))
    if _hidden(result):
        return Headline(asked, SHARE_HIDDEN_READING.format(question=asked), "", "")
    figures, answer, size, evidence = _parts(result, settings, context, n_comparisons)
    return Headline(asked, figures or answer, size, evidence)


def group_names(result: Result) -> list[str]:
    """The result's group labels as readings name them."""
    return [named(result, label) for label in group_labels(result)]
