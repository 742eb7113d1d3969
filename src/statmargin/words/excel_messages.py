"""What the Excel bridge says: one-line messages, status-bar summaries, worksheet-function labels.

Every message names what is wrong and what to do, in the words of someone
working in Excel (buttons and menus, not command lines).
"""

from __future__ import annotations

from .numbers import counted, noun

TITLE = "statmargin"
STATUS_PREFIX = "statmargin: "

# -- reaching Excel -----------------------------------------------------------------


def no_xlwings() -> str:
    return (
        "The Excel bridge needs xlwings, which is not installed; install it with "
        "'pip install xlwings' in the Python that has statmargin and try again, "
        "or use the command line (statmargin run)."
    )


def no_excel_here(platform: str) -> str:
    return (
        f"Desktop Excel runs on Windows and macOS, not on this system ({platform}); use the "
        "command line here (statmargin plan / statmargin run) on the saved workbook."
    )


def no_calling_workbook(detail: str) -> str:
    return (
        f"No calling Excel workbook was found ({detail}); call this from a button or macro in "
        "Excel (RunPython), or use the command line (statmargin run) for a saved file."
    )


def unknown_action(action: str) -> str:
    return f"Unknown action {action!r}; the buttons call main('plan') or main('run')."


def no_out_file() -> str:
    return (
        "From inside Excel the results go into the open workbook, not into another file; "
        "save a copy from Excel (File > Save As) if you want one."
    )


# -- reading and writing ----------------------------------------------------------------


def cannot_read_book(book: str, detail: str) -> str:
    return f"Excel did not list the sheets of {book!r} ({detail}); close any open dialog in Excel and try again."


def cannot_read_sheet(sheet: str, book: str, detail: str) -> str:
    return (
        f"Excel did not give the cells of sheet {sheet!r} in {book!r} ({detail}); "
        "finish any cell you are editing (press Enter) and try again."
    )


def write_refused(detail: str) -> str:
    return (
        f"Excel refused to add statmargin's sheets ({detail}); the workbook keeps its earlier sheets. "
        "If the workbook structure is protected (Review > Protect Workbook), unprotect it and try again."
    )


def finish_refused(detail: str) -> str:
    return (
        f"Excel refused to finish statmargin's sheets ({detail}); the new sheets were added but may "
        "still have temporary names. Close any open dialog in Excel and press the button again."
    )


def unknown_style(style: str, sheet: str) -> str:
    return f"Unknown style '{style}' on sheet {sheet}; the workbook was left as it was."


def chart_left_out(title: str, sheet: str) -> str:
    return f"The chart '{title}' on sheet {sheet} could not be drawn from inside Excel; its numbers are on the sheet."


# -- the two buttons -------------------------------------------------------------------


def no_roles_sheet() -> str:
    return (
        "This workbook has no roles sheet yet; press Plan first, pick a role for at least one "
        "column on the roles sheet, then press Run."
    )


def planned(sheet: str, n_columns: int) -> str:
    return (
        f"the roles sheet '{sheet}' lists {n_columns} {noun(n_columns, 'column')}; pick a role for each in the "
        "shaded cells, then press Run."
    )


def ran(n_analyses: int, sheet: str) -> str:
    return f"{counted(n_analyses, 'analysis', 'analyses')} written to '{sheet}'; save the workbook to keep them."


def internal_problem(kind: str, detail: str) -> str:
    return (
        f"statmargin stopped on an internal problem ({kind}: {detail}); your workbook was not "
        "changed by this step. Please report it with the workbook's layout (not its data)."
    )


# -- worksheet functions ---------------------------------------------------------------

# Names used when the ranges are given without their header cells.
DEFAULT_OUTCOME = "outcome"
DEFAULT_GROUP = "group"
DEFAULT_VALUES = "values"
CELLS_SHEET = "cells"  # the name of the in-memory sheet the worksheet functions read from


def compare_labels(confidence: float) -> tuple[str, ...]:
    """Row labels of the comparison function's result, top to bottom."""
    level = f"{confidence:.0%}"
    return (
        "Test",
        "Statistic",
        "Statistic value",
        "df",
        "p",
        "Estimate",
        "Estimate value",
        f"{level} CI low",
        f"{level} CI high",
        "n used",
    )


SHAPE_LABELS = (
    "n",
    "Check",
    "Check statistic",
    "Check p",
    "Skewness",
    "Excess kurtosis",
    "Verdict",
)


def not_run(reason: str) -> str:
    return f"not run: {reason}"


def header_is_a_number(which: str) -> str:
    return (
        f"The first cell of the {which} range holds a number, not a column name; include the "
        "header cell in the range, or set the headers argument to FALSE."
    )


def lengths_differ(n_outcome: int, n_groups: int) -> str:
    return (
        f"The outcome range has {n_outcome} {noun(n_outcome, 'cell')} and the group range {n_groups}; "
        "select the same rows in both."
    )


def confidence_not_a_level(value: object) -> str:
    return f"The confidence {value!r} is not a level between 0 and 1, such as 0.95."
