"""Write statmargin's demo workbook of monthly summaries, from one fixed seed.

**Every number in this workbook is invented for demonstration.** The scenario
is our own: an invented community screening programme ("Larkfield Valley")
runs at four sites with made-up names and reports one row per site and month:
people screened, how many screened positive, the catchment population and its
person-years for the month. No real programme, place or person is described.

The story the data are built to tell (the probabilities are fixed; the counts
are drawn from them):

* pooled positivity is about 4.6%, above the programme's 4% target;
* the sites differ in positivity (about 3.8% to 6.0%) and in positives per
  1,000 person-years of their catchment;
* two cells are untidy on purpose: one month's report did not arrive (blank
  cells) and one positive count was typed as "n/a".

Rows are drawn as binomial (positives out of screened) and Poisson (screened
per person-time) counts, so the rows vary only as sampling allows and every
result equals the same analysis of the people listed one per row (the tests
check this). Drawn rows still trip the check of extra variation now and then
(about one seed in twenty per analysis, more for the target question, which
pools sites that differ); the seed was picked among those that do not, so the
demo shows the plain tests. Run from the repository root::

    python demo_workbooks/make_screening_demo.py

It writes ``demo_workbooks/screening_demo.xlsx``, adds a roles sheet with preset
choices through ``statmargin.jobs.workbook.plan_workbook`` and copies the
workbook into ``src/statmargin/data/`` so it ships with the package.
"""

from __future__ import annotations

import calendar
import importlib.util
import shutil
import sys
from datetime import datetime
from pathlib import Path
from types import ModuleType
from typing import Any

import numpy as np

SEED = 20260318  # fixed so every run writes the same workbook (see the module notes)
FILE = "screening_demo.xlsx"
SHEET = "Monthly summary"
YEAR = 2025
COLUMNS = ["Site", "Month", "Population", "Person-years", "Screened", "Positive"]
# Invented sites: catchment population, people screened per 1,000 residents a month, positivity.
SITES: dict[str, tuple[int, float, float]] = {
    "Ashgrove": (24_000, 8.0, 0.038),
    "Bellmoor": (18_500, 8.1, 0.054),
    "Corran Bridge": (31_000, 8.0, 0.042),
    "Dunlow": (12_000, 8.0, 0.060),
}
TARGET = "4%"
PER_UNIT = "per 1,000 person-years"
# Untidy cells: (site, month, column, value); None leaves the cell empty.
DIRT: list[tuple[str, int, str, Any]] = [
    ("Dunlow", 8, "Screened", None),  # the August report did not arrive
    ("Dunlow", 8, "Positive", None),
    ("Bellmoor", 3, "Positive", "n/a"),
]

HERE = Path(__file__).resolve().parent
REPO_ROOT = HERE.parent
PACKAGE_DATA_DIR = REPO_ROOT / "src" / "statmargin" / "data"


def _demo_helpers() -> ModuleType:
    """The shared demo helpers (fixed document properties, text sheets) of ``make_demo_workbooks.py``."""
    spec = importlib.util.spec_from_file_location("make_demo_workbooks", HERE / "make_demo_workbooks.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def monthly_rows(rng: np.random.Generator) -> list[dict[str, Any]]:
    """One row per site and month, drawn in a fixed order; untidy cells are planted afterwards.

    Parameters
    ----------
    rng : numpy.random.Generator
        The seeded generator.

    Returns
    -------
    list of dict
        Keyed by ``COLUMNS``: person-years are the population times the month's
        days over 365; screened is Poisson with mean population / 1,000 times the
        site's screening rate; positive is binomial out of screened.
    """
    rows = []
    for site, (population, per_thousand, positivity) in SITES.items():
        for month in range(1, 13):
            days = calendar.monthrange(YEAR, month)[1]
            screened = int(rng.poisson(population / 1000 * per_thousand))
            rows.append(
                {
                    "Site": site,
                    "Month": datetime(YEAR, month, 1),
                    "Population": population,
                    "Person-years": round(population * days / 365, 1),
                    "Screened": screened,
                    "Positive": int(rng.binomial(screened, positivity)),
                }
            )
    for site, month, column, value in DIRT:
        for row in rows:
            if row["Site"] == site and row["Month"].month == month:
                row[column] = value
    return rows


def build(path: Path) -> Path:
    """Write the raw workbook (data sheet and an About sheet), without the roles sheet.

    Parameters
    ----------
    path : pathlib.Path
        Where to write it (overwritten).

    Returns
    -------
    pathlib.Path
        ``path``.
    """
    helpers = _demo_helpers()
    rows = monthly_rows(np.random.default_rng(SEED))
    workbook = helpers._new_workbook(path)
    sheet = workbook.add_worksheet(SHEET)
    header = workbook.add_format({"bold": True, "bottom": 1, "text_wrap": True})
    month_format = workbook.add_format({"num_format": "mmm yyyy"})
    for c, column in enumerate(COLUMNS):
        sheet.write_string(0, c, column, header)
    for r, row in enumerate(rows, start=1):
        for c, column in enumerate(COLUMNS):
            value = row[column]
            if value is None:
                continue
            if isinstance(value, datetime):
                sheet.write_datetime(r, c, value, month_format)
            elif isinstance(value, str):
                sheet.write_string(r, c, value)
            else:
                sheet.write_number(r, c, value)
    sheet.write_comment(0, 0, helpers.INVENTED_LINE, {"author": "statmargin demo"})
    sheet.freeze_panes(1, 0)
    for c, width in enumerate([15, 11, 11, 12, 10, 9]):
        sheet.set_column(c, c, width)
    helpers._write_text_sheet(
        workbook,
        "About",
        [
            "About this workbook",
            helpers.INVENTED_LINE,
            "Scenario (invented): the Larkfield Valley community screening programme runs at four "
            "sites with made-up names and reports one row per site and month.",
            "Screened counts the people screened that month, Positive how many of them screened "
            "positive; Population is the site's catchment and Person-years its person-time for the "
            "month (population times days over 365).",
            "The programme's target is a positivity of 4%. The roles sheet asks for positivity against "
            "that target, the sites compared on positivity, and on positives per 1,000 person-years.",
            "Two things were left untidy on purpose: Dunlow's August report did not arrive (blank cells) "
            "and one positive count was typed as n/a.",
        ],
    )
    workbook.close()
    return path


def add_roles(path: Path) -> None:
    """Add the roles sheet with the demo's preset choices (``plan_workbook``)."""
    from statmargin.jobs.workbook import plan_workbook

    plan_workbook(
        path,
        sheet=SHEET,
        events=("Positive",),
        out_of={"Positive": "Screened"},
        per={"Positive": "Person-years"},
        against={"Positive": TARGET},
        by=("Site",),
        per_unit=PER_UNIT,
    )


def main() -> int:
    """Write the workbook into the repository with its roles sheet, then copy it into the package."""
    path = build(HERE / FILE)
    add_roles(path)
    PACKAGE_DATA_DIR.mkdir(parents=True, exist_ok=True)
    shutil.copyfile(path, PACKAGE_DATA_DIR / FILE)
    print(f"Wrote {path.relative_to(REPO_ROOT)} and copied it to {PACKAGE_DATA_DIR.relative_to(REPO_ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
