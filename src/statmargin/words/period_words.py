"""Words for the period role, trends, control charts, run-to-run changes and folder runs.

Templates for the period codes are registered with ``sentences.register``;
refusal messages are functions returning one line each (raised as typed
errors by the modules that find the problem).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from typing import Any

from ..vocabulary import ChartKind, ControlRule, Grain, SinceLastRun
from ..vocabulary.codes import Code, Note, Reason, Refusal, Skip
from . import sentences
from .numbers import noun
from .sentences import Facts, capitalized

# --------------------------------------------------------------------------- names


RULE_NAMES: dict[ControlRule, str] = {
    ControlRule.BEYOND_3_SIGMA: "beyond a 3-sigma control limit (Western Electric rule 1)",
    ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA: (
        "2 of 3 periods in a row beyond 2 sigma on one side (Western Electric rule 2)"
    ),
    ControlRule.FOUR_OF_FIVE_BEYOND_1_SIGMA: (
        "4 of 5 periods in a row beyond 1 sigma on one side (Western Electric rule 3)"
    ),
    ControlRule.EIGHT_ON_ONE_SIDE: (
        "8 periods in a row on one side of the centre line (Western Electric rule 4)"
    ),
}

CHART_NAMES: dict[ChartKind, str] = {
    ChartKind.P: "p chart (Shewhart)",
    ChartKind.LANEY_P: "Laney p' chart",
    ChartKind.XBAR: "chart of means (X-bar)",
    ChartKind.INDIVIDUALS: "individuals chart (XmR)",
}

SINCE_LAST_RUN_WORDS: dict[SinceLastRun, str] = {
    SinceLastRun.NEW: "new",
    SinceLastRun.UNCHANGED: "unchanged",
    SinceLastRun.NOW_BELOW_LEVEL: "now below the significance level",
    SinceLastRun.NO_LONGER_BELOW_LEVEL: "no longer below the significance level",
    SinceLastRun.DIRECTION_REVERSED: "direction reversed",
    SinceLastRun.MOVED_OUTSIDE_INTERVAL: "estimate moved outside its previous interval",
    SinceLastRun.NO_LONGER_RUN: "no longer run",
}

GRAIN_PLURALS: dict[Grain, str] = {
    Grain.WEEK: "weeks",
    Grain.MONTH: "months",
    Grain.QUARTER: "quarters",
    Grain.YEAR: "years",
}


def per_period(grain: Grain) -> str:
    """'per month', 'per week', ... for the units of a trend estimate."""
    return f"per {grain.value}"


# --------------------------------------------------------------------------- refusals


def _shown_examples(examples: Sequence[tuple[int, str]]) -> str:
    return ", ".join(f"row {row}: {text!r}" for row, text in examples[:3])


def not_a_period_column(
    column: str, grain: Grain, finest: Grain | None, examples: Sequence[tuple[int, str]]
) -> str:
    """One line: the column cannot be read as periods at this grain, and what to do."""
    if finest is not None:
        return (
            f"{column} cannot be grouped by {grain.value}: its cells give {GRAIN_PLURALS[finest]} at the "
            f"finest; set the period grain to {finest.value} or coarser, or give dates."
        )
    shown = f" ({_shown_examples(examples)})" if examples else ""
    return (
        f"{column} does not hold periods{shown}; a period column needs dates or labels such as "
        "2026-03, Mar 2026, 2026 Q1 or 2026-W07. Fix the cells or choose another period column."
    )


def no_period_rows(column: str) -> str:
    """One line: no row has both a period and a usable value."""
    return f"No row has both a period in {column} and a usable value; check the period column."


def unknown_latest(given: str, column: str, first: str, last: str) -> str:
    """One line: the latest period the user named is not a period of the data."""
    return (
        f"The latest period {given!r} is not a period with rows in {column} (the data run from {first} "
        f"to {last}); give one of those periods or leave the setting empty."
    )


def unknown_grain(given: str) -> str:
    """One line: the grain setting is not one of the choices."""
    allowed = ", ".join(g.value for g in Grain)
    return f"Period grain {given!r} is not one of: {allowed}."


def unknown_family(given: str) -> str:
    """One line: the adjustment-family setting is not one of the choices."""
    from ..vocabulary import AdjustFamily

    allowed = ", ".join(repr(f.value) for f in AdjustFamily)
    return f"'Adjust across' {given!r} is not one of: {allowed}."


def folder_missing(folder: str) -> str:
    """One line: the folder to refresh does not exist."""
    return f"The folder {folder} does not exist; check the path."


def folder_empty(folder: str, pattern: str) -> str:
    """One line: no workbook in the folder matches the pattern."""
    return (
        f"No workbook in {folder} matches {pattern!r}; check the folder or give another --pattern."
    )


def folder_failed(n_failed: int, n_total: int) -> str:
    """One line for the end of a folder run that had failures."""
    return f"{n_failed} of {n_total} workbooks could not be refreshed; each was left as it was."


def folder_bug(kind: str, text: str) -> str:
    """One line for a workbook whose run hit an internal error (a bug, reported, the run goes on)."""
    return (
        f"statmargin hit an internal error ({kind}: {text}); the file was left as it was; "
        "rerun it alone with --debug and report it"
    )


def summary_exists(path: str) -> str:
    """One line: the summary workbook target exists and is not one of ours."""
    return f"The summary workbook {path} already exists; move it or give another --summary name."


# --------------------------------------------------------------------------- code templates


def _date(value: Any) -> str:
    return value.isoformat() if isinstance(value, dt.date) else str(value)


def _unreadable(f: Facts) -> str:
    shown = _shown_examples(f.get("examples") or [])
    more = f" ({shown}{', ...' if f['n'] != len(f.get('examples') or []) else ''})" if shown else ""
    grain = f.get("grain")
    at = f" by {grain}" if grain is not None else ""
    return (
        f"{f['n']} {noun(f['n'], 'cell')} of {f['column']} could not be read as a period{at}{more}; their rows were "
        "left out of the period series."
    )


def _partial(f: Facts) -> str:
    last = f.get("last_date")
    through = f" (rows up to {_date(last)}, the period ends {_date(f['period_end'])})" if last else ""
    return (
        f"{f['period']} is partial{through}, so the last complete period is read as the latest; "
        f"{f['period']} is shown in the series but not compared or flagged."
    )


def _few_rows(f: Facts) -> str:
    listed = ", ".join(f"{label} (n = {n})" for label, n in f["periods"])
    return (
        f"Periods with fewer than {f['minimum']} rows: {listed}; each is kept as its own period, and "
        "its share or mean is uncertain (see its interval)."
    )


def _short_series(f: Facts) -> str:
    return (
        f"The trend rests on {f['n']} periods; with fewer than {f['minimum']} a trend test has little "
        "power and one unusual period can decide it (common practice)."
    )


def _autocorrelated(f: Facts) -> str:
    return (
        f"Neighbouring periods are correlated (lag-1 autocorrelation {f['r']:.2f} of the detrended "
        f"series, beyond +/-{f['limit']:.2f}), so the trend p-value is likely too small; "
        "read the trend with caution."
    )


def _not_linear(f: Facts) -> str:
    p = "p < 0.001" if f["p"] < 0.001 else f"p = {f['p']:.3f}"
    return (
        f"The periods differ more than a straight-line trend explains (chi-square {f['statistic']:.3g} "
        f"on {f['df']} df, {p}); the trend test assumes records are independent, so its p-value may "
        "be too small."
    )


def _overdispersed(f: Facts) -> str:
    return (
        f"The baseline periods vary {f['ratio']:.2g} times as much as their sizes alone explain, so "
        "the control limits were widened by that factor (Laney's p' chart); with plain p-chart "
        "limits most periods of a large program would be flagged."
    )


def _periods_have(n: Any, where: str = "") -> str:
    """'1 period has' / '2 periods before the latest have'."""
    word = noun(n, "period")
    return f"{n} {word}{where} {'has' if word == 'period' else 'have'}"


TEMPLATES: dict[Code, Any] = {
    Refusal.UNKNOWN_FAMILY: lambda f: unknown_family(f["given"]),
    Skip.TOO_FEW_PERIODS: lambda f: (
        f"Only {_periods_have(f['n'])} rows; a trend across periods needs at least {f['minimum']}."
    ),
    Skip.NO_BASELINE: lambda f: (
        f"Only {_periods_have(f['n'], ' before the latest')} rows; control limits need at least {f['minimum']}."
    ),
    Note.SHORT_SERIES: _short_series,
    Note.AUTOCORRELATED: _autocorrelated,
    Note.TREND_NOT_LINEAR: _not_linear,
    Note.OVERDISPERSED: _overdispersed,
    Note.PERIOD_UNREADABLE: _unreadable,
    Note.PERIOD_GAPS: lambda f: capitalized(
        f"{f['column']} has no rows in {', '.join(f['periods'])}; "
        f"{'that period is' if len(f['periods']) == 1 else 'those periods are'} shown with n = 0."
    ),
    Note.PERIOD_PARTIAL: _partial,
    Note.PERIOD_FEW_ROWS: _few_rows,
    Note.PERIOD_USER_LATEST: "The latest period is {period}, as set on the roles sheet.",
    Reason.TREND_SHARES: (
        "The share of '{level}' in {outcome} is tested for a straight-line trend across periods with "
        "the Cochran-Armitage test."
    ),
    Reason.TREND_SERIES: (
        "The period {centre}s of {outcome} are tested for a steady rise or fall with the Mann-Kendall "
        "test; the Theil-Sen slope gives the change per period."
    ),
}
sentences.register(TEMPLATES)


def summary_title(folder: str, refreshed: int, failed: int) -> str:
    """The folder summary's title line."""
    failures = f"; {failed} could not be refreshed" if failed else ""
    workbooks = "1 workbook" if refreshed == 1 else f"{refreshed} workbooks"
    return f"Folder summary of {folder}: {workbooks} refreshed{failures}."


STATUS_REFRESHED = "refreshed"
STATUS_FAILED = "failed"


def bad_jobs() -> str:
    """One line: --jobs below 1."""
    return "--jobs must be 1 or more."


# --------------------------------------------------------------------------- folder mode on the command line

FOLDER_HELP: dict[str, str] = {
    "pattern": "Folder mode: which workbooks in the folder to refresh.",
    "jobs": "Folder mode: workbooks refreshed at once (default: one per CPU).",
    "summary": "Folder mode: write statmargin-summary.xlsx in the folder (default) or not.",
}
FOLDER_PROGRESS = "workbooks refreshed"


def folder_report(done: Any) -> list[str]:
    """Lines on standard output after a folder run: each refreshed workbook, then the summary file."""
    lines = [f"{o.name}: {len(o.results)} analyses refreshed." for o in done.outcomes if o.ok]
    if done.summary_path:
        lines.append(f"Summary: {done.summary_path}")
    return lines


def folder_failures(done: Any) -> list[str]:
    """One line per workbook that failed, then the count; empty when all were refreshed."""
    if not done.failed:
        return []
    lines = [f"{o.name}: {o.message}" for o in done.failed]
    lines.append(folder_failed(len(done.failed), len(done.outcomes)))
    return lines


# --------------------------------------------------------------------------- since last run, at the top of the sheet


def since_last_run_lines(
    changes: Sequence[tuple[SinceLastRun, Sequence[str]]], previous_run: str | None
) -> list[str]:
    """The lines at the top of the results sheet: what changed since the last run, most important first.

    Parameters
    ----------
    changes : sequence of (SinceLastRun, questions)
        From ``jobs.history.headline``, with each analysis key replaced by the
        question as the results sheet words it.
    previous_run : str or None
        When the last run was (None on a first run).
    """
    if previous_run is None:
        return ["First run: the next refresh will say what changed since this one."]
    if not changes:
        return [f"Nothing changed since the last run on {previous_run}."]
    lines = [f"What changed since the last run on {previous_run}:"]
    for flag, questions in changes:
        lines.append(f"{capitalized(SINCE_LAST_RUN_WORDS[flag])}: {'; '.join(questions)}.")
    return lines


# --------------------------------------------------------------------------- the period role in a plan


def several_periods(names: Sequence[str]) -> str:
    """One line: more than one column is marked as the period."""
    listed = ", ".join(repr(n) for n in names)
    return f"Only one period column is allowed, but {listed} are marked 'period'; keep one."


def compare_by_holds_periods(column: str, examples: Sequence[str]) -> str:
    """One line: a compare-by column holds periods, which the period role reads in order."""
    shown = ", ".join(examples)
    return (
        f"{column} holds periods ({shown}), which a compare-by column would treat as unordered groups; "
        "give it the role 'period' for a series with its trend, or set its type to categorical to "
        "compare the periods as groups."
    )


def period_with_aggregated(period: str, column: str, role: str) -> str:
    """One line: a period series is not yet made from rows that stand for many records."""
    return (
        f"The period column {period!r} cannot yet be combined with the {role} column {column!r} "
        "(series are made from one row per record); set one of the two roles to 'ignore' and run again."
    )
