"""The reader/writer interface that every workbook back end implements.

The file back end (``io.file.source.FileSource``, python-calamine for reading, and
``io.file.sink.FileSink``, a package-level writer) and a later xlwings back end for the open workbook both
implement these two protocols, so the pipeline between them is shared.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any, Protocol

from ..sheets.model import SheetModel


@dataclass(frozen=True)
class TableRange:
    """An Excel table (ListObject) on a sheet: its name and 1-based inclusive bounds."""

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


class WorkbookSource(Protocol):
    """Read access to a workbook's cell values."""

    def sheet_names(self) -> list[str]:
        """Visible and hidden worksheet names, in workbook order."""
        ...

    def iter_rows(self, sheet: str) -> Iterator[list[Any]]:
        """Rows of raw cell values from row 1, streamed; ragged rows are allowed."""
        ...

    def tables(self, sheet: str) -> list[TableRange]:
        """Excel tables (ListObjects) on a sheet."""
        ...

    def merged_ranges(self, sheet: str) -> list[tuple[int, int, int, int]]:
        """Merged ranges as (first_row, first_col, last_row, last_col), 0-based, inclusive."""
        ...

    def tool_sheets(self) -> dict[str, str]:
        """Sheets statmargin wrote before: sheet name -> kind ("roles", "results", ...)."""
        ...


@dataclass(frozen=True)
class WriteReport:
    """What a write did, for the summary line and the run log."""

    path: str
    sheets: dict[str, str]  # kind -> the sheet name actually used
    renamed: list[str]  # plain sentences about names changed to avoid user sheets
    replaced: list[str]  # names of earlier tool sheets that were replaced


class WorkbookSink(Protocol):
    """Write access: replace the tool's own sheets, leaving everything else as it was."""

    def check(self, out: str | None = None) -> str | None:
        """Refuse a write that cannot succeed before any work is done; returns the effective ``out``."""
        ...

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """Put the models into the workbook (or a copy at ``out``), replacing earlier tool sheets."""
        ...
