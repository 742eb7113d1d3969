"""Run-wide settings from plain option values."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from ..errors import OptionError
from ..plan.model import Settings
from ..vocabulary import AdjustFamily, AdjustMethod, Alternative, Grain
from ..vocabulary.base import Word
from ..words import refusals


def make_settings(
    *,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    adjust: str = "holm",
    family: str | None = None,
    grain: str | None = None,
    per_unit: str | float | None = None,
    series_by_group: bool = False,
) -> Settings:
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
    extra: dict[str, Any] = {"series_by_group": bool(series_by_group)}
    if family is not None:
        extra["family"] = _word(AdjustFamily, family, "--adjust-across")
    if grain is not None:
        extra["grain"] = _word(Grain, grain, "--period-length")
    if per_unit is not None:
        from ..plan.rates_units import parse_per_unit

        parse_per_unit(per_unit)  # refuses a unit it cannot read, in one line
        extra["per_unit"] = str(per_unit)
    return replace(Settings(confidence=float(confidence), adjust=adj, alternative=alt), **extra)


def _word(enum: type[Word], word: object, option: str) -> Word:
    try:
        return enum(str(word).strip().lower())
    except ValueError:
        raise OptionError(refusals.unknown_word(option, word, [m.value for m in enum])) from None
