"""Results of R reference cases, shared by the explain, report and sharing-mode tests.

Each builder returns a fresh Result (tests change them freely). Keyword arguments
replace or add fields, so every test file keeps exactly the object it checks. The
numbers are R 4.2.2 values from tests/reference/r_cases.json (case named in each
docstring) unless marked "illustrative input (invented)".
"""

from __future__ import annotations

from typing import Any

from statmargin.results import Effect, Estimate, Followup, Result
from statmargin.vocabulary import EffectKind, EstimateKind
from statmargin.vocabulary.codes import Coded

# mtcars cyl counts (R datasets: table(mtcars$cyl) = 11, 7, 14).
CYL_COUNTS = {"4": 11, "6": 7, "8": 14}


def cyl_groups() -> list[dict[str, Any]]:
    """Count and share of each mtcars cyl level (R datasets: table(mtcars$cyl))."""
    return [{"label": label, "count": count, "share": count / 32} for label, count in CYL_COUNTS.items()]


def brown_forsythe_plantgrowth() -> dict[str, Any]:
    """R 4.2.2 r_cases.json brown_forsythe_median on PlantGrowth weight by group."""
    return {"test": "Brown-Forsythe", "statistic": 1.1191856948703909, "p_value": 0.3412266241254738}


def mtcars_cyl_by_gear(**changes: Any) -> Result:
    """R 4.2.2: chisq.test(table(mtcars$cyl, mtcars$gear), correct = FALSE) (mtcars_cyl_by_gear).

    Expected counts and Cramer's V are R's; the observed table is R's mtcars.
    """
    fields: dict[str, Any] = dict(
        outcome="cyl",
        exposure="gear",
        design="two_categorical",
        test="chi_square_independence",
        statistic_name="X-squared",
        statistic=18.036363636363635,
        df=4.0,
        p_value=0.0012140660337851576,
        n=32,
        effect=Effect(EffectKind.CRAMERS_V, 0.5308655025693249),
        shape={
            "expected": [
                [5.15625, 4.125, 1.71875],
                [3.28125, 2.625, 1.09375],
                [6.5625, 5.25, 2.1875],
            ],
            "min_expected": 1.09375,
        },
        extra={
            "observed": {
                "values": [[1, 8, 2], [2, 4, 1], [12, 0, 2]],
                "row_labels": ["4", "6", "8"],
                "col_labels": ["3", "4", "5"],
            }
        },
    )
    return Result(**{**fields, **changes})


def mtcars_cyl_shares(**changes: Any) -> Result:
    """R 4.2.2: chisq.test(table(mtcars$cyl), p = c(0.25, 0.25, 0.5)) (mtcars_cyl_vs_proportions)."""
    fields: dict[str, Any] = dict(
        outcome="cyl",
        exposure=None,
        design="one_sample_categorical",
        test="chi_square_goodness_of_fit",
        statistic=1.5,
        df=2.0,
        p_value=0.4723665527410147,
        n=32,
        against={"4": 0.25, "6": 0.25, "8": 0.5},
        groups=cyl_groups(),
    )
    return Result(**{**fields, **changes})


def cyl_share_of_4() -> Estimate:
    """Share of cyl = 4 (R datasets: 11 of 32); CI: illustrative input (invented)."""
    return Estimate(EstimateKind.SHARE, 11 / 32, 0.2, 0.52, level="4")


def mtcars_am_by_vs(**changes: Any) -> Result:
    """R 4.2.2: fisher.test(table(mtcars$am, mtcars$vs)) (mtcars_am_by_vs); cells 12, 7, 6, 7.

    The estimate is the difference of the row shares with vs = 0; its CI is an
    illustrative input (invented). The odds ratio and its CI are R's.
    """
    fields: dict[str, Any] = dict(
        outcome="vs",
        exposure="am",
        design="two_categorical",
        test="fisher_exact",
        p_value=0.4726974416017796,
        n=32,
        estimate=Estimate(EstimateKind.SHARE_DIFFERENCE, 12 / 19 - 6 / 13, -0.18, 0.50, levels=("0", "1"), level="0"),
        effect=Effect(EffectKind.ODDS_RATIO, 1.9560553993728882, 0.3825341798446402, 10.591608672988254),
        extra={"observed": [[12, 7], [6, 7]], "row_labels": ["0", "1"], "col_labels": ["0", "1"]},
    )
    return Result(**{**fields, **changes})


def sleep_welch_t(**changes: Any) -> Result:
    """R 4.2.2: t.test(extra ~ group, data = sleep, var.equal = FALSE) (sleep_extra_by_group)."""
    fields: dict[str, Any] = dict(
        outcome="extra",
        exposure="group",
        design="two_group_continuous",
        test="welch_t",
        statistic_name="t",
        statistic=-1.860813467486853,
        df=17.7764735161785,
        p_value=0.07939414018735817,
        p_method="asymptotic",
        n=20,
        groups=[{"label": "1", "n": 10, "mean": 0.75}, {"label": "2", "n": 10, "mean": 2.33}],
    )
    return Result(**{**fields, **changes})


def sleep_mean_difference(value: float) -> Estimate:
    """R 4.2.2 Welch interval of the sleep difference in means (group 1 - group 2) around ``value``."""
    return Estimate(EstimateKind.MEAN_DIFFERENCE, value, -3.3654832307117104, 0.20548323071171018, levels=("1", "2"))


def plantgrowth_anova(**changes: Any) -> Result:
    """R 4.2.2: oneway.test(weight ~ group, data = PlantGrowth, var.equal = TRUE) (plantgrowth_weight_by_group).

    eta-squared = 3.76634 / 14.25843 (sums of squares from aov); its CI is an
    illustrative input (invented).
    """
    fields: dict[str, Any] = dict(
        outcome="weight",
        exposure="group",
        design="multi_group_continuous",
        test="one_way_anova",
        statistic_name="F",
        statistic=4.846087862380137,
        df=[2.0, 27.0],
        p_value=0.015909958325622912,
        p_method="asymptotic",
        n=30,
        effect=Effect(EffectKind.ETA_SQUARED, 0.2641, 0.03, 0.47),
        shape={"spread_equality": brown_forsythe_plantgrowth()},
    )
    return Result(**{**fields, **changes})


def tukey_trt2_vs_trt1() -> Followup:
    """R 4.2.2: TukeyHSD(aov(weight ~ group, data = PlantGrowth)) trt2-trt1: diff 0.865, p adj 0.01201."""
    return Followup(
        "tukey_hsd",
        ("trt2", "trt1"),
        Estimate(EstimateKind.MEAN_DIFFERENCE,
            0.8650000000000002,
            0.17378394858954183,
            1.5562160514104586, levels=("trt2", "trt1"),
        ),
        p_value=None,
        p_adjusted=0.01200642397945273,
        flagged=True,
    )


def skipped_wait_by_district(reason: Coded, **changes: Any) -> Result:
    """Invented: a Welch comparison of waits by district that could not run, with ``reason``."""
    fields: dict[str, Any] = dict(
        outcome="Wait",
        exposure="District",
        design="two_group_continuous",
        test="welch_t",
        skipped=reason,
    )
    return Result(**{**fields, **changes})
