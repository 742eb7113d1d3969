"""LibreOffice, as an independent spreadsheet program, reads what FileSink wrote.

These tests are skipped without LibreOffice and fail instead when
``STATMARGIN_REQUIRE_LIBREOFFICE=1`` (see tests/libreoffice.py).
"""

from __future__ import annotations

import csv
import re
from pathlib import Path

import openpyxl
import pytest

import libreoffice
from libreoffice import convert, sheet_to_csv, soffice_fixture  # noqa: F401 - provides "soffice"
from statmargin.io.file.sink import FileSink
from workbook_fixtures import DATA_SHEET, SECOND_SHEET, make_rich_workbook, sample_tool_models


@pytest.fixture
def written(tmp_path: Path) -> Path:
    """The rich fixture workbook with the sample tool sheets written into it (twice)."""
    path = make_rich_workbook(tmp_path / "visits.xlsx")
    FileSink(path).write_sheets(sample_tool_models())
    FileSink(path).write_sheets(sample_tool_models())
    return path


def _rows(path: Path) -> list[list[str]]:
    with path.open(newline="", encoding="utf-8") as handle:
        return list(csv.reader(handle))


def test_results_sheet_values_in_csv(written: Path, soffice: str, tmp_path: Path) -> None:
    """LibreOffice exports the results sheet (third) with our stored values and text."""
    rows = _rows(sheet_to_csv(written, 3, tmp_path / "raw", soffice=soffice))
    assert rows[0][0] == "Results (invented example)"
    assert rows[2][:3] == ["Comparison", "p-value", "Effect"]
    assert float(rows[3][1]) == pytest.approx(0.000123456789, rel=1e-12)
    assert float(rows[3][2]) == pytest.approx(1.23456789, rel=1e-12)
    assert rows[4][3] == "=not a formula"  # text, not evaluated as a formula
    assert rows[3][3].startswith("Waits differ between sites.")


def test_results_sheet_as_shown_uses_our_formats(
    written: Path, soffice: str, tmp_path: Path
) -> None:
    """Displayed values follow our formats: <0.001 for tiny p-values, three decimals, one-decimal percent."""
    rows = _rows(sheet_to_csv(written, 3, tmp_path / "shown", as_shown=True, soffice=soffice))
    assert rows[3][1] == "<0.001"
    assert rows[4][1] == "0.042"
    assert rows[3][2] == "1.235"
    assert rows[4][2] == "37.5%"


def test_charts_sheet_values_in_csv(written: Path, soffice: str, tmp_path: Path) -> None:
    """The charts sheet (fourth) holds the bin labels and counts the charts draw."""
    rows = _rows(sheet_to_csv(written, 4, tmp_path / "charts", soffice=soffice))
    assert [r[1] for r in rows[4:9]] == ["20-30", "30-40", "40-50", "50-60", "60-70"]
    assert [float(r[2]) for r in rows[4:9]] == [3, 2, 2, 1, 1]


def test_pdf_export(written: Path, soffice: str, tmp_path: Path) -> None:
    """LibreOffice renders the whole workbook, charts included, to a PDF."""
    pdf = convert(written, "pdf", tmp_path / "pdf", soffice=soffice)
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF-")
    pages = re.findall(rb"/Type\s*/Page(?![s\w])", data)
    assert len(pages) >= 4  # at least one page per sheet


def test_libreoffice_keeps_our_charts_and_sheets(
    written: Path, soffice: str, tmp_path: Path
) -> None:
    """Saved again by LibreOffice, the workbook still has our sheets and both charts (read by openpyxl)."""
    resaved = convert(written, "xlsx", tmp_path / "resaved", soffice=soffice)
    book = openpyxl.load_workbook(resaved)
    assert book.sheetnames == [DATA_SHEET, SECOND_SHEET, "results", "charts"]
    assert len(book["charts"]._charts) == 2
    assert book["results"]["B4"].value == pytest.approx(0.000123456789, rel=1e-12)


def test_missing_libreoffice_skips_unless_required(monkeypatch) -> None:
    """Without LibreOffice the helper skips, but fails when STATMARGIN_REQUIRE_LIBREOFFICE=1."""
    monkeypatch.setattr(libreoffice, "find_soffice", lambda: None)
    monkeypatch.delenv(libreoffice.REQUIRE_ENV, raising=False)
    with pytest.raises(pytest.skip.Exception):
        libreoffice.require_soffice()
    monkeypatch.setenv(libreoffice.REQUIRE_ENV, "1")
    with pytest.raises(pytest.fail.Exception, match="required"):
        libreoffice.require_soffice()


def test_markers_survive_a_libreoffice_save(written: Path, soffice: str, tmp_path: Path) -> None:
    """After LibreOffice saves the workbook, a new write still finds and replaces our sheets."""
    resaved = convert(written, "xlsx", tmp_path / "resaved", soffice=soffice)
    report = FileSink(resaved).write_sheets(sample_tool_models())
    assert report.replaced == ["results", "charts"] and report.renamed == []
    assert openpyxl.load_workbook(resaved).sheetnames == [
        DATA_SHEET,
        SECOND_SHEET,
        "results",
        "charts",
    ]
