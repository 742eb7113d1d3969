"""Sentences for the refusals of the statistical methods (``vocabulary.codes.Refusal``).

A method in ``stats/`` refuses a value it cannot use by raising
``errors.OptionError`` with a ``Refusal`` code and its facts; the error's
message is the sentence registered here. Refusals of rates and shares of
events out of totals are worded in ``rates_words`` beside their option
messages, and the adjustment family in ``period_words``.
"""

from __future__ import annotations

from collections.abc import Callable

from ..vocabulary import AdjustMethod, Alternative
from ..vocabulary.codes import Code, Refusal
from .sentences import Facts, register


def _as_given(value: object) -> str:
    """A value as passed: text quoted, a number (numpy's too) as it prints."""
    return repr(value) if isinstance(value, str) else str(value)


def _unknown_adjustment(f: Facts) -> str:
    choices = ", ".join(f"'{m.value}'" for m in AdjustMethod)
    return f"Unknown p-value adjustment '{f['given']}'; choose one of {choices}."


TEMPLATES: dict[Code, str | Callable[[Facts], str]] = {
    Refusal.UNKNOWN_ALTERNATIVE: lambda f: (
        f"The alternative '{f['given']}' is not known; use one of: {', '.join(a.value for a in Alternative)}."
    ),
    Refusal.CONFIDENCE_RANGE: lambda f: (
        f"The confidence level {_as_given(f['given'])} must be a number between 0 and 1, such as 0.95."
    ),
    Refusal.EXACT_CHOICE: lambda f: f"exact must be 'auto', True or False, not {f['given']!r}.",
    Refusal.TWO_LABELS: "Two group labels are needed, got {n}.",
    Refusal.UNKNOWN_ADJUSTMENT: _unknown_adjustment,
    Refusal.UNKNOWN_P_METHOD: lambda f: f"p_method must be one of {', '.join(f['choices'])}, not {f['given']!r}.",
    Refusal.RESAMPLES: "The number of Monte Carlo resamples is {given}; use a whole number such as 20000.",
    Refusal.NOT_A_COUNT: "{what} is '{value}', not a count; use whole numbers.",
    Refusal.NOT_WHOLE_COUNT: "{what} is {value}; counts must be whole numbers 0 or more.",
    Refusal.TABLE_NOT_2D: "The table of counts must have rows and columns (2-D).",
    Refusal.TABLE_LABELS: (
        "The table is {rows}x{columns} but {row_labels} row and {column_labels} column labels were given; "
        "give one label per row and column."
    ),
    Refusal.SHARE_MISSING: (
        "Category '{label}' has counts but no expected share; give a share for every category."
    ),
    Refusal.SHARES_NOT_POSITIVE: "Every expected share must be a number above 0; fix the shares given.",
    Refusal.SHARES_SUM: "The expected shares add up to {total:g}, not 1; correct them so they add up to 1.",
    Refusal.COUNT_ABOVE_TOTAL: (
        "The count of '{label}' ({count}) is larger than the total ({total}); check the counts."
    ),
    Refusal.TARGET_SHARE_OPEN: "The target share {value} must be between 0 and 1 (exclusive); give e.g. 0.5.",
    Refusal.FISHER_TWO_BY_TWO: (
        "Fisher's exact test here takes a 2x2 table; use the chi-square test for larger tables."
    ),
    Refusal.MCNEMAR_TWO_LEVELS: "McNemar's test needs exactly two levels; give two labels.",
    Refusal.MCNEMAR_TWO_BY_TWO: "McNemar's test takes a 2x2 table of paired counts.",
}
register(TEMPLATES)
