"""Codes with facts: what the methods and designs report instead of sentences.

A method or design never writes a sentence. It reports a code with its facts
(numbers, labels, column names), and ``statmargin.words.sentences`` turns the
code into words. Sharing mode can then hide small counts in the facts before any
wording exists: every fact that is a record count is a ``Count``.

Five families:

- ``Skip``: why no test could be run (a skipped analysis carries one).
- ``Note``: a statistical caveat raised while computing (ties, approximations,
  small expected counts); methods also raise it as a Python warning.
- ``Reason``: why the test was chosen.
- ``Caution``: a caution about how to read a result (design-specific ones
  included); the explain step adds the run-wide ones.
- ``Refusal``: why a method refuses a value passed to it (an option or a count
  that does not fit); raised as ``errors.OptionError`` and worded by ``words``.

A fact that names values without a column name (``what``) may be a ``Subject``:
words then writes its phrase ("the outcome in both groups").
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from .base import Word


class Count(int):
    """A record count among a code's facts; sharing mode hides it when it is small."""

    __slots__ = ()


class Derived(float):
    """A number computed from counts that could give a small count back (an expected count).

    Sharing mode drops it from the facts; a sentence then leaves it out.
    """

    __slots__ = ()


class Hidden:
    """A count hidden by sharing mode, wherever a count stood (a fact, a group, a cell).

    ``small`` is True for a count hidden because it is below the floor: words
    write it as "fewer than N", sheets as "<N". A count hidden only so that a
    small one cannot be worked out from it (complementary suppression) has
    ``small=False``: words write "a hidden number of", sheets "suppressed".
    JSON writes null for both.
    """

    __slots__ = ("floor", "small")

    def __init__(self, floor: int, small: bool = True) -> None:
        self.floor = floor
        self.small = small

    def __format__(self, spec: str) -> str:
        return str(self)

    def __str__(self) -> str:
        return f"fewer than {self.floor}" if self.small else "a hidden number of"

    def __repr__(self) -> str:
        return f"Hidden({self.floor})" if self.small else f"Hidden({self.floor}, small=False)"

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Hidden) and (other.floor, other.small) == (self.floor, self.small)

    def __hash__(self) -> int:
        return hash(("hidden", self.floor, self.small))


class Skip(Word):
    """Why no test could be run."""

    NOT_NUMBERS = "not_numbers"  # what
    LENGTH_MISMATCH = "length_mismatch"  # what, first, second
    TOO_FEW_VALUES = "too_few_values"  # what, n, minimum
    NO_SPREAD = "no_spread"  # what, value
    NO_VALUES_FOR_SHIFT = "no_values_for_shift"
    NO_VALUES_FOR_PSEUDO_MEDIAN = "no_values_for_pseudo_median"
    ONE_CATEGORY_SIDE = "one_category_side"
    EMPTY_TABLE = "empty_table"
    EMPTY_ROW = "empty_row"  # label
    EMPTY_COLUMN = "empty_column"  # label
    ONE_CATEGORY_GIVEN = "one_category_given"
    NO_OBSERVATIONS = "no_observations"
    NO_COMPLETE_PAIRS = "no_complete_pairs"  # outcome (optional)
    NO_DISCORDANT_PAIRS = "no_discordant_pairs"
    TOO_FEW_PAIRS = "too_few_pairs"  # n, minimum, first, second (optional)
    PAIRWISE_TOO_FEW = "pairwise_too_few"  # label, n, minimum
    PAIRWISE_ONE_GROUP = "pairwise_one_group"
    NO_WITHIN_SPREAD = "no_within_spread"
    PAIR_NO_SPREAD = "pair_no_spread"  # first, second
    ALL_RANKS_EQUAL = "all_ranks_equal"
    TOO_FEW_GROUPS = "too_few_groups"  # n
    GROUP_CONSTANT_WELCH = "group_constant_welch"  # label, value
    ALL_EQUAL_TARGET = "all_equal_target"  # what, value
    ALL_DIFFERENCES_ZERO = "all_differences_zero"  # first, second
    SINGLE_VALUE_GROUPS = "single_value_groups"  # first, first_value, second, second_value
    NO_SPREAD_WITHIN_GROUPS = "no_spread_within_groups"
    CONSTANT_COLUMN = "constant_column"  # name, value
    NO_USABLE_VALUES = "no_usable_values"  # name
    NO_ROWS_WITH_BOTH = "no_rows_with_both"  # outcome, by
    ONE_LEVEL = "one_level"  # column, level (optional)
    FEWER_THAN_TWO_GROUPS = "fewer_than_two_groups"  # by, level (optional)
    GROUP_OF_ONE = "group_of_one"  # by, level, n (a Count, 1), cell (of its row; None without sheet rows)
    TOO_MANY_GROUPS = "too_many_groups"  # by, n, limit
    TOO_MANY_CONDITIONS = "too_many_conditions"  # by, n, key
    NEED_TWO_CONDITIONS = "need_two_conditions"  # by, outcome, key
    DUPLICATE_KEYS = "duplicate_keys"  # key, by, keys
    PAIRED_NOT_TWO_LEVELS = "paired_not_two_levels"  # outcome, n
    NO_P_VALUE = "no_p_value"
    TOO_FEW_PERIODS = "too_few_periods"  # n, minimum (periods with data)
    NO_BASELINE = "no_baseline"  # n, minimum (baseline periods for control limits)
    PERIOD_MANY_LEVELS = "period_many_levels"  # outcome, n: a series by period counts one level of two
    PERIOD_LATEST_MISSING = "period_latest_missing"  # period, group: a group without rows in the latest period
    # aggregated rows (events out of totals, events per person-time, count weights)
    NOT_WHOLE_COUNT = "not_whole_count"  # what, row, value
    NEGATIVE_VALUE = "negative_value"  # what, row, value
    EVENTS_ABOVE_TOTAL = "events_above_total"  # row, events, total
    EVENTS_WITHOUT_TIME = "events_without_time"  # row, events
    NO_PERSON_TIME = "no_person_time"  # label (optional)
    NO_EVENTS = "no_events"
    NO_RECORDS = "no_records"  # label (optional): totals or count weights add up to 0


class Note(Word):
    """A statistical caveat raised while computing a result."""

    EXACT_P = "exact_p"  # per_group: bool
    NORMAL_APPROXIMATION = "normal_approximation"  # continuity: bool
    EXACT_RULED_OUT = "exact_ruled_out"  # zeros: bool (one sample) / per group
    ZEROS_DROPPED = "zeros_dropped"  # n, value
    MONTE_CARLO_P = "monte_carlo_p"  # n_small, n_cells, small, resamples, se, margins
    EXPECTED_BELOW_5 = "expected_below_5"  # n_small, n_cells, smallest, advice
    ONE_WAY_DISCORDANT = "one_way_discordant"  # n
    PERFECT_LINE = "perfect_line"
    NO_CI_FEW_PAIRS = "no_ci_few_pairs"
    MULTIGROUP_TWO_SIDED = "multigroup_two_sided"  # alternative
    WELCH_EFFECT_CLASSIC = "welch_effect_classic"
    KRUSKAL_SMALL_GROUPS = "kruskal_small_groups"
    CI_NOT_REACHABLE = "ci_not_reachable"  # confidence
    ASSUMED_NORMAL_DESPITE_SHAPE = "assumed_normal_despite_shape"  # shape (a Coded of Reason.SHAPE_*)
    INCOMPLETE_PAIRS = "incomplete_pairs"  # n, key, outcome, first, second
    SHARE_HIDDEN = "share_hidden"  # floor
    SHORT_SERIES = "short_series"  # n, minimum: fewer periods than a trend test reads well
    AUTOCORRELATED = "autocorrelated"  # r, n, limit: lag-1 autocorrelation of the detrended series
    TREND_NOT_LINEAR = "trend_not_linear"  # statistic, df, p: periods vary beyond a straight-line trend
    OVERDISPERSED = "overdispersed"  # ratio, statistic, df, p: p chart widened (Laney)
    PERIOD_UNREADABLE = "period_unreadable"  # column, n, examples: [(row, text), ...]
    PERIOD_GAPS = "period_gaps"  # column, periods: labels of periods with no rows
    PERIOD_PARTIAL = "period_partial"  # period, last_date, period_end
    PERIOD_FEW_ROWS = "period_few_rows"  # periods: [(label, n), ...], minimum
    PERIOD_USER_LATEST = "period_user_latest"  # period: the latest period as the user set it
    RATES_OVERDISPERSED = "rates_overdispersed"  # dispersion, rows (not records), p
    SHARES_OVERDISPERSED = "shares_overdispersed"  # dispersion, rows (not records), p
    RATE_NO_EVENTS_GROUP = "rate_no_events_group"  # label
    WEIGHTED_BOOTSTRAP = "weighted_bootstrap"  # resamples
    PERMUTATION_P = "permutation_p"  # draws, smallest, below
    SIGN_TIES_DROPPED = "sign_ties_dropped"  # n, value
    MEDIAN_INTERVAL_OPEN = "median_interval_open"  # n, confidence
    INTERVAL_DISAGREES_WITH_P = "interval_disagrees_with_p"  # low, high, p, alpha, excludes_zero
    SHAPE_DEPARTS_ASSUMED_NORMAL = "shape_departs_assumed_normal"  # the facts of a shape reason


class Reason(Word):
    """Why the test was chosen (or why a follow-up was run)."""

    ONE_SHARE_BINOMIAL = "one_share_binomial"  # outcome
    SMALL_EXPECTED_BINOMIAL = "small_expected_binomial"  # smallest
    GOODNESS_OF_FIT = "goodness_of_fit"  # outcome
    SMALL_EXPECTED_FISHER = "small_expected_fisher"  # smallest
    CHI_SQUARE_INDEPENDENCE = "chi_square_independence"  # outcome, by
    MCNEMAR_PAIRED = "mcnemar_paired"  # outcome
    ORDINAL_RANK = "ordinal_rank"  # column
    USER_RANK = "user_rank"  # outcome
    USER_NORMAL = "user_normal"  # outcome
    SHAPE_RANK = "shape_rank"  # shape facts (see words.sentences.shape_phrase)
    SHAPE_NORMAL = "shape_normal"  # shape facts
    WELCH_DEFAULT = "welch_default"
    SPREAD_DIFFERS = "spread_differs"  # outcome, by, p
    SPREAD_SIMILAR = "spread_similar"  # outcome, by, p
    SPREAD_UNCHECKED = "spread_unchecked"  # outcome, by
    CATEGORY_BY_NUMBER = "category_by_number"  # outcome, by
    FOLLOWUP_PAIRS = "followup_pairs"  # alpha, test
    FOLLOWUP_RESIDUALS = "followup_residuals"  # threshold
    TREND_SHARES = "trend_shares"  # outcome, level: Cochran-Armitage on the share of level
    TREND_SERIES = "trend_series"  # outcome, centre ("mean"/"median"): Mann-Kendall on the series
    PERIOD_CENTRE = "period_centre"  # outcome, centre, cause ("ordinal", "user", "shape"), shape facts
    PERIOD_COMPARISONS = "period_comparisons"  # comparisons: the latest period against which periods
    ONE_RATE_EXACT = "one_rate_exact"  # outcome
    RATE_EXACT_SMALL = "rate_exact_small"  # smallest
    RATE_SCORE = "rate_score"  # smallest
    RATE_HOMOGENEITY = "rate_homogeneity"  # n
    QUASI_POISSON = "quasi_poisson"  # dispersion
    QUASI_BINOMIAL = "quasi_binomial"  # dispersion
    # layout suggestions of the plan step (never applied without the user)
    POOLED_SHARE_TARGET = "pooled_share_target"  # events, total: rows added up, exact binomial test
    POOLED_SHARES_TABLE = "pooled_shares_table"  # events, total, by: rows added up per group into one table
    POOLED_RATES = "pooled_rates"  # events, per, by (optional): rows added up per group
    SUGGEST_EVENTS_OUT_OF = "suggest_events_out_of"  # events, total, rows
    SUGGEST_EVENTS_PER = "suggest_events_per"  # events, per, rows, whole: bool
    SUGGEST_COUNT = "suggest_count"  # count, categories
    # designs.rules: facts of every shape reason are design, outcome, by, direction, p,
    # skewness, excess_kurtosis, n_smallest, n_needed, groups (+ sd_ratio, largest,
    # smallest, spread_p for group designs)
    SHAPE_NO_CLEAR_DEPARTURE = "shape_no_clear_departure"
    SHAPE_DEPARTS_LARGE_N = "shape_departs_large_n"  # mean-based despite the departure
    SHAPE_DEPARTS_SMALL_N = "shape_departs_small_n"  # rank-based
    SHAPE_TOO_FEW = "shape_too_few"  # no group of 3 or more values
    ASYMMETRIC_TARGET_SIGN_TEST = "asymmetric_target_sign_test"  # one sample: the median, sign test
    NO_SPREAD_SIGN_TEST = "no_spread_sign_test"  # + value, target
    SPREADS_DIFFER_BRUNNER_MUNZEL = "spreads_differ_brunner_munzel"
    SPREADS_DIFFER_SMALL_WELCH = "spreads_differ_small_welch"
    SPREADS_DIFFER_RANK_ANOVA_TYPE = "spreads_differ_rank_anova_type"
    GROUP_WITHOUT_SPREAD_RANK = "group_without_spread_rank"
    NON_NORMAL_SPEARMAN = "non_normal_spearman"


class Caution(Word):
    """A caution about reading one result."""

    SHARE_HIDDEN = "share_hidden"  # floor
    AGGREGATE_INDEPENDENCE = "aggregate_independence"  # events, total (column names)


class Refusal(Word):
    """Why a method refuses a value passed to it (the text is in ``words.method_refusals``).

    Values start with ``refused_``: codes of all families share one table of sentences,
    where equal values would collide (a Word equals its value).
    """

    UNKNOWN_ALTERNATIVE = "refused_unknown_alternative"  # given
    CONFIDENCE_RANGE = "refused_confidence_range"  # given
    EXACT_CHOICE = "refused_exact_choice"  # given
    TWO_LABELS = "refused_two_labels"  # n
    UNKNOWN_ADJUSTMENT = "refused_unknown_adjustment"  # given
    UNKNOWN_FAMILY = "refused_unknown_family"  # given
    UNKNOWN_P_METHOD = "refused_unknown_p_method"  # given, choices
    RESAMPLES = "refused_resamples"  # given
    NOT_A_COUNT = "refused_not_a_count"  # what (a Subject), label (optional), value
    NOT_WHOLE_COUNT = "refused_not_whole_count"  # what (a Subject), label (optional), value
    TABLE_NOT_2D = "refused_table_not_2d"
    TABLE_LABELS = "refused_table_labels"  # rows, columns, row_labels, column_labels (the numbers of each)
    SHARE_MISSING = "refused_share_missing"  # label: a category with counts but no expected share
    SHARES_NOT_POSITIVE = "refused_shares_not_positive"
    SHARES_SUM = "refused_shares_sum"  # total
    COUNT_ABOVE_TOTAL = "refused_count_above_total"  # label, count, total
    TARGET_SHARE_OPEN = "refused_target_share_open"  # value: the binomial test's target share
    FISHER_TWO_BY_TWO = "refused_fisher_two_by_two"
    MCNEMAR_TWO_LEVELS = "refused_mcnemar_two_levels"
    MCNEMAR_TWO_BY_TWO = "refused_mcnemar_two_by_two"
    TARGET_RATE = "refused_target_rate"  # value
    PER_UNIT = "refused_per_unit"  # value (as text)
    RATE_METHOD = "refused_rate_method"  # method
    TARGET_SHARE = "refused_target_share"  # value: the target share of events out of totals
    SHARE_TEST = "refused_share_test"  # test


class Subject(Word):
    """Which values a code speaks of when no column name says it; words writes the phrase."""

    OUTCOME_BOTH_GROUPS = "outcome_both_groups"
    OUTCOME_EVERY_GROUP = "outcome_every_group"
    ROWS_AND_STRATA = "rows_and_strata"
    LABELS_AND_COUNTS = "labels_and_counts"
    TABLE_CELL = "table_cell"
    OBSERVATIONS = "observations"
    COUNT_OF = "count_of"  # with the fact ``label``


Code = Skip | Note | Reason | Caution | Refusal


@dataclass(frozen=True)
class Coded:
    """A code with the facts its sentence needs (numbers, labels, column names)."""

    code: Code
    facts: Mapping[str, Any] = field(default_factory=dict)


def coded(code: Code, **facts: Any) -> Coded:
    """A ``Coded`` from keyword facts: ``coded(Skip.NO_SPREAD, what="wait", value=3.0)``."""
    return Coded(code, dict(facts))
