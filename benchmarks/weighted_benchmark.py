"""Time and peak memory of count-weighted methods against the same methods on repeated rows, and of rates on many rows.

The data are invented: seeded random half-unit values (many ties) in two or three
groups, each row with a count of 1 to ``--max-count`` records. Each job runs in a
fresh process so that its peak resident memory (``ru_maxrss``) is its own; the
weighted and repeated versions of a method run in the same invocation, so the
ratio between them is what to read. A rates job pools a sheet of aggregated rows
(the largest sheet has 1,048,575 data rows) and runs the homogeneity test with
its row-dispersion measure.

Usage::

    python benchmarks/weighted_benchmark.py                 # 20,000 rows, counts 1-100
    python benchmarks/weighted_benchmark.py --rows 100000 --max-count 20

Nothing is asserted: this prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import time
import warnings

import numpy as np

JOBS = ("mann_whitney_u", "welch_t", "kruskal_wallis", "wilcoxon_signed_rank")


def _data(rows: int, max_count: int, seed: int = 20261205):
    rng = np.random.default_rng(seed)
    groups = []
    for shift in (0.0, 0.5, 1.0):
        groups.append((rng.integers(0, 400, rows) / 2.0 + shift, rng.integers(1, max_count + 1, rows)))
    return groups


def _run(job: str, weighted: bool, rows: int, max_count: int) -> dict:
    """One job in this process; returns seconds and peak memory."""
    warnings.simplefilter("ignore")
    from statmargin.stats import multigroup, onesample, twogroup
    from statmargin.stats import weighted as w

    groups = _data(rows, max_count)
    start = time.perf_counter()
    if job == "rates":
        from statmargin.stats import rates

        rng = np.random.default_rng(3)
        labels = rng.integers(0, 5, rows)
        time_at_risk = rng.uniform(50.0, 150.0, rows)
        events = rng.poisson(0.02 * time_at_risk)
        result = rates.rate_homogeneity({str(g): (events[labels == g], time_at_risk[labels == g]) for g in range(5)})
        value = result.p_value
    elif weighted:
        (a, ca), (b, cb), (c, cc) = groups
        if job == "mann_whitney_u":
            value = w.mann_whitney_u((a, ca), (b, cb)).p_value
        elif job == "welch_t":
            value = w.welch_t((a, ca), (b, cb)).p_value
        elif job == "kruskal_wallis":
            value = w.kruskal_wallis({"A": (a, ca), "B": (b, cb), "C": (c, cc)}).statistic
        else:
            value = w.wilcoxon_signed_rank(a, ca, mu=100.0).p_value
    else:
        (a, b, c) = (np.repeat(v, n) for v, n in groups)
        if job == "mann_whitney_u":
            value = twogroup.mann_whitney_u(a, b).p_value
        elif job == "welch_t":
            value = twogroup.welch_t(a, b).p_value
        elif job == "kruskal_wallis":
            value = multigroup.kruskal_wallis({"A": a, "B": b, "C": c}).statistic
        else:
            value = onesample.wilcoxon_signed_rank(a, mu=100.0).p_value
    seconds = time.perf_counter() - start
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    return {"seconds": seconds, "peak_mb": peak_mb, "value": value}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=20_000)
    parser.add_argument("--max-count", type=int, default=100)
    parser.add_argument("--rate-rows", type=int, default=1_048_575)
    parser.add_argument("--job", help=argparse.SUPPRESS)
    parser.add_argument("--weighted", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.job:
        rows = args.rate_rows if args.job == "rates" else args.rows
        print(json.dumps(_run(args.job, args.weighted, rows, args.max_count)))
        return
    records = args.rows * (args.max_count + 1) // 2
    print(f"{args.rows:,} rows per group, counts 1-{args.max_count} (about {records:,} records per group)")
    for job in JOBS:
        out = {}
        for weighted in (True, False):
            command = [sys.executable, __file__, "--job", job, "--rows", str(args.rows), "--max-count",
                       str(args.max_count)] + (["--weighted"] if weighted else [])
            done = subprocess.run(command, capture_output=True, text=True)
            out[weighted] = json.loads(done.stdout) if done.returncode == 0 else None
        if out[False] is None:  # the repeated rows did not fit in memory
            print(f"{job:22s} weighted {out[True]['seconds']:7.2f} s {out[True]['peak_mb']:7.0f} MB | repeated "
                  "rows: the process was stopped (out of memory)")
            continue
        same = np.isclose(out[True]["value"], out[False]["value"], rtol=1e-9)
        print(f"{job:22s} weighted {out[True]['seconds']:7.2f} s {out[True]['peak_mb']:7.0f} MB | repeated "
              f"{out[False]['seconds']:7.2f} s {out[False]['peak_mb']:7.0f} MB | time ratio "
              f"{out[True]['seconds'] / out[False]['seconds']:.2f}, memory ratio "
              f"{out[True]['peak_mb'] / out[False]['peak_mb']:.2f}, same result: {bool(same)}")
    command = [sys.executable, __file__, "--job", "rates", "--rate-rows", str(args.rate_rows)]
    rates_out = json.loads(subprocess.run(command, capture_output=True, text=True, check=True).stdout)
    print(f"rate homogeneity, {args.rate_rows:,} rows in 5 groups: {rates_out['seconds']:.2f} s, "
          f"{rates_out['peak_mb']:.0f} MB peak")


if __name__ == "__main__":
    main()
