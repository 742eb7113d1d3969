"""Interrupted runs on a 300,000-row workbook: the file is as it was or completely written, never half.

Each case runs the real command in its own process (``interrupt_runner.py``)
and stops it with SIGINT (Ctrl+C) or SIGTERM (a shutdown) at one stage of the
run, or raises an input/output error at one step of the write. Afterwards the
workbook must be byte-identical (stopped before the write) or a complete new
workbook (stopped while writing: signals are held until the new file has
replaced the old one), no temporary file may remain, the user must have read
one line, and running the command again must succeed. A few more cases send
SIGINT from outside at times spread over the run, without knowing the stage.

The workbook (invented visits) is made once per module straight as package
parts, which takes about a second; the interrupted runs are started together
(as many at a time as there are processors) and each test then checks its own.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import signal
import subprocess
import sys
import time
import zipfile
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

import pytest
from click.testing import CliRunner
from python_calamine import CalamineWorkbook

from corpus.make_corpus import PLAN, SHEET, big_book
from interrupt_runner import STAGES, WRITE_STAGES
from statmargin.cli import main
from statmargin.errors import EXIT_INTERRUPTED
from workbook_edit import tool_sheet_name

N_ROWS = 300_000
RUNNER = Path(__file__).with_name("interrupt_runner.py")
WRITE_FAILED = 4
TIMEOUT = 300


@pytest.fixture(scope="module")
def planned_big(tmp_path_factory) -> Path:
    """The 300,000-row workbook with its roles planned (outcome by site)."""
    path = big_book(tmp_path_factory.mktemp("interrupt") / "visits.xlsx", N_ROWS)
    result = CliRunner().invoke(main, [str(path) if a == "{book}" else a for a in PLAN])
    assert result.exit_code == 0, result.stderr
    return path


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def fresh_copy(master: Path, folder: Path) -> Path:
    path = folder / master.name
    shutil.copyfile(master, path)
    return path


def runner(stage: str, action: str, path: Path) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, str(RUNNER), stage, action, "run", str(path), "--quiet"],
                          capture_output=True, text=True, timeout=TIMEOUT, check=False)


def fully_written(path: Path) -> bool:
    """A complete workbook carrying this run's results: every part checks out and the results sheet reads."""
    with zipfile.ZipFile(path) as archive:
        if archive.testzip() is not None:
            return False
    book = CalamineWorkbook.from_path(str(path))
    rows = book.get_sheet_by_name(tool_sheet_name(path, "results")).to_python()
    return SHEET in book.sheet_names and len(rows) > 3


def only_the_workbook(path: Path) -> None:
    assert sorted(p.name for p in path.parent.iterdir()) == [path.name], "a temporary file was left"


def rerun_succeeds(path: Path) -> None:
    result = CliRunner().invoke(main, ["run", str(path), "--quiet"])
    assert result.exit_code == 0, result.stderr
    assert fully_written(path)
    only_the_workbook(path)


@dataclass
class Outcome:
    """An interrupted run: its workbook, the workbook's hash before, and what the process did."""

    path: Path
    before: str
    done: subprocess.CompletedProcess[str]


CASES = [(stage, action) for stage in STAGES for action in ("SIGINT", "SIGTERM")] + [
    (stage, "fault") for stage in WRITE_STAGES
]


@pytest.fixture(scope="module")
def outcomes(planned_big: Path, tmp_path_factory) -> dict[tuple[str, str], Outcome]:
    """Every interrupted run, started together, each on its own copy in its own folder."""
    jobs = {}
    for stage, action in CASES:
        path = fresh_copy(planned_big, tmp_path_factory.mktemp(f"{stage}-{action}"))
        jobs[(stage, action)] = (path, sha(path))
    with ThreadPoolExecutor(max_workers=os.cpu_count() or 1) as pool:
        futures = {key: pool.submit(runner, key[0], key[1], path) for key, (path, _) in jobs.items()}
        return {key: Outcome(jobs[key][0], jobs[key][1], futures[key].result()) for key in jobs}


@pytest.mark.parametrize("action", ["SIGINT", "SIGTERM"])
@pytest.mark.parametrize("stage", STAGES)
def test_signal_at_each_stage(outcomes: dict[tuple[str, str], Outcome], stage: str, action: str) -> None:
    """A stop signal at any stage ends with one line and exit 130; the workbook is untouched or complete.

    The run is repeated after each Ctrl+C case (the states SIGTERM leaves are the same).
    """
    outcome = outcomes[(stage, action)]
    path, before, done = outcome.path, outcome.before, outcome.done
    assert done.returncode == EXIT_INTERRUPTED, (done.returncode, done.stderr)
    lines = done.stderr.splitlines()
    assert len(lines) == 1 and "stopped before finishing" in lines[0], done.stderr
    assert "Traceback" not in done.stdout + done.stderr
    if stage in ("read", "analyse", "build"):
        assert sha(path) == before  # stopped before anything was written
    else:
        assert sha(path) != before and fully_written(path)  # held until the new file was in place
    only_the_workbook(path)
    if action == "SIGINT":
        rerun_succeeds(path)


@pytest.mark.parametrize("stage", WRITE_STAGES)
def test_fault_at_each_write_step(outcomes: dict[tuple[str, str], Outcome], stage: str) -> None:
    """An input/output error at any write step leaves the workbook byte-identical and no temporary file."""
    outcome = outcomes[(stage, "fault")]
    path, before, done = outcome.path, outcome.before, outcome.done
    assert done.returncode == WRITE_FAILED, (done.returncode, done.stderr)
    lines = done.stderr.splitlines()
    assert len(lines) == 1 and "injected fault" in lines[0] and "left as it was" in lines[0], done.stderr
    assert sha(path) == before
    only_the_workbook(path)
    rerun_succeeds(path)


@pytest.fixture(scope="module")
def run_seconds(planned_big: Path, tmp_path_factory) -> float:
    """How long an uninterrupted run of the big workbook takes here, to spread the timed signals over it."""
    path = fresh_copy(planned_big, tmp_path_factory.mktemp("timing"))
    started = time.monotonic()
    done = subprocess.run([sys.executable, "-m", "statmargin", "run", str(path), "--quiet"],
                          capture_output=True, text=True, timeout=TIMEOUT, check=False)
    assert done.returncode == 0, done.stderr
    return time.monotonic() - started


@pytest.mark.parametrize("fraction", [0.4, 0.8, 0.95])
def test_ctrl_c_at_a_random_moment(planned_big: Path, tmp_path: Path, run_seconds: float, fraction: float) -> None:
    """Ctrl+C sent from outside part way through: the workbook is untouched or complete, nothing is left over."""
    path = fresh_copy(planned_big, tmp_path)
    before = sha(path)
    process = subprocess.Popen([sys.executable, "-m", "statmargin", "run", str(path), "--quiet"],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                               preexec_fn=_ctrl_c_as_on_a_terminal)
    time.sleep(fraction * run_seconds)
    process.send_signal(signal.SIGINT)
    _, stderr = process.communicate(timeout=TIMEOUT)
    assert "Traceback" not in stderr
    assert process.returncode in (0, EXIT_INTERRUPTED), (process.returncode, stderr)
    if process.returncode == EXIT_INTERRUPTED:
        assert len(stderr.splitlines()) == 1 and "stopped before finishing" in stderr
    assert sha(path) == before or fully_written(path)
    only_the_workbook(path)
    rerun_succeeds(path)


def _ctrl_c_as_on_a_terminal() -> None:
    """In the child: Ctrl+C acts, even when the suite itself was started with it ignored (nohup)."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def test_a_command_leaves_the_stop_signal_handler_as_it_found_it(tmp_path: Path) -> None:
    """SIGTERM becomes Ctrl+C only while a command runs, so a program calling the command line keeps its own handler."""

    def mine(_signum: int, _frame: object) -> None:
        """A handler of the calling program's."""

    previous = signal.signal(signal.SIGTERM, mine)
    try:
        CliRunner().invoke(main, ["test", str(tmp_path / "missing.xlsx"), "--outcome", "a", "--by", "b"])
        assert signal.getsignal(signal.SIGTERM) is mine
    finally:
        signal.signal(signal.SIGTERM, previous)


def _entry_point_after(patch: str) -> subprocess.CompletedProcess[str]:
    """The installed command's entry point (``cli.run``) in a child, after ``patch`` makes something raise Ctrl+C."""
    script = (
        "import statmargin.cli as cli, statmargin.jobs.workbook as jobs\n"
        "def interrupted(*_args, **_kwargs):\n"
        "    raise KeyboardInterrupt\n"
        f"{patch}\n"
        "import sys; sys.argv = ['statmargin', 'run', 'any.xlsx']\n"
        "cli.run()\n"
    )
    return subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=TIMEOUT,
                          check=False, preexec_fn=_ctrl_c_as_on_a_terminal)


@pytest.mark.parametrize("patch", [
    "cli.main = interrupted",  # outside any command's own handling (as while click reads the options)
    "jobs.run_workbook = interrupted",  # inside a command, which says it stopped and exits
])
def test_an_interrupt_leaves_the_entry_point_with_exit_130_and_one_line(patch: str) -> None:
    """Ctrl+C anywhere under the installed command gives exit 130 (never -2, ended by the signal) and one stop line."""
    done = _entry_point_after(patch)
    assert done.returncode == EXIT_INTERRUPTED, (done.returncode, done.stderr)
    assert len(done.stderr.splitlines()) == 1 and "stopped before finishing" in done.stderr
