"""The file system in the way: folders, permissions, a full disk, lock files, odd --out targets.

Each case goes through the command line and checks the exit code, the one line
the user reads, that the workbook is byte-identical afterwards (or fully
written, where writing is what was asked) and that no stray file is left.
Permission cases run the installed command in a separate process; when the
tests run as an administrator (who may read and write anything), that process
first gives up the right to bypass file permissions (Linux capabilities
CAP_DAC_OVERRIDE and CAP_DAC_READ_SEARCH), so permissions bite as for a user.
A full disk is made real with a file-size limit on the process (RLIMIT_FSIZE).
"""

from __future__ import annotations

import ctypes
import errno
import hashlib
import os
import resource
import stat
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from corpus.make_corpus import PLAN, RUN, TEST, xlsxwriter_book
from statmargin.cli import main
from statmargin.io.file import sink as file_sink

INPUT, LOCKED, WRITE = 2, 3, 4
_PR_CAPBSET_DROP = 24  # linux/prctl.h
_CAP_DAC_OVERRIDE, _CAP_DAC_READ_SEARCH = 1, 2  # linux/capability.h


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def args_for(step: tuple[str, ...], path: Path, *extra: str) -> list[str]:
    return [str(path) if a == "{book}" else a for a in step] + list(extra)


def invoke(args: list[str]) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, args)
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    return result.exit_code, result.stdout, result.stderr


def one_line(stderr: str, *words: str) -> str:
    lines = stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("statmargin: "), stderr
    for word in words:
        assert word in lines[0], (word, lines[0])
    return lines[0]


def _drop_file_override() -> None:
    """In the child process: give up bypassing file permissions (an administrator's right)."""
    if os.geteuid() != 0:
        return
    libc = ctypes.CDLL(None, use_errno=True)
    for cap in (_CAP_DAC_OVERRIDE, _CAP_DAC_READ_SEARCH):
        if libc.prctl(_PR_CAPBSET_DROP, cap, 0, 0, 0) != 0:
            raise OSError(ctypes.get_errno(), "could not drop the file-permission override")


def run_as_user(args: list[str], *, file_size_limit: int | None = None) -> subprocess.CompletedProcess[str]:
    """The installed command in its own process, with file permissions enforced (and optionally a size limit)."""

    def prepare() -> None:
        _drop_file_override()
        if file_size_limit is not None:
            resource.setrlimit(resource.RLIMIT_FSIZE, (file_size_limit, file_size_limit))

    return subprocess.run([sys.executable, "-m", "statmargin", *args], preexec_fn=prepare,
                          capture_output=True, text=True, timeout=120, check=False)


@pytest.fixture
def book(tmp_path: Path) -> Path:
    return xlsxwriter_book(tmp_path / "visits.xlsx")


@pytest.fixture
def planned(book: Path) -> Path:
    assert invoke(args_for(PLAN, book))[0] == 0
    return book


def test_a_folder_given_as_the_workbook(tmp_path: Path) -> None:
    """A folder named like a workbook gets the tool's one line (not a usage error); run treats it as a folder of workbooks."""
    folder = tmp_path / "visits.xlsx"
    folder.mkdir()
    for step in (TEST, PLAN):
        code, _, err = invoke(args_for(step, folder))
        assert code == INPUT
        one_line(err, "is a folder")
    code, _, err = invoke(args_for(RUN, folder))  # run's folder mode: every workbook in it
    assert code == INPUT
    one_line(err, "No workbook in")
    assert list(folder.iterdir()) == []


def test_an_unreadable_workbook(book: Path) -> None:
    """A workbook the user may not read is refused in one line saying so, by every command."""
    before = sha(book)
    book.chmod(0)
    try:
        for step in (TEST, PLAN, RUN):
            done = run_as_user(args_for(step, book))
            assert done.returncode == INPUT, done.stderr
            one_line(done.stderr, "cannot be read", "Permission denied")
    finally:
        book.chmod(0o644)
    assert sha(book) == before
    assert sorted(p.name for p in book.parent.iterdir()) == [book.name]


def test_a_read_only_workbook(planned: Path, tmp_path: Path) -> None:
    """A read-only workbook is not changed: plan and run say so in one line; --out and test still work."""
    planned.chmod(stat.S_IRUSR | stat.S_IRGRP | stat.S_IROTH)
    before = sha(planned)
    try:
        for step in (PLAN, RUN):
            code, _, err = invoke(args_for(step, planned))
            assert code == WRITE
            one_line(err, "read-only", "--out")
        assert sha(planned) == before
        out = tmp_path / "copy.xlsx"
        assert invoke(args_for(RUN, planned, "--out", str(out)))[0] == 0
        assert invoke(args_for(TEST, planned))[0] == 0
    finally:
        planned.chmod(0o644)
    assert sha(planned) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["copy.xlsx", planned.name]


def test_a_read_only_folder(planned: Path) -> None:
    """In a folder the user may not write, run says so in one line and the workbook stays as it was."""
    folder = planned.parent
    before = sha(planned)
    folder.chmod(0o555)
    try:
        done = run_as_user(args_for(RUN, planned))
        assert done.returncode == WRITE, done.stderr
        one_line(done.stderr, "may not write there", "--out")
    finally:
        folder.chmod(0o755)
    assert sha(planned) == before
    assert sorted(p.name for p in folder.iterdir()) == [planned.name]


def test_a_full_disk_during_the_write(planned: Path) -> None:
    """When the disk fills while the new file is written, the run fails in one line and leaves nothing behind."""
    before = sha(planned)
    # The new workbook is larger than the old one (it gains the results sheets).
    done = run_as_user(args_for(RUN, planned), file_size_limit=planned.stat().st_size)
    assert done.returncode == WRITE, done.stderr
    one_line(done.stderr, "disk is full", "left as it was")
    assert sha(planned) == before
    assert sorted(p.name for p in planned.parent.iterdir()) == [planned.name]
    assert invoke(args_for(RUN, planned))[0] == 0  # with room again, the run succeeds


def test_no_space_left_reported_in_words(planned: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """ENOSPC from the operating system becomes 'the disk is full' and the original is kept."""
    real_fdopen = os.fdopen

    class FullDisk:
        def __init__(self, handle) -> None:  # noqa: ANN001 - a file object
            self.handle = handle

        def __enter__(self) -> FullDisk:
            return self

        def __exit__(self, *exc: object) -> None:
            self.handle.close()

        def write(self, data: bytes) -> int:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(file_sink.os, "fdopen", lambda fd, mode: FullDisk(real_fdopen(fd, mode)))
    before = sha(planned)
    code, _, err = invoke(args_for(RUN, planned))
    assert code == WRITE
    one_line(err, "disk is full")
    assert sha(planned) == before
    assert sorted(p.name for p in planned.parent.iterdir()) == [planned.name]


@pytest.mark.parametrize("lock", ["~$visits.xlsx", ".~lock.visits.xlsx#"])
def test_a_lock_file_beside_the_workbook(planned: Path, lock: str) -> None:
    """With a spreadsheet program's lock file present, plan and run stop with exit 3 and suggest --out."""
    (planned.parent / lock).write_bytes(b"invented lock")
    before = sha(planned)
    for step in (PLAN, RUN):
        code, _, err = invoke(args_for(step, planned))
        assert code == LOCKED
        one_line(err, "open in a spreadsheet program", "--out")
    assert sha(planned) == before
    assert sorted(p.name for p in planned.parent.iterdir()) == sorted([planned.name, lock])


def test_out_equal_to_the_input(planned: Path) -> None:
    """--out naming the workbook itself is an in-place write: it succeeds and leaves no other file."""
    before = sha(planned)
    code, out, err = invoke(args_for(RUN, planned, "--out", str(planned)))
    assert code == 0, err
    assert sha(planned) != before
    assert sorted(p.name for p in planned.parent.iterdir()) == [planned.name]


def test_out_into_a_missing_folder(planned: Path) -> None:
    """--out into a folder that does not exist fails before any work, naming the folder; nothing is made."""
    target = planned.parent / "no such folder" / "copy.xlsx"
    before = sha(planned)
    for step in (PLAN, RUN):
        code, _, err = invoke(args_for(step, planned, "--out", str(target)))
        assert code == WRITE
        one_line(err, "no such folder", "does not exist")
    assert sha(planned) == before and not target.parent.exists()


def test_out_naming_a_folder(planned: Path) -> None:
    """--out naming an existing folder gets one line asking for a file name (not a usage error)."""
    folder = planned.parent / "results.xlsx"
    folder.mkdir()
    code, _, err = invoke(args_for(RUN, planned, "--out", str(folder)))
    assert code == WRITE
    one_line(err, "is a folder", "file name")
    assert list(folder.iterdir()) == []
