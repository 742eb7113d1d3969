"""Words for what the shape and spread judgements found, and by which rule.

These are the structured verdicts of ``statmargin.stats.shape.judge_shape`` and
``judge_spread``; the sentences a reader sees are made from them in
``statmargin.words``.
"""

from __future__ import annotations

from .base import Word


class ShapeDirection(Word):
    """How the within-group residuals depart from a normal shape (or that they do not)."""

    CLOSE_TO_NORMAL = "close to normal"  # no clear departure was seen
    RIGHT_SKEWED = "right-skewed"
    LEFT_SKEWED = "left-skewed"
    HEAVY_TAILED = "heavy-tailed"
    LIGHT_TAILED = "light-tailed"
    PILED_AT_LIMIT = "piled at a limit"  # many records tied at the lowest or highest value
    TOO_FEW = "too few to judge"
    NO_SPREAD = "no spread"


class ShapeCriterion(Word):
    """Which part of the shape rule decided (see the table in ``statmargin.designs.rules``)."""

    NO_CLEAR_DEPARTURE = "no_clear_departure"  # combined Shapiro-Wilk p at or above the level
    DEPARTURE_LARGE_N = "departure_large_n"  # a departure, but the groups are large enough for means
    DEPARTURE_SMALL_N = "departure_small_n"  # a departure, and the groups are too small for means
    TOO_FEW = "too_few"  # no group has 3 or more values
    NO_SPREAD = "no_spread"  # every value equal within every group


class SpreadCriterion(Word):
    """Which part of the spread rule decided."""

    SIMILAR = "similar"  # SD ratio below the limit and Brown-Forsythe p at or above the level
    RATIO = "ratio"  # largest / smallest SD at or above the limit
    TEST = "test"  # Brown-Forsythe p below the level
    RATIO_AND_TEST = "ratio_and_test"
    NOT_CHECKED = "not_checked"  # one group, or no group with two or more values
