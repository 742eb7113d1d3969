"""Time and peak memory of the rank methods and effect intervals at sheet size.

Invented data: seeded waiting times (gamma, with ties from rounding to 0.1) in four
sites, 1,048,575 rows by default (a full sheet below its header). Each method runs
once in this process; time is shown as a ratio to sorting the same values (the
baseline, measured in the same run) and peak memory (``tracemalloc``, numpy
allocations included) per row. The old Kruskal-Wallis bootstrap held 2000 x N
values (16 GB at 1,048,575 rows); everything here should stay linear in rows. The
"counted" lines run the same records given as counted rows (a count column): each
site's distinct values with the number of records each stands for.

Usage::

    python benchmarks/effects_benchmark.py                 # 1,048,575 rows
    python benchmarks/effects_benchmark.py --rows 200000

Nothing is asserted: this prints numbers for a person to compare.
"""

from __future__ import annotations

import argparse
import sys
import time
import tracemalloc
import warnings
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "src"))

from statmargin.designs.rules import choose_continuous  # noqa: E402
from statmargin.stats import multigroup, relative, signtest, weighted_relative  # noqa: E402
from statmargin.stats.followup import dunn, pairwise_brunner_munzel  # noqa: E402
from statmargin.stats.weighted_select import collapse  # noqa: E402
from statmargin.vocabulary import Design  # noqa: E402


def measure(function: Callable[[], Any]) -> tuple[float, float]:
    """Seconds and peak traced bytes of one call."""
    tracemalloc.start()
    started = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        function()
    seconds = time.perf_counter() - started
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return seconds, float(peak)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_048_575)
    args = parser.parse_args()
    rng = np.random.default_rng(20240601)
    n = args.rows
    site = rng.integers(0, 4, n)
    wait = np.round(rng.gamma(2.0, 12.0, n) + 3.0 * site, 1)
    groups = {f"site {i}": wait[site == i] for i in range(4)}
    two = {"site 0": groups["site 0"], "site 1": groups["site 1"]}
    # The same records as counted rows: each distinct value of a site once, with how many records it stands for.
    counted = {label: collapse(values, np.ones(values.size, dtype=np.int64)) for label, values in groups.items()}
    counted_values = {label: values for label, (values, _) in counted.items()}
    counted_counts = {label: counts for label, (_, counts) in counted.items()}
    baseline, _ = measure(lambda: np.sort(wait))
    runs: list[tuple[str, Callable[[], Any]]] = [
        ("choose_continuous (4 groups)", lambda: choose_continuous(Design.MULTI_GROUP_CONTINUOUS, groups)),
        ("Kruskal-Wallis + epsilon-squared", lambda: multigroup.kruskal_wallis(groups)),
        ("ANOVA-type rank test (4 groups)", lambda: relative.rank_anova_type(groups, p_method="asymptotic")),
        ("Brunner-Munzel + both intervals", lambda: relative.brunner_munzel(*two.values(), p_method="asymptotic")),
        ("Alexander-Govern + effect", lambda: multigroup.alexander_govern(groups)),
        ("sign test + median interval", lambda: signtest.sign_test(wait, mu=30.0)),
        ("Dunn pairs with intervals", lambda: dunn(groups)),
        ("pairwise Brunner-Munzel (6 pairs)", lambda: pairwise_brunner_munzel(groups, p_method="asymptotic")),
        ("counted: choose_continuous", lambda: choose_continuous(Design.MULTI_GROUP_CONTINUOUS, counted_values,
                                                                counts=counted_counts)),
        ("counted: ANOVA-type rank test", lambda: weighted_relative.rank_anova_type(counted)),
        ("counted: Brunner-Munzel", lambda: weighted_relative.brunner_munzel(counted["site 0"], counted["site 1"])),
        ("counted: sign test", lambda: weighted_relative.sign_test(*collapse(wait, np.ones(n, dtype=np.int64)),
                                                                   mu=30.0)),
    ]
    print(f"{n:,} rows; baseline np.sort: {baseline:.3f} s")
    print(f"{'method':36s} {'seconds':>8s} {'x sort':>7s} {'peak MB':>8s} {'bytes/row':>9s}")
    for name, function in runs:
        seconds, peak = measure(function)
        print(f"{name:36s} {seconds:8.2f} {seconds / baseline:7.1f} {peak / 1e6:8.1f} {peak / n:9.1f}")


if __name__ == "__main__":
    main()
