"""Words for columns: their role in the analyses, how they are measured, how their shape is handled.

Enum values are the exact words a user picks in the roles sheet's dropdowns, so
the sheet, the command line and the Python API share one vocabulary.
"""

from __future__ import annotations

from .base import Word


class Role(Word):
    """What a column is for in the analyses."""

    OUTCOME = "outcome"
    COMPARE_BY = "compare by"
    PAIRING_KEY = "pairing key"
    PERIOD = "period"  # the date or period of each row: series, trend, unusual periods
    COUNT = "count"  # a frequency weight: the row stands for that many records
    EVENTS = "events"  # a count of events, out of a total (Out of) or per person-time (Per)
    IGNORE = "ignore"


class MeasureType(Word):
    """How a column's values are measured (inferred, or set by the user)."""

    CONTINUOUS = "continuous"
    CATEGORICAL = "categorical"
    ORDINAL = "ordinal"  # only when the user says so
    DATE = "date"
    IDENTIFIER = "identifier"
    EMPTY = "empty"


class ShapeHandling(Word):
    """Whether to let the shape checks choose the test, or to fix the family."""

    AUTO = "auto"
    NORMAL = "assume normal"
    RANK = "rank-based"
