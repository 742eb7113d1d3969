"""What the command line prints: summaries of a test, a plan and a run, progress lines, help hints."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..results import Result
from .numbers import (
    ci_label,
    counted,
    decimals_for,
    fmt_ci,
    fmt_df,
    fmt_number,
    fmt_p,
    is_number,
    noun,
)
from .sentences import say

INTERNAL_ERROR = (
    "statmargin hit an internal error ({kind}: {detail}); rerun with --debug for the details and report it"
)


def error_line(message: str) -> str:
    """A refusal as the one line the command prints."""
    return "statmargin: " + " ".join(message.split())


def internal_error_line(kind: str, detail: str) -> str:
    return INTERNAL_ERROR.format(kind=kind, detail=" ".join(detail.split()))


def json_is_workbook() -> str:
    return "--json points at the workbook itself; give another file name."


def json_folder_missing(path: str) -> str:
    return f"Cannot write the JSON file {path}: its folder does not exist; choose another path."


def json_not_written(path: str, reason: str) -> str:
    return f"Cannot write the JSON file {path}: {reason}; choose another path."


def min_count_without_share() -> str:
    return "--min-count goes with --share; add --share or drop --min-count."


def old_option(old: str, new: str) -> str:
    return f"statmargin: {old} is now {new}; the old spelling still works in this release."


# ---------------------------------------------------------------- progress messages


def reading_sheet(sheet: str | None) -> str:
    return f"reading sheet {sheet!r}"


def running_on_rows(rows: int, hidden_note: str = "") -> str:
    """The step line before the analyses, with what was done about hidden rows (``results_text.hidden_rows_note``)."""
    return f"running analyses on {rows:,} rows{hidden_note}"


RUNNING = "running analyses"
WRITING = "writing results sheets"


# ---------------------------------------------------------------- test


def _number(value: Any) -> str:
    if value is None:
        return "-"
    if isinstance(value, (list, tuple)):
        return ", ".join(_number(v) for v in value)
    return fmt_number(value) if is_number(value) else str(value)


def _interval(item: Any, confidence: float) -> str:
    text = fmt_ci(item.ci_low, item.ci_high, decimals_for(item.value, item.ci_low, item.ci_high))
    return f" ({ci_label(confidence)} {text})" if text else ""


def test_summary(results: Sequence[Result], *, sheet: str | None = None) -> str:
    """A short summary of a one-off question: test, statistic, df, p, estimate and effect, reasons."""
    lines: list[str] = []
    if sheet:
        lines.append(f"Sheet {sheet!r}: {counted(len(results), 'analysis', 'analyses')}")
    for r in results:
        against = r.extra.get("target_text", r.against) if isinstance(r.extra, dict) else r.against
        target = r.exposure or r.pairing or (f"against {against}" if r.against is not None else "")
        lines.append("")
        lines.append(f"{r.outcome} {'by ' if r.exposure else ''}{target}".rstrip() + f"  [{r.test or 'no test'}]")
        if r.skipped:
            lines.append(f"  skipped: {say(r.skipped)}")
        else:
            stat = f"{r.statistic_name or 'statistic'} = {_number(r.statistic)}" if r.statistic is not None else ""
            df = f", df = {fmt_df(r.df)}" if r.df is not None else ""
            adjusted = f", adjusted {fmt_p(r.p_adjusted)}" if r.p_adjusted is not None else ""
            parts = [part for part in (stat + df, fmt_p(r.p_value)) if part]
            lines.append("  " + ", ".join(parts) + adjusted)
            lines.append(f"  n = {r.n} ({r.n_excluded} {noun(r.n_excluded, 'row')} left out)")
            if r.estimate is not None:
                lines.append(f"  {r.estimate.name} = {_number(r.estimate.value)}{_interval(r.estimate, r.confidence)}")
            if r.effect is not None:
                lines.append(f"  {r.effect.name} = {_number(r.effect.value)}{_interval(r.effect, r.confidence)}")
        lines.extend(f"  why: {say(reason)}" for reason in r.reasons)
        lines.extend(f"  note: {say(note)}" for note in r.notes)
        if r.reading:
            lines.append(f"  reading: {r.reading}")
        lines.extend(f"  caution: {caution}" for caution in r.cautions)
        for fu in r.followups:
            if fu.flagged:
                lines.append(f"  follow-up {fu.test}: {' vs '.join(fu.levels)}, adjusted {fmt_p(fu.p_adjusted)}")
    return "\n".join(lines).lstrip("\n")


# ---------------------------------------------------------------- plan


def plan_summary(summary: Any, workbook_name: str) -> str:
    """What ``statmargin plan`` did: the roles sheet written and the roles marked so far."""
    roles_sheet = summary.write.sheets.get("roles", "roles")
    lines = [
        f"Wrote sheet {roles_sheet!r} to {summary.path}: {len(summary.columns)} columns of "
        f"sheet {summary.data_sheet!r} (headers in row {summary.header_row})."
    ]
    marked = [c for c in summary.columns if c["role"] != "ignore"]
    lines.extend(f"  {c['column']}: {c['role']} ({c['type']})" for c in marked)
    if not marked:
        lines.append(
            "  No roles chosen yet: open the file, pick roles in the shaded cells, save, then run "
            f"'statmargin run {workbook_name}'."
        )
    lines.extend(f"  suggestion: {line}" for line in summary.suggestions)
    lines.extend(f"  new column: {name}" for name in summary.new_columns)
    lines.extend(f"  no longer in the data: {name}" for name in summary.missing_columns)
    lines.extend(f"  {line}" for line in summary.write.renamed)
    return "\n".join(lines)


# ---------------------------------------------------------------- run and demo


def run_summary(summary: Any) -> str:
    """A few lines about a workbook run: where results went and how many analyses were done."""
    results = summary.results
    skipped = sum(1 for r in results if r.skipped)
    flagged = sum(1 for r in results if r.p_adjusted is not None and r.p_adjusted < 1 - r.confidence)
    lines = [
        f"{summary.path}: {counted(len(results), 'analysis', 'analyses')} of sheet {summary.data_sheet!r} "
        f"({counted(summary.rows_read, 'row')} read, {counted(summary.notes, 'data note')}).",
        f"  {flagged} with adjusted p below {1 - results[0].confidence:.2g}, {skipped} could not be run."
        if results
        else "  No analyses were run.",
        "  Sheets written: " + ", ".join(summary.write.sheets.values()),
    ]
    lines.extend(f"  {m}" for m in summary.messages)
    lines.extend(f"  {line}" for line in getattr(summary, "changes", ()))
    return "\n".join(lines)


def demo_done(folder: str) -> str:
    return f"Open the workbooks in {folder} to see the results sheets; the empty template is there too."


# ---------------------------------------------------------------- option help

HELP: dict[str, str] = {
    'debug': 'Show the full traceback when something goes wrong.',
    'sheet': 'Data sheet (default: the first sheet with data).',
    'treat': "Set a column's type: categorical, continuous or ordinal (ordinal may list labels: pain=ordinal:none,mild,severe). Repeatable.",
    'shape': 'Let the shape checks choose the test, or fix it to normal-based or rank-based.',
    'alternative': 'Direction of the question.',
    'confidence': 'Confidence level of intervals.',
    'adjust': 'P-value adjustment across the analyses of this run.',
    'json': "Also write the results as JSON to PATH ('-' for standard output, without the summary).",
    'outcome': 'Outcome column (repeatable).',
    'by': 'Compare-by column (repeatable).',
    'against': 'Compare an outcome with a fixed value: a number, or LABEL=SHARE / A=0.25,B=0.75 for categories; COL= names the outcome (e.g. Score=85). Repeatable.',
    'pairing_key': 'Key of long-form pairs (with --by naming the two conditions).',
    'paired_with': 'Second measurement column of wide-form pairs; COL= names the outcome it pairs. Repeatable.',
    'out': 'Write to this new file and leave WORKBOOK untouched.',
    'quiet': 'No progress lines.',
    'header_row': 'Row of the headers (default: first non-empty row).',
    'share': "Sharing mode: hide small counts, and what would reveal them, in everything written (sheets, JSON, this summary).",
    'event': (
        "The event level of a two-level outcome, e.g. Vaccinated=Yes: the share readings report "
        "(default: inferred from words such as Yes, Pass, Positive, 1). Repeatable."
    ),
    'events': "A column of event counts on aggregated rows (positives, failures, new cases); give --out-of or --per for it. Repeatable.",
    'out_of': "The column of totals an events column is out of (people screened, inspections), e.g. Positive=Screened. Repeatable.",
    'per': "The column of person-time or population an events column is per, e.g. Cases=Person-years. Repeatable.",
    'per_unit': "The unit rates are given in, e.g. 'per 1,000' or 'per 100,000 person-years' (default: per one unit).",
    'count': "A frequency weight: each row stands for that many records.",
    'period': "The date or period column (dates, 2026-03, Mar 2026, 2026 Q1): series, trend and unusual periods.",
    'period_length': "The length of a period for --period (default: month).",
    'adjust_across': "Which results share one p-value adjustment: this run (default), each outcome, or none.",
    'min_count': 'Sharing mode: hide counts below N (default 11, a common public-health practice).',
}
