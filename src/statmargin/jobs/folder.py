"""Refresh every workbook in a folder at once, in parallel processes, and write one summary.

``run_folder`` runs ``jobs.workbook.run_workbook`` on each workbook that
matches a pattern, in a pool of worker processes. A workbook that fails is
reported with its one-line reason and left byte for byte as it was (the
workbook job writes atomically and never before the analyses succeed); the
others go on. A summary workbook (one row per workbook and analysis) is
written as a new file unless told not to, and the exit status says whether
any workbook failed.

The worker is a top-level function with picklable arguments, so the pool
works under the ``spawn`` start method (Windows, macOS) as well as ``fork``.
"""

from __future__ import annotations

import os
import time
import warnings
from collections.abc import Callable
from concurrent.futures import Future, ProcessPoolExecutor, as_completed
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .._version import __version__
from ..errors import EXIT_BUG, OptionError, StatmarginError, exit_code_for

SUMMARY_NAME = "statmargin-summary.xlsx"
# Files a folder run never opens: spreadsheet lock files and statmargin's own temporary files.
_SKIP_PREFIXES = ("~$", ".~lock.", ".statmargin-writing-")

# Called in the parent process as each workbook finishes: (done, total, outcome).
FolderProgress = Callable[[int, int, "WorkbookOutcome"], None]


@dataclass
class WorkbookOutcome:
    """What happened to one workbook of a folder run."""

    path: str
    ok: bool
    results: list[Any] = field(default_factory=list)
    message: str | None = None  # the one-line reason a workbook failed
    exit_code: int = 0
    seconds: float = 0.0
    rows_read: int = 0
    sheets: dict[str, str] = field(default_factory=dict)

    @property
    def name(self) -> str:
        return Path(self.path).name

    @property
    def status(self) -> str:
        from ..words.period_words import STATUS_FAILED, STATUS_REFRESHED

        return STATUS_REFRESHED if self.ok else STATUS_FAILED

    def to_record(self) -> dict[str, Any]:
        return {
            "path": self.path,
            "status": self.status,
            "message": self.message,
            "exit_code": self.exit_code,
            "rows_read": self.rows_read,
            "sheets": self.sheets,
            "analyses": [r.to_record() for r in self.results],
        }


@dataclass
class FolderSummary:
    """What ``run_folder`` did: one outcome per workbook, the summary file and the exit status."""

    folder: str
    pattern: str
    outcomes: list[WorkbookOutcome]
    summary_path: str | None = None
    seconds: float = 0.0

    @property
    def failed(self) -> list[WorkbookOutcome]:
        return [o for o in self.outcomes if not o.ok]

    @property
    def exit_code(self) -> int:
        """0 when every workbook was refreshed, else the highest exit code among the failures."""
        return max((o.exit_code for o in self.failed), default=0)

    def to_record(self) -> dict[str, Any]:
        """The folder's JSON document: one record per workbook."""
        return {
            "tool": "statmargin",
            "version": __version__,
            "folder": self.folder,
            "pattern": self.pattern,
            "summary": self.summary_path,
            "workbooks": [o.to_record() for o in self.outcomes],
        }


def list_workbooks(folder: str | os.PathLike[str], pattern: str = "*.xlsx", *, exclude: Path | None = None) -> list[Path]:
    """Workbooks in ``folder`` matching ``pattern`` (not recursive unless the pattern says ``**``), sorted.

    Lock files, statmargin's temporary files and ``exclude`` (the summary) are left out.
    """
    base = Path(folder)
    skip = exclude.resolve() if exclude is not None else None
    found = []
    for path in sorted(base.glob(pattern)):
        if not path.is_file() or path.name.startswith(_SKIP_PREFIXES):
            continue
        if skip is not None and path.resolve() == skip:
            continue
        found.append(path)
    return found


def refresh_one(path: str, share: bool = False, min_count: int | None = None) -> WorkbookOutcome:
    """Run one workbook in a worker; every failure becomes an outcome with a one-line message."""
    from ..words.period_words import folder_bug
    from .workbook import run_workbook

    started = time.perf_counter()
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # caveats are in each result's notes
            summary = run_workbook(path, share=share, min_count=min_count)
    except StatmarginError as err:
        return WorkbookOutcome(
            path, False, message=" ".join(str(err).split()), exit_code=exit_code_for(err),
            seconds=time.perf_counter() - started,
        )
    except Exception as err:  # a bug in statmargin: reported for this file, the others go on
        text = " ".join(str(err).split())[:200]
        return WorkbookOutcome(
            path, False, message=folder_bug(type(err).__name__, text), exit_code=EXIT_BUG,
            seconds=time.perf_counter() - started,
        )
    return WorkbookOutcome(
        path,
        True,
        results=list(summary.results),
        seconds=time.perf_counter() - started,
        rows_read=summary.rows_read,
        sheets=dict(summary.write.sheets),
    )


def run_folder(
    folder: str | os.PathLike[str],
    pattern: str = "*.xlsx",
    *,
    jobs: int | None = None,
    summary: bool = True,
    summary_path: str | os.PathLike[str] | None = None,
    share: bool = False,
    min_count: int | None = None,
    progress: FolderProgress | None = None,
) -> FolderSummary:
    """Refresh every workbook in a folder, in parallel, and write a summary workbook.

    Parameters
    ----------
    folder : str or PathLike
        The folder of workbooks (each with a roles sheet).
    pattern : str
        Which files to refresh (glob, default ``*.xlsx``).
    jobs : int, optional
        Worker processes (default: the number of CPUs, at most the number of
        workbooks); 1 runs them one by one in this process.
    summary : bool
        Write the summary workbook (default True).
    summary_path : str or PathLike, optional
        Where (default ``statmargin-summary.xlsx`` in the folder). An earlier
        summary there is replaced; any other file there is refused.
    share, min_count
        Sharing mode for every workbook (see ``run_workbook``).
    progress : callable, optional
        Called in this process as each workbook finishes, with (done, total, outcome).

    Returns
    -------
    FolderSummary
        Outcomes in file-name order, the summary's path and ``exit_code``.

    Raises
    ------
    OptionError
        If the folder does not exist, nothing matches, ``jobs`` is below 1, or
        the summary target is a file statmargin did not write.
    """
    from ..io.file.newbook import is_own_workbook
    from ..words.period_words import bad_jobs, folder_empty, folder_missing

    started = time.perf_counter()
    base = Path(folder)
    if not base.is_dir():
        raise OptionError(folder_missing(str(base)))
    if jobs is not None and jobs < 1:
        raise OptionError(bad_jobs())
    target = Path(summary_path) if summary_path is not None else base / SUMMARY_NAME
    from ..sheets.folder_summary import KIND as SUMMARY_KIND

    if summary and target.exists() and not is_own_workbook(target, {SUMMARY_KIND}):
        from ..words.period_words import summary_exists

        raise OptionError(summary_exists(str(target)))  # refused before any workbook is touched
    paths = list_workbooks(base, pattern, exclude=target)
    if not paths:
        raise OptionError(folder_empty(str(base), pattern))
    workers = min(jobs or os.cpu_count() or 1, len(paths))
    total = len(paths)
    by_path: dict[str, WorkbookOutcome] = {}

    def finished(outcome: WorkbookOutcome) -> None:
        by_path[outcome.path] = outcome
        if progress is not None:
            progress(len(by_path), total, outcome)

    if workers == 1:
        for path in paths:
            finished(refresh_one(str(path), share, min_count))
    else:
        _preload()  # forked workers then share these modules instead of each importing them
        with ProcessPoolExecutor(max_workers=workers, initializer=_preload) as pool:
            futures: dict[Future[WorkbookOutcome], str] = {
                pool.submit(refresh_one, str(path), share, min_count): str(path) for path in paths
            }
            for future in as_completed(futures):
                finished(_outcome_of(future, futures[future]))
    outcomes = [by_path[str(path)] for path in paths]
    written = None
    if summary:
        written = write_summary(base, outcomes, target)
    return FolderSummary(str(base), pattern, outcomes, written, time.perf_counter() - started)


def _preload() -> None:
    """Import what refreshing a workbook needs.

    Called in the parent before the pool starts, so workers made by ``fork``
    inherit the modules (about half a second of imports each, measured, saved
    per worker), and as the pool's initializer, so workers made by ``spawn``
    import them before their first workbook rather than during it.
    """
    from ..designs import engine  # noqa: F401
    from ..io import backends  # noqa: F401
    from ..io.file import sink, source  # noqa: F401
    from ..read import reader  # noqa: F401
    from ..sheets import report  # noqa: F401
    from ..words import explain  # noqa: F401
    from . import workbook  # noqa: F401


def _outcome_of(future: Future[WorkbookOutcome], path: str) -> WorkbookOutcome:
    """A finished worker's outcome; a worker that died (killed, out of memory) is a failure too."""
    from ..words.period_words import folder_bug

    try:
        return future.result()
    except Exception as err:  # BrokenProcessPool and the like: the file was not written
        text = " ".join(str(err).split())[:200]
        return WorkbookOutcome(path, False, message=folder_bug(type(err).__name__, text), exit_code=EXIT_BUG)


def write_summary(folder: Path, outcomes: list[WorkbookOutcome], target: Path) -> str:
    """Write the summary workbook as a new file (an earlier summary is replaced)."""
    from ..io.file.newbook import write_new_workbook
    from ..sheets.folder_summary import KIND, summary_sheet

    model = summary_sheet(str(folder), outcomes)
    return write_new_workbook(target, [model], replace_kinds={KIND}).path
