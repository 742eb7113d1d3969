"""The result schema every method returns, and its JSON-ready records.

One name per idea: the attribute names here are the JSON keys of ``--json`` output
and the column names of the results sheet. Values stay numeric (full precision,
``None`` where undefined); rounding happens only when a sheet is written.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields
from enum import Enum
from typing import Any

from .vocabulary import (
    FOLLOWUP_TESTS,
    ControlRule,
    Design,
    EffectKind,
    EstimateKind,
    PMethod,
    SinceLastRun,
    Test,
)
from .vocabulary.codes import Coded, Hidden

# Identifier tuples kept for callers that list them; the enums are the vocabulary.
DESIGNS = tuple(d.value for d in Design)
TESTS = tuple(t.value for t in Test if t not in FOLLOWUP_TESTS)
P_METHODS = tuple(m.value for m in PMethod)


def _clean(value: Any) -> Any:
    """Turn NaN/inf and numpy scalars into JSON-safe Python values (None for undefined)."""
    if value is None:
        return None
    if isinstance(value, Enum):
        return value.value
    if isinstance(value, Hidden):
        return None  # a count hidden by sharing mode
    if hasattr(value, "item") and not isinstance(value, (list, tuple, dict)):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


def _interval_record(item: Estimate | Effect) -> dict[str, Any]:
    """The JSON record of an estimate or effect: kind, display name, value and its interval."""
    return _clean(
        {
            "kind": item.kind.value,
            "name": item.name,
            "value": item.value,
            "ci_low": item.ci_low,
            "ci_high": item.ci_high,
        }
    )


@dataclass(frozen=True)
class Estimate:
    """A quantity in the outcome's own units (or a share, r, rho) with its confidence interval.

    ``levels`` are the labels compared (first minus second), ``level`` the counted
    label of a share, ``reference`` a stated value or expected share, ``per`` the
    number of person-time units (or people) a rate is expressed per (a rate of
    2.5 with ``per=1000`` is 2.5 per 1,000); the display name is made from these
    by ``statmargin.words.names``.
    """

    kind: EstimateKind
    value: float | None
    ci_low: float | None = None
    ci_high: float | None = None
    levels: tuple[str, ...] = ()
    level: str | None = None
    reference: float | None = None
    per: float | None = None

    @property
    def name(self) -> str:
        from .words.names import estimate_name

        return estimate_name(self)

    def to_record(self) -> dict[str, Any]:
        return _interval_record(self)


@dataclass(frozen=True)
class Effect:
    """A standardized effect size (Hedges' g, rank-biserial r, Cramer's V, ...) with its CI."""

    kind: EffectKind
    value: float | None
    ci_low: float | None = None
    ci_high: float | None = None
    levels: tuple[str, ...] = ()
    level: str | None = None

    @property
    def name(self) -> str:
        from .words.names import effect_name

        return effect_name(self)

    def to_record(self) -> dict[str, Any]:
        return _interval_record(self)


@dataclass(frozen=True)
class Followup:
    """One pairwise comparison after a 3+ group test (or one cell of a larger table)."""

    test: Test  # a follow-up: Tukey HSD, Games-Howell, Dunn, adjusted residual
    levels: tuple[str, ...]  # the two group labels (or row label, column label for a cell)
    estimate: Estimate | None
    p_value: float | None
    p_adjusted: float | None
    statistic: float | None = None
    flagged: bool = False  # below the chosen level after adjustment (or |z| > 2 for cells)
    reading: str | None = None

    def to_record(self) -> dict[str, Any]:
        rec = {f.name: getattr(self, f.name) for f in fields(self)}
        rec["levels"] = list(self.levels)
        rec["estimate"] = self.estimate.to_record() if self.estimate else None
        return _clean(rec)


@dataclass(frozen=True)
class PeriodPoint:
    """One period of a series: its size, its share or mean or median with an interval, and its limits.

    ``value`` is the share of the counted level (two-level outcomes) or the mean
    or median (continuous outcomes); ``centre``, ``lower_limit`` and
    ``upper_limit`` are the control chart's lines at this period (None where no
    chart was drawn). ``partial`` marks a last period that is not complete yet,
    ``few`` one with fewer rows than the documented minimum.
    """

    period: str
    n: int
    value: float | None
    ci_low: float | None = None
    ci_high: float | None = None
    partial: bool = False
    few: bool = False
    centre: float | None = None
    lower_limit: float | None = None
    upper_limit: float | None = None

    def to_record(self) -> dict[str, Any]:
        return _clean({f.name: getattr(self, f.name) for f in fields(self)})


@dataclass(frozen=True)
class Trend:
    """A trend test across periods with its estimate in units per period."""

    test: Test
    statistic: float | None
    p_value: float | None
    estimate: Estimate | None
    periods: int  # periods with rows that entered the test
    statistic_name: str | None = None
    p_method: PMethod | None = None
    notes: tuple[Coded, ...] = ()
    extra: dict[str, Any] = field(default_factory=dict)

    def to_record(self) -> dict[str, Any]:
        """``{test, statistic, p_value, estimate: {name, value, ci_low, ci_high}, periods}``."""
        estimate = self.estimate.to_record() if self.estimate else None
        if estimate is not None:
            estimate.pop("kind", None)
        return _clean(
            {
                "test": self.test,
                "statistic": self.statistic,
                "p_value": self.p_value,
                "estimate": estimate,
                "periods": self.periods,
            }
        )


@dataclass(frozen=True)
class Unusual:
    """A period flagged by a control-chart rule; the flag names the rule it met."""

    period: str
    rule: ControlRule

    def to_record(self) -> dict[str, Any]:
        return {"period": self.period, "rule": self.rule.value}


@dataclass
class Result:
    """One analysis: the numbers people act on, how they were chosen, and the checks behind them.

    ``skipped`` holds a plain reason when the data could not support the test
    (a constant column, a group of one, no complete pairs); the numeric fields are
    then ``None``. A skipped result is still reported, never dropped.
    """

    outcome: str
    exposure: str | None
    design: Design
    test: Test | None
    statistic_name: str | None = None
    statistic: float | None = None
    df: float | list[float] | None = None
    p_value: float | None = None
    p_adjusted: float | None = None
    p_method: PMethod | None = None
    alternative: str = "two-sided"
    confidence: float = 0.95
    n: int = 0
    n_excluded: int = 0
    estimate: Estimate | None = None
    effect: Effect | None = None
    groups: list[dict[str, Any]] = field(default_factory=list)
    shape: dict[str, Any] = field(default_factory=dict)
    reasons: list[Coded] = field(default_factory=list)  # why this test (codes; words makes sentences)
    notes: list[Coded] = field(default_factory=list)  # statistical caveats raised while computing
    followups: list[Followup] = field(default_factory=list)
    skipped: Coded | None = None
    against: Any = None  # the fixed value or shares of a one-sample question
    pairing: str | None = None  # the pairing key or second measurement column
    reading: str | None = None
    cautions: list[str] = field(default_factory=list)
    # Extra numbers a method reports beside the main ones (e.g. expected counts).
    extra: dict[str, Any] = field(default_factory=dict)
    # The period design (None elsewhere): the series, the trend, flagged periods, and
    # how the result changed since the workbook's previous run (None on a first run).
    periods: list[PeriodPoint] | None = None
    trend: Trend | None = None
    unusual: list[Unusual] | None = None
    since_last_run: SinceLastRun | None = None

    def to_record(self) -> dict[str, Any]:
        """A JSON-ready dict with the documented keys (see README "JSON output")."""
        from .words.sentences import say

        rec: dict[str, Any] = {}
        for f in fields(self):
            value = getattr(self, f.name)
            if isinstance(value, (Estimate, Effect)):
                value = value.to_record()
            elif f.name == "followups":
                value = [fu.to_record() for fu in value]
            elif f.name in ("periods", "unusual") and value is not None:
                value = [item.to_record() for item in value]
            elif f.name == "trend" and value is not None:
                value = value.to_record()
            elif f.name in ("reasons", "notes"):
                value = [say(item) for item in value]
            elif f.name == "skipped" and value is not None:
                value = say(value)
            rec[f.name] = value
        return _clean(rec)
