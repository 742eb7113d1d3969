"""The two workbook jobs, ``plan_workbook`` and ``run_workbook``: read, decide, write.

Both take a workbook source and sink (the file back end by default), so the
command line and the Excel bridge share every step between reading and writing.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field, replace
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from .. import stages
from .._version import __version__
from ..errors import RoleError
from ..io.protocol import WorkbookSink, WorkbookSource, WriteReport
from ..options import parse_col_values, parse_treat
from ..plan.clean import level_facts
from ..plan.model import ColumnChoice, Plan
from ..plan.roles_sheet import KIND as ROLES_KIND
from ..plan.roles_sheet import ColumnFacts, RolesSheet, build_roles_sheet, parse_roles_sheet
from ..read.table import Table
from ..sheets.context import shown_count
from ..sheets.share import DEFAULT_MIN_COUNT, suppress
from ..vocabulary import MeasureType, Role
from ..words import console, refusals, roles_words
from ..words import progress as words
from ..words.cautions import count_comparisons
from ..words.results_text import hidden_rows_line, hidden_rows_note

# Called as each step starts; during the analyses also with (done, total) so a
# front end can draw a progress bar.
Progress = Callable[..., None]


@dataclass
class PlanSummary:
    """What ``plan_workbook`` did, for the command line's summary and ``--json``."""

    path: str
    data_sheet: str
    header_row: int
    columns: list[dict[str, Any]]
    new_columns: list[str]
    missing_columns: list[str]
    write: WriteReport
    suggestions: list[str] = field(default_factory=list)  # roles the data suggest, with the evidence

    def to_record(self) -> dict[str, Any]:
        return {
            "path": self.path,
            "data_sheet": self.data_sheet,
            "header_row": self.header_row,
            "columns": self.columns,
            "new_columns": self.new_columns,
            "missing_columns": self.missing_columns,
            "suggestions": self.suggestions,
            "sheets": self.write.sheets,
            "renamed": self.write.renamed,
        }


@dataclass
class RunSummary:
    """What ``run_workbook`` did: the results plus where they were written."""

    path: str
    data_sheet: str
    rows_read: int
    results: list[Any]
    notes: Any  # a count, or a hidden one in sharing mode
    write: WriteReport
    messages: list[str] = field(default_factory=list)
    changes: list[str] = field(default_factory=list)  # what changed since the last run, as the results sheet says it

    def to_record(self) -> dict[str, Any]:
        return {
            "tool": "statmargin",
            "version": __version__,
            "path": self.path,
            "data_sheet": self.data_sheet,
            "rows_read": self.rows_read,
            "data_notes": self.notes if isinstance(self.notes, int) else None,  # null: hidden in sharing mode
            "sheets": self.write.sheets,
            "renamed": self.write.renamed,
            "analyses": [r.to_record() for r in self.results],
        }


def _backends(
    path: str | Path, source: WorkbookSource | None, sink: WorkbookSink | None
) -> tuple[WorkbookSource, WorkbookSink, WorkbookSource | None]:
    """The source and sink to use, opening the back end for ``path`` (``io.backends``) for what is not given.

    The third item is the source opened here, which the job closes once it has read
    everything (None when the caller passed its own source).
    """
    if source is not None and sink is not None:
        return source, sink, None
    from ..io import backends

    opened_source, opened_sink = backends.open_backend(path)
    if source is not None:
        opened_source.close()
        return source, opened_sink, None
    return opened_source, sink or opened_sink, opened_source


def read_roles(source: WorkbookSource) -> RolesSheet | None:
    """The roles sheet's choices, or None when the workbook has no roles sheet yet."""
    for name, kind in source.tool_sheets().items():
        if kind == ROLES_KIND:
            return parse_roles_sheet(source.iter_rows(name), sheet_name=name)
    return None


def plan_workbook(
    path: str | Path,
    *,
    sheet: str | None = None,
    header_row: int | None = None,
    outcome: Iterable[str] = (),
    by: Iterable[str] = (),
    pairing_key: str | None = None,
    treat: Mapping[str, str] | Iterable[str] | None = None,
    against: Mapping[str, str] | Iterable[str] | None = None,
    paired_with: Mapping[str, str] | Iterable[str] | None = None,
    shape: Mapping[str, str] | None = None,
    event: Mapping[str, str] | Iterable[str] | None = None,
    events: Iterable[str] = (),
    out_of: Mapping[str, str] | Iterable[str] | None = None,
    per: Mapping[str, str] | Iterable[str] | None = None,
    count: str | None = None,
    period: str | None = None,
    per_unit: str | None = None,
    out: str | Path | None = None,
    source: WorkbookSource | None = None,
    sink: WorkbookSink | None = None,
    progress: Progress | None = None,
) -> PlanSummary:
    """Add or refresh the roles sheet, keeping every choice the user already made.

    Parameters
    ----------
    path
        The workbook.
    sheet, header_row
        The data sheet and its header row (default: the roles sheet's settings, else
        the first sheet with data and its first non-empty row).
    outcome, by, pairing_key, treat, against, paired_with, shape
        Presets for unattended refreshes; they override what the sheet says. ``treat``
        takes ``COL=TYPE`` items (an ordinal type may list its labels,
        ``pain=ordinal:none,mild,severe``); ``against`` ``COL=VALUE`` and
        ``paired_with`` ``COL=COL2`` items, or mappings; ``event`` ``COL=LEVEL`` items
        name the event level of two-level outcomes; ``events`` mark columns of event
        counts, each ``out_of`` (``COL=TOTALS``) or ``per`` (``COL=PERSON_TIME``) another
        column; ``count`` marks a frequency weight and ``period`` the date or period column;
        ``per_unit`` sets the unit rates are given in ("per 1,000 person-years").
    out
        Write to this new file instead of ``path`` (which is then left untouched).
    progress
        Called with a short message as each step starts, and with counts while rows are read.
    """
    from ..plan.types import infer_type, usable_values
    from ..read.reader import first_data_sheet, read_table, sample_values

    if per_unit is not None:
        from ..plan.rates_units import parse_per_unit

        parse_per_unit(per_unit)  # refuses a unit it cannot read, before the file is opened
    source, sink, opened = _backends(path, source, sink)
    sink.check(str(out) if out else None)  # a file that cannot be written is refused before the reading
    previous = read_roles(source)
    plan = previous.plan if previous else Plan()
    say = progress or (lambda message, done=None, total=None: None)
    say(console.reading_sheet(sheet or plan.sheet) if sheet or plan.sheet else words.FINDING_DATA)
    if per_unit is not None:
        plan = replace(plan, settings=replace(plan.settings, per_unit=str(per_unit)))
    data_sheet = sheet or plan.sheet or first_data_sheet(source)
    if header_row is None and plan.sheet == data_sheet:
        header_row = plan.header_row
    say(console.reading_sheet(data_sheet))
    table = read_table(
        path, sheet=data_sheet, header_row=header_row, source=source,
        progress=lambda done, total: say(words.READING_ROWS, done=done, total=total),
    )
    say(words.INFERRING_TYPES)
    if opened is not None:
        opened.close()  # everything is read; the write does not need the source

    choices = {c.name: c for c in plan.columns}
    _apply_presets(
        choices, table, outcome=outcome, by=by, pairing_key=pairing_key, treat=parse_treat(treat),
        against=parse_col_values(against, "--against"), paired_with=parse_col_values(paired_with, "--paired-with"),
        shape=shape, event=parse_col_values(event, "--event"), events=list(events),
        out_of=parse_col_values(out_of, "--out-of"), per=parse_col_values(per, "--per"),
        count=count, period=period,
    )
    statuses, suggestions = _suggestions(table, choices)
    facts = []
    for name, column in table.columns.items():
        info = infer_type(column)
        facts.append(
            ColumnFacts(
                suggestion=statuses.get(name, ""),
                name=name,
                letter=column.letter,
                inferred=info.type.value,
                sample=", ".join(str(v) for v in sample_values(column)),
                n_blank=column.n_blank,
                # Cells that cannot be read as the inferred type: error values, suppressed
                # counts and formulas without a value, plus e.g. text in a numeric column.
                n_unreadable=column.n_unreadable + sum(usable_values(column, info).excluded.values()),
                **level_facts(column, info),
            )
        )
    new = [n for n in table.columns if previous is not None and n not in choices]
    missing = [c for n, c in choices.items() if n not in table.columns]
    ordered = [choices.get(n, ColumnChoice(n)) for n in table.columns]
    new_plan = replace(plan, sheet=data_sheet, header_row=table.header_row, columns=ordered + missing)
    model = build_roles_sheet(
        facts, new_plan, data_sheet=data_sheet, header_row=table.header_row, missing=missing, new=new
    )
    say(words.WRITING_ROLES)
    with stages.stage("write"):
        report = sink.write_sheets([model], out=str(out) if out else None)
    return PlanSummary(
        path=report.path,
        data_sheet=data_sheet,
        header_row=table.header_row,
        columns=[
            {"column": f.name, "letter": f.letter, "inferred_type": f.inferred, "role": c.role.value,
             "type": c.treat_as.value if c.treat_as is not None else f.inferred}
            for f, c in zip(facts, ordered, strict=True)
        ],
        new_columns=new,
        missing_columns=[c.name for c in missing],
        write=report,
        suggestions=suggestions,
    )


def _suggestions(table: Table, choices: Mapping[str, ColumnChoice]) -> tuple[dict[str, str], list[str]]:
    """Roles the data suggest for columns without one yet: a status per column and a line each.

    Summary layouts (events out of a total, events per person-time, a count of
    records) are recognised by ``plan.aggregate.suggest_roles``; they are shown,
    never applied.
    """
    from ..plan.aggregate import suggest_roles
    from ..vocabulary.codes import Reason
    from ..words.sentences import say

    parts: dict[str, list[str]] = {}
    lines: list[str] = []
    for suggestion in suggest_roles(table):
        name = str(suggestion.events or suggestion.count)
        chosen = choices.get(name)
        if chosen is not None and chosen.role is not Role.IGNORE:
            continue  # the user has decided this column's role
        total = str(suggestion.total)
        if suggestion.count is not None:
            part, advice = roles_words.SUGGESTED_COUNT, roles_words.advice_count(name)
        elif suggestion.reason.code is Reason.SUGGEST_EVENTS_OUT_OF:
            part, advice = roles_words.suggested_out_of(total), roles_words.advice_out_of(name, total)
        else:
            part, advice = roles_words.suggested_per(total), roles_words.advice_per(name, total)
        parts.setdefault(name, []).append(part)
        lines.append(roles_words.suggestion_line(say(suggestion.reason), advice))
    return {name: roles_words.suggested_status(found) for name, found in parts.items()}, lines


def _apply_presets(
    choices: dict[str, ColumnChoice],
    table: Table,
    *,
    outcome: Iterable[str],
    by: Iterable[str],
    pairing_key: str | None,
    treat: Mapping[str, tuple[MeasureType, list[str] | None]],
    against: Mapping[str, str],
    paired_with: Mapping[str, str],
    shape: Mapping[str, str] | None,
    event: Mapping[str, str],
    events: Iterable[str] = (),
    out_of: Mapping[str, str] | None = None,
    per: Mapping[str, str] | None = None,
    count: str | None = None,
    period: str | None = None,
) -> None:
    """Set roles given as options; every named column must exist (closest names suggested)."""
    from ..options.columns import parse_shape

    def choice(name: str) -> ColumnChoice:
        table.column(name)  # raises ColumnNotFoundError with suggestions
        return choices.setdefault(name, ColumnChoice(name))

    for name in outcome:
        choice(name).role = Role.OUTCOME
    for name in by:
        choice(name).role = Role.COMPARE_BY
    if pairing_key:
        choice(pairing_key).role = Role.PAIRING_KEY
    for name, (kind, order) in treat.items():
        column = choice(name)
        column.treat_as = kind
        if order:
            column.order = list(order)
    for name, word in (shape or {}).items():
        choice(name).shape = parse_shape(word)
    for name, value in against.items():
        choice(name).against = str(value)
    for name, other in paired_with.items():
        table.column(other)
        choice(name).paired_with = other
    for name, level in event.items():
        choice(name).event = level
    for name in events:
        choice(name).role = Role.EVENTS
    for name, total in (out_of or {}).items():
        table.column(total)
        choice(name).out_of = total
    for name, exposure in (per or {}).items():
        table.column(exposure)
        choice(name).per = exposure
    if count:
        choice(count).role = Role.COUNT
    if period:
        choice(period).role = Role.PERIOD


def run_workbook(
    path: str | Path,
    *,
    out: str | Path | None = None,
    share: bool = False,
    min_count: int | None = None,
    progress: Progress | None = None,
    source: WorkbookSource | None = None,
    sink: WorkbookSink | None = None,
) -> RunSummary:
    """Run every analysis the roles sheet asks for and write the results sheets.

    Parameters
    ----------
    path
        The workbook, with a roles sheet made by ``plan_workbook``.
    out
        Write to this new file instead of ``path`` (which is then left untouched).
    share, min_count
        Sharing mode: hide counts below ``min_count`` in the tool's sheets.
    progress
        Called with a short message as each step starts.
    """
    from ..read.reader import read_table

    say = progress or (lambda message, done=None, total=None: None)
    started = time.perf_counter()
    now = datetime.now(timezone.utc)
    with stages.stage("open"):
        source, sink, opened = _backends(path, source, sink)
        sink.check(str(out) if out else None)  # a locked or unwritable target is refused before the work
        roles = read_roles(source)
    if roles is None:
        raise RoleError(refusals.no_roles_sheet(source.display_name))
    plan = roles.plan
    _check_roles(plan, roles)
    used = used_columns(plan)
    say(console.reading_sheet(plan.sheet))
    table = read_table(
        path, sheet=plan.sheet, header_row=plan.header_row, columns=used, source=source,
        progress=lambda done, total: say(words.READING_ROWS, done=done, total=total),
        rows_to_use=plan.settings.rows,
    )
    # Loaded after the read, not before: SciPy and pandas take ~80 MB that would
    # otherwise sit under the read's own peak (the sheet's cells held by calamine).
    from ..designs.engine import run_answers
    from ..sheets import report
    from ..words.explain import apply as explain_results

    floor = (min_count or DEFAULT_MIN_COUNT) if share else None
    say(console.running_on_rows(len(table.rows), hidden_rows_note(shown_count(table.n_hidden, floor),
                                                                   plan.settings.rows)))
    analyses_start = time.perf_counter()
    last_analysis = [analyses_start]

    def analysis_done(done: int, total: int) -> None:
        last_analysis[0] = time.perf_counter()
        say(console.RUNNING, done=done, total=total)

    answers = run_answers(table, plan, progress=analysis_done,
                          followup_progress=lambda done, total: say(words.FOLLOW_UPS, done=done, total=total))
    # run_answers adjusts p-values and runs the follow-ups after its last progress call.
    stages.add("analyses", last_analysis[0] - analyses_start)
    stages.add("follow-ups", time.perf_counter() - last_analysis[0])
    results = [answer.result for answer in answers]
    family = count_comparisons(results)
    if share:
        # Hidden on values before any sentence is made, so the sheets, the JSON and the
        # terminal summary all carry the same suppressed numbers.
        results = suppress(results, min_count or DEFAULT_MIN_COUNT)
    say(words.BUILDING_SHEETS)
    report_start = time.perf_counter()
    context = report.ReportContext.from_run(
        workbook=source.display_name,
        table=table,
        results=results,
        samples=[answer.prepared.samples for answer in answers],
        settings=plan.settings,
        version=__version__,
        started=now,
        seconds=time.perf_counter() - started,
        share_min_count=(min_count or DEFAULT_MIN_COUNT) if share else None,
    )
    explain_results(results, plan.settings, context, n_comparisons=family)
    previous_log = _previous_log_rows(source)
    earlier = _previous_history(source)
    had_periods = "periods" in source.tool_sheets().values()
    if opened is not None:
        opened.close()  # everything is read; the write does not need the source
    history_model = _since_last_run(results, earlier, now, context)
    models = report.build_sheets(results, table, context, previous_log=previous_log, keep_periods=had_periods)
    if share:
        models = suppress(models, context.share_min_count)
    models.append(history_model)
    stages.add("report", time.perf_counter() - report_start)
    data_sheet, rows_read, n_notes, n_hidden = table.sheet, table.n_rows_read, len(table.notes), table.n_hidden
    changes = list(context.changes or [])
    # The columns and every analysis's values are done with once the sheets are built;
    # letting them go before the write keeps the run's peak memory at the analyses' level.
    del table, answers, context
    say(console.WRITING)
    with stages.stage("write"):
        write = sink.write_sheets(models, out=str(out) if out else None)
    return RunSummary(
        path=write.path,
        data_sheet=data_sheet,
        rows_read=rows_read,
        results=results,
        notes=shown_count(n_notes, floor),
        write=write,
        messages=[line for line in (hidden_rows_line(shown_count(n_hidden, floor), plan.settings.rows),)
                  if line]
        + list(write.renamed),
        changes=changes,
    )


def _check_roles(plan: Plan, roles: RolesSheet) -> None:
    outcomes = [c for c in plan.columns if c.role in (Role.OUTCOME, Role.EVENTS)]
    if not outcomes:
        raise RoleError(refusals.no_outcome_on_sheet())
    gone = [c.name for c in plan.columns if c.name in roles.missing and c.role is not Role.IGNORE]
    if gone:
        raise RoleError(refusals.role_for_missing_column(gone[0]))


def used_columns(plan: Plan) -> list[str]:
    """The columns a plan reads: every column with a role, and the partners and totals they name."""
    names: list[str] = []
    for c in plan.columns:
        if c.role is not Role.IGNORE:
            names.append(c.name)
        if c.role is Role.OUTCOME and c.paired_with and c.paired_with not in names:
            names.append(c.paired_with)
        if c.role is Role.EVENTS:
            names.extend(t for t in (c.out_of, c.per) if t and t not in names)
    return list(dict.fromkeys(names))


def _previous_history(source: WorkbookSource) -> list[Any]:
    """The key results of earlier runs, from the hidden history sheet (none on a first run)."""
    from . import history

    for name, kind in source.tool_sheets().items():
        if kind == history.KIND:
            return history.parse_history_rows(source.iter_rows(name))
    return []


def _since_last_run(results: list[Any], earlier: list[Any], now: datetime, context: Any) -> Any:
    """Flag each result against the last run, put the changes at the top of the sheet; the new history sheet.

    In sharing mode the results arrive suppressed, so the history keeps the
    numbers as the sheets show them and the flags are worked out from those;
    earlier runs' numbers are not written back (``history.track``).
    """
    from . import history

    stamp = now.strftime("%Y-%m-%dT%H:%M:%S.%fZ")  # to the microsecond: two runs in one second stay apart
    changes, rows = history.track(results, earlier, stamp, context.settings.alpha, share=context.share_mode)
    context.changes = history.change_lines(results, changes)
    return history.history_sheet(rows)


def _previous_log_rows(source: WorkbookSource) -> list[list[Any]]:
    """Earlier run-log rows, so the log grows by one row per run although the sheet is rewritten."""
    for name, kind in source.tool_sheets().items():
        if kind == "log":
            from ..sheets.report import parse_log_rows

            return parse_log_rows(source.iter_rows(name))
    return []
