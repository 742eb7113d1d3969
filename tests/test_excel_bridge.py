"""The Excel bridge's reading, writing and entry points, on the in-memory xlwings stand-in.

The stand-in (``xlwings_standin``) types strings the way Excel does and counts
every xlwings call, so these tests check what would happen in Excel: text that
looks like a formula stays text, a large sheet is read in a few calls, a
refused write leaves the workbook as it was, and every problem ends in one line.
All data are invented for the tests.
"""

from __future__ import annotations

import datetime as dt
import decimal
import math
import subprocess
import sys
from pathlib import Path

import pytest
import xlwings
from hypothesis import given
from hypothesis import strategies as st

import statmargin.excel
import xlwings_standin as xs
from statmargin.errors import OptionError, SheetNotFoundError, WriteError
from statmargin.io.excel import entry
from statmargin.io.excel.book import ExcelBook
from statmargin.io.excel.cells import excel_value, rectangles
from statmargin.io.excel.render import CELLS_PER_CALL
from statmargin.io.protocol import TableRange
from statmargin.read.reader import read_table
from statmargin.sheets.model import SheetModel

SRC = Path(statmargin.excel.__file__).resolve().parent.parent
TRICKY = ["=HYPERLINK(\"http://example.invalid\",\"x\")", "+1-2", "-x", "@SUM(1)", "007", "2026-03-01", "TRUE", "12%"]


def _clinic_rows(n: int = 24) -> list[list]:
    """An invented wait-time log: two sites, waits in minutes, a free-text remark."""
    rows = [["Site", "Wait minutes", "Remark"]]
    for i in range(n):
        rows.append(["North" if i % 2 else "South", 20.0 + (i * 7) % 13 + (5 if i % 2 else 0), TRICKY[i % len(TRICKY)]])
    return rows


def _roles(book: xs.Book, role_of: dict[str, str]) -> None:
    sheet = xs.sheet(book, "statmargin roles")
    rows = xs.rows(sheet)
    header = next(i for i, row in enumerate(rows) if row and row[0] == "Column")
    col = rows[header].index("Role")
    for r in range(header + 1, len(rows)):
        if rows[r] and rows[r][0] in role_of:
            xs.type_in(sheet, f"{xs.column_letters(col + 1)}{r + 1}", role_of[rows[r][0]])


@pytest.fixture()
def ran_book() -> xs.Book:
    """A stand-in workbook with tricky text in its data, planned and run through the bridge."""
    rows = _clinic_rows()
    rows[0][2] = "=Remark"  # a header that looks like a formula
    book = xs.new_book("clinic.xlsx", {"Log": rows})
    assert statmargin.excel.plan(book) == 0
    _roles(book, {"Wait minutes": "outcome", "Site": "compare by", "=Remark": "outcome"})
    assert statmargin.excel.run(book) == 0
    return book


def test_text_that_looks_like_a_formula_reaches_excel_as_text(ran_book) -> None:
    """Data text starting with =, +, -, @ (and text like 007, TRUE, 12%) lands as that exact text; only links are formulas."""
    seen: set[str] = set()
    for name in xs.markers(ran_book):
        sheet = xs.sheet(ran_book, name)
        for formula in xs.formulas(sheet).values():
            assert formula.startswith("=HYPERLINK(\"#"), formula
        for value in xs.values(sheet).values():
            if isinstance(value, str):
                seen |= {t for t in TRICKY + ["=Remark"] if t in value}
    assert ["=Remark"] in [row[:1] for row in xs.rows(xs.sheet(ran_book, "statmargin roles"))]
    assert set(TRICKY) - seen == set(), "every tricky text should appear somewhere (samples, labels)"
    assert xs.recorder(ran_book).violations == []


def test_categorical_outcome_labels_stay_text(ran_book) -> None:
    """The tricky labels of the categorical outcome are listed as text on the results sheet, never typed by Excel."""
    results = xs.values(xs.sheet(ran_book, "statmargin results"))
    texts = {v for v in results.values() if isinstance(v, str)}
    assert any("=HYPERLINK(\"http" in t for t in texts)
    assert not any(isinstance(v, xs.ExcelError) for v in results.values())


def test_a_hundred_thousand_rows_take_a_few_reads() -> None:
    """Reading a 100,000-row, 5-column sheet costs ceil(cells / CELLS_PER_CALL) bulk reads plus one probe."""
    n = 100_000
    rows = [["id", "site", "a", "b", "c"]] + [[i, "N" if i % 3 else "S", i * 0.5, (i % 97) * 1.0, None if i % 10 else 1.0]
                                              for i in range(n)]
    book = xs.new_book("big.xlsx", {"Data": rows})
    table = read_table(None, source=ExcelBook(book), sheet="Data")
    assert len(table.rows) == n
    assert table.columns["a"].numbers[-1] == (n - 1) * 0.5
    calls = xs.recorder(book).calls
    assert calls["Range.value"] == math.ceil((n + 1) / (CELLS_PER_CALL // 5)) == 3
    assert sum(calls.values()) <= 45  # 5 of them ask for hidden rows (one row-height call with none hidden)


def test_merged_header_found_by_halving() -> None:
    """A merged header (B1:C1) is found, with a number of calls that grows with log(size), not with cells."""
    rows = [["Site", "Wait", None, "Note"], ["", "min", "max", ""]] + [["A", float(i), float(i + 1), "x"] for i in range(500)]
    book = xs.new_book("m.xlsx", {"Data": rows})
    xs.add_merge(xs.sheet(book, "Data"), (1, 2, 1, 3))
    merges = ExcelBook(book).merged_ranges("Data")
    assert merges == [(0, 1, 0, 2)]
    assert xs.recorder(book).calls["Range.merge_cells"] <= 2 * math.ceil(math.log2(502 * 4)) + 4


def test_no_merges_cost_one_probe() -> None:
    """A sheet without merged cells is checked with a single merge_cells call."""
    book = xs.new_book("m.xlsx", {"Data": _clinic_rows(200)})
    assert ExcelBook(book).merged_ranges("Data") == []
    assert xs.recorder(book).calls["Range.merge_cells"] == 1


def test_tables_hidden_sheets_and_currency_values() -> None:
    """Tables give header-to-last-data bounds, very hidden sheets count as hidden, Decimal cells read as numbers."""
    book = xs.new_book("t.xlsx", {"Data": [[None], ["Site", "Cost"], ["A", decimal.Decimal("12.50")], ["B", 3.0],
                                           ["Total", 15.5]],
                                  "Hidden": [["x"]], "Secret": [["y"]]})
    xs.add_table(xs.sheet(book, "Data"), "Costs", (2, 1, 5, 2), totals=True)
    xs.hide(xs.sheet(book, "Hidden"))
    xs.hide(xs.sheet(book, "Secret"), very=True)
    source = ExcelBook(book)
    assert source.tables("Data") == [TableRange("Costs", 2, 0, 4, 1)]
    assert source.hidden_sheet_names() == ["Hidden", "Secret"]
    table = read_table(None, source=source, sheet="Data")
    assert list(table.columns["Cost"].numbers) == [12.5, 3.0]


def test_write_refused_by_excel_leaves_the_workbook_as_it_was(monkeypatch) -> None:
    """When Excel refuses to add a sheet (a protected structure), the run ends in one line, code 4, nothing added."""
    book = xs.new_book("p.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.plan(book) == 0
    _roles(book, {"Wait minutes": "outcome", "Site": "compare by"})
    before = xs.sheet_names(book)

    def refuse(self, *args, **kwargs):
        raise Exception("Workbook is protected and cannot be changed.")

    monkeypatch.setattr(xs.Sheets, "add", refuse)
    assert statmargin.excel.run(book) == 4
    assert xs.sheet_names(book) == before
    status = xs.app_state(book)["status_bar"]
    assert status.startswith("statmargin: Excel refused to add statmargin's sheets (Workbook is protected")
    assert "\n" not in status


def test_failure_half_way_removes_the_new_sheets(monkeypatch) -> None:
    """A refusal while the new sheets are filled deletes them again; earlier tool sheets stay as they were."""
    book = xs.new_book("h.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.plan(book) == 0
    roles_before = xs.rows(xs.sheet(book, "statmargin roles"))

    def refuse(self, across=False):
        raise Exception("Cannot change part of a merged cell.")

    monkeypatch.setattr(xs.Range, "merge", refuse)
    assert statmargin.excel.plan(book) == 4
    assert xs.sheet_names(book) == ["Log", "statmargin roles"]
    assert xs.rows(xs.sheet(book, "statmargin roles")) == roles_before
    assert xs.markers(book) == {"statmargin roles": '="roles"'}


def test_unknown_style_is_refused_before_anything_changes() -> None:
    """A model with a style the writer does not know raises WriteError and leaves no sheet behind."""
    book = xs.new_book("s.xlsx", {"Data": [[1]]})
    model = SheetModel(name="results", kind="results")
    model.put(0, 0, "x", style="glitter")
    with pytest.raises(WriteError):
        ExcelBook(book).write_sheets([model])
    assert xs.sheet_names(book) == ["Data"]


def test_user_sheet_with_the_tool_name_is_kept() -> None:
    """A user's own sheet called 'statmargin roles' (unmarked) is kept; the tool's roles sheet gets a numbered name."""
    book = xs.new_book("u.xlsx", {"Log": _clinic_rows(), "statmargin roles": [["my notes"]]})
    assert statmargin.excel.plan(book) == 0
    assert xs.sheet_names(book) == ["Log", "statmargin roles", "statmargin roles (2)"]
    assert xs.rows(xs.sheet(book, "statmargin roles")) == [["my notes"]]
    assert xs.markers(book) == {"statmargin roles (2)": '="roles"'}


def test_copy_of_a_tool_sheet_becomes_the_users() -> None:
    """Of two sheets marked as roles sheets, the one with the tool's name is replaced and the copy loses its marker."""
    book = xs.new_book("c.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.plan(book) == 0
    copy = book.sheets.add(name="my copy", after=xs.sheet(book, "statmargin roles"))
    copy.names.add("statmargin_sheet", '="roles"')
    assert statmargin.excel.plan(book) == 0
    assert xs.markers(book) == {"statmargin roles": '="roles"'}
    assert xs.sheet_names(book) == ["Log", "statmargin roles", "my copy"]


def test_a_replaced_tool_sheet_keeps_its_place_and_visibility(ran_book) -> None:
    """Moved first and hidden by the user, the results and shape-check sheets are rewritten where they were, as they were."""
    results, shapes = xs.sheet(ran_book, "statmargin results"), xs.sheet(ran_book, "statmargin shape checks")
    first = ran_book.sheets.add(name="scratch", before=xs.sheet(ran_book, "Log"))
    moved = ran_book.sheets.add(name="statmargin results moved", before=first)
    moved.names.add("statmargin_sheet", '="results"')
    results.delete()  # the stand-in cannot move a sheet: a marked copy placed first stands for the moved one
    moved.name = "statmargin results"
    shapes.visible = 2  # very hidden
    before = xs.sheet_names(ran_book)
    assert statmargin.excel.run(ran_book) == 0
    assert xs.sheet_names(ran_book) == before
    assert xs.sheet(ran_book, "statmargin shape checks").visible == 2
    assert xs.sheet(ran_book, "statmargin results").visible == -1
    assert xs.rows(xs.sheet(ran_book, "statmargin results"))[0][0] == "statmargin results"


def test_out_file_is_refused() -> None:
    """From inside Excel a separate output file is refused in one line."""
    book = xs.new_book("o.xlsx", {"Data": [[1]]})
    with pytest.raises(OptionError, match="open workbook"):
        ExcelBook(book).check("copy.xlsx")


def test_frozen_panes_are_skipped_where_xlwings_cannot_freeze() -> None:
    """On a desktop engine without freeze support the sheets are written unfrozen, without error."""
    book = xs.new_book("f.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.plan(book) == 0
    assert xs.layout(xs.sheet(book, "statmargin roles"))["frozen"] is None
    frozen_book = xs.new_book("f.xlsx", {"Log": _clinic_rows()}, freeze_supported=True)
    assert statmargin.excel.plan(frozen_book) == 0
    assert xs.layout(xs.sheet(frozen_book, "statmargin roles"))["frozen"] is not None


def test_run_without_roles_sheet_says_press_plan() -> None:
    """Run before Plan gives exit code 2 and a one-line message in Excel's words, on the status bar."""
    book = xs.new_book("n.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.run(book) == 2
    status = xs.app_state(book)["status_bar"]
    assert status == ("statmargin: This workbook has no roles sheet yet; press Plan first, pick a role for at least "
                      "one column on the roles sheet, then press Run.")
    assert xs.app_state(book)["alerts"] == []  # a book passed in by a script gets no message box


def test_buttons_act_on_the_calling_workbook(monkeypatch) -> None:
    """main('plan') and main('run') work on Book.caller(); a problem shows one message box and no exit."""
    book = xs.new_book("caller.xlsx", {"Log": _clinic_rows()})
    monkeypatch.setattr(entry, "DESKTOP_PLATFORMS", (sys.platform,))  # as if on Windows or macOS
    monkeypatch.setattr(xlwings.Book, "caller", classmethod(lambda cls: book))
    statmargin.excel.main("plan")
    assert "statmargin roles" in xs.sheet_names(book)
    statmargin.excel.main("run")  # no role chosen yet: told in a box, not by an exit
    alerts = xs.app_state(book)["alerts"]
    assert len(alerts) == 1
    message, title, mode = alerts[0]
    assert title == "statmargin" and mode == "critical"
    assert message.startswith("No column has the role 'outcome'") and "\n" not in message
    _roles(book, {"Wait minutes": "outcome", "Site": "compare by"})
    statmargin.excel.main("run")
    assert xs.app_state(book)["active"] == "statmargin results"


def _python(code: str) -> subprocess.CompletedProcess:
    env = {"PYTHONPATH": str(SRC), "PATH": "/usr/bin:/bin"}
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=120)


def test_without_excel_an_entry_point_gives_one_line_and_code_5() -> None:
    """Without Excel: importing loads no xlwings, and main('run') prints one line (no traceback) and exits with 5."""
    done = _python("import sys, statmargin, statmargin.excel\n"
                   "print('xlwings' in sys.modules, flush=True)\n"
                   "statmargin.excel.main('run')")
    assert done.returncode == 5
    assert done.stdout.strip() == "False"
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in done.stderr
    assert lines[0] == ("statmargin: Desktop Excel runs on Windows and macOS, not on this system (linux); use the "
                        "command line here (statmargin plan / statmargin run) on the saved workbook.")


def test_without_xlwings_import_works_and_the_message_says_how_to_install() -> None:
    """With xlwings missing (on a desktop system), importing statmargin.excel works and plan() returns 5 with an install hint."""
    done = _python("import sys; sys.modules['xlwings'] = None\n"
                   "import statmargin.excel as sm, statmargin.io.excel.entry as entry\n"
                   "entry.DESKTOP_PLATFORMS = (sys.platform,)\n"
                   "print(sm.plan())")
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "5"
    assert "pip install" in done.stderr and len(done.stderr.strip().splitlines()) == 1


def test_a_bug_ends_in_one_line_with_code_70(monkeypatch, capsys) -> None:
    """An unexpected error inside statmargin is reported in one line with exit code 70, never as a traceback."""
    def broken(book):
        raise ZeroDivisionError("division by zero")

    monkeypatch.setattr(entry, "plan_job", broken)
    book = xs.new_book("b.xlsx", {"Log": _clinic_rows()})
    assert statmargin.excel.plan(book) == 70
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith("statmargin: statmargin stopped on an internal problem (ZeroDivisionError: division by zero)")


def test_sheet_names_resolve_like_the_file_back_end() -> None:
    """A sheet asked for in other case is found; an unknown one is refused in one line listing the sheets."""
    book = xs.new_book("r.xlsx", {"Log": _clinic_rows(), "Notes": [["x"]]})
    source = ExcelBook(book)
    assert source.resolve_sheet(" log ") == "Log"
    assert len(read_table(None, source=source, sheet="LOG").rows) == 24
    with pytest.raises(SheetNotFoundError, match=r"Sheet 'Visits' is not in 'r.xlsx'. Its sheets are: 'Log', 'Notes'."):
        source.resolve_sheet("Visits")


@pytest.mark.parametrize(
    ("value", "held"),
    [
        ("=SUM(A1:A3)", "=SUM(A1:A3)"),
        ("+44 20 7946 0000", "+44 20 7946 0000"),
        ("-", "-"),
        ("@home", "@home"),
        ("007", "007"),
        ("2026-03-01", "2026-03-01"),
        ("TRUE", "TRUE"),
        ("12%", "12%"),
        ("a\x07b", "ab"),  # a control character a workbook file cannot hold either
        (3, 3.0),
        (2**60, str(2**60)),  # beyond double precision: every digit kept as text
        (float("nan"), None),
        (float("-inf"), "-inf"),
        (True, True),
        (dt.datetime(2026, 3, 1, 9, 30, tzinfo=dt.timezone.utc), dt.datetime(2026, 3, 1, 9, 30)),
        (dt.date(2026, 3, 1), dt.datetime(2026, 3, 1)),
    ],
)
def test_values_are_held_by_excel_as_written(value, held) -> None:
    """Each model value, sent as the bridge sends it, is what Excel holds afterwards (typing rules applied)."""
    book = xs.new_book("v.xlsx", {"Data": [[None]]})
    sheet = next(iter(book.sheets))
    sheet.range((1, 1)).value = [[excel_value(value)]]
    assert xs.values(xs.sheet(book, "Data")).get((0, 0)) == held
    assert xs.formulas(xs.sheet(book, "Data")) == {}


@given(st.sets(st.tuples(st.integers(0, 12), st.integers(0, 6)), min_size=1, max_size=60))
def test_rectangles_cover_each_cell_once(cells) -> None:
    """The rectangles of any set of cells are disjoint and cover exactly those cells."""
    covered: list[tuple[int, int]] = []
    for r1, c1, r2, c2 in rectangles(cells):
        covered.extend((r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1))
    assert sorted(covered) == sorted(cells)


def test_renamed_sheet_is_mentioned_on_the_status_bar() -> None:
    """When a user sheet holds the tool's name, the status bar says which name the tool used instead."""
    book = xs.new_book("u.xlsx", {"Log": _clinic_rows(), "statmargin roles": [["my notes"]]})
    assert statmargin.excel.plan(book) == 0
    assert xs.app_state(book)["status_bar"].endswith(
        "A sheet of yours is already called 'statmargin roles', so statmargin's roles sheet is called "
        "'statmargin roles (2)'.")


def _as_excel_gives(rows: list[list]) -> list[list]:
    """Dates and times as Excel hands them to xlwings: every date value is a datetime (COM's date type)."""
    def one(value):
        if isinstance(value, dt.time):
            return dt.datetime.combine(dt.date(1899, 12, 30), value)
        if isinstance(value, dt.date) and not isinstance(value, dt.datetime):
            return dt.datetime(value.year, value.month, value.day)
        return value

    return [[one(v) for v in row] for row in rows]


@pytest.mark.parametrize("builder", ["newcomer", "rich", "clinic"])
def test_bridge_reads_what_the_file_back_end_reads(tmp_path, builder) -> None:
    """Opened in Excel (the stand-in), each test workbook shows the file back end's sheets, tables, merges and cells.

    The differences are by design: an error cell arrives from Excel as its code
    (``#N/A``) in the row instead of as a blank plus a cell issue, a formula
    without a saved value would be calculated by Excel (here it reads as blank),
    and dates come as datetimes (both are values the reader takes alike).
    """
    from statmargin.io.file.source import FileSource
    from statmargin.io.protocol import ERROR_ISSUE, WorkbookSource
    from strict_backend import normal_rows, strict
    from test_backends import write_clinic
    from workbook_edit import make_newcomer_workbook
    from workbook_fixtures import make_rich_workbook

    make = {"newcomer": make_newcomer_workbook, "rich": make_rich_workbook, "clinic": write_clinic}[builder]
    path = make(tmp_path / f"{builder}.xlsx")
    bridge = strict(ExcelBook(xs.load(path)), WorkbookSource)
    with FileSource(path) as source:
        assert bridge.display_name == source.display_name
        assert bridge.sheet_names() == source.sheet_names()
        assert bridge.hidden_sheet_names() == source.hidden_sheet_names()
        assert bridge.tool_sheets() == source.tool_sheets()
        for name in source.sheet_names():
            assert bridge.resolve_sheet(name.upper()) == source.resolve_sheet(name.upper())
            assert bridge.tables(name) == source.tables(name), name
            assert sorted(bridge.merged_ranges(name)) == sorted(source.merged_ranges(name)), name
            expected = [list(row) for row in source.iter_rows(name)]
            for (row, col), (kind, text) in source.cell_issues(name).items():
                if kind == ERROR_ISSUE:
                    expected[row - 1][col] = text
            assert normal_rows(bridge.iter_rows(name)) == normal_rows(_as_excel_gives(expected)), name
            assert bridge.iter_rows_at(name)[0] == source.iter_rows_at(name)[0], name
        with pytest.raises(SheetNotFoundError) as from_bridge:
            bridge.resolve_sheet("no such sheet")
        with pytest.raises(SheetNotFoundError) as from_file:
            source.resolve_sheet("no such sheet")
        assert str(from_bridge.value) == str(from_file.value)
