"""Write tool sheets into a workbook file, atomically, leaving the user's parts untouched.

The new workbook is assembled in memory, written to a temporary file in the
target folder, verified, and only then moved over the target with
``os.replace``. On any failure the temporary file is removed and the original
stays byte for byte as it was.
"""

from __future__ import annotations

import hashlib
import os
import tempfile
import xml.etree.ElementTree as ET
import zipfile
from pathlib import Path

from ...errors import StatmarginError, WorkbookError, WorkbookLockedError, WriteError
from ...sheets.model import SheetModel
from ..protocol import WriteReport
from .package import PackageResult, build_package, office_document_part
from .zipio import read_zip, write_zip

WRITABLE_SUFFIXES = (".xlsx", ".xlsm")
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
        if not source.is_file():
            raise WorkbookError(f"The workbook {source} does not exist; check the path.")
        if target.suffix.lower() not in WRITABLE_SUFFIXES:
            raise WriteError(
                f"statmargin writes .xlsx or .xlsm workbooks, not '{target.suffix}'; save the file as .xlsx and try again."
            )
        if source.suffix.lower() == ".xlsm" and target.suffix.lower() != ".xlsm":
            raise WriteError(
                "A macro workbook (.xlsm) must be written to an .xlsm file; change the output name to end in .xlsm."
            )
        if source.suffix.lower() == ".xlsx" and target.suffix.lower() == ".xlsm":
            raise WriteError(
                "An .xlsx workbook cannot be written as .xlsm; change the output name to end in .xlsx."
            )
        locks = lock_files(target)
        if locks and not out:
            raise WorkbookLockedError(
                f"{target.name} is open in a spreadsheet program (lock file {locks[0].name}); close it there, or write a copy with --out."
            )
        if out and target.exists() and locks:
            raise WorkbookLockedError(
                f"{target.name} is open in a spreadsheet program; close it or choose another output name."
            )

        return out

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        """Put the models into the workbook (or a copy at ``out``), replacing earlier tool sheets.

        Parameters
        ----------
        models : list of SheetModel
            Tool sheets to write, at most one per kind.
        out : str, optional
            Write a copy here instead of updating the workbook in place.

        Returns
        -------
        WriteReport
            Final sheet names by kind, renames and replaced sheets.

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
        The check before the move reopens the new file as a zip, compares the
        compressed bytes of every untouched part with the original, parses every
        edited or added XML part, and opens the result with python-calamine.
        """
        out = self.check(out)
        source = self.path
        target = Path(out) if out else source
        if not models:  # nothing to write: leave the file alone
            return WriteReport(path=str(source), sheets={}, renamed=[], replaced=[])
        blob = source.read_bytes()
        entries = read_zip(blob)
        # Fingerprints taken before anything is built, so the check cannot be fooled
        # by an entry object that was changed on the way.
        fingerprints = {e.name: (_digest(e.raw), e.crc) for e in entries}
        try:
            result = build_package(entries, models)
            new_blob = write_zip(result.entries)
        except StatmarginError:
            raise
        except (ValueError, LookupError, IndexError, ET.ParseError) as exc:
            raise WriteError(
                f"statmargin could not add its sheets to this workbook ({_brief(exc)}); the file was left as it was."
            ) from exc

        expected_names = _sheet_names_after(result)
        self._replace_atomically(target, new_blob, fingerprints, result, expected_names)
        return WriteReport(
            path=str(target),
            sheets=dict(result.sheets),
            renamed=list(result.renamed),
            replaced=list(result.replaced),
        )

    def _replace_atomically(
        self,
        target: Path,
        new_blob: bytes,
        original: dict[str, tuple[bytes, int]],
        result: PackageResult,
        expected: list[str],
    ) -> None:
        folder = target.parent if str(target.parent) else Path(".")
        try:
            fd, temp_name = tempfile.mkstemp(prefix=TEMP_PREFIX, suffix=target.suffix, dir=folder)
        except OSError as exc:
            raise WriteError(
                f"Cannot create a file in {folder} ({exc.strerror}); check that the folder is writable."
            ) from exc
        temp = Path(temp_name)
        try:
            with os.fdopen(fd, "wb") as handle:
                handle.write(new_blob)
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
            if isinstance(exc, Exception):
                raise WriteError(
                    f"Writing {target.name} failed ({_brief(exc)}); the original file was left as it was."
                ) from exc
            raise


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
    blob = path.read_bytes()
    try:
        with zipfile.ZipFile(path) as archive:
            bad = archive.testzip()
            if bad is not None:
                raise WriteError(
                    f"The new file's part {bad} fails its checksum; the original file was left as it was."
                )
    except zipfile.BadZipFile as exc:
        raise WriteError(
            f"The new file is not a valid zip ({_brief(exc)}); the original file was left as it was."
        ) from exc
    written = {e.name: e for e in read_zip(blob)}
    for name, (digest, crc) in original.items():
        if name in result.removed:
            if name in written and name not in result.added:
                raise WriteError(
                    f"The part {name} should have been removed; the original file was left as it was."
                )
            continue
        if name in result.edited:
            continue
        copy = written.get(name)
        if copy is None or _digest(copy.raw) != digest or copy.crc != crc:
            raise WriteError(
                f"The part {name} changed while copying; the original file was left as it was."
            )
    for name in result.edited | result.added:
        if name.endswith((".xml", ".rels")):
            try:
                ET.fromstring(written[name].data())
            except (ET.ParseError, LookupError, ValueError) as exc:
                raise WriteError(
                    f"The new part {name} is not well-formed XML ({_brief(exc)}); the original file was left as it was."
                ) from exc
    office_document_part(written)
    try:
        import python_calamine

        workbook = python_calamine.CalamineWorkbook.from_path(str(path))
        names = list(workbook.sheet_names)
        workbook.close()
    except Exception as exc:  # calamine raises several unrelated types
        raise WriteError(
            f"The new file could not be read back ({_brief(exc)}); the original file was left as it was."
        ) from exc
    if names != expected_sheets:
        raise WriteError(
            f"The new file lists sheets {names}, expected {expected_sheets}; the original file was left as it was."
        )


def _brief(exc: BaseException) -> str:
    """An exception's text on one short line, for inclusion in a one-line message."""
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 160 else text[:157] + "..."


def _digest(data: bytes) -> bytes:
    return hashlib.sha256(data).digest()
