"""Readings of follow-up comparisons: pairs of groups after a clear overall result, cells of a table."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from ..plan.model import Settings
from ..results import Followup, Result
from ..vocabulary import AdjustMethod, Design, EstimateKind, Test
from . import context as ctx
from .numbers import (
    evidence_words,
    fmt_ci,
    fmt_number,
    fmt_p,
    followup_ci_label,
    is_number,
)

FollowupReader = Callable[..., str]
# Designs whose follow-ups are worded in their own module (``register_followup_reading``).
READINGS_BY_DESIGN: dict[Design, FollowupReader] = {}


def register_followup_reading(design: Design, reader: FollowupReader) -> None:
    """Let a design's own words module word its follow-ups: ``reader(followup, parent, settings=, context=)``."""
    READINGS_BY_DESIGN[design] = reader


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
    if parent.design in READINGS_BY_DESIGN:
        return READINGS_BY_DESIGN[parent.design](followup, parent, settings=settings, context=context)
    outcome = parent.outcome or "the outcome"
    if followup.test == Test.PAIRWISE_RATE_RATIO:
        from .rate_readings import pair_reading

        return pair_reading(followup, parent, settings)
    if followup.test == Test.ADJUSTED_RESIDUAL and parent.design == Design.GROUP_POOLED_SHARES:
        from .rate_readings import residual_reading

        return residual_reading(followup, parent)
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
    units = ctx.display_units(context, parent.outcome)
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
        decimals = ctx.reading_decimals(context, parent.outcome, value, low, high)
        ci = fmt_ci(low, high, decimals)
        label = followup_ci_label(followup.test, parent.confidence, settings.adjust != AdjustMethod.NONE)
        ci_part = f" ({label} {ci})" if ci else ""
        # A Hodges-Lehmann shift is a typical difference, not a difference in means.
        typical = est.kind is EstimateKind.LOCATION_SHIFT
        suffix = f" {units}" if units else ""
        if fmt_number(value, decimals) == fmt_number(0.0, decimals):
            what = "typical difference" if typical else "difference"
            size = f"{outcome}: no {what} between {first} and {second}{ci_part}; "
        else:
            typically = "typically " if typical else ""
            size = (
                f"{outcome} {typically}{fmt_number(value, decimals)}{suffix} higher in {first} "
                f"than in {second}{ci_part}; "
            )
    significant = is_number(p) and p < settings.alpha
    verdict = (
        f"{evidence_words(p)} of a difference" if significant else "compatible with no difference"
    )
    return f"{followup_label(followup)}: {size}{verdict} ({p_text})."


