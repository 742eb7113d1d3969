"""Package-level xlsx writing: add tool sheets to a workbook without touching the user's parts.

``zipio`` copies zip entries byte for byte, ``package`` edits the few package
parts that list sheets, ``sheetxml``, ``styles`` and ``charts`` render the tool
sheets. ``statmargin.io.file.sink.FileSink`` puts it together with an atomic write.
"""

from __future__ import annotations

from .package import PackageResult, build_package, read_sheets, tool_sheets
from .zipio import ZipEntry, read_zip, write_zip

__all__ = [
    "PackageResult",
    "ZipEntry",
    "build_package",
    "read_sheets",
    "read_zip",
    "tool_sheets",
    "write_zip",
]
