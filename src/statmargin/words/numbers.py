"""Numbers, p-values and intervals as text: the one formatter every sentence and summary uses.

Values stay numeric (full precision) in results and cells; text is made here
only for sentences, the terminal summary and messages.
"""

from __future__ import annotations

import math
from typing import Any, TypeGuard

# Evidence words by p-value band: common practice, e.g. Bland M. An Introduction
# to Medical Statistics, 4th ed. (2015), on interpreting p-values (recalled from memory).
EVIDENCE_BANDS: tuple[tuple[float, str], ...] = (
    (0.001, "very strong evidence"),
    (0.01, "strong evidence"),
    (0.05, "moderate evidence"),
    (0.10, "weak evidence"),
)



def is_number(value: Any) -> TypeGuard[int | float]:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def decimals_for(*values: float | None) -> int:
    """Decimals that show the largest of ``values`` to three significant digits (0 to 6)."""
    finite = [abs(float(v)) for v in values if is_number(v) and v != 0]
    if not finite:
        return 2
    top = max(finite)
    return int(min(6, max(0, 2 - math.floor(math.log10(top)))))


def fmt_number(value: float | None, decimals: int | None = None) -> str:
    """A number for a sentence: three significant digits, thousands separators, '-' for none."""
    if not is_number(value):
        return "not available"
    if decimals is None:
        decimals = decimals_for(value)
    text = f"{float(value):,.{decimals}f}"
    return "0" if text.strip("-0.,") == "" else text


def fmt_p(p: float | None) -> str:
    """'p < 0.001', 'p = 0.004' or 'p = 0.31' (two decimals from 0.1 up)."""
    if not is_number(p):
        return "p not available"
    if p < 0.001:
        return "p < 0.001"
    if p < 0.1:
        return f"p = {p:.3f}"
    return f"p = {p:.2f}"


def fmt_ci(low: float | None, high: float | None, decimals: int, *, scale: float = 1.0) -> str:
    """'6 to 22' for an interval, or '' when either end is missing."""
    if not (is_number(low) and is_number(high)):
        return ""
    return f"{fmt_number(low * scale, decimals)} to {fmt_number(high * scale, decimals)}"


def ci_label(confidence: float) -> str:
    """'95% CI' for a confidence level of 0.95."""
    return f"{confidence * 100:g}% CI"


def followup_ci_label(test: Any, confidence: float, adjusted: bool) -> str:
    """'adjusted CI' for a follow-up whose interval is matched to its adjusted p, else '95% CI'.

    Examples
    --------
    >>> from statmargin.vocabulary import Test
    >>> followup_ci_label(Test.DUNN, 0.95, True), followup_ci_label(Test.TUKEY_HSD, 0.95, True)
    ('adjusted CI', '95% CI')
    """
    from ..vocabulary import MATCHED_INTERVAL_TESTS

    return "adjusted CI" if adjusted and test in MATCHED_INTERVAL_TESTS else ci_label(confidence)


def evidence_words(p: float | None) -> str:
    """Words for the strength of evidence against 'no difference' at p-value ``p``."""
    if not is_number(p):
        return "no usable evidence"
    for limit, words in EVIDENCE_BANDS:
        if p < limit:
            return words
    return "little or no evidence"



def fmt_percent(share: Any, decimals: int = 1) -> str:
    """A share 0..1 as '12.5%'."""
    if not is_number(share):
        return str(share)
    return f"{float(share) * 100:.{decimals}f}%"


def fmt_df(df: Any) -> str:
    """Degrees of freedom: whole numbers as they are, others to two decimals; '2 and 27' for a pair."""
    if isinstance(df, (list, tuple)):
        return " and ".join(
            fmt_number(d, 2 if not float(d).is_integer() else 0) for d in df if is_number(d)
        )
    if is_number(df):
        return fmt_number(df, 2 if not float(df).is_integer() else 0)
    return ""


def counted(n: int, noun: str, plural: str | None = None) -> str:
    """A count with its noun in the right number: '1 data note', '3 data notes', '1,200 rows'.

    Examples
    --------
    >>> counted(1, "data note"), counted(3, "analysis", "analyses"), counted(1200, "row")
    ('1 data note', '3 analyses', '1,200 rows')
    """
    word = noun if n == 1 else (plural or noun + "s")
    return f"{n:,} {word}"


def noun(n: Any, singular: str, plural: str | None = None) -> str:
    """The noun in the number that ``n`` asks for; a count shown as text (hidden: '<11') takes the plural.

    Examples
    --------
    >>> noun(1, "cell"), noun(3, "cell"), noun("<11", "period"), noun(1.0, "pair")
    ('cell', 'cells', 'periods', 'pair')
    """
    one = not isinstance(n, bool) and isinstance(n, (int, float)) and n == 1
    return singular if one else (plural or singular + "s")
