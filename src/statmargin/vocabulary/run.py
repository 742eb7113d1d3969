"""Words for run-wide settings: the multiple-comparison adjustment and the direction of a question."""

from __future__ import annotations

from .base import Word


class AdjustMethod(Word):
    """Multiple-comparison adjustment across one run."""

    HOLM = "holm"
    BH = "benjamini-hochberg"
    NONE = "none"


class Alternative(Word):
    TWO_SIDED = "two-sided"
    GREATER = "greater"
    LESS = "less"


class RowsToUse(Word):
    """Which data rows a run reads (a roles-sheet setting)."""

    ALL = "all rows"  # hidden and filtered rows included, and said so
    VISIBLE = "visible rows only"  # rows a filter or the user hid are left out


class YesNo(Word):
    """A yes/no setting."""

    YES = "yes"
    NO = "no"


class AdjustFamily(Word):
    """Which results share one multiple-comparison adjustment (a roles-sheet setting)."""

    RUN = "this run"  # every result of the run (adding a question moves every adjusted p)
    OUTCOME = "each outcome"  # the results about one outcome column form a family
    NONE = "none"  # no adjustment: each p stands alone
