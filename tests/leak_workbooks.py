"""Workbooks for the sharing-mode and history regression tests (invented data, our own scenarios).

``site_visits``: visits at clinic sites, invented. Two sites have 20 rows each;
three more rows carry look-alike spellings ("old mill", "Old  Mill") that the
reader merges into "Old Mill", and a stray "Harbor" (one row) that it does not
merge into "Harbour". Three rows are hidden by the sheet's filter. Seeded, so
every run builds the same file.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

SITES = ["Old Mill"] * 20 + ["Harbour"] * 20 + ["old mill", "Old  Mill", "Harbor"]


def site_visits(path: Path) -> Path:
    """Write the site-visits workbook (sheet 'Visits': Site, Wait, Seen) to ``path``."""
    import xlsxwriter

    rng = np.random.default_rng(1)
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Visits")
    sheet.write_row(0, 0, ["Site", "Wait", "Seen"])
    for i, site in enumerate(SITES, 1):
        sheet.write(i, 0, site)
        sheet.write(i, 1, float(rng.normal(30, 5)))
        sheet.write(i, 2, "Yes" if rng.random() < 0.7 else "No")
    sheet.autofilter(0, 0, len(SITES), 2)
    for row in (3, 4, 5):
        sheet.set_row(row, None, None, {"hidden": True})
    book.close()
    return path


def every_design(path: Path) -> Path:
    """Write an invented clinic workbook with a small group, level or period for every design (seeded).

    Sheet 'Visits' (60 rows): Site with groups of 30, 25 and 5 rows; Wait and a
    second Wait; Seen and a second Seen (two levels, 3 and 14 answers changed); Grade (A, B, C, with few
    C); Visit dates over five months, two of them with fewer than 11 rows;
    Returned, 0 or 1 (about one visit in two).
    Sheet 'Areas' (14 rows of aggregated counts): Area, Positive out of
    Screened, and person-years; area C has two rows and one positive. Sheet
    'Outreach' (4 rows): 4 positives out of 180 screened in all.
    """
    import datetime as dt

    import xlsxwriter

    rng = np.random.default_rng(7)
    n = 60
    site = ["North"] * 30 + ["South"] * 25 + ["Tiny"] * 5
    wait = rng.normal(30, 5, n).round(1)
    wait2 = rng.normal(31, 5, n).round(1)
    seen = np.where(rng.random(n) < 0.6, "Yes", "No")
    rng.random(n)  # (kept so the other columns stay as first drawn)
    grade = rng.choice(["A", "B", "C"], n, p=[0.6, 0.3, 0.1])
    days = np.sort(rng.integers(0, 150, n))
    seen[55:] = "Yes"  # every Tiny visit was seen: a small group whose other cell is zero
    # Seen again: the same answer but for 3 visits seen first and not again, and 14 the other way round.
    seen2 = seen.copy()
    yes, no = np.flatnonzero(seen == "Yes"), np.flatnonzero(seen == "No")
    seen2[yes[:3]], seen2[no[:14]] = "No", "Yes"
    book = xlsxwriter.Workbook(str(path))
    dates = book.add_format({"num_format": "yyyy-mm-dd"})
    sheet = book.add_worksheet("Visits")
    returned = (rng.random(n) < 0.5).astype(float)  # 1 for a return visit: a 0/1 column read as numbers
    sheet.write_row(0, 0, ["Site", "Wait", "Wait again", "Seen", "Seen again", "Grade", "Visit", "Returned"])
    for i in range(n):
        sheet.write_row(i + 1, 0, [site[i], float(wait[i]), float(wait2[i]), str(seen[i]), str(seen2[i]),
                                   str(grade[i])])
        sheet.write_datetime(i + 1, 6, dt.datetime(2026, 1, 1) + dt.timedelta(days=int(days[i])), dates)
        sheet.write_number(i + 1, 7, returned[i])
    areas = book.add_worksheet("Areas")
    areas.write_row(0, 0, ["Area", "Positive", "Screened", "Person-years"])
    rows = (["A"] * 6 + ["B"] * 6 + ["C"] * 2,
            [3, 2, 4, 1, 2, 3, 5, 4, 6, 3, 2, 4, 1, 0],
            [40, 35, 50, 20, 30, 45, 50, 40, 55, 35, 30, 45, 6, 5],
            [100.0, 90, 120, 60, 80, 110, 130, 100, 140, 90, 80, 120, 15, 12])
    for i, row in enumerate(zip(*rows, strict=True), start=1):
        areas.write_row(i, 0, list(row))
    outreach = book.add_worksheet("Outreach")
    outreach.write_row(0, 0, ["Team", "Positive", "Screened", "Person-years"])
    for i, row in enumerate(zip("WXYZ", [1, 2, 1, 0], [50, 60, 40, 30], [200.0, 240, 160, 120], strict=True), 1):
        outreach.write_row(i, 0, list(row))
    book.close()
    return path
