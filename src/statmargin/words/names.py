"""Display names of estimates and effects, made from their kind and labels.

The name is what the results sheet's Estimate and Effect columns and the JSON
``name`` key show; code that needs to know what an estimate is reads its
``kind``, never its name.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..vocabulary import EffectKind, EstimateKind

if TYPE_CHECKING:
    from ..results import Effect, Estimate

_PAIR_NAMES: dict[EstimateKind, str] = {
    EstimateKind.MEAN_DIFFERENCE: "difference in means",
    EstimateKind.LOCATION_SHIFT: "location shift",
    EstimateKind.PAIRED_MEAN_DIFFERENCE: "mean difference",
    EstimateKind.PAIRED_PSEUDO_MEDIAN: "pseudo-median of differences",
    EstimateKind.LARGEST_MEAN_GAP: "largest difference between group means",
    EstimateKind.LARGEST_MEDIAN_GAP: "largest difference between group medians",
    EstimateKind.PAIRED_MEDIAN_DIFFERENCE: "median difference",
}

_PLAIN_EFFECTS: dict[EffectKind, str] = {
    EffectKind.HEDGES_G: "Hedges' g",
    EffectKind.HEDGES_G_AV: "Hedges' g (average SD)",
    EffectKind.ETA_SQUARED_WEIGHTED: "eta-squared (precision-weighted)",
    EffectKind.EPSILON_SQUARED_EQUAL_WEIGHTS: "epsilon-squared (groups weighted equally)",
    EffectKind.SHARE_ABOVE: "share of values above the stated value",
    EffectKind.HEDGES_G_Z: "Hedges' g_z",
    EffectKind.RANK_BISERIAL: "rank-biserial r",
    EffectKind.RANK_BISERIAL_PAIRED: "rank-biserial r (matched pairs)",
    EffectKind.PROBABILITY_OF_SUPERIORITY: "probability of superiority",
    EffectKind.ETA_SQUARED: "eta-squared",
    EffectKind.OMEGA_SQUARED: "omega-squared",
    EffectKind.EPSILON_SQUARED: "epsilon-squared",
    EffectKind.PEARSON_R: "Pearson r",
    EffectKind.SPEARMAN_RHO: "Spearman rho",
    EffectKind.COHENS_W: "Cohen's w",
    EffectKind.COHENS_H: "Cohen's h",
    EffectKind.CRAMERS_V: "Cramer's V",
    EffectKind.ODDS_RATIO: "odds ratio",
    EffectKind.DISCORDANT_ODDS_RATIO: "odds ratio of discordant pairs (b/c)",
    EffectKind.RATE_RATIO: "rate ratio",
}


def _pair(levels: tuple[str, ...]) -> str:
    if len(levels) >= 2 and levels[0] == levels[1]:
        return "all groups equal"  # the widest gap is 0, between a group and itself
    return f"{levels[0]} - {levels[1]}" if len(levels) >= 2 else "first - second"


def _grain(levels: tuple[str, ...]) -> str:
    return levels[0] if levels else "period"


def estimate_name(estimate: Estimate) -> str:
    """The display name of an estimate, e.g. 'difference in means (North - South)'."""
    kind = estimate.kind
    if kind in _PAIR_NAMES:
        return f"{_PAIR_NAMES[kind]} ({_pair(estimate.levels)})"
    if kind is EstimateKind.MEAN_DIFFERENCE_FROM_VALUE:
        return f"mean difference from {estimate.reference:.6g}"
    if kind is EstimateKind.PSEUDO_MEDIAN:
        return "pseudo-median"
    if kind is EstimateKind.MEDIAN:
        return "median" if estimate.reference is None else f"median (against {estimate.reference:.6g})"
    if kind is EstimateKind.SHARE:
        return f"share of '{estimate.level}'"
    if kind is EstimateKind.SHARE_FURTHEST:
        return (
            f"share of '{estimate.level}' (expected {estimate.reference:.4g}; "
            "the category furthest from its expected share)"
        )
    if kind is EstimateKind.SHARE_DIFFERENCE:
        first, second = (list(estimate.levels) + ["first", "second"])[:2]
        return f"difference in share of '{estimate.level}' ('{first}' - '{second}')"
    if kind is EstimateKind.LARGEST_SHARE_GAP:
        first, second = (list(estimate.levels) + ["highest", "lowest"])[:2]
        return f"largest difference in share of '{estimate.level}' ('{first}' - '{second}')"
    if kind is EstimateKind.PAIRED_SHARE_DIFFERENCE:
        return f"difference in share of '{estimate.level}' (first - second measurement)"
    if kind in _RATE_NAMES:
        return _rate_name(estimate)
    if kind is EstimateKind.PEARSON_R:
        return "Pearson r"
    if kind is EstimateKind.SPEARMAN_RHO:
        return "Spearman rho"
    if kind is EstimateKind.SHARE_CHANGE_PER_PERIOD:
        return f"change in share of '{estimate.level}' per {_grain(estimate.levels)}"
    if kind is EstimateKind.THEIL_SEN_SLOPE:
        return f"Theil-Sen slope per {_grain(estimate.levels)}"
    return "observed minus expected count"


_RATE_NAMES: dict[EstimateKind, str] = {
    EstimateKind.RATE: "rate",
    EstimateKind.RATE_DIFFERENCE: "difference in rates",
    EstimateKind.RATE_RATIO: "rate ratio",
    EstimateKind.LARGEST_RATE_GAP: "largest difference between group rates",
}


def _rate_name(estimate: Estimate) -> str:
    """'rate per 1,000 (North)', 'difference in rates per 1,000 (A - B)', 'rate ratio (A / B)'."""
    from .rates_words import per_text

    kind = estimate.kind
    unit = f" {per_text(estimate.per)}" if estimate.per is not None else ""
    if kind is EstimateKind.RATE_RATIO:
        first, second = (list(estimate.levels) + ["first", "second"])[:2]
        return f"rate ratio ({first} / {second})"
    if kind is EstimateKind.RATE:
        target = "" if estimate.reference is None else f"; target {estimate.reference:.6g}"
        label = f" ({estimate.level}{target})" if estimate.level else (f" ({target[2:]})" if target else "")
        return f"rate{unit}{label}"
    return f"{_RATE_NAMES[kind]}{unit} ({_pair(estimate.levels)})"


def effect_name(effect: Effect) -> str:
    """The display name of an effect size, e.g. "Hedges' g" or "Cramer's V"."""
    if effect.kind is EffectKind.PROBABILITY_OF_SUPERIORITY and len(effect.levels) >= 2:
        return f"probability of superiority ({effect.levels[0]} over {effect.levels[1]})"
    if effect.kind is EffectKind.RATE_RATIO and len(effect.levels) >= 2:
        return f"rate ratio ({effect.levels[0]} / {effect.levels[1]})"
    if effect.kind is EffectKind.ODDS_RATIO and effect.level is not None and len(effect.levels) >= 2:
        return (
            f"odds ratio of '{effect.level}' ('{effect.levels[0]}' vs '{effect.levels[1]}'), "
            "conditional MLE"
        )
    return _PLAIN_EFFECTS[effect.kind]
