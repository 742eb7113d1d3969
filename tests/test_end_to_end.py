"""A newcomer's journey through the command line: plan, pick two roles, run, re-run, copy, LibreOffice.

The workbook is invented (``workbook_edit.make_newcomer_workbook``): an Excel
table of visits at three sites with a chart beside it and dirty cells. The
reference for the numbers on the results sheet is ``statmargin test --json``
on the same question (the one-question command, itself checked against R in
test_cli_test.py and the method tests); the reference for "nothing else
changed" is the original zip parts' bytes.
"""

from __future__ import annotations

import hashlib
import json
import re
import shutil
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner

from libreoffice import convert, find_soffice, require_soffice
from statmargin.cli import main
from statmargin.io.addresses import column_letter
from statmargin.io.file.source import FileSource
from statmargin.io.file.zipio import read_zip
from statmargin.plan.roles_sheet import HEADERS
from workbook_edit import (
    BLANK_WAIT_CELL,
    DIRTY_WAIT_CELLS,
    NEWCOMER_SHEET,
    make_newcomer_workbook,
    results_records,
    roles_cell,
    set_roles,
    sheet_part,
    sheet_rows,
    table_records,
    tool_sheet_name,
)

# Parts the writer may rewrite when it adds sheets (shared brief, issue "Inside the workbook").
ALLOWED_TO_CHANGE = {
    "xl/workbook.xml",
    "xl/_rels/workbook.xml.rels",
    "[Content_Types].xml",
    "docProps/app.xml",
    "xl/styles.xml",
}
TOOL_KINDS = ("roles", "results", "shape", "notes", "log", "history")
# Every step runs through the file back end and again through the in-memory one (conftest).
pytestmark = pytest.mark.usefixtures("pipeline_backend")
ROLE_EDITS = {"Wait minutes": {"Role": "outcome"}, "Site": {"Role": "compare by"}}


def invoke(*args: str):
    """Run the command line in-process and return click's result (stdout and stderr kept apart)."""
    return CliRunner().invoke(main, list(args), catch_exceptions=False)


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def entries(path: Path) -> dict:
    return {e.name: e for e in read_zip(path.read_bytes())}


@pytest.fixture(scope="module")
def journey(tmp_path_factory, pipeline_backend) -> dict[str, Any]:
    """Original, planned, edited and run copies of the newcomer workbook, plus the run's JSON."""
    folder = tmp_path_factory.mktemp("journey")
    original = make_newcomer_workbook(folder / "original.xlsx")
    book = folder / "visits.xlsx"
    shutil.copyfile(original, book)
    planned = invoke("plan", str(book))
    assert planned.exit_code == 0, planned.output
    planned_copy = folder / "planned.xlsx"
    shutil.copyfile(book, planned_copy)
    set_roles(book, ROLE_EDITS)
    edited = folder / "edited.xlsx"
    shutil.copyfile(book, edited)
    ran = invoke("run", str(book), "--json", str(folder / "run.json"), "--quiet")
    assert ran.exit_code == 0, ran.output
    asked = invoke("test", str(original), "--outcome", "Wait minutes", "--by", "Site", "--json", "-")
    assert asked.exit_code == 0, asked.output
    return {
        "folder": folder,
        "original": original,
        "planned": planned_copy,
        "edited": edited,
        "book": book,
        "run": json.loads((folder / "run.json").read_text(encoding="utf-8")),
        "test": json.loads(asked.stdout),
        "plan_output": planned.output,
    }


class TestPlanAndEdit:
    def test_plan_lists_every_column_without_roles(self, journey) -> None:
        """A fresh plan lists the four table columns, marks no role and tells the user what to do next."""
        rows = table_records(sheet_rows(journey["planned"], tool_sheet_name(journey["planned"], "roles")), "Column")
        assert [r["Column"] for r in rows] == ["Site", "Visit date", "Wait minutes", "Follow-up"]
        assert {r["Role"] for r in rows} == {"ignore"}
        assert "No roles chosen yet" in journey["plan_output"]

    def test_roles_sheet_counts_the_dirty_cells(self, journey) -> None:
        """The wait column shows 3 blank cells (NA, -, an empty cell) and 2 unreadable ones (<5, #N/A)."""
        rows = table_records(sheet_rows(journey["planned"], "statmargin roles"), "Column")
        wait = next(r for r in rows if r["Column"] == "Wait minutes")
        assert wait["Inferred type"] == "continuous"
        assert wait["Blank cells"] == 3
        assert wait["Unreadable cells"] == 2

    def test_edit_lands_in_the_role_column(self, journey) -> None:
        """The simulated edit wrote the two role words into the Role column, read back by an independent reader."""
        assert roles_cell(journey["edited"], "Wait minutes")[0] == column_letter(HEADERS.index("Role"))
        rows = table_records(sheet_rows(journey["edited"], "statmargin roles"), "Column")
        roles = {r["Column"]: r["Role"] for r in rows}
        assert roles == {"Site": "compare by", "Visit date": "ignore", "Wait minutes": "outcome", "Follow-up": "ignore"}


class TestResultsMatchTheOneQuestionCommand:
    def _row(self, journey) -> dict[str, Any]:
        rows = [r for r in results_records(journey["book"]) if r["Outcome"] == "Wait minutes"]
        assert len(rows) == 1
        return rows[0]

    def test_one_analysis_each_way(self, journey) -> None:
        """The run and the one-question command both did exactly one analysis: Wait minutes by Site."""
        assert len(journey["run"]["analyses"]) == 1
        assert len(journey["test"]["analyses"]) == 1
        run, asked = journey["run"]["analyses"][0], journey["test"]["analyses"][0]
        assert (run["outcome"], run["exposure"], run["test"]) == (asked["outcome"], asked["exposure"], asked["test"])
        assert self._row(journey)["Compared by / against"] == "Site"

    def test_sheet_numbers_equal_json_to_full_precision(self, journey) -> None:
        """Statistic, p, adjusted p, estimate and effect with CIs on the sheet equal the JSON exactly."""
        row, asked = self._row(journey), journey["test"]["analyses"][0]
        assert row["Statistic value"] == asked["statistic"]
        assert row["p"] == asked["p_value"]
        assert row["Adjusted p"] == asked["p_adjusted"]
        assert row["n used"] == asked["n"]
        assert row["n excluded"] == asked["n_excluded"]
        assert row["Estimate value"] == asked["estimate"]["value"]
        for key, header in (("value", "Effect value"), ("ci_low", "Effect CI low"), ("ci_high", "Effect CI high")):
            assert row[header] == asked["effect"][key]
        for key, header in (("ci_low", "CI low"), ("ci_high", "CI high")):
            expected = asked["estimate"][key]
            assert row[header] == ("" if expected is None else expected)

    def test_df_matches(self, journey) -> None:
        """The df cell holds the test's degrees of freedom (two numbers for an F test, shown as text)."""
        row, asked = self._row(journey), journey["test"]["analyses"][0]
        df = asked["df"]
        if isinstance(df, list):
            shown = [float(x) for x in re.split(r"[,;]\s*", str(row["df"]))]
            # The sheet shows a pair of df as text with 6 significant digits (sheets.results._df_cell).
            assert shown == pytest.approx(df, rel=1e-5)
        else:
            assert row["df"] == df

    def test_followups_match(self, journey) -> None:
        """Each Tukey follow-up row carries the JSON's difference, CI and adjusted p exactly."""
        rows = results_records(journey["book"])
        followups = journey["test"]["analyses"][0]["followups"]
        assert len(followups) == 3  # three sites, three pairs
        for fu in followups:
            hits = [r for r in rows if str(r["Question"]).startswith("  ")
                    and all(level in r["Question"] for level in fu["levels"])]
            assert len(hits) == 1, fu["levels"]
            hit = hits[0]
            assert hit["Adjusted p"] == fu["p_adjusted"]
            assert hit["Statistic value"] == fu["statistic"]
            assert hit["Estimate value"] == fu["estimate"]["value"]
            assert hit["CI low"] == fu["estimate"]["ci_low"]
            assert hit["CI high"] == fu["estimate"]["ci_high"]

    def test_run_json_equals_test_json(self, journey) -> None:
        """The run's own --json record has the same numbers as the one-question command's."""
        run, asked = journey["run"]["analyses"][0], journey["test"]["analyses"][0]
        for key in ("statistic", "df", "p_value", "p_adjusted", "n", "n_excluded", "estimate", "effect"):
            assert run[key] == asked[key], key


class TestUserContentUntouched:
    def test_original_parts_are_byte_identical(self, journey) -> None:
        """Every part of the hand-made workbook except the five package parts keeps its compressed bytes."""
        before, after = entries(journey["original"]), entries(journey["book"])
        checked = 0
        for name, entry in before.items():
            if name in ALLOWED_TO_CHANGE:
                continue
            assert name in after, f"{name} disappeared"
            assert after[name].raw == entry.raw, f"{name} compressed bytes changed"
            checked += 1
        # data sheet, table, chart, drawing and their rels, shared strings, theme, core properties
        assert checked >= 8

    def test_data_sheet_xml_identical(self, journey) -> None:
        """The data sheet's XML (with the dirty cells) is the same before and after the run."""
        part = sheet_part(journey["original"], NEWCOMER_SHEET)
        assert part == sheet_part(journey["book"], NEWCOMER_SHEET)
        assert entries(journey["book"])[part].data() == entries(journey["original"])[part].data()

    def test_roles_sheet_kept_as_edited(self, journey) -> None:
        """The run does not rewrite the user's roles sheet."""
        part = sheet_part(journey["edited"], "statmargin roles")
        assert entries(journey["book"])[part].raw == entries(journey["edited"])[part].raw

    def test_chart_and_table_still_present(self, journey) -> None:
        """The user's chart and Excel table parts are still in the package after the run."""
        names = set(entries(journey["book"]))
        assert any(n.startswith("xl/charts/chart") for n in names)
        assert any(n.startswith("xl/tables/table") for n in names)


class TestDataNotes:
    def test_every_planted_cell_is_listed(self, journey) -> None:
        """Each dirty wait cell appears on the data-notes sheet by address, with what was wrong with it."""
        book = journey["book"]
        notes = table_records(sheet_rows(book, tool_sheet_name(book, "notes")), "Sheet")
        by_cell = {r["Cell"]: r for r in notes if r["Sheet"] == NEWCOMER_SHEET}
        for address, (value, kind) in DIRTY_WAIT_CELLS.items():
            assert address in by_cell, address
            assert by_cell[address]["What was wrong"] == kind
            assert by_cell[address]["Value"] == value
            assert by_cell[address]["Column"] == "Wait minutes"
        assert by_cell["C13"]["Action"] == "converted to 52"

    def test_blank_cell_counted_not_listed(self, journey) -> None:
        """A truly blank cell is counted as excluded (n excluded = 5) but, by design, is not a data note."""
        notes = table_records(sheet_rows(journey["book"], "statmargin data notes"), "Sheet")
        assert BLANK_WAIT_CELL not in {r["Cell"] for r in notes}
        # 36 rows: 30 numbers + "52" converted = 31 used; NA, -, <5, #N/A, blank left out.
        assert journey["run"]["analyses"][0]["n"] == 31
        assert journey["run"]["analyses"][0]["n_excluded"] == 5


class TestReruns:
    def test_two_reruns_keep_one_copy_of_each_sheet(self, journey, tmp_path) -> None:
        """Running twice more leaves one sheet of each tool kind and three run-log rows."""
        book = tmp_path / "again.xlsx"
        shutil.copyfile(journey["book"], book)
        for _ in range(2):
            assert invoke("run", str(book), "--quiet").exit_code == 0
        kinds = list(FileSource(book).tool_sheets().values())
        assert sorted(kinds) == sorted(TOOL_KINDS)
        names = FileSource(book).sheet_names()
        assert len([n for n in names if n.startswith("statmargin")]) == len(TOOL_KINDS)
        assert names[0] == NEWCOMER_SHEET
        log = table_records(sheet_rows(book, tool_sheet_name(book, "log")), "Time (UTC)")
        assert len(log) == 3
        assert all(r["Analyses run"] == 1 and r["Rows read"] == 36 for r in log)

    def test_rerun_gives_same_numbers(self, journey, tmp_path) -> None:
        """A re-run on unchanged data writes the same statistic and p-value (nothing accumulates)."""
        book = tmp_path / "again.xlsx"
        shutil.copyfile(journey["book"], book)
        assert invoke("run", str(book), "--quiet").exit_code == 0
        first = [r for r in results_records(journey["book"]) if r["Outcome"] == "Wait minutes"][0]
        again = [r for r in results_records(book) if r["Outcome"] == "Wait minutes"]
        assert len(again) == 1
        assert again[0]["p"] == first["p"] and again[0]["Statistic value"] == first["Statistic value"]


class TestOutCopy:
    def test_out_leaves_input_byte_identical(self, journey, tmp_path) -> None:
        """--out writes the results into a new file and leaves the edited workbook's bytes as they were."""
        book = tmp_path / "edited.xlsx"
        shutil.copyfile(journey["edited"], book)
        before = sha(book)
        copy = tmp_path / "copy.xlsx"
        result = invoke("run", str(book), "--out", str(copy), "--quiet")
        assert result.exit_code == 0, result.output
        assert sha(book) == before
        assert sorted(FileSource(copy).tool_sheets().values()) == sorted(TOOL_KINDS)
        assert sorted(FileSource(book).tool_sheets().values()) == ["roles"]


@pytest.fixture(scope="module")
def libreoffice_saved(journey, tmp_path_factory) -> Path:
    """The edited workbook after LibreOffice opened and re-saved it as .xlsx (converted once per module)."""
    program = find_soffice()
    if program is None:
        return None  # the test asks require_soffice() for the skip-or-fail decision
    outdir = tmp_path_factory.mktemp("lo-saved")
    return convert(journey["edited"], "xlsx", outdir, soffice=program)


class TestLibreOfficeRoundTrip:
    def test_run_after_libreoffice_save(self, libreoffice_saved, journey, tmp_path) -> None:
        """After LibreOffice re-saves the planned and edited workbook, run finds the roles and gives the same result."""
        require_soffice()
        book = tmp_path / "visits.xlsx"
        shutil.copyfile(libreoffice_saved, book)
        assert "roles" in FileSource(book).tool_sheets().values()
        result = invoke("run", str(book), "--json", "-", "--quiet")
        assert result.exit_code == 0, result.output
        analyses = json.loads(result.stdout)["analyses"]
        assert [(a["outcome"], a["exposure"]) for a in analyses] == [("Wait minutes", "Site")]
        asked = journey["test"]["analyses"][0]
        assert analyses[0]["n"] == asked["n"]
        assert analyses[0]["statistic"] == pytest.approx(asked["statistic"], rel=1e-12)
        assert analyses[0]["p_value"] == pytest.approx(asked["p_value"], rel=1e-12)


@pytest.fixture(scope="module")
def libreoffice_saved_results(journey, tmp_path_factory) -> Path:
    """The workbook after a run, re-saved by LibreOffice (a user opening the results and saving)."""
    program = find_soffice()
    if program is None:
        return None
    outdir = tmp_path_factory.mktemp("lo-results")
    return convert(journey["book"], "xlsx", outdir, soffice=program)


def test_rerun_after_libreoffice_saved_the_results(libreoffice_saved_results, tmp_path) -> None:
    """After LibreOffice re-saves a workbook with results, a new run replaces the tool sheets and logs a second row."""
    require_soffice()
    book = tmp_path / "visits.xlsx"
    shutil.copyfile(libreoffice_saved_results, book)
    result = invoke("run", str(book), "--quiet")
    assert result.exit_code == 0, result.stderr
    assert sorted(FileSource(book).tool_sheets().values()) == sorted(TOOL_KINDS)
    assert len([n for n in FileSource(book).sheet_names() if n.startswith("statmargin")]) == len(TOOL_KINDS)
    log = table_records(sheet_rows(book, tool_sheet_name(book, "log")), "Time (UTC)")
    assert len(log) == 2
