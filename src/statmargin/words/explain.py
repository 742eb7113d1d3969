"""Every sentence statmargin shows a person: readings, cautions and technical notes.

All wording lives here so it can be reviewed in one place. The reading of an
analysis is one or two plain sentences: the question's answer as an estimate in
the outcome's own units with its confidence interval, the strength of evidence
(from the adjusted p-value when there is one), and the size of the effect with
the rule of thumb that gave the size word. Cautions are separate plain
sentences; the last one is always the review line (``REVIEW_LINE``).

Nothing here ever says a result "proves" anything, and a result that is not
statistically clear is read as "compatible with no difference", never as "no
difference".
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from ..plan.model import Settings
from ..results import Estimate, Followup, Result
from ..vocabulary import AdjustMethod, Design, EstimateKind, PMethod, Test
from ..vocabulary.codes import Note
from .magnitude import NEGLIGIBLE, Magnitude, effect_kind, magnitude
from .numbers import (
    ci_label,
    decimals_for,
    evidence_words,
    fmt_ci,
    fmt_df,
    fmt_number,
    fmt_p,
    fmt_percent,
    is_number,
)
from .sentences import say

# Human names of the tests (published methods keep their published names).
TEST_NAMES: dict[str, str] = {
    Test.CHI_SQUARE_GOODNESS_OF_FIT: "Chi-square goodness-of-fit test",
    Test.BINOMIAL_EXACT: "Exact binomial test",
    Test.ONE_SAMPLE_T: "One-sample t-test",
    Test.WILCOXON_SIGNED_RANK: "Wilcoxon signed-rank test",
    Test.CHI_SQUARE_INDEPENDENCE: "Chi-square test of independence",
    Test.FISHER_EXACT: "Fisher's exact test",
    Test.STUDENT_T: "Student's t-test",
    Test.WELCH_T: "Welch's t-test",
    Test.MANN_WHITNEY_U: "Mann-Whitney U test",
    Test.ONE_WAY_ANOVA: "One-way ANOVA",
    Test.WELCH_ANOVA: "Welch's ANOVA",
    Test.KRUSKAL_WALLIS: "Kruskal-Wallis test",
    Test.PEARSON_R: "Pearson correlation",
    Test.SPEARMAN_RHO: "Spearman rank correlation",
    Test.PAIRED_T: "Paired t-test",
    Test.MCNEMAR: "McNemar's test",
    Test.TUKEY_HSD: "Tukey HSD",
    Test.GAMES_HOWELL: "Games-Howell",
    Test.DUNN: "Dunn's test",
    Test.ADJUSTED_RESIDUAL: "Adjusted standardized residual",
}

# Names of the shape checks (shape.GroupSummary.check) for the shape-check sheet.
CHECK_NAMES: dict[str, str] = {
    "shapiro_wilk": "Shapiro-Wilk",
    "moment_z": "skewness and kurtosis z-tests",
    "moment_limits": "skewness and kurtosis limits",
    "too_few": "too few values to check",
    "constant": "all values equal",
}

ADJUST_NAMES: dict[str, str] = {
    AdjustMethod.HOLM.value: "Holm",
    AdjustMethod.BH.value: "Benjamini-Hochberg",
    AdjustMethod.NONE.value: "no adjustment",
}

REVIEW_LINE = (
    "Decisions affecting people's health or services should be reviewed by a qualified "
    "analyst and follow local policy."
)
CAUSATION_LINE = (
    "An association between two measures does not show that one causes the other; "
    "other differences between the groups may explain it."
)
OBSERVATIONAL_LINE = (
    "These are routinely collected records, not a designed study: they may not represent "
    "everyone the service reaches, and groups may differ in ways the data do not record."
)
EXPECTED_LINE = (
    "Some expected counts are below 5 (smallest {smallest}), so the usual chi-square "
    "approximation may be poor (Cochran's rule, common practice); {p_how}."
)
SMALL_GROUPS_LINE = (
    "Some groups have fewer than {limit} records, so their estimates are imprecise and the "
    "shape checks can miss problems."
)
SMALL_SAMPLE_LINE = (
    "Fewer than {limit} records were used, so the estimate is imprecise and the shape "
    "checks can miss problems."
)
UNEQUAL_GROUPS_LINE = (
    "Group sizes are unequal (the largest is at least {ratio} times the smallest), which makes "
    "results more sensitive to differences in spread between groups."
)
MULTIPLE_LINE = (
    "This run made {count} comparisons; the adjusted p-value ({method}) allows for that, so "
    "read each result alongside the others."
)
UNADJUSTED_LINE = (
    "This run made {count} comparisons and no adjustment was asked for, so some small "
    "p-values are expected by chance alone; read each result alongside the others."
)


def multiple_line(count: int, settings: Any) -> str:
    """The several-comparisons caution, worded for the adjustment method in use."""
    key = getattr(settings.adjust, "value", str(settings.adjust))
    if key == AdjustMethod.NONE.value:
        return UNADJUSTED_LINE.format(count=count)
    return MULTIPLE_LINE.format(count=count, method=ADJUST_NAMES.get(key, str(settings.adjust)))
EXCLUDED_LINE = (
    "{count} {records} left out (blank, unreadable or incomplete values; see the data "
    "notes); if they differ from the others, the result may be biased."
)
TINY_EFFECT_LINE = (
    "The result is statistically clear but the effect is negligible in size by a common rule "
    "of thumb ({source}); with many records even very small differences reach significance, "
    "so judge whether it matters in practice."
)
UNDERPOWERED_LINE = (
    "The effect looks {word} in size by a common rule of thumb ({source}), but the evidence "
    "is weak because few records were used; a larger sample would be needed to tell."
)

SHARE_NOTE = (
    "Sharing mode: counts below {floor}, and shares or summaries that would reveal them, are "
    "hidden on the statmargin sheets. The data sheet itself still holds record-level data; "
    "remove it before sharing this file."
)
SHARE_CAUTION = (
    "Some numbers for this analysis are hidden in sharing mode because a group or cell has "
    "fewer than {floor} records."
)
SHARE_HIDDEN_READING = (
    "The numbers for this analysis are hidden in sharing mode because some counts are small; "
    'the question was "{question}".'
)

# Small and unequal groups (common practice; no single published source).
SMALL_GROUP_LIMIT = 10
SMALL_SAMPLE_LIMIT = 20
UNEQUAL_RATIO = 2.0

_ONE_SAMPLE = (Design.ONE_SAMPLE_CONTINUOUS, Design.ONE_SAMPLE_CATEGORICAL)
_PAIRED = (Design.PAIRED_CONTINUOUS, Design.PAIRED_CATEGORICAL)


# ---------------------------------------------------------------- context lookups


def _context_get(context: Any, name: str, default: Any = None) -> Any:
    if context is None:
        return default
    if isinstance(context, Mapping):
        return context.get(name, default)
    return getattr(context, name, default)


def units_for(context: Any, column: str | None) -> str:
    """The units of ``column`` from ``context`` (a ReportContext, or a dict column->units)."""
    if not column:
        return ""
    units = _context_get(context, "units", None)
    if units is None and isinstance(context, Mapping):
        units = context
    if isinstance(units, Mapping):
        value = units.get(column)
        return str(value) if isinstance(value, str) and value.strip() else ""
    return ""


def _display_units(context: Any, column: str | None) -> str:
    """Units to write after numbers; none when the column name already says them."""
    units = units_for(context, column)
    said = units and re.search(rf"\b{re.escape(units.lower())}\b", (column or "").lower())
    return "" if said else units


def _observational(context: Any) -> bool:
    value = _context_get(context, "observational", True)
    return bool(value) if isinstance(value, bool) else True


def _share_floor(context: Any) -> int | None:
    """The sharing-mode minimum count, when sharing mode is on."""
    if not _context_get(context, "share_mode", False):
        return None
    floor = _context_get(context, "share_min_count", None)
    return int(floor) if isinstance(floor, int) and floor > 1 else 11  # share.DEFAULT_MIN_COUNT


def count_text(count: int, context: Any = None) -> str:
    """A record count for a sentence; in sharing mode a small count becomes 'fewer than N'."""
    floor = _share_floor(context)
    if floor is not None and 0 < count < floor:
        return f"fewer than {floor}"
    return f"{count:,}"


# ---------------------------------------------------------------- labels and questions


def _group_labels(result: Result) -> list[str]:
    return [
        str(g.get("label"))
        for g in result.groups
        if isinstance(g, Mapping) and g.get("label") is not None
    ]


def _named(result: Result, label: str) -> str:
    """A group label that is a bare number gets its column's name: '2' -> 'group 2'."""
    try:
        float(label)
    except (TypeError, ValueError):
        return label
    return f"{result.exposure} {label}" if result.exposure else label


def _wide_pair(result: Result) -> bool:
    """A pair of measurement columns (``pairing`` is the second column, no compare-by column)."""
    return result.design in _PAIRED and not result.exposure and bool(result.pairing)


def two_labels(result: Result) -> tuple[str, str]:
    """The two compared labels, first minus second (from the estimate, else the groups)."""
    est = result.estimate
    if est is not None and est.kind is EstimateKind.PAIRED_SHARE_DIFFERENCE:
        if _wide_pair(result):
            return result.outcome, str(result.pairing)
        return "the first measurement", "the second measurement"
    if est is not None and len(est.levels) >= 2:
        return est.levels[0], est.levels[1]
    labels = _group_labels(result)
    if len(labels) >= 2:
        return labels[0], labels[1]
    return "the first group", "the second group"


def _against_text(against: Any) -> str:
    if isinstance(against, Mapping):
        return ", ".join(f"{k} {fmt_percent(v)}" for k, v in against.items())
    if is_number(against):
        return f"{float(against):g}"
    return str(against) if against is not None else "the stated value"


def question(result: Result) -> str:
    """The analysis as a question in words, e.g. 'Does Wait differ by District?'."""
    outcome, by = result.outcome or "the outcome", result.exposure or "the groups"
    design = result.design
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        return f"Does {outcome} differ from {_against_text(result.against)}?"
    if design == Design.ONE_SAMPLE_CATEGORICAL:
        if result.test == Test.BINOMIAL_EXACT:
            label, target = _share_label_and_target(result)
            if target is not None:
                return f"Does the share of {outcome} = {label} differ from {fmt_percent(target)}?"
        return f"Do the shares of {outcome} differ from the stated shares ({_against_text(result.against)})?"
    if design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS):
        return f"Does {outcome} differ by {by}?"
    if design == Design.TWO_CATEGORICAL:
        return f"Does the mix of {outcome} differ by {by}?"
    if design == Design.TWO_CONTINUOUS:
        return f"Do {outcome} and {by} go together?"
    if design in _PAIRED:
        if _wide_pair(result):
            what = "the mix of values" if design == Design.PAIRED_CATEGORICAL else "the value"
            return f"Does {what} change from {outcome} to {result.pairing} on the same records?"
        first, second = (_named(result, label) for label in two_labels(result))
        pairing = f" (paired by {result.pairing})" if result.pairing else ""
        what = "the share of " if design == Design.PAIRED_CATEGORICAL else ""
        return f"Does {what}{outcome} change between {first} and {second}{pairing}?"
    return f"What does {outcome} show?"


# ---------------------------------------------------------------- the reading


def _p_used(result: Result) -> tuple[float | None, bool]:
    """The p-value the reading uses (adjusted when present) and whether it is adjusted."""
    if is_number(result.p_adjusted):
        return float(result.p_adjusted), True
    return (float(result.p_value) if is_number(result.p_value) else None), False


def _units_suffix(units: str) -> str:
    return f" {units}" if units else ""


def _difference_sentence(
    result: Result, est: Estimate, subject: str, units: str, *, within: str = "in", how: str = ""
) -> str:
    """'Mean Wait was 1.58 minutes higher in B than in A (95% CI -0.21 to 3.37).'

    A negative estimate (first minus second) is said the other way round, with
    the interval flipped, so the sentence always says "higher".
    """
    first, second = (_named(result, label) for label in two_labels(result))
    value, low, high = est.value, est.ci_low, est.ci_high
    if is_number(value) and value < 0:
        first, second = second, first
        value = -value
        low, high = (-high if is_number(high) else None), (-low if is_number(low) else None)
    decimals = decimals_for(value, low, high)
    if _wide_pair(result):
        same, within = " on the same records", "in"
        subject = subject.replace(f"Mean {result.outcome} was", "Mean values were").replace(
            f"Values of {result.outcome} were", "Values were"
        )
    else:
        same = f" within the same {result.pairing}" if result.pairing else ""
    inner = "; ".join(
        x
        for x in (
            how,
            f"{ci_label(result.confidence)} {fmt_ci(low, high, decimals)}"
            if fmt_ci(low, high, decimals)
            else "",
        )
        if x
    )
    tail = f" ({inner})" if inner else ""
    if value == 0:
        return f"{subject} the same {within} {first} and {second}{same}{tail}."
    return (
        f"{subject} {fmt_number(value, decimals)}{_units_suffix(units)} higher "
        f"{within} {first} than {within} {second}{same}{tail}."
    )


def _ci_tail(result: Result, low: Any, high: Any, decimals: int, scale: float = 1.0) -> str:
    text = fmt_ci(low, high, decimals, scale=scale)
    return f" ({ci_label(result.confidence)} {text})" if text else ""


def _estimate_sentence(result: Result, context: Any) -> str:
    """The first sentence: the estimate in the outcome's units, with its interval."""
    est = result.estimate
    outcome = result.outcome or "the outcome"
    units = _display_units(context, result.outcome)
    test, design = result.test, result.design
    if est is None or not is_number(est.value):
        if design == Design.TWO_CATEGORICAL:
            return f"This compares the mix of {outcome} across the groups of {result.exposure or 'the other column'}."
        return _groups_sentence(result, units) or f"{question(result)}"
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        against = _against_text(result.against)
        if est.kind is EstimateKind.MEAN_DIFFERENCE_FROM_VALUE:
            value, low, high = est.value, est.ci_low, est.ci_high
            word = "above" if value >= 0 else "below"
            if value < 0:
                value, low, high = (
                    -value,
                    (-high if is_number(high) else None),
                    (-low if is_number(low) else None),
                )
            decimals = decimals_for(value, low, high)
            centre = "Mean" if test == Test.ONE_SAMPLE_T else "Typical"
            return (
                f"{centre} {outcome} was {fmt_number(value, decimals)}{_units_suffix(units)} {word} "
                f"the stated value of {against}{_ci_tail(result, low, high, decimals)}."
            )
        decimals = decimals_for(est.value, est.ci_low, est.ci_high)
        return (
            f"Typical {outcome} was {fmt_number(est.value, decimals)}{_units_suffix(units)} "
            f"(a median-type centre of the values; {ci_label(result.confidence)} "
            f"{fmt_ci(est.ci_low, est.ci_high, decimals)}), against a stated value of {against}."
        )
    if design == Design.ONE_SAMPLE_CATEGORICAL:
        return _share_sentence(result, est)
    if test in (Test.WELCH_T, Test.STUDENT_T):
        return _difference_sentence(result, est, f"Mean {outcome} was", units)
    if test == Test.MANN_WHITNEY_U:
        return _difference_sentence(
            result,
            est,
            f"Values of {outcome} were typically",
            units,
            how="median of all differences between the two groups",
        )
    if test == Test.PAIRED_T:
        return _difference_sentence(result, est, f"Mean {outcome} was", units, within="at")
    if design == Design.PAIRED_CONTINUOUS:
        return _difference_sentence(
            result,
            est,
            f"Values of {outcome} were typically",
            units,
            within="at",
            how="median-type centre of the paired differences",
        )
    if design in (Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL) and est.kind in (
        EstimateKind.SHARE_DIFFERENCE,
        EstimateKind.PAIRED_SHARE_DIFFERENCE,
    ):
        return _proportion_difference_sentence(result, est.value, est.ci_low, est.ci_high)
    if design == Design.TWO_CONTINUOUS:
        kind = "rank correlation" if test == Test.SPEARMAN_RHO else "correlation"
        by = result.exposure or "the other measure"
        decimals = max(2, decimals_for(est.value, est.ci_low, est.ci_high))
        tendency = (
            f"higher {by} tended to go with higher {outcome}"
            if est.value > 0
            else f"higher {by} tended to go with lower {outcome}"
            if est.value < 0
            else "the two did not move together"
        )
        return (
            f"The {kind} between {outcome} and {by} was {fmt_number(est.value, decimals)}"
            f"{_ci_tail(result, est.ci_low, est.ci_high, decimals)}: {tendency}."
        )
    groups = _groups_sentence(result, units)
    if (
        groups
        and est.kind in (EstimateKind.LARGEST_MEAN_GAP, EstimateKind.LARGEST_MEDIAN_GAP)
        and not fmt_ci(est.ci_low, est.ci_high, 2)
    ):
        return groups  # the range of group values already says it
    decimals = decimals_for(est.value, est.ci_low, est.ci_high)
    estimate_part = (
        f"{est.name[:1].upper()}{est.name[1:]} was {fmt_number(est.value, decimals)}"
        f"{_units_suffix(units)}{_ci_tail(result, est.ci_low, est.ci_high, decimals)}."
    )
    return f"{groups} {estimate_part}" if groups else estimate_part


def _proportion_difference_sentence(
    result: Result, value: float, low: float | None, high: float | None
) -> str:
    first, second = two_labels(result)
    if value < 0:
        first, second = second, first
        value, low, high = (
            -value,
            (-high if is_number(high) else None),
            (-low if is_number(low) else None),
        )
    decimals = decimals_for(value * 100, (low or 0) * 100, (high or 0) * 100)
    subject = _outcome_level_phrase(result)
    if result.design == Design.TWO_CATEGORICAL and result.exposure:
        # Rows of the table are the compare-by groups; name the column with them.
        where = f"for {result.exposure} {first} than for {result.exposure} {second}"
    else:
        where = f"at {first} than at {second}"
    return (
        f"{subject} was {fmt_number(value * 100, decimals)} percentage points higher {where}"
        f"{_ci_tail(result, low, high, decimals, scale=100.0)}."
    )


def _outcome_level_phrase(result: Result) -> str:
    level = result.extra.get("level") if isinstance(result.extra, Mapping) else None
    outcome = result.outcome or "the outcome"
    if level is None:
        level = result.estimate.level if result.estimate else None
    if level is not None and _wide_pair(result):
        return f"The share with the value {level}"
    if level is not None:
        return f"The share with {outcome} = {level}"
    return f"The share in the first {outcome} category"


def _share_sentence(result: Result, est: Estimate) -> str:
    """One-sample categorical: the observed share (with CI) against the stated share."""
    outcome = result.outcome or "the outcome"
    label, target = _share_label_and_target(result)
    ci = fmt_ci(est.ci_low, est.ci_high, 1, scale=100.0)
    ci_part = f" ({ci_label(result.confidence)} {ci.replace(' to', '% to')}%)" if ci else ""
    target_part = f", against a stated {fmt_percent(target)}" if is_number(target) else ""
    if result.test == Test.BINOMIAL_EXACT:
        return f"{fmt_percent(est.value)} of records had {outcome} = {label}{ci_part}{target_part}."
    return (
        f"The largest departure from the stated shares was for {label}: "
        f"{fmt_percent(est.value)} of records{ci_part}{target_part}."
    )


def _share_label_and_target(result: Result) -> tuple[str, float | None]:
    est = result.estimate
    against = result.against if isinstance(result.against, Mapping) else {}
    label = None
    if isinstance(result.extra, Mapping):
        label = result.extra.get("level") or result.extra.get("label")
    if label is None and est is not None:
        label = est.level
    if label is None and len(against) == 1:
        label = next(iter(against))
    target = against.get(label, against.get(str(label))) if label is not None else None
    if target is None and is_number(result.against):
        target = result.against
    if target is None and isinstance(result.extra, Mapping):
        target = result.extra.get("target_share")
    return (str(label) if label is not None else "the counted value"), (
        float(target) if is_number(target) else None
    )


def _groups_sentence(result: Result, units: str) -> str:
    """For 3+ groups: the range of group means (or medians for rank-based tests)."""
    stat = "median" if result.test == Test.KRUSKAL_WALLIS else "mean"
    rows: list[tuple[str, float]] = [
        (str(g.get("label")), g[stat])
        for g in result.groups
        if isinstance(g, Mapping) and is_number(g.get(stat))
    ]
    if len(rows) < 2 or result.design not in (Design.MULTI_GROUP_CONTINUOUS, Design.TWO_GROUP_CONTINUOUS):
        return ""
    low = min(rows, key=lambda r: r[1])
    high = max(rows, key=lambda r: r[1])
    decimals = decimals_for(low[1], high[1])
    by = result.exposure or "group"
    total = sum(1 for g in result.groups if isinstance(g, Mapping))
    across = (
        f"the {len(rows)} groups of {by}"
        if len(rows) == total
        else f"{len(rows)} of the {total} groups of {by} (the others are hidden or have no value)"
    )
    if low[1] == high[1]:
        return (
            f"{stat.capitalize()} {result.outcome or 'the outcome'} was "
            f"{fmt_number(low[1], decimals)}{_units_suffix(units)} in each of {across}."
        )
    return (
        f"{stat.capitalize()} {result.outcome or 'the outcome'} ranged from "
        f"{fmt_number(low[1], decimals)}{_units_suffix(units)} ({low[0]}) to "
        f"{fmt_number(high[1], decimals)}{_units_suffix(units)} ({high[0]}) across {across}."
    )


def _table_min_dim(result: Result) -> int | None:
    """The smaller side of a contingency table, from the expected or observed counts."""
    for source in _count_sources(result):
        for key in ("expected", "observed"):
            table = source.get(key)
            if isinstance(table, Mapping):
                table = table.get("values")
            if isinstance(table, Sequence) and table and isinstance(table[0], Sequence):
                return min(len(table), len(table[0]))
    return None


def effect_magnitude(result: Result) -> Magnitude | None:
    """The size word for the result's effect (None when no convention applies)."""
    eff = result.effect
    if eff is None:
        return None
    return magnitude(eff.kind, eff.value, table_min_dim=_table_min_dim(result))


def _size_noun(result: Result) -> str:
    if result.design in (Design.TWO_CONTINUOUS,):
        return "association"
    if result.design in _ONE_SAMPLE:
        return (
            "departure from the stated value"
            if result.design == Design.ONE_SAMPLE_CONTINUOUS
            else "departure from the stated shares"
        )
    return "difference"


def _article(phrase: str) -> str:
    """'a medium' / 'an association'."""
    return ("an " if phrase[:1].lower() in "aeiou" else "a ") + phrase


def _null_phrase(result: Result) -> str:
    if result.design == Design.TWO_CONTINUOUS:
        return "no difference from zero correlation (no association)"
    if result.design == Design.ONE_SAMPLE_CONTINUOUS:
        return "no difference from the stated value"
    if result.design == Design.ONE_SAMPLE_CATEGORICAL:
        return "no difference from the stated shares"
    return "no difference"


def _adjust_tail(adjusted: bool, n_comparisons: int | None) -> str:
    if not adjusted:
        return ""
    if n_comparisons and n_comparisons > 1:
        return f" after allowing for {n_comparisons} comparisons in this run"
    if n_comparisons is None:
        return " after allowing for the other comparisons in this run"
    return ""


def _flips_direction(result: Result) -> bool:
    """True when the reading names the groups in reverse (negative difference estimate)."""
    est = result.estimate
    return (
        result.design
        in (Design.TWO_GROUP_CONTINUOUS, Design.PAIRED_CONTINUOUS, Design.TWO_CATEGORICAL, Design.PAIRED_CATEGORICAL)
        and est is not None
        and is_number(est.value)
        and est.value < 0
    )


def _effect_clause(result: Result, mag: Magnitude | None, significant: bool) -> str:
    eff = result.effect
    if eff is None or not is_number(eff.value):
        return ""
    value, low, high = eff.value, eff.ci_low, eff.ci_high
    if _flips_direction(result) and effect_kind(eff.kind) in ("d", "r", "h"):
        # Keep the effect's sign in step with the reading's group order.
        value, low, high = (
            -value,
            (-high if is_number(high) else None),
            (-low if is_number(low) else None),
        )
    decimals = max(2, decimals_for(value, low, high))
    ci = fmt_ci(low, high, decimals)
    numbers = f"{eff.name} = {fmt_number(value, decimals)}" + (
        f", {ci_label(result.confidence)} {ci}" if ci else ""
    )
    if mag is None:
        return f" ({numbers})"
    noun = _size_noun(result)
    verb = "is" if significant else "would be"
    est = result.estimate
    repeats = est is not None and est.name == eff.name and est.value == eff.value
    source = mag.convention.source if repeats else f"{mag.convention.source}; {numbers}"
    return f"; its size {verb} {_article(mag.word)} {noun} by a common rule of thumb ({source})"


def _evidence_sentence(result: Result, settings: Settings, n_comparisons: int | None) -> str:
    p, adjusted = _p_used(result)
    unadjusted_run = getattr(settings.adjust, "value", settings.adjust) == AdjustMethod.NONE.value
    tail = _adjust_tail(adjusted and not unadjusted_run, n_comparisons)
    p_text = f"{fmt_p(p)}{tail}"
    significant = is_number(p) and p < settings.alpha
    mag = effect_magnitude(result)
    effect = _effect_clause(result, mag, significant)
    if significant:
        return f"This is {evidence_words(p)} of {_article(_size_noun(result))} ({p_text}){effect}."
    ci = ""
    est = result.estimate
    if est is not None and fmt_ci(est.ci_low, est.ci_high, 2):
        noun = "correlation" if result.design == Design.TWO_CONTINUOUS else "difference"
        ci = f" as well as with any {noun} inside the {ci_label(result.confidence)}"
    return (
        f"With {evidence_words(p)} ({p_text}), the data are compatible with {_null_phrase(result)}"
        f"{ci}{effect}."
    )


def reading(
    result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None
) -> str:
    """The one- or two-sentence plain reading of a result.

    Parameters
    ----------
    result : Result
        A finished (or skipped) analysis.
    settings : Settings
        Run settings (``alpha`` separates "statistically clear" from not).
    context : ReportContext or Mapping, optional
        Supplies ``units`` per column (or is itself a dict column -> units).
    n_comparisons : int, optional
        How many analyses with a p-value the run made (for "after allowing for N
        comparisons in this run").

    Returns
    -------
    str
    """
    if result.skipped:
        return (
            f'No test was run for the question "{question(result)}": {say(result.skipped).rstrip(".")}.'
        )
    hidden = result.extra.get("suppressed", ()) if isinstance(result.extra, Mapping) else ()
    if "p_value" in hidden:
        return SHARE_HIDDEN_READING.format(question=question(result))
    return f"{_estimate_sentence(result, context)} {_evidence_sentence(result, settings, n_comparisons)}"


# ---------------------------------------------------------------- cautions


def _group_sizes(result: Result) -> list[int]:
    sizes = []
    for g in result.groups:
        if not isinstance(g, Mapping):
            continue
        n = g.get("n", g.get("count"))
        if is_number(n):
            sizes.append(int(n))
    return sizes


def _count_sources(result: Result) -> list[Mapping[str, Any]]:
    """Where counts may sit: the shape checks, their "counts" entry, or ``extra``."""
    sources: list[Mapping[str, Any]] = []
    for source in (result.shape, result.extra):
        if isinstance(source, Mapping):
            sources.append(source)
            if isinstance(source.get("counts"), Mapping):
                sources.append(source["counts"])
    return sources


def _min_expected(result: Result) -> float | None:
    for source in _count_sources(result):
        if isinstance(source, Mapping) and is_number(source.get("min_expected")):
            return float(source["min_expected"])
    return None


def _excluded_line(count: int, context: Any) -> str:
    records = "record was" if count == 1 and _share_floor(context) is None else "records were"
    return EXCLUDED_LINE.format(count=count_text(count, context), records=records)


def cautions(
    result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None
) -> list[str]:
    """The plain cautions that apply to a result; the review line is always last.

    Parameters
    ----------
    result, settings, context, n_comparisons
        As for ``reading``. ``context.observational`` (default True) says the data
        are routine records rather than a designed study.

    Returns
    -------
    list of str

    Notes
    -----
    Small groups: fewer than 10 records in any group, or fewer than 20 records
    in all for a one-sample or two-measure analysis; unequal groups: the largest
    at least twice the smallest. Both are common practice rather than a
    published rule. Small expected counts follow Cochran's rule (expected counts
    below 5; Cochran WG, Biometrics 1954;10(4):417-451, doi:10.2307/3001616).
    """
    out: list[str] = []
    if result.skipped:
        if result.n_excluded > 0:
            out.append(_excluded_line(result.n_excluded, context))
        out.append(REVIEW_LINE)
        return out
    if result.design not in _ONE_SAMPLE:
        out.append(CAUSATION_LINE)
    if _observational(context):
        out.append(OBSERVATIONAL_LINE)
    if is_number(result.p_adjusted) and n_comparisons and n_comparisons > 1:
        out.append(multiple_line(n_comparisons, settings))
    sizes = _group_sizes(result)
    grouped = result.design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS)
    if grouped and sizes:
        if min(sizes) < SMALL_GROUP_LIMIT:
            out.append(SMALL_GROUPS_LINE.format(limit=SMALL_GROUP_LIMIT))
        if min(sizes) > 0 and max(sizes) >= UNEQUAL_RATIO * min(sizes):
            out.append(UNEQUAL_GROUPS_LINE.format(ratio=f"{UNEQUAL_RATIO:g}"))
    elif (
        not grouped
        and result.design not in (Design.TWO_CATEGORICAL, Design.ONE_SAMPLE_CATEGORICAL)
        and 0 < result.n < SMALL_SAMPLE_LIMIT
    ):
        out.append(SMALL_SAMPLE_LINE.format(limit=SMALL_SAMPLE_LIMIT))
    smallest = _min_expected(result)
    if (
        result.test in (Test.CHI_SQUARE_GOODNESS_OF_FIT, Test.CHI_SQUARE_INDEPENDENCE)
        and smallest is not None
        and smallest < 5
    ):
        p_how = (
            "the p-value was estimated by simulation instead"
            if result.p_method == PMethod.MONTE_CARLO
            else "treat the p-value as rough"
        )
        line = EXPECTED_LINE.format(
            smallest=fmt_number(smallest, decimals_for(smallest)), p_how=p_how
        )
        if _share_floor(context) is not None:
            # With the total and one margin, the smallest expected count gives a margin back.
            line = re.sub(r" \(smallest [^)]*\)", "", line)
        out.append(line)
    if result.n_excluded > 0:
        out.append(_excluded_line(result.n_excluded, context))
    p, _ = _p_used(result)
    mag = effect_magnitude(result)
    if mag is not None and is_number(p):
        if p < settings.alpha and mag.word == NEGLIGIBLE:
            out.append(TINY_EFFECT_LINE.format(source=mag.convention.source))
        elif p >= settings.alpha and mag.word in ("medium", "large"):
            out.append(UNDERPOWERED_LINE.format(word=mag.word, source=mag.convention.source))
    said_expected = any(line.startswith("Some expected counts are below 5") for line in out)
    for item in result.notes:
        # A method's own note on small expected counts repeats the line above (the
        # technical note keeps its details).
        note = say(item)
        repeats = said_expected and item.code in (Note.EXPECTED_BELOW_5, Note.MONTE_CARLO_P)
        if note not in out and not repeats:
            out.append(note)
    out.append(REVIEW_LINE)
    return out


def explain(
    result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None
) -> tuple[str, list[str]]:
    """The plain reading and the cautions of one result.

    Parameters
    ----------
    result : Result
    settings : Settings
    context : ReportContext or Mapping, optional
        Units per column (``context.units`` or the mapping itself), ``observational``
        and the sharing-mode fields.
    n_comparisons : int, optional
        Number of analyses with a p-value in the run.

    Returns
    -------
    (str, list of str)
        The reading and the cautions (review line last).
    """
    return (
        reading(result, settings=settings, context=context, n_comparisons=n_comparisons),
        cautions(result, settings=settings, context=context, n_comparisons=n_comparisons),
    )


RUN_WIDE_HEADING = "Each caution here applies to every result below"
NO_ROW_CAUTIONS = "None beyond the cautions above the table."


def run_wide_cautions(
    results: Sequence[Result],
    *,
    settings: Settings,
    context: Any = None,
    n_comparisons: int | None = None,
) -> list[str]:
    """The cautions a results sheet states once, above the table, for every result.

    Parameters
    ----------
    results : sequence of Result
        The run's results, cautions filled (``apply``) or not.
    settings : Settings
    context : optional
        ``observational`` (default True) adds the routine-records line.
    n_comparisons : int, optional
        Size of the run's family; by default the results with a p-value.

    Returns
    -------
    list of str
        The review line first, then the routine-records line (for routine
        records), the several-comparisons line (when more than one p-value was
        adjusted), then any other line every run result carries.

    Notes
    -----
    Only the sheet layout uses this: each ``Result.cautions`` keeps its full
    list, review line included, so a result read on its own is complete.
    """
    if n_comparisons is None:
        n_comparisons = count_comparisons(results)
    out = [REVIEW_LINE]
    if _observational(context):
        out.append(OBSERVATIONAL_LINE)
    adjusted = [r for r in results if not r.skipped and is_number(r.p_adjusted)]
    if adjusted and n_comparisons > 1:
        out.append(multiple_line(n_comparisons, settings))
    run = [r for r in results if not r.skipped]
    lists = [
        r.cautions or cautions(r, settings=settings, context=context, n_comparisons=n_comparisons)
        for r in run
    ]
    if lists:
        shared = [line for line in lists[0] if all(line in other for other in lists[1:])]
        out.extend(line for line in shared if line not in out)
    return out


def row_cautions(caution_list: Sequence[str], run_wide: Sequence[str]) -> list[str]:
    """The cautions of one result that are not already stated once for the whole run."""
    shown = set(run_wide)
    return [line for line in caution_list if line and line not in shown]


def count_comparisons(results: Iterable[Result]) -> int:
    """How many analyses of a run produced a p-value (the family adjusted together)."""
    return sum(1 for r in results if not r.skipped and is_number(r.p_value))


# ---------------------------------------------------------------- follow-ups


def followup_label(followup: Followup) -> str:
    """'North vs South' (or 'Yes with North' for a table cell)."""
    levels = [str(x) for x in followup.levels]
    if followup.test == Test.ADJUSTED_RESIDUAL and len(levels) == 2:
        return f"{levels[0]} with {levels[1]}"
    return " vs ".join(levels)


def followup_reading(
    followup: Followup, parent: Result, *, settings: Settings, context: Any = None
) -> str:
    """A plain sentence for one follow-up comparison.

    Parameters
    ----------
    followup : Followup
    parent : Result
        The analysis it follows (for the outcome, its units and the confidence).
    settings : Settings
    context : optional
        Units per column.

    Returns
    -------
    str
    """
    outcome = parent.outcome or "the outcome"
    if followup.test == Test.ADJUSTED_RESIDUAL:
        z = followup.statistic
        if not is_number(z):
            return f"{followup_label(followup)}: no residual could be computed."
        more = "more" if z > 0 else "fewer"
        flag = (
            " (stands out: beyond 2 in size)"
            if abs(z) > 2
            else " (within the range expected by chance)"
        )
        return (
            f"{followup_label(followup)}: {more} records than expected if {outcome} and "
            f"{parent.exposure or 'the groups'} were unrelated; adjusted residual "
            f"{fmt_number(z, 2)}{flag}."
        )
    units = _display_units(context, parent.outcome)
    p = followup.p_adjusted if is_number(followup.p_adjusted) else followup.p_value
    p_word = "adjusted p" if is_number(followup.p_adjusted) else "p"
    p_text = fmt_p(p).replace("p ", f"{p_word} ", 1)
    est = followup.estimate
    first, second = (list(followup.levels) + ["", ""])[:2]
    size = ""
    if est is not None and is_number(est.value):
        value, low, high = est.value, est.ci_low, est.ci_high
        if value < 0:
            first, second = second, first
            value, low, high = (
                -value,
                (-high if is_number(high) else None),
                (-low if is_number(low) else None),
            )
        decimals = decimals_for(value, low, high)
        ci = fmt_ci(low, high, decimals)
        ci_part = f" ({ci_label(parent.confidence)} {ci})" if ci else ""
        # A Hodges-Lehmann shift is a typical difference, not a difference in means.
        typically = "typically " if est.kind is EstimateKind.LOCATION_SHIFT else ""
        size = (
            f"{outcome} {typically}{fmt_number(value, decimals)}{_units_suffix(units)} higher in {first} "
            f"than in {second}{ci_part}; "
        )
    significant = is_number(p) and p < settings.alpha
    verdict = (
        f"{evidence_words(p)} of a difference" if significant else "compatible with no difference"
    )
    return f"{followup_label(followup)}: {size}{verdict} ({p_text})."


# ---------------------------------------------------------------- whole run


def apply(
    results: Sequence[Result],
    settings: Settings,
    context: Any = None,
    *,
    n_comparisons: int | None = None,
) -> list[Result]:
    """Fill ``reading`` and ``cautions`` of every result (and each follow-up's reading).

    Parameters
    ----------
    results : sequence of Result
        One run's results, after p-value adjustment. Changed in place.
    settings : Settings
    context : ReportContext or Mapping, optional
    n_comparisons : int, optional
        The size of the run's family; by default the results with a p-value.

    Returns
    -------
    list of Result
        The same objects.
    """
    if n_comparisons is None:
        n_comparisons = count_comparisons(results)
    out = list(results)
    for result in out:
        result.reading, result.cautions = explain(
            result, settings=settings, context=context, n_comparisons=n_comparisons
        )
        result.followups = [
            _with_reading(f, followup_reading(f, result, settings=settings, context=context))
            for f in result.followups
        ]
    return out


def _with_reading(followup: Followup, text: str) -> Followup:
    from dataclasses import replace

    return replace(followup, reading=text)


def incomplete_pairs_note(result: Result, count: int, context: Any = None) -> str:
    """The data-notes sentence for pairs left out because one half was missing."""
    outcome = result.outcome or "the outcome"
    if result.pairing and not result.exposure:  # two columns of one row form the pair
        what = f"incomplete pairs of {outcome} and {result.pairing}"
        tail = "one of the two measurements was missing"
    else:
        what = f"incomplete pairs by {result.pairing}" if result.pairing else "incomplete pairs"
        tail = f"one of the two measurements of {outcome} was missing"
    return f"{count_text(count, context)} {what} were left out of the analysis ({tail})."


# ---------------------------------------------------------------- technical note


def spread_check(result: Result) -> Mapping[str, Any] | None:
    """The spread-equality check of a result (``shape["spread_equality"]`` or ``shape["spread"]``)."""
    if not isinstance(result.shape, Mapping):
        return None
    spread = result.shape.get("spread_equality") or result.shape.get("spread")
    return spread if isinstance(spread, Mapping) else None


SPREAD_NAMES: dict[str, str] = {
    "brown_forsythe": "Brown-Forsythe",
    "levene": "Levene",
    "bartlett": "Bartlett",
}


def spread_name(spread: Mapping[str, Any]) -> str:
    """The published name of a spread check ("brown_forsythe" -> "Brown-Forsythe")."""
    raw = str(spread.get("test") or spread.get("name") or "equal-spread check")
    return SPREAD_NAMES.get(raw, raw)


def technical_note(result: Result, settings: Settings | None = None, context: Any = None) -> str:
    """A longer note for the shape-check sheet; test names and statistics are allowed here.

    The same sentences as ``technical_lines``, joined by spaces.
    """
    return " ".join(technical_lines(result, settings, context))


def technical_lines(
    result: Result, settings: Settings | None = None, context: Any = None
) -> list[str]:
    """The technical note as a list of sentences (one per sheet row).

    Parameters
    ----------
    result : Result
    settings : Settings, optional
        For the name of the adjustment method.
    context : optional
        For sharing mode (small counts are not written).

    Returns
    -------
    list of str
        Sentences: the test and why it was chosen, the statistic, df and
        p-value (and how p was obtained), the estimate and effect with intervals,
        the spread check, the smallest expected count, and the method's notes.
    """
    name = TEST_NAMES.get(result.test or "", result.test or "no test")
    parts: list[str] = []
    if result.skipped:
        parts.append(f"{name} was not run: {say(result.skipped).rstrip('.')}.")
    else:
        parts.append(
            f"{name} ({result.alternative}), {count_text(result.n, context)} records used."
        )
    if result.reasons:
        parts.append("Chosen because: " + "; ".join(say(r).rstrip(".") for r in result.reasons) + ".")
    if is_number(result.statistic):
        df = fmt_df(result.df)
        df_part = f" on {df} df" if df else ""
        parts.append(
            f"{result.statistic_name or 'Statistic'} = {fmt_number(result.statistic)}{df_part}."
        )
    if is_number(result.p_value):
        how = f" ({result.p_method.replace('_', ' ')})" if result.p_method else ""
        parts.append(f"Unadjusted {fmt_p(result.p_value)}{how}.")
    if is_number(result.p_adjusted):
        method = ""
        if settings is not None:
            key = getattr(settings.adjust, "value", str(settings.adjust))
            method = f" ({ADJUST_NAMES.get(key, key)})"
        parts.append(f"Adjusted {fmt_p(result.p_adjusted)}{method}.")
    for label, item in (("Estimate", result.estimate), ("Effect", result.effect)):
        if item is not None and is_number(item.value):
            decimals = decimals_for(item.value, item.ci_low, item.ci_high)
            ci = fmt_ci(item.ci_low, item.ci_high, decimals)
            ci_part = f", {ci_label(result.confidence)} {ci}" if ci else ""
            parts.append(f"{label}: {item.name} = {fmt_number(item.value, decimals)}{ci_part}.")
    mag = effect_magnitude(result)
    if mag is not None:
        parts.append(f"Size word '{mag.word}' from a rule of thumb: {mag.convention.detail}.")
    spread = spread_check(result)
    if spread is not None and is_number(spread.get("p_value")):
        stat = spread.get("statistic")
        stat_part = f" statistic {fmt_number(stat)}," if is_number(stat) else ""
        parts.append(
            f"Spread check ({spread_name(spread)}):{stat_part} {fmt_p(spread['p_value'])}."
        )
    smallest = _min_expected(result)
    if smallest is not None and _share_floor(context) is None:  # it reveals margins
        parts.append(f"Smallest expected count {fmt_number(smallest, decimals_for(smallest))}.")
    for note in result.notes:
        parts.append(say(note).rstrip(".") + ".")
    return parts
