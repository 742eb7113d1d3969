"""Read a zip package entry by entry and write one back, copying compressed bytes.

A workbook is a zip of XML parts. To leave the user's parts exactly as they
were, we never decompress and recompress them: each entry's compressed bytes are
carried over unchanged and only the few parts we edit are deflated afresh. The
standard library's ``zipfile`` cannot copy raw entries, so this module reads the
central directory itself (ZIP64 included) and writes a plain zip with ``struct``
and ``zlib``.
"""

from __future__ import annotations

import io
import mmap
import os
import struct
import time
import zlib
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import BinaryIO

from ...errors import WorkbookError, WriteError
from ...words import file_messages as messages

_LOCAL_SIG = 0x04034B50
_CENTRAL_SIG = 0x02014B50
_EOCD_SIG = 0x06054B50
_ZIP64_EOCD_SIG = 0x06064B50
_ZIP64_LOCATOR_SIG = 0x07064B50
_ZIP64_EXTRA_ID = 0x0001

_STORED = 0
_DEFLATED = 8
_FLAG_ENCRYPTED = 0x0001
_FLAG_DATA_DESCRIPTOR = 0x0008
_FLAG_UTF8 = 0x0800

# Compound-file signature: legacy .xls files and password-encrypted workbooks
# (MS-CFB, section 2.2, header signature).
_OLE_SIGNATURE = bytes.fromhex("D0CF11E0A1B11AE1")
_U16_MAX = 0xFFFF
_U32_MAX = 0xFFFFFFFF

# The whole archive in memory, or mapped from the file without reading it.
Buffer = bytes | mmap.mmap


@contextmanager
def mapped(path: str | os.PathLike[str]) -> Iterator[Buffer]:
    """The file's bytes mapped read-only (``b""`` for an empty file, which cannot be mapped).

    A mapping lets a 60 MB workbook be read entry by entry without a second
    copy in memory; it is closed on leaving the block, so the file can be
    replaced afterwards (Windows refuses to replace a mapped file).
    """
    with open(path, "rb") as handle:
        if os.fstat(handle.fileno()).st_size == 0:
            yield b""
            return
        with mmap.mmap(handle.fileno(), 0, access=mmap.ACCESS_READ) as view:
            yield view


@dataclass
class ZipEntry:
    """One member of a zip archive, holding its compressed bytes as stored.

    Attributes
    ----------
    name : str
        Part name inside the archive, e.g. ``"xl/workbook.xml"``.
    method : int
        Compression method: 0 (stored) or 8 (deflated).
    crc : int
        CRC-32 of the uncompressed bytes.
    size : int
        Uncompressed size in bytes.
    raw : bytes
        The compressed bytes exactly as they are in the archive.
    dos_time, dos_date : int
        Modification time stamp in MS-DOS format.
    flags : int
        General-purpose flag bits from the central directory.
    external_attr : int
        External file attributes from the central directory.
    """

    name: str
    method: int
    crc: int
    size: int
    raw: bytes
    dos_time: int = 0
    dos_date: int = 0x21  # 1980-01-01
    flags: int = 0
    external_attr: int = 0
    extra: bytes = field(default=b"", repr=False)

    def data(self) -> bytes:
        """Decompress the entry and check its CRC.

        Returns
        -------
        bytes
            The uncompressed content.

        Raises
        ------
        WorkbookError
            If the method is unsupported or the content fails its CRC check.
        """
        if self.method == _STORED:
            out = self.raw
        elif self.method == _DEFLATED:
            # Inflate at most one byte more than the directory declares, so a part
            # that lies about its size (a zip bomb) is caught without unpacking it.
            inflater = zlib.decompressobj(-15)
            try:
                out = inflater.decompress(self.raw, self.size + 1)
            except zlib.error as exc:
                raise WorkbookError(messages.part_damaged(self.name, str(exc))) from exc
        else:
            raise WorkbookError(messages.part_method(self.name, self.method))
        if len(out) != self.size or zlib.crc32(out) & _U32_MAX != self.crc:
            raise WorkbookError(messages.part_checksum(self.name))
        return out


def new_entry(name: str, data: bytes, *, when: float | None = None) -> ZipEntry:
    """Make a deflated entry from uncompressed bytes.

    Parameters
    ----------
    name : str
        Part name inside the archive.
    data : bytes
        Uncompressed content.
    when : float, optional
        Modification time (seconds since the epoch); now if omitted.

    Returns
    -------
    ZipEntry
        A deflated entry ready for :func:`write_zip`.
    """
    compressor = zlib.compressobj(6, zlib.DEFLATED, -15)
    raw = compressor.compress(data) + compressor.flush()
    dos_time, dos_date = _dos_stamp(time.time() if when is None else when)
    return ZipEntry(
        name=name,
        method=_DEFLATED,
        crc=zlib.crc32(data) & _U32_MAX,
        size=len(data),
        raw=raw,
        dos_time=dos_time,
        dos_date=dos_date,
        flags=_FLAG_UTF8 if not name.isascii() else 0,
    )


def _dos_stamp(when: float) -> tuple[int, int]:
    """MS-DOS time and date words for a moment, in local time (as zip tools do)."""
    t = time.localtime(when)
    year = max(t.tm_year, 1980)
    dos_time = (t.tm_hour << 11) | (t.tm_min << 5) | (t.tm_sec // 2)
    dos_date = ((year - 1980) << 9) | (t.tm_mon << 5) | t.tm_mday
    return dos_time, dos_date


def read_zip(blob: Buffer) -> list[ZipEntry]:
    """Read every entry of a zip archive, keeping compressed bytes as stored.

    Parameters
    ----------
    blob : bytes-like
        The whole archive (``bytes`` or an ``mmap`` of the file).

    Returns
    -------
    list of ZipEntry
        Entries in central-directory order.

    Raises
    ------
    WorkbookError
        If the bytes are not a readable, unencrypted zip archive.

    Notes
    -----
    Sizes, CRC and offsets come from the central directory (which always holds
    them, unlike local headers followed by a data descriptor). ZIP64 records are
    honoured for archives and entries above 4 GiB or 65535 entries.

    References
    ----------
    PKWARE, APPNOTE.TXT - .ZIP File Format Specification, version 6.3.10,
    sections 4.3.7 (local header), 4.3.12 (central directory), 4.3.14-4.3.16
    (ZIP64 end records), 4.5.3 (ZIP64 extra field).
    """
    if blob[:8] == _OLE_SIGNATURE:
        raise WorkbookError(messages.old_or_encrypted())
    if blob[:2] != b"PK":
        raise WorkbookError(messages.not_zip_package())
    records = read_directory(blob)
    try:
        return [entry_of(blob, record) for record in records]
    except (struct.error, IndexError, ValueError) as exc:
        raise WorkbookError(messages.zip_damaged(" ".join(str(exc).split()))) from exc


@dataclass(frozen=True)
class DirectoryRecord:
    """One central-directory record: what the zip says about an entry, before reading it."""

    name: str
    method: int
    flags: int
    crc: int
    comp_size: int
    size: int
    local_offset: int
    dos_time: int
    dos_date: int
    external_attr: int
    extra: bytes


def read_directory(blob: Buffer, display: str | None = None) -> list[DirectoryRecord]:
    """The central directory of a zip archive, without touching any entry's data.

    Parameters
    ----------
    blob : bytes-like
        The whole archive (``bytes`` or an ``mmap`` of the file).
    display : str, optional
        The file's name, for the message.

    Returns
    -------
    list of DirectoryRecord
        In directory order, ZIP64 sizes and offsets resolved.

    Raises
    ------
    WorkbookError
        If the directory cannot be followed or an entry is encrypted.
    """
    try:
        return _read_directory(blob)
    except (struct.error, IndexError, ValueError, UnicodeDecodeError) as exc:
        raise WorkbookError(messages.zip_damaged(" ".join(str(exc).split()), display)) from exc


def _read_directory(blob: Buffer) -> list[DirectoryRecord]:
    eocd = _find_eocd(blob)
    (_, disk, cd_disk, _n_here, n_total, cd_size, cd_offset, _comment_len) = struct.unpack_from(
        "<IHHHHIIH", blob, eocd
    )
    if disk != 0 or cd_disk != 0:
        raise ValueError(messages.ZIP_SPANNED)
    if n_total == _U16_MAX or cd_size == _U32_MAX or cd_offset == _U32_MAX:
        n_total, cd_size, cd_offset = _read_zip64_end(blob, eocd)

    records: list[DirectoryRecord] = []
    pos = cd_offset
    for _ in range(n_total):
        if struct.unpack_from("<I", blob, pos)[0] != _CENTRAL_SIG:
            raise ValueError(messages.zip_bad_record(pos))
        (
            _sig,
            _made_by,
            _needed,
            flags,
            method,
            dos_time,
            dos_date,
            crc,
            comp_size,
            size,
            name_len,
            extra_len,
            comment_len,
            _disk_start,
            _internal_attr,
            external_attr,
            local_offset,
        ) = struct.unpack_from("<IHHHHHHIIIHHHHHII", blob, pos)
        name_bytes = bytes(blob[pos + 46 : pos + 46 + name_len])
        extra = bytes(blob[pos + 46 + name_len : pos + 46 + name_len + extra_len])
        if len(name_bytes) != name_len:
            raise ValueError(messages.zip_bad_record(pos))
        pos += 46 + name_len + extra_len + comment_len

        if size == _U32_MAX or comp_size == _U32_MAX or local_offset == _U32_MAX:
            size, comp_size, local_offset = _apply_zip64_extra(extra, size, comp_size, local_offset)
        if flags & _FLAG_ENCRYPTED:
            raise ValueError(messages.ZIP_ENCRYPTED)
        name = name_bytes.decode("utf-8" if flags & _FLAG_UTF8 else "cp437")
        records.append(
            DirectoryRecord(
                name=name,
                method=method,
                flags=flags,
                crc=crc,
                comp_size=comp_size,
                size=size,
                local_offset=local_offset,
                dos_time=dos_time,
                dos_date=dos_date,
                external_attr=external_attr,
                extra=_without_zip64(extra),
            )
        )
    return records


def entry_span(blob: Buffer, record: DirectoryRecord) -> tuple[int, int]:
    """Where a directory record's compressed bytes start and end in the archive.

    Raises
    ------
    ValueError
        If the local header is not where the directory says, or the archive is cut short.
    """
    offset = record.local_offset
    if struct.unpack_from("<I", blob, offset)[0] != _LOCAL_SIG:
        raise ValueError(messages.zip_bad_local(record.name))
    local_name_len, local_extra_len = struct.unpack_from("<HH", blob, offset + 26)
    start = offset + 30 + local_name_len + local_extra_len
    if start + record.comp_size > len(blob):
        raise ValueError(messages.zip_truncated(record.name))
    return start, start + record.comp_size


def entry_of(blob: Buffer, record: DirectoryRecord) -> ZipEntry:
    """The entry a directory record describes, with its compressed bytes as stored (a copy).

    Raises
    ------
    ValueError
        As :func:`entry_span`.
    """
    start, end = entry_span(blob, record)
    raw = bytes(blob[start:end])
    return ZipEntry(
        name=record.name,
        method=record.method,
        crc=record.crc,
        size=record.size,
        raw=bytes(raw),
        dos_time=record.dos_time,
        dos_date=record.dos_date,
        flags=record.flags,
        external_attr=record.external_attr,
        extra=record.extra,
    )


def _find_eocd(blob: Buffer) -> int:
    """Offset of the end-of-central-directory record (searching back over a comment)."""
    floor = max(0, len(blob) - 22 - _U16_MAX)
    pos = blob.rfind(struct.pack("<I", _EOCD_SIG), floor)
    if pos < 0 or len(blob) - pos < 22:
        raise ValueError(messages.ZIP_NO_END)
    return pos


def _read_zip64_end(blob: Buffer, eocd: int) -> tuple[int, int, int]:
    """Entry count, directory size and offset from the ZIP64 end records."""
    locator = eocd - 20
    sig, _disk, zip64_eocd, _disks = struct.unpack_from("<IIQI", blob, locator)
    if sig != _ZIP64_LOCATOR_SIG:
        raise ValueError(messages.ZIP64_NO_LOCATOR)
    fields = struct.unpack_from("<IQHHIIQQQQ", blob, zip64_eocd)
    if fields[0] != _ZIP64_EOCD_SIG:
        raise ValueError(messages.ZIP64_NO_END)
    return fields[7], fields[8], fields[9]


def _apply_zip64_extra(
    extra: bytes, size: int, comp_size: int, offset: int
) -> tuple[int, int, int]:
    """Replace 0xFFFFFFFF placeholders with values from the ZIP64 extra field."""
    pos = 0
    while pos + 4 <= len(extra):
        tag, length = struct.unpack_from("<HH", extra, pos)
        body = extra[pos + 4 : pos + 4 + length]
        if tag == _ZIP64_EXTRA_ID:
            values = list(struct.unpack_from(f"<{len(body) // 8}Q", body))
            if size == _U32_MAX:
                size = values.pop(0)
            if comp_size == _U32_MAX:
                comp_size = values.pop(0)
            if offset == _U32_MAX:
                offset = values.pop(0)
            return size, comp_size, offset
        pos += 4 + length
    raise ValueError(messages.ZIP64_NO_EXTRA)


def _without_zip64(extra: bytes) -> bytes:
    """Extra fields minus the ZIP64 one (the writer recomputes what it needs)."""
    kept = bytearray()
    pos = 0
    while pos + 4 <= len(extra):
        tag, length = struct.unpack_from("<HH", extra, pos)
        if tag != _ZIP64_EXTRA_ID:
            kept += extra[pos : pos + 4 + length]
        pos += 4 + length
    return bytes(kept)


def write_zip(entries: list[ZipEntry]) -> bytes:
    """Serialise entries into a zip archive in memory; see :func:`write_zip_to`.

    Returns
    -------
    bytes
        The archive.
    """
    buffer = io.BytesIO()
    write_zip_to(buffer, entries)
    return buffer.getvalue()


def write_zip_to(handle: BinaryIO, entries: list[ZipEntry]) -> None:
    """Write entries as a zip archive to an open file, copying each entry's compressed bytes.

    Parameters
    ----------
    handle : binary file
        Written from its current position, which is taken as the archive's start.
    entries : list of ZipEntry
        Entries in the order they should appear.

    Raises
    ------
    WriteError
        If names repeat or the archive would need ZIP64 (over 4 GiB or 65535
        entries), which this writer does not produce.

    Notes
    -----
    Local headers carry the CRC and sizes directly, so no data descriptors are
    written (flag bit 3 is cleared); the compressed bytes are unchanged. Entries
    go straight to the file, so the archive is never held in memory a second time.
    """
    seen: set[str] = set()
    written = 0
    central = bytearray()
    for entry in entries:
        if entry.name in seen:
            raise WriteError(messages.two_parts_written(entry.name))
        seen.add(entry.name)
        name = entry.name.encode("utf-8")
        flags = (entry.flags & ~_FLAG_DATA_DESCRIPTOR) | (0 if entry.name.isascii() else _FLAG_UTF8)
        offset = written
        if max(offset, len(entry.raw), entry.size) >= _U32_MAX:
            raise WriteError(messages.too_large_to_write())
        version = 20
        # Local and central headers share these fields in this order (PKWARE APPNOTE.TXT 4.3.7, 4.3.12).
        shared = (
            version,
            flags,
            entry.method,
            entry.dos_time,
            entry.dos_date,
            entry.crc,
            len(entry.raw),
            entry.size,
            len(name),
            len(entry.extra),
        )
        header = struct.pack("<IHHHHHIIIHH", _LOCAL_SIG, *shared) + name + entry.extra
        handle.write(header)
        handle.write(entry.raw)
        written += len(header) + len(entry.raw)
        made_by = (3 << 8) | version if entry.external_attr >> 16 else version
        # Then: comment length, disk number, internal attributes, external attributes, offset.
        central += struct.pack(
            "<IHHHHHHIIIHHHHHII", _CENTRAL_SIG, made_by, *shared, 0, 0, 0, entry.external_attr, offset
        )
        central += name + entry.extra
    if len(entries) >= _U16_MAX or written + len(central) >= _U32_MAX:
        raise WriteError(messages.too_many_parts_to_write())
    handle.write(bytes(central))
    handle.write(struct.pack(
        "<IHHHHIIH", _EOCD_SIG, 0, 0, len(entries), len(entries), len(central), written, 0
    ))
