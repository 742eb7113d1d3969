"""Checks a workbook file must pass before anything unpacks it.

Workbooks arrive as email attachments, from shared drives and from other
programs, so the file back end looks at a file's first bytes and its zip
directory (never at the packed data) before python-calamine or the writer
touches it. A file that fails gets a one-line ``WorkbookError``:

* the path: missing, a folder, unreadable, empty;
* the kind: plain text (CSV) under a workbook's name, bytes that are no
  workbook, an encrypted (password-protected) workbook;
* the zip directory: more than ``MAX_PARTS`` parts, an entry name that points
  outside the package (``../``, an absolute path, a drive letter), two parts of
  one name, a compression method spreadsheet programs do not use;
* size limits, checked on the sizes the directory declares, before unpacking:
  all parts together may unpack to at most ``MAX_UNPACKED_BYTES`` (4 GiB), and a
  part above ``RATIO_FLOOR_BYTES`` may unpack to at most ``MAX_RATIO`` times its
  packed size (zip bombs pack about 1,000 to 1; real sheets about 10 to 20).

A part that unpacks to more than it declares (the other kind of zip bomb) is
stopped as soon as it does: python-calamine's zip reader, ``zipfile`` and
``zipio.ZipEntry.data`` never inflate past the declared size, so the declared
limits bound the actual work too.

python-calamine holds a sheet as one dense block from its first to its last
used row and column, so two values far apart (A1 and XFD1048576) would ask for
17 billion cells and end the program. :func:`check_sheet_extent` finds the block
a sheet spans before calamine loads it and refuses one above
``MAX_SHEET_CELLS`` cells, or with a cell outside the grid.
"""

from __future__ import annotations

import mmap
import os
import posixpath
import re
import zipfile
import zlib
from collections.abc import Iterator, Sequence
from enum import Enum
from typing import IO

import numpy as np

from ...errors import WorkbookError
from ...words import file_messages as messages
from .zipio import DirectoryRecord, read_directory

MAX_PARTS = 65_535  # the most a zip without ZIP64 holds; workbooks with 500 sheets have ~1,500
MAX_UNPACKED_BYTES = 4 << 30  # 4 GiB: a 1,048,576-row sheet of 30 columns is about 1.5 GiB
RATIO_FLOOR_BYTES = 16 << 20  # smaller parts cannot do harm whatever their ratio
MAX_RATIO = 250  # measured on invented sheets from xlsxwriter: 12 to 17
# A sheet may span at most this many cells from its first to its last used row and column
# (1,048,576 rows by 95 columns); python-calamine stores about 32 bytes per spanned cell.
MAX_SHEET_CELLS = 100_000_000
# Sheet parts up to this size are scanned cell by cell; larger ones are taken at their
# <dimension> (which writers compute from the cells) unless it is missing or too large.
EXACT_SCAN_BYTES = 4 << 20
MAX_ROWS, MAX_COLUMNS = 1_048_576, 16_384
# What ``zipfile`` raises on a damaged package or part (a cut stream ends in EOFError).
ZIP_READ_ERRORS = (OSError, EOFError, KeyError, ValueError, NotImplementedError, zlib.error, zipfile.BadZipFile)  # the grid (ECMA-376 Part 1, 18.3.1.73 and 18.3.1.13)

_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
_ZIP_MAGIC = b"PK\x03\x04"
_EMPTY_ZIP = b"PK\x05\x06"
# An encrypted OOXML file is an OLE container holding a stream of this name.
_ENCRYPTED_STREAM = "EncryptedPackage".encode("utf-16-le")
_DRIVE = re.compile(r"^[A-Za-z]:")
_SNIFF_BYTES = 4096


class FileKind(Enum):
    """What a workbook file is, judged from its first bytes."""

    PACKAGE = "package"  # a zip: .xlsx, .xlsm, .xlsb or .ods
    LEGACY = "legacy"  # a compound file: an .xls workbook


def check_file(path: str | os.PathLike[str]) -> FileKind:
    """Refuse a workbook path that cannot or should not be opened; say what kind of file it is.

    Parameters
    ----------
    path : str or PathLike
        The workbook.

    Returns
    -------
    FileKind
        ``PACKAGE`` for a zip that passed :func:`check_directory`, ``LEGACY``
        for an unencrypted compound file.

    Raises
    ------
    WorkbookError
        With a one-line message naming the file and what to do.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (folder / "notes.xlsx").write_text("Site,Wait\\nNorth,30\\n")
    >>> check_file(folder / "notes.xlsx")
    Traceback (most recent call last):
    ...
    statmargin.errors.WorkbookError: File 'notes.xlsx' is plain text (for example CSV), not a workbook; open it in a spreadsheet program and save it as an Excel workbook (.xlsx).
    """
    name = os.fspath(path)
    display = os.path.basename(name) or name
    if os.path.isdir(name):
        raise WorkbookError(messages.is_folder(display))
    if not os.path.exists(name):
        raise WorkbookError(messages.file_not_found(display))
    try:
        with open(name, "rb") as handle:
            head = handle.read(_SNIFF_BYTES)
            size = os.fstat(handle.fileno()).st_size
            if head.startswith(_ZIP_MAGIC) or head.startswith(_EMPTY_ZIP):
                with mmap.mmap(handle.fileno(), 0, access=mmap.ACCESS_READ) as mapped:
                    records = read_directory(mapped, display)
                check_directory(records, display)
                if not _holds_workbook(records):
                    raise WorkbookError(messages.zip_not_workbook(display))
                return FileKind.PACKAGE
            if head.startswith(_OLE_MAGIC):
                # The stream name sits in the container's directory, near the start.
                if _ENCRYPTED_STREAM in head + handle.read(1 << 20):
                    raise WorkbookError(messages.encrypted(display))
                return FileKind.LEGACY
    except OSError as exc:
        raise WorkbookError(messages.not_readable(display, exc.strerror or str(exc))) from None
    if size == 0:
        raise WorkbookError(messages.empty_file(display))
    if _looks_like_text(head):
        raise WorkbookError(messages.text_file(display))
    raise WorkbookError(messages.not_a_workbook(display))


def check_directory(records: Sequence[DirectoryRecord], display: str) -> None:
    """Refuse a zip whose directory shows a hostile or damaged package, before unpacking anything.

    Parameters
    ----------
    records : sequence of DirectoryRecord
        The zip's central directory (``zipio.read_directory``).
    display : str
        The file's name for messages.

    Raises
    ------
    WorkbookError
        Too many parts, an unsafe or repeated part name, an unknown compression
        method, or declared sizes above the limits in this module's docstring.

    Examples
    --------
    >>> from statmargin.io.file.zipio import DirectoryRecord
    >>> def record(name, packed, unpacked):
    ...     return DirectoryRecord(name, 8, 0, 0, packed, unpacked, 0, 0, 0, 0, b"")
    >>> check_directory([record("xl/workbook.xml", 900, 4000)], "ok.xlsx")
    >>> check_directory([record("../../evil.sh", 10, 10)], "bad.xlsx")
    Traceback (most recent call last):
    ...
    statmargin.errors.WorkbookError: File 'bad.xlsx' holds an entry named '../../evil.sh', which no spreadsheet program writes (it could point outside the file); statmargin does not open such files. Ask the sender for a workbook saved from a spreadsheet program.
    """
    if len(records) > MAX_PARTS:
        raise WorkbookError(messages.too_many_parts(display, len(records), MAX_PARTS))
    seen: set[str] = set()
    total = 0
    for record in records:
        if not _safe_name(record.name):
            raise WorkbookError(messages.unsafe_part_name(display, record.name))
        # Part names compare without case (ECMA-376 Part 2, 6.2.2.3).
        folded = record.name.casefold()
        if folded in seen:
            raise WorkbookError(messages.duplicate_part(display, record.name))
        seen.add(folded)
        if record.method not in (0, 8):
            raise WorkbookError(messages.unknown_compression(display, record.name, record.method))
        total += record.size
        if total > MAX_UNPACKED_BYTES:
            raise WorkbookError(messages.unpacks_too_large(display, sum(r.size for r in records), MAX_UNPACKED_BYTES))
        if record.size > RATIO_FLOOR_BYTES and record.size > MAX_RATIO * max(record.comp_size, 1):
            ratio = record.size / max(record.comp_size, 1)
            raise WorkbookError(messages.packed_too_tightly(display, record.name, ratio, MAX_RATIO))


def check_sheet_extent(path: str | os.PathLike[str], part: str, display: str, sheet: str) -> None:
    """Refuse a sheet whose used cells span more than ``MAX_SHEET_CELLS`` or leave the grid.

    Parameters
    ----------
    path : str or PathLike
        The workbook (a zip package).
    part : str
        The sheet's XML part, e.g. ``xl/worksheets/sheet1.xml``.
    display, sheet : str
        The file's and the sheet's names, for messages.

    Raises
    ------
    WorkbookError
        If the span is too large or a reference is outside A1:XFD1048576.

    Notes
    -----
    Every row and cell reference (``r="..."``) is read with vectorised byte
    comparisons, 4 MiB of XML at a time. Parts above ``EXACT_SCAN_BYTES`` are
    taken at their declared ``<dimension>`` when it is present and small, since
    scanning them would cost about a fifth of the reading time; a file crafted
    with a false dimension and a far cell in a part that large is the case left
    open.
    """
    try:
        with zipfile.ZipFile(path) as archive:
            info = archive.getinfo(part)
            with archive.open(info) as stream:
                head = stream.read(1 << 16)
                bounds = _dimension(head)
                if bounds is None or info.file_size <= EXACT_SCAN_BYTES or _area(bounds) > MAX_SHEET_CELLS:
                    bounds = _scan_references(_blocks(head, stream))
    except ZIP_READ_ERRORS:
        return  # damaged or absent: python-calamine reports it in its own words
    if bounds is None:
        return
    first_row, last_row, first_col, last_col = bounds
    if last_row > MAX_ROWS or last_col > MAX_COLUMNS:
        raise WorkbookError(messages.cell_outside_grid(display, sheet, _ref(last_row, last_col)))
    if _area(bounds) > MAX_SHEET_CELLS:
        span = f"{_ref(first_row, first_col)}:{_ref(last_row, last_col)}"
        raise WorkbookError(messages.sheet_too_spread(display, sheet, span, _area(bounds), MAX_SHEET_CELLS))


Bounds = tuple[int, int, int, int]  # first row, last row, first column, last column (1-based)
_DIMENSION = re.compile(rb"<(?:\w+:)?dimension\s+ref=[\"']\$?([A-Z]{1,4})\$?(\d{1,9})(?::\$?([A-Z]{1,4})\$?(\d{1,9}))?[\"']")


def _dimension(head: bytes) -> Bounds | None:
    match = _DIMENSION.search(head)
    if match is None:
        return None
    c1, r1, c2, r2 = match.groups()
    return int(r1), int(r2 or r1), _column_number(c1), _column_number(c2 or c1)


def _column_number(letters: bytes) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + ch - 64
    return n


def _ref(row: int, col: int) -> str:
    letters = ""
    while col > 0:
        col, rem = divmod(col - 1, 26)
        letters = chr(65 + rem) + letters
    return f"{letters}{row}"


def _area(bounds: Bounds) -> int:
    first_row, last_row, first_col, last_col = bounds
    return max(0, last_row - first_row + 1) * max(0, last_col - first_col + 1)


def _blocks(head: bytes, stream: IO[bytes]) -> Iterator[bytes]:
    """The part's XML in blocks that end at a tag's end, so no reference is split."""
    tail = head
    while True:
        chunk = stream.read(1 << 22)
        if not chunk:
            yield tail
            return
        block = tail + chunk
        cut = block.rfind(b">") + 1
        yield block[:cut]
        tail = block[cut:]


def _scan_references(blocks: Iterator[bytes]) -> Bounds | None:
    """First and last row and column over every ``r="..."`` attribute (rows and cells) in the blocks."""
    rows: list[int] = []
    cols: list[int] = []
    for block in blocks:
        found = _block_references(block)
        if found is not None:
            rows.extend(found[:2])
            cols.extend(found[2:])
    if not rows:
        return None
    return min(rows), max(rows), (min(cols) if cols else 1), (max(cols) if cols else 1)


def _block_references(block: bytes) -> list[int] | None:
    """[min row, max row(, min column, max column)] of the references in one block, or None."""
    a = np.frombuffer(block, dtype=np.uint8)
    n = a.size
    if n < 6:
        return None
    # ' r="' or ' r=\'' after whitespace: the r attribute of <row> and <c>.
    before = a[: n - 4]
    hit = (a[1 : n - 3] == ord("r")) & (a[2 : n - 2] == ord("=")) & ((a[3 : n - 1] == ord('"')) | (a[3 : n - 1] == ord("'")))
    hit &= (before == ord(" ")) | (before == ord("\t")) | (before == ord("\n")) | (before == ord("\r"))
    start = np.flatnonzero(hit) + 4
    if start.size == 0:
        return None
    padded = np.concatenate([a, np.zeros(16, dtype=np.uint8)])
    col = np.zeros(start.size, dtype=np.int64)
    letters = np.zeros(start.size, dtype=np.int64)
    going = np.ones(start.size, dtype=bool)
    for k in range(4):  # three letters at most in the grid; a fourth marks a reference outside it
        ch = padded[start + k].astype(np.int64)
        going &= (ch >= ord("A")) & (ch <= ord("Z"))
        col = np.where(going, col * 26 + ch - 64, col)
        letters += going
    row = np.zeros(start.size, dtype=np.int64)
    going = np.ones(start.size, dtype=bool)
    for k in range(9):  # seven digits at most in the grid
        ch = padded[start + letters + k].astype(np.int64)
        going &= (ch >= ord("0")) & (ch <= ord("9"))
        row = np.where(going, row * 10 + ch - 48, row)
    numbered = row > 0
    if not numbered.any():
        return None
    out = [int(row[numbered].min()), int(row[numbered].max())]
    lettered = letters > 0
    if lettered.any():
        out += [int(col[lettered].min()), int(col[lettered].max())]
    return out


def _holds_workbook(records: Sequence[DirectoryRecord]) -> bool:
    """Whether a zip has the part every workbook package has (OOXML content types, or ODF content)."""
    names = {record.name.casefold() for record in records}
    return "[content_types].xml" in names or "content.xml" in names


def _safe_name(name: str) -> bool:
    """Whether a zip entry name stays inside the package (no ``..``, root, drive or NUL)."""
    if not name or "\x00" in name:
        return False
    path = name.replace("\\", "/")
    if path.startswith("/") or _DRIVE.match(path):
        return False
    return ".." not in path.split("/") and not posixpath.isabs(path)


def _looks_like_text(head: bytes) -> bool:
    """Whether the first bytes read as text (UTF-8 or UTF-16 with its mark), as CSV files do."""
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        return True
    sample = head[:_SNIFF_BYTES]
    try:
        text = sample.decode("utf-8")
    except UnicodeDecodeError as exc:
        if exc.start < len(sample) - 3:  # not just a character cut at the end of the sample
            return False
        text = sample[: exc.start].decode("utf-8")
    printable = sum(ch.isprintable() or ch in "\t\r\n" for ch in text)
    return bool(text) and printable >= 0.95 * len(text)
