"""Events out of totals pooled per group: equal to the record-level tests, with a check of row dispersion.

References: statmargin's record-level methods (``binomial_exact``,
``chi_square_independence``, ``fisher_exact``, themselves checked against R 4.2.2
in ``test_methods_categorical``) on the same records listed one per row;
statsmodels' binomial GLM for the Pearson dispersion; seeded simulations for
false alarms and coverage. All site data are invented.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats

from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.plan.aggregate import suggest_roles
from statmargin.plan.rates_units import parse_per_unit, parse_target, rate_target, share_target
from statmargin.read.table import Table
from statmargin.stats import proportions, rates
from statmargin.stats.aggregated import pearson_dispersion, pool
from statmargin.stats.categorical import binomial_exact, chi_square_independence, fisher_exact
from statmargin.stats.weighted import weighted_counts, weighted_table
from statmargin.vocabulary import Test
from statmargin.vocabulary.codes import Note, Reason, Skip


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield


def _records(frame: pd.DataFrame, events: str, total: str, by: str) -> tuple[np.ndarray, np.ndarray]:
    """One record per person: the group label and whether the person had the event."""
    groups = np.repeat(frame[by].to_numpy(), frame[total].to_numpy().astype(int))
    outcome = np.concatenate([
        np.repeat(["positive", "negative"], [e, t - e])
        for e, t in zip(frame[events].astype(int), frame[total].astype(int), strict=True)
    ])
    return groups, outcome


# Monthly site summaries (invented): sites screen people each month; the counts are drawn
# once from a seeded binomial (positives) and Poisson (cases in the catchment population).
_RNG = np.random.default_rng(20261204)
_SITES = {"Hillside": (0.035, 15000), "Riverside": (0.055, 22000), "Lakeside": (0.042, 9000)}
MONTHLY = pd.DataFrame(
    [
        {"Site": site, "Month": month, "Screened": (screened := int(_RNG.integers(180, 320))),
         "Positive": int(_RNG.binomial(screened, share)), "Population": population}
        for site, (share, population) in _SITES.items() for month in range(1, 13)
    ]
)


def test_monthly_summaries_get_positivity_against_target_like_records() -> None:
    """Positivity against its 4% target: pooled rows give exactly the record-level exact binomial test."""
    target = share_target(parse_target("4%"))
    result = proportions.one_share(MONTHLY["Positive"], MONTHLY["Screened"], target=target, label="positive",
                                   other_label="negative", per=100)
    _, outcome = _records(MONTHLY, "Positive", "Screened", "Site")
    counts = weighted_counts(outcome, np.ones(outcome.size))
    record_level = binomial_exact(counts["positive"], outcome.size, share=target, label="positive",
                                  other_label="negative")
    assert result.test is Test.BINOMIAL_EXACT
    assert result.p_value == record_level.p_value
    assert (result.estimate.value, result.estimate.ci_low, result.estimate.ci_high) == (
        record_level.estimate.value, record_level.estimate.ci_low, record_level.estimate.ci_high)
    group = result.groups[0]
    assert (group["events"], group["total"]) == (counts["positive"], outcome.size)
    assert group["rate"] == pytest.approx(100 * counts["positive"] / outcome.size)
    assert result.extra["dispersion"]["overdispersed"] is False


def test_monthly_summaries_compare_sites_on_positivity_like_records() -> None:
    """Sites compared on positivity: the pooled table's chi-square equals the record-level one, number for number."""
    groups = {site: (rows["Positive"], rows["Screened"]) for site, rows in MONTHLY.groupby("Site", sort=False)}
    result = proportions.compare_shares(groups, label="positive", other_label="negative")
    by, outcome = _records(MONTHLY, "Positive", "Screened", "Site")
    table, _, _ = weighted_table(by, outcome, np.ones(by.size), row_levels=list(_SITES),
                                 col_levels=["positive", "negative"])
    record_level = chi_square_independence(table, list(_SITES), ["positive", "negative"])
    assert result.test is Test.CHI_SQUARE_INDEPENDENCE
    assert (result.statistic, result.df, result.p_value) == (record_level.statistic, record_level.df,
                                                             record_level.p_value)
    assert (result.effect.value, result.effect.ci_low) == (record_level.effect.value, record_level.effect.ci_low)
    assert [g["label"] for g in result.groups] == list(_SITES)
    assert [g["events"] for g in result.groups] == table[:, 0].tolist()


def test_monthly_summaries_compare_sites_on_rate_per_1000() -> None:
    """Sites compared on positives per 1,000 population: homogeneity of rates, rates per 1,000 with intervals, follow-ups."""
    unit = parse_per_unit("per 1,000 people")
    groups = {site: (rows["Positive"], rows["Population"]) for site, rows in MONTHLY.groupby("Site", sort=False)}
    result = rates.rate_homogeneity(groups, per=unit.per)
    pooled = pool(groups, binomial=False)
    assert [g["rate"] for g in result.groups] == pytest.approx((pooled.events * 1000 / pooled.totals).tolist())
    assert all(g["ci_low"] < g["rate"] < g["ci_high"] for g in result.groups)
    expected = pooled.events.sum() * pooled.totals / pooled.totals.sum()
    x2 = stats.chisquare(pooled.events, expected).statistic
    # Monthly positives follow the number screened, not the population, so the months vary
    # more than Poisson sampling allows and the quasi-Poisson F test is used (phi from the rows).
    phi = result.extra["dispersion"]["dispersion"]
    events = MONTHLY["Positive"].to_numpy()
    design = np.column_stack([np.ones(36)] + [(MONTHLY["Site"] == s).to_numpy(float) for s in list(_SITES)[1:]])
    glm = sm.GLM(events, design, family=sm.families.Poisson(),
                 offset=np.log(MONTHLY["Population"].to_numpy(float))).fit(scale="X2")  # statsmodels
    assert phi == pytest.approx(glm.scale, rel=1e-9)
    assert result.test is Test.QUASI_POISSON
    assert result.statistic == pytest.approx(x2 / (2 * phi), rel=1e-12)
    assert result.p_value == pytest.approx(stats.f.sf(x2 / (2 * phi), 2, 33), rel=1e-12)
    pairs = rates.pairwise_rate_ratios(groups)
    assert len(pairs) == 3 and all(p.estimate.ci_low < p.estimate.value < p.estimate.ci_high for p in pairs)
    target = rate_target(parse_target("0.15"), unit)  # a bare number is read per 1,000
    assert target == pytest.approx(0.00015)


def test_monthly_summaries_layout_is_recognised() -> None:
    """The plan step suggests positive out of screened and positive per population, and applies nothing."""
    table = Table.from_frame(MONTHLY)
    found = {(s.reason.code, s.events, s.total) for s in suggest_roles(table)}
    assert (Reason.SUGGEST_EVENTS_OUT_OF, "Positive", "Screened") in found
    assert (Reason.SUGGEST_EVENTS_PER, "Positive", "Population") in found


def test_small_pooled_table_takes_fisher_like_records() -> None:
    """Two groups with an expected count below 5 get Fisher's exact test, equal to the record-level one."""
    groups = {"A": ([1, 0], [6, 5]), "B": ([4, 3], [5, 6])}
    result = proportions.compare_shares(groups, label="yes", other_label="no")
    record_level = fisher_exact([[1, 10], [7, 4]], ["A", "B"], ["yes", "no"])
    assert result.test is Test.FISHER_EXACT
    assert result.p_value == record_level.p_value and result.effect.value == record_level.effect.value


# --------------------------------------------------------------------------- dispersion


SPREAD_ROWS = {"North": ([2, 30, 3, 28, 4, 25], [100] * 6), "South": ([12, 15, 11, 14, 13, 16], [100] * 6)}


def test_binomial_dispersion_equals_glm_pearson_over_df() -> None:
    """Pearson X2 / df of the rows equals statsmodels' binomial GLM with one share per group."""
    d = pearson_dispersion(pool(SPREAD_ROWS, binomial=True))
    events = np.array(SPREAD_ROWS["North"][0] + SPREAD_ROWS["South"][0])
    endog = np.column_stack([events, 100 - events])
    design = np.column_stack([np.ones(12), np.repeat([0.0, 1.0], 6)])
    glm = sm.GLM(endog, design, family=sm.families.Binomial()).fit()
    assert d.dispersion == pytest.approx(glm.pearson_chi2 / glm.df_resid, rel=1e-9)
    assert d.overdispersed


def test_overdispersed_rows_get_quasi_binomial_test_and_interval() -> None:
    """Rows varying beyond binomial sampling: quasi-binomial F and z, effective-count intervals, a note."""
    result = proportions.compare_shares(SPREAD_ROWS, label="positive", other_label="negative")
    phi = result.extra["dispersion"]["dispersion"]
    plain = chi_square_independence([[92, 508], [81, 519]], ["North", "South"], ["positive", "negative"])
    assert result.test is Test.QUASI_BINOMIAL
    assert result.statistic == pytest.approx(plain.statistic / phi, rel=1e-12)
    assert result.p_value == pytest.approx(stats.f.sf(plain.statistic / phi, 1, 10), rel=1e-12)
    assert result.estimate.ci_high - result.estimate.ci_low > plain.estimate.ci_high - plain.estimate.ci_low
    assert any(n.code is Note.SHARES_OVERDISPERSED for n in result.notes)
    one = proportions.one_share(*SPREAD_ROWS["North"], target=0.1, label="positive")
    phi_one = one.extra["dispersion"]["dispersion"]
    assert one.test is Test.QUASI_BINOMIAL
    assert one.statistic == pytest.approx((92 - 60) / math.sqrt(phi_one * 600 * 0.1 * 0.9), rel=1e-12)


def test_binomial_dispersion_false_alarm_rate() -> None:
    """Binomial rows (no extra variation): the criterion fires in about 5% of data sets (simulation)."""
    rng = np.random.default_rng(17)
    reps, alarms = 400, 0
    for i in range(reps):
        totals = rng.integers(5, 80, 12)
        events = rng.binomial(totals, (0.02, 0.1, 0.4)[i % 3])
        alarms += pearson_dispersion(pool({"g": (events, totals)}, binomial=True), resamples=300,
                                     seed=i).overdispersed
    assert alarms / reps <= 0.05 + 2.5 * math.sqrt(0.05 * 0.95 / reps)


def test_quasi_binomial_interval_covers_clustered_rows() -> None:
    """Beta-binomial rows (months differ): the quasi-binomial interval of the share covers about 95% (simulation)."""
    rng = np.random.default_rng(23)
    reps, covered = 300, 0
    for i in range(reps):
        shares = rng.beta(4.0, 36.0, 12)  # mean share 0.1, months vary
        events = rng.binomial(150, shares)
        result = proportions.one_share(events, np.full(12, 150), target=0.2, seed=i)
        covered += result.estimate.ci_low <= 0.1 <= result.estimate.ci_high
    assert covered / reps >= 0.90


# --------------------------------------------------------------------------- bad rows and options


def test_events_above_their_total_are_refused_with_the_row() -> None:
    """Positives above screened in a row: one line naming the row and both numbers."""
    with pytest.raises(NotEnoughDataError) as info:
        proportions.one_share([3, 12], [40, 10], target=0.1)
    assert info.value.reason.code is Skip.EVENTS_ABOVE_TOTAL
    assert str(info.value).startswith("Row 2 has 12") and "\n" not in str(info.value)


def test_share_target_outside_zero_and_one_is_refused() -> None:
    """A target share of 1.2 is refused in one line."""
    with pytest.raises(OptionError, match="between 0 and 1"):
        proportions.one_share([3], [40], target=1.2)
