"""The back-end seam itself: the in-memory and file back ends agree on every declared member.

One invented clinic workbook is described once (``CLINIC``) and built twice, as an
.xlsx file (xlsxwriter) and as a ``MemoryWorkbook``; every member of
``WorkbookSource`` must answer alike. Writes go through both back ends and must
name, replace and mark sheets alike and read back alike. The reference for the
file's behaviour is the file back end itself, whose own tests check it against
independent readers (openpyxl, LibreOffice); the reference for the jobs' output
is the same job run through the file back end. All data is invented.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
import re
import shutil
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
import xlsxwriter

from statmargin.errors import RoleError, SheetNotFoundError, WriteError
from statmargin.io import backends
from statmargin.io.file.sink import FileSink
from statmargin.io.file.source import FileSource
from statmargin.io.memory import ErrorValue, MemoryWorkbook, Uncalculated, read_back
from statmargin.io.protocol import (
    ERROR_ISSUE,
    NO_VALUE_ISSUE,
    TableRange,
    WorkbookBackend,
    WorkbookSink,
    WorkbookSource,
)
from statmargin.jobs.workbook import plan_workbook, run_workbook
from statmargin.read.reader import read_table
from statmargin.read.table import NoteKind
from statmargin.sheets.model import Cell, Chart, ChartSeries, SheetModel
from strict_backend import (
    assert_sources_agree,
    calls,
    declared_members,
    normal_rows,
    report_fields,
    strict,
)
from workbook_edit import make_newcomer_workbook
from workbook_fixtures import make_rich_workbook, make_workbook_with_user_sheet, sample_tool_models

# ----------------------------------------------------------------------------- one workbook, two ways

# An invented clinic workbook: a cover sheet, a data sheet whose table starts at B3
# under a merged title, with an error value, an uncalculated formula, a boolean and
# dates; a headerless table beside it; a hidden sheet; a chart sheet; and a sheet
# an earlier run wrote (it carries the tool's marker).
DAY = dt.date(2026, 4, 1)
CLINIC: dict[str, list[list[Any]]] = {
    "Cover": [["Clinic visit log (invented data for tests)"], [], ["Prepared by the test suite"]],
    "Visits": [
        [None, "Visit log"],
        [],
        [None, "Site", "Wait minutes", "Visit date", "Note"],
        [None, "North", 34.5, DAY, "first visit", None, 1.0, 2.0],
        [None, "North", 41.0, DAY + dt.timedelta(days=1), True, None, 3.0, 4.0],
        [None, "South", ErrorValue("#N/A"), DAY + dt.timedelta(days=2), "", None, 5.0, 6.0],
        [None, "South", 52.0, DAY + dt.timedelta(days=3), "NA"],
        [None, "East", Uncalculated("=C4*2"), DAY + dt.timedelta(days=4), "late"],
        [None, "East", 22.0, DAY + dt.timedelta(days=5), False],
        [None, "Total"],
    ],
    "Hidden notes": [["kept out of sight (invented)"]],
    "Old results": [["Results of an earlier run (invented)"], [None, 0.04]],
}
CLINIC_TABLE = TableRange("VisitLog", first_row=3, first_col=1, last_row=9, last_col=4)


def write_clinic(path: Path) -> Path:
    """CLINIC as an .xlsx file, written with xlsxwriter."""
    book = xlsxwriter.Workbook(str(path))
    date_format = book.add_format({"num_format": "yyyy-mm-dd"})
    for name, rows in CLINIC.items():
        sheet = book.add_worksheet(name)
        if name == "Visits":
            sheet.add_table(
                "B3:E10",
                {
                    "name": CLINIC_TABLE.name,
                    "total_row": True,
                    "columns": [
                        {"header": "Site", "total_string": "Total"},
                        {"header": "Wait minutes"},
                        {"header": "Visit date"},
                        {"header": "Note"},
                    ],
                },
            )
            sheet.add_table("G4:H6", {"header_row": False, "autofilter": False})  # left out: no header
            sheet.merge_range("B1:D1", "Visit log")
        if name == "Hidden notes":
            sheet.hide()
        for r, row in enumerate(rows):
            for c, value in enumerate(row):
                if (name == "Visits" and r in (0, 2, 9)) or value is None:
                    continue  # the merge, the table's header and totals rows are written above
                if isinstance(value, ErrorValue):
                    sheet.write_formula(r, c, "=NA()", None, value.code)
                elif isinstance(value, Uncalculated):
                    sheet.write_formula(r, c, value.formula, None, "")
                elif isinstance(value, bool):
                    sheet.write_boolean(r, c, value)
                elif isinstance(value, dt.date):
                    sheet.write_datetime(r, c, dt.datetime.combine(value, dt.time()), date_format)
                elif isinstance(value, str):
                    sheet.write_string(r, c, value)
                else:
                    sheet.write_number(r, c, value)
        if name == "Hidden notes":  # a chart sheet between the worksheets: never listed or read
            chart = book.add_chart({"type": "column"})
            chart.add_series({"values": ["Visits", 3, 6, 5, 6]})
            book.add_chartsheet("Wait chart").set_chart(chart)
    book.define_name("'Old results'!statmargin_sheet", '="results"')
    book.close()
    return path


def clinic_in_memory() -> MemoryWorkbook:
    """CLINIC held in memory."""
    return MemoryWorkbook.from_sheets(
        CLINIC,
        name="clinic.xlsx",
        hidden=["Hidden notes"],
        tables={"Visits": [CLINIC_TABLE]},
        merged={"Visits": [(0, 1, 0, 3)]},
        tool_sheets={"Old results": "results"},
    )


@pytest.fixture
def clinic_file(tmp_path: Path) -> Path:
    return write_clinic(tmp_path / "clinic.xlsx")


def test_memory_and_file_agree_on_every_declared_member(clinic_file: Path) -> None:
    """The same workbook built as a file and in memory gives the same answer from every WorkbookSource member."""
    with FileSource(clinic_file) as file_source:
        assert_sources_agree(strict(clinic_in_memory(), WorkbookSource), strict(file_source, WorkbookSource))


def test_the_agreement_covers_what_it_claims(clinic_file: Path) -> None:
    """The compared workbook really has hidden sheets, a table, merges, issues and a marker, as the file reads them."""
    with FileSource(clinic_file) as source:
        assert source.sheet_names() == ["Cover", "Visits", "Hidden notes", "Old results"]
        assert source.hidden_sheet_names() == ["Hidden notes"]
        assert source.tool_sheets() == {"Old results": "results"}
        assert source.tables("Visits") == [CLINIC_TABLE]
        assert source.merged_ranges("Visits") == [(0, 1, 0, 3)]
        assert source.cell_issues("Visits") == {
            (6, 2): (ERROR_ISSUE, "#N/A"),
            (8, 2): (NO_VALUE_ISSUE, "=C4*2"),
        }
        assert source.iter_rows_at("Visits")[0] == 1


@pytest.mark.parametrize("builder", ["newcomer", "rich", "clinic"])
def test_a_copy_from_file_agrees_with_the_file(tmp_path: Path, builder: str) -> None:
    """``MemoryWorkbook.from_file`` holds everything the file back end shows, member by member."""
    make = {"newcomer": make_newcomer_workbook, "rich": make_rich_workbook, "clinic": write_clinic}[builder]
    path = make(tmp_path / f"{builder}.xlsx")
    with FileSource(path) as source:
        assert_sources_agree(strict(MemoryWorkbook.from_file(path), WorkbookSource), strict(source, WorkbookSource))


def test_reader_gives_the_same_table_from_both(clinic_file: Path) -> None:
    """read_table on the clinic's data sheet gives identical columns, notes and fingerprint from both back ends."""
    with FileSource(clinic_file) as source:
        from_file = read_table(None, sheet="visits", source=strict(source, WorkbookSource))
    from_memory = read_table(None, sheet="visits", source=strict(clinic_in_memory(), WorkbookSource))
    assert from_memory.fingerprint == from_file.fingerprint
    assert from_memory.notes == from_file.notes
    assert list(from_memory.columns) == ["Site", "Wait minutes", "Visit date", "Note"]
    kinds = {(n.cell, n.kind) for n in from_memory.notes}
    assert {("C6", NoteKind.ERROR_VALUE), ("C8", NoteKind.NO_CACHED_VALUE)} <= kinds


# ----------------------------------------------------------------------------- writing


def _book_pair(path: Path) -> tuple[Any, Any, MemoryWorkbook]:
    """Strict sinks for a file and for its copy in memory, plus the memory book."""
    book = MemoryWorkbook.from_file(path)
    return strict(FileSink(path), WorkbookSink), strict(book, WorkbookSink), book


def _assert_same_after_write(book: MemoryWorkbook, path: Path) -> None:
    with FileSource(path) as source:
        assert_sources_agree(strict(book, WorkbookSource), strict(source, WorkbookSource))


def _two_results_sheets(path: Path) -> Path:
    """A workbook where the user copied the tool's results sheet: two sheets carry the results marker."""
    book = xlsxwriter.Workbook(str(path))
    book.add_worksheet("Visits").write_row(0, 0, ["Site", "Wait"])
    book.add_worksheet("results copy").write(0, 0, "a copy the user made (invented)")
    book.add_worksheet("results").write(0, 0, "the tool's sheet from an earlier run (invented)")
    book.define_name("'results copy'!statmargin_sheet", '="results"')
    book.define_name("'results'!statmargin_sheet", '="results"')
    book.close()
    return path


SCENARIOS = {
    "fresh": lambda p: make_rich_workbook(p),
    "user sheet named results": lambda p: make_workbook_with_user_sheet(p, "results"),
    "user sheets take both names": lambda p: _user_sheets(p, ["results", "Statmargin Results"]),
    "copied tool sheet": _two_results_sheets,
}


def _user_sheets(path: Path, names: list[str]) -> Path:
    book = xlsxwriter.Workbook(str(path))
    book.add_worksheet("Visits").write_row(0, 0, ["Site", "Wait"])
    for name in names:
        book.add_worksheet(name).write(0, 0, "my own sheet (invented)")
    book.close()
    return path


@pytest.mark.parametrize("scenario", list(SCENARIOS))
def test_writes_name_replace_and_mark_alike(tmp_path: Path, scenario: str) -> None:
    """Writing the same models twice gives the same reports and the same workbook through both back ends."""
    path = SCENARIOS[scenario](tmp_path / "book.xlsx")
    file_sink, memory_sink, book = _book_pair(path)
    for _ in range(2):  # the second write replaces the first one's sheets
        assert report_fields(memory_sink.write_sheets(sample_tool_models())) == report_fields(
            file_sink.write_sheets(sample_tool_models())
        )
        _assert_same_after_write(book, path)
    assert book.model("results") is book.written[-2]
    assert calls(memory_sink) == ["write_sheets", "write_sheets"]


def test_names_chosen_around_user_sheets(tmp_path: Path) -> None:
    """User sheets holding both candidate names (any case) push the tool's sheet to the numbered name."""
    path = _user_sheets(tmp_path / "book.xlsx", ["results", "Statmargin Results"])
    _, memory_sink, book = _book_pair(path)
    report = memory_sink.write_sheets(sample_tool_models())
    assert report.sheets == {"results": "statmargin results (2)", "charts": "charts"}
    assert book.sheet_names()[:3] == ["Visits", "results", "Statmargin Results"]
    assert book.tool_sheets() == {"statmargin results (2)": "results", "charts": "charts"}


def test_copied_tool_sheet_is_kept_unmarked(tmp_path: Path) -> None:
    """Of two sheets marked "results", the one with the model's name is replaced and the copy loses the marker."""
    path = _two_results_sheets(tmp_path / "book.xlsx")
    _, memory_sink, book = _book_pair(path)
    report = memory_sink.write_sheets(sample_tool_models())
    assert report.replaced == ["results"]
    assert "results copy" in book.sheet_names() and "results copy" not in book.tool_sheets()
    assert any("looks like a copy" in sentence for sentence in report.renamed)


def test_written_cells_read_back_as_from_the_file(tmp_path: Path) -> None:
    """Every kind of value a model may hold reads back from memory exactly as from the written file."""
    values = [
        None, True, 5, 2**60, 1.5, math.nan, math.inf, -math.inf, "", " sp ", "=1+1",
        "a_x0041_b\x01c", dt.datetime(2024, 1, 2, 3, 4, 5, 123456), dt.date(2024, 1, 2),
        dt.datetime(2024, 1, 2, tzinfo=dt.timezone.utc), dt.time(3, 4), 0.5, 0, 59, 60, 61,
        45293.5, 1e7, dt.datetime(1900, 2, 28, 12),
    ]
    model = SheetModel("results", "results")
    for r, value in enumerate(values):
        for c, style in enumerate(["text", "date", "integer", "percent"], start=1):
            model.put(r, c, value, style)
    model.put(len(values), 6, "", "text")  # empty text is a used cell: it widens and lengthens the sheet
    path = make_workbook_with_user_sheet(tmp_path / "book.xlsx", "Notes")
    file_sink, memory_sink, book = _book_pair(path)
    file_sink.write_sheets([model])
    memory_sink.write_sheets([model])
    with FileSource(path) as source:
        first_col, rows = source.iter_rows_at("results")
        from_file = list(rows)
    assert book.iter_rows_at("results")[0] == first_col == 1
    from_memory = list(book.iter_rows_at("results")[1])
    for value, mine, theirs in zip([*values, ""], from_memory, from_file, strict=True):
        # Exactly, types too: '' for blanks inside the used range, floats for whole numbers.
        assert [(type(v), v) for v in mine] == [(type(v), v) for v in theirs], value
    assert read_back(Cell(dt.datetime(2026, 3, 1, 12), "date")) == dt.datetime(2026, 3, 1, 12)
    assert read_back(Cell(dt.datetime(2026, 3, 1, 12), "text")) == pytest.approx(46082.5)


def _bad_models(kind: str) -> list[SheetModel]:
    model = SheetModel("results", "results")
    if kind == "same kind twice":
        return [model, SheetModel("results 2", "results")]
    if kind == "link to a missing sheet":
        model.put(0, 0, "see the shape", "link", link="{shape}!A1")
    elif kind == "unknown style":
        model.put(0, 0, "x", "sparkly")
    elif kind == "chart of an unknown kind":
        model.put(0, 0, "x")
        model.charts.append(Chart("pie", "Waits", "$A$1:$A$1", [ChartSeries("x", "$A$1:$A$1")], "C3"))
    else:
        model.put(2_000_000, 0, "too far down")
    return [model]


@pytest.mark.parametrize(
    "kind",
    [
        "same kind twice",
        "link to a missing sheet",
        "unknown style",
        "chart of an unknown kind",
        "cell outside a sheet",
    ],
)
def test_bad_models_are_refused_alike_and_change_nothing(tmp_path: Path, kind: str) -> None:
    """A model no workbook can hold gets the same one-line WriteError from both back ends; neither book changes."""
    path = make_rich_workbook(tmp_path / "book.xlsx")
    before = path.read_bytes()
    file_sink, memory_sink, book = _book_pair(path)
    names = book.sheet_names()
    with pytest.raises(WriteError) as from_file:
        file_sink.write_sheets(_bad_models(kind))
    with pytest.raises(WriteError) as from_memory:
        memory_sink.write_sheets(_bad_models(kind))
    assert str(from_memory.value) == str(from_file.value)
    assert "\n" not in str(from_memory.value)
    assert path.read_bytes() == before
    assert book.sheet_names() == names and book.written == []


def test_out_writes_a_copy_and_leaves_the_book(tmp_path: Path) -> None:
    """With ``out`` the memory book stays as it was and the copy matches the file copy the file back end wrote."""
    path = make_rich_workbook(tmp_path / "book.xlsx")
    file_sink, memory_sink, book = _book_pair(path)
    names = book.sheet_names()
    copy = str(tmp_path / "copy.xlsx")
    report = memory_sink.write_sheets(sample_tool_models(), out=copy)
    assert report_fields(report) == report_fields(file_sink.write_sheets(sample_tool_models(), out=copy))
    assert report.path == copy and book.sheet_names() == names
    with FileSource(copy) as source:
        assert sorted(source.tool_sheets().values()) == sorted(book.copies[copy].tool_sheets().values())
        assert normal_rows(source.iter_rows("results")) == normal_rows(book.copies[copy].iter_rows("results"))
    assert memory_sink.check(book.display_name) is None  # naming the book itself means in place


def test_nothing_to_write_changes_nothing() -> None:
    """An empty list of models leaves the memory book alone and reports no sheets, as the file back end does."""
    book = clinic_in_memory()
    report = strict(book, WorkbookSink).write_sheets([])
    assert (report.path, report.sheets, report.renamed, report.replaced) == ("clinic.xlsx", {}, [], [])
    assert book.sheet_names() == list(CLINIC)


# ----------------------------------------------------------------------------- the strict double


def test_protocols_declare_the_seam() -> None:
    """The protocols declare exactly the members the reader, the jobs and the writer use."""
    source = {
        "display_name", "sheet_names", "hidden_sheet_names", "resolve_sheet", "iter_rows",
        "iter_rows_at", "last_row", "release", "tables", "merged_ranges", "tool_sheets", "cell_issues",
        "hidden_rows",
        "close",
    }
    assert set(declared_members(WorkbookSource)) == source
    assert set(declared_members(WorkbookSink)) == {"check", "write_sheets"}
    assert set(declared_members(WorkbookBackend)) == source | {"check", "write_sheets"}


def test_strict_double_refuses_anything_undeclared() -> None:
    """Undeclared members, probes, attribute writes and undeclared keywords each fail the test at once."""
    wrapped = strict(clinic_in_memory(), WorkbookSource)
    with pytest.raises(pytest.fail.Exception, match="'sheet' is not declared"):
        wrapped.sheet("Visits")  # MemoryWorkbook has it, the protocol does not
    with pytest.raises(pytest.fail.Exception, match="'model' is not declared"):
        hasattr(wrapped, "model")  # a probe is not swallowed as False
    with pytest.raises(pytest.fail.Exception, match="set 'name'"):
        wrapped.name = "other"
    with pytest.raises(pytest.fail.Exception, match="does not declare"):
        wrapped.cell_issues("Visits", rows=(1, 3))
    with pytest.raises(pytest.fail.Exception, match="'write_sheets' is not declared by WorkbookSource"):
        wrapped.write_sheets([])
    assert wrapped.resolve_sheet("visits") == "Visits"
    assert wrapped.display_name == "clinic.xlsx"
    assert calls(wrapped) == ["resolve_sheet", "display_name"]


def test_reader_uses_only_declared_members(clinic_file: Path) -> None:
    """read_table on a file source goes through the strict double and uses the members it needs."""
    with FileSource(clinic_file) as source:
        wrapped = strict(source, WorkbookSource)
        read_table(None, source=wrapped)
    used = set(calls(wrapped))
    assert {"tool_sheets", "hidden_sheet_names", "iter_rows_at", "tables", "merged_ranges", "cell_issues"} <= used
    assert "close" not in used  # a source passed in belongs to the caller


def test_the_reader_and_jobs_do_not_import_the_file_back_end() -> None:
    """Importing the reader and the jobs loads no module of the file back end (it is chosen in io.backends)."""
    code = (
        "import sys, statmargin.read.reader, statmargin.jobs.workbook; "
        "print(sorted(m for m in sys.modules if m.startswith('statmargin.io.file')))"
    )
    shown = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert shown.stdout.strip() == "[]"


@pytest.mark.parametrize("job", [
    "from statmargin.jobs.workbook import run_workbook as job; job(BOOK)",
    "from statmargin.jobs.question import test_workbook as job; job(BOOK, outcome=['Score'], by=['District'])",
])
def test_a_run_reads_its_sheet_before_loading_the_statistics_libraries(tmp_path: Path, job: str) -> None:
    """SciPy and pandas (~80 MB) are loaded after the data sheet is read, so they do not add to the read's peak."""
    import shutil
    from importlib import resources

    book = tmp_path / "inspections.xlsx"
    with resources.as_file(resources.files("statmargin.data") / "inspections_demo.xlsx") as demo:
        shutil.copyfile(demo, book)
    code = (
        "import sys\n"
        "from statmargin.read import reader\n"
        "seen = []\n"
        "real = reader.read_table\n"
        "def spy(*args, **kwargs):\n"
        "    seen.append(sorted(m for m in ('scipy', 'pandas', 'statsmodels') if m in sys.modules))\n"
        "    return real(*args, **kwargs)\n"
        "reader.read_table = spy\n"
        f"BOOK = {str(book)!r}\n"
        f"{job}\n"
        "print(seen)\n"
    )
    shown = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert shown.stdout.strip() == "[[]]"


# ----------------------------------------------------------------------------- jobs through memory


def _mask_times(value: Any) -> Any:
    """Records made comparable: run times (ISO text ending in Z) masked, NaN equal to itself, types kept."""
    if isinstance(value, dict):
        return {k: _mask_times(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_mask_times(v) for v in value]
    if isinstance(value, str):
        value = re.sub(r"\d{4}-\d\d-\d\d \d\d:\d\d UTC", "<run time>", value)  # as the sheets show it
        return re.sub(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d+)?Z", "<run time>", value)
    if isinstance(value, float) and math.isnan(value):
        return "NaN"
    if isinstance(value, (int, float)):
        return (type(value).__name__, value)  # 36 and 36.0 are equal in Python but not in a cell
    return value


def _model_records(models: list[SheetModel]) -> list[Any]:
    return [_mask_times(dataclasses.asdict(m)) for m in models]


class RecordingSink:
    """A file sink that keeps every list of models it was asked to write."""

    def __init__(self, path: Path) -> None:
        self.inner = FileSink(path)
        self.written: list[SheetModel] = []
        self.reports: list[Any] = []

    def check(self, out: str | None = None) -> str | None:
        return self.inner.check(out)

    def write_sheets(self, models: list[SheetModel], out: str | None = None) -> Any:
        self.written.extend(models)
        report = self.inner.write_sheets(models, out=out)
        self.reports.append(report)
        return report


def _steps(path: Path, shared: Path, source: Any, sink: Any) -> None:
    """Plan with presets, run, re-run, re-plan, then a sharing-mode run into a copy."""
    plan_workbook(path, outcome=["Wait minutes"], by=["Site"], source=source(), sink=sink)
    run_workbook(path, source=source(), sink=sink)
    run_workbook(path, source=source(), sink=sink)
    plan_workbook(path, source=source(), sink=sink)
    run_workbook(path, share=True, min_count=11, out=shared, source=source(), sink=sink)


def test_jobs_write_the_same_sheet_models_through_both_back_ends(tmp_path: Path) -> None:
    """Plan, run, re-run, re-plan and a shared run write equal sheet models and reports through memory and file."""
    (tmp_path / "file").mkdir()
    (tmp_path / "memory").mkdir()
    path = make_newcomer_workbook(tmp_path / "file" / "visits.xlsx")
    twin = tmp_path / "memory" / "visits.xlsx"
    shutil.copyfile(path, twin)

    recorder = RecordingSink(path)
    opened: list[FileSource] = []

    def file_source() -> Any:
        opened.append(FileSource(path))
        return strict(opened[-1], WorkbookSource)

    _steps(path, tmp_path / "file" / "shared.xlsx", file_source, strict(recorder, WorkbookSink))
    for source in opened:
        source.close()

    book = MemoryWorkbook.from_file(twin)
    _steps(twin, tmp_path / "memory" / "shared.xlsx", lambda: strict(book, WorkbookSource), strict(book, WorkbookSink))

    # roles, 4 sheets and the history, 4 sheets and the history, roles, 4 sheets and the history
    assert len(book.written) == len(recorder.written) == 17
    assert _model_records(book.written) == _model_records(recorder.written)
    assert [report_fields(r) for r in book.reports] == [report_fields(r) for r in recorder.reports]
    log = book.model("log")
    assert log is not None and log.n_rows == recorder.written[9].n_rows  # three runs logged, then the shared copy's
    assert not book.closed  # a source passed in is the caller's to close


def test_messages_name_the_back_ends_book() -> None:
    """A run on a book without a roles sheet names the book by its display name, not a path."""
    book = MemoryWorkbook.from_sheets({"Visits": [["Site", "Wait"], ["North", 12.0]]}, name="Clinic log")
    with pytest.raises(RoleError, match=r"^Clinic log has no roles sheet yet; run 'statmargin plan Clinic log'"):
        run_workbook("not/a/path.xlsx", source=strict(book, WorkbookSource), sink=strict(book, WorkbookSink))
    with pytest.raises(SheetNotFoundError, match=r"^Sheet 'Data' is not in 'Clinic log'\. Its sheets are: 'Visits'\.$"):
        read_table(None, sheet="Data", source=strict(book, WorkbookSource))


def test_jobs_open_and_close_their_own_back_end(monkeypatch: pytest.MonkeyPatch) -> None:
    """Given only a path, the jobs and the reader open the back end through io.backends and close the source."""
    books: list[MemoryWorkbook] = []

    def open_backend(path: Any) -> tuple[Any, Any]:
        books.append(MemoryWorkbook.from_sheets({"Visits": [["Site", "Wait"], ["North", 12.0], ["South", 15.0]]}))
        return strict(books[-1], WorkbookSource), strict(books[-1], WorkbookSink)

    def open_source(path: Any) -> Any:
        return open_backend(path)[0]

    monkeypatch.setattr(backends, "open_backend", open_backend)
    monkeypatch.setattr(backends, "open_source", open_source)
    summary = plan_workbook("clinic.xlsx")
    assert summary.data_sheet == "Visits" and books[0].closed
    assert list(books[0].tool_sheets().values()) == ["roles"]
    table = read_table("clinic.xlsx")
    assert table.n_rows_read == 2 and books[1].closed
