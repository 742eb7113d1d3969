"""Run-wide settings from plain option values."""

from __future__ import annotations

from ..errors import OptionError
from ..plan.model import Settings
from ..vocabulary import AdjustMethod, Alternative
from ..words import refusals


def make_settings(*, alternative: str = "two-sided", confidence: float = 0.95, adjust: str = "holm") -> Settings:
    """Settings from plain option values, with one-line errors for values that do not fit.

    Examples
    --------
    >>> make_settings(alternative="Greater", adjust="none").alternative.value
    'greater'
    """
    try:
        alt = Alternative(str(alternative).strip().lower())
    except ValueError:
        raise OptionError(refusals.unknown_word("--alternative", alternative, [a.value for a in Alternative])) from None
    try:
        adj = AdjustMethod(str(adjust).strip().lower())
    except ValueError:
        raise OptionError(refusals.unknown_word("--adjust", adjust, [a.value for a in AdjustMethod])) from None
    if isinstance(confidence, bool) or not isinstance(confidence, (int, float)) or not 0.0 < float(confidence) < 1.0:
        raise OptionError(refusals.bad_confidence(confidence))
    return Settings(confidence=float(confidence), adjust=adj, alternative=alt)
