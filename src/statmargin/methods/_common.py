"""Helpers shared by the test modules: input cleaning, checks, tails and t intervals.

Nothing here knows about sheets or files; inputs are numpy arrays and plain numbers.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterable
from typing import Any

import numpy as np
from scipy import stats

from statmargin.errors import NotEnoughDataError, OptionError

ALTERNATIVES = ("two-sided", "greater", "less")


def check_options(alternative: str, confidence: float) -> None:
    """Refuse an unknown alternative or a confidence level outside (0, 1).

    Parameters
    ----------
    alternative : str
        One of ``"two-sided"``, ``"greater"``, ``"less"``.
    confidence : float
        Confidence level of intervals, strictly between 0 and 1.

    Raises
    ------
    OptionError
        With a one-line message saying which value to use.
    """
    if alternative not in ALTERNATIVES:
        raise OptionError(
            f"The alternative '{alternative}' is not known; use one of: {', '.join(ALTERNATIVES)}."
        )
    if not (isinstance(confidence, (int, float)) and 0.0 < float(confidence) < 1.0):
        raise OptionError(
            f"The confidence level {confidence!r} must be a number between 0 and 1, such as 0.95."
        )


def check_confidence(confidence: float) -> float:
    """The confidence level as a float; refuse one outside (0, 1) in one line.

    Raises
    ------
    OptionError
        When the level is not strictly between 0 and 1.
    """
    if not (0.0 < float(confidence) < 1.0):
        raise OptionError(f"Confidence level {confidence} is not between 0 and 1; use e.g. 0.95.")
    return float(confidence)


def clean(values: Any, what: str = "the outcome") -> tuple[np.ndarray, int]:
    """Return the finite values as a float array and how many were dropped.

    Parameters
    ----------
    values : array-like
        Numbers; NaN (and infinite values) are dropped defensively.
    what : str
        Plain name of the values, used in error messages.

    Returns
    -------
    numpy.ndarray, int
        The kept values and the count of dropped ones.
    """
    try:
        array = np.asarray(values, dtype=float).ravel()
    except (TypeError, ValueError):
        raise NotEnoughDataError(
            f"Some values of {what} are not numbers; mark that column as a category or fix the cells."
        ) from None
    keep = np.isfinite(array)
    return array[keep], int(array.size - keep.sum())


def clean_pairs(first: Any, second: Any, what: str = "the pairs") -> tuple[np.ndarray, np.ndarray, int]:
    """Keep the positions where both arrays hold finite numbers.

    Returns
    -------
    numpy.ndarray, numpy.ndarray, int
        The kept first and second values and the count of dropped pairs.
    """
    a = np.asarray(first, dtype=float).ravel()
    b = np.asarray(second, dtype=float).ravel()
    if a.size != b.size:
        raise NotEnoughDataError(
            f"The two columns of {what} have different lengths ({a.size} and {b.size}); give one value of each per row."
        )
    keep = np.isfinite(a) & np.isfinite(b)
    return a[keep], b[keep], int(a.size - keep.sum())


def require_count(values: np.ndarray, minimum: int, what: str) -> None:
    """Raise ``NotEnoughDataError`` when fewer than ``minimum`` values remain."""
    if values.size < minimum:
        raise NotEnoughDataError(
            f"{what[0].upper() + what[1:]} has {values.size} usable value(s); at least {minimum} are needed."
        )


def require_spread(values: np.ndarray, what: str) -> None:
    """Raise ``NotEnoughDataError`` when every value is the same."""
    if values.size and np.all(values == values[0]):
        raise NotEnoughDataError(
            f"Every value of {what} is the same ({format_number(values[0])}), so there is no spread to test."
        )


def format_number(value: float) -> str:
    """Short plain form of a number for messages (full precision stays in results)."""
    return f"{value:.6g}"


def accurate_mean(values: np.ndarray) -> float:
    """Mean with a correction pass, accurate when values share many leading digits.

    Notes
    -----
    First pass: correctly rounded sum (``math.fsum``) over n. Second pass adds the
    mean of the residuals, which removes the rounding left by the first pass.
    """
    n = values.size
    first = math.fsum(values) / n
    return first + math.fsum(values - first) / n


def sum_of_squares(values: np.ndarray, center: float) -> float:
    """Sum of squared deviations from ``center`` with a compensated sum."""
    deviations = values - center
    return math.fsum(deviations * deviations)


def describe(label: str, values: np.ndarray) -> dict[str, Any]:
    """Per-group summary: label, n, mean, sd (n - 1 divisor), median."""
    n = int(values.size)
    mean = accurate_mean(values) if n else None
    sd = math.sqrt(sum_of_squares(values, mean) / (n - 1)) if n >= 2 else None
    median = float(np.median(values)) if n else None
    return {"label": str(label), "n": n, "mean": mean, "sd": sd, "median": median}


def p_from_t(t: float, df: float, alternative: str) -> float:
    """P-value of a t statistic; ``greater`` means large t is evidence."""
    if alternative == "greater":
        return float(stats.t.sf(t, df))
    if alternative == "less":
        return float(stats.t.cdf(t, df))
    return float(min(1.0, 2.0 * stats.t.sf(abs(t), df)))


def p_from_z(z: float, alternative: str) -> float:
    """P-value of a standard-normal statistic, as R computes it (two-sided = 2 min tail)."""
    if alternative == "greater":
        return float(stats.norm.sf(z))
    if alternative == "less":
        return float(stats.norm.cdf(z))
    return float(min(1.0, 2.0 * min(stats.norm.cdf(z), stats.norm.sf(z))))


def t_interval(
    estimate: float, standard_error: float, df: float, alternative: str, confidence: float
) -> tuple[float, float]:
    """Confidence interval ``estimate +/- t quantile * se``; one-sided for one-sided questions.

    Notes
    -----
    Follows R's ``t.test``: a ``greater`` question gives ``(lower, inf)`` and a ``less``
    question gives ``(-inf, upper)``.
    """
    if alternative == "two-sided":
        q = float(stats.t.ppf(1.0 - (1.0 - confidence) / 2.0, df))
        return estimate - q * standard_error, estimate + q * standard_error
    q = float(stats.t.ppf(confidence, df))
    if alternative == "greater":
        return estimate - q * standard_error, math.inf
    return -math.inf, estimate + q * standard_error


def z_quantiles(alternative: str, confidence: float) -> tuple[float | None, float | None]:
    """Normal quantiles bounding an interval: (for lower bound, for upper bound); None = open."""
    if alternative == "two-sided":
        q = float(stats.norm.ppf(1.0 - (1.0 - confidence) / 2.0))
        return q, -q
    q = float(stats.norm.ppf(confidence))
    return (q, None) if alternative == "greater" else (None, -q)


def check_exact(exact: bool | str) -> None:
    """Refuse an ``exact`` choice other than ``"auto"``, True or False."""
    if exact not in ("auto", True, False):
        raise OptionError(f"exact must be 'auto', True or False, not {exact!r}.")


def normal_approximation(correct: bool) -> tuple[str, str]:
    """``p_method`` and the plain note for a rank test's normal approximation.

    Returns
    -------
    str, str
        The p-method name (with or without continuity correction) and the note
        for ``Result.notes``.
    """
    p_method = "normal_approximation_continuity" if correct else "normal_approximation"
    note = "The p-value uses the normal approximation with the tie correction" + (
        " and a continuity correction." if correct else " (no continuity correction)."
    )
    return p_method, note


def continuity_correction(centred: float, alternative: str, correct: bool) -> float:
    """Half a unit towards the null for a centred rank statistic, as R's ``wilcox.test``."""
    if not correct:
        return 0.0
    return {"two-sided": float(np.sign(centred)) * 0.5, "greater": 0.5, "less": -0.5}[alternative]


def has_ties(values: np.ndarray) -> bool:
    """True when any value occurs more than once."""
    return np.unique(values).size != values.size


def tie_counts(values: np.ndarray) -> np.ndarray:
    """Sizes of groups of equal values (1 for untied values)."""
    _, counts = np.unique(values, return_counts=True)
    return counts.astype(float)


def caveat(notes: list[str], sentence: str) -> None:
    """Record a statistical caveat in ``notes`` and as a Python warning."""
    notes.append(sentence)
    warnings.warn(sentence, stacklevel=3)


def labels_pair(labels: Iterable[str]) -> tuple[str, str]:
    """Two group labels as strings; refuse any other count."""
    pair = tuple(str(label) for label in labels)
    if len(pair) != 2:
        raise OptionError(f"Two group labels are needed, got {len(pair)}.")
    return pair[0], pair[1]
