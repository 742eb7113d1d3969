"""Checks of p-value adjustment (Holm, Benjamini-Hochberg) against R's p.adjust."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reference_cases import cases_by_design, load_case
from statmargin.errors import OptionError
from statmargin.results import Result
from statmargin.stats.adjust import adjust_p, adjust_results
from statmargin.vocabulary import AdjustMethod
from statmargin.vocabulary.codes import Skip, coded

RAW = [0.01, 0.04, 0.03, 0.005]


def test_holm_hand_computed() -> None:
    """Holm on four p-values equals the step-down values worked from the definition."""
    # R 4.2.2 p.adjust(c(0.01, 0.04, 0.03, 0.005), "holm"), worked by hand from
    # Holm (1979): sorted 0.005, 0.01, 0.03, 0.04 -> 4*0.005 = 0.02, 3*0.01 = 0.03,
    # 2*0.03 = 0.06, 1*0.04 = 0.04 -> running max 0.02, 0.03, 0.06, 0.06.
    assert adjust_p(RAW, "holm") == pytest.approx([0.03, 0.06, 0.06, 0.02], rel=1e-12)


def test_benjamini_hochberg_hand_computed() -> None:
    """BH on four p-values equals the step-up values worked from the definition."""
    # R 4.2.2 p.adjust(c(0.01, 0.04, 0.03, 0.005), "BH"), worked by hand from
    # Benjamini & Hochberg (1995): m/i * p_(i) = 4*0.005 = 0.02, 2*0.01 = 0.02,
    # 4/3*0.03 = 0.04, 1*0.04 = 0.04 -> running min from the top 0.02, 0.02, 0.04, 0.04.
    assert adjust_p(RAW, AdjustMethod.BH) == pytest.approx([0.02, 0.04, 0.04, 0.02], rel=1e-12)


def test_holm_caps_at_one() -> None:
    """Holm values never exceed 1."""
    # Definition (Holm 1979): 2*0.6 = 1.2 -> capped at 1; 1*0.7 -> running max 1.
    assert adjust_p([0.6, 0.7], "holm") == pytest.approx([1.0, 1.0])


def test_missing_values_are_not_counted() -> None:
    """None stays None and does not enlarge the family, as R's p.adjust with NA."""
    # R 4.2.2 p.adjust(c(0.01, NA, 0.04), "holm") -> 0.02 NA 0.04 (m = 2), by hand.
    assert adjust_p([0.01, None, 0.04], "holm") == [pytest.approx(0.02), None, pytest.approx(0.04)]


def test_none_leaves_values() -> None:
    """Method "none" returns the raw values."""
    assert adjust_p(RAW, "none") == pytest.approx(RAW)


def test_unknown_method_is_refused() -> None:
    """An unknown method name raises OptionError with a one-line message."""
    with pytest.raises(OptionError, match="holm"):
        adjust_p(RAW, "bonferroni-ish")


def test_out_of_range_p_is_refused() -> None:
    """A p-value above 1 raises OptionError."""
    with pytest.raises(OptionError):
        adjust_p([0.5, 1.5], "holm")


@pytest.mark.parametrize("case_id", cases_by_design("multi_group_continuous"))
def test_holm_reproduces_r_pairwise_wilcox(case_id: str) -> None:
    """Adjusting R's unadjusted pairwise Wilcoxon p-values gives R's Holm ones."""
    case, _ = load_case(case_id)
    raw = [p["p_value"] for p in case["tests"]["pairwise_wilcox_unadjusted"]["pairs"]]
    # R 4.2.2: pairwise.wilcox.test(y, g, p.adjust.method = "holm", exact = FALSE)
    expected = [p["p_value"] for p in case["tests"]["pairwise_wilcox_holm"]["pairs"]]
    assert adjust_p(raw, "holm") == pytest.approx(expected, rel=1e-12)


def _result(p: float | None, skipped: str | None = None) -> Result:
    return Result(
        outcome="y",
        exposure=None,
        design="two_categorical",
        test="fisher_exact",
        p_value=p,
        skipped=skipped,
    )


def test_adjust_results_skips_skipped() -> None:
    """Skipped results get no adjusted p and do not count in the family."""
    results = [_result(0.01), _result(None, skipped=coded(Skip.CONSTANT_COLUMN, name="y", value=1.0)), _result(0.04)]
    out = adjust_results(results, "holm")
    assert out is results
    # Holm with m = 2 (definition): 2*0.01 = 0.02, max(0.02, 1*0.04) = 0.04.
    assert [r.p_adjusted for r in results] == [pytest.approx(0.02), None, pytest.approx(0.04)]


def test_adjust_results_ignores_p_of_skipped() -> None:
    """A skipped result's stray p-value is not adjusted nor counted."""
    results = [_result(0.01), _result(0.001, skipped=coded(Skip.NO_COMPLETE_PAIRS, outcome="y"))]
    adjust_results(results, AdjustMethod.HOLM)
    assert results[0].p_adjusted == pytest.approx(0.01)
    assert results[1].p_adjusted is None


p_lists = st.lists(st.floats(min_value=0.0, max_value=1.0), min_size=1, max_size=30)


@settings(max_examples=200, deadline=None)
@given(p_lists, st.sampled_from(["holm", "benjamini-hochberg"]))
def test_adjusted_not_below_raw_and_in_unit_interval(p: list[float], method: str) -> None:
    """Adjusted p-values are at least the raw ones and stay within [0, 1]."""
    adjusted = adjust_p(p, method)
    for raw, adj in zip(p, adjusted, strict=True):
        assert adj >= raw
        assert 0.0 <= adj <= 1.0


@settings(max_examples=200, deadline=None)
@given(p_lists)
def test_holm_monotone_in_sorted_order(p: list[float]) -> None:
    """Holm keeps the order of the raw p-values (non-decreasing in sorted order)."""
    adjusted = adjust_p(p, "holm")
    ordered = [adjusted[i] for i in sorted(range(len(p)), key=lambda i: p[i])]
    assert all(a <= b for a, b in zip(ordered[:-1], ordered[1:], strict=True))


@settings(max_examples=200, deadline=None)
@given(p_lists)
def test_bh_never_above_holm(p: list[float]) -> None:
    """BH values are never larger than Holm values (FDR is the weaker control)."""
    for bh, holm in zip(adjust_p(p, "benjamini-hochberg"), adjust_p(p, "holm"), strict=True):
        assert bh <= holm + 1e-15
