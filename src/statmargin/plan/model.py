"""The user's choices for a run: each column's role and treatment, and the run-wide settings."""

from __future__ import annotations

from dataclasses import dataclass, field

from ..vocabulary import AdjustMethod, Alternative, MeasureType, Role, ShapeHandling


@dataclass(frozen=True)
class Settings:
    """Run-wide settings; defaults are defined here once."""

    confidence: float = 0.95
    adjust: AdjustMethod = AdjustMethod.HOLM
    alternative: Alternative = Alternative.TWO_SIDED
    alpha: float = 0.05  # level for flags and follow-up comparisons (common practice)
    seed: int = 20261202  # Monte Carlo p-values are reproducible run to run
    monte_carlo_resamples: int = 20000
    merge_look_alikes: bool = True  # labels differing only in case, spacing or trailing punctuation


@dataclass
class ColumnChoice:
    """The user's choices for one column (from the roles sheet or options)."""

    name: str
    role: Role = Role.IGNORE
    treat_as: MeasureType | None = None  # None = use the inferred type
    shape: ShapeHandling = ShapeHandling.AUTO
    against: str | None = None  # comparison value for one-sample questions, as typed
    paired_with: str | None = None  # wide-form pair: the other measurement column
    order: list[str] | None = None  # label order: ordinal lowest first; groups first to last
    event: str | None = None  # the event level of a two-level outcome (None: inferred)


@dataclass
class Plan:
    """Everything needed to run: which sheet, which columns in which roles, and settings."""

    sheet: str | None = None
    header_row: int | None = None  # None = first non-empty row
    columns: list[ColumnChoice] = field(default_factory=list)
    settings: Settings = field(default_factory=Settings)

    def choice(self, name: str) -> ColumnChoice | None:
        for c in self.columns:
            if c.name == name:
                return c
        return None
