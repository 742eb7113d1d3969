"""Checks of the tests for counts against R 4.2.2 values and published worked examples."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from reference_cases import load_case
from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.stats import categorical as cat
from statmargin.words.sentences import say

REL_STAT = 1e-9
REL_P = 1e-6


def _r_table(case_id: str) -> tuple[dict, np.ndarray, list[str], list[str]]:
    """The case and its observed table, rebuilt from the CSV (not from the JSON)."""
    case, frame = load_case(case_id)
    observed = case["contingency"]["observed"]
    rows, cols = observed["row_levels"], observed["col_levels"]
    row_var, col_var = observed["row_var"], observed["col_var"]
    table = np.array(
        [[int(((frame[row_var] == r) & (frame[col_var] == c)).sum()) for c in cols] for r in rows]
    )
    return case, table, rows, cols


# --------------------------------------------------------------------------- goodness of fit


@pytest.mark.parametrize("case_id", ["mtcars_cyl_vs_proportions", "mtcars_am_binomial"])
def test_goodness_of_fit_matches_r(case_id: str) -> None:
    """Statistic, df, p and expected counts equal R's chisq.test(tab, p = p)."""
    case, frame = load_case(case_id)
    column = case["variables"]["outcome"]
    counts = {str(k): int(v) for k, v in frame[column].astype(str).value_counts().items()}
    shares = case["variables"]["p"]
    result = cat.chi_square_goodness_of_fit(counts, shares)
    ref = case["tests"]["chisq_gof"]  # R 4.2.2: chisq.test(tab, p = ...)
    assert result.statistic == pytest.approx(ref["statistic"], rel=REL_STAT)
    assert result.df == ref["df"][0]
    assert result.p_value == pytest.approx(ref["p_value"], rel=REL_P)
    assert result.p_method == "asymptotic"
    # R 4.2.2: chisq.test(tab, p = ...)$expected
    assert result.extra["expected"] == pytest.approx(case["counts"]["expected"], rel=1e-12)
    assert [g["count"] for g in result.groups] == case["counts"]["observed"]
    # Cohen (1988, ch. 7): plug-in w = sqrt(X2 / n), with R's X2.
    assert result.extra["cohens_w_plugin"] == pytest.approx(math.sqrt(ref["statistic"] / result.n), rel=1e-9)
    # The reported w is sqrt(lambda / n) with R's X2 the median of noncentral chi-square(df, lambda)
    # (SciPy's ncx2 as the reference for the definition), or 0 when p >= 1/2.
    lam = result.effect.value**2 * result.n
    if lam > 0:
        assert stats.ncx2.cdf(ref["statistic"], ref["df"][0], lam) == pytest.approx(0.5, abs=1e-8)
    else:
        assert result.p_value >= 0.5
    assert result.effect.ci_low <= result.effect.value <= result.effect.ci_high
    assert result.notes == []


def test_goodness_of_fit_estimate_uses_wilson() -> None:
    """The furthest category's interval is R's prop.test(correct = FALSE) Wilson interval."""
    case, _ = load_case("mtcars_am_binomial")
    result = cat.chi_square_goodness_of_fit({"0": 19, "1": 13}, {"0": 0.5, "1": 0.5})
    # Both categories are 3/32 away from 1/2; the first ('0', 19/32) is kept.
    assert result.estimate.value == pytest.approx(19 / 32)
    low, high = case["tests"]["prop_test_nocc"]["conf_int"]  # R: prop.test(13, 32, correct = FALSE)
    # Wilson interval for 19/32 mirrors the one for 13/32: (1 - high, 1 - low).
    assert result.estimate.ci_low == pytest.approx(1 - high, rel=1e-9)
    assert result.estimate.ci_high == pytest.approx(1 - low, rel=1e-9)


def test_goodness_of_fit_small_counts_use_monte_carlo() -> None:
    """With expected counts below 5 the p-value is simulated, seeded and explained."""
    counts, shares = {"a": 6, "b": 1, "c": 1}, {"a": 0.5, "b": 0.25, "c": 0.25}
    with pytest.warns(UserWarning, match="Monte Carlo"):
        first = cat.chi_square_goodness_of_fit(counts, shares, seed=7, monte_carlo_resamples=4000)
    with pytest.warns(UserWarning):
        again = cat.chi_square_goodness_of_fit(counts, shares, seed=7, monte_carlo_resamples=4000)
    assert first.p_method == "monte_carlo"
    assert first.p_value == again.p_value
    assert "3 of 3 expected counts are below 5" in say(first.notes[0])
    # Exact multinomial p by enumeration, from the definition (sum of null
    # probabilities of all outcomes with X2 >= observed X2): the simulated p must
    # lie within 4 Monte Carlo standard errors of it.
    n, probs = 8, np.array([0.5, 0.25, 0.25])
    expected = n * probs
    observed_x2 = first.statistic
    exact = 0.0
    for a in range(n + 1):
        for b in range(n + 1 - a):
            cell = np.array([a, b, n - a - b])
            if ((cell - expected) ** 2 / expected).sum() >= observed_x2 - 1e-12:
                exact += stats.multinomial.pmf(cell, n, probs)
    assert abs(first.p_value - exact) < 4 * first.extra["monte_carlo_se"]


def test_goodness_of_fit_refuses_bad_input() -> None:
    """Single category, zero total and bad shares give typed one-line errors."""
    with pytest.raises(NotEnoughDataError):
        cat.chi_square_goodness_of_fit({"a": 5}, {"a": 1.0})
    with pytest.raises(NotEnoughDataError):
        cat.chi_square_goodness_of_fit({"a": 0, "b": 0}, {"a": 0.5, "b": 0.5})
    with pytest.raises(OptionError, match="add up"):
        cat.chi_square_goodness_of_fit({"a": 3, "b": 4}, {"a": 0.5, "b": 0.6})
    with pytest.raises(OptionError, match="no expected share"):
        cat.chi_square_goodness_of_fit({"a": 3, "z": 4}, {"a": 0.5, "b": 0.5})
    with pytest.raises(OptionError):
        cat.chi_square_goodness_of_fit({"a": -3, "b": 4}, {"a": 0.5, "b": 0.5})
    with pytest.raises(OptionError, match="resamples"):
        cat.chi_square_goodness_of_fit(
            {"a": 3, "b": 4}, {"a": 0.5, "b": 0.5}, monte_carlo=True, monte_carlo_resamples=0
        )


# --------------------------------------------------------------------------- binomial


def test_binomial_matches_r() -> None:
    """p-value, estimate and Clopper-Pearson interval equal R's binom.test."""
    case, frame = load_case("mtcars_am_binomial")
    successes, n = int((frame["am"] == 1).sum()), len(frame)
    result = cat.binomial_exact(successes, n, share=0.5, label="1", other_label="0")
    ref = case["tests"]["binom_test"]  # R 4.2.2: binom.test(13, 32, p = 0.5)
    assert result.statistic == ref["statistic"]
    assert result.p_value == pytest.approx(ref["p_value"], rel=REL_P)
    assert result.estimate.value == pytest.approx(ref["estimate"]["probability of success"])
    cp = result.extra["clopper_pearson"]
    assert [cp["ci_low"], cp["ci_high"]] == pytest.approx(ref["conf_int"], rel=1e-9)
    # Wilson interval = R 4.2.2: prop.test(13, 32, p = 0.5, correct = FALSE)$conf.int
    wilson = case["tests"]["prop_test_nocc"]["conf_int"]
    assert [result.estimate.ci_low, result.estimate.ci_high] == pytest.approx(wilson, rel=1e-9)
    assert result.p_method == "exact"


def test_binomial_cohens_h() -> None:
    """Cohen's h is 2 asin(sqrt(p)) - 2 asin(sqrt(p0)) (Cohen 1988, ch. 6)."""
    result = cat.binomial_exact(13, 32, share=0.5, label="1")
    # Definition (Cohen 1988, eq. 6.2.1): phi = 2 asin(sqrt(p)).
    assert result.effect.value == pytest.approx(
        2 * math.asin(math.sqrt(13 / 32)) - 2 * math.asin(math.sqrt(0.5)), rel=1e-12
    )
    assert result.effect.ci_low < result.effect.value < result.effect.ci_high


def test_binomial_one_sided_hand_computed() -> None:
    """One-sided p equals the binomial tail summed by hand."""
    result = cat.binomial_exact(9, 10, share=0.5, label="yes", alternative="greater")
    # Definition: P(X >= 9 | n = 10, p = 1/2) = (10 + 1) / 1024 = 0.0107421875.
    assert result.p_value == pytest.approx(11 / 1024, rel=1e-12)
    assert result.estimate.ci_high == 1.0


def test_binomial_refuses_bad_input() -> None:
    """n = 0, successes above n and a target share of 0 are refused with typed errors."""
    with pytest.raises(NotEnoughDataError):
        cat.binomial_exact(0, 0, share=0.5, label="yes")
    with pytest.raises(OptionError):
        cat.binomial_exact(5, 3, share=0.5, label="yes")
    with pytest.raises(OptionError):
        cat.binomial_exact(1, 3, share=0.0, label="yes")


# --------------------------------------------------------------------------- independence


@pytest.mark.parametrize("case_id", ["mtcars_am_by_vs", "mtcars_cyl_by_gear"])
def test_independence_matches_r(case_id: str) -> None:
    """Pearson statistic, p, expected counts and Cramer's V equal R's values."""
    case, table, rows, cols = _r_table(case_id)
    with warnings.catch_warnings(record=True):
        warnings.simplefilter("always")
        result = cat.chi_square_independence(table, rows, cols, monte_carlo=False)
    # R 4.2.2 warns "Chi-squared approximation may be incorrect" exactly when we add a note.
    assert bool(result.notes) == bool(ref_warnings := case["tests"]["chisq_pearson"]["warnings"])
    assert ref_warnings == [] or "may be poor" in say(result.notes[0])
    ref = case["tests"]["chisq_pearson"]  # R 4.2.2: chisq.test(tab, correct = FALSE)
    assert result.statistic == pytest.approx(ref["statistic"], rel=REL_STAT)
    assert result.df == ref["df"][0]
    assert result.p_value == pytest.approx(ref["p_value"], rel=REL_P)
    expected = case["contingency"]["expected"]["values"]  # R: chisq.test(tab)$expected
    np.testing.assert_allclose(result.extra["expected"]["values"], expected, rtol=1e-12)
    assert result.extra["min_expected"] == pytest.approx(case["contingency"]["min_expected"])
    assert result.extra["n_expected_below_5"] == case["contingency"]["n_expected_lt_5"]
    # sqrt(X2 / (n (min(r, c) - 1))), computed in R 4.2.2 beside the test: the plug-in V
    assert result.extra["cramers_v_plugin"] == pytest.approx(
        case["effect_sizes"]["cramers_v"]["value"], rel=1e-9
    )
    assert result.effect.ci_low <= result.effect.value <= result.effect.ci_high


def test_yates_matches_r() -> None:
    """With correction=True the 2x2 statistic and p equal R's chisq.test default."""
    case, table, rows, cols = _r_table("mtcars_am_by_vs")
    result = cat.chi_square_independence(table, rows, cols, correction=True)
    ref = case["tests"]["chisq_yates"]  # R 4.2.2: chisq.test(tab, correct = TRUE)
    assert result.statistic == pytest.approx(ref["statistic"], rel=REL_STAT)
    assert result.p_value == pytest.approx(ref["p_value"], rel=REL_P)
    # Cramer's V stays on the uncorrected statistic (as computed in R beside the test).
    assert result.extra["cramers_v_plugin"] == pytest.approx(case["effect_sizes"]["cramers_v"]["value"])


def test_independence_small_counts_use_monte_carlo() -> None:
    """A 3x3 table with small expected counts gets a seeded Monte Carlo p with its SE."""
    case, table, rows, cols = _r_table("mtcars_cyl_by_gear")
    with pytest.warns(UserWarning, match="Monte Carlo"):
        result = cat.chi_square_independence(table, rows, cols, seed=11, resamples=5000)
    assert result.p_method == "monte_carlo"
    assert result.extra["monte_carlo_resamples"] == 5000
    assert "6 of 9 expected counts are below 5" in say(result.notes[0])
    se = result.extra["monte_carlo_se"]
    assert se == pytest.approx(math.sqrt(result.p_value * (1 - result.p_value) / 5000))
    # Exact conditional p of X2 from the definition: enumerate every table with
    # these margins, weight it by its multiple hypergeometric probability
    # prod(r_i!) prod(c_j!) / (n! prod(n_ij!)), sum over tables with X2 >= observed.
    assert abs(result.p_value - _exact_conditional_x2_p(table)) < 4 * se + 1 / 5001


def _exact_conditional_x2_p(table: np.ndarray) -> float:
    """Exact p of Pearson X2 over all 3x3 tables with the observed margins."""
    rows, cols = table.sum(axis=1), table.sum(axis=0)
    n = int(table.sum())
    expected = np.outer(rows, cols) / n
    observed_x2 = ((table - expected) ** 2 / expected).sum()
    log_const = sum(math.lgamma(v + 1) for v in [*rows, *cols]) - math.lgamma(n + 1)
    total = 0.0
    for a in range(min(rows[0], cols[0]) + 1):
        for b in range(min(rows[0] - a, cols[1]) + 1):
            c = rows[0] - a - b
            for d in range(min(rows[1], cols[0] - a) + 1):
                for e in range(min(rows[1] - d, cols[1] - b) + 1):
                    f = rows[1] - d - e
                    cell = np.array(
                        [[a, b, c], [d, e, f], [cols[0] - a - d, cols[1] - b - e, cols[2] - c - f]]
                    )
                    if (cell < 0).any():
                        continue
                    x2 = ((cell - expected) ** 2 / expected).sum()
                    if x2 >= observed_x2 * (1 - 1e-12):
                        total += math.exp(log_const - sum(math.lgamma(v + 1) for v in cell.ravel()))
    return total


def test_monte_carlo_agrees_with_large_sample_p() -> None:
    """On a large invented table the simulated p is within 4 SE of the chi-square p."""
    table = np.array([[40, 30, 25], [35, 45, 30], [20, 25, 40]])  # invented counts
    plain = cat.chi_square_independence(table, list("abc"), list("xyz"))
    with pytest.warns(UserWarning):
        simulated = cat.chi_square_independence(
            table, list("abc"), list("xyz"), monte_carlo=True, seed=3, resamples=4000
        )
    # Large expected counts: Pearson (1900) chi-square limit holds, so both agree.
    assert plain.p_method == "asymptotic"
    assert abs(simulated.p_value - plain.p_value) < 4 * simulated.extra["monte_carlo_se"]


def test_small_2x2_recommends_fisher() -> None:
    """A 2x2 table with small expected counts keeps the asymptotic p and points to Fisher."""
    with pytest.warns(UserWarning, match="Fisher"):
        result = cat.chi_square_independence([[3, 1], [1, 3]], ["a", "b"], ["y", "n"])
    assert result.p_method == "asymptotic"
    assert "Fisher's exact test" in say(result.notes[0])


def test_agresti_party_identification() -> None:
    """Pearson X2 for Agresti's gender by party table is 30.1 on 2 df."""
    # Agresti, An Introduction to Categorical Data Analysis, 2nd ed. (2007),
    # Table 2.5 (General Social Survey): X2 = 30.07, df = 2 (values recalled
    # from that source, from memory).
    table = np.array([[762, 327, 468], [484, 239, 477]])
    result = cat.chi_square_independence(
        table, ["female", "male"], ["Democrat", "Independent", "Republican"]
    )
    assert result.statistic == pytest.approx(30.07, abs=0.01)
    assert result.df == 2


def test_cramers_v_interval_inverts_noncentral_chi_square() -> None:
    """The V limits solve the noncentral chi-square equations that define them."""
    case, table, rows, cols = _r_table("mtcars_cyl_by_gear")
    with pytest.warns(UserWarning, match="may be poor"):
        result = cat.chi_square_independence(table, rows, cols, monte_carlo=False)
    n, m = result.n, 2
    lam_low = result.effect.ci_low**2 * n * m
    lam_high = result.effect.ci_high**2 * n * m
    # Definition (Smithson 2003, Confidence Intervals, ch. 4): P(X <= x | lambda_L)
    # = 0.975 and P(X <= x | lambda_U) = 0.025 for X ~ noncentral chi-square(df, lambda).
    assert stats.ncx2.cdf(result.statistic, 4, lam_low) == pytest.approx(0.975, abs=1e-7)
    assert stats.ncx2.cdf(result.statistic, 4, lam_high) == pytest.approx(0.025, abs=1e-7)


def test_independence_2x2_estimates() -> None:
    """For 2x2 the difference of shares and Woolf odds ratio follow their definitions."""
    case, table, rows, cols = _r_table("mtcars_am_by_vs")  # [[12, 7], [6, 7]]
    result = cat.chi_square_independence(table, rows, cols)
    assert result.estimate.value == pytest.approx(12 / 19 - 6 / 13)
    odds = result.extra["odds_ratio"]
    # Woolf (1955): OR = 12*7/(7*6) = 2, se(log OR) = sqrt(1/12 + 1/7 + 1/6 + 1/7).
    se = math.sqrt(1 / 12 + 1 / 7 + 1 / 6 + 1 / 7)
    assert odds["value"] == pytest.approx(2.0)
    assert odds["ci_low"] == pytest.approx(2 * math.exp(-stats.norm.ppf(0.975) * se))


def test_newcombe_interval_published_examples() -> None:
    """The difference interval matches Newcombe (1998) method 10 examples."""
    # Newcombe (1998), Stat Med 17:873-890, Table II, method 10 (values recalled
    # from that source, from memory): 56/70 - 48/80 -> (0.0524, 0.3339);
    # 9/10 - 3/10 -> (0.1705, 0.8090).
    assert cat.newcombe_difference_interval(56, 70, 48, 80) == pytest.approx(
        (0.0524, 0.3339), abs=5e-5
    )
    assert cat.newcombe_difference_interval(9, 10, 3, 10) == pytest.approx(
        (0.1705, 0.8090), abs=5e-5
    )


def test_independence_refuses_degenerate_tables() -> None:
    """An empty row, a single column and n = 0 raise NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="Row 'b'"):
        cat.chi_square_independence([[3, 4], [0, 0]], ["a", "b"], ["x", "y"])
    with pytest.raises(NotEnoughDataError):
        cat.chi_square_independence([[3], [4]], ["a", "b"], ["x"])
    with pytest.raises(NotEnoughDataError):
        cat.chi_square_independence([[0, 0], [0, 0]], ["a", "b"], ["x", "y"])
    with pytest.raises(OptionError):
        cat.chi_square_independence([[1.5, 2], [3, 4]], ["a", "b"], ["x", "y"])
    with pytest.raises(OptionError):
        cat.chi_square_independence([[1, 2], [3, 4]], ["a", "b", "c"], ["x", "y"])


tables = st.integers(min_value=2, max_value=4).flatmap(
    lambda r: st.integers(min_value=2, max_value=4).flatmap(
        lambda c: st.lists(
            st.lists(st.integers(min_value=1, max_value=60), min_size=c, max_size=c),
            min_size=r,
            max_size=r,
        )
    )
)


@settings(max_examples=60, deadline=None)
@given(tables)
def test_transpose_leaves_p_unchanged(rows: list[list[int]]) -> None:
    """Swapping rows and columns gives the same statistic and p, within [0, 1]."""
    table = np.array(rows)
    r_labels = [f"r{i}" for i in range(table.shape[0])]
    c_labels = [f"c{j}" for j in range(table.shape[1])]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # small-count caveats are not under test here
        one = cat.chi_square_independence(table, r_labels, c_labels, monte_carlo=False)
        other = cat.chi_square_independence(table.T, c_labels, r_labels, monte_carlo=False)
    assert one.statistic == pytest.approx(other.statistic, rel=1e-12, abs=1e-12)
    assert one.p_value == pytest.approx(other.p_value, rel=1e-9, abs=1e-15)
    assert 0.0 <= one.p_value <= 1.0
    assert 0.0 <= one.effect.value <= 1.0


# --------------------------------------------------------------------------- Fisher


def test_fisher_matches_r() -> None:
    """p, conditional odds ratio and its exact interval equal R's fisher.test."""
    case, table, rows, cols = _r_table("mtcars_am_by_vs")
    result = cat.fisher_exact(table, rows, cols)
    ref = case["tests"]["fisher_exact"]  # R 4.2.2: fisher.test(tab)
    assert result.p_value == pytest.approx(ref["p_value"], rel=REL_P)
    # R finds the conditional MLE and limits with uniroot (tolerance about 1e-4
    # relative), so agreement is to that level, not to machine precision.
    assert result.effect.value == pytest.approx(ref["estimate"]["odds ratio"], rel=1e-4)
    assert [result.effect.ci_low, result.effect.ci_high] == pytest.approx(ref["conf_int"], rel=1e-4)
    assert result.estimate.value == pytest.approx(12 / 19 - 6 / 13)
    assert result.p_method == "exact"


def test_fisher_refuses_larger_tables() -> None:
    """A 3x3 table is refused with a pointer to the chi-square test."""
    with pytest.raises(OptionError, match="chi-square"):
        cat.fisher_exact(np.ones((3, 3), int), list("abc"), list("xyz"))


def test_fisher_one_sided_hand_computed() -> None:
    """One-sided Fisher p equals the hypergeometric tail summed by hand."""
    # Definition: margins rows 3/3, columns 3/3; P(a >= 3) = 1 / C(6, 3) = 0.05.
    result = cat.fisher_exact([[3, 0], [0, 3]], ["a", "b"], ["y", "n"], alternative="greater")
    assert result.p_value == pytest.approx(0.05, rel=1e-12)


# --------------------------------------------------------------------------- McNemar


AGRESTI_APPROVAL = np.array([[794, 150], [86, 570]])


def test_mcnemar_agresti_presidential_approval() -> None:
    """Continuity-corrected McNemar on Agresti's approval data matches the definition."""
    result = cat.mcnemar(AGRESTI_APPROVAL, ["approve", "disapprove"])
    # Agresti, An Introduction to Categorical Data Analysis, 2nd ed., sec. 8.1
    # (values recalled from memory): z = (150 - 86) / sqrt(236) = 4.17 without
    # correction. R's mcnemar.test default adds the continuity correction:
    # (|150 - 86| - 1)^2 / 236 = 3969 / 236 = 16.8178 (hand-computed).
    b, c = result.extra["discordant_b"], result.extra["discordant_c"]
    assert (b - c) / math.sqrt(b + c) == pytest.approx(4.17, abs=0.005)
    assert result.statistic == pytest.approx(3969 / 236, rel=1e-12)
    assert result.df == 1
    assert result.p_value == pytest.approx(stats.chi2.sf(3969 / 236, 1), rel=1e-12)
    assert result.p_method == "normal_approximation_continuity"
    # Agresti (same section, from memory): 944/1600 - 880/1600 = 0.59 - 0.55 = 0.04,
    # 95% interval about (0.02, 0.06).
    assert result.estimate.value == pytest.approx(0.04)
    assert result.estimate.ci_low == pytest.approx(0.02, abs=0.005)
    assert result.estimate.ci_high == pytest.approx(0.06, abs=0.005)
    assert result.effect.value == pytest.approx(150 / 86)


def test_mcnemar_exact_for_few_discordant_pairs() -> None:
    """With fewer than 25 discordant pairs the exact binomial p is used."""
    result = cat.mcnemar([[10, 1], [7, 12]], ["yes", "no"])
    # Hand-computed: b = 1 of 8 discordant pairs, two-sided binomial(8, 1/2):
    # 2 * (C(8,0) + C(8,1)) / 2^8 = 2 * 9 / 256 = 0.0703125.
    assert result.p_method == "exact"
    assert result.p_value == pytest.approx(18 / 256, rel=1e-12)
    # Exact odds-ratio limits: Clopper-Pearson limits for 1/8 mapped by pi/(1 - pi).
    cp = stats.binomtest(1, 8).proportion_ci(method="exact")
    assert result.effect.ci_low == pytest.approx(cp.low / (1 - cp.low))
    assert result.effect.value == pytest.approx(1 / 7)


def test_mcnemar_forced_versions() -> None:
    """exact=True on many pairs gives the binomial p; exact=False on few gives the chi-square."""
    exact = cat.mcnemar(AGRESTI_APPROVAL, ["a", "d"], exact=True)
    assert exact.p_value == pytest.approx(stats.binomtest(150, 236).pvalue, rel=1e-12)
    approx = cat.mcnemar([[10, 1], [7, 12]], ["y", "n"], exact=False)
    assert approx.statistic == pytest.approx((6 - 1) ** 2 / 8)  # (|1 - 7| - 1)^2 / 8


def test_mcnemar_one_sided_discordant_all_one_way() -> None:
    """All discordant pairs one way: infinite odds ratio is reported as None with a note."""
    with pytest.warns(UserWarning, match="same way"):
        result = cat.mcnemar([[5, 6], [0, 5]], ["y", "n"])
    assert result.effect.value is None
    assert result.p_value == pytest.approx(2 / 64)  # 2 * (1/2)^6, hand-computed
    assert result.notes


def test_mcnemar_refuses_degenerate() -> None:
    """No discordant pairs and n = 0 raise NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="discordant"):
        cat.mcnemar([[5, 0], [0, 5]], ["y", "n"])
    with pytest.raises(NotEnoughDataError):
        cat.mcnemar([[0, 0], [0, 0]], ["y", "n"])
    with pytest.raises(OptionError):
        cat.mcnemar([[1, 2], [3, 4]], ["y", "n"], alternative="sideways")
