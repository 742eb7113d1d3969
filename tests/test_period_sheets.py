"""The periods sheet, its line charts, the hidden history sheet and sharing mode, in every back end.

The charts are checked as DrawingML (ECMA-376 Part 1, section 21.2: element
order in a line series and in an axis's scaling) and as LibreOffice reads them
back; the hidden sheet as each back end marks it. All data are invented.
"""

from __future__ import annotations

import re
import shutil
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pandas as pd
import pytest

import xlwings_standin as xs
from libreoffice import convert, soffice_fixture  # noqa: F401 - provides "soffice"
from script_loader import load_script
from statmargin import analyze
from statmargin.io.file import charts as chartxml
from statmargin.io.file.sink import FileSink
from statmargin.io.file.source import FileSource
from statmargin.io.memory import MemoryWorkbook
from statmargin.jobs.demo import packaged_file
from statmargin.jobs.workbook import plan_workbook, run_workbook
from statmargin.sheets.context import ReportContext
from statmargin.sheets.model import SheetModel
from statmargin.sheets.periods import COL, periods_sheet
from statmargin.sheets.share import suppress
from workbook_edit import sheet_rows, tool_sheet_name

C = "{http://schemas.openxmlformats.org/drawingml/2006/chart}"
A = "{http://schemas.openxmlformats.org/drawingml/2006/main}"
demo = load_script("demo_workbooks/period_demo_data.py")


def shares_result() -> Any:
    """Same-day vaccination of the invented demo, January to July, over time."""
    data = pd.DataFrame(demo.period_demo_rows(7))
    data["Visit date"] = pd.to_datetime(data["Visit date"])
    [result] = analyze(data, outcome="Vaccinated same day", period="Visit date")
    return result


@pytest.fixture(scope="module")
def model() -> SheetModel:
    return periods_sheet([shares_result()], ReportContext())


def test_periods_table_marks_counts_and_what_reveals_them(model: SheetModel) -> None:
    """Each period's n is a count; its share, interval and limits are listed as revealing it."""
    header = next(r for (r, c), cell in model.cells.items() if c == 0 and cell.value == "Period")
    for i, month in enumerate(range(1, 8)):
        row = header + 1 + i
        assert model.cells[(row, COL["period"])].value == f"2026-{month:02d}"
        assert model.cells[(row, COL["n"])].is_count and model.cells[(row, COL["n"])].value == demo.MONTH_ROWS[month]
        assert model.cells[(row, COL["value"])].style == "percent"
        assert sorted(c for _, c in model.count_dependents[(row, COL["n"])]) == [
            COL["value"], COL["ci_low"], COL["ci_high"], COL["centre"], COL["lower"], COL["upper"]]
    assert model.cells[(header + 7, COL["flag"])].value == (
        "low: beyond a 3-sigma control limit (Western Electric rule 1)")


def test_line_chart_follows_drawingml(model: SheetModel) -> None:
    """One line chart: the share with markers, the interval as two dotted lines, the limits dashed."""
    [chart] = model.charts
    root = ET.fromstring(chartxml.chart_xml(chart, "statmargin periods", model))
    line = root.find(f"{C}chart/{C}plotArea/{C}lineChart")
    assert line is not None
    series = line.findall(f"{C}ser")
    names = [s.find(f"{C}tx/{C}v").text for s in series]
    assert names == ["Share Yes", "CI low", "CI high", "Centre line", "Lower limit", "Upper limit"]
    for ser in series:  # CT_LineSer: idx, order, tx, spPr, marker, ..., cat, val, smooth
        tags = [child.tag.removeprefix(C) for child in ser]
        assert tags == ["idx", "order", "tx", "spPr", "marker", "cat", "val", "smooth"]
    dashes = [s.find(f"{C}spPr/{A}ln/{A}prstDash") for s in series]
    assert [d.get("val") if d is not None else None for d in dashes] == [None, "sysDot", "sysDot", None, "dash", "dash"]
    assert series[0].find(f"{C}marker/{C}symbol").get("val") == "circle"
    cached = [float(v.text) for v in series[0].iter(f"{C}v") if v.text and re.fullmatch(r"[\d.]+", v.text)]
    assert cached[-7:] == pytest.approx([demo.MONTH_YES[m] / demo.MONTH_ROWS[m] for m in range(1, 8)])
    scaling = root.find(f"{C}chart/{C}plotArea/{C}valAx/{C}scaling")
    assert [child.tag.removeprefix(C) for child in scaling] == ["orientation", "max", "min"]
    assert (float(scaling.find(f"{C}min").get("val")), float(scaling.find(f"{C}max").get("val"))) == (0.5, 0.9)


def test_small_periods_are_hidden_in_sharing_mode() -> None:
    """A period with a small count of either level loses its share, interval and limits; so does July-vs-June.

    The total of "Yes" (through the centre line) and the trend test's z (a weighted sum of the
    periods' counts with their n's known) are shown, so two hidden periods could be solved for:
    a third period is hidden with them (the smallest shown count beside them, July's 97 "Yes").
    """
    result = shares_result()
    hidden = suppress(result, 30)  # "No" counts: January 29 and June 28 are below 30, the others are not
    shown = {p.period: p for p in hidden.periods}
    assert [k for k, p in shown.items() if p.value is None] == ["2026-01", "2026-06", "2026-07"]
    assert shown["2026-06"].lower_limit is None and shown["2026-06"].n == 150
    assert shown["2026-05"].value == pytest.approx(113 / 151)  # invented demo: 113 of 151 in May
    [versus] = hidden.followups  # 2026-07 against 2026-06: its 2 x 2 has June's small cell
    assert versus.estimate is None and versus.p_value is None
    assert hidden.trend == result.trend and hidden.p_value == result.p_value  # the whole series' trend stays
    sheet = periods_sheet([hidden], ReportContext())
    june = next(r for (r, c), cell in sheet.cells.items() if c == 0 and cell.value == "2026-06")
    assert sheet.cells[(june, COL["value"])].value == "suppressed"


def test_hidden_history_sheet_in_memory_and_in_the_file(tmp_path: Path) -> None:
    """A hidden model becomes a hidden sheet in the memory back end and state="hidden" in the file."""
    hidden = SheetModel(name="statmargin history", kind="history", hidden=True)
    hidden.put(0, 0, "run")
    shown = SheetModel(name="statmargin results", kind="results")
    shown.put(0, 0, "x")
    book = MemoryWorkbook.from_sheets({"Data": [["a"], [1]]}, name="m.xlsx")
    book.write_sheets([shown, hidden])
    assert book.hidden_sheet_names() == ["statmargin history"]
    path = tmp_path / "f.xlsx"
    shutil.copyfile(packaged_file("statmargin_template.xlsx"), path)
    FileSink(path).write_sheets([shown, hidden])
    assert FileSource(path).hidden_sheet_names() == ["statmargin history"]
    assert openpyxl.load_workbook(path)["statmargin history"].sheet_state == "hidden"


def test_excel_bridge_hides_the_history_and_draws_line_charts() -> None:
    """Through the bridge: the history sheet is hidden, the periods sheet holds native line charts."""
    rows = [["Month", "Seen"]]
    rng = np.random.default_rng(20260803)
    for m in range(1, 7):
        rows += [[f"2026-{m:02d}", "Yes" if rng.random() < 0.7 else "No"] for _ in range(40)]
    book = xs.new_book("visits.xlsx", {"Log": rows})
    import statmargin.excel

    assert statmargin.excel.plan(book) == 0
    roles = xs.sheet(book, "statmargin roles")
    table = xs.rows(roles)
    header = next(i for i, row in enumerate(table) if row and row[0] == "Column")
    col = table[header].index("Role")
    for r in range(header + 1, len(table)):
        if table[r] and table[r][0] in ("Month", "Seen"):
            xs.type_in(roles, f"{xs.column_letters(col + 1)}{r + 1}", "period" if table[r][0] == "Month" else "outcome")
    assert statmargin.excel.run(book) == 0
    assert xs.sheet(book, "statmargin history").visible == 0
    assert xs.sheet(book, "statmargin results").visible == -1
    charts = xs.layout(xs.sheet(book, "statmargin periods"))["charts"]
    assert [c["type"] for c in charts] == ["line_markers"]
    assert statmargin.excel.run(book) == 0
    lines = [row[0] for row in xs.rows(xs.sheet(book, "statmargin results")) if row and row[0]]
    assert any(str(line).startswith("Nothing changed since the last run on ") for line in lines)


def test_periods_sheet_is_emptied_when_the_period_role_goes(tmp_path: Path) -> None:
    """After the period role is taken away, the periods sheet says so instead of keeping old series."""
    path = tmp_path / "visits.xlsx"
    demo.write_workbook(path, months=4)
    plan_workbook(path, outcome=["Vaccinated same day"], by=["Team"], period="Visit date")
    run_workbook(path)
    assert len(sheet_rows(path, tool_sheet_name(path, "periods"))) > 10
    plan_workbook(path, treat=None)  # keeps the roles; then the user clears the period role:
    from workbook_edit import set_roles

    set_roles(path, {"Visit date": {"Role": "ignore"}})
    run_workbook(path)
    rows = [row[0] for row in sheet_rows(path, tool_sheet_name(path, "periods")) if row and row[0]]
    assert rows[-1].startswith("No outcome was followed over time in this run")


def test_libreoffice_reads_the_periods_sheet_and_keeps_its_charts(soffice: str, tmp_path: Path) -> None:
    """Saved again by LibreOffice, the demo's periods sheet keeps its values and its two line charts."""
    path = tmp_path / "riverbend.xlsx"
    shutil.copyfile(packaged_file("riverbend_visits_demo.xlsx"), path)
    run_workbook(path)
    resaved = convert(path, "xlsx", tmp_path / "resaved", soffice=soffice)
    book = openpyxl.load_workbook(resaved)
    sheet = book["statmargin periods"]
    assert len(sheet._charts) == 2
    assert all(type(chart).__name__ == "LineChart" for chart in sheet._charts)
    values = [[cell.value for cell in row[:3]] for row in sheet.iter_rows()]
    at = next(i for i, row in enumerate(values) if row[0] == "Period")
    assert [row[0] for row in values[at + 1:at + 7]] == [f"2026-{m:02d}" for m in range(1, 7)]
    assert [row[2] for row in values[at + 1:at + 7]] == pytest.approx(
        [demo.MONTH_YES[m] / demo.MONTH_ROWS[m] for m in range(1, 7)], rel=1e-12)
    assert book["statmargin history"].sheet_state == "hidden"
    pdf = convert(path, "pdf", tmp_path / "pdf", soffice=soffice)
    assert pdf.read_bytes().startswith(b"%PDF-")
