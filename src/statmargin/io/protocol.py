"""The seam between the pipeline and a workbook: what every back end must offer, and nothing more.

The reader (``read.reader``), the jobs (``jobs.workbook``) and the writer step use a
workbook only through the members declared here. Three back ends implement them:

* the file back end: ``io.file.source.FileSource`` (python-calamine plus a scan of
  the package parts) and ``io.file.sink.FileSink`` (package-level writer, atomic
  replace); ``io.backends.open_backend(path)`` opens both;
* the in-memory back end ``io.memory.MemoryWorkbook`` (both protocols in one
  object), the reference implementation and the tests' double;
* the Excel bridge (xlwings, on an open book).

Conventions used by every member
--------------------------------
* Rows are 1-based, as Excel shows them. Columns are 0-based indexes (0 is
  column A). Merged ranges are the exception: all four bounds 0-based, as
  python-calamine reports them.
* Sheet arguments are worksheet names. A back end accepts the workbook's own
  spelling or any spelling that matches exactly one worksheet when case is
  ignored (``resolve_sheet``), and raises ``errors.SheetNotFoundError`` (a
  one-line message listing the sheets) for a name that is not there. Chart
  sheets are not worksheets: they are never listed and never read.
* Cell values are ``float``, ``int``, ``bool``, ``str``, ``datetime.datetime``,
  ``datetime.date``, ``datetime.time`` or ``datetime.timedelta``. A blank cell is
  ``None`` or ``''`` (the reader treats both alike). An error value may be given
  as its code text (``"#N/A"``) or as a blank that ``cell_issues`` reports.
* Every failure a user can cause (missing file, locked book, damaged part) is a
  ``errors.StatmarginError`` with a one-line message, never another exception.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any, Protocol

from ..errors import SheetNotFoundError
from ..sheets.model import SheetModel
from ..words.workbook_messages import sheet_not_found


@dataclass(frozen=True)
class TableRange:
    """An Excel table (ListObject) on a sheet: its name and bounds.

    Rows are 1-based and inclusive; columns are 0-based and inclusive. The first
    row is the header row; the last row excludes a totals row.
    """

    name: str
    first_row: int
    first_col: int  # 0-based
    last_row: int
    last_col: int  # 0-based


# How a tool sheet is recognised on a re-run: a hidden, sheet-scoped defined name
# ``statmargin_sheet`` whose value is the sheet's kind as a string constant, e.g.
# <definedName name="statmargin_sheet" localSheetId="3" hidden="1">"results"</definedName>.
# Spreadsheet programs keep defined names (and renumber localSheetId) when sheets
# move or are renamed, so a user sheet that merely shares a name is never taken.
TOOL_SHEET_MARKER = "statmargin_sheet"

# The two kinds of cell ``cell_issues`` reports.
ERROR_ISSUE = "error"  # an Excel error value; the text is its code, e.g. "#N/A"
NO_VALUE_ISSUE = "no cached value"  # a formula never calculated; the text is the formula

# (row 1-based, column 0-based) -> (ERROR_ISSUE or NO_VALUE_ISSUE, text)
CellIssues = dict[tuple[int, int], tuple[str, str]]
# (first_row, first_col, last_row, last_col), all 0-based and inclusive
MergedRange = tuple[int, int, int, int]


def string_constant(text: str) -> str:
    """The kind inside a marker's value, written as ``"results"`` or ``="results"``.

    Examples
    --------
    >>> string_constant('="results"'), string_constant('"log"')
    ('results', 'log')
    """
    text = str(text).strip().lstrip("=").strip()
    if len(text) >= 2 and text[0] == text[-1] == '"':
        text = text[1:-1].replace('""', '"')
    return text


class WorkbookSource(Protocol):
    """Read access to a workbook: its sheets, their cell values and structure."""

    @property
    def display_name(self) -> str:
        """The workbook as named in messages: the file name for files, the book name in Excel.

        Never a full path, so messages stay short and do not reveal folders.
        """
        ...

    def sheet_names(self) -> list[str]:
        """Every worksheet, visible or hidden, in workbook (tab) order; chart sheets left out."""
        ...

    def hidden_sheet_names(self) -> list[str]:
        """The worksheets the user cannot see (hidden or very hidden), in workbook order."""
        ...

    def resolve_sheet(self, sheet: str) -> str:
        """The workbook's own spelling of a worksheet name.

        Parameters
        ----------
        sheet : str
            A name as a user typed it. An exact match wins; otherwise a match that
            ignores case and outer spaces is accepted when exactly one sheet fits.

        Returns
        -------
        str
            The name as the workbook spells it.

        Raises
        ------
        SheetNotFoundError
            No worksheet fits (or several do); the message lists the sheets.

        Notes
        -----
        Every back end answers with ``resolve_sheet_name`` below, so the rule and
        the message are the same everywhere.
        """
        ...

    def iter_rows(self, sheet: str) -> Iterator[list[Any]]:
        """Rows of raw cell values, from row 1 and column A, streamed.

        Element ``j`` of each row is column ``j`` (0-based). Rows may be ragged
        (a short row has blanks after its end) and the iterator may stop after
        the last row holding a value. Used for the tool's own sheets (roles, log).
        """
        ...

    def iter_rows_at(self, sheet: str) -> tuple[int, Iterator[list[Any]]]:
        """Rows from row 1 that start at the sheet's first used column: ``(that column, rows)``.

        Returns
        -------
        first_col : int
            0-based column of element 0 of every row (0 for an empty sheet).
        rows : iterator of list
            As for ``iter_rows`` but without the blank columns left of
            ``first_col``; an empty sheet gives no rows.

        Notes
        -----
        The reader's path for data sheets: a back end can hand over its native
        row iterator without padding each row. An exception raised while
        iterating is turned into a one-line ``WorkbookError`` by the reader.
        """
        ...

    def last_row(self, sheet: str) -> int:
        """1-based number of the last row holding a value (0 for an empty sheet).

        Readers size their arrays with it before the rows stream in; a back end
        that cannot tell cheaply may answer low (the reader then grows them).
        """
        ...

    def release(self) -> None:
        """Free any copy of the sheet read last; a later read reads it again (may do nothing)."""
        ...

    def tables(self, sheet: str) -> list[TableRange]:
        """Excel tables (ListObjects) on a worksheet, in the order the sheet lists them.

        Tables without a header row are left out (their columns have no names in
        the cells); a back end without tables returns ``[]``.
        """
        ...

    def merged_ranges(self, sheet: str) -> list[MergedRange]:
        """Merged cell ranges on a worksheet as (first_row, first_col, last_row, last_col), 0-based, inclusive."""
        ...

    def tool_sheets(self) -> dict[str, str]:
        """Sheets statmargin wrote before, by their marker: sheet name -> kind (``"roles"``, ``"results"`` ...).

        Only the marker (``TOOL_SHEET_MARKER``) counts, never the name, so a user
        sheet that happens to be called like a tool sheet is not listed. Empty
        when the book has none (or its format cannot carry the marker).
        """
        ...

    def cell_issues(
        self,
        sheet: str,
        *,
        first_row: int = 1,
        last_row: int | None = None,
        columns: Iterable[int] | None = None,
    ) -> CellIssues:
        """Cells that ``iter_rows`` gives as blank but that hold an error value or an uncalculated formula.

        Parameters
        ----------
        sheet : str
            Worksheet name.
        first_row, last_row : int
            1-based inclusive rows to report (``last_row=None``: to the end).
        columns : iterable of int, optional
            0-based columns to report; ``None`` means all.

        Returns
        -------
        dict
            ``(row, col) -> (kind, text)``, row 1-based and col 0-based; kind is
            ``ERROR_ISSUE`` (text: the error code, e.g. ``"#N/A"``) or
            ``NO_VALUE_ISSUE`` (text: the formula, e.g. ``"=SUM(B2:B9)"``). A
            back end whose rows already carry such cells' codes as text may also
            report them here; the reader notes each cell once.
        """
        ...

    def hidden_rows(self, sheet: str) -> frozenset[int] | None:
        """1-based numbers of the rows a filter or the user hid on a worksheet.

        Returns
        -------
        frozenset of int or None
            Empty when no row is hidden; ``None`` when the back end cannot tell
            (a file type that does not record it), so the reader can say so
            instead of implying that every row is shown.
        """
        ...

    def close(self) -> None:
        """Release what the source holds (a file handle); calling it twice is harmless."""
        ...


def resolve_sheet_name(names: Sequence[str], sheet: str, workbook: str) -> str:
    """The rule behind ``WorkbookSource.resolve_sheet``: exact name, else the one case-blind match.

    Parameters
    ----------
    names : sequence of str
        The worksheet names, in workbook order.
    sheet : str
        The name asked for.
    workbook : str
        The workbook's display name, for the message.

    Returns
    -------
    str

    Raises
    ------
    SheetNotFoundError
        If no worksheet (or more than one, ignoring case and outer spaces) fits.

    Examples
    --------
    >>> resolve_sheet_name(["Data", "Notes"], " data ", "book.xlsx")
    'Data'
    """
    if sheet in names:
        return sheet
    folded = [n for n in names if n.casefold() == sheet.strip().casefold()]
    if len(folded) == 1:
        return folded[0]
    raise SheetNotFoundError(sheet_not_found(sheet, workbook, names))


@dataclass(frozen=True)
class WriteReport:
    """What a write did, for the summary line and the run log."""

    path: str  # where the sheets went: the file (or the copy) for files, the book's name otherwise
    sheets: dict[str, str]  # kind -> the sheet name actually used
    renamed: list[str]  # plain sentences about names changed to avoid user sheets
    replaced: list[str]  # names of earlier tool sheets that were replaced


class WorkbookSink(Protocol):
    """Write access: replace the tool's own sheets, leaving everything else as it was."""

    def check(self, out: str | None = None) -> str | None:
        """Refuse, before any work is done, a write that cannot succeed.

        Parameters
        ----------
        out : str, optional
            Where a copy would be written instead of changing the book itself.

        Returns
        -------
        str or None
            The effective ``out``: None when the write goes into the book itself
            (also when ``out`` names the book itself).

        Raises
        ------
        StatmarginError
            With a one-line message (missing or locked book, a format that cannot
            be written); nothing has been changed.
        """
        ...

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """Put the tool's sheets into the book (or a copy at ``out``), replacing earlier ones.

        Parameters
        ----------
        models : list of SheetModel
            At most one per kind. Nothing is written for an empty list.
        out : str, optional
            Write a copy there and leave the book itself as it was.

        Returns
        -------
        WriteReport

        Notes
        -----
        The rules every back end follows (``io.placement.place``): a
        marked sheet of the same kind is replaced (one per kind; other marked
        copies lose the marker and stay as the user's own). The user's layout
        is theirs: a replacement takes the replaced sheet's position and its
        visibility (hidden and very hidden sheets stay so), so a tool sheet the
        user moved or hid stays where and as they left it and no other sheet
        moves; sheets of kinds the book does not have yet go after its last
        sheet, in the order given. A user sheet holding a wanted name is never
        touched and the tool's sheet gets another name, which
        ``WriteReport.renamed`` tells. Each written sheet carries the
        ``TOOL_SHEET_MARKER`` of its kind. A failure leaves the book as it was.
        """
        ...


class WorkbookBackend(WorkbookSource, WorkbookSink, Protocol):
    """A back end that reads and writes the same book (the in-memory one, the Excel bridge)."""
