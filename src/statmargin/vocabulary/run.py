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
