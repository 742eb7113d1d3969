"""The one-off question: read a workbook, run the tests the options ask for, change nothing.

``test_workbook`` is what ``statmargin test`` calls, with the same keyword
names as its options; ``statmargin.analyze`` asks the same question of a
DataFrame, through the same option checks.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .._version import __version__
from ..io.protocol import WorkbookSource
from ..results import Result


@dataclass
class TestSummary:
    """What ``test_workbook`` found: the data sheet and one result per question."""

    __test__ = False  # not a pytest test class, despite the name

    path: str
    sheet: str
    results: list[Result]

    def to_record(self) -> dict[str, Any]:
        """The JSON document of ``statmargin test --json``."""
        return {"tool": "statmargin", "version": __version__, "analyses": [r.to_record() for r in self.results]}


def test_workbook(
    path: str | Path,
    *,
    outcome: str | Sequence[str] = (),
    by: str | Sequence[str] = (),
    against: str | Mapping[str, str] | Iterable[str] | None = None,
    pairing_key: str | None = None,
    paired_with: str | Mapping[str, str] | Iterable[str] | None = None,
    treat: Mapping[str, str] | Iterable[str] | None = None,
    shape: str = "auto",
    alternative: str = "two-sided",
    confidence: float = 0.95,
    adjust: str = "holm",
    event: str | Mapping[str, str] | Iterable[str] | None = None,
    events: str | Sequence[str] = (),
    out_of: str | Mapping[str, str] | Iterable[str] | None = None,
    per: str | Mapping[str, str] | Iterable[str] | None = None,
    per_unit: str | float | None = None,
    count: str | None = None,
    period: str | None = None,
    period_length: str | None = None,
    adjust_across: str | None = None,
    sheet: str | None = None,
    share: bool = False,
    min_count: int | None = None,
    source: WorkbookSource | None = None,
    progress: Callable[..., None] | None = None,
) -> TestSummary:
    """Run the fitting tests on a workbook's data sheet; the workbook is only read.

    Parameters
    ----------
    path
        The workbook.
    outcome, by, against, pairing_key, paired_with, treat, shape, alternative, confidence, adjust, event
    events, out_of, per, per_unit, count, period, period_length, adjust_across
        As for :func:`statmargin.analyze` (``against``, ``paired_with``, ``event``,
        ``out_of`` and ``per`` take ``[COL=]VALUE`` items, as the command line does).
    sheet
        The data sheet (default: the first sheet with data).
    share, min_count
        Sharing mode: counts below ``min_count`` (default 11), and what would reveal
        them, are hidden in the results before they are worded or returned.
    source
        An open workbook source to read instead of the file at ``path`` (the
        Excel bridge's worksheet functions pass the cells they were given).
    progress
        Called as ``progress(message, done=, total=)`` while rows are read and
        analyses run, as for :func:`~statmargin.jobs.workbook.run_workbook`.

    Returns
    -------
    TestSummary
        The sheet read and the results, with readings and cautions.
    """
    from ..options import make_settings, plan_from_options
    from ..read.reader import read_table
    from ..sheets.share import DEFAULT_MIN_COUNT, suppress
    from ..words import console
    from ..words import progress as progress_words
    from ..words.cautions import count_comparisons
    from ..words.explain import apply as explain_results
    from .workbook import used_columns

    settings = make_settings(alternative=alternative, confidence=confidence, adjust=adjust,
                             family=adjust_across, grain=period_length, per_unit=per_unit)
    plan = plan_from_options(
        outcome, by, against=against, pairing_key=pairing_key, paired_with=paired_with, treat=treat, shape=shape,
        settings=settings, event=event, events=events, out_of=out_of, per=per, count=count, period=period,
    )
    with warnings.catch_warnings():
        # Caveats are already in each result's notes; no Python warning lines.
        warnings.simplefilter("ignore")
        say = progress or (lambda message, done=None, total=None: None)
        # Only the columns the question names are read into memory.
        table = read_table(path, sheet=sheet, source=source, columns=used_columns(plan),
                           progress=lambda done, total: say(progress_words.READING_ROWS, done=done, total=total))
        # Imported after the read: SciPy and pandas do not sit under its peak.
        from ..designs.engine import run_plan

        results = run_plan(table, plan, progress=lambda done, total: say(console.RUNNING, done=done, total=total))
        family = count_comparisons(results)
        if share:
            results = suppress(results, min_count or DEFAULT_MIN_COUNT)
        context = {"share_mode": share, "share_min_count": min_count or DEFAULT_MIN_COUNT}
        explain_results(results, settings, context, n_comparisons=family)
    return TestSummary(str(path), table.sheet, results)


test_workbook.__test__ = False  # type: ignore[attr-defined]  # not a pytest test, despite the name
