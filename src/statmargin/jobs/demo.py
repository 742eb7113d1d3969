"""``statmargin demo``: copy the bundled demo workbooks out and run them.

The demo workbooks (invented data, roles already marked) ship inside the
package, so the demo works after a plain ``pip install``.
"""

from __future__ import annotations

import shutil
from importlib import resources
from pathlib import Path

from ..errors import WorkbookError
from ..words import refusals
from .workbook import Progress, RunSummary, run_workbook

DEMO_WORKBOOKS = ("inspections_demo.xlsx", "outreach_demo.xlsx", "screening_demo.xlsx",
                  "riverbend_visits_demo.xlsx")
TEMPLATE = "statmargin_template.xlsx"
# Copied beside the demos but not run: July's rows of the monthly-refresh demo, to paste
# under its Visits sheet before running it again.
EXTRAS = ("riverbend_july_rows.xlsx",)


def packaged_file(name: str) -> Path:
    """Path of a workbook bundled with the package."""
    path = Path(str(resources.files("statmargin") / "data" / name))
    if not path.is_file():
        raise WorkbookError(refusals.demo_file_missing(repr(name)))
    return path


def run_demo(folder: str | Path = "statmargin-demo", *, progress: Progress | None = None) -> list[RunSummary]:
    """Copy the demo workbooks (the empty template, and July's rows for the monthly-refresh demo) into ``folder`` and run each demo.

    A demo workbook already in the folder is run again as it is (its results
    sheets are replaced), so edits made to try the tool out are kept.
    """
    target = Path(folder)
    try:
        target.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise WorkbookError(refusals.demo_folder(repr(str(target)), str(exc.strerror))) from None
    summaries = []
    for name in (*DEMO_WORKBOOKS, *EXTRAS, TEMPLATE):
        dest = target / name
        if not dest.exists():
            shutil.copyfile(packaged_file(name), dest)
    for name in DEMO_WORKBOOKS:
        summaries.append(run_workbook(target / name, progress=progress))
    return summaries
