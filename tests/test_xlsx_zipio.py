"""Tests for the raw-copy zip reader and writer, checked against Python's zipfile module.

The outside reference here is the zip format as implemented by CPython's
``zipfile`` (PKWARE APPNOTE.TXT 6.3.x): every archive we write must open and
pass ``testzip`` there, and every archive it writes must read back with ours.
"""

from __future__ import annotations

import io
import struct
import zipfile
import zlib

import pytest

from statmargin.errors import WorkbookError, WriteError
from statmargin.io.file.zipio import new_entry, read_zip, write_zip

CONTENT = {
    "[Content_Types].xml": b"<Types/>" * 20,
    "xl/workbook.xml": b"<workbook>" + b"x" * 5000 + b"</workbook>",
    "xl/media/image1.png": bytes(range(256)) * 3,
    "docs/\u00e9t\u00e9.txt": b"accented name",
}


def _zipfile_archive(compression: int = zipfile.ZIP_DEFLATED) -> bytes:
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", compression) as archive:
        for name, data in CONTENT.items():
            archive.writestr(name, data)
        archive.writestr(
            zipfile.ZipInfo("stored.bin"), b"stored bytes", compress_type=zipfile.ZIP_STORED
        )
    return buffer.getvalue()


class _Unseekable(io.RawIOBase):
    """A write-only stream without seek, which makes zipfile use data descriptors."""

    def __init__(self) -> None:
        self.data = bytearray()

    def writable(self) -> bool:
        return True

    def write(self, b) -> int:  # noqa: ANN001
        self.data += b
        return len(b)


def _local_flags(blob: bytes) -> int:
    return struct.unpack_from("<H", blob, 6)[0]


def test_reads_what_zipfile_wrote() -> None:
    """Every entry zipfile wrote reads back with the same name and content."""
    entries = read_zip(_zipfile_archive())
    got = {e.name: e.data() for e in entries}
    assert got == {**CONTENT, "stored.bin": b"stored bytes"}


def test_round_trip_keeps_compressed_bytes_and_zipfile_accepts_it() -> None:
    """Writing the entries back copies each compressed payload and zipfile validates the result."""
    original = _zipfile_archive()
    entries = read_zip(original)
    rewritten = write_zip(entries)
    again = {e.name: e for e in read_zip(rewritten)}
    for entry in entries:
        assert again[entry.name].raw == entry.raw
        assert again[entry.name].crc == entry.crc
    with zipfile.ZipFile(io.BytesIO(rewritten)) as archive:
        assert archive.testzip() is None  # CPython zipfile checks every CRC
        assert archive.read("xl/workbook.xml") == CONTENT["xl/workbook.xml"]
        assert archive.namelist() == [e.name for e in entries]


def test_data_descriptor_entries_are_read_and_rewritten() -> None:
    """Entries followed by data descriptors (flag bit 3) are read from the central directory."""
    stream = _Unseekable()
    with zipfile.ZipFile(stream, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in CONTENT.items():
            archive.writestr(name, data)
    blob = bytes(stream.data)
    assert _local_flags(blob) & 0x08, "zipfile should have used a data descriptor here"
    entries = read_zip(blob)
    assert {e.name: e.data() for e in entries} == CONTENT
    rewritten = write_zip(entries)
    assert not _local_flags(rewritten) & 0x08
    with zipfile.ZipFile(io.BytesIO(rewritten)) as archive:
        assert archive.testzip() is None


def _zip64_archive(name: str, data: bytes) -> bytes:
    """A one-entry archive that uses ZIP64 fields everywhere (APPNOTE 4.3.14-4.3.16, 4.5.3)."""
    raw = zlib.compressobj(6, zlib.DEFLATED, -15)
    comp = raw.compress(data) + raw.flush()
    crc = zlib.crc32(data)
    name_b = name.encode()
    local_extra = struct.pack("<HHQQ", 1, 16, len(data), len(comp))
    local = (
        struct.pack(
            "<IHHHHHIIIHH",
            0x04034B50,
            45,
            0,
            8,
            0,
            0x21,
            crc,
            0xFFFFFFFF,
            0xFFFFFFFF,
            len(name_b),
            len(local_extra),
        )
        + name_b
        + local_extra
        + comp
    )
    central_extra = struct.pack("<HHQQQ", 1, 24, len(data), len(comp), 0)
    central = struct.pack(
        "<IHHHHHHIIIHHHHHII",
        0x02014B50,
        45,
        45,
        0,
        8,
        0,
        0x21,
        crc,
        0xFFFFFFFF,
        0xFFFFFFFF,
        len(name_b),
        len(central_extra),
        0,
        0,
        0,
        0,
        0xFFFFFFFF,
    )
    central += name_b + central_extra
    cd_offset = len(local)
    zip64_eocd_offset = cd_offset + len(central)
    zip64_eocd = struct.pack(
        "<IQHHIIQQQQ", 0x06064B50, 44, 45, 45, 0, 0, 1, 1, len(central), cd_offset
    )
    locator = struct.pack("<IIQI", 0x07064B50, 0, zip64_eocd_offset, 1)
    eocd = struct.pack("<IHHHHIIH", 0x06054B50, 0, 0, 0xFFFF, 0xFFFF, 0xFFFFFFFF, 0xFFFFFFFF, 0)
    return local + central + zip64_eocd + locator + eocd


def test_zip64_records_are_read() -> None:
    """An archive whose sizes, offsets and counts live in ZIP64 records reads correctly."""
    data = b"zip64 payload " * 100
    blob = _zip64_archive("big.xml", data)
    with zipfile.ZipFile(io.BytesIO(blob)) as archive:  # the reference reader accepts the archive
        assert archive.read("big.xml") == data
    (entry,) = read_zip(blob)
    assert entry.name == "big.xml"
    assert entry.size == len(data)
    assert entry.data() == data


def test_archive_comment_is_skipped() -> None:
    """The end record is found when the archive carries a trailing comment."""
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("a.xml", b"<a/>")
        archive.comment = b"a comment that follows the end record"
    (entry,) = read_zip(buffer.getvalue())
    assert entry.data() == b"<a/>"


def test_not_a_zip_is_a_workbook_error() -> None:
    """Bytes that are not a zip archive raise a one-line WorkbookError."""
    with pytest.raises(WorkbookError, match="not a zip package"):
        read_zip(b"this is a CSV file,1,2,3\n")
    with pytest.raises(WorkbookError, match="zip structure is damaged"):
        read_zip(_zipfile_archive()[:-30])  # cut through the end record


def test_compound_file_is_named_as_old_or_protected() -> None:
    """A compound file (legacy .xls or an encrypted workbook, MS-CFB signature D0CF11E0A1B11AE1) is named as such."""
    with pytest.raises(WorkbookError, match="password-protected"):
        read_zip(bytes.fromhex("D0CF11E0A1B11AE1") + bytes(504))


def test_encrypted_entry_is_refused() -> None:
    """An entry with the encryption flag set is refused with a WorkbookError."""
    blob = bytearray(_zipfile_archive(zipfile.ZIP_STORED))
    central = blob.find(struct.pack("<I", 0x02014B50))
    flags = struct.unpack_from("<H", blob, central + 8)[0]
    struct.pack_into("<H", blob, central + 8, flags | 1)
    with pytest.raises(WorkbookError, match="encrypted"):
        read_zip(bytes(blob))


def test_corrupted_payload_fails_its_checksum() -> None:
    """A payload whose bytes no longer match the stored CRC-32 is reported as damaged."""
    blob = bytearray(_zipfile_archive(zipfile.ZIP_STORED))
    entries = read_zip(bytes(blob))
    target = next(e for e in entries if e.name == "stored.bin")
    target.raw = b"Stored bytes"  # same length, one byte changed
    with pytest.raises(WorkbookError, match="checksum"):
        target.data()


def test_new_entry_is_valid_deflate() -> None:
    """A new entry deflates its content so that zipfile reads the same bytes back."""
    entry = new_entry("xl/new.xml", b"<new>" * 1000 + b"</new>", when=1_700_000_000)
    blob = write_zip([entry])
    with zipfile.ZipFile(io.BytesIO(blob)) as archive:
        assert archive.testzip() is None
        info = archive.getinfo("xl/new.xml")
        assert info.compress_type == zipfile.ZIP_DEFLATED
        assert archive.read("xl/new.xml") == b"<new>" * 1000 + b"</new>"
        assert info.date_time[0] == 2023  # 1.7e9 s after the epoch is in November 2023


def test_duplicate_names_are_refused() -> None:
    """Writing two entries with the same name raises WriteError instead of a broken archive."""
    entry = new_entry("a.xml", b"<a/>")
    with pytest.raises(WriteError, match="Two parts"):
        write_zip([entry, new_entry("a.xml", b"<b/>")])
