"""The user's choices for a run: each column's role and treatment, and the run-wide settings."""

from __future__ import annotations

from dataclasses import dataclass, field

from ..stats.defaults import DEFAULT_RESAMPLES, DEFAULT_SEED
from ..vocabulary import (
    AdjustFamily,
    AdjustMethod,
    Alternative,
    Grain,
    MeasureType,
    Role,
    RowsToUse,
    ShapeHandling,
)


@dataclass(frozen=True)
class Settings:
    """Run-wide settings; defaults are defined here once (those of the Monte Carlo methods in ``stats``)."""

    confidence: float = 0.95
    adjust: AdjustMethod = AdjustMethod.HOLM
    alternative: Alternative = Alternative.TWO_SIDED
    alpha: float = 0.05  # level for flags and follow-up comparisons (common practice)
    seed: int = DEFAULT_SEED  # Monte Carlo p-values are reproducible run to run
    monte_carlo_resamples: int = DEFAULT_RESAMPLES
    merge_look_alikes: bool = True  # labels differing only in case, spacing or trailing punctuation
    family: AdjustFamily = AdjustFamily.RUN  # which results share one adjustment
    rows: RowsToUse = RowsToUse.ALL  # hidden and filtered rows used (and said so) or left out
    grain: Grain = Grain.MONTH  # the length of a period for the period role
    latest_period: str | None = None  # the latest period to report, as typed (None: last complete)
    series_by_group: bool = False  # with a period column: also a series for each group of each compare-by column
    per_unit: str | None = None  # the unit rates are given in, as typed ("per 1,000 person-years")


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
    out_of: str | None = None  # events: the column of totals they are out of (people, inspections)
    per: str | None = None  # events: the column of person-time or population they are per


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
