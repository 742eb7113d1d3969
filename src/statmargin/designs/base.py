"""What every design module provides, and the steps they share.

A design answers one shape of question (see ``vocabulary.Design``). Its module
defines one ``DesignSpec`` subclass with:

- ``accepts(question)``: whether this design answers the question;
- ``prepare(question)``: the arrays the test needs (groups, pairs, a table),
  the per-group summaries, the counts used and left out; or a skip reason;
- ``choose(question, prepared)``: the test, with reason codes;
- ``run(question, prepared, choice)``: call the method from ``stats``;
- ``follow_up(result, prepared, settings)``: pairwise comparisons after a
  clear overall result (after adjustment across the run);
- ``prepare`` also fills ``Prepared.samples``: the values the sheets draw
  (histograms, tables), so the sheets never regroup the data themselves.

``DesignSpec.answer`` runs prepare, choose and run, turning data that cannot
support a test into a skipped Result with its reason code.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any, ClassVar

import numpy as np

from ..errors import NotEnoughDataError
from ..plan.model import Settings
from ..plan.types import ordinal_labels
from ..results import Followup, Result
from ..stats.shape import ShapeAssessment
from ..vocabulary import Design, Test
from ..vocabulary.codes import Coded, Skip, coded
from ..words import shape_words
from .question import Question


@dataclass
class Choice:
    """The chosen test for one analysis, whether it is rank-based, and the reasons."""

    design: Design
    test: Test
    rank_based: bool
    reasons: list[Coded] = field(default_factory=list)
    notes: list[Coded] = field(default_factory=list)  # caveats to carry into Result.notes
    options: dict[str, Any] = field(default_factory=dict)  # keyword arguments for the chosen method


@dataclass
class Prepared:
    """The data one analysis runs on, ready for its test and kept for follow-ups and sheets.

    ``groups`` holds numbers by group label (or one array per measurement);
    ``table`` a contingency table with its row and column labels; ``samples``
    the values each histogram draws, by label. ``summaries`` are the per-group
    descriptions shown on the results and shape-check sheets. ``shape`` holds
    the shape and count checks behind the choice. With a count column a sample
    is ``{"values": [...], "counts": [...]}`` (``counted_sample``) and the
    histogram counts each value that many times.
    """

    design: Design
    n: int = 0
    n_excluded: int = 0
    groups: dict[str, np.ndarray] = field(default_factory=dict)
    table: np.ndarray | None = None
    row_labels: list[str] = field(default_factory=list)
    col_labels: list[str] = field(default_factory=list)
    summaries: list[dict[str, Any]] = field(default_factory=list)
    shape: dict[str, Any] = field(default_factory=dict)
    samples: dict[str, Any] = field(default_factory=dict)
    extra: dict[str, Any] = field(default_factory=dict)  # design-specific facts (target, pairing, ...)

    def keep_shape(self, assessment: ShapeAssessment, shown: ShapeAssessment | None = None) -> None:
        """Keep the shape check behind the choice, worded for the sheets and JSON, with the groups shown.

        ``shown`` is the assessment whose groups the sheets describe when they are not the
        checked ones (a paired design checks the differences and shows each measurement).
        """
        self.shape = {"assessment": shape_words.worded_assessment(assessment)}
        self.extra["assessment"] = assessment
        self.summaries = [shape_words.worded(s) for s in (shown or assessment).summaries]


class Skipped(Exception):
    """Raised inside a design's steps: the analysis cannot run, for the reason given."""

    def __init__(self, reason: Coded, prepared: Prepared | None = None, *, test: Test | None = None,
                 design: Design | None = None, reasons: list[Coded] | None = None) -> None:
        super().__init__(reason.code.value)
        self.reason = reason
        self.prepared = prepared
        self.test = test
        self.design = design
        self.reasons = list(reasons or [])


class DesignSpec:
    """Base of every design module's spec; subclasses set ``design`` and the steps."""

    design: ClassVar[Design]
    tests: ClassVar[tuple[Test, Test]]  # (normal-shaped data, not normal-shaped) as in the decision table

    def accepts(self, question: Question) -> bool:
        raise NotImplementedError

    def prepare(self, question: Question) -> Prepared:
        raise NotImplementedError

    def choose(self, question: Question, prepared: Prepared) -> Choice:
        raise NotImplementedError

    def run(self, question: Question, prepared: Prepared, choice: Choice) -> Result:
        raise NotImplementedError

    def follow_up(self, result: Result, prepared: Prepared, settings: Settings) -> tuple[list[Followup], list[Coded]]:
        """Pairwise follow-ups and the reasons for running them; none by default."""
        return [], []

    def finish(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        """Design-specific fields set after a successful run; nothing by default."""

    # ---------------------------------------------------------------- shared pipeline

    def answer(self, question: Question) -> tuple[Result, Prepared]:
        """Prepare, choose and run; a skip reason anywhere gives a skipped Result."""
        try:
            prepared = self.prepare(question)
        except Skipped as skip:
            prepared = skip.prepared or Prepared(skip.design or self.design)
            return self._skipped(question, prepared, skip.reason, skip.test, skip.design, skip.reasons), prepared
        try:
            choice = self.choose(question, prepared)
        except Skipped as skip:
            return self._skipped(question, prepared, skip.reason, skip.test, skip.design, skip.reasons), prepared
        try:
            result = self.run(question, prepared, choice)
        except NotEnoughDataError as err:
            reason = err.reason if err.reason is not None else coded(Skip.NO_P_VALUE)
            result = self._skipped(question, prepared, reason, choice.test, choice.design, choice.reasons)
            return result, prepared
        self._fill(result, question, prepared, choice)
        clean_numbers(result)
        if result.skipped is None:
            self.finish(result, question, prepared, choice)
        return result, prepared

    def _skipped(self, question: Question, prepared: Prepared, reason: Coded, test: Test | None,
                 design: Design | None, reasons: list[Coded]) -> Result:
        settings = question.settings
        result = Result(
            outcome=question.report_outcome, exposure=question.report_exposure,
            design=design or prepared.design, test=test, skipped=reason,
            alternative=settings.alternative.value, confidence=settings.confidence,
            n=prepared.n, n_excluded=prepared.n_excluded, reasons=list(reasons),
        )
        result.groups = list(prepared.summaries)
        result.shape = dict(prepared.shape)
        self.decorate(result, question, prepared)
        return result

    def decorate(self, result: Result, question: Question, prepared: Prepared) -> None:
        """Fields every result of this design carries, run or skipped (the target, the pairing)."""

    def _fill(self, result: Result, question: Question, prepared: Prepared, choice: Choice) -> None:
        """Fill the design's fields on a method's Result (which arrives with outcome '' and exposure None)."""
        result.outcome = question.report_outcome
        result.exposure = question.report_exposure
        result.design = prepared.design
        result.n = prepared.n
        result.n_excluded = prepared.n_excluded
        result.reasons = list(choice.reasons) + [r for r in result.reasons if r not in choice.reasons]
        result.notes = list(result.notes) + [n for n in choice.notes if n not in result.notes]
        if prepared.summaries:
            by_label = {str(g.get("label")): g for g in result.groups if isinstance(g, dict)}
            if by_label:
                for g in prepared.summaries:
                    target = by_label.get(str(g.get("label")))
                    if target is not None:
                        for k, v in g.items():
                            target.setdefault(k, v)
            else:
                result.groups = list(prepared.summaries)
        result.shape = {**prepared.shape, **result.shape}
        labels = ordinal_labels(question.outcome, question.outcome_info)
        if labels:  # medians and centres of 1..k codes are read back as these labels
            result.extra["outcome_levels"] = list(labels)
        if result.p_value is None or (isinstance(result.p_value, float) and math.isnan(result.p_value)):
            if result.skipped is None:
                result.skipped = coded(Skip.NO_P_VALUE)
                result.p_value = None
        self.decorate(result, question, prepared)


def noise_free(value: float, scale: float = 1.0) -> float:
    """A computed number without floating noise: within 1e-9 of the data's scale of zero is 0.

    Rounds to 12 significant digits, so an interval bound of whole numbers stored as
    -6.03e-13 is stored as 0 and 3.0000000000004 as 3.

    Examples
    --------
    >>> noise_free(-6.0335e-13, scale=10.0), noise_free(3.0000000000004)
    (0.0, 3.0)
    """
    if abs(value) < 1e-9 * max(abs(scale), 1.0):
        return 0.0
    digits = 11 - int(math.floor(math.log10(abs(value))))
    return float(round(value, digits))


def _clean_interval(item: Any) -> Any:
    """An estimate or effect with its value and bounds stored without floating noise."""
    if item is None:
        return None
    values = [abs(v) for v in (item.value, item.ci_low, item.ci_high) if isinstance(v, float) and math.isfinite(v)]
    scale = max(values, default=1.0)
    cleaned = {
        name: noise_free(v, scale) if isinstance(v, float) and math.isfinite(v) and v != 0 else v
        for name, v in (("value", item.value), ("ci_low", item.ci_low), ("ci_high", item.ci_high))
    }
    return replace(item, **cleaned)


def clean_numbers(result: Result) -> None:
    """Estimates and effects (and follow-up estimates) of a result without floating noise."""
    result.estimate = _clean_interval(result.estimate)
    result.effect = _clean_interval(result.effect)
    result.followups = [replace(f, estimate=_clean_interval(f.estimate)) for f in result.followups]


def tally(mask: np.ndarray, weights: np.ndarray | None) -> int:
    """Records where ``mask`` holds: its rows, or the sum of their counts (a count column)."""
    return int(np.count_nonzero(mask)) if weights is None else int(weights[mask].sum())


def counted_sample(values: np.ndarray, counts: np.ndarray) -> dict[str, np.ndarray]:
    """What a histogram draws for counted rows: each value with the number of records it stands for."""
    return {"values": np.asarray(values, dtype=float), "counts": np.asarray(counts, dtype=float)}


def method_options(settings: Settings) -> dict[str, Any]:
    """The sidedness and confidence every method takes."""
    return {"alternative": settings.alternative.value, "confidence": settings.confidence}


def constant_reason(name: str, values: np.ndarray) -> Coded | None:
    """The skip reason when every value is the same (two or more values), else None."""
    if values.size >= 2 and np.all(values == values[0]):
        return coded(Skip.CONSTANT_COLUMN, name=name, value=float(values[0]))
    return None


Call = Callable[[], Result]
