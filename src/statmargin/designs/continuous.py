"""The choice shared by the continuous designs: one rule table (``designs.rules``) for every one of them.

Each continuous design hands its values (and counts, with a count column) to
``rule_choice``, which judges the shape once per analysis and looks the test up
in ``rules.RULES``; ``run_chosen`` calls the chosen method, the count-weighted one
when rows stand for several records.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ..results import Result
from ..vocabulary import Design, ShapeHandling, Test
from ..vocabulary.codes import Coded, Reason, coded
from .base import Choice
from .rules import MEAN_TEST, RANK_TEST, choose_continuous, method_for


def tests_of(design: Design) -> tuple[Test, Test]:
    """The design's (mean-based, rank-based) pair of the rule table, for the decision table."""
    return MEAN_TEST[design], RANK_TEST[design]


def rule_choice(design: Design, groups: Mapping[str, Any], *, counts: Mapping[str, Any] | None, outcome: str,
                by: str | None, ordinal_column: str | None, handling: ShapeHandling, target: float | None = None,
                lead: Sequence[Coded] = ()) -> Choice:
    """The test of ``rules.choose_continuous`` as the design's Choice, with its reason and method options.

    Parameters
    ----------
    design : Design
        A continuous design.
    groups, counts
        The values the rule judges (one array per group; the differences of pairs; the
        two measures of a correlation) and, with a count column, the records each value
        stands for.
    outcome, by : str
        Column names for the reasons.
    ordinal_column : str or None
        The ordinal column, when there is one (every test is then rank-based).
    handling : ShapeHandling
        The roles sheet's shape handling.
    target : float, optional
        The stated value of a one-sample question.
    lead : sequence of Coded
        Reasons that come first (the roles swapped, for instance).
    """
    picked = choose_continuous(design, groups, handling=handling, ordinal=ordinal_column is not None,
                               target=target, outcome=outcome, by=by, counts=counts, ordinal_column=ordinal_column)
    reasons = [*lead, picked.reason]
    if picked.test is Test.WELCH_T:
        reasons.append(coded(Reason.WELCH_DEFAULT))
    return Choice(design, picked.test, picked.rank_based, reasons, list(picked.notes), dict(picked.options))


def run_chosen(choice: Choice, *args: Any, counted: bool, **options: Any) -> Result:
    """Run the chosen test on ``args`` (the call shape of ``rules.method_for``) with the choice's options."""
    method = method_for(choice.test, choice.design, counted=counted)
    return method(*args, **options, **choice.options)
