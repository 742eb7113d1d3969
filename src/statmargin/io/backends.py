"""The one place a workbook path becomes a back end: the job edge.

The reader and the jobs accept an open ``WorkbookSource``/``WorkbookSink``; when
they are given only a path they call these functions, so the file back end is
chosen here and nowhere else. Tests replace these two functions to run the whole
pipeline through another back end.
"""

from __future__ import annotations

import os

from .protocol import WorkbookSink, WorkbookSource


def open_source(path: str | os.PathLike[str]) -> WorkbookSource:
    """Open a workbook file for reading (python-calamine); the caller closes it.

    Raises
    ------
    WorkbookError
        The file is missing, a folder, locked by a password or not a workbook.
    """
    from .file.source import FileSource

    return FileSource(path)


def open_backend(path: str | os.PathLike[str]) -> tuple[WorkbookSource, WorkbookSink]:
    """Open a workbook file for reading and for writing the tool's sheets; the caller closes the source.

    Raises
    ------
    WorkbookError
        The file cannot be opened for reading (see ``open_source``).
    """
    from .file.sink import FileSink

    return open_source(path), FileSink(path)
