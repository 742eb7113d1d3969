"""Rows a filter or the user hid: read by default and said so, or left out when the roles sheet asks.

The workbooks are invented (a screening outreach log); the expected counts and
means are worked out here from the rows written, so each check is a direct count.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xlsxwriter

import xlwings_standin as xs
from statmargin.io.excel.book import ExcelBook
from statmargin.io.excel.hidden import hidden_rows
from statmargin.io.file.hidden_rows import hidden_rows_in_block
from statmargin.io.file.source import FileSource
from statmargin.io.memory import MemorySheet, MemoryWorkbook
from statmargin.jobs.workbook import plan_workbook, run_workbook
from statmargin.read.reader import read_table
from statmargin.vocabulary import RowsToUse
from statmargin.words.roles_words import SETTING_LABELS
from workbook_edit import set_cells, sheet_rows, tool_sheet_name

# Invented: minutes from referral to screening at two outreach points, 12 rows.
WAITS = [12.0, 15.0, 11.0, 14.0, 13.0, 90.0, 16.0, 95.0, 12.5, 14.5, 13.5, 15.5]
POINTS = ["Quay", "Mill"] * 6
HIDDEN = {7, 9}  # sheet rows of the two long waits (rows 7 and 9 hold 90 and 95)


def _workbook(path: Path, *, autofilter: bool = True, error_in_hidden: bool = False) -> Path:
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Screening")
    sheet.write_row(0, 0, ["Point", "Wait"])
    for i, (point, wait) in enumerate(zip(POINTS, WAITS, strict=True), start=1):
        sheet.write(i, 0, point)
        if error_in_hidden and i + 1 == 7:
            sheet.write_formula(i, 1, "=1/0", None, "#DIV/0!")
        else:
            sheet.write(i, 1, wait)
    if autofilter:
        sheet.autofilter(0, 0, len(WAITS), 1)
    for row in HIDDEN:
        sheet.set_row(row - 1, None, None, {"hidden": True})
    book.close()
    return path


def test_block_search_finds_hidden_row_tags_only() -> None:
    # Hidden columns carry the same attribute and must not count; prefixes and "true" do.
    xml = (
        b'<cols><col min="1" max="1" hidden="1"/></cols><sheetData>'
        b'<x:row r="4" hidden="true"><x:c r="A4"/></x:row><row r="5" spans="1:2"/>'
        b"<row r='6' hidden='1'/><row r=\"7\" hidden=\"0\"/></sheetData>"
    )
    found: set[int] = set()
    hidden_rows_in_block(xml, found)
    assert found == {4, 6}


def test_file_source_reports_filtered_rows(tmp_path: Path) -> None:
    path = _workbook(tmp_path / "screening.xlsx")
    with FileSource(path) as source:
        assert source.hidden_rows("Screening") == frozenset(HIDDEN)


def test_all_rows_are_read_by_default_and_counted(tmp_path: Path) -> None:
    table = read_table(_workbook(tmp_path / "screening.xlsx"))
    assert table.n_hidden == 2 and not table.hidden_left_out
    wait = table.column("Wait")
    assert np.nansum(wait.numbers) == pytest.approx(sum(WAITS))
    assert wait.n_blank == 0


def test_visible_rows_only_reads_hidden_rows_as_absent(tmp_path: Path) -> None:
    table = read_table(_workbook(tmp_path / "screening.xlsx"), rows_to_use=RowsToUse.VISIBLE)
    wait = table.column("Wait")
    kept = [w for row, w in enumerate(WAITS, start=2) if row not in HIDDEN]
    assert np.nansum(wait.numbers) == pytest.approx(sum(kept))
    assert int(np.sum(~np.isnan(wait.numbers))) == 10
    # Left-out rows are neither blanks nor notes: they are not part of the data at all.
    assert wait.n_blank == 0 and table.column("Point").n_blank == 0
    assert table.n_hidden == 2 and table.hidden_left_out


def test_error_cell_in_a_hidden_row_is_not_noted_when_left_out(tmp_path: Path) -> None:
    path = _workbook(tmp_path / "screening.xlsx", error_in_hidden=True)
    assert any(n.cell == "B7" for n in read_table(path).notes)
    visible = read_table(path, rows_to_use=RowsToUse.VISIBLE)
    assert not any(n.cell == "B7" for n in visible.notes)
    assert visible.column("Wait").n_unreadable == 0


def test_hidden_rows_at_the_end_are_counted_when_left_out() -> None:
    rows = [["Point", "Wait"]] + [[p, w] for p, w in zip(POINTS, WAITS, strict=True)]
    book = MemoryWorkbook([MemorySheet("Screening", rows, hidden_rows=frozenset({12, 13}))])
    table = read_table(None, source=book, rows_to_use=RowsToUse.VISIBLE)
    assert table.n_hidden == 2
    assert table.n_rows_read == 10  # the last visible data row is row 11
    assert table.column("Wait").n_blank == 0


def test_memory_book_that_cannot_tell_says_none() -> None:
    rows = [["Point", "Wait"]] + [[p, w] for p, w in zip(POINTS, WAITS, strict=True)]
    book = MemoryWorkbook([MemorySheet("Screening", rows, hidden_rows=None)])
    table = read_table(None, source=book, rows_to_use=RowsToUse.VISIBLE)
    assert table.n_hidden is None and not table.hidden_left_out
    assert np.nansum(table.column("Wait").numbers) == pytest.approx(sum(WAITS))


def test_excel_rows_of_height_zero_are_hidden() -> None:
    rows = [["Point", "Wait"]] + [[p, w] for p, w in zip(POINTS, WAITS, strict=True)]
    book = xs.new_book("screening.xlsx", {"Screening": rows})
    sheet = xs.sheet(book, "Screening")
    for row in HIDDEN:
        sheet.range((row, 1)).row_height = 0
    sheet.range((3, 1)).row_height = 30  # a tall row is not hidden
    assert hidden_rows(sheet, 1, 13) == frozenset(HIDDEN)
    assert ExcelBook(book).hidden_rows("Screening") == frozenset(HIDDEN)
    table = read_table(None, source=ExcelBook(book), rows_to_use=RowsToUse.VISIBLE)
    assert int(np.sum(~np.isnan(table.column("Wait").numbers))) == 10


def _set_rows_to_use(path: Path, value: str) -> None:
    roles = tool_sheet_name(path, "roles")
    rows = sheet_rows(path, roles)
    at = next(i for i, row in enumerate(rows) if row and row[0] == SETTING_LABELS["rows"])
    set_cells(path, roles, {f"B{at + 1}": value})


def _groups(summary) -> dict[str, dict]:
    (result,) = summary.results
    return {g["label"]: g for g in result.groups}


def test_run_uses_hidden_rows_by_default_and_says_so(tmp_path: Path) -> None:
    path = _workbook(tmp_path / "screening.xlsx")
    plan_workbook(path, outcome=["Wait"], by=["Point"])
    summary = run_workbook(path)
    results = tool_sheet_name(path, "results")
    text = " ".join(str(v) for row in sheet_rows(path, results) for v in row)
    assert "2 of them hidden or filtered in the sheet and used" in text
    assert summary.results[0].n == 12
    # The terminal says it too, even with progress lines off (--quiet, or output to a log).
    from click.testing import CliRunner

    from statmargin.cli import main

    said = CliRunner().invoke(main, ["run", str(path), "--quiet"]).stdout
    assert "2 rows hidden or filtered in the sheet were used like the others" in said


def test_run_with_visible_rows_only_leaves_them_out(tmp_path: Path) -> None:
    path = _workbook(tmp_path / "screening.xlsx")
    plan_workbook(path, outcome=["Wait"], by=["Point"])
    _set_rows_to_use(path, RowsToUse.VISIBLE.value)
    summary = run_workbook(path)
    results = tool_sheet_name(path, "results")
    text = " ".join(str(v) for row in sheet_rows(path, results) for v in row)
    assert "2 hidden or filtered rows left out" in text
    assert summary.results[0].n == 10
    assert "2 hidden or filtered rows left out (Rows to use: visible rows only)." in summary.messages
    # Direct count: the hidden rows 7 and 9 hold Mill 90 and Mill 95, so Mill keeps 4 waits.
    visible = [(p, w) for row, (p, w) in enumerate(zip(POINTS, WAITS, strict=True), start=2) if row not in HIDDEN]
    groups = _groups(summary)
    for label in ("Quay", "Mill"):
        waits = [w for p, w in visible if p == label]
        assert groups[label]["n"] == len(waits)
        assert groups[label]["median"] == pytest.approx(float(np.median(waits)))
