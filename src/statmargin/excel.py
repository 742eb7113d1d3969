"""Run statmargin from inside Excel: the entry points and worksheet functions a workbook calls.

With Excel and the xlwings add-in installed, a button or macro in the open
workbook calls (see ``templates/statmargin_buttons.bas``)::

    RunPython "import statmargin.excel as sm; sm.main('plan')"
    RunPython "import statmargin.excel as sm; sm.main('run')"

``plan`` adds or refreshes the roles sheet, ``run`` writes the results sheets,
both into the open workbook (nothing is saved; save as usual). With this module
listed under "UDF Modules" of the xlwings add-in (Windows), two worksheet
functions are available::

    =SM_COMPARE(B1:B200, C1:C200)     test, statistic, p, estimate and interval
    =SM_SHAPE(B1:B200)                the shape check of one column

Importing this module never needs Excel or xlwings; without them an entry
point says so in one line and returns the bridge's exit code (5).
"""

from __future__ import annotations

import sys
from typing import Any

from .io.excel import entry, udf
from .words import excel_messages

__all__ = ["main", "plan", "run", "SM_COMPARE", "SM_SHAPE"]


def plan(book: Any = None) -> int:
    """Add or refresh the roles sheet of ``book`` (default: the workbook that called); returns the exit code.

    Parameters
    ----------
    book : xlwings.Book, optional
        An open workbook; by default ``xlwings.Book.caller()``.

    Returns
    -------
    int
        0, or the exit code of the problem (``statmargin.errors.EXIT_CODES``),
        whose one-line message went to Excel's status bar and standard error.

    Examples
    --------
    Without Excel there is no calling workbook:

    >>> import statmargin.excel
    >>> statmargin.excel.plan()
    5
    """
    return entry.act(entry.plan_job, book).code


def run(book: Any = None, *, share: bool = False) -> int:
    """Run the analyses the roles sheet of ``book`` asks for and write the results sheets there.

    Parameters
    ----------
    book : xlwings.Book, optional
        An open workbook; by default ``xlwings.Book.caller()``.
    share : bool
        Sharing mode: hide small counts in the tool's sheets.

    Returns
    -------
    int
        0, or the exit code of the problem.
    """
    return entry.act(lambda b: entry.run_job(b, share=share), book).code


def main(action: str = "run") -> None:
    """The ``RunPython`` entry point: ``plan`` or ``run`` the calling workbook.

    A problem is shown in an Excel message box when Excel called; when no box
    could be shown (no Excel, no xlwings), the process ends with the exit
    code, and its one line on standard error is what ``RunPython`` displays.
    """
    jobs = {"plan": entry.plan_job, "run": entry.run_job}
    if action not in jobs:
        outcome = entry.Outcome(2, excel_messages.unknown_action(action))
        print(excel_messages.STATUS_PREFIX + outcome.message, file=sys.stderr)
    else:
        outcome = entry.act(jobs[action])
    if outcome.code and not outcome.shown:
        raise SystemExit(outcome.code)


# Excel shows a worksheet function under its Python name, hence the upper case.
def SM_COMPARE(outcome: Any, groups: Any, headers: bool = True, confidence: float = 0.95) -> list[list[Any]]:
    """statmargin: the test comparing an outcome across groups (test, statistic, p, estimate, interval)."""
    return udf.compare_cells(outcome, groups, headers, confidence)


def SM_SHAPE(values: Any, headers: bool = True) -> list[list[Any]]:
    """statmargin: the shape check of one column of numbers (n, check, p, skewness, kurtosis, verdict)."""
    return udf.shape_cells(values, headers)


def _register_worksheet_functions() -> None:
    """Mark the worksheet functions for xlwings, only when xlwings is already loaded.

    xlwings imports this module (as a "UDF Module") after importing itself, so
    the functions are registered there; a plain ``import statmargin.excel``
    never loads xlwings. Range arguments arrive as flat lists (``ndim=1``) with
    error cells as their text (``#N/A``), as the workbook reader expects.
    """
    xw = sys.modules.get("xlwings")
    if xw is None:
        return
    global SM_COMPARE, SM_SHAPE
    compare = xw.arg("outcome", ndim=1, err_to_str=True)(SM_COMPARE)
    compare = xw.arg("groups", ndim=1, err_to_str=True)(compare)
    SM_COMPARE = xw.func(category="statmargin")(compare)
    SM_SHAPE = xw.func(category="statmargin")(xw.arg("values", ndim=1, err_to_str=True)(SM_SHAPE))


_register_worksheet_functions()

if __name__ == "__main__":  # pragma: no cover - python -m statmargin.excel plan|run
    main(sys.argv[1] if len(sys.argv) > 1 else "run")
