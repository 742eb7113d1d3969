"""Rates from aggregated rows: exact Poisson and conditional tests, intervals, homogeneity, dispersion.

Sources beside each check: R's ``poisson.test`` outputs of its help-page examples
(recalled from memory, and reproduced to every printed digit), Garwood's (1936)
exact limits as tabulated in the literature (recalled from memory), statsmodels
0.14+ (``statsmodels.stats.rates`` and quasi-likelihood GLMs) and SciPy; coverage
and false-alarm rates by seeded simulation.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats
from statsmodels.stats import rates as sm_rates

from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.stats import rates
from statmargin.stats.adjust import adjust_p
from statmargin.stats.aggregated import pearson_dispersion, pool
from statmargin.stats.categorical import chi_square_goodness_of_fit
from statmargin.vocabulary import Design, EffectKind, EstimateKind, Test
from statmargin.vocabulary.codes import Note, Reason, Skip
from statmargin.words.sentences import say


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield


# --------------------------------------------------------------------------- one rate


def _definition_p(x: int, m: float) -> float:
    """R's two-sided rule written out: the sum of all probabilities <= dpois(x) (1 + 1e-7)."""
    high = int(m + 40 * math.sqrt(m) + 60 + x)
    pmf = stats.poisson.pmf(np.arange(high), m)
    return float(min(1.0, pmf[pmf <= stats.poisson.pmf(x, m) * (1 + 1e-7)].sum()))


@pytest.mark.parametrize("m", [0.3, 1.0, 2.5, 4.0, 9.7, 30.0, 250.5])
def test_two_sided_poisson_p_is_r_rule(m: float) -> None:
    """The binary-search tails equal R's poisson.test rule summed over every count."""
    for x in range(0, int(m * 3 + 8)):
        assert rates.poisson_exact_p(x, m) == pytest.approx(_definition_p(x, m), rel=1e-9, abs=1e-300)


def test_one_sided_poisson_p_matches_scipy_and_statsmodels() -> None:
    """One-sided p-values are the Poisson tails (SciPy) and statsmodels' exact-c test."""
    assert rates.poisson_exact_p(7, 3.2, "greater") == pytest.approx(stats.poisson.sf(6, 3.2), rel=1e-14)
    assert rates.poisson_exact_p(1, 3.2, "less") == pytest.approx(stats.poisson.cdf(1, 3.2), rel=1e-14)
    check = sm_rates.test_poisson(137, 24.19893, 1.0, method="exact-c", alternative="larger")
    assert rates.poisson_exact_p(137, 24.19893, "greater") == pytest.approx(check.pvalue, rel=1e-12)


def test_large_counts_stay_cheap_and_exact() -> None:
    """A count of a million: the binary search agrees with a windowed sum of the rule."""
    m = 1_000_000.0
    x = 998_200
    window = np.arange(990_000, 1_010_000)
    pmf = stats.poisson.pmf(window, m)
    expected = pmf[pmf <= stats.poisson.pmf(x, m) * (1 + 1e-7)].sum()
    expected += stats.poisson.cdf(window[0] - 1, m) + stats.poisson.sf(window[-1], m)
    assert rates.poisson_exact_p(x, m) == pytest.approx(expected, rel=1e-7)


@pytest.mark.parametrize(
    "events, low, high",
    [(0, 0.0, 3.689), (1, 0.0253, 5.572), (2, 0.242, 7.225), (5, 1.624, 11.668), (10, 4.795, 18.390)],
)
def test_garwood_limits_match_published_table(events: int, low: float, high: float) -> None:
    """Garwood's (1936) exact 95% limits for a count (tabulated values, recalled from memory)."""
    got = rates.garwood_interval(events, 1.0)
    assert got[0] == pytest.approx(low, abs=6e-4)
    assert got[1] == pytest.approx(high, abs=6e-4)
    sm_low, sm_high = sm_rates.confint_poisson(events, 1.0, method="exact-c")  # statsmodels
    assert got[0] == pytest.approx(float(np.nan_to_num(sm_low)), abs=1e-12)
    assert got[1] == pytest.approx(sm_high, rel=1e-12)


def test_one_rate_reproduces_r_poisson_test_example() -> None:
    """R: poisson.test(137, 24.19893) gives rate 5.661407, CI 4.753125 to 6.692709, p < 2.2e-16 (recalled)."""
    result = rates.one_rate([137], [24.19893], target=1.0)
    assert result.design is Design.ONE_SAMPLE_RATE and result.test is Test.POISSON_EXACT
    assert result.estimate.kind is EstimateKind.RATE
    assert result.estimate.value == pytest.approx(5.661407, abs=5e-7)
    assert result.estimate.ci_low == pytest.approx(4.753125, abs=5e-7)
    assert result.estimate.ci_high == pytest.approx(6.692709, abs=5e-7)
    assert result.p_value < 2.2e-16


def test_one_rate_reports_per_unit_and_groups() -> None:
    """Rates are shown per the stated unit; the group holds events, person-time and rate (invented rows)."""
    result = rates.one_rate([3, 5, 4], [1000.0, 1250.0, 1100.0], target=0.002, per=1000, label="Clinic A")
    group = result.groups[0]
    assert (group["events"], group["total"], group["rows"]) == (12, 3350.0, 3)
    assert group["rate"] == pytest.approx(12 * 1000 / 3350)
    assert result.estimate.per == 1000 and result.estimate.reference == pytest.approx(2.0)
    assert result.estimate.name == "rate per 1,000 (Clinic A; target 2)"
    assert result.p_value == pytest.approx(rates.poisson_exact_p(12, 0.002 * 3350))


def test_one_rate_refuses_a_bad_target() -> None:
    """A target of 0 or below is refused in one line."""
    with pytest.raises(OptionError, match="must be a number above 0"):
        rates.one_rate([3], [100.0], target=0.0)


# --------------------------------------------------------------------------- two rates


def test_two_rates_reproduce_r_poisson_test_comparison() -> None:
    """R: poisson.test(c(11, 21), c(800, 3011)): p = 0.07967, ratio 1.971488, CI 0.8584264 to 4.2772659 (recalled)."""
    result = rates.two_rates({"Fredericia": ([11], [800]), "others": ([6, 8, 7], [1083, 1050, 878])},
                             method="exact")
    assert result.test is Test.RATE_RATIO_EXACT and result.p_value == pytest.approx(0.07967, abs=5e-6)
    automatic = rates.two_rates({"Fredericia": ([11], [800]), "others": ([21], [3011])})
    assert automatic.test is Test.RATE_RATIO_SCORE  # smallest expected count 6.72 is not below 5
    exact = rates.compare_rates(11, 800, 21, 3011, method="exact")
    assert exact.p_value == pytest.approx(0.07967, abs=5e-6)
    assert exact.ratio == pytest.approx(1.971488, abs=5e-7)
    assert exact.ratio_ci[0] == pytest.approx(0.8584264, abs=5e-8)
    assert exact.ratio_ci[1] == pytest.approx(4.2772659, abs=5e-8)


def test_exact_ratio_interval_matches_published_cohort_example() -> None:
    """Boice & Monson (1977) breast cancer data (Rothman, Greenland & Lash): IRR 1.855759, exact CI 1.005684 to 3.6093.

    Values as printed by Stata's ``iri 41 15 28010 19017`` (recalled from memory); the
    p-value is statsmodels' exact conditional test.
    """
    exact = rates.compare_rates(41, 28010, 15, 19017, method="exact")
    assert exact.ratio == pytest.approx(1.855759, abs=5e-7)
    assert exact.ratio_ci[0] == pytest.approx(1.005684, abs=5e-7)
    assert exact.ratio_ci[1] == pytest.approx(3.6093, abs=5e-5)
    check = sm_rates.test_poisson_2indep(41, 28010, 15, 19017, method="exact-cond")
    assert exact.p_value == pytest.approx(check.pvalue, rel=1e-12)


@pytest.mark.parametrize("alternative, side", [("two-sided", "two-sided"), ("greater", "larger"), ("less", "smaller")])
def test_score_path_matches_statsmodels(alternative: str, side: str) -> None:
    """Score test, score ratio interval and score difference interval equal statsmodels' (Gu et al. 2008; Ng et al. 2007)."""
    two = rates.compare_rates(41, 28010, 15, 19017, method="score", alternative=alternative)
    check = sm_rates.test_poisson_2indep(41, 28010, 15, 19017, method="score", alternative=side)
    assert two.test is Test.RATE_RATIO_SCORE
    assert two.statistic == pytest.approx(check.statistic, rel=1e-12)
    assert two.p_value == pytest.approx(check.pvalue, rel=1e-12)
    if alternative == "two-sided":
        ratio = sm_rates.confint_poisson_2indep(41, 28010, 15, 19017, method="score", compare="ratio")
        assert two.ratio_ci == pytest.approx(ratio, rel=1e-7)  # statsmodels solves by root search
        diff = sm_rates.confint_poisson_2indep(41, 28010, 15, 19017, method="score", compare="diff")
        assert two.difference_ci == pytest.approx(diff, abs=1e-8)  # statsmodels: Nelder-Mead, xtol 1e-8
        q = stats.norm.ppf(0.975)  # our bounds solve the score equation to full precision
        assert rates.score_difference_z(two.difference_ci[0], 41, 28010, 15, 19017) == pytest.approx(q, rel=1e-9)
        assert rates.score_difference_z(two.difference_ci[1], 41, 28010, 15, 19017) == pytest.approx(-q, rel=1e-9)


@pytest.mark.parametrize("x1, t1, x2, t2", [(5, 100, 0, 80), (0, 100, 5, 80), (3, 1.0, 6, 2.0), (0, 1, 1, 1),
                                            (1, 2.0, 0, 1.0), (200, 3.5, 180, 4.1), (10, 1, 10, 1)])
def test_score_difference_interval_matches_statsmodels(x1, t1, x2, t2) -> None:
    """The score interval of the rate difference equals statsmodels' confint_poisson_2indep(method="score"), zeros included."""
    two = rates.compare_rates(x1, t1, x2, t2, method="score")
    check = sm_rates.confint_poisson_2indep(x1, t1, x2, t2, method="score", compare="diff")
    assert two.difference_ci[0] == pytest.approx(check[0], rel=1e-6, abs=1e-8)
    assert two.difference_ci[1] == pytest.approx(check[1], rel=1e-6, abs=1e-8)


def test_score_statistic_is_the_two_cell_chi_square() -> None:
    """z squared equals Pearson's chi-square of the two counts against person-time shares (SciPy)."""
    two = rates.compare_rates(41, 28010, 15, 19017, method="score")
    expected = [56 * 28010 / 47027, 56 * 19017 / 47027]
    assert two.statistic**2 == pytest.approx(stats.chisquare([41, 15], expected).statistic, rel=1e-12)


def test_two_rates_switch_on_smallest_expected_count() -> None:
    """Cochran's rule (common practice): an expected count below 5 takes the exact conditional test."""
    small = rates.two_rates({"A": ([1], [500.0]), "B": ([5], [600.0])})
    assert small.test is Test.RATE_RATIO_EXACT and small.reasons[0].code is Reason.RATE_EXACT_SMALL
    large = rates.two_rates({"A": ([30], [500.0]), "B": ([90], [600.0])})
    assert large.test is Test.RATE_RATIO_SCORE and large.reasons[0].code is Reason.RATE_SCORE
    assert large.effect.kind is EffectKind.RATE_RATIO and large.estimate.kind is EstimateKind.RATE_DIFFERENCE


def test_two_rates_with_a_group_without_events() -> None:
    """No events in one group: ratio 0 with a finite upper limit, and a note."""
    result = rates.two_rates({"A": ([0], [500.0]), "B": ([9], [600.0])})
    assert result.effect.value == 0.0 and result.effect.ci_low == 0.0
    assert 0 < result.effect.ci_high < math.inf
    assert any(n.code is Note.RATE_NO_EVENTS_GROUP for n in result.notes)
    with pytest.raises(NotEnoughDataError) as info:
        rates.two_rates({"A": ([0], [500.0]), "B": ([0], [600.0])})
    assert info.value.reason.code is Skip.NO_EVENTS


# --------------------------------------------------------------------------- three or more


GROUPS = {"North": ([12, 9, 11], [4000, 3500, 4100]), "Centre": ([20, 17, 15], [4200, 3900, 4000]),
          "South": ([8, 6, 9], [3000, 3100, 2900])}  # invented districts, three quarters each


def test_homogeneity_equals_goodness_of_fit_and_poisson_glm() -> None:
    """X2 is the goodness-of-fit statistic against person-time shares and the Pearson X2 of a common-rate Poisson GLM."""
    result = rates.rate_homogeneity(GROUPS, per=1000)
    pooled = pool(GROUPS, binomial=False)
    shares = pooled.totals / pooled.totals.sum()
    fit = chi_square_goodness_of_fit(dict(zip(pooled.labels, pooled.events.tolist(), strict=True)),
                                     dict(zip(pooled.labels, shares.tolist(), strict=True)))
    assert result.statistic == pytest.approx(fit.statistic, rel=1e-14)
    assert result.p_value == pytest.approx(stats.chi2.sf(fit.statistic, 2), rel=1e-12)
    glm = sm.GLM(pooled.events, np.ones((3, 1)), family=sm.families.Poisson(),
                 offset=np.log(pooled.totals)).fit()  # statsmodels
    assert result.statistic == pytest.approx(glm.pearson_chi2, rel=1e-9)
    assert result.estimate.kind is EstimateKind.LARGEST_RATE_GAP and result.estimate.per == 1000
    assert [g["events"] for g in result.groups] == [32, 52, 23]


def test_homogeneity_with_small_expected_counts_uses_monte_carlo() -> None:
    """Expected counts below 5 give a seeded Monte Carlo p-value near the exact multinomial p-value."""
    groups = {"A": ([1], [100.0]), "B": ([6], [120.0]), "C": ([0], [90.0])}
    result = rates.rate_homogeneity(groups)
    assert result.p_method == "monte_carlo"
    x2 = result.statistic
    shares = np.array([100, 120, 90]) / 310
    exact = 0.0
    for a in range(8):  # all multinomial outcomes of 7 events, by hand (definition of the test)
        for b in range(8 - a):
            c = 7 - a - b
            e = 7 * shares
            stat = (((np.array([a, b, c]) - e) ** 2) / e).sum()
            if stat >= x2 * (1 - 1e-12):
                exact += stats.multinomial.pmf([a, b, c], 7, shares)
    assert result.p_value == pytest.approx(exact, abs=4 * result.extra["monte_carlo_se"] + 1e-4)


def test_pairwise_rate_ratios_use_holm() -> None:
    """Pairs in R's order with rate ratios and Holm-adjusted p-values (adjust_p, checked against R elsewhere)."""
    pairs = rates.pairwise_rate_ratios(GROUPS)
    assert [p.levels for p in pairs] == [("Centre", "North"), ("South", "North"), ("South", "Centre")]
    assert [p.p_adjusted for p in pairs] == adjust_p([p.p_value for p in pairs], "holm")
    first = pairs[0]
    assert first.estimate.value == pytest.approx((52 / 12100) / (32 / 11600))
    check = sm_rates.test_poisson_2indep(52, 12100, 32, 11600, method="score")
    assert first.p_value == pytest.approx(check.pvalue, rel=1e-12)


def test_pooling_rows_does_not_change_results() -> None:
    """The same records split into more rows (without extra variation) give the same test and intervals."""
    pooled_rows = {g: ([sum(e)], [sum(t)]) for g, (e, t) in GROUPS.items()}
    split = rates.rate_homogeneity(GROUPS)
    whole = rates.rate_homogeneity(pooled_rows)
    assert split.statistic == whole.statistic and split.p_value == whole.p_value
    assert split.groups[0]["ci_low"] == whole.groups[0]["ci_low"]


# --------------------------------------------------------------------------- dispersion


OVERDISPERSED = {"North": ([2, 25, 4, 30, 3, 22], [1000] * 6), "South": ([10, 14, 12, 9, 13, 11], [1000] * 6)}


def test_dispersion_equals_quasi_poisson_glm_scale() -> None:
    """Pearson X2 / df equals statsmodels' quasi-Poisson scale for a model with one rate per group."""
    d = pearson_dispersion(pool(OVERDISPERSED, binomial=False))
    events = np.array(OVERDISPERSED["North"][0] + OVERDISPERSED["South"][0])
    design = np.column_stack([np.ones(12), np.repeat([0.0, 1.0], 6)])
    glm = sm.GLM(events, design, family=sm.families.Poisson(), offset=np.log(np.full(12, 1000.0))).fit(scale="X2")
    assert d.dispersion == pytest.approx(glm.scale, rel=1e-9)
    assert d.df == 10 and d.overdispersed


def test_overdispersed_rows_switch_to_quasi_poisson() -> None:
    """Rows that vary too much give the quasi-Poisson test (statsmodels' dispersion-scaled score), wider intervals and a note."""
    result = rates.two_rates(OVERDISPERSED, per=1000)
    plain = rates.two_rates({g: ([sum(e)], [sum(t)]) for g, (e, t) in OVERDISPERSED.items()}, per=1000)
    assert result.test is Test.QUASI_POISSON
    assert any(n.code is Note.RATES_OVERDISPERSED for n in result.notes)
    phi = result.extra["dispersion"]["dispersion"]
    assert result.statistic == pytest.approx(plain.statistic / math.sqrt(phi), rel=1e-12)
    assert result.p_value == pytest.approx(2 * stats.t.sf(abs(result.statistic), 10), rel=1e-12)
    assert result.effect.ci_high - result.effect.ci_low > plain.effect.ci_high - plain.effect.ci_low
    one = rates.one_rate(*OVERDISPERSED["North"], target=0.01)
    check = sm_rates.test_poisson(86, 6000, 0.01, method="score", dispersion=one.extra["dispersion"]["dispersion"])
    assert one.test is Test.QUASI_POISSON and one.statistic == pytest.approx(check.statistic, rel=1e-12)
    assert "quasi-Poisson adjustment" in say(one.notes[0])


def test_dispersion_false_alarm_rate_is_near_five_percent() -> None:
    """Poisson rows (no extra variation): the dispersion criterion fires in about 5% of data sets (simulation)."""
    rng = np.random.default_rng(20261203)
    reps, alarms = 400, 0
    for i in range(reps):
        mean = (0.5, 3.0, 20.0)[i % 3]
        time = rng.uniform(0.5, 1.5, 12)
        events = rng.poisson(mean * time)
        alarms += pearson_dispersion(pool({"g": (events, time)}, binomial=False), resamples=300,
                                     seed=i).overdispersed
    assert alarms / reps <= 0.05 + 2.5 * math.sqrt(0.05 * 0.95 / reps)


def test_dispersion_false_alarm_rate_with_many_rows() -> None:
    """Above the Monte Carlo limit the moment-matched chi-square keeps false alarms near 5% with small counts."""
    rng = np.random.default_rng(7)
    reps, alarms = 200, 0
    for _ in range(reps):
        time = rng.uniform(0.5, 1.5, 6000)
        events = rng.poisson(0.4 * time)
        alarms += pearson_dispersion(pool({"g": (events, time)}, binomial=False)).overdispersed
    assert alarms / reps <= 0.05 + 2.5 * math.sqrt(0.05 * 0.95 / reps)


def test_dispersion_detects_clear_overdispersion() -> None:
    """Negative-binomial rows (variance three times the mean) are flagged in most data sets (simulation)."""
    rng = np.random.default_rng(3)
    flagged = 0
    for i in range(100):
        events = rng.negative_binomial(5, 5 / (5 + 10.0), 24)  # mean 10, variance 30
        flagged += pearson_dispersion(pool({"g": (events, np.ones(24))}, binomial=False), resamples=300,
                                      seed=i).overdispersed
    assert flagged >= 90


# --------------------------------------------------------------------------- coverage


GRID = [(2.0, 2.0, 1.0, 1.0), (5.0, 2.0, 1.0, 1.0), (3.0, 6.0, 1.0, 2.0), (10.0, 10.0, 1.0, 1.0),
        (20.0, 8.0, 1.0, 1.0), (40.0, 25.0, 1.0, 1.0)]


@pytest.mark.parametrize("rate1, rate2, time1, time2", GRID)
def test_rate_ratio_and_difference_intervals_cover(rate1: float, rate2: float, time1: float, time2: float) -> None:
    """95% intervals of the ratio (auto exact/score), the difference and each Garwood rate cover at least 93% (simulation)."""
    rng = np.random.default_rng(int(rate1 * 100 + rate2))
    reps = 600
    covered = {"ratio": 0, "difference": 0, "garwood": 0}
    used = 0
    for x1, x2 in zip(rng.poisson(rate1 * time1, reps), rng.poisson(rate2 * time2, reps), strict=True):
        if x1 + x2 == 0:
            continue
        used += 1
        two = rates.compare_rates(int(x1), time1, int(x2), time2)
        covered["ratio"] += two.ratio_ci[0] <= rate1 / rate2 <= two.ratio_ci[1]
        covered["difference"] += two.difference_ci[0] <= rate1 - rate2 <= two.difference_ci[1]
        low, high = rates.garwood_interval(int(x1), time1)
        covered["garwood"] += low <= rate1 <= high
    for name, count in covered.items():
        assert count / used >= 0.93, name


def test_quasi_poisson_interval_covers_under_overdispersion() -> None:
    """With negative-binomial rows (variance 2.5 x mean) the quasi-Poisson rate interval still covers about 95% (simulation)."""
    rng = np.random.default_rng(11)
    reps, covered = 300, 0
    for i in range(reps):
        events = rng.negative_binomial(8, 8 / (8 + 12.0), 12)  # mean 12, variance 30
        result = rates.one_rate(events, np.full(12, 100.0), target=0.12, seed=i)
        covered += result.estimate.ci_low <= 0.12 <= result.estimate.ci_high
    assert covered / reps >= 0.90


# --------------------------------------------------------------------------- bad rows


@pytest.mark.parametrize(
    "events, time, code",
    [([3, -1], [10, 10], Skip.NEGATIVE_VALUE), ([3, 1.5], [10, 10], Skip.NOT_WHOLE_COUNT),
     ([3, 2], [10, -4], Skip.NEGATIVE_VALUE), ([3, 2], [10, 0], Skip.EVENTS_WITHOUT_TIME)],
)
def test_impossible_rows_are_refused_in_one_line(events, time, code) -> None:
    """Negative or fractional counts, negative person-time and events without person-time name their row."""
    with pytest.raises(NotEnoughDataError) as info:
        rates.one_rate(events, time, target=0.1)
    assert info.value.reason.code is code and info.value.reason.facts["row"] == 2
    assert "\n" not in str(info.value) and "Row 2" in str(info.value)


def test_missing_cells_leave_their_row_out() -> None:
    """A row with a blank count or blank person-time is left out and counted."""
    result = rates.one_rate([3, float("nan"), 4], [100.0, 100.0, float("nan")], target=0.05)
    assert result.n == 3 and result.n_excluded == 2 and result.extra["rows_used"] == 1
