"""Time and peak memory of the event designs and of count-weighted designs, through the engine.

Invented seeded data. Each job runs in a fresh process (``ru_maxrss`` is then its
own) and goes through ``designs.engine.run_answers`` as a workbook run does:

* ``events``: a sheet of aggregated rows (site, screened, positive, person-years)
  answered three ways (positivity against a target, by site, rate by site);
* ``weighted`` / ``repeated``: a two-category table and a continuous outcome by
  group, given as counted rows (a count column) or as the same records repeated;
* ``records``: the record-level designs without a count column, to compare a
  branch with a baseline (``--baseline-src`` runs the same job on another source
  tree, e.g. the main worktree's ``src``), so the cost of the count-aware code on
  unweighted data shows as a ratio.

Usage::

    python benchmarks/events_benchmark.py --rows 1048575
    python benchmarks/events_benchmark.py --rows 200000 --baseline-src /path/to/main/src

Nothing is asserted: it prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time
import warnings
from pathlib import Path

import numpy as np

JOBS = ("events", "weighted", "repeated", "records")


def _frame(job: str, rows: int, seed: int = 20261212):
    import pandas as pd

    rng = np.random.default_rng(seed)
    site = rng.choice(np.array(["North", "South", "East", "West"]), rows)
    if job == "events":
        screened = rng.integers(50, 400, rows)
        return pd.DataFrame({"Site": site, "Screened": screened, "Positive": rng.binomial(screened, 0.04),
                             "Years": rng.uniform(500, 1500, rows).round(1)})
    counts = rng.integers(1, 20, rows)
    frame = pd.DataFrame({"Site": site, "Result": rng.choice(np.array(["Pass", "Fail"]), rows, p=[0.9, 0.1]),
                          "Wait": (rng.integers(0, 400, rows) / 2.0), "n": counts})
    if job == "repeated":
        frame = frame.loc[frame.index.repeat(frame["n"])].reset_index(drop=True)
    return frame


def _run(job: str, rows: int) -> dict:
    warnings.simplefilter("ignore")
    from statmargin.designs.engine import run_answers
    from statmargin.options import build_plan, make_settings
    from statmargin.read.table import Table

    table = Table.from_frame(_frame(job, rows))
    if job == "events":
        plans = [build_plan([], ["Site"], events=["Positive"], out_of={"Positive": "Screened"},
                            per={"Positive": "Years"}, settings=make_settings(per_unit="per 1,000"))]
    else:
        count = "n" if job == "weighted" else None
        plans = [build_plan(["Result"], ["Site"], count=count), build_plan(["Wait"], ["Site"], count=count)]
    start = time.perf_counter()
    answers = [a for plan in plans for a in run_answers(table, plan)]
    seconds = time.perf_counter() - start
    return {"job": job, "rows": len(table.rows), "seconds": round(seconds, 3),
            "peak_mb": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
            "tests": [a.result.test for a in answers]}


def _spawn(job: str, rows: int, src: str | None, script: str = __file__) -> dict:
    """Run one job of ``script`` (this file by default) in a fresh process; its last line of JSON."""
    env = dict(os.environ)
    if src:
        env["PYTHONPATH"] = src
    out = subprocess.run([sys.executable, script, "--job", job, "--rows", str(rows)], capture_output=True,
                         text=True, check=True, env=env)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=200_000)
    parser.add_argument("--job", choices=JOBS)
    parser.add_argument("--baseline-src", default=None, help="another source tree to run the 'records' job on")
    args = parser.parse_args()
    if args.job:
        print(json.dumps(_run(args.job, args.rows)))
        return 0
    here = str(Path(__file__).resolve().parent.parent / "src")
    results = {job: _spawn(job, args.rows, os.environ.get("PYTHONPATH") or here) for job in JOBS}
    if args.baseline_src:
        results["records (baseline)"] = _spawn("records", args.rows, args.baseline_src)
    for name, r in results.items():
        print(f"{name:20s} rows {r['rows']:>9,}  {r['seconds']:8.2f} s  peak {r['peak_mb']:8.1f} MB  {r['tests']}")
    weighted, repeated = results["weighted"], results["repeated"]
    print(f"weighted / repeated: time {weighted['seconds'] / repeated['seconds']:.2f}, "
          f"memory {weighted['peak_mb'] / repeated['peak_mb']:.2f} (repeated rows: {repeated['rows']:,})")
    if args.baseline_src:
        base = results["records (baseline)"]
        print(f"records, this tree / baseline: time {results['records']['seconds'] / base['seconds']:.2f}, "
              f"memory {results['records']['peak_mb'] / base['peak_mb']:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
