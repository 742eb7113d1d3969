"""Time and peak memory of sharing mode: the analyses alone, then the same with their counts protected.

Invented seeded data: ``--rows`` visits at 50 sites (five of them tiny), a
five-level grade, a wait in minutes, a yes/no answer and a visit date over ten
years of weeks (520 periods, a few of them thin). Three questions are answered
as a workbook run answers them (``designs.engine.run_answers``): Grade by Site
(a 50 x 5 table), Wait by Site (50 groups) and the answer by week (a series of
520 periods with the trend test's sum in the web). Each job runs in a fresh
process so ``ru_maxrss`` is its own:

* ``plain``: the analyses;
* ``shared``: the analyses, then ``share.suppress_results`` on them (the
  counts' web, its audit and the write-back); its own seconds are printed too.

The ratio shared / plain is the cost of sharing mode in the same run. The
protection works on the results' tables (groups, levels, periods), never on
the rows, so its memory does not grow with the rows.

Usage::

    python benchmarks/share_benchmark.py --rows 1048575

Nothing is asserted: it prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import sys
import time
import warnings
from pathlib import Path

import numpy as np

JOBS = ("plain", "shared")


def _frame(rows: int, seed: int = 20261205):
    import pandas as pd

    rng = np.random.default_rng(seed)
    sites = np.array([f"Site {i:02d}" for i in range(50)])
    weights = np.r_[np.full(45, 1.0), np.full(5, 0.0002)]
    site = rng.choice(sites, rows, p=weights / weights.sum())
    start = np.datetime64("2016-01-04")
    week = rng.integers(0, 520, rows)
    thin = np.isin(week, rng.choice(520, 12, replace=False))
    keep = ~thin | (rng.random(rows) < 0.0005)  # a dozen weeks with only a handful of visits
    frame = pd.DataFrame({
        "Site": site, "Grade": rng.choice(np.array(list("ABCDE")), rows, p=[0.4, 0.3, 0.2, 0.09, 0.01]),
        "Wait": rng.gamma(4.0, 8.0, rows).round(1), "Seen": np.where(rng.random(rows) < 0.97, "Yes", "No"),
        "Visit": start + week.astype("timedelta64[W]") + rng.integers(0, 7, rows).astype("timedelta64[D]"),
    })
    return frame[keep].reset_index(drop=True)


def _run(job: str, rows: int) -> dict:
    warnings.simplefilter("ignore")
    from statmargin.designs.engine import run_answers
    from statmargin.options import build_plan, make_settings
    from statmargin.read.table import Table
    from statmargin.sheets.share import suppress_results

    table = Table.from_frame(_frame(rows))
    plans = [build_plan(["Grade"], ["Site"]), build_plan(["Wait"], ["Site"]),
             build_plan(["Seen"], [], period="Visit", settings=make_settings(grain="week"))]
    start = time.perf_counter()
    results = [a.result for plan in plans for a in run_answers(table, plan)]
    analyses = time.perf_counter() - start
    protect = 0.0
    hidden = 0
    if job == "shared":
        begin = time.perf_counter()
        results = suppress_results(results, 11)
        protect = time.perf_counter() - begin
        hidden = sum(len(r.extra.get("suppressed", [])) for r in results)
    return {"job": job, "rows": len(table.rows), "seconds": round(analyses + protect, 3),
            "protect_seconds": round(protect, 3), "hidden_fields": hidden,
            "peak_mb": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
            "periods": len(results[-1].periods or [])}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=200_000)
    parser.add_argument("--job", choices=JOBS)
    args = parser.parse_args()
    if args.job:
        print(json.dumps(_run(args.job, args.rows)))
        return 0
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    from events_benchmark import _spawn  # one process per job, so each peak memory is its own

    src = os.environ.get("PYTHONPATH") or str(Path(__file__).resolve().parent.parent / "src")
    results = {job: _spawn(job, args.rows, src, __file__) for job in JOBS}
    for name, r in results.items():
        print(f"{name:8s} rows {r['rows']:>9,}  {r['seconds']:8.2f} s (protecting {r['protect_seconds']:.3f} s)  "
              f"peak {r['peak_mb']:8.1f} MB  periods {r['periods']}")
    plain, shared = results["plain"], results["shared"]
    print(f"shared / plain: time {shared['seconds'] / plain['seconds']:.3f}, "
          f"memory {shared['peak_mb'] / plain['peak_mb']:.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
