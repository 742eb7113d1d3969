"""Words for what a result estimates: estimates in the outcome's units and standardized effects.

An ``Estimate`` or ``Effect`` carries its kind from here plus the labels it
compares; its display name is made in ``statmargin.words.names`` and nowhere
else, so no code ever parses meaning back out of a name.
"""

from __future__ import annotations

from .base import Word


class EstimateKind(Word):
    """A quantity in the outcome's own units (or a share, r, rho)."""

    MEAN_DIFFERENCE = "mean_difference"  # levels (first, second): first minus second
    LOCATION_SHIFT = "location_shift"  # Hodges-Lehmann shift, levels (first, second)
    MEAN_DIFFERENCE_FROM_VALUE = "mean_difference_from_value"  # reference: the stated value
    PSEUDO_MEDIAN = "pseudo_median"  # one-sample Hodges-Lehmann centre
    PAIRED_MEAN_DIFFERENCE = "paired_mean_difference"  # levels (first, second)
    PAIRED_PSEUDO_MEDIAN = "paired_pseudo_median"  # of the differences, levels (first, second)
    SHARE = "share"  # level: the counted label
    SHARE_FURTHEST = "share_furthest"  # level, reference: its expected share
    SHARE_DIFFERENCE = "share_difference"  # level, levels (row 1, row 2)
    PAIRED_SHARE_DIFFERENCE = "paired_share_difference"  # level; first minus second measurement
    LARGEST_MEAN_GAP = "largest_mean_gap"  # levels (highest, lowest), no interval
    LARGEST_MEDIAN_GAP = "largest_median_gap"  # levels (highest, lowest), no interval
    PEARSON_R = "pearson_r"
    SPEARMAN_RHO = "spearman_rho"
    OBSERVED_MINUS_EXPECTED = "observed_minus_expected"  # a table cell's residual count
    SHARE_CHANGE_PER_PERIOD = "share_change_per_period"  # level, levels (grain,); share slope per period (0.01 = 1 point)
    THEIL_SEN_SLOPE = "theil_sen_slope"  # levels (grain,); median pairwise slope, units per period
    RATE = "rate"  # events per ``per`` units of person-time; level: the group; reference: a target
    RATE_DIFFERENCE = "rate_difference"  # per ``per`` units, levels (first, second)
    RATE_RATIO = "rate_ratio"  # levels (first, second): first / second (pairwise follow-ups)
    LARGEST_RATE_GAP = "largest_rate_gap"  # levels (highest, lowest), per ``per`` units; Bonferroni interval over the pairs
    LARGEST_SHARE_GAP = "largest_share_gap"  # level; levels (highest, lowest); Bonferroni interval over the pairs
    MEDIAN = "median"  # one-sample median, reference: the stated value
    PAIRED_MEDIAN_DIFFERENCE = "paired_median_difference"  # median of differences, levels (first, second)


class EffectKind(Word):
    """A standardized effect size."""

    HEDGES_G = "hedges_g"
    HEDGES_G_AV = "hedges_g_av"  # difference over the average of the two SDs (Welch's t)
    HEDGES_G_Z = "hedges_g_z"  # of paired differences
    RANK_BISERIAL = "rank_biserial"
    RANK_BISERIAL_PAIRED = "rank_biserial_paired"
    PROBABILITY_OF_SUPERIORITY = "probability_of_superiority"
    ETA_SQUARED = "eta_squared"
    OMEGA_SQUARED = "omega_squared"
    EPSILON_SQUARED = "epsilon_squared"
    PEARSON_R = "pearson_r"
    SPEARMAN_RHO = "spearman_rho"
    COHENS_W = "cohens_w"
    COHENS_H = "cohens_h"
    CRAMERS_V = "cramers_v"
    ODDS_RATIO = "odds_ratio"  # conditional MLE, level and levels (row 1, row 2)
    DISCORDANT_ODDS_RATIO = "discordant_odds_ratio"  # b/c of McNemar's table
    RATE_RATIO = "rate_ratio"  # levels (first, second): first rate / second rate
    ETA_SQUARED_WEIGHTED = "eta_squared_weighted"  # precision-weighted share (unequal spreads)
    EPSILON_SQUARED_EQUAL_WEIGHTS = "epsilon_squared_equal_weights"  # from relative effects, groups weighted equally
    SHARE_ABOVE = "share_above"  # sign test: share of values above the stated value (values equal to it left out)
