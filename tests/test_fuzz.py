"""Seeded mutation fuzzing in the suite: damaged workbooks get one line, never an internal error or a hang.

``fuzz_workbooks.py`` makes the cases (byte flips, truncations, entry deletions,
XML edits and zip-directory edits of a small valid workbook, every case fixed by
its seed) and judges each command. Here a few hundred cases run in-process with
an alarm for hangs; ``STATMARGIN_FUZZ=N`` runs N cases instead and
``STATMARGIN_FUZZ_SEED=S`` starts at another seed. The README's reliability
section gives the counts of a 30-minute run by hand in separate processes.
"""

from __future__ import annotations

import os
import signal
from pathlib import Path

import pytest
from click.testing import CliRunner

from fuzz_workbooks import COMMANDS, HANG_SECONDS, KINDS, case, judge, sha, small_book
from statmargin.cli import main

N_CASES = int(os.environ.get("STATMARGIN_FUZZ", "300"))
FIRST_SEED = int(os.environ.get("STATMARGIN_FUZZ_SEED", "1"))
BATCH = 25  # cases per test, so a failure names a small range of seeds


@pytest.fixture(scope="module")
def master(tmp_path_factory) -> bytes:
    """The small planned workbook every case mutates."""
    return small_book(tmp_path_factory.mktemp("fuzz") / "small.xlsx").read_bytes()


class Hang(Exception):
    """A command ran longer than HANG_SECONDS."""


def _alarm(_signum: int, _frame: object) -> None:
    raise Hang


def run_case(master: bytes, seed: int, folder: Path) -> list[str]:
    """Every command on one mutated workbook, each on a fresh copy; the problems found."""
    kind, data = case(master, seed)
    problems = []
    path = folder / "fuzzed.xlsx"
    for command in COMMANDS:
        path.write_bytes(data)
        args = [str(path) if a == "{book}" else a for a in command]
        previous = signal.signal(signal.SIGALRM, _alarm)
        signal.alarm(HANG_SECONDS)
        try:
            result = CliRunner().invoke(main, args)
            code, stdout, stderr = result.exit_code, result.stdout, result.stderr
            if result.exception is not None and not isinstance(result.exception, SystemExit):
                stderr += "Traceback (escaped the command line): " + repr(result.exception)
        except Hang:
            code, stdout, stderr = None, "", ""
        finally:
            signal.alarm(0)
            signal.signal(signal.SIGALRM, previous)
        folder_ok = sorted(p.name for p in folder.iterdir()) == [path.name]
        problem = judge(code, stdout, stderr, sha(data), sha(path.read_bytes()) if path.exists() else None, folder_ok)
        if problem:
            problems.append(f"seed {seed} ({kind}) {command[0]}: {problem} {stderr.strip()[:300]}")
    return problems


@pytest.mark.parametrize("start", range(FIRST_SEED, FIRST_SEED + N_CASES, BATCH))
def test_fuzzed_workbooks(master: bytes, tmp_path: Path, start: int) -> None:
    """A batch of seeded mutations: every command exits 0/2/3/4 with one line, no traceback, no hang, nothing stray."""
    problems: list[str] = []
    for seed in range(start, min(start + BATCH, FIRST_SEED + N_CASES)):
        problems += run_case(master, seed, tmp_path)
    assert not problems, "\n".join(problems)


def test_every_mutation_kind_is_drawn() -> None:
    """Consecutive seeds cycle through all five kinds, so each CI run covers every kind evenly."""
    kinds = [KINDS[seed % len(KINDS)] for seed in range(FIRST_SEED, FIRST_SEED + len(KINDS))]
    assert sorted(kinds) == sorted(KINDS)


def test_same_seed_same_case(master: bytes) -> None:
    """A case is fixed by its seed, so a failure found anywhere reproduces."""
    assert case(master, 12345) == case(master, 12345)
    assert case(master, 12345)[1] != case(master, 12350)[1]


def test_unmutated_workbook_runs_cleanly(master: bytes, tmp_path: Path) -> None:
    """The workbook the fuzzer starts from goes through every command (so mutations start from a working file)."""
    path = tmp_path / "small.xlsx"
    for command in COMMANDS:
        path.write_bytes(master)
        result = CliRunner().invoke(main, [str(path) if a == "{book}" else a for a in command])
        assert result.exit_code == 0, result.stderr
