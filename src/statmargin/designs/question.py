"""One question ready for a design: the analysis with its columns, their types and the settings.

Column types are inferred once per column and choice for the whole run
(``ColumnTypes``), and usable values once per column and type, so a run with
twenty analyses of the same columns reads each column once.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import OptionError, RoleError
from ..plan.expand import NUMBERS, Analysis
from ..plan.levels import infer_event
from ..plan.model import ColumnChoice, Settings
from ..plan.types import ColumnValues, TypeInfo, infer_type, usable_values
from ..read.table import Column, Table, not_none
from ..vocabulary import Alternative, MeasureType, ShapeHandling
from ..words import rates_words, refusals

USABLE_TYPES = (MeasureType.CONTINUOUS, MeasureType.CATEGORICAL, MeasureType.ORDINAL)


@dataclass(frozen=True)
class BothColumns:
    """Two columns read for one analysis (``Question.both``): the rows it uses are ``kept``."""

    first: ColumnValues
    second: ColumnValues
    usable: np.ndarray  # rows where both values are usable
    kept: np.ndarray  # usable rows with records (a count above 0 when there is a count column)
    weights: np.ndarray  # records per kept row (all 1 without a count column)
    n_excluded: int  # records left out (``Question.left_out``)


@dataclass
class ColumnTypes:
    """Types and usable values of a table's columns, each worked out once per run."""

    table: Table
    _types: dict[tuple[str, object, tuple[str, ...] | None], TypeInfo] = field(default_factory=dict)
    _values: dict[tuple[str, TypeInfo], ColumnValues] = field(default_factory=dict)
    _masks: dict[str, np.ndarray] = field(default_factory=dict)
    _periods: dict[tuple[str, str], object] = field(default_factory=dict)

    def periods(self, name: str, grain: str) -> object:
        """The column read as periods at ``grain`` (``plan.periods.read_periods``), once per run."""
        key = (name, str(grain))
        if key not in self._periods:
            from ..plan.periods import read_periods

            self._periods[key] = read_periods(self.table.column(name), grain, rows=self.table.rows)
        return self._periods[key]

    def info(self, name: str, choice: ColumnChoice | None) -> TypeInfo:
        """The column's type under the user's choice (treat-as and level order)."""
        key = (name, choice.treat_as if choice else None, tuple(choice.order) if choice and choice.order else None)
        if key not in self._types:
            self._types[key] = infer_type(self.table.column(name), choice)
        return self._types[key]

    def values(self, name: str, info: TypeInfo) -> ColumnValues:
        """The column's usable values read as ``info.type``."""
        key = (name, info)
        if key not in self._values:
            self._values[key] = usable_values(self.table.column(name), info)
        return self._values[key]

    def records(self) -> np.ndarray:
        """Rows that hold anything in the columns read: the records an analysis can leave out."""
        if "records" not in self._masks:
            mask = np.zeros(len(self.table.rows), dtype=bool)
            for column in self.table.columns.values():
                mask |= ~np.isnan(column.numbers)
                mask |= not_none(column.labels)
            self._masks["records"] = mask
        return self._masks["records"]

    def usable_info(self, name: str, choice: ColumnChoice | None, role: str) -> TypeInfo:
        """The type of a column that an analysis uses; refuse empty, date and identifier columns."""
        info = self.info(name, choice)
        if info.type is MeasureType.EMPTY:
            raise RoleError(refusals.empty_column(name, role))
        if info.type not in USABLE_TYPES:
            raise RoleError(refusals.unusable_type(name, info.type.value, info.reason, role))
        return info


@dataclass
class Question:
    """An analysis with its resolved columns and types, as a design sees it."""

    analysis: Analysis
    table: Table
    settings: Settings
    types: ColumnTypes
    outcome: Column
    outcome_info: TypeInfo
    by: Column | None = None
    by_info: TypeInfo | None = None
    partner: Column | None = None
    partner_info: TypeInfo | None = None
    key: Column | None = None
    period: Column | None = None  # the period column of a question over time
    cache: dict[str, object] = field(default_factory=dict)  # data shared by a design's steps

    @property
    def handling(self) -> ShapeHandling:
        choice = self.analysis.outcome_choice
        return choice.shape if choice else ShapeHandling.AUTO

    @property
    def report_outcome(self) -> str:
        return self.outcome.name

    @property
    def report_exposure(self) -> str | None:
        return self.by.name if self.by is not None else None

    @property
    def rows(self) -> np.ndarray | None:
        """Sheet row numbers of the table's rows (for notes that point at cells)."""
        return self.table.rows

    def values(self, column: Column, info: TypeInfo) -> ColumnValues:
        return self.types.values(column.name, info)

    @property
    def counts(self) -> np.ndarray | None:
        """The count column's number per row (NaN where blank or text), or None without one."""
        name = self.analysis.count
        if name is None:
            return None
        return self.values(self.table.column(name), NUMBERS).values

    def weighted(self, usable: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Rows an analysis uses and each one's number of records (all 1 without a count column).

        With a count column a row is used only when its count is given and above 0 (a
        row with a count of 0 stands for no record).
        """
        counts = self.counts
        if counts is None:
            return usable, np.ones(int(usable.sum()), dtype=np.int64)
        keep = usable & np.isfinite(counts) & (counts > 0)
        return keep, counts[keep].astype(np.int64)

    def both(self, first: Column, first_info: TypeInfo, second: Column, second_info: TypeInfo) -> BothColumns:
        """Two columns' values and the rows where both are usable, with records per row and those left out."""
        a = self.values(first, first_info)
        b = self.values(second, second_info)
        usable = a.usable & b.usable
        kept, weights = self.weighted(usable)
        return BothColumns(a, b, usable, kept, weights, self.left_out(usable))

    def left_out(self, usable: np.ndarray) -> int:
        """Records (rows holding anything) that an analysis using ``usable`` rows leaves out.

        One definition for every design, so analyses of the same outcome report the
        same count for the outcome's blank, unreadable or unusable cells. With a
        count column each such row counts its records, and a row without a count
        counts once (the records it stands for are not known).
        """
        records = self.types.records()
        counts = self.counts
        if counts is None:
            return int(np.sum(records & ~usable))
        has = np.isfinite(counts)
        return int(counts[records & ~usable & has].sum()) + int(np.sum(records & ~has))

    def event_level(self, levels: list[str]) -> str | None:
        """The outcome's event level among ``levels``: the user's choice, else inferred from common words."""
        choice = self.analysis.outcome_choice
        if choice is not None and choice.event is not None and choice.event in levels:
            return choice.event
        return infer_event(levels)

    def one_sided(self) -> bool:
        return self.settings.alternative is not Alternative.TWO_SIDED

    def require_order(self, column: Column, info: TypeInfo, levels: list[str]) -> None:
        """Refuse a one-sided question whose groups have no order stated by the user."""
        if self.one_sided() and info.inferred:
            raise OptionError(refusals.one_sided_needs_order(column.name, levels))

    def refuse_one_sided(self, test_words: str) -> None:
        """Refuse a one-sided question for a design that has no direction."""
        if self.one_sided():
            by = self.by.name if self.by is not None else None
            raise OptionError(refusals.one_sided_not_applicable(test_words, self.outcome.name, by))


def build_question(analysis: Analysis, table: Table, settings: Settings, types: ColumnTypes) -> Question:
    """Resolve an analysis's columns and types; refuse columns that cannot take their role."""
    outcome = table.column(analysis.outcome)
    if analysis.events:
        out_info = NUMBERS  # counts of events, whatever their inferred type (small whole numbers look like codes)
    else:
        out_info = types.usable_info(outcome.name, analysis.outcome_choice, refusals.ROLE_OUTCOME)
    question = Question(analysis, table, settings, types, outcome, out_info)
    if analysis.against is not None:
        return question
    if analysis.period is not None:
        question.period = table.column(analysis.period)
        if analysis.by is not None:
            question.by = table.column(analysis.by)
            question.by_info = types.info(question.by.name, analysis.by_choice)
        return question
    if analysis.paired_with:
        other = table.column(analysis.paired_with)
        partner = analysis.by_choice
        if (partner is None or partner.treat_as is None) and analysis.outcome_choice is not None:
            # The second measurement is the same kind of value as the first unless said otherwise.
            first = analysis.outcome_choice
            partner = ColumnChoice(other.name, treat_as=first.treat_as, order=first.order)
        question.partner = other
        question.partner_info = types.usable_info(other.name, partner, refusals.ROLE_PAIRED)
        return question
    if analysis.by is None:
        raise OptionError(refusals.nothing_to_compare(analysis.outcome))
    question.by = table.column(analysis.by)
    question.by_info = types.usable_info(question.by.name, analysis.by_choice, refusals.ROLE_BY)
    if analysis.events and question.by_info.type is not MeasureType.CATEGORICAL:
        raise RoleError(rates_words.groups_need_categories(outcome.name, question.by.name))
    if analysis.pairing_key and question.by_info.type is MeasureType.CATEGORICAL:
        question.key = table.column(analysis.pairing_key)
    return question
