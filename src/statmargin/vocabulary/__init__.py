"""The project's vocabulary: every role, type, design, test and effect kind is a value here.

Values of these enums are the words users type or pick (roles sheet, options)
and the identifiers written to JSON; display text is made from them in
``statmargin.words`` and nowhere else.
"""

from .columns import MeasureType, Role, ShapeHandling
from .designs import FOLLOWUP_TESTS, MATCHED_INTERVAL_TESTS, Design, PMethod, Test
from .effects import EffectKind, EstimateKind
from .notes import NoteKind
from .periods import (
    SINCE_LAST_RUN_ORDER,
    ChartKind,
    ControlRule,
    Grain,
    PeriodComparison,
    Precision,
    SinceLastRun,
)
from .run import AdjustFamily, AdjustMethod, Alternative, RowsToUse, YesNo
from .shape import ShapeCriterion, ShapeDirection, SpreadCriterion

__all__ = [
    "FOLLOWUP_TESTS",
    "MATCHED_INTERVAL_TESTS",
    "SINCE_LAST_RUN_ORDER",
    "AdjustFamily",
    "AdjustMethod",
    "Alternative",
    "ChartKind",
    "ControlRule",
    "Design",
    "EffectKind",
    "EstimateKind",
    "Grain",
    "MeasureType",
    "NoteKind",
    "PMethod",
    "PeriodComparison",
    "Precision",
    "Role",
    "RowsToUse",
    "ShapeCriterion",
    "ShapeDirection",
    "ShapeHandling",
    "SinceLastRun",
    "SpreadCriterion",
    "Test",
    "YesNo",
]
