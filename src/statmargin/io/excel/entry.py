"""Plan and run the calling workbook: what the template's two buttons do through ``RunPython``.

Both entry points run the same jobs as the command line (``plan_workbook`` and
``run_workbook``) with the open workbook (``ExcelBook``) as source and sink.

How the user hears about it: a one-line summary goes to Excel's status bar.
When something is wrong, the one-line message goes to the status bar and to
standard error, and, when the workbook called us (``Book.caller()``), into a
message box (``App.alert``): no Python traceback is ever shown. The returned
``Outcome`` carries the exit code of ``errors.EXIT_CODES`` (5 when Excel or
xlwings cannot be reached).
"""

from __future__ import annotations

import sys
import warnings
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from ...errors import EXIT_BUG, ExcelBridgeError, RoleError, StatmarginError, exit_code_for
from ...words import excel_messages
from .book import ExcelBook

Job = Callable[[ExcelBook], str]
ALERT_MODE = "critical"  # xlwings' word for the warning icon
DESKTOP_PLATFORMS = ("win", "darwin")  # where desktop Excel (and xlwings' desktop engines) run


@dataclass(frozen=True)
class Outcome:
    """How an entry point ended: exit code, the one line said, and whether Excel showed it in a box."""

    code: int
    message: str
    shown: bool = False


def _brief(exc: BaseException) -> str:
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 160 else text[:157] + "..."


def caller_book() -> Any:
    """The workbook that called Python through ``RunPython`` (``xlwings.Book.caller()``).

    Raises
    ------
    ExcelBridgeError
        Not on Windows or macOS (desktop Excel runs nowhere else), xlwings is
        not installed, or no workbook called (called from a plain Python session).
    """
    if not sys.platform.startswith(DESKTOP_PLATFORMS):
        raise ExcelBridgeError(excel_messages.no_excel_here(sys.platform))
    try:
        import xlwings
    except ImportError:
        raise ExcelBridgeError(excel_messages.no_xlwings()) from None
    try:
        return xlwings.Book.caller()
    except Exception as exc:  # noqa: BLE001 - xlwings raises plain Exception, AttributeError off Windows/macOS
        raise ExcelBridgeError(excel_messages.no_calling_workbook(_brief(exc))) from None


def plan_job(book: ExcelBook) -> str:
    """Add or refresh the roles sheet of the open workbook; returns the status-bar summary.

    The summary ends with any sentence about sheet names changed to spare the
    user's sheets and anything the bridge could not draw.
    """
    from ...jobs.workbook import plan_workbook

    summary = plan_workbook(book.display_name, source=book, sink=book)
    said = excel_messages.planned(summary.write.sheets.get("roles", ""), len(summary.columns))
    return " ".join([said, *summary.write.renamed, *book.notes])


def run_job(book: ExcelBook, *, share: bool = False) -> str:
    """Run the analyses the roles sheet asks for and write the results sheets; returns the summary."""
    from ...jobs.workbook import read_roles, run_workbook

    if read_roles(book) is None:
        raise RoleError(excel_messages.no_roles_sheet())
    summary = run_workbook(book.display_name, source=book, sink=book, share=share)
    said = excel_messages.ran(len(summary.results), summary.write.sheets.get("results", ""))
    return " ".join([said, *summary.write.renamed, *book.notes])


def act(job: Job, book: Any = None) -> Outcome:
    """Run a job on ``book`` (default: the calling workbook) and tell the user how it went.

    Parameters
    ----------
    job : callable
        ``plan_job`` or ``run_job``: takes the ``ExcelBook``, returns a summary line.
    book : xlwings.Book, optional
        The workbook; by default ``xlwings.Book.caller()``.

    Returns
    -------
    Outcome
        Exit code 0 and the summary, or the error's exit code and its one-line message.

    Notes
    -----
    A message box is shown only when the workbook called us, so scripts and
    tests that pass a book are never stopped by a dialog.
    """
    from_excel = book is None
    try:
        if book is None:
            book = caller_book()
        with warnings.catch_warnings():
            # Caveats are on the results sheets; no Python warning lines.
            warnings.simplefilter("ignore")
            summary = job(ExcelBook(book))
    except StatmarginError as exc:
        return _tell(book, " ".join(str(exc).split()), exit_code_for(exc), alert=from_excel)
    except Exception as exc:  # noqa: BLE001 - a bug must still end in one line, not a traceback
        return _tell(book, excel_messages.internal_problem(type(exc).__name__, _brief(exc)), EXIT_BUG, alert=from_excel)
    _status(book, summary)
    return Outcome(0, summary)


def _status(book: Any, message: str) -> bool:
    if book is None:
        return False
    try:
        book.app.status_bar = excel_messages.STATUS_PREFIX + message
        return True
    except Exception:  # noqa: BLE001 - the status bar is a courtesy
        return False


def _tell(book: Any, message: str, code: int, *, alert: bool) -> Outcome:
    print(excel_messages.STATUS_PREFIX + message, file=sys.stderr)
    _status(book, message)
    shown = False
    if alert and book is not None:
        try:
            book.app.alert(message, title=excel_messages.TITLE, mode=ALERT_MODE)
            shown = True
        except Exception:  # noqa: BLE001 - fall back to standard error and the exit code
            shown = False
    return Outcome(code, message, shown)
