"""A strict stand-in for a workbook back end: only what ``statmargin.io.protocol`` declares gets through.

``strict(inner, WorkbookSource)`` wraps a back end so that the reader, the jobs or
the writer can use exactly the members the protocol declares, called with
arguments the declared signature accepts. Anything else (an undeclared method,
a ``getattr`` probe for an optional one, setting an attribute, an undeclared
keyword) fails the test at once with ``pytest.fail``, which no ``except
Exception`` or ``hasattr`` in the code under test can swallow. This is how the
suite proves the seam is complete: a back end with only the declared members
(the Excel bridge) runs every step.

Also here: ``assert_sources_agree`` compares two sources member by member, and
``MirroredSink`` writes through the in-memory back end and the file back end at
once and checks that they agree.
"""

from __future__ import annotations

import inspect
import math
from collections.abc import Callable
from pathlib import Path
from typing import Any, Protocol

import pytest

from statmargin.errors import StatmarginError
from statmargin.io.file.sink import FileSink
from statmargin.io.memory import MemoryWorkbook
from statmargin.io.protocol import WorkbookSink, WorkbookSource, WriteReport
from statmargin.sheets.model import SheetModel


def declared_members(protocol: type) -> dict[str, Any]:
    """Name -> declaration (function or property) of every member a protocol and its bases declare."""
    members: dict[str, Any] = {}
    for cls in reversed(protocol.__mro__):
        if cls in (object, Protocol) or not getattr(cls, "_is_protocol", False):
            continue
        for name, value in vars(cls).items():
            if not name.startswith("_"):
                members[name] = value
    return members


class StrictBackend:
    """Forwards the members ``protocol`` declares to ``inner``; any other use fails the test."""

    def __init__(self, inner: Any, protocol: type) -> None:
        object.__setattr__(self, "_inner", inner)
        object.__setattr__(self, "_protocol", protocol)
        object.__setattr__(self, "_members", declared_members(protocol))
        object.__setattr__(self, "_calls", [])

    def __getattribute__(self, name: str) -> Any:
        if name.startswith("__") and name.endswith("__"):  # isinstance, repr ... see the wrapper itself
            return object.__getattribute__(self, name)
        members = object.__getattribute__(self, "_members")
        protocol = object.__getattribute__(self, "_protocol")
        if name not in members:
            pytest.fail(f"{name!r} is not declared by {protocol.__name__}, but the code under test used it")
        value = getattr(object.__getattribute__(self, "_inner"), name)
        declared = members[name]
        calls = object.__getattribute__(self, "_calls")
        if isinstance(declared, property):
            calls.append((name, (), {}))
            return value
        return _checked(name, declared, value, calls, protocol)

    def __setattr__(self, name: str, value: Any) -> None:
        pytest.fail(f"the code under test set {name!r} on a workbook back end")


def _checked(
    name: str, declared: Callable[..., Any], method: Callable[..., Any], calls: list[Any], protocol: type
) -> Callable[..., Any]:
    signature = inspect.signature(declared)

    def call(*args: Any, **kwargs: Any) -> Any:
        try:
            signature.bind(None, *args, **kwargs)  # None stands for self
        except TypeError as exc:
            pytest.fail(f"{protocol.__name__}.{name} called with arguments it does not declare: {exc}")
        calls.append((name, args, kwargs))
        return method(*args, **kwargs)

    return call


def strict(inner: Any, protocol: type) -> Any:
    """``inner`` behind a ``StrictBackend`` for ``protocol`` (typed Any so it passes as the protocol)."""
    return StrictBackend(inner, protocol)


def calls(wrapper: StrictBackend) -> list[str]:
    """The names of the members used through a strict wrapper, in order."""
    return [name for name, _, _ in object.__getattribute__(wrapper, "_calls")]


def inner(wrapper: StrictBackend) -> Any:
    """The back end behind a strict wrapper."""
    return object.__getattribute__(wrapper, "_inner")


# ----------------------------------------------------------------------------- agreement


def _blank(value: Any) -> bool:
    return value is None or value == ""


def normal_rows(rows: Any, first_col: int = 0) -> list[list[Any]]:
    """Rows made comparable: padded back to column A, blanks as None, trailing blanks dropped."""
    out = []
    for row in rows:
        cells = [None] * first_col + [None if _blank(v) else v for v in row]
        while cells and cells[-1] is None:
            cells.pop()
        out.append(cells)
    while out and not out[-1]:
        out.pop()
    return out


def _outcome(call: Callable[[], Any]) -> Any:
    """A call's result, or its StatmarginError as (type, message), so refusals compare too."""
    try:
        return call()
    except StatmarginError as exc:
        return (type(exc), str(exc))


def assert_sources_agree(a: WorkbookSource, b: WorkbookSource) -> None:
    """Every member of ``WorkbookSource`` gives the same answer on both sources (blanks compared as blanks)."""
    assert a.display_name == b.display_name
    assert a.sheet_names() == b.sheet_names()
    assert a.hidden_sheet_names() == b.hidden_sheet_names()
    assert a.tool_sheets() == b.tool_sheets()
    missing = "no such sheet here"
    for name in [*a.sheet_names(), missing]:
        for asked in (name, name.upper(), f" {name.lower()} "):
            assert _outcome(lambda s=asked: a.resolve_sheet(s)) == _outcome(lambda s=asked: b.resolve_sheet(s))
        if name == missing:
            for member in ("iter_rows", "iter_rows_at", "tables", "merged_ranges", "cell_issues"):
                assert _outcome(lambda m=member: getattr(a, m)(missing)) == _outcome(
                    lambda m=member: getattr(b, m)(missing)
                ), member
            continue
        assert normal_rows(a.iter_rows(name)) == normal_rows(b.iter_rows(name)), name
        first_a, rows_a = a.iter_rows_at(name)
        first_b, rows_b = b.iter_rows_at(name)
        assert first_a == first_b, name
        assert normal_rows(rows_a, first_a) == normal_rows(rows_b, first_b), name
        assert a.tables(name) == b.tables(name), name
        assert sorted(a.merged_ranges(name)) == sorted(b.merged_ranges(name)), name
        assert a.cell_issues(name) == b.cell_issues(name), name
        for bounds in ({"first_row": 3}, {"last_row": 4}, {"columns": [1, 3]}, {"first_row": 2, "last_row": 9, "columns": [3]}):
            assert a.cell_issues(name, **bounds) == b.cell_issues(name, **bounds), (name, bounds)


def report_fields(report: WriteReport) -> tuple[Any, ...]:
    """A write report without its path (the file path and the memory book's name differ by design)."""
    return report.sheets, report.renamed, report.replaced


class MirroredSink:
    """A sink that writes through the in-memory back end and then the same models into the file.

    The memory book and the file must agree on the report and, afterwards, on
    everything a source can read; the job gets the file's report, so later
    steps of a test (which read the file) see what they always saw.
    """

    def __init__(self, book: MemoryWorkbook, path: str | Path) -> None:
        self.book = book
        self.memory: WorkbookSink = strict(book, WorkbookSink)
        self.file = FileSink(path)

    def check(self, out: str | None = None) -> str | None:
        self.memory.check(out)
        return self.file.check(out)

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> WriteReport:
        from_memory = self.memory.write_sheets(models, out=out)
        from_file = self.file.write_sheets(models, out=out)
        assert report_fields(from_memory) == report_fields(from_file)
        written = self.book.copies.get(out, self.book) if out else self.book
        reread = MemoryWorkbook.from_file(from_file.path)
        written_named = MemoryWorkbook(
            [written.sheet(n) for n in written.sheet_names()], name=reread.display_name
        )
        assert_sources_agree(written_named, reread)
        return from_file


def finite(value: Any) -> Any:
    """NaN made equal to itself, for comparing records."""
    return "NaN" if isinstance(value, float) and math.isnan(value) else value
