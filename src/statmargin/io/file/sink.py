"""Write tool sheets into a workbook file, atomically, leaving the user's parts untouched.

The new workbook is assembled entry by entry (the user's parts as their
compressed bytes), written to a temporary file in the target folder,
verified, and only then moved over the target with ``os.replace``. On any
failure the temporary file is removed and the original stays byte for byte
as it was. Ctrl+C and stop signals (SIGINT, SIGTERM) that arrive while the
temporary file exists are held until it has either replaced the target or
been removed, so an interrupted run leaves the workbook either as it was or
completely written, and no temporary file behind.
"""

from __future__ import annotations

import hashlib
import os
import signal
import struct
import tempfile
import threading
import time
import xml.etree.ElementTree as ET
import zipfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from types import FrameType
from xml.parsers.expat import ExpatError, ParserCreate

from ...errors import StatmarginError, WorkbookError, WorkbookLockedError, WriteError
from ...sheets.model import SheetModel
from ...words import file_messages as messages
from ..protocol import WriteReport
from . import guard
from .package import PackageResult, build_package, office_document_part
from .zipio import (
    Buffer,
    ZipEntry,
    entry_of,
    entry_span,
    mapped,
    read_directory,
    read_zip,
    write_zip_to,
)

WRITABLE_SUFFIXES = (".xlsx", ".xlsm")
# Formats python-calamine reads but this writer cannot write into.
READ_ONLY_SUFFIXES = (".xls", ".xlsb", ".ods")
HELD_SIGNALS = tuple(
    getattr(signal, name) for name in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, name)
)
TEMP_PREFIX = ".statmargin-writing-"


def before_replace(temp_path: str) -> None:
    """Called after the temporary file is written and verified, just before it replaces the target.

    It does nothing; tests replace it to inject a failure at the riskiest moment.
    """


def lock_files(path: str | os.PathLike[str]) -> list[Path]:
    """Lock files that spreadsheet programs keep beside a workbook they have open.

    Parameters
    ----------
    path : str or PathLike
        The workbook.

    Returns
    -------
    list of Path
        The lock files present: Excel's ``~$name.xlsx`` and LibreOffice's
        ``.~lock.name.xlsx#``.
    """
    target = Path(path)
    candidates = [
        target.with_name("~$" + target.name),
        # Excel shortens long names by replacing their first two characters with "~$"
        # (common knowledge of Excel's owner files, recalled from memory).
        target.with_name("~$" + target.name[2:]) if len(target.name) > 2 else None,
        target.with_name(f".~lock.{target.name}#"),
    ]
    return [c for c in candidates if c is not None and c.exists()]


class FileSink:
    """A ``protocol.WorkbookSink`` that writes tool sheets into an .xlsx or .xlsm file.

    Parameters
    ----------
    path : str or PathLike
        The workbook to read (and, unless ``out`` is given, to update in place).
    """

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.path = Path(path)

    def check(self, out: str | None = None) -> str | None:
        """Refuse early, before any work, a write that cannot succeed (missing, locked, wrong type).

        Returns ``out``, or None when ``out`` names the workbook itself (an in-place write).
        """
        source = self.path
        target = Path(out) if out else source
        if out and source.exists() and target.exists() and os.path.samefile(source, target):
            out = None  # writing "a copy" over the workbook itself is an in-place write
        if source.is_dir():
            raise WorkbookError(messages.is_folder(source.name or str(source)))
        if not source.is_file():
            raise WorkbookError(messages.workbook_missing(str(source)))
        if source.suffix.lower() in READ_ONLY_SUFFIXES:
            raise WriteError(messages.legacy_format_not_writable(source.name, source.suffix.lower()))
        if out and target.is_dir():
            raise WriteError(messages.out_is_folder(str(target)))
        if target.suffix.lower() not in WRITABLE_SUFFIXES:
            raise WriteError(messages.wrong_output_suffix(target.suffix))
        if source.suffix.lower() == ".xlsm" and target.suffix.lower() != ".xlsm":
            raise WriteError(messages.macro_needs_xlsm())
        if source.suffix.lower() == ".xlsx" and target.suffix.lower() == ".xlsm":
            raise WriteError(messages.xlsx_not_as_xlsm())
        if out and not _folder(target).is_dir():
            raise WriteError(messages.out_folder_missing(str(_folder(target))))
        if out and target.is_file() and not zipfile.is_zipfile(target):
            raise WriteError(messages.out_not_a_workbook(target.name))
        locks = lock_files(target)
        if locks and not out:
            raise WorkbookLockedError(messages.locked(target.name, locks[0].name))
        if out and target.exists() and locks:
            raise WorkbookLockedError(messages.out_locked(target.name))
        if target.exists() and not _writable(target):
            raise WriteError(messages.read_only_file(target.name))
        return out

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """See ``WorkbookSink.write_sheets``; here, into the workbook file (or a copy at ``out``).

        Raises
        ------
        WorkbookError
            The workbook is missing or not a readable .xlsx/.xlsm.
        WorkbookLockedError
            The workbook is open in a spreadsheet program and ``out`` is not given.
        WriteError
            Writing or checking the new file failed; nothing was changed.

        Notes
        -----
        The check before the move reopens the new file as a zip, checks the CRC
        of every part written afresh, compares the compressed bytes of every
        untouched part with the original, parses every edited or added XML
        part, and opens the result with python-calamine.
        """
        out = self.check(out)
        source = self.path
        target = Path(out) if out else source
        if not models:  # nothing to write: leave the file alone
            return WriteReport(path=str(source), sheets={}, renamed=[], replaced=[])
        with mapped(source) as blob:
            if blob[:2] == b"PK":
                guard.check_directory(read_directory(blob), source.name)
            entries = read_zip(blob)
        # Fingerprints taken before anything is built, so the check cannot be fooled
        # by an entry object that was changed on the way.
        fingerprints = {e.name: (_digest(e.raw), e.crc) for e in entries}
        try:
            result = build_package(entries, models)
        except StatmarginError:
            raise
        except (ValueError, LookupError, IndexError, ET.ParseError) as exc:
            raise WriteError(messages.could_not_add(_brief(exc))) from exc
        del entries  # the package's entries are the ones written

        expected_names = _sheet_names_after(result)
        self._replace_atomically(target, fingerprints, result, expected_names)
        return WriteReport(
            path=str(target),
            sheets=dict(result.sheets),
            renamed=list(result.renamed),
            replaced=list(result.replaced),
        )

    def _replace_atomically(
        self,
        target: Path,
        original: dict[str, tuple[bytes, int]],
        result: PackageResult,
        expected: list[str],
    ) -> None:
        folder = _folder(target)
        remove_stale_temporaries(folder)
        with signals_held():
            try:
                fd, temp_name = tempfile.mkstemp(prefix=f"{TEMP_PREFIX}{os.getpid()}-", suffix=target.suffix,
                                                 dir=folder)
            except OSError as exc:
                raise WriteError(messages.cannot_create_in(str(folder), exc)) from exc
            temp = Path(temp_name)
            try:
                with os.fdopen(fd, "wb") as handle:
                    write_zip_to(handle, result.entries)
                    handle.flush()
                    os.fsync(handle.fileno())
                if target.exists():
                    os.chmod(temp, target.stat().st_mode & 0o7777)
                else:
                    os.chmod(temp, 0o666 & ~_umask())
                verify(temp, original, result, expected)
                before_replace(str(temp))
                os.replace(temp, target)
            except BaseException as exc:
                temp.unlink(missing_ok=True)
                if isinstance(exc, StatmarginError):
                    raise
                if isinstance(exc, OSError):
                    raise WriteError(messages.write_failed_os(target.name, exc)) from exc
                if isinstance(exc, Exception):
                    raise WriteError(messages.write_failed(target.name, _brief(exc))) from exc
                raise


@contextmanager
def signals_held() -> Iterator[None]:
    """Hold Ctrl+C and stop signals for the duration of the block, then deliver them.

    Notes
    -----
    Python runs signal handlers in the main thread only, so swapping the handlers
    there holds a signal whichever thread the system delivered it to (numerical
    libraries start threads of their own, so blocking with a signal mask would
    not). A held signal is raised again after the block with the handler that was
    in place before, so Ctrl+C still stops the program, just not half way
    through a write. Outside the main thread nothing is held.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught: list[int] = []

    def hold(signum: int, _frame: FrameType | None) -> None:
        caught.append(signum)

    previous = {sig: signal.signal(sig, hold) for sig in HELD_SIGNALS}
    try:
        yield
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler)
        if caught:
            signal.raise_signal(caught[0])


STALE_AFTER_SECONDS = 24 * 3600  # a write takes seconds; a day-old temporary file is a leftover wherever it came from


def remove_stale_temporaries(folder: Path, *, now: float | None = None) -> list[Path]:
    """Remove temporary files that a killed run (power cut, SIGKILL) left in ``folder``.

    A temporary file's name holds the id of the process writing it. It is removed
    when that process no longer runs on this machine and the file is over a minute
    old, or when it is over a day old (a writer on another machine sharing the
    folder cannot be asked whether it still runs). Files it cannot remove are left.

    Returns
    -------
    list of Path
        The files removed.
    """
    now = time.time() if now is None else now
    removed: list[Path] = []
    try:
        candidates = [p for p in folder.iterdir() if p.name.startswith(TEMP_PREFIX)]
    except OSError:
        return removed
    for path in candidates:
        try:
            age = now - path.stat().st_mtime
        except OSError:
            continue
        pid_text = path.name[len(TEMP_PREFIX):].split("-", 1)[0]
        dead = pid_text.isdigit() and not _process_alive(int(pid_text))
        if age > STALE_AFTER_SECONDS or (dead and age > 60):
            try:
                path.unlink()
                removed.append(path)
            except OSError:
                continue
    return removed


def _process_alive(pid: int) -> bool:
    """Whether a process with this id runs here (a process of another user counts as running)."""
    if os.name == "nt":  # os.kill there ends the process; only the age rule applies
        return True
    if pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def _folder(target: Path) -> Path:
    return target.parent if str(target.parent) else Path(".")


def _writable(path: Path) -> bool:
    """Whether the file may be changed: the system allows it and no read-only mark is set.

    An administrator may write anything, so the mode bits are looked at too: a
    file nobody may write is one the user marked read-only.
    """
    return os.access(path, os.W_OK) and bool(path.stat().st_mode & 0o222)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _sheet_names_after(result: PackageResult) -> list[str]:
    from .package import read_sheets

    parts = {e.name: e for e in result.entries}
    _, sheets = read_sheets(parts)
    return [s.name for s in sheets]


def verify(
    path: Path, original: dict[str, tuple[bytes, int]], result: PackageResult, expected_sheets: list[str]
) -> None:
    """Check a freshly written workbook before it replaces the user's file.

    Parameters
    ----------
    path : Path
        The temporary file.
    original : dict
        Part name -> (SHA-256 of the compressed bytes, CRC-32), taken when the
        workbook was read.
    result : PackageResult
        What the package step said it changed.
    expected_sheets : list of str
        Sheet names the new workbook must list, in order.

    Raises
    ------
    WriteError
        If any check fails.
    """
    try:
        with zipfile.ZipFile(path) as archive:
            # Only the parts written afresh are unpacked (reading checks their CRC); every
            # other part is compared below with the original's compressed bytes.
            for name in sorted(result.edited | result.added):
                _check_new_part(archive, name)
    except zipfile.BadZipFile as exc:
        raise WriteError(messages.new_file_not_zip(_brief(exc))) from exc
    try:
        with mapped(path) as blob:
            written = _check_copies(blob, original, result)
    except (ValueError, struct.error, WorkbookError) as exc:
        raise WriteError(messages.new_file_not_zip(_brief(exc))) from exc
    office_document_part(written)
    try:
        import python_calamine

        workbook = python_calamine.CalamineWorkbook.from_path(str(path))
        names = list(workbook.sheet_names)
        workbook.close()
    except Exception as exc:  # calamine raises several unrelated types
        raise WriteError(messages.not_readable_back(_brief(exc))) from exc
    if names != expected_sheets:
        raise WriteError(messages.sheets_mismatch(names, expected_sheets))


def _check_new_part(archive: zipfile.ZipFile, name: str) -> None:
    """A part written afresh is in the file, passes its CRC and, if XML, is well-formed."""
    try:
        data = archive.read(name)
    except zipfile.BadZipFile:
        raise WriteError(messages.new_part_checksum(name)) from None
    except KeyError as exc:
        raise WriteError(messages.part_not_well_formed(name, _brief(exc))) from exc
    if name.endswith((".xml", ".rels")):
        try:
            _well_formed(data)
        except (ExpatError, ValueError) as exc:
            raise WriteError(messages.part_not_well_formed(name, _brief(exc))) from exc


def _check_copies(
    blob: Buffer, original: dict[str, tuple[bytes, int]], result: PackageResult
) -> dict[str, ZipEntry]:
    """Compare every untouched part with the original; return the parts that name the workbook part.

    The compressed bytes are hashed where they lie in the file (no copy), so a
    large data sheet costs one pass of SHA-256 and no memory.
    """
    records = {r.name: r for r in read_directory(blob)}
    with memoryview(blob) as view:
        for name, (digest, crc) in original.items():
            if name in result.removed:
                if name in records and name not in result.added:
                    raise WriteError(messages.part_not_removed(name))
                continue
            if name in result.edited:
                continue
            record = records.get(name)
            if record is None or record.crc != crc:
                raise WriteError(messages.part_changed(name))
            start, end = entry_span(blob, record)
            if _digest(view[start:end]) != digest:
                raise WriteError(messages.part_changed(name))
    return {name: entry_of(blob, records[name]) for name in ("_rels/.rels", "xl/workbook.xml") if name in records}


def _well_formed(data: bytes) -> None:
    """Raise ``ExpatError`` unless the bytes are well-formed XML (expat alone: no tree is built)."""
    ParserCreate().Parse(data, True)


def _brief(exc: BaseException) -> str:
    """An exception's text on one short line, for inclusion in a one-line message."""
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 160 else text[:157] + "..."


def _digest(data: bytes | memoryview) -> bytes:
    return hashlib.sha256(data).digest()
