"""Time of refreshing a folder of workbooks one by one versus in parallel worker processes.

The workbooks are invented: seeded visit logs (date, team, same-day yes/no, wait
in minutes) written with xlsxwriter's constant_memory mode; one is written and
planned (roles sheet), the rest are byte copies. Each timing starts from fresh
copies, so every run does the same work. Both timings run in the same run:
``--jobs 1`` first (the baseline), then ``--jobs N``; the ratio is what the
target speaks of (below 0.7 with 2 jobs on 2 cores for 20 workbooks of 50,000
rows). Peak resident memory of the worker processes (``ru_maxrss`` of the
children) is printed too.

Usage::

    python benchmarks/folder_benchmark.py                 # 20 workbooks x 50,000 rows, --jobs 2
    python benchmarks/folder_benchmark.py --workbooks 6 --rows 10000

Nothing is asserted: this prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import resource
import shutil
import tempfile
import time
from pathlib import Path

import numpy as np


def write_log(path: Path, n_rows: int, seed: int = 20261205) -> None:
    """An invented visit log of ``n_rows`` rows over twelve months."""
    import xlsxwriter

    rng = np.random.default_rng(seed)
    teams = np.array(["Heron", "Kestrel", "Otter"], dtype=object)
    team = teams[rng.integers(0, 3, n_rows)]
    day = np.sort(rng.integers(0, 365, n_rows))
    same_day = np.where(rng.random(n_rows) < 0.78, "Yes", "No")
    wait = np.round(np.exp(np.log(25.0) + rng.normal(0, 0.45, n_rows)))
    base = dt.datetime(2025, 1, 1)
    book = xlsxwriter.Workbook(str(path), {"constant_memory": True})
    sheet = book.add_worksheet("Visits")
    date_format = book.add_format({"num_format": "yyyy-mm-dd"})
    sheet.write_row(0, 0, ["Visit date", "Team", "Vaccinated same day", "Wait (minutes)"])
    for i in range(n_rows):
        r = i + 1
        sheet.write_datetime(r, 0, base + dt.timedelta(days=int(day[i])), date_format)
        sheet.write_string(r, 1, team[i])
        sheet.write_string(r, 2, same_day[i])
        sheet.write_number(r, 3, float(wait[i]))
    book.close()


def fresh_folder(template: Path, root: Path, count: int, name: str) -> Path:
    folder = root / name
    if folder.exists():
        shutil.rmtree(folder)
    folder.mkdir()
    for i in range(count):
        shutil.copyfile(template, folder / f"district-{i + 1:02d}.xlsx")
    return folder


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--workbooks", type=int, default=20)
    parser.add_argument("--rows", type=int, default=50_000)
    parser.add_argument("--jobs", type=int, default=2)
    parser.add_argument("--no-period", action="store_true",
                        help="plan without the period role (each outcome then has no series over time)")
    args = parser.parse_args()

    import warnings

    from statmargin.jobs.folder import run_folder
    from statmargin.jobs.workbook import plan_workbook

    warnings.simplefilter("ignore")
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        template = root / "template.xlsx"
        write_log(template, args.rows)
        plan_workbook(template, outcome=["Vaccinated same day", "Wait (minutes)"], by=["Team"],
                      period=None if args.no_period else "Visit date")
        print(f"{args.workbooks} workbooks x {args.rows:,} rows, {os.path.getsize(template) / 1e6:.1f} MB each, "
              f"{os.cpu_count()} CPUs, {'no period role' if args.no_period else 'period role: Visit date by month'}")

        print(f"load average before: {os.getloadavg()[0]:.1f} (other work on the machine slows both runs)")

        serial_folder = fresh_folder(template, root, args.workbooks, "serial")
        cpu_before = _cpu(resource.RUSAGE_SELF)
        start = time.perf_counter()
        serial = run_folder(serial_folder, jobs=1)
        serial_s = time.perf_counter() - start
        serial_cpu = _cpu(resource.RUSAGE_SELF) - cpu_before
        self_peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

        parallel_folder = fresh_folder(template, root, args.workbooks, "parallel")
        start = time.perf_counter()
        parallel = run_folder(parallel_folder, jobs=args.jobs)
        parallel_s = time.perf_counter() - start
        parallel_cpu = _cpu(resource.RUSAGE_CHILDREN)
        child_peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024

        assert not serial.failed and not parallel.failed
        print(f"one by one (--jobs 1): {serial_s:7.1f} s wall, {serial_cpu:7.1f} s CPU, "
              f"peak memory {self_peak:5.0f} MB (this process)")
        print(f"--jobs {args.jobs}:             {parallel_s:7.1f} s wall, {parallel_cpu:7.1f} s CPU, "
              f"peak memory {child_peak:5.0f} MB (largest worker)")
        print(f"ratio parallel / one by one: {parallel_s / serial_s:.2f} (target below 0.7 with 2 jobs on 2 cores)")
        print(f"load average after: {os.getloadavg()[0]:.1f}")


def _cpu(who: int) -> float:
    usage = resource.getrusage(who)
    return usage.ru_utime + usage.ru_stime


if __name__ == "__main__":
    main()
