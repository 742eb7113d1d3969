"""Bad inputs at the command line: one line on standard error, the right exit code, the file untouched.

Exit codes are the ones fixed in ``errors.EXIT_CODES`` (2 input, 3 locked, 4
write; 70 is reserved for bugs). Every workbook here is invented
(``workbook_edit.make_newcomer_workbook`` or a few hand-written cells).
"""

from __future__ import annotations

import hashlib
import shutil
import zipfile
from pathlib import Path

import pytest
import xlsxwriter
from click.testing import CliRunner

from statmargin.cli import main
from statmargin.io.addresses import column_letter
from statmargin.io.file import sink as xlsxsink
from statmargin.plan.roles_sheet import HEADERS, TABLE_HEADER_ROW
from workbook_edit import make_newcomer_workbook, set_roles

INPUT, LOCKED, WRITE = 2, 3, 4


def sha(path: Path) -> str | None:
    return hashlib.sha256(path.read_bytes()).hexdigest() if path.exists() else None


def refuse(path: Path, *args: str, code: int) -> str:
    """Run a command that must fail: check code, one 'statmargin: ' line, no traceback, file unchanged."""
    before = sha(path)
    result = CliRunner().invoke(main, list(args))
    lines = result.stderr.splitlines()
    assert result.exit_code == code, (result.exit_code, result.stderr, result.stdout)
    assert len(lines) == 1, lines
    assert lines[0].startswith("statmargin: ")
    assert "Traceback" not in result.stderr + result.stdout
    assert result.exception is None or isinstance(result.exception, SystemExit)
    assert sha(path) == before, "the file changed"
    return lines[0]


@pytest.fixture(scope="module")
def books(tmp_path_factory) -> dict[str, Path]:
    """Masters: the newcomer workbook raw, planned without roles, and planned with two roles picked."""
    folder = tmp_path_factory.mktemp("masters")
    raw = make_newcomer_workbook(folder / "raw.xlsx")
    planned = folder / "planned.xlsx"
    shutil.copyfile(raw, planned)
    assert CliRunner().invoke(main, ["plan", str(planned)]).exit_code == 0
    ready = folder / "ready.xlsx"
    shutil.copyfile(planned, ready)
    set_roles(ready, {"Wait minutes": {"Role": "outcome"}, "Site": {"Role": "compare by"}})
    return {"raw": raw, "planned": planned, "ready": ready}


def copy(master: Path, folder: Path, name: str = "visits.xlsx") -> Path:
    target = folder / name
    shutil.copyfile(master, target)
    return target


class TestUnreadableFiles:
    def test_missing_file(self, tmp_path) -> None:
        """A workbook that does not exist is an input error naming the file."""
        path = tmp_path / "nowhere.xlsx"
        line = refuse(path, "run", str(path), code=INPUT)
        assert "nowhere.xlsx" in line
        refuse(path, "plan", str(path), code=INPUT)
        refuse(path, "test", str(path), "--outcome", "a", "--by", "b", code=INPUT)

    def test_text_file_renamed(self, tmp_path) -> None:
        """A text file with an .xlsx name is refused as not a workbook, by every command."""
        path = tmp_path / "notes.xlsx"
        path.write_text("Site,Wait\nNorth,30\n", encoding="utf-8")
        for args in (["run"], ["plan"], ["test", "--outcome", "Wait", "--by", "Site"]):
            line = refuse(path, args[0], str(path), *args[1:], code=INPUT)
            assert "plain text" in line and "save it as an Excel workbook" in line

    def test_empty_zip(self, tmp_path) -> None:
        """A zip with no parts is refused as not a workbook."""
        path = tmp_path / "empty.xlsx"
        zipfile.ZipFile(path, "w").close()
        refuse(path, "plan", str(path), code=INPUT)
        refuse(path, "run", str(path), code=INPUT)

    def test_truncated_workbook(self, books, tmp_path) -> None:
        """A workbook cut off half way (an interrupted copy) is refused, and stays as it was."""
        path = tmp_path / "cut.xlsx"
        data = books["ready"].read_bytes()
        path.write_bytes(data[: len(data) // 2])
        refuse(path, "run", str(path), code=INPUT)
        refuse(path, "plan", str(path), code=INPUT)

    def test_workbook_without_data(self, tmp_path) -> None:
        """A workbook whose only sheet is empty gets a message saying no sheet holds data."""
        path = tmp_path / "blank.xlsx"
        book = xlsxwriter.Workbook(str(path))
        book.add_worksheet("Sheet1")
        book.close()
        line = refuse(path, "plan", str(path), code=INPUT)
        assert "holds data" in line


class TestRoles:
    def test_run_without_roles_sheet(self, books, tmp_path) -> None:
        """Run on a workbook never planned says to run plan first."""
        path = copy(books["raw"], tmp_path)
        line = refuse(path, "run", str(path), code=INPUT)
        assert "statmargin plan" in line

    def test_run_without_outcome(self, books, tmp_path) -> None:
        """Run with a roles sheet but no outcome chosen says to pick an outcome."""
        path = copy(books["planned"], tmp_path)
        line = refuse(path, "run", str(path), code=INPUT)
        assert "'outcome'" in line

    def test_misspelt_role(self, books, tmp_path) -> None:
        """A role word that is not a dropdown choice is refused, naming the cell and the choices."""
        path = copy(books["planned"], tmp_path)
        set_roles(path, {"Wait minutes": {"Role": "outcom"}})
        line = refuse(path, "run", str(path), code=INPUT)
        # 'Wait minutes' is the third data column: two rows below the first row of the column table.
        cell = f"{column_letter(HEADERS.index('Role'))}{TABLE_HEADER_ROW + 2 + 2}"
        assert cell in line and "'outcom'" in line and "compare by" in line

    def test_unknown_column_in_plan(self, books, tmp_path) -> None:
        """plan --outcome with a header that does not exist suggests the closest one."""
        path = copy(books["raw"], tmp_path)
        line = refuse(path, "plan", str(path), "--outcome", "Wait minute", code=INPUT)
        assert "Did you mean 'Wait minutes'" in line


class TestWriting:
    def test_lock_file_present(self, books, tmp_path) -> None:
        """A spreadsheet program's lock file stops run and plan with exit 3."""
        path = copy(books["ready"], tmp_path)
        (tmp_path / f"~${path.name}").write_bytes(b"lock")
        line = refuse(path, "run", str(path), code=LOCKED)
        assert "--out" in line
        refuse(path, "plan", str(path), code=LOCKED)

    def test_out_into_missing_folder(self, books, tmp_path) -> None:
        """--out into a folder that does not exist fails as a write error; no file appears."""
        path = copy(books["ready"], tmp_path)
        target = tmp_path / "no such folder" / "copy.xlsx"
        refuse(path, "run", str(path), "--out", str(target), code=WRITE)
        assert not target.parent.exists()

    def test_json_pointing_at_workbook(self, books, tmp_path) -> None:
        """--json naming the workbook is refused before any work, for run, plan and test."""
        path = copy(books["ready"], tmp_path)
        for command in (["run"], ["plan"], ["test", "--outcome", "Wait minutes", "--by", "Site"]):
            line = refuse(
                path, command[0], str(path), *command[1:], "--json", str(path), code=INPUT
            )
            assert "--json" in line

    def test_json_pointing_at_out_copy(self, books, tmp_path) -> None:
        """--json naming the --out file is refused too (it would overwrite the new workbook)."""
        path = copy(books["ready"], tmp_path)
        out = tmp_path / "copy.xlsx"
        refuse(path, "run", str(path), "--out", str(out), "--json", str(out), code=INPUT)
        assert not out.exists()

    def test_json_into_missing_folder(self, books, tmp_path) -> None:
        """A --json path in a missing folder is refused before the workbook is rewritten."""
        path = copy(books["ready"], tmp_path)
        refuse(path, "run", str(path), "--json", str(tmp_path / "gone" / "r.json"), code=INPUT)

    def test_failed_replace(self, books, tmp_path, monkeypatch) -> None:
        """When replacing the file fails (as in a read-only folder), the original is untouched and exit is 4."""

        def refuse_replace(temp_path: str) -> None:
            raise OSError(13, "Permission denied")

        # Running as root makes a read-only folder writable anyway, so the failure is injected.
        monkeypatch.setattr(xlsxsink, "before_replace", refuse_replace)
        path = copy(books["ready"], tmp_path)
        refuse(path, "run", str(path), code=WRITE)
        assert sorted(p.name for p in tmp_path.iterdir()) == [path.name]  # no temp file left


class TestOptions:
    def test_min_count_without_share(self, books, tmp_path) -> None:
        """--min-count alone is refused, saying it goes with --share."""
        path = copy(books["ready"], tmp_path)
        line = refuse(path, "run", str(path), "--min-count", "5", code=INPUT)
        assert "--share" in line

    def test_against_text_on_continuous_outcome(self, books, tmp_path) -> None:
        """test --against abc on a numeric outcome says the comparison value is not a number."""
        path = copy(books["raw"], tmp_path)
        line = refuse(
            path, "test", str(path), "--outcome", "Wait minutes", "--against", "abc", code=INPUT
        )
        assert "'abc'" in line and "not a number" in line
