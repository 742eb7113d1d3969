"""Every refusal statmargin makes, as a typed error with a one-line message.

Messages name the sheet, column or cell and say what to do. The command line maps
each class to an exit code in one place (``EXIT_CODES`` below); nothing else
decides exit codes.
"""

from __future__ import annotations

from .vocabulary.codes import Coded


def _worded(reason: Coded | str) -> tuple[Coded | None, str]:
    """The code (None for a plain message) and the one-line message of an error or a caveat."""
    if isinstance(reason, str):
        return None, reason
    # Words come after the methods in the pipeline: imported when a message is needed.
    from .words.sentences import say

    return reason, say(reason)


class StatmarginError(Exception):
    """Base class: a problem with the user's input or file, explained in one line."""


class WorkbookError(StatmarginError):
    """The workbook cannot be opened or read (missing, not a workbook, damaged)."""


class SheetNotFoundError(StatmarginError):
    """A named sheet is not in the workbook."""


class ColumnNotFoundError(StatmarginError):
    """A named column is not among the data sheet's headers."""


class RoleError(StatmarginError):
    """The roles sheet or the role options ask for something that cannot be done."""


class OptionError(StatmarginError):
    """A command-line or API option has a value that does not fit.

    Raised with a one-line message or, from the statistical methods, with a
    ``vocabulary.codes.Coded`` refusal (kept as ``reason``) that words writes.
    """

    def __init__(self, reason: Coded | str) -> None:
        self.reason, message = _worded(reason)
        super().__init__(message)


class NotEnoughDataError(StatmarginError):
    """Too little usable data to run the requested test.

    Raised with a ``vocabulary.codes.Coded`` skip reason (kept as ``reason`` so a
    design can report the analysis as skipped) or, at the edges, a plain message.
    """

    def __init__(self, reason: Coded | str) -> None:
        self.reason, message = _worded(reason)
        super().__init__(message)


class CaveatWarning(UserWarning):
    """A statistical caveat raised while computing, as a Python warning: its code as ``note``, worded."""

    def __init__(self, note: Coded) -> None:
        self.note, message = _worded(note)
        super().__init__(message)


class WorkbookLockedError(StatmarginError):
    """The workbook is open in a spreadsheet program (its lock file is present)."""


class WriteError(StatmarginError):
    """Writing the results failed; the original file was left as it was."""


class ExcelBridgeError(StatmarginError):
    """The Excel bridge is unavailable (xlwings missing or no open workbook)."""


# Exit codes, mapped here and nowhere else. 2 is "your input is wrong"; 3 is
# "the file is busy"; 4 is "writing failed"; 5 is an environment problem; 70 is
# a bug in statmargin (EX_SOFTWARE from sysexits.h); 130 is "stopped by Ctrl+C
# or a stop signal" (128 + SIGINT, as shells report it).
EXIT_CODES: dict[type[StatmarginError], int] = {
    WorkbookError: 2,
    SheetNotFoundError: 2,
    ColumnNotFoundError: 2,
    RoleError: 2,
    OptionError: 2,
    NotEnoughDataError: 2,
    WorkbookLockedError: 3,
    WriteError: 4,
    ExcelBridgeError: 5,
}
EXIT_BUG = 70
EXIT_INTERRUPTED = 130


def exit_code_for(error: StatmarginError) -> int:
    """The exit code for an error: the nearest mapped class in its ancestry, else 2."""
    for cls in type(error).__mro__:
        if cls in EXIT_CODES:
            return EXIT_CODES[cls]
    return 2
