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
