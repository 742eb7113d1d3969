"""Tests for the package edits, sheet XML, styles and chart parts of the xlsx writer.

References used in the checks: ECMA-376 5th edition Part 1 (SpreadsheetML and
DrawingML element names and order), Microsoft's "Excel specifications and
limits" (16,384 columns, last column XFD; 31-character sheet names), and
openpyxl 3.1 as an independent reader of the written parts.
"""

from __future__ import annotations

import datetime as dt
import io
import math
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import openpyxl
import pytest

from statmargin.errors import WriteError
from statmargin.io import placement
from statmargin.io.file import charts, package, sheetxml, styles
from statmargin.io.file.zipio import read_zip, write_zip
from statmargin.sheets.model import STYLES, Chart, ChartSeries, SheetModel, Validation
from workbook_fixtures import make_rich_workbook

MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
C = "{http://schemas.openxmlformats.org/drawingml/2006/chart}"


def _render(model: SheetModel, kinds: dict[str, str] | None = None) -> ET.Element:
    style_map = {key: n for n, key in enumerate(STYLES)}
    return ET.fromstring(sheetxml.render_sheet(model, style_map, kinds or {}))


def _cell(root: ET.Element, ref: str) -> ET.Element:
    found = root.find(f".//{MAIN}c[@r='{ref}']")
    assert found is not None, ref
    return found


class TestNames:
    def test_forbidden_characters_are_replaced(self) -> None:
        """Characters a sheet name cannot hold ([]:*?/\\) are replaced and the name is trimmed."""
        assert placement.clean_sheet_name("a/b:c*d?[e]\\f", "results") == "a b c d e f"

    def test_name_is_cut_to_31_characters(self) -> None:
        """Names are cut to 31 characters, Excel's limit (Microsoft, Excel specifications and limits)."""
        assert len(placement.clean_sheet_name("x" * 40, "results")) == 31

    def test_reserved_and_empty_names_fall_back(self) -> None:
        """ "History" (reserved by Excel) and empty names fall back to the kind."""
        assert placement.clean_sheet_name("History", "log") == "log"
        assert placement.clean_sheet_name("'' ", "notes") == "notes"

    def test_free_preferred_name_is_kept(self) -> None:
        """A preferred name nobody uses is taken as is."""
        assert placement.choose_name("results", "results", {"data"}) == "results"

    def test_taken_name_gets_prefix_then_number(self) -> None:
        """A taken name becomes "statmargin <name>", then "statmargin <name> (2)"; case is ignored."""
        assert placement.choose_name("results", "results", {"results"}) == "statmargin results"
        taken = {"results", "statmargin results"}
        assert placement.choose_name("Results", "results", taken) == "statmargin Results (2)"
        taken |= {"statmargin results (2)"}
        assert placement.choose_name("results", "results", taken) == "statmargin results (3)"

    def test_numbered_long_name_stays_within_limit(self) -> None:
        """A numbered fallback for a long name still fits 31 characters."""
        long = "a" * 31
        taken = {long, placement.clean_sheet_name("statmargin " + long, "x").casefold()}
        name = placement.choose_name(long, "x", taken)
        assert name.endswith(" (2)") and len(name) <= 31


class TestSheetXml:
    def test_text_that_looks_like_a_formula_is_a_string(self) -> None:
        """Values starting with = + - @ are inline strings with no formula element."""
        model = SheetModel("r", "results")
        for col, text in enumerate(["=SUM(A1:A3)", "+1", "-cmd", "@x"]):
            model.put(0, col, text)
        root = _render(model)
        for col, text in enumerate(["=SUM(A1:A3)", "+1", "-cmd", "@x"]):
            cell = _cell(root, f"{sheetxml.column_letter(col)}1")
            assert cell.get("t") == "inlineStr"
            assert cell.find(f"{MAIN}f") is None
            assert cell.find(f"{MAIN}is/{MAIN}t").text == text

    def test_numbers_keep_full_precision(self) -> None:
        """Floats are written with enough digits to read back exactly; ints stay integers."""
        model = SheetModel("r", "results")
        model.put(0, 0, 0.1 + 0.2, "number")
        model.put(0, 1, 1e-300, "p_value")
        model.put(0, 2, 42, "integer")
        root = _render(model)
        assert float(_cell(root, "A1").find(f"{MAIN}v").text) == 0.1 + 0.2
        assert float(_cell(root, "B1").find(f"{MAIN}v").text) == 1e-300
        assert _cell(root, "C1").find(f"{MAIN}v").text == "42"

    def test_non_finite_booleans_and_none(self) -> None:
        """NaN and None give empty cells, infinities text, booleans t="b"."""
        model = SheetModel("r", "results")
        model.put_row(0, [math.nan, math.inf, -math.inf, True, None])
        notes: list[str] = []
        root = ET.fromstring(
            sheetxml.render_sheet(model, {k: 0 for k in STYLES}, {}, on_note=notes.append)
        )
        assert _cell(root, "A1").find(f"{MAIN}v") is None
        assert _cell(root, "B1").find(f"{MAIN}is/{MAIN}t").text == "inf"
        assert _cell(root, "C1").find(f"{MAIN}is/{MAIN}t").text == "-inf"
        assert _cell(root, "D1").get("t") == "b" and _cell(root, "D1").find(f"{MAIN}v").text == "1"
        assert _cell(root, "E1").find(f"{MAIN}v") is None
        assert notes and "A1" in notes[0]

    def test_dates_become_serial_numbers(self) -> None:
        """2000-01-01 is serial 36526 in the 1900 date system and 35064 in the 1904 system."""
        # Value recalled from Microsoft's "Date systems in Excel" article, from memory:
        # the 1904 system is 1462 days behind the 1900 system.
        model = SheetModel("r", "results")
        model.put(0, 0, dt.date(2000, 1, 1), "date")
        model.put(0, 1, dt.datetime(2000, 1, 1, 12, 0), "date")
        root = _render(model)
        assert float(_cell(root, "A1").find(f"{MAIN}v").text) == 36526
        assert float(_cell(root, "B1").find(f"{MAIN}v").text) == 36526.5
        root_1904 = ET.fromstring(
            sheetxml.render_sheet(model, {k: 0 for k in STYLES}, {}, date1904=True)
        )
        assert float(_cell(root_1904, "A1").find(f"{MAIN}v").text) == 36526 - 1462

    def test_illegal_characters_are_stripped_and_escapes_protected(self) -> None:
        """XML 1.0 control characters are removed; a literal _x0041_ is kept literal (ECMA-376 22.9.2.19)."""
        model = SheetModel("r", "results")
        model.put(0, 0, 'a\x00b\x07c <&> "q"')
        model.put(0, 1, "code _x0041_ here")
        root = _render(model)
        assert _cell(root, "A1").find(f"{MAIN}is/{MAIN}t").text == 'abc <&> "q"'
        assert _cell(root, "B1").find(f"{MAIN}is/{MAIN}t").text == "code _x005F_x0041_ here"

    def test_wrapped_rows_get_a_fitting_height(self) -> None:
        """A wrapped text needing three lines gets three 15-point lines; short or unwrapped text gets none."""
        model = SheetModel("r", "results", widths={0: 10})
        model.put(0, 0, "aaaa bbbb cccc dddd eeee", "wrap")  # 11 characters per line: 3 lines
        model.put(1, 0, "short", "wrap")
        model.put(2, 0, "aaaa bbbb cccc dddd eeee", "text")
        model.put(3, 0, "one\ntwo", "caution")  # an explicit line break
        assert sheetxml.wrapped_row_heights(model) == {0: 45.0, 3: 30.0}
        root = _render(model)
        row = root.find(f".//{MAIN}row[@r='1']")
        assert (row.get("ht"), row.get("customHeight")) == ("45", "1")
        assert root.find(f".//{MAIN}row[@r='2']").get("ht") is None

    def test_merged_width_counts_and_height_is_capped(self) -> None:
        """A wrapped cell merged across columns uses their joint width; heights stop at Excel's 409 points."""
        model = SheetModel("r", "results", widths={0: 10, 1: 10}, merged=["A1:B1"])
        model.put(0, 0, "aaaa bbbb cccc dddd eeee ffff", "wrap")  # 24 characters per line: 2 lines
        model.put(1, 0, "word " * 2000, "wrap")
        assert sheetxml.wrapped_row_heights(model) == {0: 30.0, 1: 409.0}

    def test_column_letters(self) -> None:
        """Column 0 is A, 25 is Z, 26 is AA and 16383 is XFD, Excel's last column."""
        assert [sheetxml.column_letter(i) for i in (0, 25, 26, 701, 702, 16383)] == [
            "A",
            "Z",
            "AA",
            "ZZ",
            "AAA",
            "XFD",
        ]
        assert sheetxml.parse_cell_ref("$XFD$1048576") == (1048575, 16383)

    def test_links_resolve_placeholders(self) -> None:
        """A {kind} link target becomes the final quoted sheet name; user targets pass through."""
        model = SheetModel("r", "results")
        model.put(0, 0, "see shape", "link", link="{shape}!A40")
        model.put(1, 0, "see data", "link", link="'Data'!C17")
        root = _render(model, {"shape": "statmargin shape (2)"})
        links = {h.get("ref"): h.get("location") for h in root.iter(f"{MAIN}hyperlink")}
        assert links == {"A1": "'statmargin shape (2)'!A40", "A2": "'Data'!C17"}

    def test_link_to_missing_kind_is_refused(self) -> None:
        """A link to a tool sheet that does not exist raises WriteError."""
        model = SheetModel("r", "results")
        model.put(0, 0, "x", "link", link="{nowhere}!A1")
        with pytest.raises(WriteError, match="nowhere"):
            _render(model)

    def test_frozen_pane_widths_merges_and_validation(self) -> None:
        """Freeze panes, column widths, merged ranges and list validations appear in schema order."""
        model = SheetModel("r", "roles", widths={0: 24.5}, freeze=(2, 1), merged=["A1:C1"])
        model.put(0, 0, "Title", "title")
        model.validations.append(
            Validation("D5:D9", ["outcome", "compare by", 'say "hi"'], prompt="Pick a role")
        )
        root = _render(model)
        pane = root.find(f".//{MAIN}pane")
        assert (
            pane.get("xSplit"),
            pane.get("ySplit"),
            pane.get("topLeftCell"),
            pane.get("state"),
        ) == ("1", "2", "B3", "frozen")
        col = root.find(f".//{MAIN}col")
        assert col.get("width") == "24.5" and col.get("customWidth") == "1"
        assert root.find(f".//{MAIN}mergeCell").get("ref") == "A1:C1"
        validation = root.find(f".//{MAIN}dataValidation")
        assert validation.get("sqref") == "D5:D9"
        assert validation.find(f"{MAIN}formula1").text == '"outcome,compare by,say ""hi"""'
        order = [child.tag.replace(MAIN, "") for child in root]
        assert order == [
            "dimension",
            "sheetViews",
            "sheetFormatPr",
            "cols",
            "sheetData",
            "mergeCells",
            "dataValidations",
            "pageMargins",
        ]

    def test_validation_choice_with_comma_is_refused(self) -> None:
        """A dropdown choice containing a comma cannot be written inline and raises WriteError."""
        model = SheetModel("r", "roles")
        model.validations.append(Validation("A1", ["a,b"]))
        with pytest.raises(WriteError, match="comma"):
            _render(model)


class TestStyles:
    def test_counts_match_children_and_keys_map_to_formats(self) -> None:
        """After appending, every count equals its children and each key points to its format."""
        xml, style_map = styles.add_styles(styles.MINIMAL_STYLES)
        root = ET.fromstring(xml)
        for tag, child in (
            ("fonts", "font"),
            ("fills", "fill"),
            ("borders", "border"),
            ("cellXfs", "xf"),
            ("numFmts", "numFmt"),
        ):
            block = root.find(f"{MAIN}{tag}")
            assert int(block.get("count")) == len(block.findall(f"{MAIN}{child}")), tag
        assert set(style_map) == set(STYLES)
        xfs = root.find(f"{MAIN}cellXfs").findall(f"{MAIN}xf")
        formats = {f.get("numFmtId"): f.get("formatCode") for f in root.iter(f"{MAIN}numFmt")}
        assert formats[xfs[style_map["p_value"]].get("numFmtId")] == '[<0.001]"<0.001";0.000'
        assert formats[xfs[style_map["percent"]].get("numFmtId")] == "0.0%"
        assert formats[xfs[style_map["number"]].get("numFmtId")] == "0.000"
        assert xfs[style_map["integer"]].get("numFmtId") == "1"  # built-in "0" (ECMA-376 18.8.30)
        assert xfs[style_map["decimal2"]].get("numFmtId") == "2"  # built-in "0.00"
        wrap = xfs[style_map["wrap"]].find(f"{MAIN}alignment")
        assert wrap.get("wrapText") == "1" and wrap.get("vertical") == "top"
        number = xfs[style_map["number"]].find(f"{MAIN}alignment")
        assert number.get("vertical") == "top" and number.get("wrapText") is None
        assert (
            xfs[style_map["input"]].get("fillId") != "0"
            and xfs[style_map["input"]].get("borderId") != "0"
        )
        # Order of children is the schema's (ECMA-376 18.8.39): numFmts before fonts.
        assert [c.tag.replace(MAIN, "") for c in root][:2] == ["numFmts", "fonts"]

    def test_user_styles_are_kept_and_ids_continue(self) -> None:
        """The workbook's own formats stay first and new custom number format ids start above them."""
        original = (
            b'<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
            b'<numFmts count="1"><numFmt numFmtId="170" formatCode="0.0000"/></numFmts>'
            b'<fonts count="1"><font><sz val="10"/><name val="Arial"/></font></fonts>'
            b'<fills count="2"><fill><patternFill patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill></fills>'
            b'<borders count="1"><border/></borders>'
            b'<cellXfs count="2"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/><xf numFmtId="170" fontId="0" fillId="0" borderId="0"/></cellXfs>'
            b'<dxfs count="1"><dxf><font><b/></font></dxf></dxfs>'
            b"</styleSheet>"
        )
        xml, style_map = styles.add_styles(original)
        root = ET.fromstring(xml)
        ids = [int(f.get("numFmtId")) for f in root.iter(f"{MAIN}numFmt")]
        assert ids[0] == 170 and min(ids[1:]) == 171
        assert min(style_map.values()) == 2
        fonts = root.find(f"{MAIN}fonts").findall(f"{MAIN}font")
        assert fonts[0].find(f"{MAIN}name").get("val") == "Arial"
        assert all(
            f.find(f"{MAIN}name").get("val") == "Arial" for f in fonts[1:]
        )  # follows the default face
        assert int(root.find(f"{MAIN}dxfs").get("count")) == 1

    def test_prefixed_styles_part(self) -> None:
        """A styles part written with an x: prefix gets prefixed additions."""
        original = (
            styles.MINIMAL_STYLES.decode()
            .replace("<", "<x:")
            .replace("<x:/", "</x:")
            .replace("<x:?xml", "<?xml")
        )
        original = original.replace('xmlns="', 'xmlns:x="')
        xml, style_map = styles.add_styles(original.encode())
        root = ET.fromstring(xml)
        assert len(root.find(f"{MAIN}cellXfs")) == 1 + len(set(style_map.values()))


class TestCharts:
    def _model(self) -> SheetModel:
        model = SheetModel("charts", "charts")
        for i in range(3):
            model.put(4 + i, 1, f"{10 * i}-{10 * i + 10}")
            model.put(4 + i, 2, i + 1, "integer")
            model.put(4 + i, 3, 0.5, "percent")
        return model

    def test_column_chart_references_own_sheet(self) -> None:
        """A "column" chart is a clustered column bar chart whose series point at the named sheet."""
        chart = Chart("column", "Wait times", "B5:B7", [ChartSeries("visits", "$C$5:$C$7")], "F2")
        root = ET.fromstring(charts.chart_xml(chart, "statmargin charts", self._model()))
        assert root.find(f".//{C}barDir").get("val") == "col"
        assert root.find(f".//{C}grouping").get("val") == "clustered"
        assert int(root.find(f".//{C}gapWidth").get("val")) < 20
        assert root.find(f".//{C}cat//{C}f").text == "'statmargin charts'!$B$5:$B$7"
        assert root.find(f".//{C}val//{C}f").text == "'statmargin charts'!$C$5:$C$7"
        cached = [float(v.text) for v in root.findall(f".//{C}numCache/{C}pt/{C}v")]
        assert cached == [1.0, 2.0, 3.0]

    def test_percent_bar_chart_is_percent_stacked(self) -> None:
        """A "percent_bar" chart uses percentStacked grouping with full overlap."""
        chart = Chart(
            "percent_bar",
            "Share",
            "$B$5:$B$7",
            [ChartSeries("yes", "$C$5:$C$7"), ChartSeries("no", "$D$5:$D$7")],
            "F20",
        )
        root = ET.fromstring(charts.chart_xml(chart, "o'brien", self._model()))
        assert root.find(f".//{C}grouping").get("val") == "percentStacked"
        assert root.find(f".//{C}overlap").get("val") == "100"
        assert [f.text for f in root.findall(f".//{C}val//{C}f")] == [
            "'o''brien'!$C$5:$C$7",
            "'o''brien'!$D$5:$D$7",
        ]

    def test_bad_kind_and_range_are_refused(self) -> None:
        """Unknown kinds and two-dimensional ranges raise WriteError."""
        with pytest.raises(WriteError, match="kind"):
            charts.chart_xml(
                Chart("pie", "t", "$B$5:$B$7", [ChartSeries("s", "$C$5:$C$7")], "A1"),
                "s",
                self._model(),
            )
        with pytest.raises(WriteError, match="one row or one column"):
            charts.chart_xml(
                Chart("column", "t", "$B$5:$C$7", [ChartSeries("s", "$C$5:$C$7")], "A1"),
                "s",
                self._model(),
            )

    def test_drawing_anchor(self) -> None:
        """The drawing anchors the chart from its anchor cell across width and height in cells."""
        chart = Chart(
            "column",
            "t",
            "$B$5:$B$7",
            [ChartSeries("s", "$C$5:$C$7")],
            "H3",
            width_cells=8,
            height_rows=15,
        )
        root = ET.fromstring(charts.drawing_xml([chart], ["rId1"], "s"))
        xdr = "{http://schemas.openxmlformats.org/drawingml/2006/spreadsheetDrawing}"
        frm, to = root.find(f".//{xdr}from"), root.find(f".//{xdr}to")
        assert (frm.find(f"{xdr}col").text, frm.find(f"{xdr}row").text) == ("7", "2")
        assert (to.find(f"{xdr}col").text, to.find(f"{xdr}row").text) == ("15", "17")


class TestPackage:
    def test_a_tool_sheet_in_the_middle_is_replaced_in_place(self, tmp_path: Path) -> None:
        """Replacing a tool sheet the user moved between their sheets keeps every position, name scope and the active tab."""
        import xlsxwriter

        path = tmp_path / "middle.xlsx"
        wb = xlsxwriter.Workbook(str(path))
        wb.add_worksheet("Data").write(0, 0, "x")
        wb.add_worksheet("results").write(0, 0, "old results")
        later = wb.add_worksheet("Later")
        later.write(0, 0, "kept")
        later.activate()
        wb.define_name("results!statmargin_sheet", '="results"')
        wb.define_name("Later!LocalThing", "=Later!$A$1")
        wb.close()
        entries = read_zip(path.read_bytes())
        parts = {e.name: e for e in entries}
        assert package.tool_sheets(parts) == {"results": "results"}

        model = SheetModel("results", "results")
        model.put(0, 0, "new results")
        result = package.build_package(entries, [model])
        blob = write_zip(result.entries)
        text = {e.name: e for e in read_zip(blob)}["xl/workbook.xml"].data().decode()
        names = re.findall(r'<definedName name="([^"]+)" localSheetId="(\d+)"', text)
        assert ("LocalThing", "2") in names and ("statmargin_sheet", "1") in names
        assert 'activeTab="2"' in text  # "Later" is still active, still third
        assert result.replaced == ["results"] and result.sheets == {"results": "results"}
        book = openpyxl.load_workbook(io.BytesIO(blob))
        assert book.sheetnames == ["Data", "results", "Later"]
        assert book["results"]["A1"].value == "new results"

    def test_rich_workbook_parts_changed_are_the_listed_few(self, tmp_path: Path) -> None:
        """Only workbook, its rels, content types, app properties and styles are edited."""
        path = make_rich_workbook(tmp_path / "rich.xlsx")
        entries = read_zip(path.read_bytes())
        model = SheetModel("results", "results")
        model.put(0, 0, 1.5, "number")
        result = package.build_package(entries, [model])
        assert result.edited == {
            "xl/workbook.xml",
            "xl/_rels/workbook.xml.rels",
            "[Content_Types].xml",
            "docProps/app.xml",
            "xl/styles.xml",
        }
        assert result.removed == set()
        app = {e.name: e for e in result.entries}["docProps/app.xml"].data().decode()
        assert "<vt:lpstr>results</vt:lpstr>" in app and "<vt:i4>3</vt:i4>" in app

    def test_duplicate_kinds_are_refused(self, tmp_path: Path) -> None:
        """Two models of one kind raise WriteError."""
        path = make_rich_workbook(tmp_path / "rich.xlsx")
        with pytest.raises(WriteError, match="same kind"):
            package.build_package(
                read_zip(path.read_bytes()),
                [SheetModel("a", "results"), SheetModel("b", "results")],
            )


def _rewrite(path: Path, changes: dict[str, bytes]) -> None:
    """Replace or add parts of a package on disk (test helper)."""
    from statmargin.io.file.zipio import new_entry

    entries = [e for e in read_zip(path.read_bytes()) if e.name not in changes]
    entries += [new_entry(name, data) for name, data in changes.items()]
    path.write_bytes(write_zip(entries))


class TestRemovalOfEarlierSheets:
    def _written(self, tmp_path: Path) -> tuple[Path, dict]:
        from statmargin.io.file.sink import FileSink
        from workbook_fixtures import sample_tool_models

        path = make_rich_workbook(tmp_path / "rich.xlsx")
        FileSink(path).write_sheets(sample_tool_models())
        parts = {e.name: e for e in read_zip(path.read_bytes())}
        return path, parts

    def test_calc_chain_naming_a_removed_sheet_is_dropped(self, tmp_path: Path) -> None:
        """A calcChain entry for a replaced tool sheet's sheetId makes the writer drop calcChain.xml with its rel and override."""
        from statmargin.io.file.sink import FileSink
        from workbook_fixtures import sample_tool_models

        path, parts = self._written(tmp_path)
        workbook = parts["xl/workbook.xml"].data().decode()
        results_id = re.search(r'<sheet name="results" sheetId="(\d+)"', workbook).group(1)
        rels = (
            parts["xl/_rels/workbook.xml.rels"]
            .data()
            .decode()
            .replace(
                "</Relationships>",
                '<Relationship Id="rId900" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/calcChain" Target="calcChain.xml"/></Relationships>',
            )
        )
        types = (
            parts["[Content_Types].xml"]
            .data()
            .decode()
            .replace(
                "</Types>",
                '<Override PartName="/xl/calcChain.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.calcChain+xml"/></Types>',
            )
        )
        chain = f'<calcChain xmlns="{MAIN[1:-1]}"><c r="C12" i="1"/><c r="A1" i="{results_id}"/></calcChain>'
        _rewrite(
            path,
            {
                "xl/_rels/workbook.xml.rels": rels.encode(),
                "[Content_Types].xml": types.encode(),
                "xl/calcChain.xml": chain.encode(),
            },
        )
        FileSink(path).write_sheets(sample_tool_models())
        after = {e.name: e for e in read_zip(path.read_bytes())}
        assert "xl/calcChain.xml" not in after
        assert "calcChain" not in after["xl/_rels/workbook.xml.rels"].data().decode()
        assert "calcChain" not in after["[Content_Types].xml"].data().decode()
        assert openpyxl.load_workbook(path).sheetnames[-2:] == ["results", "charts"]

    def test_part_shared_with_a_user_sheet_is_kept(self, tmp_path: Path) -> None:
        """A part a replaced tool sheet refers to is kept when a user part still refers to it; the tool sheet's own rels go."""
        from statmargin.io.file.sink import FileSink
        from workbook_fixtures import sample_tool_models

        path, parts = self._written(tmp_path)
        workbook = parts["xl/workbook.xml"].data().decode()
        wb_rels = package.read_rels(parts["xl/_rels/workbook.xml.rels"].data(), "xl/workbook.xml")
        rel_id = re.search(r'<sheet name="results" sheetId="\d+" r:id="(\w+)"', workbook).group(1)
        results_part = next(r["part"] for r in wb_rels if r["Id"] == rel_id)
        rels_name = package.rels_part_for(results_part)
        assert rels_name not in parts  # the results sheet has no charts, hence no rels yet
        extra = (
            f'<Relationships xmlns="{package.PKG_REL_NS}"><Relationship Id="rId1" '
            'Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/image" Target="../media/image1.png"/></Relationships>'
        )
        _rewrite(path, {rels_name: extra.encode()})
        report = FileSink(path).write_sheets(sample_tool_models())
        after = {e.name: e for e in read_zip(path.read_bytes())}
        assert after["xl/media/image1.png"].raw == parts["xl/media/image1.png"].raw
        assert report.replaced == ["results", "charts"]
        # The new results sheet may reuse the part name, but not the old rels part.
        new_results = re.search(
            r'<sheet name="results" sheetId="\d+" r:id="(\w+)"',
            after["xl/workbook.xml"].data().decode(),
        ).group(1)
        new_part = next(
            r["part"]
            for r in package.read_rels(
                after["xl/_rels/workbook.xml.rels"].data(), "xl/workbook.xml"
            )
            if r["Id"] == new_results
        )
        assert package.rels_part_for(new_part) not in after

    def test_a_copied_tool_sheet_is_kept_as_the_users(self, tmp_path: Path) -> None:
        """A second sheet carrying the results marker (a copy made by the user) is kept and loses the marker."""
        from statmargin.io.file.sink import FileSink
        from workbook_fixtures import SECOND_SHEET, sample_tool_models

        path, parts = self._written(tmp_path)
        workbook = parts["xl/workbook.xml"].data().decode()
        copy_marker = '<definedName name="statmargin_sheet" localSheetId="1" hidden="1">"results"</definedName>'
        workbook = workbook.replace("</definedNames>", copy_marker + "</definedNames>")
        _rewrite(path, {"xl/workbook.xml": workbook.encode()})
        report = FileSink(path).write_sheets(sample_tool_models())
        assert report.replaced == ["results", "charts"]
        assert any(SECOND_SHEET in sentence and "copy" in sentence for sentence in report.renamed)
        after = {e.name: e for e in read_zip(path.read_bytes())}
        assert package.tool_sheets(after) == {"results": "results", "charts": "charts"}
        assert (
            openpyxl.load_workbook(path)[SECOND_SHEET]["A1"].value
            == "Invented workbook for statmargin tests."
        )

    def test_active_replaced_sheet_stays_active(self, tmp_path: Path) -> None:
        """When the replaced results sheet was the active tab, its replacement becomes the active tab."""
        from statmargin.io.file.sink import FileSink
        from workbook_fixtures import sample_tool_models

        path, parts = self._written(tmp_path)
        workbook = (
            parts["xl/workbook.xml"]
            .data()
            .decode()
            .replace("<workbookView ", '<workbookView activeTab="2" ', 1)
        )
        _rewrite(path, {"xl/workbook.xml": workbook.encode()})
        results_only = [m for m in sample_tool_models() if m.kind == "results"]
        FileSink(path).write_sheets(results_only)
        book = openpyxl.load_workbook(path)
        assert book.sheetnames == ["Visits", "Notes", "results", "charts"]
        assert book.active.title == "results"


# Children of <worksheet> in schema order (ECMA-376 Part 1, 18.3.1.99 CT_Worksheet).
WORKSHEET_ORDER = (
    "sheetPr dimension sheetViews sheetFormatPr cols sheetData sheetCalcPr sheetProtection "
    "protectedRanges scenarios autoFilter sortState dataConsolidate customSheetViews mergeCells "
    "phoneticPr conditionalFormatting dataValidations hyperlinks printOptions pageMargins "
    "pageSetup headerFooter rowBreaks colBreaks customProperties cellWatches ignoredErrors "
    "smartTags drawing legacyDrawing legacyDrawingHF picture oleObjects controls "
    "webPublishItems tableParts extLst"
).split()


def _printed_model() -> SheetModel:
    """A sheet using every optional part at once: merges, a list, a link, print settings."""
    model = SheetModel(
        "r",
        "results",
        widths={0: 20},
        merged=["A1:C1"],
        validations=[Validation("B2:B3", ["yes", "no"])],
        landscape=True,
        column_breaks=[9, 3],
        page_numbers=True,
        print_scale=80,
    )
    model.put(0, 0, "title", "title")
    model.put(1, 0, "details", "link", link="{shape}!A1")
    return model


class TestPrintSettings:
    def test_children_follow_the_schema_order(self) -> None:
        """Every worksheet child, print settings and drawing included, is in CT_Worksheet order."""
        for fit in (False, True):
            model = _printed_model()
            model.fit_to_width = fit
            style_map = {key: n for n, key in enumerate(STYLES)}
            xml = sheetxml.render_sheet(model, style_map, {"shape": "S"}, drawing_rel_id="rId1")
            tags = [child.tag.replace(MAIN, "") for child in ET.fromstring(xml)]
            positions = [WORKSHEET_ORDER.index(tag) for tag in tags]
            assert positions == sorted(positions), tags
            assert ("sheetPr" in tags) is fit and tags[0] == ("sheetPr" if fit else "dimension")
            assert {"pageSetup", "headerFooter", "colBreaks", "drawing"} <= set(tags)

    def test_page_setup_breaks_and_footer_values(self) -> None:
        """Landscape, a scale, sorted column breaks and a page-number footer are written as asked."""
        root = _render(_printed_model(), {"shape": "S"})
        setup = root.find(f"{MAIN}pageSetup")
        assert setup.get("orientation") == "landscape" and setup.get("scale") == "80"
        assert setup.get("fitToWidth") is None
        breaks = root.find(f"{MAIN}colBreaks")
        assert [b.get("id") for b in breaks] == ["3", "9"]
        assert breaks.get("count") == "2" and breaks.get("manualBreakCount") == "2"
        assert all(b.get("man") == "1" and b.get("max") == "1048575" for b in breaks)
        # ECMA-376 Part 1, 18.3.1.46: &A sheet name, &P page number, &N number of pages.
        assert root.find(f"{MAIN}headerFooter/{MAIN}oddFooter").text == "&L&A&RPage &P of &N"

    def test_fit_to_width_overrides_the_scale(self) -> None:
        """Fitting to the page width sets fitToPage, one page wide and any number tall, and no scale."""
        model = SheetModel("s", "shape", fit_to_width=True, print_scale=50)
        model.put(0, 0, "x")
        root = _render(model)
        assert root.find(f"{MAIN}sheetPr/{MAIN}pageSetUpPr").get("fitToPage") == "1"
        setup = root.find(f"{MAIN}pageSetup")
        assert (setup.get("fitToWidth"), setup.get("fitToHeight")) == ("1", "0")
        assert setup.get("scale") is None and setup.get("orientation") is None

    def test_no_print_settings_by_default(self) -> None:
        """A sheet that asks for nothing gets no sheetPr, pageSetup, footer or breaks."""
        model = SheetModel("s", "notes")
        model.put(0, 0, "x")
        tags = {child.tag.replace(MAIN, "") for child in _render(model)}
        assert not tags & {"sheetPr", "pageSetup", "headerFooter", "colBreaks"}

    def test_openpyxl_reads_the_print_settings(self, tmp_path: Path) -> None:
        """An independent reader (openpyxl) sees the orientation, scale, breaks and fit-to-page."""
        path = make_rich_workbook(tmp_path / "book.xlsx")
        printed = _printed_model()
        printed.name = "printed"
        fitted = SheetModel("fitted", "shape", fit_to_width=True)
        fitted.put(0, 0, "x")
        from statmargin.io.file.sink import FileSink

        printed.cells[(1, 0)].link = None  # no shape sheet in this workbook
        FileSink(path).write_sheets([printed, fitted])
        book = openpyxl.load_workbook(path)
        sheet = book["printed"]
        assert sheet.page_setup.orientation == "landscape"
        assert int(sheet.page_setup.scale) == 80
        assert [b.id for b in sheet.col_breaks.brk] == [3, 9]
        assert book["fitted"].sheet_properties.pageSetUpPr.fitToPage is True
        assert int(book["fitted"].page_setup.fitToHeight) == 0

    def test_bold_text_wraps_sooner(self) -> None:
        """A bold (caution) line holds fewer characters than plain wrapped text in the same width."""
        text = "x" * 11 + " " + "y" * 11  # 23 characters
        plain = SheetModel("r", "results", widths={0: 20})
        plain.put(0, 0, text, "wrap")  # 24 characters a line: one line
        bold = SheetModel("r", "results", widths={0: 20})
        bold.put(0, 0, text, "caution")  # 21 characters a line: two lines
        assert sheetxml.wrapped_row_heights(plain) == {}
        assert sheetxml.wrapped_row_heights(bold) == {0: 30.0}


def test_print_titles_are_written_and_replaced_on_rerun(tmp_path):
    """A model's print titles become one sheet-scoped _xlnm.Print_Titles name, not duplicated by a re-run."""
    import zipfile

    from statmargin.io.file.sink import FileSink
    from statmargin.sheets.model import SheetModel

    path = make_rich_workbook(tmp_path / "book.xlsx")
    model = SheetModel(name="results", kind="results")
    model.put_row(0, ["Question", "Reading"], "header")
    model.put_row(1, ["Does wait differ by site?", "Waits were longer at North."])
    model.print_title_rows = (0, 0)
    model.print_title_cols = 1
    model.print_areas = [(0, 0, 1, 0), (0, 1, 1, 1)]
    for _ in range(2):
        report = FileSink(path).write_sheets([model])
    with zipfile.ZipFile(path) as archive:
        workbook = archive.read("xl/workbook.xml").decode()
    name = report.sheets["results"]
    quoted = f"'{name}'"  # the writer always quotes sheet names in references
    assert workbook.count("_xlnm.Print_Titles") == 1 and workbook.count("_xlnm.Print_Area") == 1
    shown = workbook.replace("&apos;", "'")
    assert f">{quoted}!$A:$A,{quoted}!$1:$1</definedName>" in shown
    assert f">{quoted}!$A$1:$A$2,{quoted}!$B$1:$B$2</definedName>" in shown

