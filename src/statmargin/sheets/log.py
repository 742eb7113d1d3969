"""The run log: one row per run, the last runs kept."""

from __future__ import annotations

from collections import deque
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from ..plan.model import Settings
from ..results import Result
from ..words import sheet_texts
from .context import SHEET_NAMES, ReportContext, _finite, _run_time_text
from .model import SheetModel

# ---------------------------------------------------------------- run log


def _settings_text(settings: Settings) -> str:
    adjust = getattr(settings.adjust, "value", str(settings.adjust))
    alternative = getattr(settings.alternative, "value", str(settings.alternative))
    return f"confidence {settings.confidence:g}; adjustment {adjust}; {alternative}; alpha {settings.alpha:g}"


LOG_COLUMNS: tuple[tuple[str, str, float], ...] = (
    # (header, run_info key, width)
    ("Time (UTC)", "time", 21),
    ("Tool version", "version", 12),
    ("Workbook", "workbook", 24),
    ("Data sheet", "data_sheet", 18),
    ("Settings", "settings", 48),
    ("Rows read", "rows_read", 10),
    ("Rows used", "rows_used", 10),
    ("Analyses run", "analyses", 12),
    ("Data fingerprint", "fingerprint", 24),
)
_LOG_COUNTS = ("rows_read", "rows_used")
# The run log keeps this many runs (this one included), dropping the oldest, so a
# workbook refreshed every day does not grow without bound.
LOG_KEEP_RUNS = 100


def run_info(context: ReportContext, results: Sequence[Result]) -> dict[str, Any]:
    """This run's log row as a dict keyed like ``LOG_COLUMNS``."""
    return {
        "time": _run_time_text(context),
        "version": context.version,
        "workbook": context.workbook,
        "data_sheet": context.data_sheet,
        "settings": _settings_text(context.settings),
        "rows_read": context.rows_read,
        "rows_used": context.rows_used,
        "analyses": len(results),
        "fingerprint": context.fingerprint,
    }


def log_sheet(
    previous_rows: Sequence[Sequence[Any] | Mapping[str, Any]], run_info: Mapping[str, Any]
) -> SheetModel:
    """The run log: earlier runs' rows (read back by the pipeline) and this run's row.

    Parameters
    ----------
    previous_rows : sequence
        Earlier rows, each a sequence in ``LOG_COLUMNS`` order or a mapping keyed by
        the run-info keys (or by the headers).
    run_info : mapping
        This run, keyed like ``LOG_COLUMNS`` (see ``run_info()``).

    Returns
    -------
    SheetModel
        Kind "log", oldest run first; at most ``LOG_KEEP_RUNS`` runs, this one included.
    """
    model = SheetModel(name=SHEET_NAMES["log"], kind="log")
    model.landscape = True
    model.fit_to_width = True
    model.page_numbers = True
    model.put(0, 0, "statmargin run log", "title")
    model.put(1, 0, sheet_texts.log_intro(LOG_KEEP_RUNS), "muted")
    header = 3
    model.put_row(header, [h for h, _, _ in LOG_COLUMNS], "header")
    model.freeze = (header + 1, 0)
    model.widths = {i: width for i, (_, _, width) in enumerate(LOG_COLUMNS)}
    row = header + 1
    kept = list(previous_rows)[-(LOG_KEEP_RUNS - 1) :]  # this run makes LOG_KEEP_RUNS
    for old in kept + [run_info]:
        for col, (heading, key, _) in enumerate(LOG_COLUMNS):
            if isinstance(old, Mapping):
                value = old.get(key, old.get(heading))
            else:
                value = old[col] if col < len(old) else None
            if key in _LOG_COUNTS + ("analyses",) and _finite(value):
                model.put(row, col, int(value), "integer", is_count=key in _LOG_COUNTS)
            else:
                model.put(row, col, value, "text")
        row += 1
    return model


def parse_log_rows(rows: Iterable[Sequence[Any]]) -> list[list[Any]]:
    """Earlier runs' rows from a log sheet as read back (rows of raw cell values).

    Parameters
    ----------
    rows : iterable of sequences
        The old log sheet's rows from row 1 (title, note, header, data).

    Returns
    -------
    list of list
        Each run's row in ``LOG_COLUMNS`` order (padded with None), oldest first;
        rows above the header and blank rows are dropped, and only the newest
        ``LOG_KEEP_RUNS`` rows are kept.
    """
    width = len(LOG_COLUMNS)
    out: deque[list[Any]] = deque(maxlen=LOG_KEEP_RUNS)
    seen_header = False
    for row in rows:
        cells = list(row)[:width]
        if not seen_header:
            seen_header = bool(cells) and cells[0] == LOG_COLUMNS[0][0]
            continue
        if all(c is None or (isinstance(c, str) and not c.strip()) for c in cells):
            continue
        out.append(cells + [None] * (width - len(cells)))
    return list(out)


