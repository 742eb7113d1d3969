"""Words for the size of an effect, each from a named rule of thumb.

Every threshold here is a convention, not a law: Cohen (1988) offered his
small/medium/large values for planning studies when nothing better is known, and
warned against using them mechanically. The readings therefore always name the
convention ("by a common rule of thumb (Cohen, 1988)"), and a field's own
benchmarks should replace them where they exist.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..vocabulary import EffectKind

# Word for an effect below the "small" threshold.
NEGLIGIBLE = "negligible"
SIZE_WORDS = (NEGLIGIBLE, "small", "medium", "large")


@dataclass(frozen=True)
class Convention:
    """A small/medium/large rule of thumb for one kind of effect size."""

    kind: str
    small: float
    medium: float
    large: float
    source: str  # short citation shown in readings, e.g. "Cohen, 1988"
    detail: str  # where the values come from, for the technical note


@dataclass(frozen=True)
class Magnitude:
    """The size word for one effect value and the convention it came from."""

    word: str  # one of SIZE_WORDS
    convention: Convention


_COHEN = "Cohen, 1988"
_COHEN_BOOK = "Cohen J. Statistical Power Analysis for the Behavioral Sciences, 2nd ed. (1988)"

# One table of conventions. Values of Cohen's book recalled from memory.
CONVENTIONS: dict[str, Convention] = {
    "d": Convention("d", 0.2, 0.5, 0.8, _COHEN, f"{_COHEN_BOOK}, ch. 2: d of 0.2, 0.5, 0.8"),
    "r": Convention("r", 0.1, 0.3, 0.5, _COHEN, f"{_COHEN_BOOK}, ch. 3: r of 0.1, 0.3, 0.5"),
    "h": Convention("h", 0.2, 0.5, 0.8, _COHEN, f"{_COHEN_BOOK}, ch. 6: h of 0.2, 0.5, 0.8"),
    "w": Convention("w", 0.1, 0.3, 0.5, _COHEN, f"{_COHEN_BOOK}, ch. 7: w of 0.1, 0.3, 0.5"),
    "eta_squared": Convention(
        "eta_squared",
        0.01,
        0.06,
        0.14,
        _COHEN,
        f"{_COHEN_BOOK}, ch. 8: f of 0.10, 0.25, 0.40, i.e. eta-squared of about 0.01, 0.06, 0.14",
    ),
    "odds_ratio": Convention(
        "odds_ratio",
        1.68,
        3.47,
        6.71,
        "Chen, Cohen and Chen, 2010",
        "Chen H, Cohen P, Chen S. How big is a big odds ratio? Commun Stat Simul Comput "
        "2010;39(4):860-864, doi:10.1080/03610911003650383: odds ratios of 1.68, 3.47, 6.71 "
        "match d of 0.2, 0.5, 0.8 when the rarer outcome is near 1% (applied to the ratio or "
        "its inverse, whichever is above 1)",
    ),
}

# Effect kind -> convention. Rank-biserial r and Spearman's rho are read with the
# r thresholds, and omega- and epsilon-squared with the eta-squared thresholds;
# both are common practice rather than Cohen's own recommendation. The
# probability of superiority has no convention here.
CONVENTION_OF: dict[EffectKind, str] = {
    EffectKind.HEDGES_G: "d",
    EffectKind.HEDGES_G_AV: "d",
    EffectKind.HEDGES_G_Z: "d",
    EffectKind.RANK_BISERIAL: "r",
    EffectKind.RANK_BISERIAL_PAIRED: "r",
    EffectKind.PEARSON_R: "r",
    EffectKind.SPEARMAN_RHO: "r",
    EffectKind.COHENS_H: "h",
    EffectKind.COHENS_W: "w",
    EffectKind.CRAMERS_V: "cramers_v",
    EffectKind.ETA_SQUARED: "eta_squared",
    EffectKind.OMEGA_SQUARED: "eta_squared",
    EffectKind.EPSILON_SQUARED: "eta_squared",
    EffectKind.ETA_SQUARED_WEIGHTED: "eta_squared",
    EffectKind.EPSILON_SQUARED_EQUAL_WEIGHTS: "eta_squared",
    EffectKind.ODDS_RATIO: "odds_ratio",
    EffectKind.DISCORDANT_ODDS_RATIO: "odds_ratio",
}


def effect_kind(kind: EffectKind | None) -> str | None:
    """The convention an effect kind is read with ("d", "r", ...), or None when none applies."""
    return CONVENTION_OF.get(kind) if kind is not None else None


def cramers_v_convention(min_dim_minus_one: int) -> Convention:
    """Thresholds for Cramer's V in a table whose smaller side has ``k + 1`` levels.

    Parameters
    ----------
    min_dim_minus_one : int
        ``min(rows, columns) - 1`` of the table (1 for any 2 x c table).

    Returns
    -------
    Convention
        Cohen's w thresholds divided by ``sqrt(k)``.

    Notes
    -----
    V = w / sqrt(k), so Cohen's w benchmarks (0.1, 0.3, 0.5) carry over as
    0.1/sqrt(k), 0.3/sqrt(k), 0.5/sqrt(k). A rule of thumb (Cohen 1988, ch. 7,
    recalled from memory).
    """
    k = max(1, int(min_dim_minus_one))
    root = math.sqrt(k)
    return Convention(
        "cramers_v",
        0.1 / root,
        0.3 / root,
        0.5 / root,
        _COHEN,
        f"{_COHEN_BOOK}, ch. 7: w of 0.1, 0.3, 0.5 divided by sqrt({k}) for Cramer's V "
        f"when the smaller side of the table has {k + 1} levels",
    )


def convention_for(kind: EffectKind | None, *, table_min_dim: int | None = None) -> Convention | None:
    """The convention that applies to an effect kind, or None.

    Parameters
    ----------
    kind : EffectKind or None
        The effect's kind.
    table_min_dim : int, optional
        For Cramer's V: the number of levels on the smaller side of the table.
        Unknown sizes use k = 1 (the strictest thresholds, so words err small).

    Returns
    -------
    Convention or None
    """
    convention = effect_kind(kind)
    if convention is None:
        return None
    if convention == "cramers_v":
        k = (table_min_dim - 1) if table_min_dim and table_min_dim >= 2 else 1
        return cramers_v_convention(k)
    return CONVENTIONS[convention]


def magnitude(
    kind: EffectKind | None, value: float | None, *, table_min_dim: int | None = None
) -> Magnitude | None:
    """The size word for an effect value under its named rule of thumb.

    Parameters
    ----------
    kind : EffectKind or None
        The effect's kind (see ``CONVENTION_OF``).
    value : float or None
        The effect's value. The sign is ignored (a size, not a direction); an odds
        ratio below 1 is read through its inverse.
    table_min_dim : int, optional
        For Cramer's V, the number of levels on the smaller side of the table.

    Returns
    -------
    Magnitude or None
        None when the value is missing or not finite, or no convention applies.

    Notes
    -----
    A value at a threshold takes the larger word (0.5 is a medium d).

    References
    ----------
    Cohen J. Statistical Power Analysis for the Behavioral Sciences. 2nd ed.
    Hillsdale, NJ: Lawrence Erlbaum; 1988. doi:10.4324/9780203771587
    """
    if value is None or not isinstance(value, (int, float)) or not math.isfinite(value):
        return None
    convention = convention_for(kind, table_min_dim=table_min_dim)
    if convention is None:
        return None
    size = abs(float(value))
    if convention.kind == "odds_ratio":
        if size <= 0:
            return None
        size = max(size, 1.0 / size)
    if size >= convention.large:
        word = "large"
    elif size >= convention.medium:
        word = "medium"
    elif size >= convention.small:
        word = "small"
    else:
        word = NEGLIGIBLE
    return Magnitude(word, convention)
