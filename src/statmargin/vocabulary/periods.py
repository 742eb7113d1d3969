"""Words for the period role: the grain of a period, control-chart kinds and rules, and run-to-run flags.

Values are what a user picks on the roles sheet (the grain) and the identifiers
written to JSON (``unusual[].rule``, ``since_last_run``); display text is made
in ``statmargin.words.period_words``.
"""

from __future__ import annotations

from .base import Word


class Grain(Word):
    """How long one period is. Weeks are ISO-8601 weeks (Monday to Sunday)."""

    WEEK = "week"
    MONTH = "month"
    QUARTER = "quarter"
    YEAR = "year"


class Precision(Word):
    """The finest unit a period cell carries (a date carries days; '2026-03' only a month)."""

    DAY = "day"
    WEEK = "week"
    MONTH = "month"
    QUARTER = "quarter"
    YEAR = "year"


class ChartKind(Word):
    """A Shewhart control chart for a per-period series."""

    P = "p"  # share per period, limits from each period's own n (Shewhart)
    LANEY_P = "laney_p"  # p chart widened by the between-period spread (Laney 2002)
    XBAR = "xbar"  # mean per period, pooled within-period SD, limits from each period's n
    INDIVIDUALS = "individuals"  # XmR chart of the period values, sigma = average moving range / 1.128


class ControlRule(Word):
    """A run rule of the Western Electric Statistical Quality Control Handbook (1956), rules 1-4."""

    BEYOND_3_SIGMA = "beyond_3_sigma"  # one point beyond a 3-sigma limit
    TWO_OF_THREE_BEYOND_2_SIGMA = "two_of_three_beyond_2_sigma"  # same side
    FOUR_OF_FIVE_BEYOND_1_SIGMA = "four_of_five_beyond_1_sigma"  # same side
    EIGHT_ON_ONE_SIDE = "eight_on_one_side"  # eight in a row on one side of the centre line


class SinceLastRun(Word):
    """How an analysis's result changed since the previous run of the same workbook."""

    NEW = "new"
    UNCHANGED = "unchanged"
    NOW_BELOW_LEVEL = "now_below_level"
    NO_LONGER_BELOW_LEVEL = "no_longer_below_level"
    DIRECTION_REVERSED = "direction_reversed"
    MOVED_OUTSIDE_INTERVAL = "moved_outside_interval"
    NO_LONGER_RUN = "no_longer_run"


# Most important first: the first that applies is an analysis's flag, and changes are named in this order.
SINCE_LAST_RUN_ORDER: tuple[SinceLastRun, ...] = (
    SinceLastRun.NO_LONGER_RUN,
    SinceLastRun.NEW,
    SinceLastRun.DIRECTION_REVERSED,
    SinceLastRun.NOW_BELOW_LEVEL,
    SinceLastRun.NO_LONGER_BELOW_LEVEL,
    SinceLastRun.MOVED_OUTSIDE_INTERVAL,
    SinceLastRun.UNCHANGED,
)


class PeriodComparison(Word):
    """A comparison of the latest period that a period analysis reports beside its trend."""

    PREVIOUS = "latest_vs_previous"  # the latest period against the nearest earlier one with rows
    YEAR_EARLIER = "latest_vs_year_earlier"  # against the same period a year earlier
