"""End-to-end tests of FileSink on a workbook full of user content.

Independent readers are the references: CPython's zipfile (archive validity),
openpyxl 3.1 and python-calamine (cell values, formats, links), and the raw
bytes of the original file (nothing of the user's may change).
"""

from __future__ import annotations

import hashlib
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest
import python_calamine

from statmargin.errors import WorkbookError, WorkbookLockedError, WriteError
from statmargin.io.file import sink as xlsxsink
from statmargin.io.file.sink import FileSink
from statmargin.io.file.zipio import read_zip
from statmargin.sheets.model import SheetModel
from statmargin.vocabulary import EstimateKind
from workbook_fixtures import (
    DATA_SHEET,
    SECOND_SHEET,
    make_rich_workbook,
    make_workbook_with_user_sheet,
    sample_tool_models,
)

ALLOWED_TO_CHANGE = {
    "xl/workbook.xml",
    "xl/_rels/workbook.xml.rels",
    "[Content_Types].xml",
    "docProps/app.xml",
    "docProps/core.xml",
    "xl/styles.xml",
}


def _entries(path: Path) -> dict:
    return {e.name: e for e in read_zip(path.read_bytes())}


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


@pytest.fixture
def rich(tmp_path: Path) -> Path:
    """The rich fixture workbook in a fresh folder."""
    return make_rich_workbook(tmp_path / "visits.xlsx")


@pytest.fixture
def written(rich: Path) -> tuple[Path, dict, object]:
    """The rich workbook after one write of the sample tool sheets, with its original entries."""
    before = _entries(rich)
    report = FileSink(rich).write_sheets(sample_tool_models())
    return rich, before, report


class TestUserContentUntouched:
    def test_every_other_part_is_byte_identical(self, written) -> None:
        """Every original part outside the few package parts keeps its compressed and decompressed bytes."""
        path, before, _ = written
        after = _entries(path)
        checked = 0
        for name, entry in before.items():
            if name in ALLOWED_TO_CHANGE:
                continue
            assert name in after, f"{name} disappeared"
            assert _sha(after[name].raw) == _sha(entry.raw), f"{name} compressed bytes changed"
            assert _sha(after[name].data()) == _sha(entry.data()), f"{name} content changed"
            assert after[name].method == entry.method
            checked += 1
        # The fixture has sheets, table, chart, drawing, image, comments, VML, theme, shared strings.
        assert checked >= 12
        assert before["xl/worksheets/sheet1.xml"].data() == after["xl/worksheets/sheet1.xml"].data()

    def test_zip_is_valid_for_zipfile(self, written) -> None:
        """CPython's zipfile opens the result and every CRC checks out."""
        path, _, _ = written
        with zipfile.ZipFile(path) as archive:
            assert archive.testzip() is None

    def test_user_sheets_still_read_the_same(self, written) -> None:
        """openpyxl sees the user's data, table, formula, defined name and validation as before."""
        path, _, _ = written
        book = openpyxl.load_workbook(path)
        data = book[DATA_SHEET]
        assert data["A2"].value == "North" and data["C2"].value == 34.5
        assert data["C12"].value == "=AVERAGE(C2:C10)"
        assert "VisitLog" in data.tables
        assert data.data_validations.dataValidation[0].formula1 == '"yes,no"'
        assert "TargetWait" in book.defined_names
        assert book[SECOND_SHEET]["A2"].value == "=not a formula, just text"
        cached = openpyxl.load_workbook(path, data_only=True)[DATA_SHEET]["C12"].value
        assert cached == pytest.approx(343.5 / 9)  # the nine invented waits sum to 343.5 minutes


class TestToolSheetsRead:
    def test_openpyxl_sees_values_and_formats(self, written) -> None:
        """openpyxl reads our numbers at full precision, with the p-value and percent formats."""
        path, _, report = written
        assert report.sheets == {"results": "results", "charts": "charts"}
        book = openpyxl.load_workbook(path)
        assert book.sheetnames == [DATA_SHEET, SECOND_SHEET, "results", "charts"]
        sheet = book["results"]
        assert sheet["B4"].value == 0.000123456789
        assert sheet["B4"].number_format == '[<0.001]"<0.001";0.000'
        assert sheet["C4"].value == 1.23456789 and sheet["C4"].number_format == "0.000"
        assert sheet["C5"].number_format == "0.0%"
        assert sheet["D4"].alignment.wrap_text is True
        assert sheet.freeze_panes == "A4"
        assert "A1:D1" in {str(r) for r in sheet.merged_cells.ranges}
        assert sheet.column_dimensions["D"].width == 50

    def test_formula_looking_text_is_text(self, written) -> None:
        """A value starting with "=" is a string cell for openpyxl, not a formula."""
        path, _, _ = written
        cell = openpyxl.load_workbook(path)["results"]["D5"]
        assert cell.value == "=not a formula"
        assert cell.data_type == "s"

    def test_links_and_validation(self, written) -> None:
        """Internal links point at the user sheet and at the final charts sheet name; the dropdown is there."""
        path, _, _ = written
        sheet = openpyxl.load_workbook(path)["results"]
        assert sheet["A6"].hyperlink.location == "'Visits'!C2"
        assert sheet["A7"].hyperlink.location == "'charts'!A1"
        validation = sheet.data_validations.dataValidation[0]
        assert validation.formula1 == '"yes,no"' and str(validation.sqref) == "B8"

    def test_calamine_sees_values(self, written) -> None:
        """python-calamine lists the sheets and reads our values."""
        path, _, _ = written
        book = python_calamine.CalamineWorkbook.from_path(str(path))
        assert book.sheet_names == [DATA_SHEET, SECOND_SHEET, "results", "charts"]
        rows = book.get_sheet_by_name("results").to_python()
        assert rows[3][1] == 0.000123456789
        assert rows[4][3] == "=not a formula"
        counts = [row[2] for row in book.get_sheet_by_name("charts").to_python()[4:9]]
        assert counts == [3, 2, 2, 1, 1]

    def test_charts_are_parts_with_series_on_the_tool_sheet(self, written) -> None:
        """Two new chart parts reference the charts sheet's ranges; the user's chart is still there."""
        path, before, _ = written
        after = _entries(path)
        new_charts = sorted(n for n in after if n.startswith("xl/charts/chart") and n not in before)
        assert len(new_charts) == 2
        formulas = [re.findall(r"<c:f>(.*?)</c:f>", after[n].data().decode()) for n in new_charts]
        kinds = [
            re.search(r'<c:grouping val="(\w+)"', after[n].data().decode()).group(1)
            for n in new_charts
        ]
        by_kind = dict(zip(kinds, formulas, strict=True))
        assert by_kind["clustered"] == ["'charts'!$B$5:$B$9", "'charts'!$C$5:$C$9"]
        assert by_kind["percentStacked"] == [
            "'charts'!$B$5:$B$9",
            "'charts'!$D$5:$D$9",
            "'charts'!$B$5:$B$9",
            "'charts'!$E$5:$E$9",
        ]
        book = openpyxl.load_workbook(path)
        assert len(book[DATA_SHEET]._charts) == 1  # openpyxl re-reads the user's own chart


class TestReruns:
    def test_two_reruns_leave_one_copy_of_everything(self, rich: Path) -> None:
        """After three writes there is one sheet, marker, relationship and override per tool sheet."""
        for _ in range(3):
            report = FileSink(rich).write_sheets(sample_tool_models())
        assert report.replaced == ["results", "charts"]
        entries = _entries(rich)
        workbook = entries["xl/workbook.xml"].data().decode()
        assert re.findall(r'<sheet name="([^"]+)"', workbook) == [
            DATA_SHEET,
            SECOND_SHEET,
            "results",
            "charts",
        ]
        assert workbook.count('name="statmargin_sheet"') == 2
        rels = entries["xl/_rels/workbook.xml.rels"].data().decode()
        assert rels.count('relationships/worksheet"') == 4
        types = entries["[Content_Types].xml"].data().decode()
        part_names = re.findall(r'PartName="([^"]+)"', types)
        assert len(part_names) == len(set(part_names))
        assert {p.lstrip("/") for p in part_names} <= set(entries)  # no override for a removed part
        assert (
            sum(n.startswith("xl/charts/chart") for n in entries) == 3
        )  # user's chart plus our two
        assert sum(n.startswith("xl/worksheets/sheet") for n in entries) == 4
        app = entries["docProps/app.xml"].data().decode()
        assert app.count("<vt:lpstr>results</vt:lpstr>") == 1
        with zipfile.ZipFile(rich) as archive:
            assert archive.testzip() is None

    def test_styles_do_not_grow_on_reruns(self, rich: Path) -> None:
        """The second and third writes reuse the formats added by the first, so styles.xml stops changing."""
        sizes = []
        for _ in range(3):
            FileSink(rich).write_sheets(sample_tool_models())
            sizes.append(_entries(rich)["xl/styles.xml"].data())
        assert sizes[1] == sizes[2] == sizes[0]
        book = openpyxl.load_workbook(rich)
        assert book["results"]["B4"].number_format == '[<0.001]"<0.001";0.000'

    def test_no_models_leaves_the_file_alone(self, rich: Path) -> None:
        """Writing an empty list of sheets changes nothing."""
        original = rich.read_bytes()
        report = FileSink(rich).write_sheets([])
        assert report.sheets == {} and rich.read_bytes() == original

    def test_other_tool_kinds_are_kept(self, rich: Path) -> None:
        """Writing only results later keeps the earlier charts sheet and its markers."""
        FileSink(rich).write_sheets(sample_tool_models())
        results_only = [m for m in sample_tool_models() if m.kind == "results"]
        report = FileSink(rich).write_sheets(results_only)
        assert report.replaced == ["results"]
        book = openpyxl.load_workbook(rich)
        # The new results sheet takes the old one's place, before the charts sheet.
        assert book.sheetnames == [DATA_SHEET, SECOND_SHEET, "results", "charts"]
        # The link to {charts} resolves to the kept charts sheet.
        assert book["results"]["A7"].hyperlink.location == "'charts'!A1"
        entries = _entries(rich)
        assert sum(n.startswith("xl/charts/chart") for n in entries) == 3

    def test_user_sheet_with_the_name_is_never_overwritten(self, tmp_path: Path) -> None:
        """A user sheet called "results" without a marker stays; ours becomes "statmargin results"."""
        path = make_workbook_with_user_sheet(tmp_path / "mine.xlsx", "results")
        before = _entries(path)["xl/worksheets/sheet2.xml"].raw
        model = SheetModel("results", "results")
        model.put(0, 0, 0.5, "number")
        first = FileSink(path).write_sheets([model])
        second = FileSink(path).write_sheets([model])
        assert first.sheets == {"results": "statmargin results"}
        assert first.renamed and "results" in first.renamed[0]
        assert second.sheets == {"results": "statmargin results"} and second.replaced == [
            "statmargin results"
        ]
        book = openpyxl.load_workbook(path)
        assert book.sheetnames == [DATA_SHEET, "results", "statmargin results"]
        assert book["results"]["A1"].value == "My own notes (invented)."
        assert book["statmargin results"]["A1"].value == 0.5
        assert _entries(path)["xl/worksheets/sheet2.xml"].raw == before


class TestSafety:
    def test_injected_failure_before_rename_leaves_original(self, rich: Path, monkeypatch) -> None:
        """A failure between the temporary write and the rename leaves the bytes and no temp file."""
        original = rich.read_bytes()
        listing = sorted(p.name for p in rich.parent.iterdir())

        def boom(temp_path: str) -> None:
            assert Path(temp_path).exists() and Path(temp_path).parent == rich.parent
            raise OSError("disk full (injected)")

        monkeypatch.setattr(xlsxsink, "before_replace", boom)
        with pytest.raises(WriteError, match="original file was left") as caught:
            FileSink(rich).write_sheets(sample_tool_models())
        assert "\n" not in str(caught.value) and "disk full (injected)" in str(caught.value)
        assert rich.read_bytes() == original
        assert sorted(p.name for p in rich.parent.iterdir()) == listing

    def test_failed_verification_leaves_original(self, rich: Path, monkeypatch) -> None:
        """If a copied part came out different, verification refuses and nothing changes."""
        original = rich.read_bytes()
        real_write = xlsxsink.write_zip_to

        def damaging(handle, entries):  # noqa: ANN001, ANN202
            for entry in entries:
                if entry.name == "xl/theme/theme1.xml":
                    entry.raw = entry.raw[:-1] + bytes([entry.raw[-1] ^ 1])
            return real_write(handle, entries)

        monkeypatch.setattr(xlsxsink, "write_zip_to", damaging)
        with pytest.raises(WriteError, match="xl/theme/theme1.xml changed while copying"):
            FileSink(rich).write_sheets(sample_tool_models())
        assert rich.read_bytes() == original
        assert not [p for p in rich.parent.iterdir() if p.name.startswith(xlsxsink.TEMP_PREFIX)]

    def test_a_written_part_that_is_not_well_formed_leaves_original(self, rich: Path, monkeypatch) -> None:
        """A new sheet's XML that does not parse (its CRC intact) is refused by the check before the move."""
        from statmargin.io.file.zipio import new_entry

        original = rich.read_bytes()
        real_write = xlsxsink.write_zip_to

        def malformed(handle, entries):  # noqa: ANN001, ANN202
            broken = [new_entry(e.name, e.data()[:-12]) if e.name.startswith("xl/worksheets/") and
                      e.name.endswith(".xml") and e.name not in original_names else e for e in entries]
            return real_write(handle, broken)

        original_names = {e.name for e in read_zip(original)}
        monkeypatch.setattr(xlsxsink, "write_zip_to", malformed)
        with pytest.raises(WriteError, match="not well-formed XML"):
            FileSink(rich).write_sheets(sample_tool_models())
        assert rich.read_bytes() == original
        assert not [p for p in rich.parent.iterdir() if p.name.startswith(xlsxsink.TEMP_PREFIX)]

    @pytest.mark.parametrize("lock_name", ["~$visits.xlsx", ".~lock.visits.xlsx#"])
    def test_lock_file_is_refused(self, rich: Path, lock_name: str) -> None:
        """An Excel or LibreOffice lock file beside the workbook makes the write refuse."""
        original = rich.read_bytes()
        (rich.parent / lock_name).write_bytes(b"user")
        with pytest.raises(WorkbookLockedError, match="close it"):
            FileSink(rich).write_sheets(sample_tool_models())
        assert rich.read_bytes() == original

    def test_out_writes_a_copy_even_when_locked(self, rich: Path) -> None:
        """With ``out`` the open workbook is left alone and a copy receives the sheets."""
        original = rich.read_bytes()
        (rich.parent / "~$visits.xlsx").write_bytes(b"user")
        copy = rich.parent / "visits-results.xlsx"
        report = FileSink(rich).write_sheets(sample_tool_models(), out=str(copy))
        assert report.path == str(copy)
        assert rich.read_bytes() == original
        assert openpyxl.load_workbook(copy).sheetnames[-2:] == ["results", "charts"]

    def test_out_naming_the_workbook_itself_still_checks_the_lock(self, rich: Path) -> None:
        """Passing the workbook's own path as ``out`` is an in-place write, so a lock file still refuses it."""
        original = rich.read_bytes()
        (rich.parent / ".~lock.visits.xlsx#").write_bytes(b"user")
        with pytest.raises(WorkbookLockedError):
            FileSink(rich).write_sheets(sample_tool_models(), out=str(rich))
        assert rich.read_bytes() == original

    def test_not_a_workbook_and_missing_file(self, tmp_path: Path) -> None:
        """A CSV renamed to .xlsx and a missing path give WorkbookError."""
        fake = tmp_path / "fake.xlsx"
        fake.write_bytes(b"a,b\n1,2\n")
        with pytest.raises(WorkbookError):
            FileSink(fake).write_sheets(sample_tool_models())
        assert fake.read_bytes() == b"a,b\n1,2\n"
        with pytest.raises(WorkbookError, match="does not exist"):
            FileSink(tmp_path / "nope.xlsx").write_sheets(sample_tool_models())

    def test_wrong_output_suffix(self, rich: Path) -> None:
        """Writing to a non-workbook suffix is refused with WriteError."""
        with pytest.raises(WriteError, match=r"\.xlsx"):
            FileSink(rich).write_sheets(sample_tool_models(), out=str(rich.with_suffix(".csv")))


class TestMacroWorkbook:
    def test_xlsm_stays_a_macro_workbook(self, tmp_path: Path) -> None:
        """An .xlsm keeps its macro content type and a byte-identical vbaProject.bin."""
        path = make_rich_workbook(tmp_path / "macro.xlsx", macro=True)
        assert path.suffix == ".xlsm"
        before = _entries(path)
        FileSink(path).write_sheets(sample_tool_models())
        after = _entries(path)
        assert after["xl/vbaProject.bin"].raw == before["xl/vbaProject.bin"].raw
        assert after["xl/vbaProject.bin"].data() == before["xl/vbaProject.bin"].data()
        types = after["[Content_Types].xml"].data().decode()
        assert "application/vnd.ms-excel.sheet.macroEnabled.main+xml" in types
        assert 'Extension="bin" ContentType="application/vnd.ms-office.vbaProject"' in types
        book = openpyxl.load_workbook(path, keep_vba=True)
        assert book.sheetnames[-2:] == ["results", "charts"]
        with pytest.raises(WriteError, match=r"\.xlsm"):
            FileSink(path).write_sheets(sample_tool_models(), out=str(tmp_path / "copy.xlsx"))


def test_workbook_made_by_openpyxl(tmp_path: Path) -> None:
    """A workbook written by another library (openpyxl) takes our sheets and keeps its own."""
    path = tmp_path / "other.xlsx"
    book = openpyxl.Workbook()
    book.active.title = "Data"
    book.active.append(["site", "wait"])
    book.active.append(["North", 12.5])
    book.create_sheet("results").append(["user text"])
    book.save(path)
    report = FileSink(path).write_sheets(sample_tool_models())
    assert report.sheets["results"] == "statmargin results"
    reread = openpyxl.load_workbook(path)
    assert reread.sheetnames == ["Data", "results", "statmargin results", "charts"]
    assert reread["results"]["A1"].value == "user text"
    assert reread["statmargin results"]["B4"].value == 0.000123456789
    # The {charts} link on the results sheet and the back link both use final names.
    assert reread["charts"]["B11"].hyperlink.location == "'statmargin results'!A3"


def test_results_print_plain_columns_first_in_libreoffice(tmp_path: Path) -> None:
    """Rendered by LibreOffice, the results sheet's first page holds Question, Reading and Cautions only."""
    import subprocess

    from libreoffice import convert, require_soffice
    from statmargin.results import Estimate, Result
    from statmargin.sheets import report

    soffice = require_soffice()
    import shutil

    if shutil.which("pdftotext") is None:
        pytest.skip("pdftotext (poppler-utils) is needed to read the rendered pages")
    # R 4.2.2: t.test(extra ~ group, data = sleep) (Welch): t = -1.8608, df = 17.776, p = 0.07939
    result = Result(
        outcome="extra",
        exposure="group",
        design="two_group_continuous",
        test="welch_t",
        statistic_name="t",
        statistic=-1.860813467486853,
        df=17.7764735161785,
        p_value=0.07939414018735817,
        n=20,
        estimate=Estimate(EstimateKind.MEAN_DIFFERENCE, -1.58, -3.3654832307117104, 0.20548323071171018, levels=("1", "2")
        ),
        groups=[{"label": "1", "n": 10, "mean": 0.75}, {"label": "2", "n": 10, "mean": 2.33}],
    )
    context = report.ReportContext(workbook="sleep.xlsx", data_sheet="Data")
    models = report.build_sheets([result], None, context)
    path = make_rich_workbook(tmp_path / "sleep.xlsx")
    FileSink(path).write_sheets(models)
    pdf = convert(path, "pdf", tmp_path / "pdf", soffice=soffice)
    pages = subprocess.run(
        ["pdftotext", "-layout", str(pdf), "-"], capture_output=True, text=True, check=True
    ).stdout.split("\f")
    first = next(i for i, page in enumerate(pages) if "Question" in page and "Reading" in page)
    assert "Cautions" in pages[first] and "Keep in mind" in pages[first]
    assert "Why this test" not in pages[first] and "Effect size" not in pages[first]
    later = "".join(pages[first + 1 :])
    assert "Why this test" in later and "Effect size" in later
    assert "sleep.xlsx" in pages[first]  # the header value is shown whole


def test_leftovers_of_a_killed_run_are_removed_by_the_next_write(tmp_path: Path) -> None:
    """A temporary file whose writer is gone (or that is a day old) goes; one of a running writer stays."""
    import os
    import subprocess
    import sys
    import time

    gone = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True,
                          check=True)
    dead_pid = int(gone.stdout)
    leftover = tmp_path / f"{xlsxsink.TEMP_PREFIX}{dead_pid}-abc.xlsx"
    day_old = tmp_path / f"{xlsxsink.TEMP_PREFIX}{os.getpid()}-old.xlsx"
    running = tmp_path / f"{xlsxsink.TEMP_PREFIX}{os.getpid()}-now.xlsx"
    fresh_dead = tmp_path / f"{xlsxsink.TEMP_PREFIX}{dead_pid}-fresh.xlsx"
    for path in (leftover, day_old, running, fresh_dead):
        path.write_bytes(b"partial")
    now = time.time()
    os.utime(leftover, (now - 120, now - 120))
    os.utime(day_old, (now - 2 * 24 * 3600, now - 2 * 24 * 3600))
    removed = xlsxsink.remove_stale_temporaries(tmp_path, now=now)
    assert sorted(p.name for p in removed) == sorted([leftover.name, day_old.name])
    assert running.exists() and fresh_dead.exists()


def test_out_over_a_file_that_is_not_a_workbook_is_refused(tmp_path: Path) -> None:
    """--out naming an existing non-workbook (someone's notes saved as .xlsx) is refused; both files stay as they were."""
    source = make_rich_workbook(tmp_path / "book.xlsx")
    notes = tmp_path / "notes.xlsx"
    notes.write_text("meeting notes, not a workbook")
    before = (hashlib.sha256(source.read_bytes()).hexdigest(), notes.read_bytes())
    model = SheetModel(name="results", kind="results")
    model.put_row(0, ["Question"], "header")
    with pytest.raises(WriteError, match="exists and is not a workbook"):
        FileSink(source).write_sheets([model], out=str(notes))
    assert (hashlib.sha256(source.read_bytes()).hexdigest(), notes.read_bytes()) == before
