"""Write ``templates/statmargin_excel_template.xlsx``: a data sheet, a roles sheet and two buttons.

The buttons are Excel form buttons already assigned to the macros
``StatmarginPlan`` and ``StatmarginRun``. The macros themselves are the VBA
module ``templates/statmargin_buttons.bas``: a macro-enabled workbook's VBA
part cannot be produced without Excel, so the user imports the module once
(steps in ``templates/README.md``) and saves the workbook as .xlsm.

Every number in the workbook is invented for demonstration: a made-up
community clinic's visit log at three made-up sites; no real person or place
is described.

Run from the repository root::

    python templates/make_excel_template.py [output.xlsx]
"""

from __future__ import annotations

import sys
from datetime import datetime
from pathlib import Path

import numpy as np
import xlsxwriter

SEED = 20260302
FIXED_CREATED = datetime(2026, 1, 1)
TEMPLATE_FILE = "statmargin_excel_template.xlsx"
DATA_SHEET = "Data"
START_SHEET = "Start here"
SITES = ("Fernbrook", "Gullhaven", "Hollin Rise")  # invented place names
ROWS_PER_SITE = (26, 22, 18)
COLUMNS = ("Visit ID", "Site", "Wait minutes", "Seen same day")
PLAN_MACRO, RUN_MACRO = "StatmarginPlan", "StatmarginRun"
BUTTONS = (("Plan", PLAN_MACRO, 6), ("Run", RUN_MACRO, 10))  # caption, macro, 0-based row in column A
TITLE = "statmargin inside Excel"
INVENTED = "All data in this workbook are invented for demonstration (a made-up clinic's visit log)."
# (0-based row, text) in column B, beside the buttons in column A.
START_LINES = (
    (1, INVENTED),
    (3, "Once per workbook: Developer > Visual Basic, File > Import File, pick statmargin_buttons.bas;"),
    (4, "close the editor, then File > Save As > Excel Macro-Enabled Workbook (.xlsm). See templates/README.md."),
    (6, "Plan: lists the data columns on the roles sheet. Pick a role for each in the shaded cells."),
    (10, "Run: runs the tests the roles ask for and writes the results sheets. Save to keep them."),
    (14, "Quick single tests in a cell (Windows, with statmargin.excel under the add-in's UDF Modules):"),
    (15, "=SM_COMPARE(Data!C1:C67, Data!B1:B67)   test, statistic, p, estimate and interval"),
    (16, "=SM_SHAPE(Data!C1:C67)   the shape check of one column"),
    (18, "Results inform decisions; they do not make them. Decisions about people's care belong to "
         "qualified analysts and local policy."),
)


def visit_rows(rng: np.random.Generator) -> list[list[object]]:
    """Invented visits: right-skewed waits, a little longer at the second site."""
    rows: list[list[object]] = []
    visit = 1000
    for site, n, scale in zip(SITES, ROWS_PER_SITE, (9.0, 12.0, 10.0), strict=True):
        waits = rng.gamma(shape=3.0, scale=scale, size=n)
        for wait in waits:
            visit += 1
            rows.append([f"V{visit}", site, round(float(wait), 1), "Yes" if wait < 25 else "No"])
    return rows


def build(path: Path) -> Path:
    """Write the template (without the roles sheet) to ``path``."""
    rng = np.random.default_rng(SEED)
    workbook = xlsxwriter.Workbook(str(path))
    workbook.set_properties({"title": "statmargin Excel template", "author": "statmargin",
                             "comments": INVENTED, "created": FIXED_CREATED})
    data = workbook.add_worksheet(DATA_SHEET)
    bold = workbook.add_format({"bold": True})
    data.write_row(0, 0, COLUMNS, bold)
    for r, row in enumerate(visit_rows(rng), start=1):
        data.write_row(r, 0, row)
    data.set_column(0, 3, 14)
    data.freeze_panes(1, 0)

    start = workbook.add_worksheet(START_SHEET)
    start.set_column(0, 0, 22)
    start.set_column(1, 1, 100)
    start.write_string(0, 0, TITLE, workbook.add_format({"bold": True, "font_size": 14}))
    for row, line in START_LINES:
        start.write_string(row, 1, line)
    for caption, macro, row in BUTTONS:
        start.insert_button(row, 0, {"macro": macro, "caption": caption, "width": 140, "height": 40})
    start.activate()
    workbook.close()
    return path


def add_roles(path: Path) -> None:
    """Add the roles sheet with the example question already marked (wait by site)."""
    from statmargin.jobs.workbook import plan_workbook

    plan_workbook(path, sheet=DATA_SHEET, outcome=["Wait minutes"], by=["Site"])


def main(argv: list[str]) -> int:
    target = Path(argv[1]) if len(argv) > 1 else Path(__file__).resolve().parent / TEMPLATE_FILE
    add_roles(build(target))
    print(f"wrote {target}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
