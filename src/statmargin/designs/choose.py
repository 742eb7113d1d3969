"""The decision table: which test a design and the data's shape call for, and why.

``DECISION_TABLE`` maps each design to (test when normal-shaped, test when not).
The table is common practice in introductory and applied statistics texts, with
no single source; the specific refinements carry their sources beside them.
Every choice comes with short plain sentences (``Choice.reasons``) saying why.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..stats.shape import ShapeAssessment, SpreadCheck, fmt_p
from ..vocabulary import Design, MeasureType, ShapeHandling, Test

# design -> (normal-shaped test, not normal-shaped test). Common practice, no single source.
DECISION_TABLE: dict[Design, tuple[Test, Test]] = {
    Design.ONE_SAMPLE_CATEGORICAL: (Test.CHI_SQUARE_GOODNESS_OF_FIT, Test.CHI_SQUARE_GOODNESS_OF_FIT),
    Design.ONE_SAMPLE_CONTINUOUS: (Test.ONE_SAMPLE_T, Test.WILCOXON_SIGNED_RANK),
    Design.TWO_CATEGORICAL: (Test.CHI_SQUARE_INDEPENDENCE, Test.CHI_SQUARE_INDEPENDENCE),
    Design.TWO_GROUP_CONTINUOUS: (Test.WELCH_T, Test.MANN_WHITNEY_U),
    Design.MULTI_GROUP_CONTINUOUS: (Test.ONE_WAY_ANOVA, Test.KRUSKAL_WALLIS),
    Design.TWO_CONTINUOUS: (Test.PEARSON_R, Test.SPEARMAN_RHO),
    Design.PAIRED_CONTINUOUS: (Test.PAIRED_T, Test.WILCOXON_SIGNED_RANK),
    Design.PAIRED_CATEGORICAL: (Test.MCNEMAR, Test.MCNEMAR),
}

# Designs whose test depends on the shape of continuous values.
SHAPE_DESIGNS = frozenset(
    {"one_sample_continuous", Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS, Design.TWO_CONTINUOUS, Design.PAIRED_CONTINUOUS}
)

SPREAD_ALPHA = 0.05  # Brown-Forsythe level for switching to Welch's ANOVA (common practice)
COCHRAN_MIN_EXPECTED = 5.0  # Cochran 1954, Biometrics 10(4):417-451, doi:10.2307/3001616

WELCH_REASON = (
    "Welch's t-test was used because it stays accurate when the two groups' spreads differ"
    " and loses little when they do not (Delacre, Lakens & Leys 2017)."
)


@dataclass
class Choice:
    """The chosen test for one analysis, whether it is rank-based, and the reasons."""

    design: Design
    test: Test
    rank_based: bool
    reasons: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)  # caveats to carry into Result.notes


def _sentence(text: str) -> str:
    """Capitalize a leading lowercase article only; column names keep their own spelling."""
    for word in ("the ", "there "):
        if text.startswith(word):
            return text[0].upper() + text[1:]
    return text


def _shape_sentence(design: Design, outcome: str, by: str | None, shape: ShapeAssessment) -> str:
    """Say where the shape check failed or passed, in one sentence (without the conclusion)."""
    summaries = shape.summaries
    if design in (Design.MULTI_GROUP_CONTINUOUS, Design.TWO_GROUP_CONTINUOUS):
        k = len(summaries)
        if shape.unchecked:
            names = ", ".join(repr(u) for u in shape.unchecked)
            return f"the {by} group {names} has too few values to check the shape of {outcome}"
        if shape.constant and not shape.failing:
            names = ", ".join(repr(u) for u in shape.constant)
            return f"all values of {outcome} are equal in the {by} group {names}, so its shape cannot be checked"
        if shape.failing:
            bad = [s for s in summaries if s.normal_shaped is False]
            directions = {s.direction for s in bad}
            direction = directions.pop() if len(directions) == 1 else "not normal-shaped"
            worst = min(bad, key=lambda s: s.check_p if s.check_p is not None else -1.0)
            return f"{outcome} is {direction} in {len(bad)} of {k} groups of {by} ({worst.evidence})"
        return f"{outcome} looks close to normal in all {k} groups of {by}"
    if design == Design.PAIRED_CONTINUOUS:
        s = summaries[0]
        if s.normal_shaped is None:
            return f"there are too few pairs to check the shape of the differences in {outcome}"
        return f"the differences in {outcome} are {s.verdict}"
    if design == Design.TWO_CONTINUOUS:
        bad = [s for s in summaries if s.normal_shaped is False]
        if shape.unchecked:
            return f"there are too few values to check the shape of {outcome} and {by}"
        if bad:
            return " and ".join(f"{s.label} is {s.verdict}" for s in bad)
        return f"{outcome} and {by} both look close to normal"
    s = summaries[0]
    if s.normal_shaped is None:
        return f"there are too few values to check the shape of {outcome}"
    return f"{outcome} is {s.verdict}"


def choose_test(
    design: Design,
    *,
    outcome: str,
    by: str | None = None,
    outcome_type: MeasureType = MeasureType.CONTINUOUS,
    by_type: MeasureType | None = None,
    shape_handling: ShapeHandling = ShapeHandling.AUTO,
    shape: ShapeAssessment | None = None,
    spread: SpreadCheck | None = None,
    min_expected: float | None = None,
    n_expected_lt_5: int = 0,
    table_shape: tuple[int, int] | None = None,
    n_levels: int | None = None,
    single_share: bool = False,
) -> Choice:
    """Pick the test for one analysis from the decision table.

    Parameters
    ----------
    design : str
        One of ``results.DESIGNS``.
    outcome, by : str
        Column names, used in the reason sentences.
    outcome_type, by_type : MeasureType
        Ordinal columns always take the rank-based test.
    shape_handling : ShapeHandling
        AUTO lets ``shape`` decide; NORMAL and RANK fix the family.
    shape : ShapeAssessment, optional
        Per-group shape verdicts (per difference for paired designs).
    spread : SpreadCheck, optional
        Brown-Forsythe check, for 3+ groups.
    min_expected, n_expected_lt_5, table_shape : optional
        Expected-count check for count designs.
    n_levels : int, optional
        Number of outcome categories (one-sample categorical).
    single_share : bool
        True when one share of one category was given (one-sample categorical).

    Returns
    -------
    Choice
        Test id (``results.TESTS``), whether it is rank-based, reasons and caveats.

    Notes
    -----
    Refinements beyond the table: Welch's t-test by default for two groups
    (Delacre, Lakens & Leys 2017, Int Rev Soc Psychol 30(1):92-101,
    doi:10.5334/irsp.82); Welch's ANOVA when Brown-Forsythe p < 0.05; Fisher's exact
    test for a 2x2 table with any expected count below 5 (Cochran 1954); the exact
    binomial test for one share of a two-level outcome, or when an expected count is
    below 5 with two categories. Groups too small to check their shape take the
    rank-based test.
    """
    if design not in DECISION_TABLE:
        raise ValueError(f"unknown design {design!r}")
    normal_test, rank_test = DECISION_TABLE[design]
    reasons: list[str] = []
    notes: list[str] = []

    if design == Design.ONE_SAMPLE_CATEGORICAL:
        small = min_expected is not None and min_expected < COCHRAN_MIN_EXPECTED
        if single_share or n_levels == 2 and small:
            if single_share:
                reasons.append(f"One share was given for {outcome}, so the exact binomial test was used.")
            else:
                reasons.append(
                    f"An expected count is below 5 (smallest {min_expected:.3g}), so the exact binomial"
                    " test was used instead of chi-square (Cochran's rule)."
                )
            return Choice(design, Test.BINOMIAL_EXACT, False, reasons, notes)
        # Small expected counts with 3+ categories: the method itself says how its p-value was
        # obtained (and switches to Monte Carlo), so no second caveat is added here.
        reasons.append(f"{outcome} is compared with the given shares by a chi-square goodness-of-fit test.")
        return Choice(design, normal_test, False, reasons, notes)

    if design == Design.TWO_CATEGORICAL:
        small = min_expected is not None and min_expected < COCHRAN_MIN_EXPECTED
        if table_shape == (2, 2) and small:
            reasons.append(
                f"An expected count is below 5 (smallest {min_expected:.3g}) in a 2x2 table, so Fisher's"
                " exact test was used (Cochran's rule)."
            )
            return Choice(design, Test.FISHER_EXACT, False, reasons, notes)
        # Larger tables with small expected counts: the method reports its own caveat and p method.
        reasons.append(f"{outcome} and {by} are both categories, so a chi-square test of independence was used.")
        return Choice(design, normal_test, False, reasons, notes)

    if design == Design.PAIRED_CATEGORICAL:
        reasons.append(f"{outcome} is a two-level category measured twice on the same units, so McNemar's test was used.")
        return Choice(design, normal_test, False, reasons, notes)

    # Continuous designs: ordinal -> rank; user handling; else the shape checks.
    if outcome_type is MeasureType.ORDINAL or by_type is MeasureType.ORDINAL:
        which = outcome if outcome_type is MeasureType.ORDINAL else by
        reasons.append(f"{which} is ordinal, so a rank-based test was used.")
        return Choice(design, rank_test, True, reasons, notes)
    if shape_handling is ShapeHandling.RANK:
        reasons.append(f"Shape handling for {outcome} is set to rank-based, so a rank-based test was used.")
        return Choice(design, rank_test, True, reasons, notes)
    if shape_handling is ShapeHandling.NORMAL:
        reasons.append(f"Shape handling for {outcome} is set to assume normal, so the shape checks were not used.")
        if shape is not None and not shape.normal_shaped:
            notes.append(
                f"The shape checks suggest {_shape_sentence(design, outcome, by, shape)}; the test assumes"
                " normal-shaped data because that was chosen."
            )
        rank_based = False
    else:
        if shape is None:
            raise ValueError("shape assessment needed for automatic shape handling")
        sentence = _shape_sentence(design, outcome, by, shape)
        rank_based = not shape.normal_shaped
        if rank_based:
            reasons.append(_sentence(f"{sentence}, so a rank-based test was used."))
        else:
            reasons.append(_sentence(f"{sentence}, so a test that assumes normal-shaped data was used."))
    if rank_based:
        return Choice(design, rank_test, True, reasons, notes)

    test = normal_test
    if design == Design.TWO_GROUP_CONTINUOUS:
        reasons.append(WELCH_REASON)
    elif design == Design.MULTI_GROUP_CONTINUOUS:
        if spread is not None and spread.p_value < SPREAD_ALPHA:
            test = Test.WELCH_ANOVA
            reasons.append(
                f"The spread of {outcome} differs between the groups of {by} (Brown-Forsythe {fmt_p(spread.p_value)}),"
                " so Welch's ANOVA was used."
            )
        elif spread is not None:
            reasons.append(
                f"The spread of {outcome} is similar across the groups of {by} (Brown-Forsythe {fmt_p(spread.p_value)}),"
                " so the classic one-way ANOVA was used."
            )
        else:
            test = Test.WELCH_ANOVA
            reasons.append(
                f"The spread of {outcome} across the groups of {by} could not be checked, so Welch's ANOVA"
                " (which does not assume equal spreads) was used."
            )
    return Choice(design, test, False, reasons, notes)
