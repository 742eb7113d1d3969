"""The technical note of a result, for the shape-check sheet: test names, statistics, sources.

The jargon the plain reading leaves out lives here: the published name of the
test and why it was chosen, the statistic with its degrees of freedom, how the
p-value was obtained, the estimate and the standardized effect with their
intervals, the rule of thumb behind the size word (with its source), the
spread and count checks, and the method's own caveats.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..plan.model import Settings
from ..results import Result
from ..vocabulary import AdjustMethod, Design, Test
from . import context as ctx
from .numbers import ci_label, decimals_for, fmt_ci, fmt_df, fmt_number, fmt_p, is_number
from .readings import effect_magnitude, min_expected
from .sentences import say

# Human names of the tests (published methods keep their published names).
TEST_NAMES: dict[str, str] = {
    Test.CHI_SQUARE_GOODNESS_OF_FIT: "Chi-square goodness-of-fit test",
    Test.BINOMIAL_EXACT: "Exact binomial test",
    Test.ONE_SAMPLE_T: "One-sample t-test",
    Test.WILCOXON_SIGNED_RANK: "Wilcoxon signed-rank test",
    Test.CHI_SQUARE_INDEPENDENCE: "Chi-square test of independence",
    Test.FISHER_EXACT: "Fisher's exact test",
    Test.STUDENT_T: "Student's t-test",
    Test.WELCH_T: "Welch's t-test",
    Test.MANN_WHITNEY_U: "Mann-Whitney U test",
    Test.ONE_WAY_ANOVA: "One-way ANOVA",
    Test.WELCH_ANOVA: "Welch's ANOVA",
    Test.KRUSKAL_WALLIS: "Kruskal-Wallis test",
    Test.PEARSON_R: "Pearson correlation",
    Test.SPEARMAN_RHO: "Spearman rank correlation",
    Test.PAIRED_T: "Paired t-test",
    Test.MCNEMAR: "McNemar's test",
    Test.BRUNNER_MUNZEL: "Brunner-Munzel test",
    Test.SIGN_TEST: "Sign test",
    Test.RANK_ANOVA_TYPE: "ANOVA-type rank test",
    Test.ALEXANDER_GOVERN: "Alexander-Govern test",
    Test.PAIRWISE_BRUNNER_MUNZEL: "Pairwise Brunner-Munzel",
    Test.COCHRAN_ARMITAGE: "Cochran-Armitage test for trend",
    Test.MANN_KENDALL: "Mann-Kendall trend test",
    Test.TUKEY_HSD: "Tukey HSD",
    Test.GAMES_HOWELL: "Games-Howell",
    Test.DUNN: "Dunn's test",
    Test.ADJUSTED_RESIDUAL: "Adjusted standardized residual",
    Test.POISSON_EXACT: "Exact Poisson test",
    Test.RATE_RATIO_EXACT: "Exact conditional test of a rate ratio",
    Test.RATE_RATIO_SCORE: "Score test of a rate ratio",
    Test.RATE_HOMOGENEITY: "Chi-square test of homogeneity of rates",
    Test.QUASI_POISSON: "Quasi-Poisson test",
    Test.QUASI_BINOMIAL: "Quasi-binomial test",
    Test.PAIRWISE_RATE_RATIO: "Pairwise rate ratios",
}

# Names of the shape checks (shape.GroupSummary.check) for the shape-check sheet.
CHECK_NAMES: dict[str, str] = {
    "shapiro_wilk": "Shapiro-Wilk",
    "moment_z": "skewness and kurtosis z-tests",
    "moment_limits": "skewness and kurtosis limits",
    "too_few": "too few values to check",
    "constant": "all values equal",
}

ADJUST_NAMES: dict[str, str] = {
    AdjustMethod.HOLM.value: "Holm",
    AdjustMethod.BH.value: "Benjamini-Hochberg",
    AdjustMethod.NONE.value: "no adjustment",
}

def spread_check(result: Result) -> Mapping[str, Any] | None:
    """The spread-equality check of a result (``shape["spread_equality"]`` or ``shape["spread"]``)."""
    if not isinstance(result.shape, Mapping):
        return None
    spread = result.shape.get("spread_equality") or result.shape.get("spread")
    return spread if isinstance(spread, Mapping) else None


SPREAD_NAMES: dict[str, str] = {
    "brown_forsythe": "Brown-Forsythe",
    "levene": "Levene",
    "bartlett": "Bartlett",
}


def spread_name(spread: Mapping[str, Any]) -> str:
    """The published name of a spread check ("brown_forsythe" -> "Brown-Forsythe")."""
    raw = str(spread.get("test") or spread.get("name") or "equal-spread check")
    return SPREAD_NAMES.get(raw, raw)


def technical_note(result: Result, settings: Settings | None = None, context: Any = None) -> str:
    """A longer note for the shape-check sheet; test names and statistics are allowed here.

    The same sentences as ``technical_lines``, joined by spaces.
    """
    return " ".join(technical_lines(result, settings, context))


def technical_lines(
    result: Result, settings: Settings | None = None, context: Any = None
) -> list[str]:
    """The technical note as a list of sentences (one per sheet row).

    Parameters
    ----------
    result : Result
    settings : Settings, optional
        For the name of the adjustment method.
    context : optional
        For sharing mode (small counts are not written).

    Returns
    -------
    list of str
        Sentences: the test and why it was chosen, the statistic, df and
        p-value (and how p was obtained), the estimate and effect with intervals,
        the spread check, the smallest expected count, and the method's notes.
    """
    name = TEST_NAMES.get(result.test or "", result.test or "no test")
    parts: list[str] = []
    if result.skipped:
        lead = f"{name} was not run" if result.test else "No test was run"
        parts.append(f"{lead}: {say(result.skipped).rstrip('.')}.")
    else:
        # Rates count events (the person-time is in the groups), every other design records.
        used = "events" if result.design in (Design.ONE_SAMPLE_RATE, Design.GROUP_RATES) else "records"
        parts.append(
            f"{name} ({result.alternative}), {ctx.count_text(result.n, context)} {used} used."
        )
    if result.reasons:
        parts.append("Chosen because: " + "; ".join(say(r).rstrip(".") for r in result.reasons) + ".")
    if is_number(result.statistic):
        df = fmt_df(result.df)
        df_part = f" on {df} df" if df else ""
        parts.append(
            f"{result.statistic_name or 'Statistic'} = {fmt_number(result.statistic)}{df_part}."
        )
    if is_number(result.p_value):
        how = f" ({result.p_method.replace('_', ' ')})" if result.p_method else ""
        parts.append(f"Unadjusted {fmt_p(result.p_value)}{how}.")
    if is_number(result.p_adjusted):
        method = ""
        if settings is not None:
            key = getattr(settings.adjust, "value", str(settings.adjust))
            method = f" ({ADJUST_NAMES.get(key, key)})"
        parts.append(f"Adjusted {fmt_p(result.p_adjusted)}{method}.")
    for label, item in (("Estimate", result.estimate), ("Effect", result.effect)):
        if item is not None and is_number(item.value):
            decimals = decimals_for(item.value, item.ci_low, item.ci_high)
            ci = fmt_ci(item.ci_low, item.ci_high, decimals)
            ci_part = f", {ci_label(result.confidence)} {ci}" if ci else ""
            parts.append(f"{label}: {item.name} = {fmt_number(item.value, decimals)}{ci_part}.")
    mag = effect_magnitude(result)
    if mag is not None:
        parts.append(f"Size word '{mag.word}' from a rule of thumb: {mag.convention.detail}.")
    spread = spread_check(result)
    if spread is not None and is_number(spread.get("p_value")):
        stat = spread.get("statistic")
        stat_part = f" statistic {fmt_number(stat)}," if is_number(stat) else ""
        parts.append(
            f"Spread check ({spread_name(spread)}):{stat_part} {fmt_p(spread['p_value'])}."
        )
    smallest = min_expected(result)
    if smallest is not None and ctx.share_floor(context) is None:  # it reveals margins
        parts.append(f"Smallest expected count {fmt_number(smallest, decimals_for(smallest))}.")
    for note in result.notes:
        parts.append(say(note).rstrip(".") + ".")
    return parts
