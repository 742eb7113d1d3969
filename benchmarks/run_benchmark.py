"""Time and peak memory of statmargin's commands against the bare read of the same sheet.

For each size, one seeded workbook (``benchmarks/generate.py``; invented data)
is made once and cached in the work folder, with a roles sheet from
``statmargin plan`` (7 outcomes by 3 compare-by columns: 21 analyses, rank-based
ones and follow-ups among them). Then, in one run and on the same file, these
are measured, each in a fresh process so its peak resident memory is its own
(``os.wait4`` gives the child's ``ru_maxrss``), interleaved over the
repetitions so drift in the machine's speed touches all of them alike:

* ``floor``: python-calamine opens the file, loads the data sheet and hands
  every row's values to Python (``iter_rows``) -- the least any reader of this
  sheet through python-calamine does, interpreter start included;
* ``read``: statmargin's ``read_table`` of the columns the roles use;
* ``plan``: ``statmargin plan`` with the roles given as options (first use);
* ``run``: ``statmargin run`` end to end;
* ``test (rank)`` and ``test (normal)``: ``statmargin test`` for one question
  (an outcome by a 5-level column), once with rank-based and once with
  normal-based methods, so the cost of one rank analysis shows beside one ANOVA;
* ``copy``: a plain ``cp`` of the roles workbook, against the run's write step.

The commands run with ``STATMARGIN_STAGES`` set, so the pipeline's own stage
timer (``statmargin.stages``) gives the time split by stage.

Results are printed as a Markdown table and written to
``benchmarks/results/<rows>.md`` with a description of the machine.

Usage::

    python benchmarks/run_benchmark.py --rows 100000 --reps 3
    python benchmarks/run_benchmark.py --rows 100000 --rows 300000 --before /path/to/other/src

``--before SRC`` also measures the statmargin steps with another source tree
(for example the main branch) in the same run, for before/after tables.
``--kw-stand-in`` replaces the Kruskal-Wallis effect-size bootstrap (2,000
resamples x N memory) by no interval in the measured processes; it is a stand-in
for measuring everything else while that interval is being replaced, and the
table says when it was used. Nothing is asserted: this prints numbers for a
person to read.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import dataclass, field
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
sys.path.insert(0, str(HERE))

import generate  # noqa: E402 - the generator sits beside this script

QUESTION = ("Wait (minutes)", "Team")  # the one question of ``statmargin test``
RANK_TEST_CAP_GB = 8.0  # address-space cap of the one rank-based question
STEP_TIMEOUT = 3600.0  # seconds before a step is stopped and shown as not finished


@dataclass
class Step:
    """One measured command."""

    name: str
    argv: list[str]
    src: str | None = None  # source tree on PYTHONPATH (None: no statmargin needed)
    stages: bool = False  # collect the stage split
    kw_stand_in: bool = False  # no Kruskal-Wallis bootstrap in this step
    memory_cap_gb: float | None = None  # address-space limit of this step
    times: list[float] = field(default_factory=list)
    peaks: list[float] = field(default_factory=list)  # MiB
    splits: list[dict] = field(default_factory=list)
    failed: str | None = None


# ---------------------------------------------------------------- children

_FLOOR = """
import sys, python_calamine
book = python_calamine.CalamineWorkbook.from_path(sys.argv[1])
count = 0
for row in book.get_sheet_by_name(sys.argv[2]).iter_rows():
    count += 1
assert count > 1
"""

_READ = """
import sys
from statmargin.read.reader import read_table
table = read_table(sys.argv[1], sheet=sys.argv[2], columns=sys.argv[3:])
assert table.n_rows_read > 0
"""


def cli_child(argv: list[str]) -> None:
    """Run the statmargin command line in this process, with the Kruskal-Wallis stand-in if asked."""
    if os.environ.get("STATMARGIN_BENCH_KW_STAND_IN"):
        from statmargin.stats import multigroup

        multigroup._epsilon_bootstrap = lambda arrays, n_total, confidence: (None, None)
    from statmargin.cli import main

    sys.argv = ["statmargin", *argv]
    main()


def _cli(src: str, kw_stand_in: bool, *args: str) -> list[str]:
    if kw_stand_in:
        return [sys.executable, str(Path(__file__).resolve()), "_cli", *args]
    return [sys.executable, "-m", "statmargin", *args]


def run_child(step: Step, env_extra: dict[str, str], memory_limit_gb: float | None) -> None:
    """Run one step once; record wall time, peak RSS and the stage split."""
    env = dict(os.environ)
    env.pop("STATMARGIN_STAGES", None)
    if step.src is not None:
        env["PYTHONPATH"] = step.src
    env.update(env_extra)
    if step.kw_stand_in:
        env["STATMARGIN_BENCH_KW_STAND_IN"] = "1"
    memory_limit_gb = step.memory_cap_gb or memory_limit_gb
    stages_file = None
    if step.stages:
        handle, stages_file = tempfile.mkstemp(suffix=".json", prefix="statmargin-stages-")
        os.close(handle)
        env["STATMARGIN_STAGES"] = stages_file

    def limit() -> None:
        if memory_limit_gb:
            import resource

            cap = int(memory_limit_gb * 2**30)
            resource.setrlimit(resource.RLIMIT_AS, (cap, cap))

    with tempfile.TemporaryFile() as errors:
        start = time.perf_counter()
        process = subprocess.Popen(
            step.argv, env=env, stdout=subprocess.DEVNULL, stderr=errors,
            preexec_fn=limit if memory_limit_gb else None,
        )
        timer = threading.Timer(STEP_TIMEOUT, process.kill)
        timer.start()
        # wait4 gives this child's own rusage; RUSAGE_CHILDREN would be a maximum over all children.
        _, status, usage = os.wait4(process.pid, 0)
        seconds = time.perf_counter() - start
        timer.cancel()
        process.returncode = os.waitstatus_to_exitcode(status)
        errors.seek(0)
        stderr = errors.read().decode("utf-8", "replace").strip()
    if seconds >= STEP_TIMEOUT:
        step.failed = f"stopped after {STEP_TIMEOUT:.0f} s"
    elif process.returncode != 0:
        last = stderr.splitlines()[-1:] or [""]
        step.failed = f"exit {process.returncode}: {last[0][:160]}"
    if step.failed:
        if stages_file:
            os.unlink(stages_file)
        return
    step.times.append(seconds)
    step.peaks.append(usage.ru_maxrss / 1024)  # Linux reports KiB
    if stages_file:
        try:
            step.splits.append(json.loads(Path(stages_file).read_text()))
        except (OSError, ValueError):
            pass
        finally:
            os.unlink(stages_file)


# ---------------------------------------------------------------- set-up


def prepare(rows: int, work: Path, src: str) -> tuple[Path, Path]:
    """The data workbook and the same workbook with a roles sheet, made once per size and seed."""
    work.mkdir(parents=True, exist_ok=True)
    data = work / f"visits-{rows}-{generate.SEED}.xlsx"
    roles = work / f"visits-{rows}-{generate.SEED}-roles.xlsx"
    if not data.exists():
        start = time.perf_counter()
        # In a child process: Linux counts a parent's resident memory at fork in each
        # later child's peak, so the harness itself must stay small.
        subprocess.run([sys.executable, str(Path(__file__).with_name("generate.py")), str(rows), str(data)],
                       check=True, stdout=subprocess.DEVNULL)
        print(f"generated {data.name} ({data.stat().st_size / 2**20:.1f} MiB) in "
              f"{time.perf_counter() - start:.1f} s", flush=True)
    if not roles.exists():
        env = dict(os.environ, PYTHONPATH=src)
        subprocess.run([sys.executable, "-m", "statmargin", *plan_args(data, roles)],
                       env=env, check=True, stdout=subprocess.DEVNULL)
    return data, roles


def plan_args(data: Path, out: Path) -> list[str]:
    args = ["plan", str(data), "--out", str(out)]
    for name in generate.OUTCOMES:
        args += ["--outcome", name]
    for name in generate.BY:
        args += ["--by", name]
    return args


def used_columns() -> list[str]:
    return [*generate.BY, *generate.OUTCOMES]


def make_steps(data: Path, roles: Path, scratch: Path, src: str, label: str,
               kw_stand_in: bool, with_floor: bool) -> list[Step]:
    outcome, by = QUESTION
    tag = f" [{label}]" if label else ""
    steps = []
    if with_floor:
        steps.append(Step("floor", [sys.executable, "-c", _FLOOR, str(data), generate.SHEET_NAME]))
        steps.append(Step("copy", ["cp", str(roles), str(scratch / "copy.xlsx")]))
    steps += [
        Step("read" + tag, [sys.executable, "-c", _READ, str(data), generate.SHEET_NAME, *used_columns()],
             src=src, stages=True),
        Step("plan" + tag, _cli(src, False, *plan_args(data, scratch / "plan.xlsx")), src=src, stages=True),
        Step("run" + tag, _cli(src, kw_stand_in, "run", str(roles), "--out", str(scratch / "run.xlsx")),
             src=src, stages=True, kw_stand_in=kw_stand_in),
        # Never with the stand-in, so this row shows what one rank analysis costs as it is;
        # under a cap, so a bootstrap that needs more memory fails alone instead of the machine.
        Step("test (rank)" + tag, _cli(src, False, "test", str(data), "--outcome", outcome, "--by", by,
                                       "--shape", "rank"), src=src, stages=True, memory_cap_gb=RANK_TEST_CAP_GB),
        Step("test (normal)" + tag, _cli(src, False, "test", str(data), "--outcome", outcome, "--by", by,
                                         "--shape", "normal"), src=src, stages=True),
    ]
    return steps


# ---------------------------------------------------------------- report


def machine() -> str:
    """One line about the machine, Python and the libraries that set the floor."""
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    memory = ""
    try:
        for line in Path("/proc/meminfo").read_text().splitlines():
            if line.startswith("MemTotal"):
                memory = f", {int(line.split()[1]) / 2**20:.0f} GiB memory"
                break
    except OSError:
        pass
    versions = []
    for module in ("numpy", "scipy", "python_calamine"):
        try:
            versions.append(f"{module} {__import__(module).__version__}")
        except (ImportError, AttributeError):
            pass
    commit = subprocess.run(["git", "-C", str(REPO), "rev-parse", "--short", "HEAD"],
                            capture_output=True, text=True).stdout.strip()
    return (f"{cpu}, {os.cpu_count()} cores{memory}; {platform.system()} {platform.release()}; "
            f"Python {platform.python_version()}; {', '.join(versions)}; statmargin commit {commit or '?'}")


def _median(values: list[float]) -> float:
    return statistics.median(values) if values else float("nan")


def _spread(values: list[float]) -> str:
    if len(values) < 2:
        return "-"
    return f"{min(values):.3f}-{max(values):.3f}"


STAGE_ORDER = ["open", "read", "read.load", "read.scan", "read.scan wait", "read.convert", "types", "analyses",
               "follow-ups", "report", "write", "write.render"]


def stage_medians(step: Step) -> dict[str, float]:
    """Median seconds of each stage over the repetitions, in pipeline order."""
    names: list[str] = []
    for split in step.splits:
        names += [n for n in split.get("stages", {}) if n not in names]
    rank = {n: i for i, n in enumerate(STAGE_ORDER)}
    names.sort(key=lambda n: (rank.get(n, len(rank)), n))
    return {n: _median([s["stages"][n]["seconds"] for s in step.splits if n in s.get("stages", {})])
            for n in names}


def table(rows: int, file_mib: float, reps: int, steps: list[Step], notes: list[str]) -> str:
    """The results as Markdown: the steps, the targets and the stage split of each statmargin step."""
    by = {s.name: s for s in steps}
    floor_t = _median(by["floor"].times)
    floor_m = _median(by["floor"].peaks)
    run = next((s for s in steps if s.name == "run"), None)
    run_t = _median(run.times) if run else float("nan")
    lines = [
        f"### {rows:,} data rows x {len(generate.HEADERS)} columns ({file_mib:.1f} MiB file), "
        f"median of {reps} interleaved repetitions",
        "",
        "| step | median s | spread s | x floor time | peak MiB | x floor peak | target |",
        "|---|---:|---:|---:|---:|---:|---|",
    ]
    targets = {
        "floor": "the baseline",
        "read": "<= 1.1x floor time, <= floor peak",
        "run": "<= 1.3x floor time, <= floor peak",
        "plan": "<= 0.5x run",
        "copy": "write step <= 1.2x (copy + report build)",
    }
    for s in steps:
        base = s.name.split(" [")[0]
        if s.failed and not s.times:
            lines.append(f"| {s.name} | not finished | | | | | {s.failed} |")
            continue
        t, m = _median(s.times), _median(s.peaks)
        target = targets.get(base, "")
        if base == "plan" and run_t == run_t:
            target += f" (now {t / run_t:.2f}x)"
        lines.append(f"| {s.name} | {t:.3f} | {_spread(s.times)} | {t / floor_t:.2f} | {m:.0f} | "
                     f"{m / floor_m:.2f} | {target} |")
    if run is not None and run.splits:
        split = stage_medians(run)
        copy_t = _median(by["copy"].times)
        # Building the tool's sheets is the report's models plus rendering them to sheet XML,
        # which happens inside the write step (its "write.render" part). Both readings are shown.
        render = split.get("write.render", 0.0)
        write = split.get("write", float("nan"))
        report = split.get("report", float("nan"))
        lines += ["", f"Write step {write:.2f} s against copy {copy_t:.2f} s + report build {report:.2f} s: "
                      f"{write / (copy_t + report):.2f}x (target <= 1.2x). Counting the rendering of the sheets' "
                      f"XML ({render:.2f} s, inside the write step) as building them: write-back "
                      f"{write - render:.2f} s against {copy_t + report + render:.2f} s, "
                      f"{(write - render) / (copy_t + report + render):.2f}x."]
    for s in steps:
        if not s.splits or s.name.startswith("read"):
            continue
        split = stage_medians(s)
        total = _median(s.times)
        lines += ["", f"Stage split of `{s.name}` (median s; dotted stages are parts of the stage before the dot; "
                      "`types` is part of whichever step asked for it):", "",
                  "| stage | s | share of the step | peak MiB at its end |", "|---|---:|---:|---:|"]
        peaks = {n: _median([x["stages"][n]["peak_mib"] for x in s.splits if n in x.get("stages", {})])
                 for n in split}
        for name, seconds in split.items():
            lines.append(f"| {name} | {seconds:.2f} | {seconds / total:.0%} | {peaks[name]:.0f} |")
        accounted = sum(v for k, v in split.items() if "." not in k and k != "types")
        lines.append(f"| start-up and the rest | {total - accounted:.2f} | {(total - accounted) / total:.0%} | |")
    for s in steps:
        if s.failed:
            lines.append(f"\nNote: `{s.name}` failed in some repetitions: {s.failed}.")
    lines += [""] + notes
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------- main


def _commit_of(src: str) -> str:
    """ ", commit abc1234" when the tree is in a git checkout, else nothing."""
    try:
        found = subprocess.run(["git", "-C", src, "rev-parse", "--short", "HEAD"], capture_output=True,
                               text=True, check=True)
    except (OSError, subprocess.CalledProcessError):
        return ""
    return f", commit {found.stdout.strip()}"


def main() -> None:
    if len(sys.argv) > 1 and sys.argv[1] == "_cli":
        cli_child(sys.argv[2:])
        return
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, action="append", help="data rows (repeatable; default 100,000)")
    parser.add_argument("--reps", type=int, default=3, help="repetitions of every step (default 3)")
    parser.add_argument("--work", type=Path, default=Path(tempfile.gettempdir()) / "statmargin-bench",
                        help="folder for the generated workbooks (kept between runs)")
    parser.add_argument("--results", type=Path, default=HERE / "results", help="folder for the tables")
    parser.add_argument("--src", default=str(REPO / "src"), help="statmargin source tree to measure")
    parser.add_argument("--before", default=None, help="another source tree to measure beside it")
    parser.add_argument("--kw-stand-in", action="store_true",
                        help="no Kruskal-Wallis effect-size bootstrap in the measured processes")
    parser.add_argument("--memory-limit-gb", type=float, default=None,
                        help="address-space limit for every measured process")
    parser.add_argument("--steps", default=None,
                        help="comma-separated step names to keep (floor and copy are always kept)")
    args = parser.parse_args()
    sizes = args.rows or [100_000]
    args.results.mkdir(parents=True, exist_ok=True)
    about = machine()
    for rows in sizes:
        data, roles = prepare(rows, args.work, args.src)
        with tempfile.TemporaryDirectory(dir=args.work) as folder:
            scratch = Path(folder)
            steps = make_steps(data, roles, scratch, args.src, "", args.kw_stand_in, True)
            if args.before:
                steps += make_steps(data, roles, scratch, args.before, "before", args.kw_stand_in, False)
            if args.steps:
                keep = set(args.steps.split(","))
                steps = [s for s in steps if s.name in ("floor", "copy") or s.name.split(" [")[0] in keep]
            env_extra: dict[str, str] = {}
            for rep in range(args.reps):
                for step in steps:
                    if step.failed and not step.times:
                        continue  # a step that cannot finish is not tried again
                    run_child(step, env_extra, args.memory_limit_gb)
                    shown = f"{step.times[-1]:.2f} s, {step.peaks[-1]:.0f} MiB" if step.times and not step.failed \
                        else step.failed
                    print(f"  {rows:>9,} rows  rep {rep + 1}/{args.reps}  {step.name:<24} {shown}", flush=True)
        notes = [f"Machine: {about}."]
        if args.before:
            notes.append(f"Steps marked [before] ran the source tree {args.before}{_commit_of(args.before)}.")
        if args.kw_stand_in:
            notes.append("Measured with `--kw-stand-in`: the Kruskal-Wallis effect-size interval was not "
                         "computed in `run` (its bootstrap is being replaced); `test (rank)` always computes it, "
                         f"under a {RANK_TEST_CAP_GB:g} GiB address-space cap.")
        if args.memory_limit_gb:
            notes.append(f"Every step ran under a {args.memory_limit_gb:g} GiB address-space limit.")
        text = table(rows, data.stat().st_size / 2**20, args.reps, steps, notes)
        target = args.results / f"{rows}.md"
        target.write_text(text, encoding="utf-8")
        print()
        print(text)
        print(f"written to {target}")
    shutil.rmtree(args.work / "__pycache__", ignore_errors=True)


if __name__ == "__main__":
    main()
