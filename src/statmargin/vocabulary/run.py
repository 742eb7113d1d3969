"""Words for run-wide settings: the multiple-comparison adjustment and the direction of a question."""

from __future__ import annotations

from enum import Enum


class AdjustMethod(str, Enum):
    """Multiple-comparison adjustment across one run."""

    HOLM = "holm"
    BH = "benjamini-hochberg"
    NONE = "none"


class Alternative(str, Enum):
    TWO_SIDED = "two-sided"
    GREATER = "greater"
    LESS = "less"
