"""The monthly refresh as a newcomer does it: run the demo, paste July's rows under June's, run again.

The demo workbook and July's rows ship with the package (invented data,
demo_workbooks/period_demo_data.py). The scenario is designed so that July's
same-day share (97 of 150) falls below the p chart's lower limit, the trend
across months drops below 0.05 and July against June points the other way from
June against May with a p-value below 0.05 (tests/test_period_demo.py checks the
numbers with the period functions themselves). Here the whole pipeline is run
from the command line, and the outside references are statsmodels' linear-by-
linear association test for the trend and SciPy's chi-square test for July
against June.
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from click.testing import CliRunner
from python_calamine import CalamineWorkbook
from scipy import stats

from script_loader import load_script
from statmargin.cli import main
from statmargin.io.file.source import FileSource
from statmargin.io.file.zipio import read_zip
from statmargin.jobs.demo import packaged_file
from statmargin.jobs.history import KEEP_RUNS
from workbook_edit import append_rows, results_records, sheet_rows, tool_sheet_name

demo = load_script("demo_workbooks/period_demo_data.py")
DEMO = "riverbend_visits_demo.xlsx"
JULY = "riverbend_july_rows.xlsx"
SAME_DAY = "Vaccinated same day"


def invoke(*args: str) -> Any:
    result = CliRunner().invoke(main, list(args), catch_exceptions=False)
    assert result.exit_code == 0, result.stderr
    return result


def july_rows() -> list[list[Any]]:
    """July's rows as a person copies them from the shipped rows workbook (dates as dates)."""
    rows = CalamineWorkbook.from_path(str(packaged_file(JULY))).get_sheet_by_name("July rows").to_python()
    assert rows[0] == demo.COLUMNS
    return [list(row) for row in rows[1:]]


def top_lines(path: Path) -> list[str]:
    """The results sheet's first column down to the answers heading."""
    rows = sheet_rows(path, tool_sheet_name(path, "results"))
    out = []
    for row in rows:
        if row and row[0] == "Answers":
            break
        out.append(str(row[0]) if row else "")
    return out


def answers(path: Path) -> list[list[Any]]:
    """The answer block's rows (question, what the data show, size and evidence)."""
    rows = sheet_rows(path, tool_sheet_name(path, "results"))
    at = next(i for i, row in enumerate(rows) if row and row[0] == "Question asked")
    out = []
    for row in rows[at + 1:]:
        if not row or not row[0]:
            break
        out.append(row[:3])
    return out


def periods_table(path: Path, question: str) -> list[dict[str, Any]]:
    """One block of the periods sheet, found by its question, as header -> value rows."""
    rows = sheet_rows(path, tool_sheet_name(path, "periods"))
    start = next(i for i, row in enumerate(rows) if row and row[0] == question)
    header = next(i for i in range(start, len(rows)) if rows[i] and rows[i][0] == "Period")
    names = [str(h) for h in rows[header]]
    out = []
    for row in rows[header + 1:]:
        if not row or not row[0]:
            break
        out.append({name: row[j] for j, name in enumerate(names) if name})
    return out


@pytest.fixture(scope="module")
def refreshed(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Any]:
    """The demo run as shipped (January to June), then again after pasting July's rows."""
    folder = tmp_path_factory.mktemp("refresh")
    book = folder / DEMO
    shutil.copyfile(packaged_file(DEMO), book)
    invoke("run", str(book), "--quiet", "--json", str(folder / "june.json"))
    june = folder / "june.xlsx"
    shutil.copyfile(book, june)
    first_new_row = append_rows(book, demo.SHEET, july_rows())
    terminal = invoke("run", str(book), "--quiet", "--json", str(folder / "july.json")).stdout
    july = folder / "july.xlsx"
    shutil.copyfile(book, july)
    return {
        "june": june, "july": july, "book": book, "first_new_row": first_new_row, "terminal": terminal,
        "june_json": json.loads((folder / "june.json").read_text()),
        "july_json": json.loads((folder / "july.json").read_text()),
    }


def test_first_run_says_it_is_the_first(refreshed: dict[str, Any]) -> None:
    """On the first run the top says the next refresh will report changes, and no flag is set."""
    lines = top_lines(refreshed["june"])
    assert "First run: the next refresh will say what changed since this one." in lines
    assert all(record["since_last_run"] is None for record in refreshed["june_json"]["analyses"])
    assert all(row.get("Since last run", "") == "" for row in results_records(refreshed["june"]))


def test_july_is_appended_below_june(refreshed: dict[str, Any]) -> None:
    """July's 150 rows sit right under June's, as the newcomer pasted them."""
    assert refreshed["first_new_row"] == 1 + sum(demo.MONTH_ROWS[m] for m in range(1, 7)) + 1
    assert refreshed["july_json"]["rows_read"] == sum(demo.MONTH_ROWS[m] for m in range(1, 8))


def test_top_of_the_sheet_names_what_changed_most_important_first(refreshed: dict[str, Any]) -> None:
    """The refresh opens on what changed: July against June reversed, the trend now below 0.05."""
    lines = top_lines(refreshed["july"])
    at = next(i for i, line in enumerate(lines) if line.startswith("What changed since the last run on "))
    assert lines[at].endswith(" UTC:")
    assert lines[at + 1:at + 3] == [
        "Direction reversed: Vaccinated same day = Yes, 2026-07 against 2026-06.",
        "Now below the significance level: Vaccinated same day = Yes, trend across months.",
    ]
    assert lines[at + 3] == ""  # nothing else changed: the waits and the team comparisons are as they were
    # The terminal says the same, for a user who runs from a terminal or a scheduled task.
    said = [line.strip() for line in refreshed["terminal"].splitlines()]
    assert lines[at] in said and lines[at + 1] in said and lines[at + 2] in said


def test_since_last_run_column_and_json(refreshed: dict[str, Any]) -> None:
    """Each question's flag: same-day over time reversed (its most important change), the others unchanged."""
    flags = {(r["outcome"], r["exposure"]): r["since_last_run"] for r in refreshed["july_json"]["analyses"]}
    assert flags == {
        (SAME_DAY, None): "direction_reversed",
        (SAME_DAY, "Team"): "unchanged",
        ("Wait (minutes)", None): "unchanged",
        ("Wait (minutes)", "Team"): "unchanged",
    }
    column = [row["Since last run"] for row in results_records(refreshed["july"]) if row["Since last run"]]
    assert column == ["direction reversed", "unchanged", "unchanged", "unchanged"]
    details = [row["Details"] for row in results_records(refreshed["july"]) if row["Since last run"]]
    assert details == ["series and chart", "shape checks", "series and chart", "shape checks"]


def test_answers_name_the_changed_question_first(refreshed: dict[str, Any]) -> None:
    """The answer block starts with same-day vaccination over time: July, its fall, the unusual month, the trend."""
    first = answers(refreshed["july"])[0]
    assert first[0] == "How has the share of Vaccinated same day = Yes changed month to month?"
    assert first[1].startswith(
        "Share with Vaccinated same day = Yes: 64.7% in 2026-07, down from 81.3% in 2026-06 (16.7 points, 95% CI "
    )
    assert "strong evidence of a change, p = 0.001)" in first[1]
    assert first[1].endswith("Unusual: 2026-07 (low; beyond a 3-sigma control limit, Western Electric rule 1).")
    assert first[2].startswith("Trend -1.6 percentage points a month (95% CI -2.9 to -0.3)")


def test_periods_sheet_shows_the_months_and_the_unusual_one(refreshed: dict[str, Any]) -> None:
    """Seven months with their n and share as designed; July flagged by rule 1 and below its lower limit."""
    table = periods_table(refreshed["july"], "How has the share of Vaccinated same day = Yes changed month to month?")
    assert [row["Period"] for row in table] == [f"2026-{m:02d}" for m in range(1, 8)]
    assert [row["n"] for row in table] == [demo.MONTH_ROWS[m] for m in range(1, 8)]
    for row, month in zip(table, range(1, 8), strict=True):
        assert row["Share Yes"] == pytest.approx(demo.MONTH_YES[month] / demo.MONTH_ROWS[month], rel=1e-12)
        assert row["CI low"] < row["Share Yes"] < row["CI high"]
    july = table[-1]
    assert july["Share Yes"] < july["Lower limit"]
    assert july["Unusual or notable"] == "low: beyond a 3-sigma control limit (Western Electric rule 1)"
    assert all(row.get("Unusual or notable", "") == "" for row in table[:-1])
    # The centre line is the share of January to June pooled: 708 of 900 (the scenario's design).
    assert july["Centre line"] == pytest.approx(708 / 900, rel=1e-12)


def test_trend_matches_statsmodels_linear_by_linear(refreshed: dict[str, Any]) -> None:
    """The Cochran-Armitage z squared times (N-1)/N is statsmodels' linear-by-linear M^2 (Agresti 2013, 3.4)."""
    from statsmodels.stats.contingency_tables import Table

    record = next(r for r in refreshed["july_json"]["analyses"] if r["outcome"] == SAME_DAY and r["exposure"] is None)
    yes = [demo.MONTH_YES[m] for m in range(1, 8)]
    n = [demo.MONTH_ROWS[m] for m in range(1, 8)]
    counts = np.array([[y, k - y] for y, k in zip(yes, n, strict=True)], dtype=float)
    m2 = Table(counts).test_ordinal_association(row_scores=np.arange(7.0), col_scores=np.array([1.0, 0.0]))
    total = sum(n)
    z = record["trend"]["statistic"]
    assert (total - 1) / total * z * z == pytest.approx(m2.zscore ** 2, rel=1e-9)
    assert np.sign(z) == np.sign(m2.zscore) == -1
    assert record["p_value"] == record["trend"]["p_value"] == pytest.approx(2 * stats.norm.sf(abs(z)), rel=1e-12)
    assert record["trend"]["test"] == "cochran_armitage" and record["trend"]["periods"] == 7
    assert record["trend"]["estimate"]["value"] < 0 < record["p_adjusted"] < 0.05


def test_july_against_june_is_the_design_tables_chi_square(refreshed: dict[str, Any]) -> None:
    """July against June: the 2 x 2 chi-square (no continuity correction), as SciPy computes it."""
    record = next(r for r in refreshed["july_json"]["analyses"] if r["outcome"] == SAME_DAY and r["exposure"] is None)
    [versus] = record["followups"]
    assert versus["test"] == "chi_square_independence" and versus["levels"] == ["2026-07", "2026-06"]
    table = [[97, 150 - 97], [122, 150 - 122]]
    assert versus["p_value"] == pytest.approx(stats.chi2_contingency(table, correction=False)[1], rel=1e-12)
    assert versus["estimate"]["value"] == pytest.approx(97 / 150 - 122 / 150, rel=1e-12)


def test_json_records_carry_the_series(refreshed: dict[str, Any]) -> None:
    """Whole-data records over time carry periods, trend and unusual; the others carry them as null."""
    for record in refreshed["july_json"]["analyses"]:
        over_time = record["exposure"] is None
        assert (record["periods"] is not None) is over_time
        assert (record["trend"] is not None) is over_time
        assert (record["unusual"] is not None) is over_time
    same_day = refreshed["july_json"]["analyses"][0]
    assert same_day["unusual"] == [{"period": "2026-07", "rule": "beyond_3_sigma"}]
    assert [p["period"] for p in same_day["periods"]] == [f"2026-{m:02d}" for m in range(1, 8)]
    assert same_day["periods"][-1]["n"] == 150 and not same_day["periods"][-1]["partial"]
    assert math.isclose(same_day["periods"][-1]["value"], 97 / 150)


def test_history_sheet_is_hidden_and_bounded(refreshed: dict[str, Any]) -> None:
    """The history sheet is marked hidden in the workbook part and holds the two runs' records."""
    path = refreshed["july"]
    name = tool_sheet_name(path, "history")
    assert name in FileSource(path).hidden_sheet_names()
    workbook = next(e for e in read_zip(path.read_bytes()) if e.name == "xl/workbook.xml").data().decode()
    assert f'<sheet name="{name}"' in workbook and 'state="hidden"' in workbook
    rows = sheet_rows(path, name)
    assert rows[0][:2] == ["run", "analysis"]
    assert len({row[0] for row in rows[1:]}) == 2 <= KEEP_RUNS


def test_a_refresh_without_new_rows_says_nothing_changed(refreshed: dict[str, Any], tmp_path: Path) -> None:
    """Running again on the same rows gives one line: nothing changed since the last run."""
    book = tmp_path / DEMO
    shutil.copyfile(refreshed["july"], book)
    invoke("run", str(book), "--quiet")
    lines = [line for line in top_lines(book) if line]
    assert lines[3].startswith("Nothing changed since the last run on ") and lines[3].endswith(" UTC.")
    assert not any(line.startswith("What changed") for line in lines)
