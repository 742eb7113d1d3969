"""Reading the rate unit ("per 1,000 person-years") and targets ("4%", "2 per 1000") as typed.

Both the roles sheet and the options pass the user's text here; every value is
turned into plain numbers (a multiplier, a share, a rate per one unit of the
denominator) or refused with a one-line message from ``words.rates_words``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ..errors import OptionError
from ..words import rates_words

# A number as people type it: 1000, 1,000, 1 000, 100000.5, 2.5, .5, 1e5; a decimal comma
# is not accepted (it would be read as a thousands separator), so "0,04" is refused.
_NUMBER = r"(?:\d{1,3}(?:[,\u00a0\u202f ]\d{3})+|\d+)(?:\.\d+)?(?:[eE][+-]?\d+)?|\.\d+"
_SCALE_WORDS = {"hundred": 100.0, "thousand": 1e3, "k": 1e3, "million": 1e6, "m": 1e6}
_UNIT = re.compile(
    rf"^\s*(?:per\b\s*)?(?P<number>{_NUMBER})?\s*(?:(?P<scale>hundred|thousand|million|k|m)(?![A-Za-z]))?"
    r"\s*(?P<noun>[A-Za-z][A-Za-z .'-]*?)?\s*$",
    re.IGNORECASE,
)
_TARGET = re.compile(
    rf"^\s*(?P<number>{_NUMBER})\s*(?:(?P<percent>%|percent)|(?:per|/)\s*(?P<unit>.+?))?\s*$",
    re.IGNORECASE,
)
# Nouns that all mean "people" (a population or a count of persons).
_PEOPLE = {"people", "person", "persons", "population", "residents", "inhabitants", "individuals"}
_TIME_WORDS = ("year", "month", "week", "day", "time", "py")


@dataclass(frozen=True)
class PerUnit:
    """A rate unit: rates are reported per ``per`` units of ``noun`` (noun may be None)."""

    per: float
    noun: str | None = None
    text: str = ""


@dataclass(frozen=True)
class Target:
    """A target as typed: ``number`` per ``unit`` (None: a bare number), or a percentage.

    ``value`` is the number over the unit's multiplier (2 per 1,000 gives 0.002; 4% gives 0.04).
    """

    value: float
    number: float
    unit: PerUnit | None = None
    percent: bool = False
    text: str = ""


def _parse_number(text: str) -> float:
    return float(re.sub(r"[,\u00a0\u202f ]", "", text))


def parse_per_unit(text: str | float) -> PerUnit:
    """The rate unit from 'per 1,000', 'per 100,000 people', 'per 1,000 person-years' or 1000.

    Parameters
    ----------
    text : str or number
        As typed on the roles sheet or given as an option. A number alone is the
        multiplier; words such as "thousand" or "k" multiply it; a trailing noun names
        the denominator (kept for readings and checked against targets).

    Returns
    -------
    PerUnit

    Raises
    ------
    OptionError
        One line saying how to write the unit.

    Examples
    --------
    >>> parse_per_unit("per 1,000 person-years")
    PerUnit(per=1000.0, noun='person-years', text='per 1,000 person-years')
    >>> parse_per_unit(100000).per, parse_per_unit("per 100k people").noun, parse_per_unit("%").per
    (100000.0, 'people', 100.0)
    """
    raw = str(text).strip()
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        if math.isfinite(float(text)) and float(text) > 0:
            return PerUnit(float(text), None, raw)
        raise OptionError(rates_words.per_unit_refused(raw))
    if raw.lower() in ("%", "percent", "per cent"):
        return PerUnit(100.0, None, raw)
    match = _UNIT.match(raw)
    if not raw or match is None or not (match.group("number") or match.group("scale") or match.group("noun")):
        raise OptionError(rates_words.per_unit_refused(raw))
    number = _parse_number(match.group("number")) if match.group("number") else 1.0
    scale = _SCALE_WORDS[match.group("scale").lower()] if match.group("scale") else 1.0
    noun = _noun(match.group("noun"))
    per = number * scale
    if not (math.isfinite(per) and per > 0):
        raise OptionError(rates_words.per_unit_refused(raw))
    return PerUnit(per, noun, raw)


def _noun(text: str | None) -> str | None:
    if text is None:
        return None
    noun = " ".join(text.split())
    return noun or None


def parse_target(text: str | float) -> Target:
    """A target share or rate from '0.04', '4%', '2 per 1000' or '2 per 1,000 person-years'.

    Parameters
    ----------
    text : str or number
        As typed.

    Returns
    -------
    Target
        ``value`` is per one unit of the denominator for "per" forms and percentages,
        and the number itself for a bare number (see :func:`rate_target` for how a
        bare number is read as a rate).

    Raises
    ------
    OptionError
        One line saying how to write a target.

    Examples
    --------
    >>> parse_target("4%").value, parse_target("0.04").value, parse_target("2 per 1000").value
    (0.04, 0.04, 0.002)
    >>> parse_target("2 per 1,000 person-years").unit.noun
    'person-years'
    """
    raw = str(text).strip()
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        if math.isfinite(float(text)):
            return Target(float(text), float(text), None, False, raw)
        raise OptionError(rates_words.target_refused(raw))
    match = _TARGET.match(raw)
    if match is None:
        raise OptionError(rates_words.target_refused(raw))
    number = _parse_number(match.group("number"))
    if match.group("percent"):
        return Target(number / 100.0, number, PerUnit(100.0, None, "%"), True, raw)
    if match.group("unit"):
        try:
            unit = parse_per_unit(match.group("unit"))
        except OptionError:
            raise OptionError(rates_words.target_refused(raw)) from None
        return Target(number / unit.per, number, unit, False, raw)
    return Target(number, number, None, False, raw)


def _normal_noun(noun: str) -> str:
    """Noun for comparison: lower case, hyphens for spaces, singular words, 'people' for persons."""
    words = [w[:-1] if w.endswith("s") and len(w) > 3 else w for w in re.split(r"[\s_-]+", noun.lower()) if w]
    joined = "-".join(words)
    return "people" if joined in _PEOPLE or noun.lower() in _PEOPLE else joined


def share_target(target: Target) -> float:
    """The target as a share strictly between 0 and 1, for events out of a total.

    Examples
    --------
    >>> share_target(parse_target("4%")), share_target(parse_target("2 per 1,000 screened"))
    (0.04, 0.002)
    """
    if target.unit is not None and target.unit.noun and _is_time(target.unit.noun):
        raise OptionError(rates_words.target_is_rate_for_share(target.text))
    if not (0.0 < target.value < 1.0):
        raise OptionError(rates_words.target_share_refused(target.text))
    return target.value


def _is_time(noun: str) -> bool:
    lowered = noun.lower()
    return any(word in lowered for word in _TIME_WORDS)


def rate_target(target: Target, unit: PerUnit | None = None) -> float:
    """The target as a rate per one unit of person-time (or per person).

    Parameters
    ----------
    target : Target
        As parsed.
    unit : PerUnit, optional
        The unit set for the rates. A bare number is read in this unit ("2" with
        "per 1,000" is 2 per 1,000), and per one unit when no unit is set.

    Returns
    -------
    float
        Above 0.

    Raises
    ------
    OptionError
        For a target at or below 0, or one whose noun differs from the unit's
        ("per 1,000 person-years" against rates per 100,000 people).

    Examples
    --------
    >>> rate_target(parse_target("2"), parse_per_unit("per 1,000"))
    0.002
    >>> rate_target(parse_target("150 per 100,000 people"), parse_per_unit("per 1,000 population"))
    0.0015
    """
    if target.unit is None:
        value = target.number / (unit.per if unit is not None else 1.0)
    else:
        value = target.value
        given, wanted = target.unit.noun, unit.noun if unit is not None else None
        if given and wanted and _normal_noun(given) != _normal_noun(wanted):
            raise OptionError(rates_words.target_unit_mismatch(target.text, given, wanted))
    if not (math.isfinite(value) and value > 0):
        raise OptionError(rates_words.target_rate_refused(target.text))
    return value
