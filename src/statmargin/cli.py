"""The ``statmargin`` command line.

Every command is wrapped by :func:`handle_errors`, the one place that turns a
``StatmarginError`` into a one-line message and its exit code
(``errors.exit_code_for``), and any other exception into a one-line bug report
with ``errors.EXIT_BUG``. ``--debug`` shows the full traceback instead. Options
shared between commands are defined once as decorators (``sheet_option``,
``treat_option``, ``json_option``, ...) so new commands reuse them.
"""

from __future__ import annotations

import functools
import json
import math
import sys
import warnings
from collections.abc import Callable
from pathlib import Path
from typing import Any

import click

from . import errors
from ._version import __version__
from .results import Result
from .words.sentences import say

# ---------------------------------------------------------------- shared plumbing


def _set_debug(ctx: click.Context, _param: click.Parameter, value: bool) -> bool:
    if value:
        ctx.meta["statmargin_debug"] = True
    return value


debug_option = click.option(
    "--debug", is_flag=True, expose_value=False, is_eager=True, callback=_set_debug,
    help="Show the full traceback when something goes wrong.",
)


def handle_errors(fn: Callable[..., Any]) -> Callable[..., Any]:
    """Run a command; map statmargin errors to one line and an exit code, anything else to a bug line."""

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        ctx = click.get_current_context()
        debug = bool(ctx.meta.get("statmargin_debug"))
        try:
            return fn(*args, **kwargs)
        except (click.exceptions.Exit, click.ClickException, click.Abort):
            raise
        except errors.StatmarginError as err:
            if debug:
                raise
            click.echo(f"statmargin: {_one_line(str(err))}", err=True)
            ctx.exit(errors.exit_code_for(err))
        except Exception as err:  # a bug: one line unless --debug
            if debug:
                raise
            click.echo(
                f"statmargin hit an internal error ({type(err).__name__}: {_one_line(str(err))});"
                " rerun with --debug for the details and report it",
                err=True,
            )
            ctx.exit(errors.EXIT_BUG)

    return wrapper


def _one_line(text: str) -> str:
    return " ".join(text.split())


sheet_option = click.option(
    "--sheet", metavar="NAME", default=None,
    help="Data sheet (default: the first sheet with data).",
)
treat_option = click.option(
    "--treat", metavar="COL=TYPE", multiple=True,
    help="Set a column's type: categorical, continuous or ordinal (ordinal may list labels: "
         "pain=ordinal:none,mild,severe). Repeatable.",
)
shape_option = click.option(
    "--shape", type=click.Choice(["auto", "normal", "rank"]), default="auto", show_default=True,
    help="Let the shape checks choose the test, or fix it to normal-based or rank-based.",
)
alternative_option = click.option(
    "--alternative", type=click.Choice(["two-sided", "greater", "less"]), default="two-sided",
    show_default=True, help="Direction of the question.",
)
confidence_option = click.option(
    "--confidence", type=float, default=0.95, show_default=True, help="Confidence level of intervals.",
)
adjust_option = click.option(
    "--adjust", type=click.Choice(["holm", "benjamini-hochberg", "none"]), default="holm", show_default=True,
    help="P-value adjustment across the analyses of this run.",
)
json_option = click.option(
    "--json", "json_path", metavar="PATH|-", default=None,
    help="Also write the results as JSON to PATH ('-' for standard output, without the summary).",
)


def json_document(results: list[Result]) -> dict[str, Any]:
    """The ``--json`` document: tool, version and one record per analysis."""
    return {"tool": "statmargin", "version": __version__, "analyses": [r.to_record() for r in results]}


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
            raise errors.OptionError("--json points at the workbook itself; give another file name.")
    if not target.resolve().parent.is_dir():
        raise errors.OptionError(f"Cannot write the JSON file {path}: its folder does not exist; choose another path.")


def write_json(document: dict[str, Any], path: str, *, protect: Path | None = None) -> None:
    """Write JSON to a file or to standard output ('-'); never over the workbook itself."""
    text = json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False)
    if path == "-":
        click.echo(text)
        return
    target = Path(path)
    if protect is not None and target.resolve() == protect.resolve():
        raise errors.OptionError("--json points at the workbook itself; give another file name.")
    try:
        target.write_text(text + "\n", encoding="utf-8")
    except OSError as err:
        raise errors.OptionError(f"Cannot write the JSON file {path}: {err.strerror or err}; choose another path.") from None


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
@click.argument("workbook", type=click.Path(dir_okay=False, path_type=Path))
@sheet_option
@click.option("--outcome", "outcomes", metavar="COL", multiple=True, required=True,
              help="Outcome column (repeatable).")
@click.option("--by", "bys", metavar="COL", multiple=True, help="Compare the outcome across this column (repeatable).")
@click.option("--against", metavar="VALUE", default=None,
              help="Compare with a fixed value: a number, or LABEL=SHARE / A=0.25,B=0.75 for categories.")
@click.option("--paired-by", metavar="COL", default=None,
              help="Pairing key for long-form pairs (use with --by naming the two conditions).")
@click.option("--paired-with", metavar="COL", default=None, help="Second measurement column for wide-form pairs.")
@treat_option
@shape_option
@alternative_option
@confidence_option
@adjust_option
@json_option
@debug_option
@handle_errors
def test_command(workbook: Path, sheet: str | None, outcomes: tuple[str, ...], bys: tuple[str, ...],
                 against: str | None, paired_by: str | None, paired_with: str | None, treat: tuple[str, ...],
                 shape: str, alternative: str, confidence: float, adjust: str, json_path: str | None) -> None:
    """Run the fitting test on a workbook and print the results.

    The workbook is only read, never changed.

    Example: statmargin test clinics.xlsx --outcome wait_minutes --by site --json results.json
    """
    from .designs.engine import build_plan, make_settings, parse_treat, run_plan
    from .read.reader import read_table
    from .words.explain import apply as explain_results

    if not (bys or against is not None or paired_with):
        raise errors.OptionError(
            "Say what the outcome is compared with: --by COL, --against VALUE or --paired-with COL."
        )
    if against is not None and (bys or paired_with):
        raise errors.OptionError("--against asks a one-sample question; use it without --by and --paired-with.")
    if paired_with and bys:
        raise errors.OptionError("--paired-with pairs two columns; use it without --by.")
    if not workbook.exists():
        raise errors.WorkbookError(f"{workbook} does not exist; check the path and file name.")
    check_json_target(json_path, workbook)
    settings = make_settings(alternative=alternative, confidence=confidence, adjust=adjust)
    plan = build_plan(list(outcomes), list(bys), against=against, paired_by=paired_by, paired_with=paired_with,
                      treat=parse_treat(treat), shape=shape, settings=settings)
    with warnings.catch_warnings():
        # Caveats are already in each result's notes and shown below; no Python warning lines.
        warnings.simplefilter("ignore")
        table = read_table(workbook, sheet=sheet)
        results = run_plan(table, plan)
        explain_results(results, settings)
    if json_path != "-":
        click.echo(summary_text(results, sheet=table.sheet))
    if json_path:
        write_json(json_document(results), json_path, protect=workbook)


# ---------------------------------------------------------------- plan, run, demo


def _pairs(values: tuple[str, ...], flag: str) -> dict[str, str]:
    """Parse repeated COL=VALUE options into a dict, refusing malformed ones in one line."""
    out: dict[str, str] = {}
    for item in values:
        name, sep, value = item.partition("=")
        if not sep or not name.strip() or not value.strip():
            raise errors.OptionError(f"{flag} {item!r}: write it as COL=VALUE, e.g. {flag} \"Score=85\".")
        out[name.strip()] = value.strip()
    return out


def _progress(quiet: bool) -> Callable[..., None]:
    """Step lines and a bar over the analyses on standard error; stdout stays clean."""
    # Only on a terminal: scripts and logs then get exactly one line on standard error when
    # something goes wrong, and nothing when all is well.
    stream = click.get_text_stream("stderr")
    show = not quiet and stream.isatty()

    def say(message: str, done: int | None = None, total: int | None = None) -> None:
        if not show:
            return
        if done is None or not total:
            click.echo(f"statmargin: {message} ...", err=True)
            return
        width = 30
        filled = width * done // total
        end = "\n" if done == total else ""
        stream.write(f"\r  [{'#' * filled}{'.' * (width - filled)}] {done}/{total} {message}{end}")
        stream.flush()

    return say


out_option = click.option(
    "--out", metavar="PATH", type=click.Path(dir_okay=False, path_type=Path), default=None,
    help="Write to this new file and leave WORKBOOK untouched.",
)
quiet_option = click.option("--quiet", is_flag=True, help="No progress lines.")


@main.command("plan")
@click.argument("workbook", type=click.Path(dir_okay=False, path_type=Path))
@sheet_option
@click.option("--header-row", type=int, default=None, metavar="N", help="Row of the headers (default: first non-empty row).")
@click.option("--outcome", "outcomes", metavar="COL", multiple=True, help="Preset: mark COL as an outcome (repeatable).")
@click.option("--by", "bys", metavar="COL", multiple=True, help="Preset: mark COL as a compare-by column (repeatable).")
@click.option("--pairing-key", metavar="COL", default=None, help="Preset: mark COL as the pairing key.")
@click.option("--against", "againsts", metavar="COL=VALUE", multiple=True,
              help="Preset: comparison value for an outcome, e.g. Score=85 or Result=Fail=0.1 (repeatable).")
@click.option("--pair", "pairs", metavar="COL=COL2", multiple=True,
              help="Preset: COL and COL2 are two measurements of the same record (repeatable).")
@treat_option
@out_option
@json_option
@debug_option
@handle_errors
def plan_command(workbook: Path, sheet: str | None, header_row: int | None, outcomes: tuple[str, ...],
                 bys: tuple[str, ...], pairing_key: str | None, againsts: tuple[str, ...], pairs: tuple[str, ...],
                 treat: tuple[str, ...], out: Path | None, json_path: str | None) -> None:
    """Add or refresh the roles sheet, keeping every choice already made.

    Example: statmargin plan clinics.xlsx --outcome wait_minutes --by site
    """
    from .designs.engine import parse_treat
    from .jobs.workbook import plan_workbook

    check_json_target(json_path, workbook, out)
    types, orders = {}, {}
    for name, (kind, order) in parse_treat(treat).items():
        types[name] = kind.value
        if order:
            orders[name] = order
    summary = plan_workbook(
        workbook, sheet=sheet, header_row=header_row, outcome=outcomes, by=bys, pairing_key=pairing_key,
        treat=types, against=_pairs(againsts, "--against"), paired_with=_pairs(pairs, "--pair"),
        order=orders, out=out,
    )
    if json_path != "-":
        roles_sheet = summary.write.sheets.get("roles", "roles")
        click.echo(f"Wrote sheet {roles_sheet!r} to {summary.path}: {len(summary.columns)} columns of "
                   f"sheet {summary.data_sheet!r} (headers in row {summary.header_row}).")
        marked = [c for c in summary.columns if c["role"] != "ignore"]
        for c in marked:
            click.echo(f"  {c['column']}: {c['role']} ({c['inferred_type']})")
        if not marked:
            click.echo("  No roles chosen yet: open the file, pick roles in the shaded cells, save, then run "
                       f"'statmargin run {workbook.name}'.")
        for name in summary.new_columns:
            click.echo(f"  new column: {name}")
        for name in summary.missing_columns:
            click.echo(f"  no longer in the data: {name}")
        for line in summary.write.renamed:
            click.echo(f"  {line}")
    if json_path:
        write_json(summary.to_record(), json_path, protect=workbook)


@main.command("run")
@click.argument("workbook", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@click.option("--share", is_flag=True, help="Sharing mode: hide small counts in the tool's sheets.")
@click.option("--min-count", type=click.IntRange(min=2), default=None, metavar="N",
              help="Sharing mode: hide counts below N (default 11, a common public-health practice).")
@json_option
@quiet_option
@debug_option
@handle_errors
def run_command(workbook: Path, out: Path | None, share: bool, min_count: int | None, json_path: str | None,
                quiet: bool) -> None:
    """Run every analysis the roles sheet asks for and write the results sheets.

    Example: statmargin run clinics.xlsx --out clinics-results.xlsx
    """
    from .jobs.workbook import run_workbook

    if min_count is not None and not share:
        raise errors.OptionError("--min-count goes with --share; add --share or drop --min-count.")
    check_json_target(json_path, workbook, out)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # caveats are in each result's notes
        summary = run_workbook(workbook, out=out, share=share, min_count=min_count,
                               progress=_progress(quiet or json_path == "-"))
    if json_path != "-":
        click.echo(run_summary_text(summary))
    if json_path:
        write_json(summary.to_record(), json_path, protect=workbook)


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

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        summaries = run_demo(folder, progress=_progress(quiet))
    for summary in summaries:
        click.echo(run_summary_text(summary))
        click.echo("")
    click.echo(f"Open the workbooks in {folder} to see the results sheets; the empty template is there too.")


def run_summary_text(summary: Any) -> str:
    """A few lines about a workbook run: where results went and how many analyses were done."""
    results = summary.results
    skipped = sum(1 for r in results if r.skipped)
    flagged = sum(1 for r in results if r.p_adjusted is not None and r.p_adjusted < 1 - r.confidence)
    lines = [
        f"{summary.path}: {len(results)} analyses of sheet {summary.data_sheet!r} "
        f"({summary.rows_read:,} rows read, {summary.notes} data notes).",
        f"  {flagged} with adjusted p below {1 - results[0].confidence:.2g}, {skipped} could not be run."
        if results else "  No analyses were run.",
        "  Sheets written: " + ", ".join(summary.write.sheets.values()),
    ]
    lines.extend(f"  {m}" for m in summary.messages)
    return "\n".join(lines)


# ---------------------------------------------------------------- summary text


def _num(value: Any) -> str:
    if value is None:
        return "-"
    if isinstance(value, (list, tuple)):
        return ", ".join(_num(v) for v in value)
    value = float(value)
    if not math.isfinite(value):
        return "inf" if value > 0 else "-inf"
    if value != 0 and (abs(value) < 1e-3 or abs(value) >= 1e6):
        return f"{value:.3e}"
    return f"{value:.4g}"


def _p(value: float | None) -> str:
    if value is None:
        return "-"
    return "< 0.001" if value < 0.001 else f"{value:.3f}"


def _p_phrase(value: float | None) -> str:
    return "-" if value is None else ("< 0.001" if value < 0.001 else f"= {value:.3f}")


def _ci(item: Any, confidence: float) -> str:
    if item.ci_low is None and item.ci_high is None:
        return ""
    return f" ({confidence * 100:g}% CI {_num(item.ci_low)} to {_num(item.ci_high)})"


def summary_text(results: list[Result], *, sheet: str | None = None) -> str:
    """A short human summary of a run: test, statistic, df, p, estimate and effect with CIs, reasons."""
    lines: list[str] = []
    if sheet:
        lines.append(f"Sheet {sheet!r}: {len(results)} analysis(es)")
    for r in results:
        target = r.exposure or r.pairing or (f"against {r.against}" if r.against is not None else "")
        lines.append("")
        lines.append(f"{r.outcome} {'by ' if r.exposure else ''}{target}".rstrip() + f"  [{r.test or 'no test'}]")
        if r.skipped:
            lines.append(f"  skipped: {say(r.skipped)}")
        else:
            stat = f"{r.statistic_name or 'statistic'} = {_num(r.statistic)}" if r.statistic is not None else ""
            df = f", df = {_num(r.df)}" if r.df is not None else ""
            adj = f", adjusted p {_p(r.p_adjusted)}" if r.p_adjusted is not None else ""
            parts = [part for part in (stat + df, f"p {_p_phrase(r.p_value)}") if part]
            lines.append("  " + ", ".join(parts) + adj)
            lines.append(f"  n = {r.n} ({r.n_excluded} row(s) left out)")
            if r.estimate is not None:
                lines.append(f"  {r.estimate.name} = {_num(r.estimate.value)}{_ci(r.estimate, r.confidence)}")
            if r.effect is not None:
                lines.append(f"  {r.effect.name} = {_num(r.effect.value)}{_ci(r.effect, r.confidence)}")
        for reason in r.reasons:
            lines.append(f"  why: {say(reason)}")
        for note in r.notes:
            lines.append(f"  note: {say(note)}")
        if r.reading:
            lines.append(f"  reading: {r.reading}")
        for caution in r.cautions:
            lines.append(f"  caution: {caution}")
        for fu in r.followups:
            if fu.flagged:
                lines.append(f"  follow-up {fu.test}: {' vs '.join(fu.levels)}, adjusted p {_p(fu.p_adjusted)}")
    return "\n".join(lines).lstrip("\n")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
