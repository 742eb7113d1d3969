"""Tests for reading data sheets into typed columns (statmargin.read).

Every workbook here is built with xlsxwriter in tmp_path from invented data (an
invented outreach clinic's visit log); no real programme or person is described.
Expected values are what a person sees in the cells; Excel serial day numbers
are checked against Excel's own DATE() results as noted beside each check.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import math
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter

from statmargin.errors import (
    ColumnNotFoundError,
    NotEnoughDataError,
    OptionError,
    SheetNotFoundError,
    WorkbookError,
)
from statmargin.io.file.source import FileSource
from statmargin.io.memory import MemoryWorkbook
from statmargin.read import reader as read
from statmargin.read.reader import (
    first_data_sheet,
    parse_text_number,
    read_header,
    read_table,
    sample_values,
)
from statmargin.read.table import NoteKind


def build(path: Path, cells: dict[str, object], *, sheet: str = "Visits", extra=None) -> Path:
    """Write {A1 address: value} to one sheet; ``extra(book, sheet)`` may add more."""
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet(sheet)
    for address, value in cells.items():
        if value is None:
            continue
        if isinstance(value, str):
            ws.write_string(address, value)  # keep text as text, even "=x" or "1,250"
        else:
            ws.write(address, value)
    if extra is not None:
        extra(book, ws)
    book.close()
    return path


def grid(rows: list[list[object]], top: int = 1, left: str = "A") -> dict[str, object]:
    """Cells of a block of rows whose top-left cell is ``left``+``top``."""
    start = ord(left) - 65
    out: dict[str, object] = {}
    for i, row in enumerate(rows):
        for j, value in enumerate(row):
            out[f"{chr(65 + start + j)}{top + i}"] = value
    return out


def notes_of(table, kind: NoteKind) -> list:
    """The table's notes of one kind."""
    return [n for n in table.notes if n.kind == kind]


def digest(path: Path) -> str:
    """SHA-256 of a file's bytes."""
    return hashlib.sha256(path.read_bytes()).hexdigest()


# ---------------------------------------------------------------------------
# Layout: header row, columns, rows
# ---------------------------------------------------------------------------
class TestLayout:
    def test_basic_columns_letters_and_rows(self, tmp_path):
        """Headers in row 1 give columns in sheet order with their letters and row numbers."""
        path = build(
            tmp_path / "a.xlsx",
            grid([["Site", "Wait", "Score"], ["North", 12.0, 3.5], ["South", 15.0, 4.0]]),
        )
        table = read_table(path)
        assert list(table.columns) == ["Site", "Wait", "Score"]
        assert [c.letter for c in table.columns.values()] == ["A", "B", "C"]
        assert table.header_row == 1
        assert table.rows.tolist() == [2, 3]
        assert table.n_rows_read == 2
        np.testing.assert_array_equal(table.column("Wait").numbers, [12.0, 15.0])
        assert table.column("Site").labels.tolist() == ["North", "South"]
        assert np.isnan(table.column("Site").numbers).all()
        assert table.column("Wait").labels.tolist() == [None, None]
        assert table.notes == []

    def test_header_not_in_row_one(self, tmp_path):
        """Data starting at C5 is found: header row 5, columns C and D, data from row 6."""
        path = build(
            tmp_path / "a.xlsx",
            grid([["Site", "Wait"], ["North", 7.0], ["East", 9.0]], top=5, left="C"),
        )
        table = read_table(path)
        assert table.header_row == 5
        assert [(c.name, c.letter) for c in table.columns.values()] == [
            ("Site", "C"),
            ("Wait", "D"),
        ]
        assert table.rows.tolist() == [6, 7]
        np.testing.assert_array_equal(table.column("Wait").numbers, [7.0, 9.0])

    def test_title_row_above_headers_is_skipped_and_noted(self, tmp_path):
        """A lone title above a wider header row is not taken as the header, and a note says so."""
        cells = {"A1": "Outreach visits (invented)"} | grid(
            [["Site", "Wait", "Score"], ["North", 1.0, 2.0]], top=3
        )
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert table.header_row == 3
        assert list(table.columns) == ["Site", "Wait", "Score"]
        (note,) = notes_of(table, NoteKind.HEADER)
        assert note.cell == "A1"
        assert note.value == "Outreach visits (invented)"
        assert "headers read from row 3" in note.action

    def test_sparse_header_row_is_not_mistaken_for_a_title(self, tmp_path):
        """A header row with only some headers filled stays the header above fuller data rows."""
        cells = grid(
            [["Site", None, None, "Wait"], ["North", 1.0, 2.0, 3.0], ["South", 4.0, 5.0, 6.0]]
        )
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert table.header_row == 1
        assert list(table.columns) == ["Site", "Column B", "Column C", "Wait"]

    def test_single_column_data_uses_first_row(self, tmp_path):
        """With one column of data, the first non-empty row is the header, not a title."""
        cells = grid([["Wait"], [1.0], [2.0]], top=2)
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert table.header_row == 2
        np.testing.assert_array_equal(table.column("Wait").numbers, [1.0, 2.0])

    def test_explicit_header_row(self, tmp_path):
        """header_row picks the header even when rows above hold values."""
        cells = grid([["note", "x"], ["Site", "Wait"], ["North", 3.0]])
        table = read_table(build(tmp_path / "a.xlsx", cells), header_row=2)
        assert list(table.columns) == ["Site", "Wait"]
        assert table.rows.tolist() == [3]

    def test_blank_rows_at_end_are_not_data_and_middle_blank_rows_are_kept(self, tmp_path):
        """Trailing blank rows are dropped; a blank row in between stays as an all-blank row."""
        cells = grid([["Site", "Wait"], ["North", 1.0], [None, None], ["South", 2.0]])

        def formatted_blanks(book, ws):
            fmt = book.add_format({"bold": True})
            for r in range(5, 12):  # formatted but empty cells below the data
                ws.write_blank(r, 0, None, fmt)

        table = read_table(build(tmp_path / "a.xlsx", cells, extra=formatted_blanks))
        assert table.rows.tolist() == [2, 3, 4]
        assert table.n_rows_read == 3
        wait = table.column("Wait")
        np.testing.assert_array_equal(wait.numbers, [1.0, np.nan, 2.0])
        assert wait.n_blank == 1
        assert table.column("Site").labels.tolist() == ["North", None, "South"]
        assert notes_of(table, NoteKind.BLANK) == []

    def test_merged_header_cells_named_with_a_count(self, tmp_path):
        """A header merged over G3:H3 names G 'Dose' and H 'Dose (2)', with a header note on H3."""

        def merged(book, ws):
            ws.merge_range("B1:C1", "Dose", None)

        cells = {"A1": "Site", "A2": "North", "B2": 1.0, "C2": 2.0}
        table = read_table(build(tmp_path / "a.xlsx", cells, extra=merged))
        assert list(table.columns) == ["Site", "Dose", "Dose (2)"]
        assert table.column("Dose (2)").header == "Dose"
        np.testing.assert_array_equal(table.column("Dose (2)").numbers, [2.0])
        (note,) = notes_of(table, NoteKind.HEADER)
        assert (note.cell, note.column, note.kind) == ("C1", "Dose (2)", NoteKind.HEADER)
        assert "merged" in note.action

    def test_duplicate_and_blank_headers_made_unique(self, tmp_path):
        """Duplicate headers get ' (2)' and a blank header is named by its column letter; each is noted."""
        cells = grid([["Score", " score ", None, "Wait"], [1.0, 2.0, 3.0, 4.0]])
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert list(table.columns) == ["Score", "score (2)", "Column C", "Wait"]
        header_notes = {n.cell: n for n in notes_of(table, NoteKind.HEADER)}
        assert set(header_notes) == {"B1", "C1"}
        assert header_notes["B1"].column == "score (2)"
        assert header_notes["C1"].action == "blank header; named 'Column C'"
        np.testing.assert_array_equal(table.column("Column C").numbers, [3.0])

    def test_header_whitespace_and_units(self, tmp_path):
        """Header spaces are tidied and units in round or square brackets go to Column.units."""
        cells = grid(
            [["  Wait (minutes) ", "Weight [kg]", "Visit (2)", "Line\nbreak"], [1.0, 2.0, 3.0, 4.0]]
        )
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert list(table.columns) == ["Wait (minutes)", "Weight [kg]", "Visit (2)", "Line break"]
        assert table.column("Wait (minutes)").units == "minutes"
        assert table.column("Weight [kg]").units == "kg"
        assert table.column("Visit (2)").units is None  # a count in brackets is not a unit

    def test_values_in_columns_without_header_are_noted_not_read(self, tmp_path):
        """A value right of the last header is not read, and one note per such column says so."""
        cells = grid([["Site", "Wait"], ["North", 1.0], ["South", 2.0]]) | {"E3": "checked"}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert list(table.columns) == ["Site", "Wait"]
        (note,) = [n for n in table.notes if n.cell == "E3"]
        assert note.kind == NoteKind.HEADER
        assert note.value == "checked"
        assert note.action.startswith("1 value in a column with no header was not read")

    def test_columns_option_keeps_only_those_in_sheet_order(self, tmp_path):
        """columns= reads only the named columns, in sheet order, matching names without case."""
        cells = grid([["Site", "Wait", "Score"], ["North", 1.0, 9.0]])
        table = read_table(build(tmp_path / "a.xlsx", cells), columns=["score", "Site"])
        assert list(table.columns) == ["Site", "Score"]
        assert table.column("Score").letter == "C"
        np.testing.assert_array_equal(table.column("Score").numbers, [9.0])

    def test_case_insensitive_sheet_name(self, tmp_path):
        """A sheet named in another case is found when the match is unique."""
        path = build(tmp_path / "a.xlsx", grid([["Wait"], [1.0]]), sheet="Visits")
        assert read_table(path, sheet="visits").sheet == "Visits"


# ---------------------------------------------------------------------------
# Excel tables
# ---------------------------------------------------------------------------
class TestExcelTables:
    @staticmethod
    def _book(path: Path, tables: list[tuple[str, str]]) -> Path:
        """A sheet with values outside and inside one or more tables."""
        book = xlsxwriter.Workbook(str(path))
        ws = book.add_worksheet("Visits")
        ws.write_string("A1", "Monthly log (invented)")
        ws.write_string("A2", "stray note")
        for ref, name in tables:
            first = ref.split(":")[0]
            row = int(first[1:]) - 1
            col = ord(first[0]) - 65
            ws.add_table(
                ref,
                {
                    "name": name,
                    "columns": [{"header": "Site"}, {"header": "Wait"}],
                    "data": [[f"{name}-a", 10.0 + col], [f"{name}-b", 20.0 + col]],
                },
            )
            ws.write_number(row + 4, col + 1, 999.0)  # below the table: not data
        book.close()
        return path

    def test_single_table_range_is_read_and_outside_ignored(self, tmp_path):
        """With one table, its header row and rows are read; cells outside it are not."""
        path = self._book(tmp_path / "t.xlsx", [("C4:D6", "Clinics")])
        table = read_table(path)
        assert table.header_row == 4
        assert [(c.name, c.letter) for c in table.columns.values()] == [
            ("Site", "C"),
            ("Wait", "D"),
        ]
        assert table.rows.tolist() == [5, 6]
        np.testing.assert_array_equal(table.column("Wait").numbers, [12.0, 22.0])
        assert table.column("Site").labels.tolist() == ["Clinics-a", "Clinics-b"]
        assert table.notes == []

    def test_several_tables_read_first_and_say_so(self, tmp_path):
        """With two tables the top one is read and an OTHER note names the one left out."""
        path = self._book(tmp_path / "t.xlsx", [("F10:G12", "Later"), ("C4:D6", "Earlier")])
        table = read_table(path)
        assert table.column("Site").labels.tolist() == ["Earlier-a", "Earlier-b"]
        (note,) = notes_of(table, NoteKind.OTHER)
        assert note.cell == "C4"
        assert "'Later'" in note.action

    def test_table_option_chooses_and_unknown_table_is_an_option_error(self, tmp_path):
        """table= reads the named table; a wrong name is a one-line OptionError listing the tables."""
        path = self._book(tmp_path / "t.xlsx", [("F10:G12", "Later"), ("C4:D6", "Earlier")])
        table = read_table(path, table="later")
        assert table.rows.tolist() == [11, 12]
        np.testing.assert_array_equal(table.column("Wait").numbers, [15.0, 25.0])
        with pytest.raises(
            OptionError,
            match=r"Table 'Nope' is not on sheet 'Visits'\. Tables there: 'Later', 'Earlier'\.",
        ):
            read_table(path, table="Nope")


# ---------------------------------------------------------------------------
# Cell rules
# ---------------------------------------------------------------------------
class TestCellRules:
    def test_numbers_stored_as_text_are_converted_and_noted(self, tmp_path):
        """'1,250', ' 42 ', '1 250', '12.5%' and '−3' become numbers with a TEXT_NUMBER note each."""
        values = ["1,250", " 42 ", "1 250", "12.5%", "\u22123", "1e3"]
        cells = {"A1": "Count"} | {f"A{i + 2}": v for i, v in enumerate(values)}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        count = table.column("Count")
        np.testing.assert_array_equal(count.numbers, [1250.0, 42.0, 1250.0, 12.5, -3.0, 1000.0])
        assert count.labels.tolist() == [None] * 6
        notes = notes_of(table, NoteKind.TEXT_NUMBER)
        assert [n.cell for n in notes] == ["A2", "A3", "A4", "A5", "A6", "A7"]
        assert notes[0].action == "converted to 1250"
        assert notes[0].value == "1,250"
        assert notes[3].action == "converted to 12.5 (the % sign dropped; value kept in percent)"

    def test_ambiguous_number_texts_stay_labels(self, tmp_path):
        """Decimal commas, bracketed negatives, currency and 'inf' are kept as text, not guessed."""
        values = ["12,5", "(3)", "$12", "inf", "1_000", "12 kg"]
        cells = {"A1": "Value"} | {f"A{i + 2}": v for i, v in enumerate(values)}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        column = table.column("Value")
        assert column.labels.tolist() == values
        assert np.isnan(column.numbers).all()
        assert notes_of(table, NoteKind.TEXT_NUMBER) == []

    def test_dates_times_and_booleans(self, tmp_path):
        """Dates become Excel day serials counted in n_dates; booleans become TRUE/FALSE labels."""

        def typed(book, ws):
            date_format = book.add_format({"num_format": "yyyy-mm-dd"})
            time_format = book.add_format({"num_format": "hh:mm"})
            ws.write_datetime("A2", dt.datetime(2024, 3, 1), date_format)
            ws.write_datetime("A3", dt.datetime(2024, 3, 1, 12, 0), date_format)
            ws.write_datetime("A4", dt.time(10, 30), time_format)
            ws.write_boolean("B2", True)
            ws.write_boolean("B3", False)

        table = read_table(build(tmp_path / "a.xlsx", {"A1": "When", "B1": "Done"}, extra=typed))
        when = table.column("When")
        # Excel: =DATE(2024,3,1) is 45352 (1900 date system; value recalled from Excel, from memory,
        # and equal to 45292 for 2024-01-01 + 31 + 29 days); 12:00 is half a day; 10:30 is 10.5/24.
        np.testing.assert_allclose(when.numbers, [45352.0, 45352.5, 10.5 / 24], rtol=0, atol=1e-9)
        assert when.n_dates == 3
        assert table.column("Done").labels.tolist() == ["TRUE", "FALSE", None]
        assert table.notes == []

    def test_error_values_are_skipped_and_noted(self, tmp_path):
        """Cached error results and error texts are ERROR_VALUE notes counted as unreadable."""

        def errors(book, ws):
            ws.write_formula("A2", "=NA()", None, "#N/A")
            ws.write_formula("A3", "=1/0", None, "#DIV/0!")
            ws.write_number("A4", 5.0)
            ws.write_string("A5", "#VALUE!")

        table = read_table(build(tmp_path / "a.xlsx", {"A1": "Rate"}, extra=errors))
        rate = table.column("Rate")
        np.testing.assert_array_equal(rate.numbers, [np.nan, np.nan, 5.0, np.nan])
        assert rate.labels.tolist() == [None] * 4
        assert rate.n_unreadable == 3
        assert rate.n_blank == 0
        notes = notes_of(table, NoteKind.ERROR_VALUE)
        assert [(n.cell, n.value) for n in notes] == [
            ("A2", "#N/A"),
            ("A3", "#DIV/0!"),
            ("A5", "#VALUE!"),
        ]
        assert all(n.action == "skipped: an error value" for n in notes)

    def test_missing_markers(self, tmp_path):
        """NA, n/a, '-', '.' and 'missing' are MISSING_MARKER notes counted with the blanks."""
        values = ["NA", "n/a", "-", ".", "Missing", None, 4.0]
        cells = {"A1": "Wait"} | {f"A{i + 2}": v for i, v in enumerate(values)}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        wait = table.column("Wait")
        assert wait.n_blank == 6
        assert wait.n_unreadable == 0
        notes = notes_of(table, NoteKind.MISSING_MARKER)
        assert [(n.cell, n.value) for n in notes] == [
            ("A2", "NA"),
            ("A3", "n/a"),
            ("A4", "-"),
            ("A5", "."),
            ("A6", "Missing"),
        ]
        assert wait.labels.tolist() == [None] * 7

    def test_suppressed_small_counts(self, tmp_path):
        """'<5', '< 5', '<=3' and '≤3' are SUPPRESSED notes; '<5 years' is an ordinary label."""
        values = ["<5", "< 5", "<=3", "\u22643", "<5 years"]
        cells = {"A1": "Cases"} | {f"A{i + 2}": v for i, v in enumerate(values)}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        cases = table.column("Cases")
        notes = notes_of(table, NoteKind.SUPPRESSED)
        assert [n.cell for n in notes] == ["A2", "A3", "A4", "A5"]
        assert notes[0].action == "not used: a suppressed small count"
        assert cases.n_unreadable == 4
        assert cases.labels.tolist() == [None, None, None, None, "<5 years"]

    def test_formula_without_cached_value(self, tmp_path):
        """A formula saved without a value is a NO_CACHED_VALUE note asking for a recalculation."""

        def formulas(book, ws):
            ws.write_number("A2", 3.0)
            ws.write_formula("A3", "=A2*2", None, "")

        table = read_table(build(tmp_path / "a.xlsx", {"A1": "Dose"}, extra=formulas))
        dose = table.column("Dose")
        np.testing.assert_array_equal(dose.numbers, [3.0, np.nan])
        assert dose.n_unreadable == 1
        assert dose.n_blank == 0
        (note,) = notes_of(table, NoteKind.NO_CACHED_VALUE)
        assert (note.cell, note.value) == ("A3", "=A2*2")
        assert "recalculated and saved by a spreadsheet program" in note.action

    def test_only_uncalculated_formulas_is_a_workbook_error(self, tmp_path):
        """When every value read is an uncalculated formula, reading stops with a one-line error."""

        def formulas(book, ws):
            ws.write_formula("A2", "=1+1", None, "")
            ws.write_formula("A3", "=2+2", None, "")

        path = build(tmp_path / "a.xlsx", {"A1": "Dose"}, extra=formulas)
        with pytest.raises(
            WorkbookError, match="recalculated and saved by a spreadsheet program first"
        ):
            read_table(path)

    def test_notes_are_capped_per_column_and_kind(self, tmp_path, monkeypatch):
        """Past the cap, notes of one kind in one column are summed up in a single note."""
        monkeypatch.setattr(read, "NOTE_CAP", 3)
        cells = {"A1": "Wait"} | {f"A{i}": "NA" for i in range(2, 10)} | {"A10": 1.0}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        notes = notes_of(table, NoteKind.MISSING_MARKER)
        assert [n.cell for n in notes] == ["A2", "A3", "A4", "A5"]
        assert (
            notes[-1].action == "and 5 more like this from this cell down (not listed one by one)"
        )
        assert table.column("Wait").n_blank == 8

    def test_parse_text_number_rules(self):
        """The text-number parser accepts whole numbers only and keeps percents in the unit shown."""
        assert parse_text_number("1,234,567.5") == 1234567.5
        assert parse_text_number("12.5 %") == 12.5
        assert parse_text_number("+.5") == 0.5
        assert parse_text_number("1\u00a0250") == 1250.0
        for text in ("nan", "Infinity", "1,25", "12,50", "1.2.3", "", "1,2345", "--1"):
            assert parse_text_number(text) is None, text


# ---------------------------------------------------------------------------
# Errors: one line, typed, file untouched
# ---------------------------------------------------------------------------
class TestErrors:
    def test_missing_file(self, tmp_path):
        """A path that does not exist is a WorkbookError naming the file."""
        with pytest.raises(
            WorkbookError, match=r"^File 'nope\.xlsx' was not found\. Check the path\.$"
        ):
            read_table(tmp_path / "nope.xlsx")

    def test_garbage_file(self, tmp_path):
        """A file that is not a workbook is a one-line WorkbookError and stays byte-identical."""
        path = tmp_path / "junk.xlsx"
        path.write_bytes(bytes(np.random.default_rng(7).integers(0, 256, 4096, dtype=np.uint8)))
        before = digest(path)
        with pytest.raises(WorkbookError, match=r"^File 'junk\.xlsx' is not a workbook") as info:
            read_table(path)
        assert "\n" not in str(info.value)
        assert digest(path) == before

    def test_encrypted_container(self, tmp_path):
        """An OLE container holding an EncryptedPackage stream is reported as password-protected.

        The fixture is a stand-in: the OLE signature followed by the stream name, which is
        what the check looks for (an encrypted .xlsx is stored this way, per MS-OFFCRYPTO 2.3.4.4,
        from memory).
        """
        path = tmp_path / "locked.xlsx"
        path.write_bytes(
            b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
            + b"\x00" * 504
            + "EncryptedPackage".encode("utf-16-le")
            + b"\x00" * 512
        )
        with pytest.raises(WorkbookError, match="password-protected"):
            read_table(path)

    def test_missing_sheet_lists_sheets(self, tmp_path):
        """A sheet that is not there is a SheetNotFoundError listing the sheets."""
        path = build(tmp_path / "a.xlsx", grid([["Wait"], [1.0]]), sheet="Visits")
        with pytest.raises(
            SheetNotFoundError,
            match=r"^Sheet 'Data' is not in 'a\.xlsx'\. Its sheets are: 'Visits'\.$",
        ):
            read_table(path, sheet="Data")

    def test_empty_sheet(self, tmp_path):
        """A sheet with nothing on it is a NotEnoughDataError."""
        path = build(tmp_path / "a.xlsx", {})
        with pytest.raises(NotEnoughDataError, match=r"^Sheet 'Visits' in 'a\.xlsx' has no data\."):
            read_table(path, sheet="Visits")
        with pytest.raises(NotEnoughDataError, match="No sheet in 'a.xlsx' holds data"):
            read_table(path)

    def test_headers_without_data(self, tmp_path):
        """A header row with nothing below is a NotEnoughDataError naming the header row."""
        path = build(tmp_path / "a.xlsx", {"A1": "Wait", "B1": "Site"})
        with pytest.raises(NotEnoughDataError, match=r"headers in row 1 but no data below them"):
            read_table(path)

    def test_header_row_beyond_data_and_invalid(self, tmp_path):
        """header_row past the last row, below 1, or on a blank row is a one-line OptionError."""
        path = build(tmp_path / "a.xlsx", grid([["Wait"], [1.0], [None], [2.0]]))
        with pytest.raises(
            OptionError, match=r"Header row 9 is below the last row with data \(row 4\)"
        ):
            read_table(path, header_row=9)
        with pytest.raises(OptionError, match="whole number from 1 up"):
            read_table(path, header_row=0)
        with pytest.raises(OptionError, match=r"Row 3 on sheet 'Visits' is blank"):
            read_table(path, header_row=3)

    def test_unknown_column(self, tmp_path):
        """Asking for a column that is not a header is a ColumnNotFoundError with a suggestion."""
        path = build(tmp_path / "a.xlsx", grid([["Wait time", "Site"], [1.0, "North"]]))
        with pytest.raises(
            ColumnNotFoundError,
            match=r"Column 'Wait tim' is not a header on sheet 'Visits'\. Did you mean 'Wait time'\?",
        ):
            read_table(path, columns=["Wait tim"])

    def test_file_unchanged_after_reading(self, tmp_path):
        """Reading leaves the workbook byte-identical."""
        path = build(tmp_path / "a.xlsx", grid([["Wait"], ["NA"], [1.0]]))
        before = digest(path)
        read_table(path)
        read_header(path)
        assert digest(path) == before


# ---------------------------------------------------------------------------
# Header listing, samples, fingerprint, other sources, large sheets
# ---------------------------------------------------------------------------
class TestHelpers:
    def test_read_header_matches_read_table(self, tmp_path):
        """read_header lists the same unique names and letters read_table uses."""
        cells = grid([["Site", "Site", None, "Wait"], ["N", "S", 1.0, 2.0]], left="B")
        path = build(tmp_path / "a.xlsx", cells)
        header = read_header(path)
        assert header == [("Site", "B"), ("Site (2)", "C"), ("Column D", "D"), ("Wait", "E")]
        assert [(c.name, c.letter) for c in read_table(path).columns.values()] == header

    def test_sample_values(self, tmp_path):
        """sample_values gives the first distinct values in row order as text."""
        cells = {"A1": "Wait", "B1": "Site"} | {
            f"A{i}": v
            for i, v in zip(range(2, 9), [3.0, 3.0, 2.5, None, 7.0, 8.0, 9.0], strict=True)
        }
        cells |= {"B2": "North", "B3": "North", "B4": "South"}
        table = read_table(build(tmp_path / "a.xlsx", cells))
        assert sample_values(table.column("Wait"), k=4) == ["3", "2.5", "7", "8"]
        assert sample_values(table.column("Site")) == ["North", "South"]

    def test_sample_values_find_late_values_in_row_order(self, tmp_path):
        """Values first seen far down a long column (past the rows walked one by one) keep their row order."""
        rows = [["Code", "Mixed"]] + [[1.0, 2.0]] * 1500
        rows[1200] = [2.0, "late"]
        rows[1300] = [None, 2.5]
        rows[1400] = [3.0, "2"]  # the label "2" shows as the number 2 does: listed once
        table = read_table(build(tmp_path / "late.xlsx", grid(rows)))
        assert sample_values(table.column("Code")) == ["1", "2", "3"]
        assert sample_values(table.column("Mixed")) == ["2", "late", "2.5"]

    def test_sample_values_show_six_significant_digits(self, tmp_path):
        """A computed score shows as a spreadsheet's General format would, not with 16 digits."""
        cells = {"A1": "Score", "A2": 77.53999546945688, "A3": 0.000123456789, "A4": 1234567.891}
        table = read_table(build(tmp_path / "s.xlsx", cells))
        assert sample_values(table.column("Score")) == ["77.54", "0.000123457", "1234568"]

    def test_fingerprint_follows_the_values(self, tmp_path):
        """Equal data give equal fingerprints; one changed value changes it."""
        first = read_table(build(tmp_path / "a.xlsx", grid([["Wait"], [1.0], [2.0]])))
        same = read_table(build(tmp_path / "b.xlsx", grid([["Wait"], [1.0], [2.0]])))
        changed = read_table(build(tmp_path / "c.xlsx", grid([["Wait"], [1.0], [2.5]])))
        assert len(first.fingerprint) == 32
        assert first.fingerprint == same.fingerprint
        assert first.fingerprint != changed.fingerprint

    def test_first_data_sheet_skips_empty_hidden_and_tool_sheets(self, tmp_path):
        """The first visible sheet with data that carries no tool marker is chosen."""
        path = tmp_path / "a.xlsx"
        book = xlsxwriter.Workbook(str(path))
        book.add_worksheet("Empty")
        hidden = book.add_worksheet("Hidden")
        hidden.write("A1", "x")
        hidden.hide()
        tool = book.add_worksheet("Old results")
        tool.write("A1", "p")
        book.define_name("'Old results'!statmargin_sheet", '="results"')
        data = book.add_worksheet("Visits")
        data.write("A1", "Wait")
        data.write("A2", 1.0)
        book.close()
        assert first_data_sheet(path) == "Visits"
        assert read_table(path).sheet == "Visits"
        with FileSource(path) as source:
            assert first_data_sheet(source) == "Visits"
            assert first_data_sheet(source=source) == "Visits"

    def test_other_source_with_ragged_rows(self):
        """Any WorkbookSource works: ragged rows and None blanks are read like a file's."""

        source = MemoryWorkbook.from_sheets(
            {
                "S": [
                    ["Site", "Wait", "Flag"],
                    ["North", 1],
                    ["South", None, True],
                    [None, 3.5, "NA"],
                    [],
                    [None],
                ]
            }
        )
        table = read_table(None, source=source)
        assert table.rows.tolist() == [2, 3, 4]
        np.testing.assert_array_equal(table.column("Wait").numbers, [1.0, np.nan, 3.5])
        assert table.column("Wait").n_blank == 1
        assert table.column("Flag").labels.tolist() == [None, "TRUE", None]
        assert [n.cell for n in notes_of(table, NoteKind.MISSING_MARKER)] == ["C4"]

    def test_hundred_thousand_rows_read_exactly(self, tmp_path):
        """A 100,000-row sheet (invented, seeded) reads back every value exactly, not timed."""
        rng = np.random.default_rng(20240601)
        n = 100_000
        wait = np.round(rng.gamma(2.0, 12.0, n), 2)
        sites = np.array(["North", "South", "East"])[rng.integers(0, 3, n)]
        blank = rng.random(n) < 0.01
        path = tmp_path / "big.xlsx"
        book = xlsxwriter.Workbook(str(path), {"constant_memory": True})
        ws = book.add_worksheet("Visits")
        ws.write_row(0, 0, ["Site", "Wait"])
        for i in range(n):
            ws.write_string(i + 1, 0, sites[i])
            if not blank[i]:
                ws.write_number(i + 1, 1, float(wait[i]))
        book.close()
        table = read_table(path)
        assert table.n_rows_read == n
        assert table.rows[0] == 2 and table.rows[-1] == n + 1
        expected = np.where(blank, np.nan, wait)
        np.testing.assert_array_equal(table.column("Wait").numbers, expected)
        assert table.column("Wait").n_blank == int(blank.sum())
        assert table.column("Site").labels.tolist() == sites.tolist()
        assert table.notes == []
        assert math.isnan(table.column("Site").numbers[0])
