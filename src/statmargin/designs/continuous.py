"""The choice shared by the continuous designs: the mean-based test or its rank-based counterpart.

Ordinal outcomes always take the rank-based test; a user's shape handling fixes
the family; otherwise the shape checks decide (``stats.shape``). Each design
adds its own refinement (Welch's t-test by default, Welch's ANOVA when spreads
differ).
"""

from __future__ import annotations

from ..stats.shape import ShapeAssessment
from ..vocabulary import Design, MeasureType, ShapeHandling, Test
from ..vocabulary.codes import Coded, Note, Reason, coded
from .base import Choice


def shape_facts(design: Design, outcome: str, by: str | None, shape: ShapeAssessment) -> dict[str, object]:
    """The facts a shape reason is worded from: the design, the columns and the per-group checks."""
    return {"design": design, "outcome": outcome, "by": by, "assessment": shape.to_record()}


def choose_family(
    design: Design,
    tests: tuple[Test, Test],
    *,
    outcome: str,
    by: str | None,
    outcome_type: MeasureType,
    by_type: MeasureType | None,
    handling: ShapeHandling,
    shape: ShapeAssessment,
) -> Choice:
    """The mean-based test (``tests[0]``) or the rank-based one (``tests[1]``), with the reason."""
    normal_test, rank_test = tests
    reasons: list[Coded] = []
    notes: list[Coded] = []
    if outcome_type is MeasureType.ORDINAL or by_type is MeasureType.ORDINAL:
        column = outcome if outcome_type is MeasureType.ORDINAL else by
        return Choice(design, rank_test, True, [coded(Reason.ORDINAL_RANK, column=column)])
    if handling is ShapeHandling.RANK:
        return Choice(design, rank_test, True, [coded(Reason.USER_RANK, outcome=outcome)])
    if handling is ShapeHandling.NORMAL:
        reasons.append(coded(Reason.USER_NORMAL, outcome=outcome))
        if not shape.normal_shaped:
            notes.append(coded(Note.ASSUMED_NORMAL_DESPITE_SHAPE, **shape_facts(design, outcome, by, shape)))
        return Choice(design, normal_test, False, reasons, notes)
    rank_based = not shape.normal_shaped
    code = Reason.SHAPE_RANK if rank_based else Reason.SHAPE_NORMAL
    reasons.append(coded(code, **shape_facts(design, outcome, by, shape)))
    return Choice(design, rank_test if rank_based else normal_test, rank_based, reasons, notes)
