"""The decision table: which test a design and the data's shape call for, and why.

``DECISION_TABLE`` maps each design to (test when normal-shaped, test when not).
The table is common practice in introductory and applied statistics texts, with
no single source; the specific refinements carry their sources beside them.
Every choice comes with short plain sentences (``Choice.reasons``) saying why.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..stats.shape import ShapeAssessment, SpreadCheck
from ..vocabulary import Design, MeasureType, ShapeHandling, Test
from ..vocabulary.codes import Coded, Note, Reason, coded

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



@dataclass
class Choice:
    """The chosen test for one analysis, whether it is rank-based, and the reasons."""

    design: Design
    test: Test
    rank_based: bool
    reasons: list[Coded] = field(default_factory=list)
    notes: list[Coded] = field(default_factory=list)  # caveats to carry into Result.notes


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
    reasons: list[Coded] = []
    notes: list[Coded] = []

    if design == Design.ONE_SAMPLE_CATEGORICAL:
        small = min_expected is not None and min_expected < COCHRAN_MIN_EXPECTED
        if single_share or n_levels == 2 and small:
            if single_share:
                reasons.append(coded(Reason.ONE_SHARE_BINOMIAL, outcome=outcome))
            else:
                reasons.append(coded(Reason.SMALL_EXPECTED_BINOMIAL, smallest=min_expected))
            return Choice(design, Test.BINOMIAL_EXACT, False, reasons, notes)
        # Small expected counts with 3+ categories: the method itself says how its p-value was
        # obtained (and switches to Monte Carlo), so no second caveat is added here.
        reasons.append(coded(Reason.GOODNESS_OF_FIT, outcome=outcome))
        return Choice(design, normal_test, False, reasons, notes)

    if design == Design.TWO_CATEGORICAL:
        small = min_expected is not None and min_expected < COCHRAN_MIN_EXPECTED
        if table_shape == (2, 2) and small:
            reasons.append(coded(Reason.SMALL_EXPECTED_FISHER, smallest=min_expected))
            return Choice(design, Test.FISHER_EXACT, False, reasons, notes)
        # Larger tables with small expected counts: the method reports its own caveat and p method.
        reasons.append(coded(Reason.CHI_SQUARE_INDEPENDENCE, outcome=outcome, by=by))
        return Choice(design, normal_test, False, reasons, notes)

    if design == Design.PAIRED_CATEGORICAL:
        reasons.append(coded(Reason.MCNEMAR_PAIRED, outcome=outcome))
        return Choice(design, normal_test, False, reasons, notes)

    # Continuous designs: ordinal -> rank; user handling; else the shape checks.
    if outcome_type is MeasureType.ORDINAL or by_type is MeasureType.ORDINAL:
        which = outcome if outcome_type is MeasureType.ORDINAL else by
        reasons.append(coded(Reason.ORDINAL_RANK, column=which))
        return Choice(design, rank_test, True, reasons, notes)
    if shape_handling is ShapeHandling.RANK:
        reasons.append(coded(Reason.USER_RANK, outcome=outcome))
        return Choice(design, rank_test, True, reasons, notes)
    if shape_handling is ShapeHandling.NORMAL:
        reasons.append(coded(Reason.USER_NORMAL, outcome=outcome))
        if shape is not None and not shape.normal_shaped:
            notes.append(coded(Note.ASSUMED_NORMAL_DESPITE_SHAPE, **_shape_facts(design, outcome, by, shape)))
        rank_based = False
    else:
        if shape is None:
            raise ValueError("shape assessment needed for automatic shape handling")
        rank_based = not shape.normal_shaped
        code = Reason.SHAPE_RANK if rank_based else Reason.SHAPE_NORMAL
        reasons.append(coded(code, **_shape_facts(design, outcome, by, shape)))
    if rank_based:
        return Choice(design, rank_test, True, reasons, notes)

    test = normal_test
    if design == Design.TWO_GROUP_CONTINUOUS:
        reasons.append(coded(Reason.WELCH_DEFAULT))
    elif design == Design.MULTI_GROUP_CONTINUOUS:
        if spread is not None and spread.p_value < SPREAD_ALPHA:
            test = Test.WELCH_ANOVA
            reasons.append(coded(Reason.SPREAD_DIFFERS, outcome=outcome, by=by, p=spread.p_value))
        elif spread is not None:
            reasons.append(coded(Reason.SPREAD_SIMILAR, outcome=outcome, by=by, p=spread.p_value))
        else:
            test = Test.WELCH_ANOVA
            reasons.append(coded(Reason.SPREAD_UNCHECKED, outcome=outcome, by=by))
    return Choice(design, test, False, reasons, notes)


def _shape_facts(design: Design, outcome: str, by: str | None, shape: ShapeAssessment) -> dict[str, object]:
    """The facts a shape reason is worded from: the design, the columns and the per-group checks."""
    return {"design": design, "outcome": outcome, "by": by, "assessment": shape.to_record()}
