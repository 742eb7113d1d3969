"""Tests for the workbook file source (statmargin.io.file.source).

Workbooks are built with xlsxwriter in tmp_path from invented values; a few are
then edited inside the zip to produce what xlsxwriter cannot write directly
(a hidden defined name). Expected structure follows the Office Open XML
SpreadsheetML part layout (ECMA-376 Part 1, 5th edition, 2016: §18.5 tables,
§18.2.5 definedName, §18.3.1.4 c (cell), cited from memory).
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import pytest
import xlsxwriter

from statmargin.errors import SheetNotFoundError, WorkbookError
from statmargin.io.file import source as xlsxsource
from statmargin.io.file.source import ERROR_ISSUE, NO_VALUE_ISSUE, FileSource, parse_ref
from statmargin.io.protocol import TableRange


def rewrite_part(path: Path, part: str, edit) -> None:
    """Replace one part of a zip package with ``edit(old_text)``."""
    with zipfile.ZipFile(path) as archive:
        items = [(info, archive.read(info.filename)) for info in archive.infolist()]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for info, data in items:
            if info.filename == part:
                data = edit(data.decode("utf-8")).encode("utf-8")
            archive.writestr(info, data)


@pytest.fixture
def structured(tmp_path: Path) -> Path:
    """A workbook with a chart sheet between two worksheets, tables, merges, errors and markers."""
    path = tmp_path / "structured.xlsx"
    book = xlsxwriter.Workbook(str(path))
    data = book.add_worksheet("Data")
    data.write_string("B2", "Site")
    data.write_string("C2", "Wait")
    data.write_string("B3", "North")
    data.write_number("C3", 12.0)
    data.write_formula("C4", "=NA()", None, "#N/A")
    data.write_formula("C5", "=C3*2", None, "")
    data.merge_range("E2:G2", "Dose", None)
    data.add_table(
        "I2:J5",
        {
            "name": "Clinics",
            "total_row": True,
            "columns": [
                {"header": "Site", "total_string": "Total"},
                {"header": "n", "total_function": "sum"},
            ],
        },
    )
    data.add_table("L2:M4", {"name": "NoHeader", "header_row": False})
    chart = book.add_chart({"type": "line"})
    chart.add_series({"values": "=Data!$C$3:$C$3"})
    chart_sheet = book.add_chartsheet("Chart")
    chart_sheet.set_chart(chart)
    results = book.add_worksheet("Old results")
    results.write("A1", "p")
    results.hide()
    book.define_name("'Old results'!statmargin_sheet", '="results"')
    book.define_name("'Data'!other_name", '="results"')
    book.close()
    return path


class TestStructure:
    def test_sheet_names_leave_out_chart_sheets(self, structured):
        """Worksheets are listed in workbook order; chart sheets are not worksheets."""
        with FileSource(structured) as source:
            assert source.sheet_names() == ["Data", "Old results"]
            assert source.hidden_sheet_names() == ["Old results"]

    def test_iter_rows_start_at_a1(self, structured):
        """Rows start at row 1 and column A even when the data starts at B2."""
        with FileSource(structured) as source:
            rows = list(source.iter_rows("Data"))
            assert rows[0][:3] == ["", "", ""]
            assert rows[1][1:3] == ["Site", "Wait"]
            assert rows[2][1:3] == ["North", 12.0]
            first_col, fast = source.iter_rows_at("Data")
            assert first_col == 1
            assert next(iter(fast))[0] == ""

    def test_tables_bounds_without_totals_and_headerless_left_out(self, structured):
        """Table bounds include the header row, exclude the totals row; headerless tables are skipped."""
        with FileSource(structured) as source:
            assert source.tables("Data") == [
                TableRange(name="Clinics", first_row=2, first_col=8, last_row=4, last_col=9)
            ]
            assert source.tables("Old results") == []

    def test_merged_ranges(self, structured):
        """Merged ranges come back 0-based and inclusive."""
        with FileSource(structured) as source:
            assert source.merged_ranges("Data") == [(1, 4, 1, 6)]

    def test_tool_sheets_map_local_sheet_id_through_chart_sheets(self, structured):
        """The marker's localSheetId counts the chart sheet, so it still names 'Old results'."""
        with FileSource(structured) as source:
            assert source.tool_sheets() == {"Old results": "results"}

    def test_hidden_marker_written_by_another_program(self, structured):
        """A hidden marker with an escaped quote inside its value is read too."""

        def hide(xml: str) -> str:
            return xml.replace(
                '<definedName name="statmargin_sheet" localSheetId="2">"results"</definedName>',
                '<definedName name="statmargin_sheet" localSheetId="2" hidden="1">"data ""notes"""</definedName>',
            )

        rewrite_part(structured, "xl/workbook.xml", hide)
        with FileSource(structured) as source:
            assert source.tool_sheets() == {"Old results": 'data "notes"'}


class TestCellIssues:
    def test_errors_and_uncalculated_formulas(self, structured):
        """Cached error results and formulas without a saved value are found with their text."""
        with FileSource(structured) as source:
            issues = source.cell_issues("Data")
        assert issues == {(4, 2): (ERROR_ISSUE, "#N/A"), (5, 2): (NO_VALUE_ISSUE, "=C3*2")}

    def test_row_and_column_filters(self, structured):
        """Only cells within the asked rows and columns are reported."""
        with FileSource(structured) as source:
            assert source.cell_issues("Data", first_row=5) == {(5, 2): (NO_VALUE_ISSUE, "=C3*2")}
            assert source.cell_issues("Data", last_row=4) == {(4, 2): (ERROR_ISSUE, "#N/A")}
            assert source.cell_issues("Data", columns=[1]) == {}

    def test_small_chunks_give_the_same_cells(self, structured, monkeypatch):
        """Reading the sheet XML in tiny chunks finds exactly the same cells."""
        monkeypatch.setattr(xlsxsource, "_SCAN_CHUNK", 37)
        with FileSource(structured) as source:
            assert source.cell_issues("Data") == {
                (4, 2): (ERROR_ISSUE, "#N/A"),
                (5, 2): (NO_VALUE_ISSUE, "=C3*2"),
            }

    def test_scan_block_forms(self):
        """Prefixed elements, shared formulas and empty text results are told apart."""
        block = (
            b'<x:row r="2"><x:c r="A2" t="e"><x:f>1/0</x:f><x:v>#DIV/0!</x:v></x:c>'
            b'<x:c r="B2"><x:f t="shared" si="0"/></x:c>'
            b'<x:c r="C2" t="str"><x:f>""</x:f><x:v></x:v></x:c>'
            b'<x:c r="D2"><x:f>A2&amp;"x"</x:f><x:v/></x:c>'
            b'<x:c r="E2"><x:f>1+1</x:f><x:v>2</x:v></x:c>'
            b'<x:c r="F2" s="3"/></x:row>'
        )
        found: dict = {}
        xlsxsource._scan_block(block, found, 1, None, None)
        assert found == {
            (2, 0): (ERROR_ISSUE, "#DIV/0!"),
            (2, 1): (NO_VALUE_ISSUE, "=(shared formula)"),
            (2, 3): (NO_VALUE_ISSUE, '=A2&"x"'),
        }

    def test_parse_ref(self):
        """A1 ranges map to 1-based rows and 0-based columns; one cell is a one-cell range."""
        assert parse_ref("B3:AA10") == (3, 1, 10, 26)
        assert parse_ref("$C$7") == (7, 2, 7, 2)
        with pytest.raises(ValueError):
            parse_ref("nonsense")


class TestOpening:
    def test_missing_file(self, tmp_path):
        """A missing file is a one-line WorkbookError."""
        with pytest.raises(
            WorkbookError, match=r"^File 'gone\.xlsx' was not found\. Check the path\.$"
        ):
            FileSource(tmp_path / "gone.xlsx")

    def test_folder_is_not_a_workbook(self, tmp_path):
        """A folder path is refused with a one-line WorkbookError."""
        with pytest.raises(WorkbookError, match="is a folder, not a workbook file"):
            FileSource(tmp_path)

    def test_text_file_named_xlsx(self, tmp_path):
        """A text file with a workbook extension is refused without a traceback."""
        path = tmp_path / "notes.xlsx"
        path.write_text("site,wait\nNorth,12\n")
        with pytest.raises(
            WorkbookError, match=r"^File 'notes\.xlsx' is plain text \(for example CSV\), not a workbook"
        ) as info:
            FileSource(path)
        assert "\n" not in str(info.value)

    def test_damaged_package(self, structured):
        """A package whose sheet part is missing is a one-line WorkbookError, not a traceback."""
        with zipfile.ZipFile(structured) as archive:
            items = [
                (i, archive.read(i.filename))
                for i in archive.infolist()
                if i.filename != "xl/worksheets/sheet1.xml"
            ]
        with zipfile.ZipFile(structured, "w") as archive:
            for info, data in items:
                archive.writestr(info, data)
        with pytest.raises(WorkbookError) as info:
            source = FileSource(structured)
            list(source.iter_rows("Data"))
        assert "\n" not in str(info.value)

    def test_sheet_not_found_and_case(self, structured):
        """An unknown sheet lists the sheets; a unique case-insensitive match is accepted."""
        with FileSource(structured) as source:
            assert source.resolve_sheet("data") == "Data"
            with pytest.raises(
                SheetNotFoundError,
                match=r"^Sheet 'Visits' is not in 'structured\.xlsx'\. Its sheets are: 'Data', 'Old results'\.$",
            ):
                source.resolve_sheet("Visits")
