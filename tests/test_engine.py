"""The engine end to end through ``analyze`` (statmargin.designs.engine).

Numbers are checked against R 4.2.2 values in tests/reference/r_cases.json (each
check names the R call); degenerate inputs are invented.
"""

from __future__ import annotations

import json
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import stats

from statmargin import analyze
from statmargin.errors import ColumnNotFoundError, OptionError, RoleError
from statmargin.read.table import Table
from statmargin.words.sentences import say

REF = Path(__file__).parent / "reference"
CASES = {c["case_id"]: c for c in json.loads((REF / "r_cases.json").read_text())["cases"]}

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")


def data(case_id: str) -> pd.DataFrame:
    """The case's CSV as R wrote it."""
    return pd.read_csv(REF / CASES[case_id]["data_file"])


def r_test(case_id: str, test: str) -> dict:
    """An R test entry of a case."""
    return CASES[case_id]["tests"][test]


def only(results):
    """The single result of a one-analysis run."""
    assert len(results) == 1
    return results[0]


class TestDesignsAgainstR:
    def test_one_sample_continuous(self):
        """mpg against 20 is normal-shaped, so the one-sample t-test runs."""
        r = only(analyze(data("mtcars_mpg_vs_mu20"), outcome="mpg", against=20))
        ref = r_test("mtcars_mpg_vs_mu20", "t_test_one_sample")  # R 4.2.2: t.test(x, mu = 20)
        assert (r.design, r.test) == ("one_sample_continuous", "one_sample_t")
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)
        assert r.against == 20.0 and r.n == 32 and r.outcome == "mpg" and r.exposure is None

    def test_one_sample_categorical_shares(self):
        """cyl against shares 0.25/0.25/0.5 runs the chi-square goodness-of-fit test."""
        r = only(analyze(data("mtcars_cyl_vs_proportions"), outcome="cyl", against="4=0.25,6=0.25,8=0.5"))
        ref = r_test("mtcars_cyl_vs_proportions", "chisq_gof")  # R 4.2.2: chisq.test(tab, p = c(.25,.25,.5))
        assert r.test == "chi_square_goodness_of_fit"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)

    def test_one_sample_categorical_one_share(self):
        """One share of a two-level outcome runs the exact binomial test."""
        r = only(analyze(data("mtcars_am_binomial"), outcome="am", against="1=0.5"))
        ref = r_test("mtcars_am_binomial", "binom_test")  # R 4.2.2: binom.test(13, 32, p = 0.5)
        assert r.test == "binomial_exact"
        assert r.statistic == pytest.approx(ref["statistic"])
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)

    def test_two_categorical(self):
        """am by vs (smallest expected 5.69) runs Pearson's chi-square without correction."""
        r = only(analyze(data("mtcars_am_by_vs"), outcome="am", by="vs"))
        ref = r_test("mtcars_am_by_vs", "chisq_pearson")  # R 4.2.2: chisq.test(tab, correct = FALSE)
        assert r.test == "chi_square_independence"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)
        assert r.shape["counts"]["min_expected"] == pytest.approx(CASES["mtcars_am_by_vs"]["contingency"]["min_expected"])

    def test_two_group_normal_is_welch(self):
        """sleep extra by group is normal-shaped in both groups, so Welch's t-test runs."""
        frame = data("sleep_extra_by_group").astype({"group": str})
        r = only(analyze(frame, outcome="extra", by="group"))
        ref = r_test("sleep_extra_by_group", "t_test_welch")  # R 4.2.2: t.test(extra ~ group, data = sleep)
        assert (r.design, r.test) == ("two_group_continuous", "welch_t")
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.df == pytest.approx(ref["df"][0], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)
        assert r.estimate.value == pytest.approx(0.75 - 2.33)
        assert [g["label"] for g in r.groups] == ["1", "2"]

    def test_two_group_judged_once_is_welch(self):
        """len by supp: one group alone fails Shapiro-Wilk (p = 0.024), the one judgement per analysis does not."""
        r = only(analyze(data("toothgrowth_len_by_supp"), outcome="len", by="supp"))
        ref = r_test("toothgrowth_len_by_supp", "t_test_welch")  # R 4.2.2: t.test(len ~ supp, var.equal = FALSE)
        assert r.test == "welch_t"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)
        assert say(r.reasons[0]).startswith("len within the groups of supp is close to a normal shape (")

    def test_multi_group_alexander_govern_with_games_howell(self):
        """PlantGrowth runs Alexander-Govern (SciPy's alexandergovern) then Games-Howell (adjusted p < 0.05).

        Groups of 10 take the permutation p (seeded, 4000 draws):
        0.0167 against SciPy's chi-square p of 0.0155, within the draws' Monte Carlo error.
        """
        from scipy import stats

        from statmargin.stats.multigroup import alexander_govern_permutation_p

        frame = data("plantgrowth_weight_by_group")
        r = only(analyze(frame, outcome="weight", by="group"))
        groups = [frame.weight[frame.group == g].to_numpy() for g in ("ctrl", "trt1", "trt2")]
        check = stats.alexandergovern(*groups)
        assert r.test == "alexander_govern" and r.p_method == "permutation"
        assert r.statistic == pytest.approx(check.statistic, rel=1e-12)
        assert r.p_value == alexander_govern_permutation_p(groups, check.statistic)
        assert abs(r.p_value - check.pvalue) < 3 * (check.pvalue * (1 - check.pvalue) / 4000) ** 0.5
        assert len(r.followups) == 3 and {f.test for f in r.followups} == {"games_howell"}

    def test_multi_group_skewed_is_rank_anova_type_with_pairwise_brunner_munzel(self):
        """InsectSprays departs from normal with spreads that differ: ANOVA-type rank test, then Brunner-Munzel pairs."""
        from scipy import stats

        frame = data("insectsprays_count_by_spray")
        r = only(analyze(frame, outcome="count", by="spray"))
        assert r.test == "rank_anova_type" and r.p_method == "permutation"  # 12 per spray, below 15
        assert len(r.followups) == 15 and {f.test for f in r.followups} == {"pairwise_brunner_munzel"}
        assert min(f.p_adjusted for f in r.followups) < 0.05
        pair = next(f for f in r.followups if set(f.levels) == {"A", "C"})
        # The pair's statistic is SciPy's brunnermunzel t of the pair's own groups (with the opposite sign
        # convention: positive when the first named group tends to be larger).
        check = stats.brunnermunzel(frame["count"][frame.spray == pair.levels[0]],
                                    frame["count"][frame.spray == pair.levels[1]])
        assert pair.statistic == pytest.approx(-check.statistic, rel=1e-10)

    def test_two_continuous(self):
        """mpg and wt together depart from a normal shape (combined Shapiro-Wilk p = 0.039), so Spearman's rho runs."""
        r = only(analyze(data("mtcars_mpg_vs_wt"), outcome="mpg", by="wt"))
        ref = r_test("mtcars_mpg_vs_wt", "spearman")  # R 4.2.2: cor.test(mpg, wt, method = "spearman", exact = FALSE)
        assert r.test == "spearman_rho"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-8)

    def test_two_continuous_close_to_normal(self):
        """Height and weight of R's women data show no clear departure, so Pearson's r runs."""
        r = only(analyze(data("women_height_vs_weight"), outcome="height", by="weight"))
        ref = r_test("women_height_vs_weight", "pearson")  # R 4.2.2: cor.test(height, weight)
        assert r.test == "pearson_r"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-8)

    def test_paired_long_form(self):
        """sleep paired by ID: skewed differences take the signed-rank test on first minus second."""
        r = only(analyze(data("sleep_extra_paired"), outcome="extra", by="group", paired_by="ID"))
        ref = r_test("sleep_extra_paired", "wilcoxon_paired_approx_cc")  # R 4.2.2: wilcox.test(x1, x2, paired = TRUE, exact = FALSE)
        assert (r.design, r.test) == ("paired_continuous", "wilcoxon_signed_rank")
        assert r.statistic == pytest.approx(ref["statistic"])
        assert r.p_value == pytest.approx(ref["p_value"], rel=1e-10)
        assert r.n == 10 and r.pairing == "ID" and r.extra["incomplete_pairs"] == []

    def test_paired_long_form_normal_forced(self):
        """With shape 'normal' the paired t-test runs and matches R."""
        r = only(analyze(data("sleep_extra_paired"), outcome="extra", by="group", paired_by="ID", shape="normal"))
        ref = r_test("sleep_extra_paired", "t_test_paired")  # R 4.2.2: t.test(x1, x2, paired = TRUE)
        assert r.test == "paired_t"
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.estimate.value == pytest.approx(-1.58)
        assert r.notes, "forcing normal against the shape check leaves a caveat"

    def test_paired_wide_form_matches_long_form(self):
        """The same pairs given as two columns give the same paired t-test."""
        frame = data("sleep_extra_paired")
        wide = pd.DataFrame({"drug1": frame.extra[frame.group == 1].to_numpy(),
                             "drug2": frame.extra[frame.group == 2].to_numpy()})
        r = only(analyze(wide, outcome="drug1", paired_with="drug2", shape="normal"))
        ref = r_test("sleep_extra_paired", "t_test_paired")  # R 4.2.2: t.test(x1, x2, paired = TRUE)
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)
        assert r.pairing == "drug2"

    def test_paired_categorical(self):
        """Two yes/no columns on the same people run McNemar's test (invented data)."""
        frame = pd.DataFrame({"before": ["yes"] * 10 + ["no"] * 10, "after": ["yes"] * 9 + ["no"] + ["yes"] * 6 + ["no"] * 4})
        r = only(analyze(frame, outcome="before", paired_with="after"))
        assert (r.design, r.test) == ("paired_categorical", "mcnemar")
        # Discordant pairs b = 6 (no->yes), c = 1; exact McNemar p = 2 * P(Binom(7, 0.5) <= 1) = 16/128 (hand computation).
        assert r.p_value == pytest.approx(0.125, rel=1e-9)


class TestEngineBehaviour:
    def test_adjustment_across_run(self):
        """Analyses in one run share one Holm family; a run of one leaves p as it is."""
        results = analyze(data("plantgrowth_weight_by_group"), outcome="weight", by=["group"], adjust="holm")
        assert results[0].p_adjusted == pytest.approx(results[0].p_value)
        both = analyze(data("sleep_extra_paired").astype({"group": str}), outcome="extra", by=["group", "ID"],
                       treat={"ID": "categorical"}, shape="rank")
        raw = sorted((r.p_value, i) for i, r in enumerate(both) if r.p_value is not None)
        assert len(raw) == 2
        (p1, i1), (p2, i2) = raw
        # Holm (1979): smallest p times 2, next p times 1, kept monotone.
        assert both[i1].p_adjusted == pytest.approx(min(1.0, 2 * p1))
        assert both[i2].p_adjusted == pytest.approx(max(min(1.0, 2 * p1), p2))

    def test_one_sample_row_carries_quartiles_range_and_shape(self):
        """The one-sample summary row holds the quartiles, range and shape check too (NumPy and SciPy as reference)."""
        x = data("plantgrowth_weight_by_group")["weight"].to_numpy(dtype=float)
        r = only(analyze(pd.DataFrame({"weight": x}), outcome="weight", against=5.0))
        (g,) = r.groups
        assert (g["n"], g["min"], g["max"]) == (30, x.min(), x.max())
        assert (g["q1"], g["q3"]) == pytest.approx((np.percentile(x, 25), np.percentile(x, 75)), rel=1e-12)
        assert g["skewness"] == pytest.approx(stats.skew(x, bias=False), rel=1e-10)
        assert g["check_p"] == pytest.approx(stats.shapiro(x).pvalue, rel=1e-10)
        assert g["mean"] == pytest.approx(x.mean(), rel=1e-14)

    def test_text_cell_excluded_and_counted(self):
        """A text cell in a numeric outcome is left out and counted in n_excluded."""
        frame = data("sleep_extra_by_group").astype({"group": str}).astype({"extra": object})
        frame.loc[0, "extra"] = "see notes"
        r = only(analyze(frame, outcome="extra", by="group"))
        assert (r.n, r.n_excluded) == (19, 1)

    def test_categorical_outcome_by_number_is_swapped(self):
        """A categorical outcome by a numeric column compares the numbers across the outcome's levels."""
        frame = pd.DataFrame({"weight": data("sleep_extra_by_group")["extra"],
                              "arm": data("sleep_extra_by_group")["group"].map({1: "a", 2: "b"})})
        r = only(analyze(frame, outcome="arm", by="weight"))
        assert r.design == "two_group_continuous" and r.outcome == "arm" and r.exposure == "weight"
        assert "weight was compared across the levels of arm" in say(r.reasons[0])
        ref = r_test("sleep_extra_by_group", "t_test_welch")  # R 4.2.2: t.test(extra ~ group, data = sleep)
        assert r.statistic == pytest.approx(ref["statistic"], rel=1e-10)

    def test_ordinal_outcome_gets_rank_test_and_superiority(self):
        """An ordinal outcome takes Brunner-Munzel and reports the probability of superiority U/(n1 n2)."""
        frame = data("sleep_extra_by_group").astype({"group": str})
        r = only(analyze(frame, outcome="extra", by="group", treat={"extra": "ordinal"}))
        assert r.test == "brunner_munzel"
        # R 4.2.2: wilcox.test(extra ~ group, exact = FALSE) gives W = 25.5 for group 1; 25.5 / (10 * 10).
        assert r.extra["probability_of_superiority"] == pytest.approx(0.255)

    def test_followups_residuals_for_large_table(self):
        """cyl by gear (3x3, p < 0.05) gets adjusted residuals for each cell."""
        r = only(analyze(data("mtcars_cyl_by_gear"), outcome="cyl", by="gear"))
        assert r.test == "chi_square_independence"
        assert len(r.followups) == 9 and {f.test for f in r.followups} == {"adjusted_residual"}
        cell = next(f for f in r.followups if tuple(f.levels) == ("3", "8"))  # rows are gear, columns cyl
        # Observed 12, expected 15*14/32 = 6.5625, row share 15/32, column share 14/32 (hand computation):
        z = (12 - 6.5625) / np.sqrt(6.5625 * (1 - 15 / 32) * (1 - 14 / 32))
        assert cell.statistic == pytest.approx(z, rel=1e-12) and cell.flagged


class TestDegenerateData:
    def test_constant_outcome(self):
        """A constant outcome is skipped with a plain reason, not a NaN."""
        frame = pd.DataFrame({"y": [5.5] * 8, "g": ["a", "b"] * 4})
        r = only(analyze(frame, outcome="y", by="g"))
        assert say(r.skipped) == "Every usable value of y is the same (5.5), so there is nothing to test."
        assert r.p_value is None and r.test == "welch_t"

    def test_single_group(self):
        """A compare-by column with one group is skipped."""
        frame = pd.DataFrame({"y": [1.5, 2.5, 3.5, 4.5], "g": ["a"] * 4})
        r = only(analyze(frame, outcome="y", by="g"))
        assert "fewer than two groups ('a')" in say(r.skipped)

    def test_group_of_one_is_not_a_crash(self):
        """A group with one value is skipped with a reason naming its cell (g in column B, row 6), never NaN."""
        frame = pd.DataFrame({"y": [1.5, 2.5, 3.5, 4.5, 9.0], "g": ["a", "a", "a", "a", "b"]})
        r = only(analyze(frame, outcome="y", by="g"))
        assert r.p_value is None
        assert say(r.skipped) == (
            "Group 'b' of g has a single value (cell B6); each group needs at least 2. A typing slip in "
            "that cell often makes such a group: correct the label, or leave the row out."
        )

    def test_no_complete_pairs(self):
        """Long-form pairs with no key in both conditions are skipped and listed."""
        frame = pd.DataFrame({"id": [1, 2, 3, 4], "when": ["pre", "post", "pre", "post"], "y": [1.0, 2.0, 3.0, 4.5]})
        r = only(analyze(frame, outcome="y", by="when", paired_by="id"))
        assert say(r.skipped) == "There are no complete pairs of y."
        assert r.extra["incomplete_pairs"] == ["1", "2", "3", "4"]

    def test_incomplete_pairs_reported(self):
        """Keys lacking one condition are dropped, counted and listed (invented data)."""
        frame = pd.DataFrame({"id": [1, 1, 2, 2, 3, 4, 4, 5, 5, 6, 6],
                              "when": ["pre", "post"] * 2 + ["pre"] + ["pre", "post"] * 3,
                              "y": [5.0, 4.0, 6.5, 5.0, 7.0, 8.0, 6.0, 5.5, 5.0, 9.0, None]})
        r = only(analyze(frame, outcome="y", by="when", paired_by="id", shape="normal"))
        assert r.extra["incomplete_pairs"] == ["3", "6"]
        assert r.n == 4 and r.n_excluded == 3
        assert any("2 id values" in say(n) for n in r.notes)

    def test_duplicate_key_rows(self):
        """Two rows for the same key and condition are skipped with what to fix."""
        frame = pd.DataFrame({"id": [1, 1, 1, 2, 2], "when": ["pre", "pre", "post", "pre", "post"], "y": [1.0, 2.0, 3.0, 4.0, 5.0]})
        r = only(analyze(frame, outcome="y", by="when", paired_by="id"))
        assert "more than one row" in say(r.skipped) and "'1'" in say(r.skipped)

    def test_single_category(self):
        """A categorical table with one outcome category is skipped."""
        frame = pd.DataFrame({"a": ["yes"] * 6, "b": ["x", "y"] * 3})
        r = only(analyze(frame, outcome="a", by="b", treat={"a": "categorical"}))
        assert "only one category" in say(r.skipped)

    def test_identifier_outcome_is_refused(self):
        """An identifier cannot be an outcome; the message says what to do."""
        frame = pd.DataFrame({"code": [f"K{i}" for i in range(30)], "g": ["a", "b"] * 15})
        with pytest.raises(RoleError, match="looks like an identifier"):
            analyze(frame, outcome="code", by="g")

    @pytest.mark.parametrize(
        "kwargs,error,message",
        [
            ({"outcome": "nope", "by": "group"}, ColumnNotFoundError, "not a header"),
            ({"outcome": "weight", "by": "group", "alternative": "up"}, OptionError, "--alternative: 'up' is not known"),
            ({"outcome": "weight", "by": "group", "confidence": 95}, OptionError, "between 0 and 1"),
            ({"outcome": "weight", "by": "group", "shape": "wild"}, OptionError, "--shape: 'wild' is not known"),
            ({"outcome": "weight", "by": "group", "treat": ["group=nominal"]}, OptionError, "not known"),
            ({"outcome": "weight", "paired_by": "group"}, OptionError, "--pairing-key needs --by"),
        ],
    )
    def test_bad_options(self, kwargs, error, message):
        """Bad names and options raise typed errors with one-line messages."""
        with pytest.raises(error, match=message):
            analyze(data("plantgrowth_weight_by_group"), **kwargs)

    def test_accepts_table(self):
        """A Table works as well as a DataFrame."""
        table = Table.from_frame(data("plantgrowth_weight_by_group"))
        assert only(analyze(table, outcome="weight", by="group")).test == "alexander_govern"


# ---------------------------------------------------------------- properties

values = st.lists(st.integers(min_value=-500, max_value=500), min_size=5, max_size=12, unique=True)
PROPERTY = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def two_groups(a: list[int], b: list[int]) -> pd.DataFrame:
    y = np.array(a + b, dtype=float) / 10.0
    return pd.DataFrame({"y": y, "g": ["a"] * len(a) + ["b"] * len(b)})


@PROPERTY
@given(values, values)
def test_rank_tests_unchanged_by_monotone_transform(a, b):
    """A rank-based test gives the same statistic and p after a strictly increasing transform."""
    frame = two_groups(a, b)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r1 = only(analyze(frame, outcome="y", by="g", shape="rank"))
        r2 = only(analyze(frame.assign(y=np.exp(frame.y / 25.0) + frame.y ** 3), outcome="y", by="g", shape="rank"))
    assert r1.test == r2.test == "brunner_munzel"
    assert r2.statistic == pytest.approx(r1.statistic)
    assert r2.p_value == pytest.approx(r1.p_value)


@PROPERTY
@given(values, values)
def test_swapping_labels_flips_difference(a, b):
    """Swapping the two group labels flips the sign of the difference and keeps p."""
    frame = two_groups(a, b)
    swapped = frame.assign(g=frame.g.map({"a": "b", "b": "a"}))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r1 = only(analyze(frame, outcome="y", by="g", shape="normal"))
        r2 = only(analyze(swapped, outcome="y", by="g", shape="normal"))
    assert r2.estimate.value == pytest.approx(-r1.estimate.value)
    assert r2.p_value == pytest.approx(r1.p_value)


@PROPERTY
@given(values, values, values, st.sampled_from(["holm", "benjamini-hochberg"]))
def test_p_values_in_range_and_adjusted_not_smaller(a, b, c, method):
    """Every p lies in [0, 1] and every adjusted p is at least the raw p."""
    n = min(len(a), len(b), len(c))
    frame = pd.DataFrame({"y": np.array(a[:n], float), "x": np.array(b[:n], float),
                          "g": (["u", "v", "w"] * n)[:n]})
    frame["z"] = np.array(c[:n], float)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        results = analyze(frame, outcome=["y", "z"], by=["x", "g"], adjust=method)
    assert len(results) == 4
    for r in results:
        if r.skipped is None:
            assert 0.0 <= r.p_value <= 1.0
            assert r.p_value <= r.p_adjusted <= 1.0


class TestTypeOptions:
    def test_parse_treat_with_order(self):
        """--treat style overrides parse types and ordinal label orders."""
        from statmargin.options import parse_treat
        from statmargin.vocabulary import MeasureType

        got = parse_treat(["pain=ordinal:none,mild,severe", "site=categorical"])
        assert got == {"pain": (MeasureType.ORDINAL, ["none", "mild", "severe"]),
                       "site": (MeasureType.CATEGORICAL, None)}

    def test_level_order_sets_difference_direction(self):
        """A user-given group order decides which group comes first in the difference."""
        frame = data("sleep_extra_by_group").astype({"group": str})
        default = only(analyze(frame, outcome="extra", by="group"))
        reordered = only(analyze(frame, outcome="extra", by="group", treat=["group=categorical:2,1"]))
        assert reordered.estimate.value == pytest.approx(-default.estimate.value)
        assert reordered.p_value == pytest.approx(default.p_value)

    def test_ordinal_wide_pairs_share_the_order(self):
        """The second column of an ordinal wide pair uses the first column's order (invented data)."""
        frame = pd.DataFrame({"p1": ["none", "mild", "severe", "mild", "none", "severe", "mild"],
                              "p2": ["mild", "mild", "severe", "severe", "mild", "severe", "none"]})
        r = only(analyze(frame, outcome="p1", paired_with="p2", treat=["p1=ordinal:none,mild,severe"]))
        assert (r.design, r.test) == ("paired_continuous", "sign_test")
        assert [say(x) for x in r.reasons] == ["p1 is ordinal, so a rank-based test was used."]
        # Ranks p1 = 1,2,3,2,1,3,2 and p2 = 2,2,3,3,2,3,1: differences -1,0,0,-1,-1,0,1 (hand computation);
        # zeros dropped, one of the four changes is positive: the sign test's binomial p of 1 in 4 (SciPy).
        assert r.statistic == 1.0
        assert r.p_value == pytest.approx(stats.binomtest(1, 4, 0.5).pvalue, rel=1e-12)


def test_empty_outcome_is_refused():
    """An outcome column with no values is refused with what to check."""
    frame = pd.DataFrame({"y": [np.nan] * 4, "g": ["a", "b", "a", "b"]})
    with pytest.raises(RoleError, match="'y' has no values, so it cannot be an outcome"):
        analyze(frame, outcome="y", by="g")


def test_run_plan_reports_progress_after_each_analysis():
    """run_plan calls the progress callback with (done, total) once per analysis, in order."""
    import pandas as pd

    from statmargin.designs.engine import run_plan
    from statmargin.options import build_plan, make_settings
    from statmargin.read.table import Table

    frame = pd.DataFrame(  # invented visits at two clinics
        {"site": ["A", "B"] * 6, "wait": [12, 20, 14, 22, 13, 25, 15, 21, 11, 24, 16, 23], "age": range(30, 42)}
    )
    plan = build_plan(["wait", "age"], ["site"], settings=make_settings())
    calls = []
    run_plan(Table.from_frame(frame), plan, progress=lambda done, total: calls.append((done, total)))
    assert calls == [(1, 2), (2, 2)]


def test_ordinal_two_groups_report_probability_of_superiority():
    """An ordinal outcome by two groups reports P(first ranks above second) with the Brunner-Munzel interval."""
    import pandas as pd

    from statmargin import analyze

    # invented satisfaction labels at two sites
    order = ["poor", "fair", "good"]
    frame = pd.DataFrame(
        {
            "site": ["A"] * 8 + ["B"] * 7,
            "rating": ["poor", "fair", "fair", "good", "good", "good", "good", "good",
                       "poor", "poor", "fair", "fair", "good", "good", "poor"],
        }
    )
    (result,) = analyze(frame, outcome="rating", by="site", treat={"rating": "ordinal:" + ",".join(order)})
    ranks = {label: i for i, label in enumerate(order)}
    a = [ranks[v] for v in frame.rating[frame.site == "A"]]
    b = [ranks[v] for v in frame.rating[frame.site == "B"]]
    # P(X > Y) + P(X = Y) / 2 counted over all 8 x 7 pairs (McGraw & Wong 1992 definition)
    wins = sum((x > y) + 0.5 * (x == y) for x in a for y in b)
    assert result.test == "brunner_munzel"
    assert result.effect.name == "probability of superiority (A over B)"
    assert result.effect.value == pytest.approx(wins / 56)
    assert result.effect.levels == ("A", "B")  # P(a record of A ranks above one of B), the first group first
    # The interval inverts the same test: it leaves out 1/2 exactly when p is below 0.05.
    assert (result.effect.ci_low > 0.5 or result.effect.ci_high < 0.5) == (result.p_value < 0.05)
    json.dumps(result.to_record())  # the record stays JSON-ready
