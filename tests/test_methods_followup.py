"""Checks of follow-up comparisons against R 4.2.2 values and hand-worked examples."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pingouin
import pytest
from scipy import stats

from reference_cases import cases_by_design, load_case
from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.stats import followup

MULTI = cases_by_design("multi_group_continuous")


def _groups(case_id: str) -> tuple[dict, dict[str, np.ndarray]]:
    """Outcome values per group, in R's factor-level order."""
    case, frame = load_case(case_id)
    outcome, group = case["variables"]["outcome"], case["variables"]["group"]
    frame = frame.dropna(subset=[outcome, group])
    groups = {
        level: frame.loc[frame[group] == level, outcome].to_numpy(float)
        for level in case["group_levels"]
    }
    return case, groups


@pytest.mark.parametrize("case_id", MULTI)
def test_tukey_matches_r(case_id: str) -> None:
    """Differences, limits and adjusted p equal R's TukeyHSD(aov(y ~ g))."""
    case, groups = _groups(case_id)
    result = followup.tukey_hsd(groups)
    pairs = case["tests"]["tukey_hsd"]["pairs"]  # R 4.2.2: TukeyHSD(aov(y ~ g))
    assert len(result) == len(pairs)
    for got, ref in zip(result, pairs, strict=True):
        assert got.levels == (ref["level_a"], ref["level_b"])
        assert got.test == "tukey_hsd"
        assert got.estimate.value == pytest.approx(ref["diff"], rel=1e-6, abs=1e-12)
        assert got.estimate.ci_low == pytest.approx(ref["lwr"], rel=1e-6)
        assert got.estimate.ci_high == pytest.approx(ref["upr"], rel=1e-6)
        # R's ptukey and SciPy's studentized_range integrate differently: 1e-4 absolute.
        assert got.p_adjusted == pytest.approx(ref["p_adj"], abs=1e-4)
        assert got.flagged == (got.p_adjusted < 0.05)
        assert got.p_value is None


@pytest.mark.parametrize("case_id", MULTI)
def test_pairwise_mann_whitney_matches_r(case_id: str) -> None:
    """Unadjusted and Holm p-values equal R's pairwise.wilcox.test(exact = FALSE)."""
    case, groups = _groups(case_id)
    result = followup.pairwise_mann_whitney(groups, adjust="holm", correct=True)
    holm = case["tests"]["pairwise_wilcox_holm"]["pairs"]
    raw = case["tests"]["pairwise_wilcox_unadjusted"]["pairs"]
    for got, ref_holm, ref_raw in zip(result, holm, raw, strict=True):
        assert got.levels == (ref_holm["level_a"], ref_holm["level_b"])
        # R 4.2.2: pairwise.wilcox.test(y, g, p.adjust.method = "none" / "holm", exact = FALSE)
        assert got.p_value == pytest.approx(ref_raw["p_value"], rel=1e-6)
        assert got.p_adjusted == pytest.approx(ref_holm["p_value"], rel=1e-6)


def test_pairwise_mann_whitney_shift_is_hodges_lehmann() -> None:
    """The estimate is the median of all later-minus-earlier differences."""
    groups = {"a": np.array([1.0, 2.0, 4.0]), "b": np.array([3.0, 7.0])}  # invented
    (only,) = followup.pairwise_mann_whitney(groups)
    # Hodges & Lehmann (1963), by hand: b - a = {2, 1, -1, 6, 5, 3}, median = 2.5.
    assert only.levels == ("b", "a")
    assert only.estimate.value == pytest.approx(2.5)


@pytest.mark.parametrize("case_id", ["plantgrowth_weight_by_group", "warpbreaks_breaks_by_tension"])
def test_games_howell_cross_check_pingouin(case_id: str) -> None:
    """Games-Howell agrees with pingouin.pairwise_gameshowell (a cross-check, not an outside reference)."""
    _, groups = _groups(case_id)
    result = followup.games_howell(groups)
    frame = pd.DataFrame(
        [(level, v) for level, values in groups.items() for v in values], columns=["g", "y"]
    )
    table = pingouin.pairwise_gameshowell(data=frame, dv="y", between="g")
    for got in result:
        a, b = got.levels
        row = table[
            ((table["A"] == a) & (table["B"] == b)) | ((table["A"] == b) & (table["B"] == a))
        ]
        sign = 1.0 if row["A"].iloc[0] == a else -1.0
        assert got.estimate.value == pytest.approx(sign * row["diff"].iloc[0], rel=1e-9)
        assert got.statistic == pytest.approx(sign * row["T"].iloc[0], rel=1e-9)
        assert got.p_adjusted == pytest.approx(row["pval"].iloc[0], abs=1e-6)


def test_games_howell_interval_hand_computed() -> None:
    """The interval is diff +- q(0.95; k, Welch df) / sqrt(2) * se, from the definition."""
    groups = {  # invented values
        "a": np.array([4.0, 5.0, 6.0, 5.5]),
        "b": np.array([7.0, 9.0, 8.0, 10.0, 6.5]),
        "c": np.array([5.0, 5.2, 4.9]),
    }
    first = followup.games_howell(groups)[0]  # b - a
    va, vb = np.var(groups["a"], ddof=1) / 4, np.var(groups["b"], ddof=1) / 5
    df = (va + vb) ** 2 / (va**2 / 3 + vb**2 / 4)  # Welch (1947) df
    half = stats.studentized_range.ppf(0.95, 3, df) / math.sqrt(2) * math.sqrt(va + vb)
    diff = groups["b"].mean() - groups["a"].mean()
    # Games & Howell (1976): same construction as above.
    assert first.estimate.ci_low == pytest.approx(diff - half, rel=1e-9)
    assert first.estimate.ci_high == pytest.approx(diff + half, rel=1e-9)


def test_dunn_hand_worked_without_ties() -> None:
    """Dunn's z and Holm p on three untied groups match the hand-worked values."""
    groups = {"A": [1.0, 2.0, 3.0], "B": [4.0, 5.0, 6.0], "C": [7.0, 8.0, 9.0]}  # invented
    result = followup.dunn(groups, adjust="holm")
    # Dunn (1964), worked by hand: N = 9, mean ranks 2, 5, 8; variance term
    # N(N+1)/12 = 7.5; se = sqrt(7.5 (1/3 + 1/3)) = sqrt(5).
    # z(B-A) = 3/sqrt(5) = 1.341641, z(C-A) = 6/sqrt(5) = 2.683282, z(C-B) = 1.341641.
    assert [f.levels for f in result] == [("B", "A"), ("C", "A"), ("C", "B")]
    # Hodges & Lehmann (1963), by hand: B - A differences are 1..5 (median 3), C - A are
    # 4..8 (median 6), C - B are 1..5 (median 3).
    assert [f.estimate.value for f in result] == [3.0, 6.0, 3.0]
    assert result[0].estimate.name == "location shift (B - A)"
    assert [f.statistic for f in result] == pytest.approx(
        [3 / math.sqrt(5), 6 / math.sqrt(5), 3 / math.sqrt(5)]
    )
    p_small, p_big = 2 * stats.norm.sf(6 / math.sqrt(5)), 2 * stats.norm.sf(3 / math.sqrt(5))
    # Holm by hand: 3 * p_small; max(3 p_small, 2 p_big) for both remaining pairs.
    assert result[1].p_adjusted == pytest.approx(3 * p_small)
    assert result[0].p_adjusted == pytest.approx(max(3 * p_small, 2 * p_big))
    assert result[2].p_adjusted == pytest.approx(max(3 * p_small, 2 * p_big))
    assert result[1].flagged and not result[0].flagged


def test_dunn_hand_worked_with_ties() -> None:
    """Dunn's tie correction matches the hand-worked value."""
    groups = {"A": [1.0, 2.0, 2.0], "B": [2.0, 3.0, 4.0]}  # invented
    (only,) = followup.dunn(groups, adjust="none")
    # Dunn (1964), by hand: ranks 1, 3, 3 | 3, 5, 6; one tie of size 3 ->
    # (27 - 3) / (12 * 5) = 0.4; variance 6*7/12 - 0.4 = 3.1; mean ranks 7/3, 14/3;
    # z = (7/3) / sqrt(3.1 * 2/3) = 1.623087.
    assert only.statistic == pytest.approx((7 / 3) / math.sqrt(3.1 * 2 / 3), rel=1e-12)
    assert only.p_adjusted == only.p_value


@pytest.mark.parametrize("case_id", ["sleep_extra_by_group", "toothgrowth_len_by_supp"])
def test_dunn_two_groups_equals_r_rank_sum_test(case_id: str) -> None:
    """With two groups Dunn's z is the tie-corrected rank-sum z, so p equals R's wilcox.test."""
    case, groups = _groups(case_id)
    (only,) = followup.dunn(groups, adjust="none")
    # R 4.2.2: wilcox.test(y ~ g, exact = FALSE, correct = FALSE)
    ref = case["tests"]["mann_whitney_approx_nocc"]
    assert only.p_value == pytest.approx(ref["p_value"], rel=1e-9)


@pytest.mark.parametrize("case_id", MULTI)
@pytest.mark.parametrize("adjust", ["holm", "benjamini-hochberg", "none"])
def test_dunn_intervals_agree_with_adjusted_p(case_id: str, adjust: str) -> None:
    """Each Dunn pair's interval excludes 0 exactly when its adjusted p is below alpha."""
    _, groups = _groups(case_id)
    result = followup.dunn(groups, adjust=adjust, alpha=0.05, confidence=0.95)
    for pair in result:
        excludes = pair.estimate.ci_low > 0 or pair.estimate.ci_high < 0
        assert excludes == (pair.p_adjusted < 0.05), pair.levels
        assert pair.estimate.ci_low <= pair.estimate.value <= pair.estimate.ci_high


@pytest.mark.parametrize("case_id", MULTI)
def test_dunn_estimate_is_where_z_changes_sign(case_id: str) -> None:
    """The estimate is the shift of the later group at which Dunn's z (re-ranked) changes sign."""
    _, groups = _groups(case_id)
    labels = list(groups)
    for pair in followup.dunn(groups, adjust="none"):
        a, b = pair.levels

        def z(d: float, a: str = a, b: str = b) -> float:
            # Dunn (1964): mean pooled ranks, tie-corrected variance (re-ranked by brute force here)
            shifted = {k: (v - d if k == a else v) for k, v in groups.items()}
            pooled = np.concatenate([shifted[k] for k in labels])
            ranks = stats.rankdata(pooled)
            starts = np.cumsum([0] + [groups[k].size for k in labels])
            mean = {k: ranks[starts[i] : starts[i + 1]].mean() for i, k in enumerate(labels)}
            return float(mean[a] - mean[b])

        step = 1e-6 * (1 + abs(pair.estimate.value))
        assert z(pair.estimate.value - step) >= 0 >= z(pair.estimate.value + step)


@pytest.mark.parametrize("case_id", ["sleep_extra_by_group", "toothgrowth_len_by_supp"])
def test_dunn_two_groups_interval_equals_r(case_id: str) -> None:
    """With two groups the Dunn pair is R's rank-sum test without continuity correction, interval included."""
    case, groups = _groups(case_id)
    (only,) = followup.dunn(groups, adjust="none")
    later, earlier = (groups[level] for level in only.levels)
    # Hodges & Lehmann (1963): for two groups the estimate is the median of all differences.
    assert only.estimate.value == pytest.approx(float(np.median(np.subtract.outer(later, earlier))), abs=1e-12)
    # R 4.2.2: wilcox.test(y ~ g, exact = FALSE, correct = FALSE, conf.int = TRUE) gives first - second;
    # R's uniroot tolerance is 1e-4, so bounds agree to about that.
    low, high = case["tests"]["mann_whitney_approx_nocc"]["conf_int"]
    assert only.estimate.ci_low == pytest.approx(-high, abs=2e-4)
    assert only.estimate.ci_high == pytest.approx(-low, abs=2e-4)


def test_adjusted_residuals_agresti_party_identification() -> None:
    """Adjusted residuals for gender by party match Agresti's published values."""
    table = np.array([[762, 327, 468], [484, 239, 477]])
    result = followup.adjusted_residuals(
        table, ["female", "male"], ["Democrat", "Independent", "Republican"]
    )
    # Agresti, An Introduction to Categorical Data Analysis, 2nd ed. (2007),
    # Table 2.5: adjusted residuals 4.50, 0.70, -5.32 / -4.50, -0.70, 5.32
    # (values recalled from that source, from memory).
    expected = [4.50, 0.70, -5.32, -4.50, -0.70, 5.32]
    assert [f.statistic for f in result] == pytest.approx(expected, abs=0.005)
    assert [f.levels for f in result][:2] == [("female", "Democrat"), ("female", "Independent")]
    assert [f.flagged for f in result] == [True, False, True, True, False, True]
    # E = 1557 * 1246 / 2757 for the first cell (row total x column total / n)
    assert result[0].estimate.value == pytest.approx(762 - 1557 * 1246 / 2757)
    assert all(f.p_adjusted >= f.p_value for f in result)


def test_tukey_two_groups_equals_student_t() -> None:
    """With two groups Tukey's p equals R's two-sample Student t p (q = sqrt(2) |t|)."""
    case, groups = _groups("sleep_extra_by_group")
    (only,) = followup.tukey_hsd(groups)
    ref = case["tests"]["t_test_student"]  # R 4.2.2: t.test(extra ~ group, var.equal = TRUE)
    assert only.p_adjusted == pytest.approx(ref["p_value"], abs=1e-6)
    assert only.statistic == pytest.approx(abs(ref["statistic"]) * math.sqrt(2), rel=1e-9)


def test_followups_refuse_degenerate_groups() -> None:
    """A group of one, a single group and no spread raise NotEnoughDataError."""
    with pytest.raises(NotEnoughDataError, match="'b'"):
        followup.tukey_hsd({"a": [1.0, 2.0], "b": [3.0]})
    with pytest.raises(NotEnoughDataError):
        followup.games_howell({"a": [1.0, 2.0, 3.0]})
    with pytest.raises(NotEnoughDataError, match="'c'"):
        followup.pairwise_mann_whitney({"a": [1.0, 2.0], "b": [3.0, 4.0], "c": [float("nan"), 5.0]})
    with pytest.raises(NotEnoughDataError):
        followup.dunn({"a": [1.0, 1.0], "b": [1.0, 1.0]})
    with pytest.raises(NotEnoughDataError):
        followup.tukey_hsd({"a": [1.0, 1.0], "b": [2.0, 2.0]})
    with pytest.raises(NotEnoughDataError):
        followup.games_howell({"a": [1.0, 1.0], "b": [2.0, 2.0]})
    with pytest.raises(NotEnoughDataError):
        followup.adjusted_residuals([[1, 0], [2, 0]], ["r1", "r2"], ["c1", "c2"])
    with pytest.raises(OptionError):
        followup.dunn({"a": [1.0, 2.0], "b": [3.0, 4.0]}, adjust="sidak")
