"""One-sample t and Wilcoxon signed-rank against R 4.2.2 and published examples.

Reference values come from R 4.2.2 via tests/reference/r_cases.json (the R call is
stored beside each value as ``r_call`` and printed in failure messages).
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reference_cases import assert_close, cases_by_design, load_case
from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.stats.onesample import one_sample_t, signed_rank_counts, wilcoxon_signed_rank

CASES = cases_by_design("one_sample_continuous")
HL_TOLERANCE = 2e-4  # R finds approximate Hodges-Lehmann bounds with uniroot(tol = 1e-4)


def _sample(case_id: str) -> tuple[dict, np.ndarray, float]:
    case, frame = load_case(case_id)
    outcome = case["variables"]["outcome"]
    return case, frame[outcome].dropna().to_numpy(float), float(case["variables"]["mu"])


@pytest.mark.parametrize("case_id", CASES)
def test_one_sample_t_matches_r(case_id: str) -> None:
    """t, df, p, mean and CI equal R's t.test(x, mu = m)."""
    case, x, mu = _sample(case_id)
    ref = case["tests"]["t_test_one_sample"]  # R 4.2.2, r_cases.json
    result = one_sample_t(x, mu=mu)
    call = ref["r_call"]
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.df, ref["df"][0], rel=1e-12, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    (mean,) = ref["estimate"].values()
    assert_close(result.estimate.value + mu, mean, rel=1e-12, context=call)
    assert_close(result.estimate.ci_low + mu, ref["conf_int"][0], rel=1e-9, context=call)
    assert_close(result.estimate.ci_high + mu, ref["conf_int"][1], rel=1e-9, context=call)
    assert result.n == case["n"]["n_used"]


@pytest.mark.parametrize("case_id", CASES)
@pytest.mark.parametrize(
    ("test_id", "options"),
    [
        ("wilcoxon_signed_rank_approx_cc", {"exact": False, "correct": True}),
        ("wilcoxon_signed_rank_approx_nocc", {"exact": False, "correct": False}),
        ("wilcoxon_signed_rank_exact", {"exact": True}),
    ],
)
def test_signed_rank_matches_r(case_id: str, test_id: str, options: dict) -> None:
    """V, p, pseudo-median and its CI equal R's wilcox.test(x, mu = m, conf.int = TRUE)."""
    case, x, mu = _sample(case_id)
    ref = case["tests"][test_id]  # R 4.2.2, r_cases.json
    if "not_run" in ref:
        # R did not run this variant (ties or zeros); ours must then refuse to be exact.
        result = wilcoxon_signed_rank(x, mu=mu, **options)
        assert result.p_method != "exact", ref["not_run"]
        return
    result = wilcoxon_signed_rank(x, mu=mu, **options)
    call = ref["r_call"]
    assert_close(result.statistic, ref["statistic"], rel=1e-9, context=call)
    assert_close(result.p_value, ref["p_value"], rel=1e-6, context=call)
    assert_close(result.estimate.value, ref["estimate"]["(pseudo)median"], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=0, abs_floor=HL_TOLERANCE, context=call)
    assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=0, abs_floor=HL_TOLERANCE, context=call)


def test_signed_rank_exact_distribution_matches_enumeration() -> None:
    """Exact null counts of V equal a brute-force count over all 2^n sign patterns (definition, Wilcoxon 1945)."""
    for n in range(1, 11):
        brute = [0] * (n * (n + 1) // 2 + 1)
        for signs in itertools.product((0, 1), repeat=n):
            brute[sum(rank for rank, s in zip(range(1, n + 1), signs, strict=True) if s)] += 1
        assert signed_rank_counts(n) == brute


def test_signed_rank_textbook_example() -> None:
    """Hollander & Wolfe depression-scale differences give V = 40, one-sided exact p = 0.01953."""
    # Hollander, M. & Wolfe, D. A. (1973). Nonparametric Statistical Methods, 1st ed.,
    # pp. 29f (Hamilton depression scale, first minus second visit); V = 40 and
    # p = 0.01953 recalled from that example (as reproduced in R's wilcox.test help), from memory.
    # 10 of the 512 sign patterns give V >= 40, so p = 10/512 exactly.
    first = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
    second = np.array([0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29])
    result = wilcoxon_signed_rank(first - second, mu=0.0, alternative="greater")
    assert result.statistic == 40
    assert result.p_method == "exact"
    assert result.p_value == pytest.approx(10 / 512, rel=1e-12)
    assert round(result.p_value, 5) == 0.01953


def test_one_sample_t_textbook_example() -> None:
    """Student's sleep differences: mean 1.58, SD 1.17 (n divisor), t on 9 df near 4.06."""
    # Student (1908). The probable error of a mean. Biometrika 6(1):1-25, p. 20
    # (additional hours of sleep, drug 2 minus drug 1): mean +1.58, s.d. 1.17 (n divisor);
    # recalled from the paper, from memory. t = 4.062 agrees with R 4.2.2 t.test(extra ~ group, sleep, paired = TRUE).
    differences = np.array([1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4])
    result = one_sample_t(differences, mu=0.0)
    assert result.estimate.value == pytest.approx(1.58, abs=1e-12)
    assert result.groups[0]["sd"] * math.sqrt(9 / 10) == pytest.approx(1.17, abs=0.005)
    assert result.statistic == pytest.approx(4.062127683382037, rel=1e-9)


def test_one_sample_hedges_g_value() -> None:
    """Hedges' g equals J(n-1) * (mean - mu) / sd with the exact gamma-function J."""
    # Hedges (1981), J. Educational Statistics 6:107-128, eq. for J(m); J(9) = 0.91387 (tabulated value, from memory).
    x = np.array([1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4])
    result = one_sample_t(x, mu=0.0)
    d = 1.58 / np.std(x, ddof=1)
    assert result.effect.value == pytest.approx(0.91387 * d, rel=1e-4)
    assert result.effect.ci_low < result.effect.value < result.effect.ci_high


def test_one_sided_interval_is_open_on_one_side() -> None:
    """A 'greater' question gives an interval bounded below only, as R's t.test does."""
    x = np.array([1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4])
    result = one_sample_t(x, mu=0.0, alternative="greater")
    assert result.estimate.ci_high == math.inf
    # R 4.2.2: t.test(sleep$extra[11:20] - sleep$extra[1:10], alternative = "greater"): p = 0.001416445 (half the two-sided 0.00283289019738427)
    assert result.p_value == pytest.approx(0.00283289019738427 / 2, rel=1e-6)


def test_constant_sample_is_refused() -> None:
    """A sample with no spread raises NotEnoughDataError with a plain message."""
    with pytest.raises(NotEnoughDataError, match="same"):
        one_sample_t(np.array([4.0, 4.0, 4.0]), mu=3.0)


def test_all_values_at_mu_is_refused_for_signed_rank() -> None:
    """Every value equal to mu leaves nothing to rank."""
    with pytest.raises(NotEnoughDataError, match="equals"):
        wilcoxon_signed_rank(np.array([5.0, 5.0, 5.0]), mu=5.0)


def test_nan_is_dropped_and_counted() -> None:
    """NaN values are dropped and counted in n_excluded."""
    result = one_sample_t(np.array([1.0, np.nan, 2.0, 4.0]), mu=0.0)
    assert (result.n, result.n_excluded) == (3, 1)


def test_bad_alternative_is_refused() -> None:
    """An unknown alternative raises OptionError."""
    with pytest.raises(OptionError):
        one_sample_t(np.array([1.0, 2.0, 3.0]), mu=0.0, alternative="bigger")


# Quarters, so that x - mu and its cube are exact in floating point: with tenths, |x - mu|
# ties (-5.6 and 7.6 about 1) can be split by rounding of the cubes, which is not the property.
values = st.lists(st.integers(-500, 500).map(lambda v: v / 4), min_size=3, max_size=25)


@settings(max_examples=40, deadline=None)
@given(values)
def test_signed_rank_invariant_to_odd_increasing_transform(x: list[float]) -> None:
    """V and p are unchanged by y = mu + (x - mu)^3, which keeps signs and the order of |x - mu|."""
    data = np.array(x)
    mu = 1.0
    if np.all(data == mu):
        return
    before = wilcoxon_signed_rank(data, mu=mu)
    after = wilcoxon_signed_rank(mu + (data - mu) ** 3, mu=mu)
    assert after.statistic == before.statistic
    assert after.p_value == pytest.approx(before.p_value, rel=1e-12)
    assert 0.0 <= before.p_value <= 1.0


def test_signed_rank_exact_interval_uses_walsh_order_statistics() -> None:
    """For n = 9 the exact 95% interval runs from the 6th to the 40th smallest Walsh average."""
    # Hollander & Wolfe (1973), Nonparametric Statistical Methods, 1st ed., section 3.3:
    # C = n (n + 1) / 2 + 1 - t, with t = 40 for n = 9 at alpha / 2 = 0.025 (P(V >= 40) = 10/512 = 0.0195,
    # Table A.4; from memory, and checked here against the exact count 10/512 above).
    first = np.array([1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30])
    second = np.array([0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29])
    differences = first - second
    walsh = np.sort([(differences[i] + differences[j]) / 2 for i in range(9) for j in range(i, 9)])
    result = wilcoxon_signed_rank(differences, mu=0.0)
    assert result.p_method == "exact"
    assert result.estimate.value == pytest.approx(np.median(walsh), abs=1e-15)
    assert result.estimate.ci_low == walsh[5]
    assert result.estimate.ci_high == walsh[39]
