"""The user's layout is theirs: moved and hidden tool sheets stay, re-planning keeps the roles sheet's place,
the run log keeps the last 100 runs, and a roles sheet the user damaged gets a clear answer.

Workbooks are the corpus's invented visits (``corpus.make_corpus``); user edits
are made as a spreadsheet program would (``corpus.user_edits``).
"""

from __future__ import annotations

import hashlib
from pathlib import Path

import pytest
import xlsxwriter
from click.testing import CliRunner

from corpus.make_corpus import HEADERS, PLAN, SHEET, visits
from corpus.user_edits import delete_rows, hide_sheet, move_sheet, sheet_order
from statmargin.cli import main
from statmargin.io.file.sink import FileSink
from statmargin.plan.roles_sheet import SHEET_NAME as ROLES
from statmargin.plan.roles_sheet import TABLE_HEADER_ROW
from statmargin.sheets import log as run_log
from workbook_edit import set_cells, set_roles, sheet_rows, table_records, tool_sheet_name

NOTES_SHEET = "My notes"


def invoke(*args: str) -> tuple[int, str]:
    result = CliRunner().invoke(main, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    return result.exit_code, result.stderr


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture
def book(tmp_path: Path) -> Path:
    """The invented visits plus a notes sheet of the user's, planned (outcome and compare-by set) and run once."""
    path = tmp_path / "visits.xlsx"
    workbook = xlsxwriter.Workbook(str(path))
    sheet = workbook.add_worksheet(SHEET)
    sheet.write_row(0, 0, HEADERS)
    for r, row in enumerate(visits(), start=1):
        sheet.write_row(r, 0, row)
    workbook.add_worksheet(NOTES_SHEET).write(0, 0, "Invented notes of the user's.")
    workbook.close()
    assert invoke(*[str(path) if a == "{book}" else a for a in PLAN])[0] == 0
    assert invoke("run", path, "--quiet")[0] == 0
    return path


def names(path: Path) -> list[str]:
    return [name for name, _ in sheet_order(path)]


def log_runs(path: Path) -> list[dict]:
    return table_records(sheet_rows(path, tool_sheet_name(path, "log")), run_log.LOG_COLUMNS[0][0])


def test_a_moved_tool_sheet_stays_where_the_user_put_it(book: Path) -> None:
    """The results sheet dragged to the front is still at the front after the next run, and nothing else moved."""
    results = tool_sheet_name(book, "results")
    move_sheet(book, results, 0)
    before = names(book)
    assert before[0] == results
    assert invoke("run", book, "--quiet")[0] == 0
    assert names(book) == before


def test_hidden_tool_sheets_stay_hidden(book: Path) -> None:
    """A hidden log and a very hidden shape sheet keep their visibility over a run and a re-plan."""
    log, shape = tool_sheet_name(book, "log"), tool_sheet_name(book, "shape")
    hide_sheet(book, log)
    hide_sheet(book, shape, "veryHidden")
    before = sheet_order(book)
    assert invoke("run", book, "--quiet")[0] == 0
    assert invoke("plan", book)[0] == 0
    assert sheet_order(book) == before
    assert dict(before)[log] == "hidden" and dict(before)[shape] == "veryHidden"


def test_replanning_keeps_the_roles_sheet_in_place(book: Path) -> None:
    """Re-running plan leaves the roles sheet where it was, also after the user moved it to the front."""
    before = names(book)
    assert invoke("plan", book)[0] == 0
    assert names(book) == before
    move_sheet(book, ROLES, 0)
    moved = names(book)
    assert invoke("plan", book)[0] == 0
    assert names(book) == moved and moved[0] == ROLES


def test_the_run_log_keeps_the_last_100_runs(book: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """A log holding 130 earlier runs keeps the newest 99 of them plus this run."""
    old = [
        {"time": f"2026-01-01 00:{i // 60:02d}:{i % 60:02d}", "version": "0.0.1", "workbook": "visits.xlsx",
         "data_sheet": SHEET, "settings": "invented", "rows_read": i, "rows_used": i, "analyses": 1,
         "fingerprint": f"run {i}"}
        for i in range(1, 131)
    ]
    # Write the long log as an earlier version without the bound would have.
    monkeypatch.setattr(run_log, "LOG_KEEP_RUNS", 1_000)
    long_log = run_log.log_sheet(old[:-1], old[-1])
    FileSink(book).write_sheets([long_log])
    assert len(log_runs(book)) == 130
    monkeypatch.setattr(run_log, "LOG_KEEP_RUNS", 100)
    assert invoke("run", book, "--quiet")[0] == 0
    runs = log_runs(book)
    assert len(runs) == 100
    assert runs[0]["Data fingerprint"] == "run 32"  # 130 - 99 + 1: the oldest kept
    assert runs[-2]["Data fingerprint"] == "run 130"
    assert runs[-1]["Data fingerprint"] not in {r["fingerprint"] for r in old}


def test_log_sheet_and_parse_keep_the_newest_rows() -> None:
    """log_sheet writes at most LOG_KEEP_RUNS runs and parse_log_rows keeps the newest that many."""
    previous = [[f"t{i}", "v", "w", "s", "x", i, i, 1, f"f{i}"] for i in range(250)]
    model = run_log.log_sheet(previous, {"time": "now", "fingerprint": "this run"})
    rows = sorted({r for r, _ in model.cells})
    assert len(rows) - 3 == run_log.LOG_KEEP_RUNS  # title, note and header rows above the runs
    header = [["Time (UTC)"]] + previous
    kept = run_log.parse_log_rows(header)
    assert len(kept) == run_log.LOG_KEEP_RUNS and kept[-1][0] == "t249" and kept[0][0] == "t150"


# ---------------------------------------------------------------- a roles sheet the user damaged


def test_retyped_role_header_still_reads_the_choices(book: Path) -> None:
    """A user who renames the 'Role' header still gets the choices below it read."""
    set_cells(book, ROLES, {f"G{TABLE_HEADER_ROW + 1}": "Our role"})
    assert invoke("run", book, "--quiet")[0] == 0
    assert invoke("plan", book)[0] == 0


def test_cleared_header_row_says_how_to_recover(book: Path) -> None:
    """With the whole header row cleared, run and plan say in one line to put it back or delete the sheet."""
    set_cells(book, ROLES, {f"{c}{TABLE_HEADER_ROW + 1}": "" for c in "ABCDEFGHIJKLM"})
    before = sha(book)
    for command in ("run", "plan"):
        code, err = invoke(command, book)
        assert code == 2 and len(err.splitlines()) == 1
        assert "put its header row back" in err and "delete the sheet" in err
    assert sha(book) == before


def test_unknown_role_names_the_cell_and_the_choices(book: Path) -> None:
    """A typed role that is not a choice is refused naming the cell and listing the choices; the file stays."""
    cells = set_roles(book, {"Wait minutes": {"Role": "result"}})
    before = sha(book)
    for command in ("run", "plan"):
        code, err = invoke(command, book)
        assert code == 2 and len(err.splitlines()) == 1
        assert next(iter(cells)) in err and "'result'" in err and "compare by" in err
    assert sha(book) == before


def test_deleted_row_of_the_compare_by_column(book: Path) -> None:
    """Deleting the compare-by column's row makes run say what is missing; plan brings the column back."""
    delete_rows(book, ROLES, TABLE_HEADER_ROW + 2)  # the first column's row: Site
    before = sha(book)
    code, err = invoke("run", book, "--quiet")
    assert code == 2 and "nothing to be compared with" in err and sha(book) == before
    assert invoke("plan", book, "--by", "Site")[0] == 0
    assert invoke("run", book, "--quiet")[0] == 0


def test_deleted_settings_rows_fall_back_to_defaults(book: Path) -> None:
    """Deleting the settings block leaves the defaults (first data sheet, 95%, Holm), and the run goes through."""
    delete_rows(book, ROLES, 5, 5)
    assert invoke("run", book, "--quiet")[0] == 0
