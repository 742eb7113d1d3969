"""Write tool sheets into a new workbook file (the folder summary), atomically.

A package with an empty sheet list is made in memory and the sheets are added
by the same ``build_package`` step that adds tool sheets to a user's workbook,
so a new workbook is styled and checked exactly like the sheets statmargin
writes beside the data. The file is written to a temporary name, verified and
then moved into place; on failure nothing is left behind.
"""

from __future__ import annotations

import os
from pathlib import Path

from ...errors import OptionError
from ...sheets.model import SheetModel
from ..protocol import WriteReport
from .package import CONTENT_TYPES_PART, build_package, tool_sheets
from .sink import FileSink, _sheet_names_after
from .zipio import ZipEntry, new_entry, read_zip

_CONTENT_TYPES = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
    '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
    '<Default Extension="xml" ContentType="application/xml"/>'
    '<Override PartName="/xl/workbook.xml" '
    'ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
    "</Types>"
)
_ROOT_RELS = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
    '<Relationship Id="rId1" '
    'Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" '
    'Target="xl/workbook.xml"/></Relationships>'
)
_WORKBOOK = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
    'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">'
    "<bookViews><workbookView/></bookViews><sheets></sheets></workbook>"
)
_WORKBOOK_RELS = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"></Relationships>'
)


def blank_package() -> list[ZipEntry]:
    """Zip entries of a workbook with no sheets (not valid on its own; sheets are added next)."""
    return [
        new_entry(CONTENT_TYPES_PART, _CONTENT_TYPES.encode()),
        new_entry("_rels/.rels", _ROOT_RELS.encode()),
        new_entry("xl/workbook.xml", _WORKBOOK.encode()),
        new_entry("xl/_rels/workbook.xml.rels", _WORKBOOK_RELS.encode()),
    ]


def is_own_workbook(path: str | os.PathLike[str], kinds: set[str]) -> bool:
    """True when every sheet of an existing workbook is a statmargin tool sheet of one of ``kinds``."""
    try:
        entries = read_zip(Path(path).read_bytes())
        marked = tool_sheets({e.name: e for e in entries})
        from .package import read_sheets

        _, sheets = read_sheets({e.name: e for e in entries})
    except Exception:  # unreadable: certainly not a summary statmargin wrote
        return False
    return bool(sheets) and len(marked) == len(sheets) and set(marked.values()) <= kinds


def write_new_workbook(
    path: str | os.PathLike[str], models: list[SheetModel], *, replace_kinds: set[str] | None = None
) -> WriteReport:
    """Write ``models`` as the only sheets of a new .xlsx file at ``path``.

    Parameters
    ----------
    path : str or PathLike
        Target file (.xlsx).
    models : list of SheetModel
        At least one sheet.
    replace_kinds : set of str, optional
        An existing file at ``path`` is replaced only when it holds nothing but
        tool sheets of these kinds (an earlier summary); any other existing file
        is refused.

    Raises
    ------
    OptionError
        When ``path`` exists and is not an earlier workbook of these kinds.
    WriteError
        When writing or checking fails; nothing is left at ``path``.
    """
    from ...words.period_words import summary_exists

    target = Path(path)
    if target.exists() and not is_own_workbook(target, replace_kinds or set()):
        raise OptionError(summary_exists(str(target)))
    result = build_package(blank_package(), models)
    FileSink(target)._replace_atomically(target, {}, result, _sheet_names_after(result))
    return WriteReport(path=str(target), sheets=dict(result.sheets), renamed=[], replaced=[])
