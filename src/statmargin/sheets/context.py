"""What the sheets say about a run besides its results, and helpers every sheet uses."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any, TypeGuard

import numpy as np

from .._version import __version__
from ..io.addresses import column_letter
from ..plan.model import Settings
from ..read.table import Table
from ..results import Result
from ..vocabulary.codes import Hidden
from .model import SheetModel
from .share import DEFAULT_MIN_COUNT

# Preferred sheet names (the writer picks others if a user sheet has the name).
SHEET_NAMES = {
    "results": "statmargin results",
    "shape": "statmargin shape checks",
    "notes": "statmargin data notes",
    "log": "statmargin run log",
    "periods": "statmargin periods",
}

MAX_DECIMALS = 4  # the most decimals a column's own values are shown with
_PRECISION_SAMPLE = 5000  # values looked at to find a column's precision


@dataclass
class ReportContext:
    """What the sheets say about the run besides the results (filled by the pipeline).

    ``samples`` holds the values behind each continuous analysis for the histograms,
    keyed by ``analysis_key(result)`` and then by group label (or variable name for
    two measures); analyses without samples get no histogram. ``share_mode`` and
    ``share_min_count`` describe sharing mode (see ``share``).
    """

    workbook: str = ""
    data_sheet: str = ""
    header_row: int = 1
    rows_read: int = 0
    rows_used: int = 0
    run_time: datetime | None = None
    version: str = __version__
    settings: Settings = field(default_factory=Settings)
    units: dict[str, str] = field(default_factory=dict)
    share_mode: bool = False
    share_min_count: int = DEFAULT_MIN_COUNT
    link_sheet: str | None = None  # sheet for links to data cells; defaults to data_sheet
    column_letters: dict[str, str] = field(default_factory=dict)
    observational: bool = True
    samples: dict[tuple[str, str, str], Mapping[str, Any]] = field(default_factory=dict)
    fingerprint: str = ""
    decimals: dict[str, int] = field(default_factory=dict)  # each numeric column's own precision
    hidden_rows: Any = 0  # data rows a filter or the user hid (None: cannot tell; a Hidden mark in sharing mode)
    changes: list[str] = field(default_factory=list)  # what changed since the last run (lines; none: not tracked)

    @classmethod
    def from_run(
        cls,
        *,
        workbook: str,
        table: Table | None = None,
        results: Sequence[Result] = (),
        samples: Sequence[Mapping[str, Any]] = (),
        settings: Settings | None = None,
        version: str = __version__,
        started: datetime | None = None,
        seconds: float | None = None,
        share_min_count: int | None = None,
        units: Mapping[str, str] | None = None,
    ) -> ReportContext:
        """A context filled from a finished run (as the workbook pipeline has it).

        Parameters
        ----------
        workbook : str
            The workbook's file name.
        table : Table, optional
            The data as read: sheet, header row, rows read, fingerprint, column
            letters and units come from it.
        results : sequence of Result
            The run's results; rows used is the largest ``n`` among them.
        samples : sequence of mappings, optional
            The values behind each result, by group label (``designs.base.Prepared.samples``),
            in the order of ``results``; what the histograms draw.
        settings : Settings, optional
        version : str
        started : datetime, optional
            When the run started (UTC); now when not given.
        seconds : float, optional
            Not shown; accepted so callers can pass the run's duration.
        share_min_count : int, optional
            Sharing mode is on when this is given (counts below it are hidden).
        units : mapping, optional
            Units per column; by default each column's ``units`` from the table.
        """
        del seconds  # the run time shown is the start time
        unit_map: dict[str, str] = dict(units or {})
        letters: dict[str, str] = {}
        decimals: dict[str, int] = {}
        if table is not None:
            for name, column in table.columns.items():
                letters[name] = column.letter
                decimals[name] = column_decimals(column.numbers)
                if column.units and name not in unit_map:
                    unit_map[name] = column.units
        drawn = {
            analysis_key(result): values
            for result, values in zip(results, samples, strict=False)
            if values and not result.skipped
        }
        used = max((int(r.n) for r in results if not r.skipped and isinstance(r.n, int)), default=0)
        return cls(
            workbook=workbook,
            data_sheet=table.sheet if table is not None else "",
            header_row=table.header_row if table is not None else 1,
            rows_read=int(table.n_rows_read) if table is not None else 0,
            rows_used=used,
            run_time=started,
            version=version,
            settings=settings or Settings(),
            units=unit_map,
            share_mode=share_min_count is not None,
            share_min_count=share_min_count if share_min_count is not None else DEFAULT_MIN_COUNT,
            link_sheet=table.sheet if table is not None else None,
            column_letters=letters,
            samples=drawn,
            fingerprint=table.fingerprint if table is not None else "",
            decimals=decimals,
            hidden_rows=shown_count(table.n_hidden if table is not None else 0, share_min_count),
        )


def column_decimals(numbers: np.ndarray) -> int:
    """How many decimals a column's values carry (0 for whole numbers), at most ``MAX_DECIMALS``.

    Found on the first finite values (up to 5,000): the smallest number of decimals
    that writes each of them exactly to within 1e-6 of a unit in the last place.

    Examples
    --------
    >>> column_decimals(np.array([12.0, 15.5, np.nan, 9.25]))
    2
    """
    finite = numbers[np.isfinite(numbers)][:_PRECISION_SAMPLE]
    for places in range(MAX_DECIMALS + 1):
        scaled = finite * 10.0**places
        if np.all(np.abs(scaled - np.round(scaled)) < 1e-6):
            return places
    return MAX_DECIMALS


def shown_count(count: Any, floor: int | None) -> Any:
    """A count as sharing mode shows it: hidden when it is from 1 to ``floor - 1`` (no floor: as it is)."""
    if floor is None or not isinstance(count, int) or isinstance(count, bool) or not 0 < count < floor:
        return count
    return Hidden(floor)


def analysis_key(result: Result) -> tuple[str, str, str]:
    """The key of a result in ``ReportContext.samples``: (outcome, exposure, pairing)."""
    return (result.outcome or "", result.exposure or "", result.pairing or "")


def quote_sheet(name: str) -> str:
    """A sheet name quoted for a cell reference: ``'Site visits'`` (inner quotes doubled)."""
    return "'" + name.replace("'", "''") + "'"


def _finite(value: Any) -> TypeGuard[int | float]:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _num(value: Any) -> Any:
    """A finite number as float, a count hidden by sharing mode as it is, else None (an empty cell)."""
    if isinstance(value, Hidden):
        return value
    if hasattr(value, "item") and not isinstance(value, (list, tuple, dict)):
        value = value.item()
    return float(value) if _finite(value) else None


def _a1(row: int, col: int, absolute: bool = False) -> str:
    if absolute:
        return f"${column_letter(col)}${row + 1}"
    return f"{column_letter(col)}{row + 1}"


def _run_time_text(context: ReportContext) -> str:
    when = context.run_time or datetime.now(timezone.utc)
    if when.tzinfo is not None:
        when = when.astimezone(timezone.utc)
    return when.replace(microsecond=0, tzinfo=None).isoformat() + "Z"


def _suppressed_fields(result: Result) -> set[str]:
    marks = result.extra.get("suppressed") if isinstance(result.extra, Mapping) else None
    return set(marks) if isinstance(marks, (list, tuple, set)) else set()


def _value(model: SheetModel, row: int, col: int, value: Any, style: str, hidden: bool) -> None:
    if hidden:
        model.put(row, col, "suppressed", "suppressed")
    else:
        number = _num(value)
        model.put(row, col, number, style if number is not None else "text")
