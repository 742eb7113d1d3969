"""The ``statmargin`` command line: a thin shell over the public jobs.

Each command calls exactly one public function with the same keyword names as
its options (``test`` -> ``jobs.question.test_workbook``, ``plan`` ->
``plan_workbook``, ``run`` -> ``run_workbook``, ``demo`` -> ``run_demo``) and
prints what came back; every word it prints is made in ``words.console``.
:func:`handle_errors` is the one place that turns a ``StatmarginError`` into a
one-line message and its exit code (``errors.exit_code_for``), and any other
exception into a one-line bug report with ``errors.EXIT_BUG``; ``--debug``
shows the full traceback instead.
"""

from __future__ import annotations

import contextlib
import functools
import json
import os
import signal
import sys
import threading
import warnings
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import click

from . import errors
from ._version import __version__
from .words import console
from .words.period_words import FOLDER_HELP

# ---------------------------------------------------------------- shared plumbing


def _set_debug(ctx: click.Context, _param: click.Parameter, value: bool) -> bool:
    if value:
        ctx.meta["statmargin_debug"] = True
    return value


def _option(flag: str, *names: str, **settings: Any) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """A click option whose help is ``console.HELP`` under the option's name (``--out-of``: ``out_of``)."""
    return click.option(flag, *names, help=console.HELP[flag.removeprefix("--").replace("-", "_")], **settings)


debug_option = _option("--debug", is_flag=True, expose_value=False, is_eager=True, callback=_set_debug)


def handle_errors(fn: Callable[..., Any]) -> Callable[..., Any]:
    """Run a command; map statmargin errors to one line and an exit code, anything else to a bug line."""

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        ctx = click.get_current_context()
        debug = bool(ctx.meta.get("statmargin_debug"))
        with _sigterm_as_interrupt():
            try:
                return fn(*args, **kwargs)
            except (click.exceptions.Exit, click.ClickException, click.Abort):
                raise
            except KeyboardInterrupt:
                if debug:
                    raise
                from .words.file_messages import interrupted

                _say_stopped(interrupted())
                ctx.exit(errors.EXIT_INTERRUPTED)
            except errors.StatmarginError as err:
                if debug:
                    raise
                click.echo(console.error_line(str(err)), err=True)
                ctx.exit(errors.exit_code_for(err))
            except Exception as err:  # a bug: one line unless --debug
                if debug:
                    raise
                click.echo(console.internal_error_line(type(err).__name__, str(err)), err=True)
                ctx.exit(errors.EXIT_BUG)

    return wrapper


def _old_spelling(new: str, param_name: str) -> Callable[[click.Context, click.Parameter, Any], Any]:
    """Callback of a renamed option's old spelling: say so on standard error, pass the value on."""

    def callback(ctx: click.Context, param: click.Parameter, value: Any) -> Any:
        if value:
            click.echo(console.old_option(param.opts[0], new), err=True)
            ctx.meta[f"old_{param_name}"] = value
        return value

    return callback


@contextmanager
def _sigterm_as_interrupt() -> Iterator[None]:
    """While a command runs, treat a stop signal (SIGTERM) like Ctrl+C: one line and the same clean-up."""

    def stop(_signum: int, _frame: Any) -> None:
        raise KeyboardInterrupt

    if not hasattr(signal, "SIGTERM") or threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.signal(signal.SIGTERM, stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


sheet_option = _option("--sheet", metavar="NAME", default=None)
treat_option = _option("--treat", metavar="COL=TYPE", multiple=True)
shape_option = _option("--shape", type=click.Choice(["auto", "normal", "rank"]), default="auto", show_default=True)
alternative_option = _option(
    "--alternative", type=click.Choice(["two-sided", "greater", "less"]), default="two-sided", show_default=True
)
confidence_option = _option("--confidence", type=float, default=0.95, show_default=True)
adjust_option = _option(
    "--adjust", type=click.Choice(["holm", "benjamini-hochberg", "none"]), default="holm", show_default=True
)
json_option = _option("--json", "json_path", metavar="PATH|-", default=None)
outcome_option = _option("--outcome", metavar="COL", multiple=True)
by_option = _option("--by", metavar="COL", multiple=True)
against_option = _option("--against", metavar="[COL=]VALUE", multiple=True)
event_option = _option("--event", metavar="[COL=]LEVEL", multiple=True)
events_option = _option("--events", metavar="COL", multiple=True)
out_of_option = _option("--out-of", metavar="[COL=]TOTALS", multiple=True)
per_option = _option("--per", metavar="[COL=]TIME", multiple=True)
per_unit_option = _option("--per-unit", metavar="UNIT", default=None)
count_option = _option("--count", metavar="COL", default=None)
period_option = _option("--period", metavar="COL", default=None)
period_length_option = _option(
    "--period-length", type=click.Choice(["week", "month", "quarter", "year"]), default=None
)
adjust_across_option = _option(
    "--adjust-across", type=click.Choice(["this run", "each outcome", "none"]), default=None
)
pairing_key_option = _option("--pairing-key", metavar="COL", default=None)
paired_with_option = _option("--paired-with", metavar="[COL=]COL2", multiple=True)
# Old spellings, kept for one release: test --paired-by, plan --pair.
paired_by_alias = click.option(
    "--paired-by", metavar="COL", default=None, hidden=True, expose_value=False,
    callback=_old_spelling("--pairing-key", "pairing_key"),
)
pair_alias = click.option(
    "--pair", metavar="COL=COL2", multiple=True, hidden=True, expose_value=False,
    callback=_old_spelling("--paired-with", "paired_with"),
)
out_option = _option("--out", metavar="PATH", type=click.Path(path_type=Path, readable=False), default=None)
quiet_option = _option("--quiet", is_flag=True)
share_option = _option("--share", is_flag=True)
min_count_option = _option("--min-count", type=click.IntRange(min=2), default=None, metavar="N")
header_row_option = _option("--header-row", type=int, default=None, metavar="N")


def event_to_period_options(command: Callable[..., Any]) -> Callable[..., Any]:
    """The column options ``test`` and ``plan`` share, in their help order: event level, aggregated rows, period."""
    for option in reversed(
        (event_option, events_option, out_of_option, per_option, per_unit_option, count_option, period_option)
    ):
        command = option(command)
    return command


def check_json_target(path: str | None, *protect: Path | None) -> None:
    """Refuse a --json path that is one of the workbooks, or whose folder is missing, before any work.

    Checked up front so a refused --json never leaves a half-done job behind
    (the workbook already rewritten, then an error).
    """
    if not path or path == "-":
        return
    target = Path(path)
    for other in protect:
        if other is not None and target.resolve() == other.resolve():
            raise errors.OptionError(console.json_is_workbook())
    if not target.resolve().parent.is_dir():
        raise errors.OptionError(console.json_folder_missing(path))


def write_json(document: dict[str, Any], path: str, *, protect: Path | None = None) -> None:
    """Write JSON to a file or to standard output ('-'); never over the workbook itself."""
    text = json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False)
    if path == "-":
        click.echo(text)
        return
    target = Path(path)
    if protect is not None and target.resolve() == protect.resolve():
        raise errors.OptionError(console.json_is_workbook())
    try:
        target.write_text(text + "\n", encoding="utf-8")
    except OSError as err:
        raise errors.OptionError(console.json_not_written(path, str(err.strerror or err))) from None


def _show(summary: Any, summary_text: Callable[[], str], json_path: str | None, workbook: Path) -> None:
    """The summary on standard output unless the JSON goes there; the JSON wherever --json says."""
    if json_path != "-":
        click.echo(summary_text())
    if json_path:
        write_json(summary.to_record(), json_path, protect=workbook)


def _progress(quiet: bool) -> contextlib.AbstractContextManager[Callable[..., None]]:
    """Progress of long steps on standard error (stdout stays clean): a bar on a terminal,
    plain lines every few seconds elsewhere; nothing with --quiet."""
    if quiet:
        return contextlib.nullcontext(lambda message, done=None, total=None: None)
    from .progress import ProgressDisplay

    stream = click.get_text_stream("stderr")
    return ProgressDisplay(stream, terminal=stream.isatty())


# ---------------------------------------------------------------- the group


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="statmargin")
@debug_option
def main() -> None:
    """Sound statistical tests in your monitoring workbooks, explained in plain words.

    Example: statmargin test clinics.xlsx --outcome wait_minutes --by site
    """


# ---------------------------------------------------------------- test


@main.command("test")
@click.argument("workbook", type=click.Path(path_type=Path, readable=False))
@sheet_option
@outcome_option
@by_option
@against_option
@pairing_key_option
@paired_by_alias
@paired_with_option
@event_to_period_options
@period_length_option
@treat_option
@shape_option
@alternative_option
@confidence_option
@adjust_option
@adjust_across_option
@share_option
@min_count_option
@json_option
@quiet_option
@debug_option
@handle_errors
def test_command(workbook: Path, sheet: str | None, outcome: tuple[str, ...], by: tuple[str, ...],
                 against: tuple[str, ...], pairing_key: str | None, paired_with: tuple[str, ...],
                 event: tuple[str, ...], events: tuple[str, ...], out_of: tuple[str, ...],
                 per: tuple[str, ...], per_unit: str | None, count: str | None, period: str | None,
                 period_length: str | None, treat: tuple[str, ...], shape: str, alternative: str,
                 confidence: float, adjust: str, adjust_across: str | None, share: bool,
                 min_count: int | None, json_path: str | None, quiet: bool) -> None:
    """Run the fitting test on a workbook and print the results.

    The workbook is only read, never changed.

    Example: statmargin test clinics.xlsx --outcome wait_minutes --by site --json results.json
    """
    from .jobs.question import test_workbook

    meta = click.get_current_context().meta
    if min_count is not None and not share:
        raise errors.OptionError(console.min_count_without_share())
    check_json_target(json_path, workbook)
    with _progress(quiet or json_path == "-") as progress:
        summary = test_workbook(
            workbook, sheet=sheet, outcome=outcome, by=by, against=against,
            pairing_key=pairing_key or meta.get("old_pairing_key"), paired_with=paired_with, event=event,
            events=events, out_of=out_of, per=per, per_unit=per_unit, count=count, period=period,
            period_length=period_length, adjust_across=adjust_across,
            treat=treat, shape=shape, alternative=alternative, confidence=confidence, adjust=adjust,
            share=share, min_count=min_count, progress=progress,
        )
    _show(summary, lambda: console.test_summary(summary.results, sheet=summary.sheet), json_path, workbook)


# ---------------------------------------------------------------- plan, run, demo


@main.command("plan")
@click.argument("workbook", type=click.Path(path_type=Path, readable=False))
@sheet_option
@header_row_option
@outcome_option
@by_option
@pairing_key_option
@against_option
@paired_with_option
@pair_alias
@event_to_period_options
@treat_option
@out_option
@json_option
@quiet_option
@debug_option
@handle_errors
def plan_command(workbook: Path, sheet: str | None, header_row: int | None, outcome: tuple[str, ...],
                 by: tuple[str, ...], pairing_key: str | None, against: tuple[str, ...],
                 paired_with: tuple[str, ...], event: tuple[str, ...], events: tuple[str, ...],
                 out_of: tuple[str, ...], per: tuple[str, ...], per_unit: str | None, count: str | None,
                 period: str | None, treat: tuple[str, ...], out: Path | None, json_path: str | None,
                 quiet: bool) -> None:
    """Add or refresh the roles sheet, keeping every choice already made; options preset roles.

    Example: statmargin plan clinics.xlsx --outcome wait_minutes --by site
    """
    from .jobs.workbook import plan_workbook

    meta = click.get_current_context().meta
    check_json_target(json_path, workbook, out)
    with _progress(quiet or json_path == "-") as progress:
        summary = plan_workbook(
            workbook, sheet=sheet, header_row=header_row, outcome=outcome, by=by, pairing_key=pairing_key,
            treat=treat, against=against, paired_with=paired_with + tuple(meta.get("old_paired_with", ())),
            event=event, events=events, out_of=out_of, per=per, count=count, period=period, per_unit=per_unit,
            out=out, progress=progress,
        )
    _show(summary, lambda: console.plan_summary(summary, workbook.name), json_path, workbook)


@main.command("run")
@click.argument("workbook", type=click.Path(path_type=Path, readable=False))
@out_option
@share_option
@min_count_option
@click.option("--pattern", default="*.xlsx", show_default=True, metavar="GLOB", help=FOLDER_HELP["pattern"])
@click.option("--jobs", type=click.IntRange(min=1), default=None, metavar="N", help=FOLDER_HELP["jobs"])
@click.option("--summary/--no-summary", "write_summary", default=True, help=FOLDER_HELP["summary"])
@json_option
@quiet_option
@debug_option
@handle_errors
def run_command(workbook: Path, out: Path | None, share: bool, min_count: int | None, pattern: str,
                jobs: int | None, write_summary: bool, json_path: str | None, quiet: bool) -> None:
    """Run every analysis the roles sheet asks for and write the results sheets.

    WORKBOOK may be a folder: every workbook in it is refreshed, in parallel,
    into one summary workbook.

    Example: statmargin run clinics.xlsx --out clinics-results.xlsx
    """
    from .jobs.workbook import run_workbook

    if min_count is not None and not share:
        raise errors.OptionError(console.min_count_without_share())
    if workbook.is_dir():
        _run_folder(workbook, out=out, share=share, min_count=min_count, pattern=pattern, jobs=jobs,
                    summary=write_summary, json_path=json_path, quiet=quiet)
        return
    check_json_target(json_path, workbook, out)
    with warnings.catch_warnings(), _progress(quiet or json_path == "-") as progress:
        warnings.simplefilter("ignore")  # caveats are in each result's notes
        summary = run_workbook(workbook, out=out, share=share, min_count=min_count, progress=progress)
    _show(summary, lambda: console.run_summary(summary), json_path, workbook)


def _run_folder(folder: Path, *, out: Path | None, share: bool, min_count: int | None, pattern: str,
                jobs: int | None, summary: bool, json_path: str | None, quiet: bool) -> None:
    """Folder mode of ``run``: one bar over the workbooks, failures listed at the end, exit status."""
    from .jobs.folder import run_folder
    from .words import period_words

    check_json_target(json_path)
    with _progress(quiet or json_path == "-") as bar:
        done_folder = run_folder(
            folder, pattern, jobs=jobs, summary=summary, summary_path=out, share=share, min_count=min_count,
            progress=lambda done, total, outcome: bar(period_words.FOLDER_PROGRESS, done=done, total=total),
        )
    if json_path != "-":
        for line in period_words.folder_report(done_folder):
            click.echo(line)
        for line in period_words.folder_failures(done_folder):
            click.echo(console.error_line(line), err=True)
    if json_path:
        write_json(done_folder.to_record(), json_path)
    if done_folder.exit_code:
        click.get_current_context().exit(done_folder.exit_code)


@main.command("demo")
@click.argument("folder", type=click.Path(file_okay=False, path_type=Path), default="statmargin-demo")
@quiet_option
@debug_option
@handle_errors
def demo_command(folder: Path, quiet: bool) -> None:
    """Copy the demo workbooks (invented data, roles marked) into FOLDER and run them.

    Example: statmargin demo statmargin-demo
    """
    from .jobs.demo import run_demo

    with warnings.catch_warnings(), _progress(quiet) as progress:
        warnings.simplefilter("ignore")
        summaries = run_demo(folder, progress=progress)
    for summary in summaries:
        click.echo(console.run_summary(summary))
        click.echo("")
    click.echo(console.demo_done(str(folder)))


def run() -> None:
    """The installed ``statmargin`` command: ``main``, with a Ctrl+C after the work is done ignored.

    Once a command has finished (its file written or left alone), a late Ctrl+C
    would only make Python end by the signal; the exit code should be the command's.
    """
    try:
        main(prog_name="statmargin")
    except KeyboardInterrupt:
        # A Ctrl+C that reached here (while click parsed the options, or a second one under
        # load after the stop line): the command's exit code and one stop line.
        from .words.file_messages import interrupted

        _ignore_interrupts()
        _say_stopped(interrupted())
        _exit_now(errors.EXIT_INTERRUPTED)
    except SystemExit as done:
        if done.code == errors.EXIT_INTERRUPTED:
            _exit_now(errors.EXIT_INTERRUPTED)
        raise
    finally:
        _ignore_interrupts()


def _exit_now(code: int) -> None:
    """Leave at once with ``code`` after an interrupt, the streams flushed and Ctrl+C ignored.

    Python's own exit would end the process by the signal (exit -2, not 130) when the
    interrupt had crossed code run from source text (CPython keeps a flag for that even
    once the interrupt is caught), and its finalization sets Ctrl+C back to the default,
    so a second one could kill it; the command has already cleaned up and said so.
    """
    _ignore_interrupts()
    for stream in (sys.stdout, sys.stderr):
        with contextlib.suppress(Exception):
            stream.flush()
    os._exit(code)


_STOP_SAID: list[bool] = []  # set once the stop line is printed, so it is never printed twice


def _say_stopped(line: str) -> None:
    """Print the stop line once, with Ctrl+C ignored while it is printed (a second one must not cut it short)."""
    if _STOP_SAID:
        return
    with _interrupts_ignored():
        click.echo(console.error_line(line), err=True)
        _STOP_SAID.append(True)


def _ignore_interrupts() -> Any:
    """Ignore Ctrl+C from here on (main thread only, where handlers can be set); return the handler it replaced."""
    if hasattr(signal, "SIGINT") and threading.current_thread() is threading.main_thread():
        return signal.signal(signal.SIGINT, signal.SIG_IGN)
    return None


@contextmanager
def _interrupts_ignored() -> Iterator[None]:
    previous = _ignore_interrupts()
    try:
        yield
    finally:
        if previous is not None:
            signal.signal(signal.SIGINT, previous)


if __name__ == "__main__":  # pragma: no cover
    run()
