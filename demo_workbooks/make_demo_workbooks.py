"""Write statmargin's demo workbooks and its empty template, from one fixed seed.

Every number in these workbooks is invented for demonstration: the scenarios (a
county food-safety inspection log and a community blood-pressure outreach
program) are our own, and no real person, place or establishment is described.
The data are deliberately untidy (skewed times, scores piled up near the top of
the scale, missing and dirty cells, one very small group) so that the tool's
checks have something to find.

Run from the repository root::

    python demo_workbooks/make_demo_workbooks.py

It writes ``demo_workbooks/*.xlsx`` and ``templates/statmargin_template.xlsx``,
then asks ``statmargin.jobs.workbook.plan_workbook`` to add a roles sheet with preset
choices to each demo (skipped with a printed line if that step is unavailable),
and finally copies every workbook into ``src/statmargin/data/`` so they ship
with the package. The monthly-refresh demo (an invented outreach service's visit
log, January to June, and July's rows to paste under it) comes from
``period_demo_data.py``.
"""

from __future__ import annotations

import shutil
import sys
from collections.abc import Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

import numpy as np
import xlsxwriter

SEED = 20260104  # fixed so every run writes the same workbooks
FIXED_CREATED = datetime(2026, 1, 1)  # a fixed document date keeps the files reproducible
INVENTED_LINE = "All data in this workbook are invented for demonstration."

INSPECTIONS_FILE = "inspections_demo.xlsx"
OUTREACH_FILE = "outreach_demo.xlsx"
VISITS_FILE = "riverbend_visits_demo.xlsx"  # the monthly refresh: January to June
JULY_FILE = "riverbend_july_rows.xlsx"  # July's rows, to paste under them at the refresh
TEMPLATE_FILE = "statmargin_template.xlsx"

REPO_ROOT = Path(__file__).resolve().parent.parent
DEMO_DIR = REPO_ROOT / "demo_workbooks"
TEMPLATE_DIR = REPO_ROOT / "templates"
PACKAGE_DATA_DIR = REPO_ROOT / "src" / "statmargin" / "data"

# ---------------------------------------------------------------------------
# Inspections scenario (invented): one county, twelve months, five districts.
# ---------------------------------------------------------------------------

INSPECTION_COLUMNS = [
    "Inspection ID",
    "Month",
    "District",
    "Establishment type",
    "Score",
    "Inspection time (minutes)",
    "Result",
    "Critical violations",
    "Follow-up needed",
]
MAIN_DISTRICTS = ["North", "South", "East", "West"]
MAIN_DISTRICT_SHARES = [0.30, 0.25, 0.20, 0.25]
SMALL_DISTRICT = "Harbor"
SMALL_DISTRICT_ROWS = 6
INSPECTION_ROWS = 600
ESTABLISHMENT_TYPES = ["Restaurant", "Cafe", "Food truck", "Caterer"]
ESTABLISHMENT_SHARES = [0.45, 0.25, 0.18, 0.12]
# (Pass, Conditional, Fail) chances by establishment type: food trucks fail most.
RESULT_CHANCES = {
    "Restaurant": (0.70, 0.20, 0.10),
    "Cafe": (0.80, 0.14, 0.06),
    "Food truck": (0.58, 0.22, 0.20),
    "Caterer": (0.74, 0.18, 0.08),
}
RESULTS = ["Pass", "Conditional", "Fail"]
LOW_SCORE_DISTRICT = "South"
SLOW_DISTRICT = "East"

# ---------------------------------------------------------------------------
# Outreach scenario (invented): five sites with made-up place names.
# ---------------------------------------------------------------------------

OUTREACH_COLUMNS = [
    "Participant ID",
    "Site",
    "Age",
    "Systolic before (mmHg)",
    "Systolic after (mmHg)",
    "Smoker before",
    "Smoker after",
    "Days to first visit",
    "Satisfaction",
]
# Unequal group sizes on purpose; Dunmere Cross is the slow site for first visits.
SITE_SIZES = {
    "Alder Point": 64,
    "Brackenford": 52,
    "Copperleigh": 46,
    "Dunmere Cross": 34,
    "Elswick Green": 24,
}
SLOW_SITE = "Dunmere Cross"
SATISFACTION_LEVELS = ["Very poor", "Poor", "Fair", "Good", "Very good"]
SATISFACTION_CHANCES = [0.02, 0.05, 0.15, 0.37, 0.41]  # heavy at the top of the scale
SATISFACTION_CHANCES_LONG_WAIT = [0.06, 0.10, 0.24, 0.34, 0.26]  # after a wait over 30 days
LONG_WAIT_DAYS = 30
LOST_TO_FOLLOW_UP = 11  # participants with no "after" measurements (incomplete pairs)


def _new_workbook(path: Path, comments: str = INVENTED_LINE) -> xlsxwriter.Workbook:
    """A workbook with fixed document properties, so repeated runs give the same bytes."""
    workbook = xlsxwriter.Workbook(str(path))
    workbook.set_properties(
        {
            "title": path.stem,
            "author": "statmargin demo generator",
            "comments": comments,
            "created": FIXED_CREATED,
        }
    )
    return workbook


def _write_text_sheet(workbook: xlsxwriter.Workbook, name: str, lines: Sequence[str]) -> Any:
    """A sheet of plain paragraphs in column A, one per row."""
    sheet = workbook.add_worksheet(name)
    wrap = workbook.add_format({"text_wrap": True, "valign": "top"})
    bold = workbook.add_format({"bold": True})
    sheet.set_column(0, 0, 100)
    for row, line in enumerate(lines):
        sheet.write_string(row, 0, line, bold if row == 0 else wrap)
    return sheet


# ---------------------------------------------------------------------------
# Inspections
# ---------------------------------------------------------------------------


def inspection_records(rng: np.random.Generator) -> list[dict[str, Any]]:
    """Clean invented inspection rows, sorted by month; dirty cells are planted later.

    Parameters
    ----------
    rng : numpy.random.Generator
        The seeded generator; draws happen in a fixed order.

    Returns
    -------
    list of dict
        One dict per inspection, keyed by ``INSPECTION_COLUMNS``.

    Notes
    -----
    Scores are 100 minus a gamma-distributed deficit, so they pile up near 100
    (a ceiling effect); the deficit grows with a worse result and in the South.
    Inspection times are lognormal (right-skewed) and about a third longer in
    the East.
    """
    n_main = INSPECTION_ROWS - SMALL_DISTRICT_ROWS
    districts = list(rng.choice(MAIN_DISTRICTS, size=n_main, p=MAIN_DISTRICT_SHARES))
    districts += [SMALL_DISTRICT] * SMALL_DISTRICT_ROWS
    districts = [str(d) for d in rng.permutation(np.array(districts, dtype=object))]
    types = [str(t) for t in rng.choice(ESTABLISHMENT_TYPES, size=INSPECTION_ROWS, p=ESTABLISHMENT_SHARES)]
    months = rng.integers(1, 13, size=INSPECTION_ROWS)

    records: list[dict[str, Any]] = []
    for i in range(INSPECTION_ROWS):
        district, kind = districts[i], types[i]
        result = RESULTS[int(rng.choice(3, p=RESULT_CHANCES[kind]))]
        if result == "Pass":
            deficit = rng.gamma(1.3, 4.0)
        elif result == "Conditional":
            deficit = 12.0 + rng.gamma(2.0, 5.0)
        else:
            deficit = 25.0 + rng.gamma(2.0, 7.0)
        if district == LOW_SCORE_DISTRICT:
            deficit += rng.gamma(1.5, 3.0)
        score = int(np.clip(np.rint(100.0 - deficit), 0, 100))

        log_minutes = np.log(45.0) + rng.normal(0.0, 0.55)
        if district == SLOW_DISTRICT:
            log_minutes += np.log(1.35)
        if kind == "Caterer":
            log_minutes += np.log(1.15)
        minutes = int(max(10, np.rint(np.exp(log_minutes))))

        violation_mean = {"Pass": 0.3, "Conditional": 1.6, "Fail": 3.2}[result]
        violations = int(min(6, rng.poisson(violation_mean)))
        follow_up = "Yes" if result != "Pass" or rng.random() < 0.04 else "No"

        records.append(
            {
                "Month": datetime(2025, int(months[i]), 1),
                "District": district,
                "Establishment type": kind,
                "Score": score,
                "Inspection time (minutes)": minutes,
                "Result": result,
                "Critical violations": violations,
                "Follow-up needed": follow_up,
            }
        )
    # A log is kept in date order; the ID follows the order of entry.
    records.sort(key=lambda rec: rec["Month"])
    for i, rec in enumerate(records):
        rec["Inspection ID"] = f"INS-25-{i + 1:04d}"
    return records


# Dirty cells a reviewer can find: (0-based record index, column, what is written).
# A value of ("formula", "=NA()", "#N/A") is an Excel error with its cached value.
INSPECTION_DIRT: list[tuple[int, str, Any]] = [
    (17, "Score", "NA"),
    (88, "Score", "."),
    (143, "Score", "38"),  # a number stored as text
    (260, "Score", " 41 "),  # a number stored as text, with spaces
    (402, "Score", "-"),
    (35, "Inspection time (minutes)", "-"),
    (199, "Inspection time (minutes)", ("formula", "=NA()", "#N/A")),
    (311, "Inspection time (minutes)", "52 "),  # a number stored as text
    (477, "Inspection time (minutes)", "NA"),
    (66, "Critical violations", "<5"),  # a suppressed small count
    (350, "Critical violations", "."),
    (512, "Result", "NA"),
    (229, "District", None),  # one blank district
]


def _plant_inspection_dirt(records: list[dict[str, Any]]) -> None:
    """Replace a few clean values with the dirty cells listed in ``INSPECTION_DIRT``."""
    for index, column, value in INSPECTION_DIRT:
        if column == "District" and records[index]["District"] == SMALL_DISTRICT:
            raise RuntimeError("the blank district must not hide a Harbor row; pick another index")
        records[index][column] = value


def build_inspections(path: Path, rng: np.random.Generator) -> Path:
    """Write the invented inspection log workbook.

    Parameters
    ----------
    path : pathlib.Path
        Where to write the workbook (overwritten).
    rng : numpy.random.Generator
        The seeded generator.

    Returns
    -------
    pathlib.Path
        ``path``.

    Notes
    -----
    Sheet "Inspections" holds an Excel table (``InspectionLog``) over the data
    and a column chart of inspections per district; the chart reads a small
    summary range of COUNTIF formulas (with cached values) on the "Notes" sheet.
    """
    records = inspection_records(rng)
    _plant_inspection_dirt(records)

    workbook = _new_workbook(path)
    sheet = workbook.add_worksheet("Inspections")
    month_format = workbook.add_format({"num_format": "mmm yyyy"})
    n = len(records)

    for r, rec in enumerate(records, start=1):
        for c, column in enumerate(INSPECTION_COLUMNS):
            value = rec[column]
            if value is None:
                continue  # a truly empty cell
            if isinstance(value, tuple):
                _, formula, cached = value
                sheet.write_formula(r, c, formula, None, cached)
            elif isinstance(value, datetime):
                sheet.write_datetime(r, c, value, month_format)
            elif isinstance(value, str):
                sheet.write_string(r, c, value)  # never coerced: dirty text stays text
            else:
                sheet.write_number(r, c, value)

    sheet.add_table(
        0,
        0,
        n,
        len(INSPECTION_COLUMNS) - 1,
        {
            "name": "InspectionLog",
            "style": "Table Style Light 9",
            "columns": [{"header": h} for h in INSPECTION_COLUMNS],
        },
    )
    sheet.write_comment(0, 0, INVENTED_LINE, {"author": "statmargin demo"})
    sheet.freeze_panes(1, 0)
    for c, width in enumerate([14, 11, 11, 18, 8, 24, 12, 18, 16]):
        sheet.set_column(c, c, width)

    notes = _write_text_sheet(
        workbook,
        "Notes",
        [
            "About this workbook",
            INVENTED_LINE,
            "Scenario (invented): a county environmental health team logs every routine "
            "food-safety inspection for one year, one row per inspection.",
            "Districts are North, South, East, West and the small Harbor district (only a "
            "handful of inspections). Establishment types are Restaurant, Cafe, Food truck "
            "and Caterer.",
            "Score runs from 0 to 100 (higher is better); Inspection time is in minutes; "
            "Result is Pass, Conditional or Fail; Critical violations is a count.",
            "Some cells were left untidy on purpose (NA, -, ., numbers typed as text, a "
            "suppressed count, an error value and a blank) to show how they are reported.",
        ],
    )
    # Summary range for the chart: formulas with cached values, so the chart shows
    # numbers even before a spreadsheet program recalculates.
    first = 8
    label_format = workbook.add_format({"bold": True})
    notes.write_string(first, 0, "Inspections per district", label_format)
    notes.set_column(1, 1, 12)
    district_column = "C"
    districts = [*MAIN_DISTRICTS, SMALL_DISTRICT]
    for k, district in enumerate(districts, start=1):
        count = sum(1 for rec in records if rec["District"] == district)
        notes.write_string(first + k, 0, district)
        notes.write_formula(
            first + k,
            1,
            f'=COUNTIF(Inspections!${district_column}$2:${district_column}${n + 1},"{district}")',
            None,
            count,
        )

    chart = workbook.add_chart({"type": "column"})
    chart.add_series(
        {
            "name": "Inspections",
            "categories": ["Notes", first + 1, 0, first + len(districts), 0],
            "values": ["Notes", first + 1, 1, first + len(districts), 1],
            "data_labels": {"value": True},
        }
    )
    chart.set_title({"name": "Inspections per district"})
    chart.set_legend({"none": True})
    chart.set_y_axis({"name": "Inspections"})
    sheet.insert_chart("K2", chart)
    workbook.close()
    return path


# ---------------------------------------------------------------------------
# Outreach
# ---------------------------------------------------------------------------


def outreach_records(rng: np.random.Generator) -> list[dict[str, Any]]:
    """Clean invented outreach participants; dirty cells are planted later.

    Parameters
    ----------
    rng : numpy.random.Generator
        The seeded generator; draws happen in a fixed order.

    Returns
    -------
    list of dict
        One dict per participant, keyed by ``OUTREACH_COLUMNS``.

    Notes
    -----
    Systolic after is systolic before minus a modest drop (about 6 mmHg) with
    noise; a few participants were lost to follow-up and have no "after"
    values. Some smokers quit and a few non-smokers start. Days to first visit
    is gamma-distributed (right-skewed) and about twice as long at Dunmere Cross.
    Satisfaction is an ordinal label, heavy at the top of the scale and a
    little lower after a long wait.
    """
    sites = [site for site, size in SITE_SIZES.items() for _ in range(size)]
    sites = [str(s) for s in rng.permutation(np.array(sites, dtype=object))]
    n = len(sites)
    lost = set(int(i) for i in rng.choice(n, size=LOST_TO_FOLLOW_UP, replace=False))

    records: list[dict[str, Any]] = []
    for i, site in enumerate(sites):
        age = int(np.clip(np.rint(rng.normal(58.0, 11.0)), 35, 88))
        before = int(np.rint(rng.normal(148.0, 16.0)))
        after = int(np.rint(before - 6.0 + rng.normal(0.0, 9.0)))
        smoker_before = rng.random() < 0.22
        smoker_after = (rng.random() > 0.25) if smoker_before else (rng.random() < 0.02)
        days = rng.gamma(1.6, 9.0) * (2.0 if site == SLOW_SITE else 1.0)
        chances = SATISFACTION_CHANCES_LONG_WAIT if days > LONG_WAIT_DAYS else SATISFACTION_CHANCES
        satisfaction = SATISFACTION_LEVELS[int(rng.choice(5, p=chances))]
        records.append(
            {
                "Participant ID": f"P-{i + 1:03d}",
                "Site": site,
                "Age": age,
                "Systolic before (mmHg)": before,
                "Systolic after (mmHg)": None if i in lost else after,
                "Smoker before": "Yes" if smoker_before else "No",
                "Smoker after": None if i in lost else ("Yes" if smoker_after else "No"),
                "Days to first visit": int(np.rint(days)),
                "Satisfaction": satisfaction,
            }
        )
    return records


OUTREACH_DIRT: list[tuple[int, str, Any]] = [
    (12, "Age", "NA"),
    (57, "Systolic before (mmHg)", "152 "),  # a number stored as text
    (101, "Days to first visit", "-"),
    (149, "Days to first visit", "n/a"),
    (188, "Satisfaction", None),  # not answered
    (203, "Age", "."),
]


def build_outreach(path: Path, rng: np.random.Generator) -> Path:
    """Write the invented blood-pressure outreach workbook.

    Parameters
    ----------
    path : pathlib.Path
        Where to write the workbook (overwritten).
    rng : numpy.random.Generator
        The seeded generator.

    Returns
    -------
    pathlib.Path
        ``path``.

    Notes
    -----
    Sheet "Participants" is a plain range (no Excel table), one row per
    participant, in wide form: the before and after measurements of the same
    person sit side by side. Sheet "About" describes the invented scenario.
    """
    records = outreach_records(rng)
    for index, column, value in OUTREACH_DIRT:
        records[index][column] = value

    workbook = _new_workbook(path)
    sheet = workbook.add_worksheet("Participants")
    header_format = workbook.add_format({"bold": True, "bottom": 1, "text_wrap": True})
    for c, column in enumerate(OUTREACH_COLUMNS):
        sheet.write_string(0, c, column, header_format)
    for r, rec in enumerate(records, start=1):
        for c, column in enumerate(OUTREACH_COLUMNS):
            value = rec[column]
            if value is None:
                continue
            if isinstance(value, str):
                sheet.write_string(r, c, value)
            else:
                sheet.write_number(r, c, value)
    sheet.write_comment(0, 0, INVENTED_LINE, {"author": "statmargin demo"})
    sheet.freeze_panes(1, 0)
    for c, width in enumerate([14, 15, 7, 14, 14, 13, 13, 12, 12]):
        sheet.set_column(c, c, width)

    _write_text_sheet(
        workbook,
        "About",
        [
            "About this workbook",
            INVENTED_LINE,
            "Scenario (invented): a community blood-pressure outreach program runs at five "
            "sites with made-up names. Each participant has one row.",
            "Systolic pressure (mmHg) and smoking were recorded at enrolment and again at "
            "follow-up; a few participants were not seen again, so their 'after' cells are "
            "empty (incomplete pairs).",
            "Days to first visit counts the days from referral to the first outreach visit. "
            "Satisfaction is an ordered label from Very poor to Very good.",
            "Some cells were left untidy on purpose (NA, -, n/a, ., a number typed as text "
            "and a blank answer) to show how they are reported.",
        ],
    )
    workbook.close()
    return path


# ---------------------------------------------------------------------------
# Template
# ---------------------------------------------------------------------------

TEMPLATE_HEADERS = ["Record ID", "Group", "Measure 1", "Measure 2", "Result"]
TEMPLATE_NOTE = (
    "Replace these example headers with your own: one row per record, one column per "
    "measure, headers in the first row. Delete this note row before adding data."
)


def build_template(path: Path) -> Path:
    """Write the empty starting workbook: a "Data" sheet with example headers and a note row.

    Parameters
    ----------
    path : pathlib.Path
        Where to write the workbook (overwritten).

    Returns
    -------
    pathlib.Path
        ``path``.

    Notes
    -----
    The roles sheet is not written here; ``statmargin plan`` adds it once the
    user's data are in place.
    """
    workbook = _new_workbook(path, comments="Empty starting workbook for statmargin.")
    sheet = workbook.add_worksheet("Data")
    header_format = workbook.add_format({"italic": True, "font_color": "#7F7F7F", "bottom": 1})
    note_format = workbook.add_format({"italic": True, "font_color": "#7F7F7F", "text_wrap": False})
    for c, header in enumerate(TEMPLATE_HEADERS):
        sheet.write_string(0, c, header, header_format)
    sheet.write_string(1, 0, TEMPLATE_NOTE, note_format)
    sheet.set_column(0, len(TEMPLATE_HEADERS) - 1, 14)
    sheet.freeze_panes(1, 0)
    workbook.close()
    return path


# ---------------------------------------------------------------------------
# Everything
# ---------------------------------------------------------------------------


def build_all(folder: Path | str, template_folder: Path | str | None = None) -> dict[str, Path]:
    """Write both demo workbooks and the template, from the fixed seed.

    Parameters
    ----------
    folder : path-like
        Folder for the demo workbooks (created if missing).
    template_folder : path-like, optional
        Folder for the template; defaults to ``folder``.

    Returns
    -------
    dict of str to pathlib.Path
        File name -> written path.

    Notes
    -----
    One generator is seeded once and drawn from in a fixed order (inspections,
    then outreach), so the same call always writes the same workbooks.
    """
    folder = Path(folder)
    template_folder = Path(template_folder) if template_folder is not None else folder
    folder.mkdir(parents=True, exist_ok=True)
    template_folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(SEED)
    periods = _period_demo_data()
    return {
        INSPECTIONS_FILE: build_inspections(folder / INSPECTIONS_FILE, rng),
        OUTREACH_FILE: build_outreach(folder / OUTREACH_FILE, rng),
        VISITS_FILE: periods.write_workbook(folder / VISITS_FILE, months=6),
        JULY_FILE: periods.write_rows_workbook(folder / JULY_FILE, month=7),
        TEMPLATE_FILE: build_template(template_folder / TEMPLATE_FILE),
    }


def _period_demo_data() -> Any:
    """The monthly-refresh demo's generator (``period_demo_data.py`` beside this script; seeded by month)."""
    import importlib.util

    spec = importlib.util.spec_from_file_location("period_demo_data", Path(__file__).with_name("period_demo_data.py"))
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def add_preset_roles(paths: dict[str, Path]) -> bool:
    """Add a roles sheet with preset choices to each demo workbook, if the pipeline allows.

    Parameters
    ----------
    paths : dict of str to pathlib.Path
        The output of :func:`build_all`.

    Returns
    -------
    bool
        True if every roles sheet was added; False (after printing why) otherwise.
    """
    try:
        from statmargin.jobs.workbook import plan_workbook
    except ImportError as error:
        print(f"Roles sheets not added: statmargin.jobs.workbook is not available yet ({error}). "
              "The raw demo workbooks were written; rerun this script once it exists.")
        return False
    try:
        plan_workbook(
            paths[INSPECTIONS_FILE],
            sheet="Inspections",
            outcome=("Score", "Inspection time (minutes)", "Result", "Critical violations"),
            by=("District", "Establishment type"),
            against={"Score": "85", "Result": "Fail=0.10"},
            # A count with seven levels is compared by its distribution (rank-based or
            # mean tests), not as a sparse seven-column contingency table.
            treat={"Critical violations": "continuous"},
        )
        plan_workbook(
            paths[OUTREACH_FILE],
            sheet="Participants",
            outcome=("Systolic before (mmHg)", "Smoker before", "Days to first visit", "Satisfaction"),
            by=("Site",),
            paired_with={
                "Systolic before (mmHg)": "Systolic after (mmHg)",
                "Smoker before": "Smoker after",
            },
            treat={"Satisfaction": "ordinal:" + ",".join(SATISFACTION_LEVELS)},
        )
        plan_workbook(
            paths[VISITS_FILE],
            sheet="Visits",
            outcome=("Vaccinated same day", "Wait (minutes)"),
            by=("Team",),
            period="Visit date",
        )
    except Exception as error:  # the lead reruns the script; the raw files are already written
        print(f"Roles sheets not added: plan_workbook failed ({type(error).__name__}: {error}). "
              "The raw demo workbooks were written; rerun this script after fixing it.")
        return False
    print("Roles sheets added to the three demo workbooks.")
    return True


def copy_to_package(paths: dict[str, Path], package_dir: Path = PACKAGE_DATA_DIR) -> None:
    """Copy the finished workbooks into the package's data folder so they ship with it."""
    package_dir.mkdir(parents=True, exist_ok=True)
    for name, path in paths.items():
        shutil.copyfile(path, package_dir / name)


def main() -> int:
    """Write every demo and template workbook into the repository, then package copies."""
    paths = build_all(DEMO_DIR, TEMPLATE_DIR)
    for path in paths.values():
        print(f"Wrote {path.relative_to(REPO_ROOT)}")
    add_preset_roles(paths)
    copy_to_package(paths)
    print(f"Copied {len(paths)} workbooks to {PACKAGE_DATA_DIR.relative_to(REPO_ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
