"""The typed table that reading produces and everything after reading consumes.

A ``Column`` keeps two parallel arrays over the same data rows: ``numbers``
(float64, NaN where the cell held no number) and ``labels`` (object, the cell's
text where it held text, else None). Measurement types are decided later
(``plan.types``) from both, so reading never has to guess what a column means.
Each data row remembers its sheet row number, so any value can be traced back
to its cell for the data notes.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..io.addresses import column_letter
from ..vocabulary import NoteKind


def not_none(labels: np.ndarray) -> np.ndarray:
    """Mask of the entries of an object array that are not None (an elementwise C loop)."""
    # numpy's stubs reject None as an operand; at run time it compares element by element.
    return np.not_equal(labels, None)  # type: ignore[call-overload]


@dataclass(frozen=True)
class DataNote:
    """One cell (or one header) that was skipped or converted, and why."""

    sheet: str
    cell: str  # A1 address, e.g. "C17"
    column: str
    value: str  # what the cell held, as text
    kind: NoteKind
    action: str  # "skipped", "converted to 1250", "kept as text", ...


@dataclass
class Column:
    """One data column: header, position, and the cell values as typed arrays."""

    name: str  # unique header used everywhere (deduplicated by the reader)
    letter: str  # sheet column letter, e.g. "C"
    numbers: np.ndarray  # float64; NaN where the cell held no number
    labels: np.ndarray  # object; the text where the cell held text, else None
    header: str = ""  # the header exactly as written in the sheet
    n_blank: int = 0  # blank cells and missing markers
    n_unreadable: int = 0  # error values, suppressed counts, formulas without values
    n_dates: int = 0  # cells that held dates (their numbers are Excel day serials)
    units: str | None = None  # from the header, e.g. "Wait (minutes)" -> "minutes"
    # Values derived from the arrays (types, masks, labels), computed once and shared;
    # the arrays are not changed after reading, so nothing here goes stale.
    cache: dict[Any, Any] = field(default_factory=dict, repr=False, compare=False)

    def __len__(self) -> int:
        return int(self.numbers.shape[0])


@dataclass
class Table:
    """A sheet's data region read into typed columns, with the notes made while reading."""

    sheet: str
    header_row: int  # 1-based sheet row of the header
    rows: np.ndarray  # int64 sheet row number (1-based) of each data row
    columns: dict[str, Column]
    notes: list[DataNote] = field(default_factory=list)
    n_rows_read: int = 0
    fingerprint: str = ""  # hash of the values read, for the run log
    # Data rows a filter or the user hid: None when the workbook cannot tell. With
    # ``hidden_left_out`` they were read as empty rows (Rows to use: visible rows only).
    n_hidden: int | None = 0
    hidden_left_out: bool = False

    def column(self, name: str) -> Column:
        """The column called ``name``; raise ColumnNotFoundError with the closest names otherwise."""
        from ..errors import ColumnNotFoundError

        if name in self.columns:
            return self.columns[name]
        import difflib

        from ..words.read_messages import not_a_header

        close = difflib.get_close_matches(name, list(self.columns), n=3, cutoff=0.5)
        raise ColumnNotFoundError(not_a_header(name, self.sheet, self.header_row, close, list(self.columns)))

    @classmethod
    def from_frame(cls, frame, sheet: str = "data") -> Table:
        """Build a Table from a pandas DataFrame (for the Python API and tests; no notes)."""
        import pandas as pd

        columns: dict[str, Column] = {}
        for i, name in enumerate(frame.columns):
            series = frame[name]
            if pd.api.types.is_datetime64_any_dtype(series):
                columns[str(name)] = _dates_column(series, str(name), column_letter(i))
                continue
            numeric = pd.to_numeric(series, errors="coerce")
            numbers = numeric.to_numpy(dtype="float64", na_value=np.nan)
            is_text = series.notna().to_numpy() & np.isnan(numbers)
            labels = np.full(len(series), None, dtype=object)
            labels[is_text] = series[is_text].astype(str).to_numpy()
            columns[str(name)] = Column(
                name=str(name),
                letter=column_letter(i),
                numbers=numbers,
                labels=labels,
                header=str(name),
                n_blank=int(series.isna().sum()),
            )
        rows = np.arange(2, len(frame) + 2, dtype=np.int64)
        return cls(sheet=sheet, header_row=1, rows=rows, columns=columns, n_rows_read=len(frame))


def _dates_column(series: Any, name: str, letter: str) -> Column:
    """A pandas column of datetimes as the reader stores dates: day numbers from 1899-12-30."""
    import pandas as pd

    stamps = pd.to_datetime(series)
    if getattr(stamps.dt, "tz", None) is not None:
        stamps = stamps.dt.tz_localize(None)
    days = (stamps - pd.Timestamp("1899-12-30")) / pd.Timedelta(days=1)
    numbers = days.to_numpy(dtype="float64", na_value=np.nan)
    present = ~np.isnan(numbers)
    return Column(name=name, letter=letter, numbers=numbers, labels=np.full(len(series), None, dtype=object),
                  header=name, n_blank=int((~present).sum()), n_dates=int(present.sum()))
