"""Calls, time and memory of the Excel bridge, measured on the in-memory xlwings stand-in.

Real Excel is not available here, so what is measured is what the bridge itself
controls: how many xlwings calls it makes (each one a round trip to Excel), and
the Python-side time and peak memory of reading a sheet, as a ratio against the
same ``read_table`` over a plain list of rows in the same run (the baseline).
The writing half counts the calls needed to write the demo workbooks' sheets.

The data are invented: seeded clinic-visit rows (site, wait, score, a flag) with
a few blanks. Usage::

    python benchmarks/excel_bridge_benchmark.py               # 200,000 rows
    python benchmarks/excel_bridge_benchmark.py --rows 1048575

Nothing is asserted: this prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))


def rows(n: int, seed: int = 20240601) -> list[list[object]]:
    rng = np.random.default_rng(seed)
    sites = ["North", "South", "East", "West", "Central"]
    out: list[list[object]] = [["Site", "Wait (minutes)", "Score", "Follow-up"]]
    wait = np.round(rng.gamma(2.0, 12.0, n), 1)
    score = rng.normal(50.0, 10.0, n)
    pick = rng.integers(0, 5, n)
    blank = rng.random(n) < 0.01
    for i in range(n):
        out.append([sites[pick[i]], None if blank[i] else float(wait[i]), float(score[i]), "yes" if i % 3 else "no"])
    return out


def measure(label: str, read) -> tuple[float, int]:
    tracemalloc.start()
    started = time.perf_counter()
    table = read()
    seconds = time.perf_counter() - started
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"  {label:<28} {seconds:7.2f} s   peak {peak / 2**20:7.1f} MiB   {len(table.rows):,} rows")
    return seconds, peak


def read_half(n: int) -> None:
    import xlwings_standin as xs
    from statmargin.io.excel.book import ExcelBook
    from statmargin.io.excel.udf import CellsSource
    from statmargin.read.reader import read_table

    data = rows(n)
    book = xs.new_book("bench.xlsx", {"Visits": data})
    print(f"Reading {n:,} rows x 4 columns")
    base_s, base_m = measure("baseline (list of rows)", lambda: read_table(None, source=CellsSource(data), sheet="cells"))
    xs.recorder(book).calls.clear()
    bridge_s, bridge_m = measure("bridge (ExcelBook)", lambda: read_table(None, source=ExcelBook(book), sheet="Visits"))
    calls = xs.recorder(book).calls
    print(f"  ratio bridge / baseline: time {bridge_s / base_s:.2f}, peak memory {bridge_m / base_m:.2f}")
    print(f"  xlwings calls: {sum(calls.values())} in all, {calls['Range.value']} bulk reads of values")


def write_half() -> None:
    import statmargin.excel
    import xlwings_standin as xs

    print("Writing the demo workbooks' sheets (xlwings calls per run)")
    folder = Path(tempfile.mkdtemp())
    try:
        for name in ("inspections_demo.xlsx", "outreach_demo.xlsx"):
            copy = folder / name
            shutil.copyfile(ROOT / "demo_workbooks" / name, copy)
            book = xs.load(copy)
            xs.recorder(book).calls.clear()
            started = time.perf_counter()
            code = statmargin.excel.run(book)
            seconds = time.perf_counter() - started
            calls = xs.recorder(book).calls
            cells = sum(len(xs.values(xs.sheet(book, s))) for s in xs.markers(book))
            print(f"  {name:<24} exit {code}  {sum(calls.values()):5d} calls for {cells:,} cells"
                  f" on {len(xs.markers(book))} tool sheets  ({seconds:.2f} s in Python)")
            for member, count in calls.most_common(6):
                print(f"      {member:<28} {count}")
    finally:
        shutil.rmtree(folder)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=200_000)
    args = parser.parse_args()
    read_half(args.rows)
    write_half()
    return 0


if __name__ == "__main__":
    sys.exit(main())
