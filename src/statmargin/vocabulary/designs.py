"""Words for what is asked and how it is answered: designs, tests and how a p-value was obtained.

A design is the shape of a question (one outcome against a value, by two groups,
paired, ...); each design has one module in ``statmargin.designs``. A test is a
published procedure and keeps its published name in ``statmargin.words``; the
values here are the identifiers written to JSON and the results sheet.
"""

from __future__ import annotations

from .base import Word


class Design(Word):
    """The shape of a question (see the decision table in README "Which test is chosen")."""

    ONE_SAMPLE_CATEGORICAL = "one_sample_categorical"
    ONE_SAMPLE_CONTINUOUS = "one_sample_continuous"
    TWO_CATEGORICAL = "two_categorical"
    TWO_GROUP_CONTINUOUS = "two_group_continuous"
    MULTI_GROUP_CONTINUOUS = "multi_group_continuous"
    TWO_CONTINUOUS = "two_continuous"
    PAIRED_CONTINUOUS = "paired_continuous"
    PAIRED_CATEGORICAL = "paired_categorical"
    ONE_SAMPLE_RATE = "one_sample_rate"  # events per person-time (or population) against a target rate
    GROUP_RATES = "group_rates"  # events per person-time compared across two or more groups
    ONE_SAMPLE_POOLED_SHARE = "one_sample_pooled_share"  # events out of totals, pooled, against a target share
    GROUP_POOLED_SHARES = "group_pooled_shares"  # events out of totals, pooled per group, compared across groups
    PERIOD_SHARES = "period_shares"  # a two-level outcome over periods: share per period, trend, flags
    PERIOD_CENTRE = "period_centre"  # a continuous outcome over periods: mean or median per period, trend, flags


class Test(Word):
    """A test or follow-up procedure, by its identifier."""

    __test__ = False  # not a pytest test class, despite the name

    CHI_SQUARE_GOODNESS_OF_FIT = "chi_square_goodness_of_fit"
    BINOMIAL_EXACT = "binomial_exact"
    ONE_SAMPLE_T = "one_sample_t"
    WILCOXON_SIGNED_RANK = "wilcoxon_signed_rank"
    CHI_SQUARE_INDEPENDENCE = "chi_square_independence"
    FISHER_EXACT = "fisher_exact"
    STUDENT_T = "student_t"
    WELCH_T = "welch_t"
    MANN_WHITNEY_U = "mann_whitney_u"
    ONE_WAY_ANOVA = "one_way_anova"
    WELCH_ANOVA = "welch_anova"
    KRUSKAL_WALLIS = "kruskal_wallis"
    PEARSON_R = "pearson_r"
    SPEARMAN_RHO = "spearman_rho"
    PAIRED_T = "paired_t"
    MCNEMAR = "mcnemar"
    # trend across periods
    COCHRAN_ARMITAGE = "cochran_armitage"
    MANN_KENDALL = "mann_kendall"
    POISSON_EXACT = "poisson_exact"  # one rate against a target, exact (conditional on person-time)
    RATE_RATIO_EXACT = "rate_ratio_exact"  # two rates: exact conditional binomial test
    RATE_RATIO_SCORE = "rate_ratio_score"  # two rates: score test
    RATE_HOMOGENEITY = "rate_homogeneity"  # 3+ rates: chi-square test of homogeneity
    QUASI_POISSON = "quasi_poisson"  # rates when rows vary more than Poisson sampling allows
    QUASI_BINOMIAL = "quasi_binomial"  # shares when rows vary more than binomial sampling allows
    BRUNNER_MUNZEL = "brunner_munzel"  # two groups, probability of superiority (Brunner & Munzel 2000)
    SIGN_TEST = "sign_test"  # one sample or paired: the median against a value (exact binomial)
    RANK_ANOVA_TYPE = "rank_anova_type"  # 3+ groups, relative effects (Brunner et al. 2017)
    ALEXANDER_GOVERN = "alexander_govern"  # 3+ group means, unequal spreads (Alexander & Govern 1994)
    # follow-ups
    TUKEY_HSD = "tukey_hsd"
    GAMES_HOWELL = "games_howell"
    DUNN = "dunn"
    PAIRWISE_MANN_WHITNEY = "pairwise_mann_whitney"
    PAIRWISE_BRUNNER_MUNZEL = "pairwise_brunner_munzel"
    ADJUSTED_RESIDUAL = "adjusted_residual"
    PAIRWISE_RATE_RATIO = "pairwise_rate_ratio"


FOLLOWUP_TESTS = frozenset(
    {
        Test.TUKEY_HSD,
        Test.GAMES_HOWELL,
        Test.DUNN,
        Test.PAIRWISE_MANN_WHITNEY,
        Test.ADJUSTED_RESIDUAL,
        Test.PAIRWISE_RATE_RATIO,
        Test.PAIRWISE_BRUNNER_MUNZEL,
    }
)


# Follow-ups whose interval is at the level their adjusted p is judged at (stats.adjust.matched_levels),
# so the interval leaves out "no difference" exactly when the adjusted p is below the level.
MATCHED_INTERVAL_TESTS = frozenset(
    {Test.DUNN, Test.PAIRWISE_MANN_WHITNEY, Test.PAIRWISE_BRUNNER_MUNZEL, Test.PAIRWISE_RATE_RATIO}
)


class PMethod(Word):
    """How a p-value was obtained; shown beside it because it changes what it means."""

    EXACT = "exact"
    ASYMPTOTIC = "asymptotic"  # large-sample distribution (t, F, chi-square) of the statistic
    NORMAL_APPROXIMATION = "normal_approximation"
    NORMAL_APPROXIMATION_CONTINUITY = "normal_approximation_continuity"  # with continuity correction
    MONTE_CARLO = "monte_carlo"
    PERMUTATION = "permutation"  # Monte Carlo draws from the permutation distribution (seeded)
