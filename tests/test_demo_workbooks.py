"""The demo workbooks and the template: reproducible, shipped unchanged, and untidy as designed.

The expected properties below are the design of our own invented scenarios (see
demo_workbooks/README.md), not outside reference values: these tests check that the
generator plants what the README promises.
"""

from __future__ import annotations

import datetime as dt
import importlib.util
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pytest
from python_calamine import CalamineWorkbook
from scipy.stats import skew

REPO_ROOT = Path(__file__).resolve().parent.parent
SCRIPT = REPO_ROOT / "demo_workbooks" / "make_demo_workbooks.py"
PACKAGE_DATA = REPO_ROOT / "src" / "statmargin" / "data"
WORKBOOK_FILES = [
    "inspections_demo.xlsx",
    "outreach_demo.xlsx",
    "riverbend_visits_demo.xlsx",
    "riverbend_july_rows.xlsx",
    "statmargin_template.xlsx",
]
# Sheets the generator writes itself (a roles sheet may be added later by the pipeline).
DATA_SHEETS = {
    "inspections_demo.xlsx": ["Inspections", "Notes"],
    "outreach_demo.xlsx": ["Participants", "About"],
    "riverbend_visits_demo.xlsx": ["Visits", "About"],
    "riverbend_july_rows.xlsx": ["July rows", "About"],
    "statmargin_template.xlsx": ["Data"],
}


def _load_generator() -> Any:
    """Import the generator script as a module (it lives outside the package)."""
    spec = importlib.util.spec_from_file_location("make_demo_workbooks", SCRIPT)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


generator = _load_generator()


def _sheet_values(path: Path) -> dict[str, list[list[Any]]]:
    """Every sheet's cell values, as read by python-calamine."""
    workbook = CalamineWorkbook.from_path(str(path))
    return {name: workbook.get_sheet_by_name(name).to_python() for name in workbook.sheet_names}


def _rows_as_dicts(path: Path, sheet: str) -> list[dict[str, Any]]:
    """Data rows keyed by header, from openpyxl's cached values (None for empty cells)."""
    workbook = openpyxl.load_workbook(path, data_only=True)
    rows = list(workbook[sheet].iter_rows(values_only=True))
    header = [str(h) for h in rows[0]]
    return [dict(zip(header, row, strict=True)) for row in rows[1:]]


def _numbers(values: list[Any]) -> np.ndarray:
    """The values that are real numbers (not text, blanks or errors)."""
    return np.array([v for v in values if isinstance(v, int | float) and not isinstance(v, bool)], dtype=float)


@pytest.fixture(scope="module")
def built(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    """One fresh build of every workbook into a temporary folder."""
    return generator.build_all(tmp_path_factory.mktemp("first"))


@pytest.fixture(scope="module")
def inspections(built: dict[str, Path]) -> list[dict[str, Any]]:
    """The inspection rows of the fresh build."""
    return _rows_as_dicts(built["inspections_demo.xlsx"], "Inspections")


@pytest.fixture(scope="module")
def participants(built: dict[str, Path]) -> list[dict[str, Any]]:
    """The outreach rows of the fresh build."""
    return _rows_as_dicts(built["outreach_demo.xlsx"], "Participants")


class TestReproducible:
    def test_two_builds_have_equal_cell_values(self, built: dict[str, Path], tmp_path: Path) -> None:
        """Building twice from the fixed seed gives the same cell values on every sheet."""
        second = generator.build_all(tmp_path)
        for name in WORKBOOK_FILES:
            assert _sheet_values(built[name]) == _sheet_values(second[name]), name

    def test_two_builds_have_equal_bytes(self, built: dict[str, Path], tmp_path: Path) -> None:
        """With the fixed document date the files themselves are byte-identical."""
        second = generator.build_all(tmp_path)
        for name in WORKBOOK_FILES:
            assert built[name].read_bytes() == second[name].read_bytes(), name

    def test_template_folder_is_honoured(self, tmp_path: Path) -> None:
        """The template goes to its own folder when one is given, and the demos do not."""
        paths = generator.build_all(tmp_path / "demos", tmp_path / "templates")
        assert paths["statmargin_template.xlsx"] == tmp_path / "templates" / "statmargin_template.xlsx"
        assert sorted(p.name for p in (tmp_path / "demos").iterdir()) == [
            "inspections_demo.xlsx", "outreach_demo.xlsx", "riverbend_july_rows.xlsx", "riverbend_visits_demo.xlsx"
        ]


class TestShippedCopies:
    @pytest.mark.parametrize("name", WORKBOOK_FILES)
    def test_packaged_copy_equals_repo_copy(self, name: str) -> None:
        """The workbook shipped in the package has the same cell values as the repository copy."""
        folder = "templates" if name == "statmargin_template.xlsx" else "demo_workbooks"
        repo_copy = REPO_ROOT / folder / name
        assert repo_copy.is_file() and (PACKAGE_DATA / name).is_file()
        assert _sheet_values(PACKAGE_DATA / name) == _sheet_values(repo_copy)

    @pytest.mark.parametrize("name", WORKBOOK_FILES)
    def test_repo_copy_is_current(self, name: str, built: dict[str, Path]) -> None:
        """The committed workbook's data sheets match what the script writes now."""
        folder = "templates" if name == "statmargin_template.xlsx" else "demo_workbooks"
        repo_values = _sheet_values(REPO_ROOT / folder / name)
        fresh_values = _sheet_values(built[name])
        for sheet in DATA_SHEETS[name]:
            assert repo_values[sheet] == fresh_values[sheet], f"{name}: {sheet}"


class TestInspections:
    def test_invented_line_is_on_the_notes_sheet_and_the_data_sheet(self, built: dict[str, Path]) -> None:
        """The workbook says its data are invented, on the Notes sheet and in a comment on the data."""
        workbook = openpyxl.load_workbook(built["inspections_demo.xlsx"])
        notes = [row[0] for row in workbook["Notes"].iter_rows(values_only=True)]
        assert "All data in this workbook are invented for demonstration." in notes
        assert workbook["Inspections"]["A1"].comment.text == "All data in this workbook are invented for demonstration."

    def test_excel_table_covers_the_data(self, built: dict[str, Path], inspections: list[dict[str, Any]]) -> None:
        """An Excel table spans the header and all 600 inspection rows."""
        sheet = openpyxl.load_workbook(built["inspections_demo.xlsx"])["Inspections"]
        assert dict(sheet.tables.items()) == {"InspectionLog": "A1:I601"}
        assert len(inspections) == 600

    def test_chart_sits_beside_the_data(self, built: dict[str, Path]) -> None:
        """A native column chart is on the data sheet and its summary formulas cache the district counts."""
        workbook = openpyxl.load_workbook(built["inspections_demo.xlsx"], data_only=True)
        charts = workbook["Inspections"]._charts
        assert len(charts) == 1 and charts[0].type == "col"
        counts = {row[0]: row[1] for row in workbook["Notes"].iter_rows(min_row=10, max_row=14, values_only=True)}
        assert counts["Harbor"] == 6
        assert sum(counts.values()) == 599  # every row but the one blank district

    def test_harbor_is_a_small_district(self, inspections: list[dict[str, Any]]) -> None:
        """Harbor has fewer than 10 inspections, far fewer than the other districts."""
        sizes = {d: sum(1 for r in inspections if r["District"] == d) for d in ["North", "South", "East", "West", "Harbor"]}
        assert 0 < sizes["Harbor"] < 10
        assert min(sizes[d] for d in ["North", "South", "East", "West"]) > 100

    def test_inspection_time_is_right_skewed(self, inspections: list[dict[str, Any]]) -> None:
        """Inspection times have sample skewness above 1 (lognormal by design)."""
        minutes = _numbers([r["Inspection time (minutes)"] for r in inspections])
        assert skew(minutes) > 1.0

    def test_inspection_time_is_longer_in_east(self, inspections: list[dict[str, Any]]) -> None:
        """The East district's median inspection time exceeds every other main district's."""
        medians = {
            d: np.median(_numbers([r["Inspection time (minutes)"] for r in inspections if r["District"] == d]))
            for d in ["North", "South", "East", "West"]
        }
        assert medians["East"] > max(v for d, v in medians.items() if d != "East")

    def test_scores_show_a_ceiling_and_a_low_district(self, inspections: list[dict[str, Any]]) -> None:
        """Scores stay within 0-100, many sit at 95 or above, and South has the lowest median."""
        scores = _numbers([r["Score"] for r in inspections])
        assert scores.min() >= 0 and scores.max() == 100
        assert np.mean(scores >= 95) > 0.3
        assert skew(scores) < -1.0
        medians = {d: np.median(_numbers([r["Score"] for r in inspections if r["District"] == d])) for d in ["North", "South", "East", "West"]}
        assert medians["South"] == min(medians.values())

    def test_fail_share_is_highest_for_food_trucks(self, inspections: list[dict[str, Any]]) -> None:
        """Food trucks fail more often than any other establishment type."""
        shares = {}
        for kind in ["Restaurant", "Cafe", "Food truck", "Caterer"]:
            results = [r["Result"] for r in inspections if r["Establishment type"] == kind]
            shares[kind] = results.count("Fail") / len(results)
        assert shares["Food truck"] == max(shares.values())

    def test_months_are_twelve_first_days(self, inspections: list[dict[str, Any]]) -> None:
        """Month holds twelve distinct first-of-month dates in 2025."""
        months = {r["Month"] for r in inspections}
        assert months == {dt.datetime(2025, m, 1) for m in range(1, 13)}

    def test_dirty_cells_are_planted(self, built: dict[str, Path]) -> None:
        """The README's dirty cells are where it says: codes, text numbers, a suppressed count, an error and a blank."""
        cached = openpyxl.load_workbook(built["inspections_demo.xlsx"], data_only=True)["Inspections"]
        formulas = openpyxl.load_workbook(built["inspections_demo.xlsx"])["Inspections"]
        expected_text = {"E19": "NA", "E90": ".", "E145": "38", "E262": " 41 ", "E404": "-", "F37": "-",
                         "F313": "52 ", "F479": "NA", "H68": "<5", "H352": ".", "G514": "NA"}
        for address, value in expected_text.items():
            assert cached[address].value == value and cached[address].data_type == "s", address
        assert formulas["F201"].value == "=NA()"
        assert cached["F201"].value == "#N/A" and cached["F201"].data_type == "e"
        assert cached["C231"].value is None


class TestOutreach:
    def test_invented_line_is_on_the_about_sheet_and_the_data_sheet(self, built: dict[str, Path]) -> None:
        """The workbook says its data are invented, on the About sheet and in a comment on the data."""
        workbook = openpyxl.load_workbook(built["outreach_demo.xlsx"])
        about = [row[0] for row in workbook["About"].iter_rows(values_only=True)]
        assert "All data in this workbook are invented for demonstration." in about
        assert workbook["Participants"]["A1"].comment.text == "All data in this workbook are invented for demonstration."

    def test_five_sites_of_unequal_size(self, participants: list[dict[str, Any]]) -> None:
        """There are 220 participants at five sites, no two sites the same size."""
        sizes = {}
        for r in participants:
            sizes[r["Site"]] = sizes.get(r["Site"], 0) + 1
        assert len(participants) == 220
        assert len(sizes) == 5
        assert len(set(sizes.values())) == 5

    def test_incomplete_pairs_are_present(self, participants: list[dict[str, Any]]) -> None:
        """Some participants have a systolic before but none after, and likewise for smoking."""
        systolic_unpaired = [r for r in participants if isinstance(r["Systolic before (mmHg)"], int | float) and r["Systolic after (mmHg)"] is None]
        smoking_unpaired = [r for r in participants if r["Smoker before"] in ("Yes", "No") and r["Smoker after"] is None]
        assert 5 <= len(systolic_unpaired) <= 20
        assert 5 <= len(smoking_unpaired) <= 20

    def test_systolic_drops_modestly(self, participants: list[dict[str, Any]]) -> None:
        """Among complete pairs the mean drop is modest, between 2 and 10 mmHg."""
        drops = _numbers([
            r["Systolic before (mmHg)"] - r["Systolic after (mmHg)"]
            for r in participants
            if isinstance(r["Systolic before (mmHg)"], int | float) and isinstance(r["Systolic after (mmHg)"], int | float)
        ])
        assert 2.0 < drops.mean() < 10.0

    def test_smokers_mostly_quit_rather_than_start(self, participants: list[dict[str, Any]]) -> None:
        """More smokers quit than non-smokers start, and both changes occur."""
        quit_ = sum(1 for r in participants if r["Smoker before"] == "Yes" and r["Smoker after"] == "No")
        start = sum(1 for r in participants if r["Smoker before"] == "No" and r["Smoker after"] == "Yes")
        assert quit_ > start > 0

    def test_one_site_waits_longer(self, participants: list[dict[str, Any]]) -> None:
        """Dunmere Cross has the longest median days to first visit, and the days are right-skewed."""
        days = _numbers([r["Days to first visit"] for r in participants])
        assert skew(days) > 1.0
        medians = {
            site: np.median(_numbers([r["Days to first visit"] for r in participants if r["Site"] == site]))
            for site in {r["Site"] for r in participants}
        }
        assert max(medians, key=medians.get) == "Dunmere Cross"

    def test_satisfaction_uses_five_ordered_labels_heavy_at_the_top(self, participants: list[dict[str, Any]]) -> None:
        """Satisfaction uses only the five labels (or a blank), and Good or Very good is the majority."""
        labels = [r["Satisfaction"] for r in participants if r["Satisfaction"] is not None]
        assert set(labels) == {"Very poor", "Poor", "Fair", "Good", "Very good"}
        assert np.mean([label in ("Good", "Very good") for label in labels]) > 0.6

    def test_dirty_cells_are_planted(self, built: dict[str, Path]) -> None:
        """The README's dirty cells are where it says."""
        sheet = openpyxl.load_workbook(built["outreach_demo.xlsx"])["Participants"]
        for address, value in {"C14": "NA", "C205": ".", "D59": "152 ", "H103": "-", "H151": "n/a"}.items():
            assert sheet[address].value == value and sheet[address].data_type == "s", address
        assert sheet["I190"].value is None


class TestTemplate:
    def test_template_has_one_data_sheet_with_headers_and_a_note(self, built: dict[str, Path]) -> None:
        """The template holds only a Data sheet: example headers in row 1 and the layout note in row 2."""
        workbook = openpyxl.load_workbook(built["statmargin_template.xlsx"])
        assert workbook.sheetnames == ["Data"]
        rows = list(workbook["Data"].iter_rows(values_only=True))
        assert list(rows[0]) == ["Record ID", "Group", "Measure 1", "Measure 2", "Result"]
        assert "one row per record" in rows[1][0] and "one column per measure" in rows[1][0]
        assert len(rows) == 2
