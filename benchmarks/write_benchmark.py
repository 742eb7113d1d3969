"""Time FileSink.write_sheets against an openpyxl load-and-save of the same large workbook.

The workbook is generated in a temporary folder (invented numbers, never
committed). Usage: ``python benchmarks/write_benchmark.py [target_megabytes]``.
Prints both times and their ratio.
"""

from __future__ import annotations

import argparse
import random
import shutil
import tempfile
import time
from pathlib import Path

import openpyxl
import xlsxwriter

from statmargin.io.file.sink import FileSink
from statmargin.sheets.model import SheetModel

SITES = ["North", "South", "East", "West", "Central"]


def make_large_workbook(path: Path, target_mb: float) -> None:
    """Write invented visit rows until the file is about ``target_mb`` megabytes."""
    rng = random.Random(20261202)
    # About 49 bytes per row compressed for this mix of numbers and strings (measured).
    rows = int(target_mb * 1_000_000 / 49)
    book = xlsxwriter.Workbook(str(path), {"constant_memory": True})
    sheet = book.add_worksheet("Visits")
    sheet.write_row(0, 0, ["Site", "Wait minutes", "Age", "Score", "Note", "Visit id"])
    for r in range(1, rows + 1):
        sheet.write_row(
            r,
            0,
            [
                rng.choice(SITES),
                round(rng.gauss(40, 12), 2),
                rng.randint(18, 90),
                rng.random(),
                f"note {rng.randint(0, 10**9)}",
                r,
            ],
        )
    book.close()


def results_model() -> SheetModel:
    model = SheetModel("results", "results")
    model.put_row(0, ["Comparison", "p-value", "Effect"], "header")
    for r in range(1, 41):
        model.put_row(r, [f"Comparison {r}", 0.001 * r, 0.1 * r])
    return model


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("target_megabytes", nargs="?", type=float, default=20.0,
                        help="size of the generated workbook (default 20)")
    target_mb = parser.parse_args().target_megabytes
    folder = Path(tempfile.mkdtemp(prefix="statmargin-bench-"))
    try:
        source = folder / "large.xlsx"
        make_large_workbook(source, target_mb)
        size_mb = source.stat().st_size / 1e6
        ours = folder / "ours.xlsx"
        shutil.copy(source, ours)
        start = time.perf_counter()
        FileSink(ours).write_sheets([results_model()])
        ours_s = time.perf_counter() - start

        theirs = folder / "openpyxl.xlsx"
        start = time.perf_counter()
        book = openpyxl.load_workbook(source)
        book.save(theirs)
        openpyxl_s = time.perf_counter() - start
        print(f"workbook size: {size_mb:.1f} MB")
        print(f"FileSink.write_sheets: {ours_s:.2f} s")
        print(f"openpyxl load + save: {openpyxl_s:.2f} s")
        print(f"ratio (openpyxl / FileSink): {openpyxl_s / ours_s:.1f}")
    finally:
        shutil.rmtree(folder, ignore_errors=True)


if __name__ == "__main__":
    main()
