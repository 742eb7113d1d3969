"""The widest gap between three or more groups: its interval holds for all pairs together.

The pair with the widest gap is picked after looking at the data, so an interval
at the plain 95% level would cover its true difference less often than 95%. The
interval is Newcombe's (shares), the score interval (rates) or Welch's (means) at the Bonferroni
level over the k(k-1)/2 pairs; the simulation checks its coverage of the picked
pair's true difference.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.stats.proportion import confint_proportions_2indep

from statmargin import analyze
from statmargin.stats.aggregated import pairs_level
from statmargin.stats.proportions import widest_share_gap
from statmargin.vocabulary import EstimateKind


def test_pairs_level_is_bonferroni() -> None:
    """Four groups have 6 pairs: each interval at 1 - 0.05/6 (Bonferroni's inequality)."""
    assert math.isclose(pairs_level(0.95, 4), 1 - 0.05 / 6)
    assert math.isclose(pairs_level(0.9, 3), 1 - 0.1 / 3)


def test_widest_share_gap_matches_statsmodels_newcombe() -> None:
    """Highest minus lowest share, with statsmodels' Newcombe interval at alpha / pairs."""
    table = [[30, 70], [45, 55], [38, 62], [51, 49]]
    gap = widest_share_gap(table, ["A", "B", "C", "D"], "yes")
    assert gap is not None and gap.kind is EstimateKind.LARGEST_SHARE_GAP and gap.levels == ("D", "A")
    low, high = confint_proportions_2indep(51, 100, 30, 100, method="newcomb", alpha=0.05 / 6)
    assert math.isclose(gap.value, 0.21) and math.isclose(gap.ci_low, low) and math.isclose(gap.ci_high, high)


def test_record_level_and_pooled_rows_give_the_same_widest_gap() -> None:
    """Sites compared on a yes/no outcome: the records and their monthly totals give one widest gap."""
    rng = np.random.default_rng(7)
    sites = np.repeat(["North", "South", "East", "West"], 120)
    shares = {"North": 0.3, "South": 0.45, "East": 0.35, "West": 0.5}
    outcome = np.where(rng.random(sites.size) < np.vectorize(shares.get)(sites), "Yes", "No")
    records = pd.DataFrame({"Site": sites, "Screened positive": outcome})
    [record] = analyze(records, outcome="Screened positive", by="Site", event="Yes")
    rows = records.assign(month=np.tile(np.arange(12), 40), pos=outcome == "Yes", one=1)
    summary = rows.groupby(["Site", "month"], sort=False).agg(Positive=("pos", "sum"), Screened=("one", "sum"))
    [pooled] = analyze(summary.reset_index(), events="Positive", out_of="Screened", by="Site")
    for result in (record, pooled):
        assert result.estimate.kind is EstimateKind.LARGEST_SHARE_GAP
    if pooled.extra["dispersion"]["overdispersed"] is False:
        assert record.estimate.levels == pooled.estimate.levels
        assert math.isclose(record.estimate.value, pooled.estimate.value)
        assert math.isclose(record.estimate.ci_low, pooled.estimate.ci_low)
        assert math.isclose(record.estimate.ci_high, pooled.estimate.ci_high)


def test_widest_gap_interval_covers_the_picked_pair_in_at_least_95_percent_of_runs() -> None:
    """Simulation: 4 groups of 60 with true shares 0.3 (all equal, the hardest case for picking); 600 runs.

    A plain 95% interval for the picked pair covers in about 78% of these runs (measured with this seed).
    """
    rng = np.random.default_rng(20261205)
    runs, covered = 600, 0
    for _ in range(runs):
        events = rng.binomial(60, 0.3, size=4)
        gap = widest_share_gap(np.column_stack([events, 60 - events]), list("ABCD"), "yes")
        assert gap is not None
        covered += gap.ci_low <= 0.0 <= gap.ci_high
    # Bonferroni keeps simultaneous coverage at 95% or more; the bound allows 3 Monte Carlo SEs below 0.95.
    assert covered / runs >= 0.95 - 3 * math.sqrt(0.95 * 0.05 / runs)


def test_pairwise_rate_intervals_agree_with_their_adjusted_p() -> None:
    """Each pair's rate-ratio interval leaves out 1 exactly when its Holm-adjusted p is below 0.05."""
    from statmargin.stats.rates import pairwise_rate_ratios

    groups = {"North": ([30], [10000]), "Centre": ([70], [12000]), "South": ([15], [9000]),
              "East": ([44], [10500])}
    pairs = pairwise_rate_ratios(groups, adjust="holm", alpha=0.05)
    assert any(p.flagged for p in pairs) and not all(p.flagged for p in pairs)
    for pair in pairs:
        excludes = pair.estimate.ci_low > 1 or pair.estimate.ci_high < 1
        assert excludes == (pair.p_adjusted < 0.05)


def test_widest_mean_gap_is_welch_at_the_all_pairs_level() -> None:
    """Three sites, means compared: the widest gap's interval equals scipy's Welch interval at 1 - 0.05/3."""
    rng = np.random.default_rng(31)
    values = {"Ash": rng.normal(20, 4, 25), "Birch": rng.normal(24, 6, 30), "Cedar": rng.normal(27, 5, 20)}
    data = pd.DataFrame({"Site": np.repeat(list(values), [v.size for v in values.values()]),
                         "Wait": np.concatenate(list(values.values()))})
    [result] = analyze(data, outcome="Wait", by="Site", shape="normal")
    est = result.estimate
    assert est.kind is EstimateKind.LARGEST_MEAN_GAP
    high, low = est.levels
    reference = stats.ttest_ind(values[high], values[low], equal_var=False).confidence_interval(1 - 0.05 / 3)
    assert (est.ci_low, est.ci_high) == pytest.approx((reference.low, reference.high), rel=1e-9)
    assert "allowing for the 3 pairs of groups" in result.reading


def test_widest_mean_gap_covers_the_picked_pair_in_at_least_95_percent_of_runs() -> None:
    """Simulation: 4 equal normal groups of 15, the pair picked after looking; 600 runs cover at least 95% less 3 SEs."""
    from statmargin.stats.multigroup import widest_mean_gap_interval

    rng = np.random.default_rng(20261207)
    runs, covered = 600, 0
    for _ in range(runs):
        groups = rng.normal(0.0, 1.0, size=(4, 15))
        summaries = [{"mean": g.mean(), "sd": g.std(ddof=1), "n": 15} for g in groups]
        high, low = max(summaries, key=lambda s: s["mean"]), min(summaries, key=lambda s: s["mean"])
        lower, upper = widest_mean_gap_interval(high, low, 4, 0.95)
        covered += lower <= 0.0 <= upper
    assert covered / runs >= 0.95 - 3 * math.sqrt(0.95 * 0.05 / runs)


def _order_statistic_interval(values: np.ndarray, level: float) -> tuple[float, float]:
    """[x_(k), x_(n-k+1)] with k the largest count whose binomial tail P(Bin(n, 1/2) <= k - 1) stays within (1 - level)/2."""
    x, n = np.sort(values), values.size
    k = int(stats.binom.ppf((1 - level) / 2, n, 0.5))  # P(Bin <= k) >= tail: the last k with P(Bin <= k-1) <= tail
    while stats.binom.cdf(k - 1, n, 0.5) > (1 - level) / 2:
        k -= 1
    return float(x[k - 1]), float(x[n - k])


def test_widest_median_gap_is_the_difference_of_order_statistic_intervals() -> None:
    """ANOVA-type rank test of 3 skewed groups: the widest median gap's interval from binomial order statistics (scipy)."""
    from statmargin.stats.relative import rank_anova_type

    rng = np.random.default_rng(41)
    groups = {"Ash": rng.lognormal(2.0, 0.6, 60), "Birch": rng.lognormal(2.3, 0.6, 70), "Cedar": rng.lognormal(2.6, 0.6, 65)}
    est = rank_anova_type(groups, p_method="asymptotic").estimate
    assert est.kind is EstimateKind.LARGEST_MEDIAN_GAP and est.levels == ("Cedar", "Ash")
    level = 1 - 0.05 / 3 / 2  # each median at 1 - a/2, a = 0.05 over the 3 pairs (Bonferroni)
    (hl, hh), (ll, lh) = _order_statistic_interval(groups["Cedar"], level), _order_statistic_interval(groups["Ash"], level)
    assert (est.ci_low, est.ci_high) == pytest.approx((hl - lh, hh - ll), rel=1e-12)
    assert est.ci_low <= est.value <= est.ci_high


def test_widest_median_gap_covers_the_picked_pair_in_at_least_95_percent_of_runs() -> None:
    """Simulation: 4 lognormal groups of 30 with one median, the pair picked after looking; 400 runs cover at least 95% less 3 SEs."""
    from statmargin.results import Estimate
    from statmargin.stats.signtest import widest_median_gap

    rng = np.random.default_rng(20261209)
    runs, covered = 400, 0
    for _ in range(runs):
        groups = {label: rng.lognormal(0.0, 0.8, 30) for label in "ABCD"}
        medians = {label: float(np.median(v)) for label, v in groups.items()}
        high, low = max(medians, key=medians.get), min(medians, key=medians.get)
        gap = Estimate(EstimateKind.LARGEST_MEDIAN_GAP, medians[high] - medians[low], levels=(high, low))
        out = widest_median_gap(gap, {k: (v, None) for k, v in groups.items()}, 0.95)
        covered += out.ci_low <= 0.0 <= out.ci_high
    assert covered / runs >= 0.95 - 3 * math.sqrt(0.95 * 0.05 / runs)
