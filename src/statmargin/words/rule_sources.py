"""Where each row of the continuous test-choice table comes from (``designs.rules.RULES``), in words.

Keyed by (design, condition); a condition that reads the same in every design
(an ordinal outcome, the user"s choice, no clear departure) is keyed with None.
Shown in the README"s table and the documentation, not in a result's reading.
"""

from __future__ import annotations

from ..vocabulary import Design

RULE_SOURCES: dict[tuple[Design | None, str], str] = {
    (Design.ONE_SAMPLE_CONTINUOUS, "user_rank_asymmetric"): "signed-rank tests symmetry about the value, not the median (Dixon & Mood 1946)",
    (Design.ONE_SAMPLE_CONTINUOUS, "no_spread"): "exact binomial: n values on one side have p = 2 / 2^n",
    (Design.ONE_SAMPLE_CONTINUOUS, "too_few"): "needs no shape assumption",
    (Design.ONE_SAMPLE_CONTINUOUS, "asymmetric"): "Dixon & Mood 1946; the median with its order-statistic interval",
    (Design.ONE_SAMPLE_CONTINUOUS, "tails_large_n"): "Sugden, Smith & Jones 2000; Hall 1992",
    (Design.ONE_SAMPLE_CONTINUOUS, "tails_small_n"): "Wilcoxon 1945 (symmetric tails: centre = median = mean)",
    (Design.PAIRED_CONTINUOUS, "no_spread"): "exact binomial: n differences on one side have p = 2 / 2^n",
    (Design.PAIRED_CONTINUOUS, "too_few"): "exchangeable pairs give differences symmetric about 0 under no change",
    (Design.PAIRED_CONTINUOUS, "departure_large_n"): "Sugden, Smith & Jones 2000; Hall 1992",
    (Design.PAIRED_CONTINUOUS, "departure_small_n"): "Wilcoxon 1945; valid under no change because pairs are exchangeable",
    (Design.TWO_GROUP_CONTINUOUS, "departure_large_n"): "Sugden, Smith & Jones 2000; Welch 1947",
    (Design.TWO_GROUP_CONTINUOUS, "departure_small_n"): "Brunner & Munzel 2000; permutation p below 15 per group (Neubert & Brunner 2007)",
    (Design.TWO_GROUP_CONTINUOUS, "departure_spreads_differ"): "Brunner & Munzel 2000: valid when spreads differ, unlike Mann-Whitney",
    (Design.TWO_GROUP_CONTINUOUS, "departure_spreads_differ_small_n"): "Welch 1947; rank tests lose their level in small unequal groups (simulation)",
    (Design.TWO_GROUP_CONTINUOUS, "no_spread"): "permutation p: exact when groups do not overlap",
    (Design.TWO_GROUP_CONTINUOUS, "too_few"): "permutation p needs no shape",
    (Design.MULTI_GROUP_CONTINUOUS, "departure_large_n"): "Sugden, Smith & Jones 2000; Alexander & Govern 1994",
    (Design.MULTI_GROUP_CONTINUOUS, "departure_small_n"): "Brunner, Dette & Munk 1997; Brunner, Konietschke, Pauly & Puri 2017",
    (Design.MULTI_GROUP_CONTINUOUS, "departure_spreads_differ"): "valid when spreads differ, unlike Kruskal-Wallis",
    (Design.MULTI_GROUP_CONTINUOUS, "no_spread"): "weights 1 / s^2 need spread in every group",
    (Design.MULTI_GROUP_CONTINUOUS, "too_few"): "needs no shape",
    (Design.TWO_CONTINUOUS, "departure"): "Pearson's interval depends on fourth moments at any n (Bishara & Hittner 2017)",
    (Design.TWO_CONTINUOUS, "too_few"): "needs no shape",
    (None, "ordinal"): "ordered categories have no distances, so only ranks or signs are used",
    (None, "user_normal"): "the user's choice",
    (None, "user_rank"): "the user's choice",
    (None, "no_clear_departure"): "Shapiro & Wilk 1965, combined over groups (Stouffer 1949)",
}


def rule_source(design: Design, condition: str) -> str:
    """The source of one rule: its own, else the one shared by every design."""
    return RULE_SOURCES.get((design, condition)) or RULE_SOURCES[(None, condition)]
