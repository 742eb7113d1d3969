"""Builders for test workbooks that carry many kinds of user content.

All data here is invented for tests (an invented outreach clinic's visit log);
it describes no real programme or person.
"""

from __future__ import annotations

import datetime as dt
import struct
import zlib
from pathlib import Path

import xlsxwriter

DATA_SHEET = "Visits"
SECOND_SHEET = "Notes"
TABLE_NAME = "VisitLog"
DEFINED_NAME = "TargetWait"
# Invented monitoring data: clinic site, visit date, wait in minutes, attended follow-up.
VISITS = [
    ("North", dt.date(2026, 3, 2), 34.5, "yes"),
    ("North", dt.date(2026, 3, 3), 41.0, "no"),
    ("North", dt.date(2026, 3, 5), 28.25, "yes"),
    ("South", dt.date(2026, 3, 2), 52.0, "no"),
    ("South", dt.date(2026, 3, 4), 47.75, "yes"),
    ("South", dt.date(2026, 3, 6), 61.5, "no"),
    ("East", dt.date(2026, 3, 3), 22.0, "yes"),
    ("East", dt.date(2026, 3, 5), 30.5, "yes"),
    ("East", dt.date(2026, 3, 6), 26.0, "no"),
]


def tiny_png(width: int = 4, height: int = 3) -> bytes:
    """A small valid PNG (solid slate colour), built with zlib and struct."""

    def chunk(kind: bytes, data: bytes) -> bytes:
        body = kind + data
        return (
            struct.pack(">I", len(data)) + body + struct.pack(">I", zlib.crc32(body) & 0xFFFFFFFF)
        )

    header = struct.pack(">IIBBBBB", width, height, 8, 2, 0, 0, 0)  # 8-bit RGB
    rows = b"".join(b"\x00" + bytes((79, 98, 114)) * width for _ in range(height))
    return (
        b"\x89PNG\r\n\x1a\n"
        + chunk(b"IHDR", header)
        + chunk(b"IDAT", zlib.compress(rows))
        + chunk(b"IEND", b"")
    )


def make_rich_workbook(path: str | Path, *, macro: bool = False) -> Path:
    """Write a workbook full of user content that a writer must leave alone.

    Parameters
    ----------
    path : str or Path
        Where to write; the suffix is replaced by .xlsm when ``macro`` is true.
    macro : bool
        Write a macro workbook with a small fake ``vbaProject.bin``.

    Returns
    -------
    Path
        The written file.

    Notes
    -----
    Content: a data sheet whose data is an Excel table, a native chart beside
    it, a PNG image, cell comments, a data validation list, conditional
    formatting, a workbook-level defined name, a formula with a cached value,
    and a second sheet with text.
    """
    path = Path(path)
    if macro:
        path = path.with_suffix(".xlsm")
    png = path.with_name(path.stem + "-image.png")
    png.write_bytes(tiny_png())
    workbook = xlsxwriter.Workbook(str(path))
    try:
        sheet = workbook.add_worksheet(DATA_SHEET)
        date_format = workbook.add_format({"num_format": "yyyy-mm-dd"})
        sheet.add_table(
            0,
            0,
            len(VISITS),
            3,
            {
                "name": TABLE_NAME,
                "columns": [
                    {"header": "Site"},
                    {"header": "Visit date"},
                    {"header": "Wait minutes"},
                    {"header": "Follow-up"},
                ],
            },
        )
        for r, (site, day, wait, follow) in enumerate(VISITS, start=1):
            sheet.write_string(r, 0, site)
            sheet.write_datetime(r, 1, dt.datetime(day.year, day.month, day.day), date_format)
            sheet.write_number(r, 2, wait)
            sheet.write_string(r, 3, follow)
        total_row = len(VISITS) + 2
        sheet.write_string(total_row, 1, "Mean wait")
        mean_wait = sum(v[2] for v in VISITS) / len(VISITS)
        sheet.write_formula(total_row, 2, f"=AVERAGE(C2:C{len(VISITS) + 1})", None, mean_wait)
        sheet.write_comment(0, 2, "Minutes from arrival to being seen (invented).")
        sheet.write_comment(total_row, 2, "Cached value written by the fixture.")
        sheet.data_validation(1, 3, len(VISITS), 3, {"validate": "list", "source": ["yes", "no"]})
        sheet.conditional_format(
            1,
            2,
            len(VISITS),
            2,
            {
                "type": "cell",
                "criteria": ">",
                "value": 50,
                "format": workbook.add_format({"bold": True}),
            },
        )
        chart = workbook.add_chart({"type": "column"})
        chart.add_series(
            {
                "name": "Wait",
                "categories": [DATA_SHEET, 1, 0, len(VISITS), 0],
                "values": [DATA_SHEET, 1, 2, len(VISITS), 2],
            }
        )
        sheet.insert_chart("F2", chart)
        sheet.insert_image("F20", str(png))
        workbook.define_name(DEFINED_NAME, "=45")
        workbook.define_name(f"'{DATA_SHEET}'!LocalNote", f"='{DATA_SHEET}'!$A$1")

        notes = workbook.add_worksheet(SECOND_SHEET)
        notes.write_string(0, 0, "Invented workbook for statmargin tests.")
        notes.write_string(1, 0, "=not a formula, just text")
        if macro:
            vba = path.with_name(path.stem + "-vbaProject.bin")
            vba.write_bytes(b"statmargin fake vba project " + bytes(range(256)) * 4)
            workbook.add_vba_project(str(vba))
    finally:
        workbook.close()
    return path


def make_workbook_with_user_sheet(path: str | Path, sheet_name: str) -> Path:
    """A small workbook whose second sheet is a user sheet named ``sheet_name``."""
    path = Path(path)
    workbook = xlsxwriter.Workbook(str(path))
    try:
        data = workbook.add_worksheet(DATA_SHEET)
        data.write_row(0, 0, ["Site", "Wait minutes"])
        for r, (site, _, wait, _) in enumerate(VISITS, start=1):
            data.write_row(r, 0, [site, wait])
        mine = workbook.add_worksheet(sheet_name)
        mine.write_string(0, 0, "My own notes (invented).")
    finally:
        workbook.close()
    return path


def sample_tool_models():
    """Two tool sheets exercising every writer feature (all values invented).

    Returns
    -------
    list of SheetModel
        A "results" sheet (numbers, p-values, wrapped text, links, a dropdown,
        a formula-looking string) and a "charts" sheet with one chart of each kind.
    """
    from statmargin.sheets.model import Chart, ChartSeries, SheetModel, Validation

    results = SheetModel(
        name="results", kind="results", widths={0: 28, 1: 12, 2: 12, 3: 50}, freeze=(3, 0)
    )
    results.put(0, 0, "Results (invented example)", "title")
    results.merged.append("A1:D1")
    results.put_row(2, ["Comparison", "p-value", "Effect", "Reading"], "header")
    results.put(3, 0, "Wait minutes by site")
    results.put(3, 1, 0.000123456789, "p_value")
    results.put(3, 2, 1.23456789, "number")
    results.put(3, 3, "Waits differ between sites. " * 4, "wrap")
    results.put(4, 0, "Follow-up by site")
    results.put(4, 1, 0.0421, "p_value")
    results.put(4, 2, 0.375, "percent")
    results.put(4, 3, "=not a formula", "caution")
    results.put(5, 0, "See the data", "link", link="'Visits'!C2")
    results.put(6, 0, "See the charts", "link", link="{charts}!A1")
    results.put(7, 0, "Keep this row?", "label")
    results.put(7, 1, "yes", "input")
    results.validations.append(Validation("B8", ["yes", "no"], prompt="Choose yes or no"))

    charts = SheetModel(name="charts", kind="charts", widths={1: 14})
    charts.put(0, 0, "Charts (invented example)", "title")
    charts.put_row(3, ["", "Bin", "Visits", "Follow-up yes", "Follow-up no"], "header")
    bins = ["20-30", "30-40", "40-50", "50-60", "60-70"]
    counts = [3, 2, 2, 1, 1]
    for i, (label, count) in enumerate(zip(bins, counts, strict=True)):
        charts.put(4 + i, 1, label)
        charts.put(4 + i, 2, count, "integer")
        charts.put(4 + i, 3, 0.6, "percent")
        charts.put(4 + i, 4, 0.4, "percent")
    charts.charts.append(
        Chart(
            "column",
            "Wait minutes",
            "$B$5:$B$9",
            [ChartSeries("Visits", "$C$5:$C$9")],
            "G2",
            x_title="Minutes",
            y_title="Visits",
        )
    )
    charts.charts.append(
        Chart(
            "percent_bar",
            "Follow-up by bin",
            "$B$5:$B$9",
            [ChartSeries("yes", "$D$5:$D$9"), ChartSeries("no", "$E$5:$E$9")],
            "G20",
        )
    )
    charts.put(10, 1, "Back to results", "link", link="{results}!A3")
    return [results, charts]
