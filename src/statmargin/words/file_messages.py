"""What the user reads when a workbook file cannot be read or written.

Every sentence the file back end (``io.file``) shows a user is made here; the
back end raises the typed error (``errors.py``) with this text. Each message is
one line that says what is wrong and what to do. Messages about a write end by
saying that the file was left as it was, because that is what the user most
needs to know.
"""

from __future__ import annotations

import errno
from collections.abc import Sequence

LEFT_AS_IT_WAS = "the file was left as it was"
ORIGINAL_LEFT_AS_IT_WAS = "the original file was left as it was"
RESAVE = "open it in a spreadsheet program and save it again"


def _left(text: str) -> str:
    return f"{text}; {LEFT_AS_IT_WAS}."


def _original_left(text: str) -> str:
    """A failed write: the new file is dropped and the user's own file is untouched."""
    return f"{text}; {ORIGINAL_LEFT_AS_IT_WAS}."


def _size(n_bytes: int) -> str:
    """A byte count in the unit a user reads most easily (binary units, as file managers show)."""
    for unit, scale in (("GB", 1 << 30), ("MB", 1 << 20), ("KB", 1 << 10)):
        if n_bytes >= scale:
            return f"{n_bytes / scale:.3g} {unit}"
    return f"{n_bytes} bytes"


# ---------------------------------------------------------------- the path itself


def file_not_found(display: str) -> str:
    """The workbook path names nothing."""
    return f"File {display!r} was not found. Check the path."


def is_folder(display: str) -> str:
    """The workbook path names a folder."""
    return f"{display!r} is a folder, not a workbook file. Give the path of the file."


def not_readable(display: str, reason: str) -> str:
    """The file exists but the operating system will not let us read it."""
    return (
        f"File {display!r} cannot be read ({reason}). Check that you may open it "
        "(its permissions, or whether another program holds it), or work on a copy."
    )


def empty_file(display: str) -> str:
    """A file of zero bytes, often a failed download or copy."""
    return (
        f"File {display!r} is empty (0 bytes), so it holds no workbook; "
        "copy or download it again."
    )


def text_file(display: str) -> str:
    """Plain text (usually CSV) saved under a workbook's name."""
    return (
        f"File {display!r} is plain text (for example CSV), not a workbook; open it in a "
        "spreadsheet program and save it as an Excel workbook (.xlsx)."
    )


def not_a_workbook(display: str) -> str:
    """Bytes that are neither a zip package nor a legacy workbook."""
    return (
        f"File {display!r} is not a workbook (it is neither an .xlsx/.xlsm/.ods package nor "
        "an old .xls file); check that you picked the right file."
    )


def encrypted(display: str) -> str:
    """A password-protected (encrypted) workbook."""
    return (
        f"File {display!r} is password-protected (encrypted). "
        "Save an unprotected copy in your spreadsheet program and use that."
    )


def could_not_open(display: str, detail: str) -> str:
    """The reading library refused the file for a reason of its own."""
    return (
        f"File {display!r} could not be opened as a workbook ({detail}). "
        "Check that it is an .xlsx, .xlsm, .xls or .ods file and not damaged."
    )


def larger_than_declared(display: str) -> str:
    """A part unpacks to more bytes than the zip directory says (damage, or a crafted file)."""
    return (
        f"File {display!r} is damaged or crafted: a part inside it unpacks to more data than "
        f"the file declares, so reading stopped; {RESAVE}, or ask the sender for a fresh copy."
    )


# ---------------------------------------------------------------- package checks (io.file.guard)


def too_many_parts(display: str, n_parts: int, limit: int) -> str:
    """More zip entries than any workbook needs."""
    return (
        f"File {display!r} holds {n_parts:,} parts, more than statmargin opens ({limit:,}); "
        f"{RESAVE}, or remove unused sheets and pictures."
    )


def unpacks_too_large(display: str, n_bytes: int, limit: int) -> str:
    """The declared unpacked size of all parts is above the limit."""
    return (
        f"File {display!r} would unpack to {_size(n_bytes)}, more than statmargin's limit of "
        f"{_size(limit)}; it was not unpacked. Split the data into smaller workbooks."
    )


def packed_too_tightly(display: str, part: str, ratio: float, limit: int) -> str:
    """One part is compressed far more than real spreadsheet data can be (a zip bomb)."""
    return (
        f"File {display!r} looks like a zip bomb: its part {part!r} would unpack to "
        f"{ratio:,.0f} times its stored size (real workbooks stay far below {limit}); "
        "it was not unpacked. Ask the sender for a workbook saved from a spreadsheet program."
    )


def unsafe_part_name(display: str, part: str) -> str:
    """A zip entry name that leaves the package (path traversal) or is not a valid part name."""
    return (
        f"File {display!r} holds an entry named {part!r}, which no spreadsheet program writes "
        "(it could point outside the file); statmargin does not open such files. "
        "Ask the sender for a workbook saved from a spreadsheet program."
    )


def duplicate_part(display: str, part: str) -> str:
    """Two zip entries with one name: which one a reader sees is ambiguous."""
    return f"File {display!r} holds two parts named {part!r}, so it is damaged; {RESAVE}."


def unknown_compression(display: str, part: str, method: int) -> str:
    """A zip compression method spreadsheet programs never use."""
    return (
        f"File {display!r} stores its part {part!r} with zip compression method {method}, "
        f"which spreadsheet programs do not use; {RESAVE}."
    )


def cell_outside_grid(display: str, sheet: str, ref: str) -> str:
    """A cell reference beyond XFD1048576 (damage, or a crafted file)."""
    return (
        f"Sheet {sheet!r} in {display!r} refers to cell {ref}, outside the 16,384 columns and "
        f"1,048,576 rows a sheet has, so the file is damaged; {RESAVE}."
    )


def sheet_too_spread(display: str, sheet: str, span: str, n_cells: int, limit: int) -> str:
    """Used cells spread so far apart that reading the block between them would exhaust memory."""
    return (
        f"Sheet {sheet!r} in {display!r} has values spread over {span} ({n_cells:,} cells), more than "
        f"statmargin reads at once ({limit:,}); delete the stray values far from the data (select the "
        "empty-looking rows and columns beyond it, delete them) and save."
    )


def strict_open_xml(display: str) -> str:
    """Strict Open XML: calamine and the package writer handle only the transitional flavour."""
    return (
        f"File {display!r} is saved as 'Strict Open XML Spreadsheet', which statmargin does not "
        "read or write; save it as a regular 'Excel Workbook (.xlsx)' and try again."
    )


# ---------------------------------------------------------------- zip structure (io.file.zipio)


def part_damaged(part: str, detail: str) -> str:
    """A part's compressed bytes do not inflate."""
    return (
        f"The part {part} inside the workbook is damaged ({detail}); "
        "repair the file in a spreadsheet program and try again."
    )


def part_method(part: str, method: int) -> str:
    """A part uses a compression method we cannot inflate."""
    return (
        f"The part {part} uses zip compression method {method}, which statmargin cannot read; "
        "save the workbook again from a spreadsheet program."
    )


def part_checksum(part: str) -> str:
    """A part inflates to bytes whose CRC or length differs from the directory's."""
    return (
        f"The part {part} inside the workbook fails its checksum; "
        "repair the file in a spreadsheet program and try again."
    )


def old_or_encrypted() -> str:
    """A compound (OLE) file where a zip package was expected."""
    return (
        "The file is an old-style .xls workbook or is password-protected; "
        "save it as an unprotected .xlsx and try again."
    )


def not_zip_package() -> str:
    """The writer was given bytes that are not a zip."""
    return (
        "The file is not an .xlsx/.xlsm workbook (it is not a zip package); "
        "open it in a spreadsheet program and save it as .xlsx."
    )


def zip_damaged(detail: str, display: str | None = None) -> str:
    """The zip directory cannot be followed (the file is cut short or damaged)."""
    which = f"File {display!r}" if display else "The file"
    return (
        f"{which} is not a readable workbook (its zip structure is damaged: {detail}); "
        "if it was copied or downloaded, do that again, else save it again from a spreadsheet program."
    )


def zip_not_workbook(display: str) -> str:
    """A zip archive without the parts every workbook package has."""
    return (
        f"File {display!r} is a zip archive but holds no workbook (no [Content_Types].xml or "
        "OpenDocument manifest); check that you picked the right file."
    )


def entities_refused(display: str) -> str:
    """XML entity declarations (DOCTYPE), which spreadsheet programs never write."""
    return (
        f"File {display!r} declares XML entities, which spreadsheet programs never write and which "
        "can be used to read other files or exhaust memory; statmargin does not expand them. "
        "Ask the sender for a workbook saved from a spreadsheet program."
    )


# Short details that go inside ``zip_damaged`` (phrases, not sentences).
ZIP_SPANNED = "multi-part (spanned) archives are not supported"
ZIP_ENCRYPTED = "the workbook is encrypted (password protected)"
ZIP_NO_END = "no end-of-central-directory record"
ZIP64_NO_LOCATOR = "ZIP64 locator missing"
ZIP64_NO_END = "ZIP64 end record missing"
ZIP64_NO_EXTRA = "ZIP64 sizes announced but no ZIP64 extra field"


def zip_bad_record(offset: int) -> str:
    """Detail: a central-directory record does not start where expected."""
    return f"bad central directory record at offset {offset}"


def zip_bad_local(part: str) -> str:
    """Detail: a local header is missing."""
    return f"bad local header for {part}"


def zip_truncated(part: str) -> str:
    """Detail: an entry's bytes run past the end of the file."""
    return f"entry {part} is truncated"


def two_parts_written(part: str) -> str:
    """The writer was asked to write one part name twice."""
    return _left(f"Two parts named {part} would be written")


def too_large_to_write() -> str:
    """The result would need ZIP64."""
    return _left("The workbook is too large (over 4 GiB) for statmargin's writer")


def too_many_parts_to_write() -> str:
    """The result would need ZIP64 for its entry count or size."""
    return _left("The workbook has too many parts or is too large for statmargin's writer")


# ---------------------------------------------------------------- package edits (io.file.package)


def no_workbook_part() -> str:
    """The package's root relationships name no workbook part."""
    return "The file has no workbook part; it is not an Excel workbook (.xlsx or .xlsm)."


def no_workbook_element() -> str:
    """The workbook part is not a SpreadsheetML workbook."""
    return "The workbook part has no workbook element; save the file again from a spreadsheet program."


def strict_not_writable() -> str:
    """The writer met a Strict Open XML workbook part."""
    return _left(
        "The workbook is saved in the 'Strict Open XML' format, which statmargin cannot write; "
        "save it as a regular .xlsx and try again"
    )


def workbook_part_missing() -> str:
    """The root relationships point at a part that is not in the zip."""
    return "The workbook part is missing from the file; save it again from a spreadsheet program."


def no_workbook_rels() -> str:
    """The workbook part has no relationships, so sheets cannot be found."""
    return "The workbook has no relationships part; save it again from a spreadsheet program."


def no_sheet_list() -> str:
    """The workbook part lists no sheets."""
    return _left("The workbook part has no sheet list")




def would_overwrite(part: str) -> str:
    """A new part's name is already taken."""
    return _left(f"statmargin would overwrite the part {part}")










def legacy_format_not_writable(display: str, suffix: str) -> str:
    """Reading .xls/.ods/.xlsb works; writing results needs .xlsx."""
    return (
        f"statmargin reads {display!r} but writes results only into .xlsx or .xlsm workbooks: "
        f"open it in your spreadsheet program, choose Save As, pick 'Excel Workbook (.xlsx)', and run "
        f"on that copy ('statmargin test' reads the {suffix} file as it is)."
    )


# ---------------------------------------------------------------- the write (io.file.sink)


def workbook_missing(path: str) -> str:
    """The workbook to write into does not exist."""
    return f"The workbook {path} does not exist; check the path."


def wrong_output_suffix(suffix: str) -> str:
    """The output name's suffix is not one we write."""
    return f"statmargin writes .xlsx or .xlsm workbooks, not '{suffix}'; save the file as .xlsx and try again."


def macro_needs_xlsm() -> str:
    """A macro workbook written under a non-macro name would lose its macros."""
    return "A macro workbook (.xlsm) must be written to an .xlsm file; change the output name to end in .xlsm."


def xlsx_not_as_xlsm() -> str:
    """An .xlsx package is not a macro workbook."""
    return "An .xlsx workbook cannot be written as .xlsm; change the output name to end in .xlsx."


def out_is_folder(path: str) -> str:
    """--out names a folder."""
    return f"--out {path} is a folder; give a file name such as {path}/results.xlsx."


def out_folder_missing(folder: str) -> str:
    """--out names a file in a folder that does not exist."""
    return _left(f"The folder {folder} for --out does not exist; create it first or choose another path")


def out_not_a_workbook(name: str) -> str:
    """--out names an existing file that is not a workbook: replacing it could lose someone's work."""
    return _left(f"--out names {name}, which exists and is not a workbook; choose another name or move that file")


def locked(name: str, lock: str) -> str:
    """The workbook is open in a spreadsheet program."""
    return (
        f"{name} is open in a spreadsheet program (lock file {lock}); close it there, "
        "or write a copy with --out."
    )


def out_locked(name: str) -> str:
    """The --out target exists and is open in a spreadsheet program."""
    return f"{name} is open in a spreadsheet program; close it or choose another output name."


def read_only_file(name: str) -> str:
    """The workbook is marked read-only."""
    return (
        f"{name} is read-only, so statmargin will not change it; write a copy with --out, "
        "or clear the read-only mark and run again."
    )


def could_not_add(detail: str) -> str:
    """Building the new package failed on something in the user's workbook."""
    return _left(f"statmargin could not add its sheets to this workbook ({detail})")


def _os_reason(exc: OSError) -> str:
    """What an operating-system error means for the user, in a few words."""
    code = exc.errno
    if code in (errno.ENOSPC, errno.EDQUOT, errno.EFBIG):
        return "the disk is full or the file would be too large there; free some space or write elsewhere with --out"
    if code in (errno.EACCES, errno.EPERM, errno.EROFS):
        return "statmargin may not write there; check that the folder is writable, or write elsewhere with --out"
    return exc.strerror or " ".join(str(exc).split()) or type(exc).__name__


def cannot_create_in(folder: str, exc: OSError) -> str:
    """The temporary file could not be created in the target folder."""
    return _left(f"Cannot create a file in {folder} ({_os_reason(exc)})")


def write_failed(name: str, detail: str) -> str:
    """Writing, checking or moving the new file failed."""
    return _original_left(f"Writing {name} failed ({detail})")


def write_failed_os(name: str, exc: OSError) -> str:
    """Writing failed for an operating-system reason (disk full, permissions ...)."""
    return write_failed(name, _os_reason(exc))


def new_part_checksum(part: str) -> str:
    """Verification: a part of the new file fails its CRC."""
    return _original_left(f"The new file's part {part} fails its checksum")


def new_file_not_zip(detail: str) -> str:
    """Verification: the new file is not a zip."""
    return _original_left(f"The new file is not a valid zip ({detail})")


def part_not_removed(part: str) -> str:
    """Verification: a part that should have gone is still there."""
    return _original_left(f"The part {part} should have been removed")


def part_changed(part: str) -> str:
    """Verification: a user's part is not byte-identical after copying."""
    return _original_left(f"The part {part} changed while copying")


def part_not_well_formed(part: str, detail: str) -> str:
    """Verification: an edited part does not parse."""
    return _original_left(f"The new part {part} is not well-formed XML ({detail})")


def not_readable_back(detail: str) -> str:
    """Verification: the reading library cannot open the new file."""
    return _original_left(f"The new file could not be read back ({detail})")


def sheets_mismatch(names: Sequence[str], expected: Sequence[str]) -> str:
    """Verification: the new file lists other sheets than planned."""
    return _original_left(f"The new file lists sheets {list(names)}, expected {list(expected)}")


def interrupted() -> str:
    """The run was stopped by Ctrl+C or a stop signal."""
    return (
        "stopped before finishing (interrupted); no file was left half-written. "
        "Run the same command again to finish."
    )


# ---------------------------------------------------------------- styles, sheets, charts

# The printed page's footer: sheet name on the left, "Page 2 of 5" on the right
# (&A, &P and &N are the spreadsheet program's codes for them).
PAGE_FOOTER = "&L&A&RPage &P of &N"


def styles_not_utf8() -> str:
    """The styles part is not UTF-8."""
    return _left("The workbook's styles part is not UTF-8 text")


def no_stylesheet() -> str:
    """The styles part has no styleSheet element."""
    return _left("The workbook's styles part has no styleSheet element")






def cell_outside_sheet(row: int, col: int, sheet: str) -> str:
    """A model cell beyond the worksheet grid."""
    return _left(f"Cell ({row}, {col}) on sheet {sheet} is outside a worksheet")


def unknown_style(style: str, sheet: str) -> str:
    """A model cell names a style the writer does not have."""
    return _left(f"Unknown style '{style}' on sheet {sheet}")


def missing_number_left_empty(where: str) -> str:
    """Note: NaN cannot be stored, so the cell stays empty."""
    return f"A missing number at {where} was left empty."


def text_cut(where: str, limit: int) -> str:
    """Note: a text longer than a cell holds was shortened."""
    return f"The text at {where} was longer than a cell holds ({limit:,} characters) and was shortened."


def dropdown_comma(choice: str, sheet: str) -> str:
    """A dropdown choice with a comma cannot go into a list validation."""
    return _left(
        f"The dropdown choice '{choice}' on sheet {sheet} contains a comma, which a list validation cannot hold"
    )


def dropdown_too_long(cells: str, sheet: str, limit: int) -> str:
    """A dropdown list longer than spreadsheet programs accept."""
    return _left(f"The dropdown list for {cells} on sheet {sheet} is longer than {limit} characters")


def chart_range_not_a_range(ref: str, sheet: str) -> str:
    """A chart series range is not a range."""
    return _left(f"The chart range '{ref}' on sheet {sheet} is not a range such as $C$5:$C$14")


def chart_range_not_a_line(ref: str, sheet: str) -> str:
    """A chart series range spans rows and columns."""
    return _left(f"The chart range '{ref}' on sheet {sheet} must be one row or one column")


def not_a_range(ref: str) -> str:
    """A reference is not a range."""
    return _left(f"'{ref}' is not a range such as $C$5:$C$14")


def unknown_chart_kind(kind: str, sheet: str) -> str:
    """A chart model of a kind the writer cannot draw."""
    return _left(f"Unknown chart kind '{kind}' on sheet {sheet}")


def chart_without_series(title: str, sheet: str) -> str:
    """A chart model with nothing to draw."""
    return _left(f"The chart '{title}' on sheet {sheet} has no series")


# ---------------------------------------------------------------- reading cells (io.file.source)




def sheet_damaged(display: str, sheet: str, detail: str) -> str:
    """A sheet's XML cannot be scanned."""
    return (
        f"File {display!r} is damaged and its sheet {sheet!r} cannot be read ({detail}). "
        "Open it in a spreadsheet program and save it again."
    )


def sheet_unreadable(sheet: str, display: str, detail: str) -> str:
    """The reading library cannot load a sheet."""
    return (
        f"Sheet {sheet!r} in {display!r} cannot be read ({detail}). "
        "Open the file in a spreadsheet program and save it again."
    )


def damaged_part_way(display: str, detail: str) -> str:
    """Reading failed after some rows were read."""
    return (
        f"File {display!r} is damaged part-way through ({detail}). "
        "Open it in a spreadsheet program and save it again."
    )
