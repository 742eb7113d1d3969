"""Shared fixtures for the test suite."""

from __future__ import annotations

import os
from collections.abc import Callable, Iterator, Mapping, Sequence
from pathlib import Path
from typing import Any

import pytest
from hypothesis import settings

# CI runs property tests with a fixed seed so a red run always reproduces; locally they explore.
settings.register_profile("ci", derandomize=True)
if os.environ.get("CI"):
    settings.load_profile("ci")


@pytest.fixture
def tmp_workbook(tmp_path: Path) -> Callable[..., Path]:
    """Factory: write columns (header -> values) to a new .xlsx in tmp_path and return its path.

    ``None`` and NaN values become blank cells. Pass ``sheets={"name": columns, ...}``
    instead of ``columns`` for several sheets (written in the given order).
    """
    import math

    import xlsxwriter

    counter = {"n": 0}

    def make(
        columns: Mapping[str, Sequence[Any]] | None = None,
        *,
        name: str | None = None,
        sheet: str = "data",
        sheets: Mapping[str, Mapping[str, Sequence[Any]]] | None = None,
    ) -> Path:
        counter["n"] += 1
        path = tmp_path / (name or f"book{counter['n']}.xlsx")
        book = xlsxwriter.Workbook(str(path))
        for sheet_name, cols in (sheets or {sheet: columns or {}}).items():
            ws = book.add_worksheet(sheet_name)
            for j, (header, values) in enumerate(cols.items()):
                ws.write_string(0, j, str(header))
                for i, value in enumerate(values, start=1):
                    if value is None or (isinstance(value, float) and math.isnan(value)):
                        continue
                    if isinstance(value, str):
                        ws.write_string(i, j, value)
                    else:
                        ws.write_number(i, j, float(value))
        book.close()
        return path

    return make


@pytest.fixture(scope="module", params=["file", "memory", "excel"])
def pipeline_backend(request: pytest.FixtureRequest) -> Iterator[str]:
    """Run a module's workbook jobs through the file back end, the in-memory one and the Excel bridge.

    Both ways the back end sits behind ``strict_backend.strict``, so a job or the
    reader that used a member the protocol does not declare fails. "file" opens
    the file back end; "memory" copies the file into a ``MemoryWorkbook``, reads
    from it and writes through it, mirroring each write into the file (and
    checking memory and file agree) so the test's own file-based checks see the
    same workbook either way. "excel" does the same through the Excel bridge on
    an in-memory stand-in of xlwings (``xlwings_standin``) loaded from the file.
    """
    from statmargin.io import backends
    from statmargin.io.file.sink import FileSink
    from statmargin.io.file.source import FileSource
    from statmargin.io.memory import MemoryWorkbook
    from statmargin.io.protocol import WorkbookSink, WorkbookSource
    from strict_backend import MirroredSink, strict

    def open_file(path: Any) -> Any:
        return strict(FileSource(path), WorkbookSource)

    def open_file_backend(path: Any) -> tuple[Any, Any]:
        return open_file(path), strict(FileSink(path), WorkbookSink)

    def open_memory(path: Any) -> Any:
        return strict(MemoryWorkbook.from_file(path), WorkbookSource)

    def open_memory_backend(path: Any) -> tuple[Any, Any]:
        book = MemoryWorkbook.from_file(path)
        return strict(book, WorkbookSource), strict(MirroredSink(book, path), WorkbookSink)

    def open_excel(path: Any) -> Any:
        import xlwings_standin
        from statmargin.io.excel.book import ExcelBook

        return strict(ExcelBook(xlwings_standin.load(path)), WorkbookSource)

    def open_excel_backend(path: Any) -> tuple[Any, Any]:
        import xlwings_standin
        from statmargin.io.excel.book import ExcelBook

        bridge = ExcelBook(xlwings_standin.load(path))
        return strict(bridge, WorkbookSource), strict(xlwings_standin.MirroredBridge(bridge, path), WorkbookSink)

    openers = {
        "file": (open_file, open_file_backend),
        "memory": (open_memory, open_memory_backend),
        "excel": (open_excel, open_excel_backend),
    }
    with pytest.MonkeyPatch.context() as patch:
        open_source, open_backend = openers[request.param]
        patch.setattr(backends, "open_source", open_source)
        patch.setattr(backends, "open_backend", open_backend)
        yield request.param
