"""Folder mode: every workbook refreshed in parallel, failures named and left byte-identical, one summary.

The workbooks are copies of the invented monthly-refresh demo data (see
demo_workbooks/period_demo_data.py) with a roles sheet; one is corrupt on purpose.
"""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from click.testing import CliRunner

from script_loader import load_script
from statmargin.cli import main
from statmargin.errors import OptionError
from statmargin.jobs.folder import SUMMARY_NAME, list_workbooks, run_folder
from statmargin.jobs.workbook import plan_workbook
from statmargin.sheets.folder_summary import COL, HEADER_ROW


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture(scope="module")
def planned_workbook(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One district workbook with a roles sheet: same-day vaccination and wait, by team."""
    folder = tmp_path_factory.mktemp("template")
    path = load_script("demo_workbooks/period_demo_data.py").write_workbook(folder / "district.xlsx", months=6)
    plan_workbook(path, outcome=["Vaccinated same day", "Wait (minutes)"], by=["Team"])
    return path


def _folder_of(tmp_path: Path, planned: Path, count: int, corrupt: int | None = None) -> Path:
    folder = tmp_path / "districts"
    folder.mkdir()
    for i in range(count):
        target = folder / f"district-{i + 1:02d}.xlsx"
        if i == corrupt:
            blob = planned.read_bytes()
            target.write_bytes(blob[: len(blob) // 2])  # a truncated file, as after a failed copy
        else:
            shutil.copyfile(planned, target)
    return folder


def test_twenty_workbooks_one_corrupt(tmp_path: Path, planned_workbook: Path) -> None:
    """19 of 20 are refreshed, the corrupt one is named with its reason and byte-identical, the exit code is 2."""
    folder = _folder_of(tmp_path, planned_workbook, 20, corrupt=13)
    bad = folder / "district-14.xlsx"
    before = _digest(bad)
    result = CliRunner().invoke(main, ["run", str(folder), "--jobs", "2", "--json", str(tmp_path / "all.json")])
    assert result.exit_code == 2, result.output
    assert _digest(bad) == before
    assert "district-14.xlsx: File 'district-14.xlsx' is not a readable workbook" in result.output
    assert "1 of 20 workbooks could not be refreshed" in result.output
    document = json.loads((tmp_path / "all.json").read_text(encoding="utf-8"))
    statuses = {Path(w["path"]).name: w["status"] for w in document["workbooks"]}
    assert list(statuses.values()).count("refreshed") == 19 and statuses["district-14.xlsx"] == "failed"
    refreshed = [w for w in document["workbooks"] if w["status"] == "refreshed"]
    assert all(len(w["analyses"]) == 2 for w in refreshed)
    for i in range(20):
        path = folder / f"district-{i + 1:02d}.xlsx"
        if path != bad:
            assert "statmargin results" in openpyxl.load_workbook(path, read_only=True).sheetnames


def test_summary_workbook_has_a_row_per_workbook_and_analysis(tmp_path: Path, planned_workbook: Path) -> None:
    """The summary lists each analysis of each workbook and the failed workbook with its one-line reason."""
    folder = _folder_of(tmp_path, planned_workbook, 3, corrupt=2)
    seen: list[tuple[int, int, str]] = []
    done = run_folder(folder, jobs=1, progress=lambda d, t, o: seen.append((d, t, o.name)))
    assert [s[:2] for s in seen] == [(1, 3), (2, 3), (3, 3)]
    assert done.exit_code == 2 and [o.name for o in done.failed] == ["district-03.xlsx"]
    sheet = openpyxl.load_workbook(done.summary_path).active
    rows = [list(r) for r in sheet.iter_rows(min_row=HEADER_ROW + 2, values_only=True)]
    assert [(r[COL["Workbook"]], r[COL["Outcome"]], r[COL["Status"]]) for r in rows] == [
        ("district-01.xlsx", "Vaccinated same day", "refreshed"),
        ("district-01.xlsx", "Wait (minutes)", "refreshed"),
        ("district-02.xlsx", "Vaccinated same day", "refreshed"),
        ("district-02.xlsx", "Wait (minutes)", "refreshed"),
        ("district-03.xlsx", None, "failed"),
    ]
    assert isinstance(rows[0][COL["p-value"]], float)
    assert "is not a readable workbook" in rows[4][COL["Message"]]
    assert "reviewed by a qualified analyst" in sheet.cell(2, 1).value
    # A second run replaces its own earlier summary and does not refresh it as a workbook.
    again = run_folder(folder, jobs=1)
    assert [o.name for o in again.outcomes] == ["district-01.xlsx", "district-02.xlsx", "district-03.xlsx"]


def test_parallel_and_serial_runs_agree(tmp_path: Path, planned_workbook: Path) -> None:
    """Two worker processes give the same numbers as one-by-one runs."""
    folder = _folder_of(tmp_path, planned_workbook, 4)
    serial = run_folder(folder, jobs=1, summary=False)
    parallel = run_folder(folder, jobs=2, summary=False)
    for a, b in zip(serial.outcomes, parallel.outcomes, strict=True):
        assert [r.p_value for r in a.results] == [r.p_value for r in b.results]
    assert not (folder / SUMMARY_NAME).exists()


def test_folder_refusals(tmp_path: Path) -> None:
    """A missing folder, an empty match and a summary target that is the user's own file are refused up front."""
    with pytest.raises(OptionError, match="does not exist"):
        run_folder(tmp_path / "nowhere")
    (tmp_path / "notes.txt").write_text("x", encoding="utf-8")
    with pytest.raises(OptionError, match="No workbook in"):
        run_folder(tmp_path)
    (tmp_path / "a.xlsx").write_bytes(b"not really")
    mine = tmp_path / SUMMARY_NAME
    mine.write_bytes(b"the user's own file")
    with pytest.raises(OptionError, match="already exists"):
        run_folder(tmp_path)
    assert mine.read_bytes() == b"the user's own file"


def test_lock_and_temporary_files_are_not_listed(tmp_path: Path) -> None:
    """Spreadsheet lock files and statmargin's temporary files are never refreshed."""
    for name in ("a.xlsx", "~$a.xlsx", ".~lock.a.xlsx#", ".statmargin-writing-x.xlsx", "b.xlsm"):
        (tmp_path / name).write_bytes(b"")
    assert [p.name for p in list_workbooks(tmp_path)] == ["a.xlsx"]
    assert [p.name for p in list_workbooks(tmp_path, "*.xls[xm]")] == ["a.xlsx", "b.xlsm"]
