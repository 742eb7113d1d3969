"""Time and memory of reading a large sheet: bare python-calamine versus ``read_table``.

The sheet is invented: seeded random clinic-visit rows (site label, wait in
minutes, a score, a visit date, a yes/no flag) with a few blanks, missing
markers and numbers stored as text sprinkled in, as exported data often has.
It is written with xlsxwriter's constant_memory mode into a temporary folder
that is removed afterwards. Both reads run in the same run, one after the
other, each in a fresh process so that its peak resident memory
(``ru_maxrss``, which includes what calamine holds in Rust) is its own.

Usage::

    python benchmarks/read_benchmark.py            # 200,000 rows
    python benchmarks/read_benchmark.py --rows 1048575

Nothing is asserted: this prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import tempfile
import time

import numpy as np

MAX_DATA_ROWS = 1_048_575  # one row of the 1,048,576 is the header


def write_sheet(path: str, n_rows: int, seed: int = 20240601) -> None:
    """Write the invented sheet of ``n_rows`` data rows under one header row."""
    import xlsxwriter

    rng = np.random.default_rng(seed)
    sites = np.array(["North", "South", "East", "West", "Central"], dtype=object)
    site = sites[rng.integers(0, len(sites), n_rows)]
    wait = np.round(rng.gamma(2.0, 12.0, n_rows), 1)
    score = rng.normal(50.0, 10.0, n_rows)
    day = rng.integers(0, 365, n_rows)
    flag = rng.random(n_rows) < 0.3
    odd = rng.random(n_rows)
    base = dt.datetime(2024, 1, 1)

    book = xlsxwriter.Workbook(path, {"constant_memory": True})
    sheet = book.add_worksheet("Visits")
    date_format = book.add_format({"num_format": "yyyy-mm-dd"})
    sheet.write_row(0, 0, ["Site", "Wait (minutes)", "Score", "Visit date", "Follow-up"])
    for i in range(n_rows):
        r = i + 1
        sheet.write_string(r, 0, site[i])
        if odd[i] < 0.01:
            pass  # blank wait
        elif odd[i] < 0.015:
            sheet.write_string(r, 1, "NA")
        elif odd[i] < 0.02:
            sheet.write_string(r, 1, f"{wait[i]:,.1f}")
        else:
            sheet.write_number(r, 1, float(wait[i]))
        sheet.write_number(r, 2, float(score[i]))
        sheet.write_datetime(r, 3, base + dt.timedelta(days=int(day[i])), date_format)
        sheet.write_boolean(r, 4, bool(flag[i]))
    book.close()


def _child(kind: str, path: str, conn) -> None:
    """Run one read in a fresh process; send back (seconds, peak RSS MiB, RSS MiB before)."""
    import resource

    func = bare_calamine if kind == "bare" else statmargin_read
    if kind != "bare":
        import statmargin.read  # noqa: F401 - import cost is not reading cost
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    start = time.perf_counter()
    func(path)
    seconds = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    conn.send((seconds, peak, before))
    conn.close()


def measure(label: str, kind: str, path: str) -> tuple[float, float]:
    """Time one read and its peak resident memory in a fresh process (Linux ru_maxrss in KiB)."""
    import multiprocessing

    context = multiprocessing.get_context("spawn")
    receive, send = context.Pipe(duplex=False)
    process = context.Process(target=_child, args=(kind, path, send))
    process.start()
    seconds, peak, before = receive.recv()
    process.join()
    grown = peak - before
    print(
        f"{label:<28} {seconds:8.2f} s   peak RSS {peak:8.1f} MiB (+{grown:.1f} MiB while reading)"
    )
    return seconds, grown


def bare_calamine(path: str) -> None:
    """Open the sheet and iterate every row, doing nothing with the values."""
    import python_calamine

    book = python_calamine.CalamineWorkbook.from_path(path)
    count = 0
    for _ in book.get_sheet_by_name("Visits").iter_rows():
        count += 1
    book.close()


def statmargin_read(path: str) -> None:
    """Read all columns into a typed table."""
    from statmargin.read.reader import read_table

    table = read_table(path, sheet="Visits")
    assert table.n_rows_read > 0  # a sanity check on the run, not a timing assertion


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=200_000, help="data rows (max 1,048,575)")
    args = parser.parse_args()
    n_rows = max(1, min(args.rows, MAX_DATA_ROWS))
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "invented_visits.xlsx")
        start = time.perf_counter()
        write_sheet(path, n_rows)
        print(
            f"wrote {n_rows:,} rows x 5 columns in {time.perf_counter() - start:.1f} s "
            f"({os.path.getsize(path) / 2**20:.1f} MiB file)"
        )
        bare_s, bare_mb = measure("bare calamine iter_rows", "bare", path)
        read_s, read_mb = measure("statmargin read_table", "read", path)
        print(f"time ratio read_table / bare calamine: {read_s / bare_s:.2f}")
        print(f"memory growth while reading: {read_mb:.1f} MiB vs {bare_mb:.1f} MiB")


if __name__ == "__main__":
    main()
