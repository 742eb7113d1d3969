"""Shape checks (statmargin.shape) against R 4.2.2 values in tests/reference/r_cases.json."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from statmargin.stats.shape import (
    assess,
    count_check,
    expected_counts,
    judge_shape,
    spread_check,
    summarize,
)
from statmargin.words.shape_words import direction_and_evidence, verdict

REF = Path(__file__).parent / "reference"
CASES = {c["case_id"]: c for c in json.loads((REF / "r_cases.json").read_text())["cases"]}


def group_values(case_id: str) -> dict[str, np.ndarray]:
    """Values per group of a grouped R case, keyed by R's level label."""
    case = CASES[case_id]
    frame = pd.read_csv(REF / case["data_file"])
    y, g = case["variables"]["outcome"], case["variables"]["group"]
    return {str(lev): frame.loc[frame[g].astype(str) == str(lev), y].to_numpy(float) for lev in case["group_levels"]}


GROUP_ENTRIES = [
    (cid, e)
    for cid in ("sleep_extra_by_group", "plantgrowth_weight_by_group", "insectsprays_count_by_spray",
                "chickwts_weight_by_feed", "warpbreaks_breaks_by_tension", "toothgrowth_len_by_supp")
    for e in CASES[cid]["distribution"]
    if e["scope"] == "group"
]


@pytest.mark.parametrize("case_id,entry", GROUP_ENTRIES, ids=[f"{c}-{e['group']}" for c, e in GROUP_ENTRIES])
def test_group_summary_matches_r(case_id, entry):
    """Mean, sd, median, G1, G2 and Shapiro-Wilk W/p match R for each group."""
    # R 4.2.2: the `distribution` entry of r_cases.json for this group (shapiro.test, moment formulas)
    s = summarize(group_values(case_id)[entry["group"]], entry["group"])
    assert s.n == entry["n"]
    assert s.mean == pytest.approx(entry["mean"], rel=1e-12)
    assert s.sd == pytest.approx(entry["sd"], rel=1e-12)
    assert s.median == pytest.approx(entry["median"], rel=1e-12)
    assert s.skewness == pytest.approx(entry["skewness_G1"], rel=1e-10, abs=1e-12)
    assert s.excess_kurtosis == pytest.approx(entry["excess_kurtosis_G2"], rel=1e-10, abs=1e-12)
    assert s.check == "shapiro_wilk"
    assert s.check_statistic == pytest.approx(entry["shapiro_W"], rel=1e-7)
    assert s.check_p == pytest.approx(entry["shapiro_p"], rel=1e-6, abs=1e-12)
    assert s.normal_shaped is (entry["shapiro_p"] >= 0.05)


def test_paired_difference_shape_matches_r():
    """Shapiro-Wilk on the sleep paired differences matches R."""
    entry = next(e for e in CASES["sleep_extra_paired"]["distribution"] if e["scope"] == "paired_difference")
    g = group_values("sleep_extra_by_group")  # same rows, ID order 1..10 in both groups
    s = summarize(g["1"] - g["2"])
    # R 4.2.2: shapiro.test(x1 - x2) for datasets::sleep
    assert s.check_p == pytest.approx(entry["shapiro_p"], rel=1e-6)
    assert s.skewness == pytest.approx(entry["skewness_G1"], rel=1e-10)
    assert s.normal_shaped is False


@pytest.mark.parametrize("case_id", ["sleep_extra_by_group", "plantgrowth_weight_by_group",
                                     "insectsprays_count_by_spray", "chickwts_weight_by_feed",
                                     "warpbreaks_breaks_by_tension"])
def test_brown_forsythe_matches_r(case_id):
    """The spread check equals R's one-way ANOVA on absolute deviations from group medians."""
    ref = CASES[case_id]["homogeneity_of_variance"]["brown_forsythe_median"]
    check = spread_check(group_values(case_id))
    # R 4.2.2: oneway.test(abs(y - ave(y, g, FUN = median)) ~ g, var.equal = TRUE)
    assert check.statistic == pytest.approx(ref["statistic"], rel=1e-10)
    assert check.p_value == pytest.approx(ref["p_value"], rel=1e-8)
    assert list(check.df) == ref["df"]


def test_expected_counts_match_r():
    """Expected counts and the smallest one match R's chisq.test(tab)$expected for cyl by gear."""
    ref = CASES["mtcars_cyl_by_gear"]["contingency"]
    expected = expected_counts(ref["observed"]["values"])
    # R 4.2.2: chisq.test(table(mtcars$cyl, mtcars$gear))$expected
    np.testing.assert_allclose(expected, ref["expected"]["values"], rtol=1e-12)
    check = count_check(expected)
    assert check["min_expected"] == pytest.approx(ref["min_expected"], rel=1e-12)
    assert check["n_expected_lt_5"] == ref["n_expected_lt_5"]


def test_outliers_by_tukey_fences():
    """Values beyond 1.5 IQR from the quartiles are counted (Tukey 1977 fences, type-7 quartiles)."""
    # Invented: quartiles of 1..9 are 3 and 7 (type 7), fences -3 and 13; 20 and -10 lie outside.
    s = summarize(np.array([1, 2, 3, 4, 5, 6, 7, 8, 9, 20, -10], dtype=float))
    assert s.q1 == pytest.approx(2.5) and s.q3 == pytest.approx(7.5)
    assert s.n_outliers == 2


def test_too_few_and_constant_are_unchecked():
    """Two values cannot be checked; equal values are flagged as constant."""
    assert summarize(np.array([1.0, 2.0])).normal_shaped is None
    const = summarize(np.array([3.0, 3.0, 3.0, 3.0]))
    assert const.check == "constant" and const.normal_shaped is None
    a = assess({"a": np.array([1.0, 2.0]), "b": np.array([1.0, 2.5, 3.0, 4.2])})
    assert a.normal_shaped is False and a.unchecked == ["a"]


def test_group_verdict_is_the_judgement_of_that_group_alone():
    """The shape sheet's verdict of a group equals judge_shape of that group: one rule for sheet and choice."""
    rng = np.random.default_rng(7)
    for values in (rng.lognormal(0.0, 1.0, 200), rng.normal(0.0, 1.0, 200), 100 - rng.lognormal(2.0, 0.6, 597)):
        s = summarize(values)
        alone = judge_shape({"all": values})
        assert s.check == "shapiro_wilk" and s.check_p == pytest.approx(alone.p_value, rel=1e-12)
        assert s.normal_shaped is (not alone.departs)
        assert direction_and_evidence(s.to_record())[0] == ("close to normal" if not alone.departs else alone.direction.value)


def test_left_skewed_597_values_are_not_called_close_to_normal():
    """The reported case: 597 left-skewed scores, described as left-skewed (SciPy's Shapiro-Wilk p < 0.001)."""
    from scipy import stats

    scores = 100 - np.random.default_rng(597).lognormal(2.0, 0.6, 597)
    s = summarize(scores)
    assert stats.shapiro(scores).pvalue < 0.001
    assert direction_and_evidence(s.to_record())[0] == "left-skewed"
    assert verdict(s).startswith("left-skewed (Shapiro-Wilk p < 0.001")


def test_above_5000_values_shapiro_wilk_reads_a_seeded_subsample():
    """Above 5000 values the verdict says so and repeats exactly (SciPy documents its p up to 5000)."""
    values = np.random.default_rng(11).normal(10.0, 2.0, 8000)
    first, second = summarize(values), summarize(values)
    assert verdict(first) == verdict(second) and verdict(first).endswith("on 5000 sampled values)")
    assert first.normal_shaped is True
