"""Sentences for the choice rule's reasons (``designs.rules``) and the notes of the newer methods.

Each reason says honestly why the test fits: what the shape judgement saw, with how
many values, and what that means for the test ("right-skewed, but with 597 values in
the smallest group the mean's uncertainty is well approximated").
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

from ..vocabulary import Design
from ..vocabulary.codes import Code, Note, Reason
from .numbers import noun
from .sentences import Hidden, number, register, sentence_start

Facts = Mapping[str, Any]


def _where(f: Facts) -> str:
    """'in the groups of site' / 'in the differences' / '' for a one-sample question."""
    design = f.get("design")
    if design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS):
        return f" within the groups of {f['by']}" if f.get("by") else " within the groups"
    if design == Design.PAIRED_CONTINUOUS:
        return " in the paired differences"
    if design == Design.TWO_CONTINUOUS:
        return ""
    return ""


def _what(f: Facts) -> str:
    if f.get("design") == Design.TWO_CONTINUOUS and f.get("by"):
        return f"{f.get('outcome') or 'the outcome'} and {f['by']}"
    return f.get("outcome") or "the outcome"


def _is(f: Facts) -> str:
    """'are' for two measures of a correlation, else 'is'."""
    return "are" if f.get("design") == Design.TWO_CONTINUOUS and f.get("by") else "is"


def _size(f: Facts) -> str:
    """'with 597 values' or 'with 12 values in the smallest group'."""
    n = f.get("n_smallest")
    if f.get("design") in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS):
        return f"with {n} values in the smallest group"
    if f.get("design") == Design.PAIRED_CONTINUOUS:
        return f"with {n} pairs"
    return f"with {n} values"


def shape_numbers(f: Facts) -> str:
    """'(skewness 1.9, excess kurtosis 4.2; Shapiro-Wilk p < 0.001)'."""
    parts = []
    if f.get("skewness") is not None:
        parts.append(f"skewness {f['skewness']:.2g}")
    if f.get("excess_kurtosis") is not None:
        parts.append(f"excess kurtosis {f['excess_kurtosis']:.2g}")
    p = f.get("p")
    test = "" if p is None else ("Shapiro-Wilk p < 0.001" if p < 0.001 else f"Shapiro-Wilk p = {p:.3f}")
    inner = ", ".join(parts)
    if test:
        inner = f"{inner}; {test}" if inner else test
    return f" ({inner})" if inner else ""


def _few(n: Any) -> bool:
    """A size below 20, or one hidden by sharing mode (hidden sizes are small)."""
    return isinstance(n, Hidden) or (n or 0) < 20


def _no_clear_departure(f: Facts) -> str:
    if _few(f.get("n_smallest")):
        return sentence_start(
            f"{_what(f)}{_where(f)} {'show' if _is(f) == 'are' else 'shows'} no clear departure from a normal shape{shape_numbers(f)}, though "
            f"{_size(f)} only a large departure could be seen; the test that compares means was used."
        )
    return sentence_start(
        f"{_what(f)}{_where(f)} {_is(f)} close to a normal shape{shape_numbers(f)}, so the test that compares "
        "means was used."
    )


def _departs_large_n(f: Facts) -> str:
    return sentence_start(
        f"{_what(f)}{_where(f)} {_is(f)} {f['direction']}{shape_numbers(f)}, but {_size(f)} the mean's "
        f"uncertainty is well approximated (about {math.ceil(f['n_needed'])} values are enough for this "
        "shape), so the test that compares means was used."
    )


def _departs_small_n(f: Facts) -> str:
    return sentence_start(
        f"{_what(f)}{_where(f)} {_is(f)} {f['direction']}{shape_numbers(f)}, and {_size(f)} (about "
        f"{math.ceil(f['n_needed'])} would be needed for means) a rank-based test holds its error rate "
        "better, so it was used."
    )


def _too_few(f: Facts) -> str:
    grouped = f.get("design") in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS)
    few = "too few values (fewer than 3 in every group)" if grouped else "too few values (fewer than 3)"
    has = "have" if _is(f) == "are" else "has"
    return sentence_start(
        f"{_what(f)}{_where(f)} {has} {few} to judge the shape, so a test that does not depend on the shape was used."
    )


def _asymmetric(f: Facts) -> str:
    return sentence_start(
        f"{_what(f)} {_is(f)} {f['direction']}{shape_numbers(f)}: for such a measure the signed-rank test would "
        "test symmetry rather than the median, so the sign test compares the median with the stated "
        "value, and the median is reported with its distribution-free interval."
    )


def _no_spread_sign(f: Facts) -> str:
    what = "difference" if f.get("design") == Design.PAIRED_CONTINUOUS else "value"
    return (
        f"Every {what} is {number(f['value'])}, on one side of {number(f.get('target') or 0.0)}; a t-test "
        "has no spread to work with, but the sign test is exact here, so it was used."
    )


def _spreads_differ(f: Facts, test: str, why: str) -> str:
    ratio = f.get("sd_ratio")
    shown = "" if ratio is None else f" (largest SD {ratio:.1f} times the smallest)"
    return sentence_start(
        f"{_what(f)}{_where(f)} {_is(f)} {f['direction']}{shape_numbers(f)} and the spreads differ{shown}; "
        f"{test} was used because {why}."
    )


TEMPLATES: dict[Code, str | Callable[[Facts], str]] = {
    Reason.SHAPE_NO_CLEAR_DEPARTURE: _no_clear_departure,
    Reason.SHAPE_DEPARTS_LARGE_N: _departs_large_n,
    Reason.SHAPE_DEPARTS_SMALL_N: _departs_small_n,
    Reason.SHAPE_TOO_FEW: _too_few,
    Reason.ASYMMETRIC_TARGET_SIGN_TEST: _asymmetric,
    Reason.NO_SPREAD_SIGN_TEST: _no_spread_sign,
    Reason.SPREADS_DIFFER_BRUNNER_MUNZEL: lambda f: _spreads_differ(
        f, "the Brunner-Munzel test", "it stays valid when spreads differ, unlike the Mann-Whitney test"
    ),
    Reason.SPREADS_DIFFER_SMALL_WELCH: lambda f: _spreads_differ(
        f, "Welch's t-test", "rank tests lose their error rate in small groups whose spreads differ, "
        "while Welch's t-test does not assume equal spreads"
    ),
    Reason.SPREADS_DIFFER_RANK_ANOVA_TYPE: lambda f: _spreads_differ(
        f, "the ANOVA-type rank test", "it stays valid when spreads differ, unlike the Kruskal-Wallis test"
    ),
    Reason.GROUP_WITHOUT_SPREAD_RANK: lambda f: sentence_start(
        f"A group has all its values equal, so {_what(f)} was compared by a rank-based test, whose "
        "p-value does not need spread within groups."
    ),
    Reason.NON_NORMAL_SPEARMAN: lambda f: sentence_start(
        f"{_what(f)} {_is(f)} {f['direction']}{shape_numbers(f)}; Pearson's interval depends on the shape at any "
        "sample size, so Spearman's rank correlation was used."
    ),
    Note.PERMUTATION_P: lambda f: (
        f"The smallest group has {f['smallest']} values (fewer than {f['below']}), so the p-value comes "
        f"from {f['draws']} seeded random rearrangements of the groups rather than from an approximation."
    ),
    Note.SIGN_TIES_DROPPED: lambda f: (
        f"{f['n']} {noun(f['n'], 'value')} equal to {number(f['value'])} {noun(f['n'], 'was', 'were')} left out of "
        "the sign test, as it requires."
    ),
    Note.MEDIAN_INTERVAL_OPEN: lambda f: (
        f"With {f['n']} values no {f['confidence']:.0%} interval for the median can be formed from the "
        "data (even the full range has lower confidence), so none is shown."
    ),
    Note.INTERVAL_DISAGREES_WITH_P: lambda f: (
        f"The interval ({number(f['low'])} to {number(f['high'])}) "
        + ("excludes" if f["excludes_zero"] else "includes")
        + f" 0 while the test's p is {f['p']:.3g}: the two come from different methods and disagree "
        "near the edge; read the result as borderline."
    ),
    Note.SHAPE_DEPARTS_ASSUMED_NORMAL: lambda f: sentence_start(
        f"The shape check found {_what(f)}{_where(f)} {f['direction']}{shape_numbers(f)}; the test compares "
        "means because that was chosen."
    ),
}

register(TEMPLATES)
