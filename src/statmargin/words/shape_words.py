"""The shape verdict of one group in words: its direction and the evidence behind it.

``stats.shape`` reports each group's check with facts (``check``, ``check_p``,
``normal_shaped``, ``departure``, ``sampled``, ``n``); the verdict the shape-check
sheet, the JSON and the worksheet function show is written here, e.g.
"right-skewed (Shapiro-Wilk p = 0.003)".
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..stats.shape import GroupSummary, ShapeAssessment

FACTS_ONLY = ("departure", "sampled")  # facts the worded record carries as words instead


def _p(p: float) -> str:
    """A p-value in a verdict: 'p < 0.001' or 'p = 0.012' (three decimals)."""
    return "p < 0.001" if p < 0.001 else f"p = {p:.3f}"


def direction_and_evidence(summary: Mapping[str, Any]) -> tuple[str, str]:
    """The verdict's direction ("close to normal", "left-skewed", ...) and its evidence ("Shapiro-Wilk p = 0.003")."""
    check, n = summary["check"], summary["n"]
    if check == "constant":
        return "all values are equal", ""
    if check != "shapiro_wilk":
        return ("no values", "") if n == 0 else ("too few values to check the shape", f"n = {n}")
    direction = "close to normal" if summary["normal_shaped"] else str(summary["departure"])
    sampled = summary.get("sampled")
    tail = f" on {sampled} sampled values" if sampled else ""
    return direction, f"Shapiro-Wilk {_p(summary['check_p'])}{tail}"


def verdict(summary: Mapping[str, Any] | GroupSummary) -> str:
    """One short phrase for a group's shape, e.g. "right-skewed (Shapiro-Wilk p = 0.003)".

    Examples
    --------
    >>> import numpy as np
    >>> from statmargin.stats.shape import summarize
    >>> verdict(summarize(np.array([3.0, 3.0, 3.0])))
    'all values are equal'
    >>> verdict(summarize(np.array([1.0, 2.0])))
    'too few values to check the shape (n = 2)'
    """
    record = summary.to_record() if isinstance(summary, GroupSummary) else summary
    direction, evidence = direction_and_evidence(record)
    return f"{direction} ({evidence})" if evidence else direction


def worded(summary: GroupSummary) -> dict[str, Any]:
    """The group's record with its ``verdict``, ``direction`` and ``evidence`` in words (as sheets and JSON show)."""
    facts = summary.to_record()
    direction, evidence = direction_and_evidence(facts)
    record = {key: value for key, value in facts.items() if key not in FACTS_ONLY}
    record.update(verdict=verdict(facts), direction=direction, evidence=evidence)
    return record


def worded_assessment(assessment: ShapeAssessment) -> dict[str, Any]:
    """The assessment's record with each group worded (``worded``)."""
    record = assessment.to_record()
    record["groups"] = [worded(s) for s in assessment.summaries]
    return record
