"""Write a seeded, realistic monitoring workbook of any size for the benchmarks.

The data are invented: an outreach-clinic visit log of our own making (no real
program, place or person). Twelve columns, as a monitoring export has them:

========================  ==========================================================
``Record ID``             whole numbers 1..N (an identifier)
``Visit date``            dates in 2023-2025, stored as day numbers with a date format
``Site``                  12 invented town names (categorical)
``Team``                  5 outreach teams (categorical)
``Shift``                 ``Day`` / ``Evening`` (categorical, 2 levels)
``Wait (minutes)``        gamma, right-skewed, 1 decimal
``Age (years)``           normal, clipped to 16-95, whole numbers
``Systolic BP (mmHg)``    normal, whole numbers
``Cost (USD)``            log-normal, heavy right tail, 2 decimals
``Distance (km)``         exponential, 2 decimals
``Satisfaction score``    beta on 0-100, full precision
``Follow-up done``        0/1 outcome
========================  ==========================================================

The six continuous columns have 5-20 % blank cells and a few dirty cells each
("NA", "n/a", "-", "<5", numbers stored as text such as "1,250", error cells
``#N/A`` and ``#DIV/0!``, stray text "see notes"), the mix exported data has.
Site and team differ a little in their means so some tests find something.

The package is written directly (``zipfile``, no spreadsheet library), the way a
spreadsheet program writes one: every text in the shared-strings part (``t="s"``
cells), cell and row addresses (``r``) on every cell and row, a date number
format for the dates, error cells typed ``t="e"``. Rows are made and compressed
in chunks, so a 1,048,575-row workbook takes little memory. The same seed and
size always give the same cells.

Usage::

    python benchmarks/generate.py 100000 /tmp/visits-100k.xlsx
"""

from __future__ import annotations

import argparse
import os
import time
import zipfile
from collections.abc import Iterator
from itertools import repeat
from pathlib import Path

import numpy as np

MAX_DATA_ROWS = 1_048_575  # one row of the sheet's 1,048,576 holds the headers
SEED = 20260301
CHUNK_ROWS = 50_000
SHEET_NAME = "Visits"

SITES = [
    "Amberley", "Brookmoor", "Calder Ridge", "Dunmore", "Eastholm", "Fernbank",
    "Glenwick", "Harrowgate", "Ivybridge", "Juniper Flats", "Kestrel Bay", "Larchfield",
]
TEAMS = ["Team A", "Team B", "Team C", "Team D", "Team E"]
SHIFTS = ["Day", "Evening"]

HEADERS = [
    "Record ID", "Visit date", "Site", "Team", "Shift",
    "Wait (minutes)", "Age (years)", "Systolic BP (mmHg)", "Cost (USD)", "Distance (km)",
    "Satisfaction score", "Follow-up done",
]
CATEGORICAL = ["Site", "Team", "Shift"]
CONTINUOUS = HEADERS[5:11]
OUTCOME = "Follow-up done"
# Roles for ``statmargin plan``: every measure by every grouping column (7 x 3 = 21 analyses).
OUTCOMES = [*CONTINUOUS, OUTCOME]
BY = CATEGORICAL

# Texts that stand in dirty cells of numeric columns; each is a shared string.
DIRTY_TEXTS = ["NA", "n/a", "-", "<5", "1,250", "2 400", "see notes"]
ERROR_CODES = ["#N/A", "#DIV/0!"]
BLANK_SHARE = {  # share of blank cells in each continuous column
    "Wait (minutes)": 0.05, "Age (years)": 0.08, "Systolic BP (mmHg)": 0.12,
    "Cost (USD)": 0.15, "Distance (km)": 0.20, "Satisfaction score": 0.10,
}
DIRTY_SHARE = 0.002  # share of dirty (text or error) cells in each continuous column

_STRINGS = [*HEADERS, *SITES, *TEAMS, *SHIFTS, *DIRTY_TEXTS]
_SST = {text: i for i, text in enumerate(_STRINGS)}
_LETTERS = [chr(65 + i) for i in range(len(HEADERS))]
_EPOCH_2023 = 44927  # 2023-01-01 as an Excel day number (1900 system)

_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_RELNS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_PKGREL = "http://schemas.openxmlformats.org/package/2006/relationships"
_HEAD = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def _static_parts() -> dict[str, str]:
    """The small package parts: content types, relationships, workbook, styles."""
    ct = "application/vnd.openxmlformats-officedocument"
    return {
        "[Content_Types].xml": _HEAD
        + '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
        '<Default Extension="xml" ContentType="application/xml"/>'
        f'<Override PartName="/xl/workbook.xml" ContentType="{ct}.spreadsheetml.sheet.main+xml"/>'
        f'<Override PartName="/xl/worksheets/sheet1.xml" ContentType="{ct}.spreadsheetml.worksheet+xml"/>'
        f'<Override PartName="/xl/styles.xml" ContentType="{ct}.spreadsheetml.styles+xml"/>'
        f'<Override PartName="/xl/sharedStrings.xml" ContentType="{ct}.spreadsheetml.sharedStrings+xml"/>'
        "</Types>",
        "_rels/.rels": _HEAD
        + f'<Relationships xmlns="{_PKGREL}">'
        f'<Relationship Id="rId1" Type="{_RELNS}/officeDocument" Target="xl/workbook.xml"/>'
        "</Relationships>",
        "xl/workbook.xml": _HEAD
        + f'<workbook xmlns="{_NS}" xmlns:r="{_RELNS}">'
        f'<sheets><sheet name="{SHEET_NAME}" sheetId="1" r:id="rId1"/></sheets></workbook>',
        "xl/_rels/workbook.xml.rels": _HEAD
        + f'<Relationships xmlns="{_PKGREL}">'
        f'<Relationship Id="rId1" Type="{_RELNS}/worksheet" Target="worksheets/sheet1.xml"/>'
        f'<Relationship Id="rId2" Type="{_RELNS}/styles" Target="styles.xml"/>'
        f'<Relationship Id="rId3" Type="{_RELNS}/sharedStrings" Target="sharedStrings.xml"/>'
        "</Relationships>",
        "xl/styles.xml": _HEAD
        + f'<styleSheet xmlns="{_NS}">'
        '<fonts count="2"><font><sz val="11"/><name val="Calibri"/></font>'
        '<font><b/><sz val="11"/><name val="Calibri"/></font></fonts>'
        '<fills count="2"><fill><patternFill patternType="none"/></fill>'
        '<fill><patternFill patternType="gray125"/></fill></fills>'
        '<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
        '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>'
        '<cellXfs count="3"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>'
        '<xf numFmtId="14" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
        '<xf numFmtId="0" fontId="1" fillId="0" borderId="0" xfId="0" applyFont="1"/></cellXfs>'
        '<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>'
        "</styleSheet>",
    }


def _shared_strings(references: int) -> str:
    items = "".join(f"<si><t>{_escape(s)}</t></si>" for s in _STRINGS)
    return (
        _HEAD + f'<sst xmlns="{_NS}" count="{references}" uniqueCount="{len(_STRINGS)}">{items}</sst>'
    )


def _numbers_as_text(values: np.ndarray, decimals: int | None) -> list[str]:
    """Cell values as a spreadsheet program stores them (shortest round-trip text)."""
    if decimals is not None:
        values = np.round(values, decimals)
    return [repr(v) if v != int(v) else str(int(v)) for v in values.tolist()]


def _continuous(rng: np.random.Generator, n: int, site: np.ndarray, team: np.ndarray) -> dict[str, tuple]:
    """Values, shown texts and cell kinds (0 number, 1 blank, 2 dirty text, 3 error) per measure."""
    shift = (site - 5.5) / 5.5  # a small site effect, so some tests find something
    made = {
        "Wait (minutes)": (rng.gamma(2.0, 12.0, n) * (1 + 0.15 * shift), 1),
        "Age (years)": (np.clip(rng.normal(47 + 2 * (team == 2), 16, n), 16, 95), 0),
        "Systolic BP (mmHg)": (rng.normal(128 + 3 * shift, 17, n), 0),
        "Cost (USD)": (rng.lognormal(4.2 + 0.1 * shift, 0.9, n), 2),
        "Distance (km)": (rng.exponential(6.0, n), 2),
        "Satisfaction score": (100 * rng.beta(5 - 0.5 * (team == 4), 2, n), None),
    }
    out = {}
    for name, (values, decimals) in made.items():
        u = rng.random(n)
        kind = np.zeros(n, dtype=np.int8)
        kind[u < BLANK_SHARE[name]] = 1
        dirty = (u >= BLANK_SHARE[name]) & (u < BLANK_SHARE[name] + DIRTY_SHARE)
        kind[dirty] = np.where(rng.random(n)[dirty] < 0.8, 2, 3)
        which = rng.integers(0, 1 << 16, n)
        out[name] = (_numbers_as_text(values, decimals), kind, which)
    return out


def _chunk_xml(rng: np.random.Generator, first: int, n: int) -> tuple[str, int]:
    """Sheet XML for data rows ``first`` .. ``first + n - 1`` (1-based sheet rows); and its string count."""
    rows = range(first, first + n)
    site = rng.integers(0, len(SITES), n)
    team = rng.integers(0, len(TEAMS), n)
    shift = (rng.random(n) < 0.35).astype(np.int64)
    day = rng.integers(0, 3 * 365, n) + _EPOCH_2023
    done = (rng.random(n) < 0.55 + 0.02 * (site % 3)).astype(np.int64)
    cells: list[Iterator[str] | list[str]] = []
    cells.append([f'<c r="A{r}"><v>{r - 1}</v></c>' for r in rows])
    cells.append([f'<c r="B{r}" s="1"><v>{d}</v></c>' for r, d in zip(rows, day.tolist(), strict=True)])
    n_strings = 3 * n
    for letter, codes, offset in (("C", site, _SST[SITES[0]]), ("D", team, _SST[TEAMS[0]]),
                                  ("E", shift, _SST[SHIFTS[0]])):
        cells.append([f'<c r="{letter}{r}" t="s"><v>{offset + c}</v></c>'
                      for r, c in zip(rows, codes.tolist(), strict=True)])
    measures = _continuous(rng, n, site, team)
    dirty0 = _SST[DIRTY_TEXTS[0]]
    for j, name in enumerate(CONTINUOUS):
        letter = _LETTERS[5 + j]
        texts, kinds, which = measures[name]
        column = []
        for r, text, kind, w in zip(rows, texts, kinds.tolist(), which.tolist(), strict=True):
            if kind == 0:
                column.append(f'<c r="{letter}{r}"><v>{text}</v></c>')
            elif kind == 1:
                column.append("")
            elif kind == 2:
                column.append(f'<c r="{letter}{r}" t="s"><v>{dirty0 + w % len(DIRTY_TEXTS)}</v></c>')
                n_strings += 1
            else:
                column.append(f'<c r="{letter}{r}" t="e"><v>{ERROR_CODES[w % 2]}</v></c>')
        cells.append(column)
    cells.append([f'<c r="L{r}"><v>{d}</v></c>' for r, d in zip(rows, done.tolist(), strict=True)])
    opens = (f'<row r="{r}" spans="1:12">' for r in rows)
    xml = "".join(map("".join, zip(opens, *cells, repeat("</row>"), strict=False)))
    return xml, n_strings


def _entry(name: str) -> zipfile.ZipInfo:
    """A package entry with a fixed time stamp, so the same seed gives the same bytes."""
    info = zipfile.ZipInfo(name, date_time=(2026, 3, 1, 0, 0, 0))
    info.compress_type = zipfile.ZIP_DEFLATED
    return info


def write_workbook(path: str | os.PathLike[str], n_rows: int, seed: int = SEED) -> Path:
    """Write the invented visit log with ``n_rows`` data rows under one header row.

    Parameters
    ----------
    path : str or os.PathLike
        Where to write the .xlsx file (overwritten).
    n_rows : int
        Data rows, 1 to 1,048,575.
    seed : int
        Seed of the random values; the same seed and size give the same cells.

    Returns
    -------
    Path
        The file written.
    """
    if not 1 <= n_rows <= MAX_DATA_ROWS:
        raise ValueError(f"n_rows must be 1..{MAX_DATA_ROWS}, got {n_rows}")
    target = Path(path)
    rng = np.random.default_rng(seed)
    last = n_rows + 1
    header = '<row r="1" spans="1:12">' + "".join(
        f'<c r="{letter}1" s="2" t="s"><v>{_SST[text]}</v></c>'
        for letter, text in zip(_LETTERS, HEADERS, strict=True)
    ) + "</row>"
    references = len(HEADERS)
    tmp = target.with_name(target.name + ".part")
    with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED, compresslevel=6) as archive:
        for name, text in _static_parts().items():
            archive.writestr(_entry(name), text)
        with archive.open(_entry("xl/worksheets/sheet1.xml"), "w", force_zip64=True) as sheet:
            sheet.write(
                (_HEAD + f'<worksheet xmlns="{_NS}" xmlns:r="{_RELNS}">'
                 f'<dimension ref="A1:L{last}"/>'
                 '<sheetViews><sheetView workbookViewId="0"><pane ySplit="1" topLeftCell="A2" '
                 'activePane="bottomLeft" state="frozen"/></sheetView></sheetViews>'
                 '<sheetFormatPr defaultRowHeight="15"/><sheetData>' + header).encode()
            )
            for first in range(2, last + 1, CHUNK_ROWS):
                xml, count = _chunk_xml(rng, first, min(CHUNK_ROWS, last + 1 - first))
                sheet.write(xml.encode())
                references += count
            sheet.write(b"</sheetData></worksheet>")
        archive.writestr(_entry("xl/sharedStrings.xml"), _shared_strings(references))
    os.replace(tmp, target)
    return target


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("rows", type=int, help=f"data rows (1..{MAX_DATA_ROWS:,})")
    parser.add_argument("path", help="the .xlsx file to write")
    parser.add_argument("--seed", type=int, default=SEED)
    args = parser.parse_args()
    start = time.perf_counter()
    written = write_workbook(args.path, args.rows, seed=args.seed)
    size = written.stat().st_size / 2**20
    print(f"wrote {args.rows:,} rows x {len(HEADERS)} columns to {written} "
          f"({size:.1f} MiB) in {time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
