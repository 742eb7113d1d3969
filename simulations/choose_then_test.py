"""Does the whole choose-then-test procedure hold its error rate and its intervals' coverage?

For each cell of a grid (design x shape x group size x number of groups) the script
draws data many times, runs the real procedure (``designs.rules.choose_continuous``
and the chosen ``stats`` method, through :func:`procedure`), and reports:

* the false-positive rate at 0.05 when there is no difference, with its Monte Carlo SE;
* how often each reported 95% interval (estimate and effect) covers its true value,
  with no difference and with a shift;
* the power under a shift, next to always-Welch and always-rank (Mann-Whitney or
  Kruskal-Wallis; Welch's t or Welch's ANOVA; signed-rank or t for one sample);
* how often the procedure chose each test.

Data are invented; shapes (see ``SHAPES``): normal; skewed (lognormal, sigma 0.8,
skewness 3.7); heavy-tailed (t with 3 df); ceiling-piled (scores 0-10, normal mean 8
SD 2.5 rounded and cut at 10, about 30% at the ceiling); unequal spreads with unequal
n (t with 4 df, SDs 15 and 4 alternating over groups, sizes n and 3.75 n; equal
centres). Alternatives shift the first group (or the differences, or the sample) by
3 SD / sqrt(n).

Run ``python simulations/choose_then_test.py --quick`` for the CI size (a few cells,
used by tests/test_simulation_quick.py) or without ``--quick`` for the full grid
(about two hours on two cores); ``--markdown FILE`` writes the README table. Seeded:
the same command gives the same numbers.

To check the public entry point instead of the rule and the methods, change the one
line in :func:`procedure`.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import time
import warnings
import zlib
from collections import Counter
from collections.abc import Callable, Mapping
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any

# One BLAS thread per worker process: the workers are the parallelism, and BLAS threads competing
# for the same cores slow small matrix calls by orders of magnitude.
for _name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_name, "1")

import numpy as np  # noqa: E402
from scipy import stats  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "src"))

from statmargin.designs.rules import choose_continuous, method_for  # noqa: E402
from statmargin.results import Result  # noqa: E402
from statmargin.vocabulary import Design, EffectKind, EstimateKind  # noqa: E402

ALPHA = 0.05
SEED = 20240917
SIZES = (5, 10, 20, 50, 100, 200, 500)


# ---------------------------------------------------------------- shapes


def _ceiling(rng: np.random.Generator, size: Any) -> np.ndarray:
    return np.clip(np.round(rng.normal(8.0, 2.5, size)), 0.0, 10.0)


@dataclass(frozen=True)
class Shape:
    """A data shape: how to draw unit-scale values and whether it is symmetric about its median."""

    name: str
    draw: Callable[[np.random.Generator, Any], np.ndarray]
    symmetric: bool


SHAPES: dict[str, Shape] = {
    "normal": Shape("normal", lambda rng, size: rng.standard_normal(size), True),
    "skewed": Shape("skewed", lambda rng, size: rng.lognormal(0.0, 0.8, size), False),
    "heavy": Shape("heavy", lambda rng, size: rng.standard_t(3, size), True),
    "ceiling": Shape("ceiling", _ceiling, False),
    "unequal": Shape("unequal", lambda rng, size: rng.standard_t(4, size) / math.sqrt(2.0), True),
}


def _population(shape: Shape) -> tuple[float, float, float]:
    """Mean, median and SD of a shape, from a large seeded sample (exact enough for truths)."""
    x = shape.draw(np.random.default_rng(1), 2_000_000)
    return float(np.mean(x)), float(np.median(x)), float(np.std(x))


@dataclass(frozen=True)
class Cell:
    """One cell of the grid."""

    design: str  # "groups", "one_sample", "paired"
    shape: str
    k: int  # groups (1 for one sample and paired)
    n: int  # values per group (the smaller groups for "unequal")

    @property
    def label(self) -> str:
        return f"{self.design} {self.shape} k={self.k} n={self.n}"


def group_plan(cell: Cell) -> list[tuple[int, float]]:
    """(size, SD) of every group: equal unless the shape is "unequal"."""
    if cell.shape != "unequal":
        return [(cell.n, 1.0)] * cell.k
    return [(cell.n, 15.0) if i % 2 == 0 else (int(round(cell.n * 3.75)), 4.0) for i in range(cell.k)]


def shift_of(cell: Cell, sd: float) -> float:
    """The alternative: 3 SD / sqrt(n) added to the first group (or to every value)."""
    return 3.0 * sd / math.sqrt(cell.n)


def draw_data(cell: Cell, rng: np.random.Generator, shift: float) -> dict[str, Any]:
    """One data set for the cell: groups, or a sample with its target, or two measurements."""
    shape = SHAPES[cell.shape]
    mean, median, sd = _population_cached(cell.shape)
    if cell.design == "groups":
        groups = {}
        for i, (size, group_sd) in enumerate(group_plan(cell)):
            values = (shape.draw(rng, size) - median) / sd * group_sd + median
            groups[f"g{i + 1}"] = values + (shift if i == 0 else 0.0)
        return {"groups": groups}
    if cell.design == "one_sample":
        return {"values": shape.draw(rng, cell.n) + shift, "target": median}
    unit = rng.normal(0.0, 1.0, cell.n)  # a unit effect shared by both measurements
    first, second = shape.draw(rng, cell.n), shape.draw(rng, cell.n)
    return {"first": unit + first + shift, "second": unit + second}


_POPULATIONS: dict[str, tuple[float, float, float]] = {}


def _population_cached(name: str) -> tuple[float, float, float]:
    if name not in _POPULATIONS:
        _POPULATIONS[name] = _population(SHAPES[name])
    return _POPULATIONS[name]


# ---------------------------------------------------------------- the procedure


def _run_rules(design: Design, data: Mapping[str, Any]) -> Result:
    """designs.rules.choose_continuous, then the chosen stats method, as the tool runs them."""
    if design == Design.ONE_SAMPLE_CONTINUOUS:
        choice = choose_continuous(design, {"outcome": data["values"]}, target=data["target"])
        result = method_for(choice.test, design)(data["values"], mu=data["target"], **choice.options)
    elif design == Design.PAIRED_CONTINUOUS:
        differences = data["first"] - data["second"]
        choice = choose_continuous(design, {"differences": differences})
        result = method_for(choice.test, design)(data["first"], data["second"], **choice.options)
    elif design == Design.TWO_GROUP_CONTINUOUS:
        (a, x), (b, y) = data["groups"].items()
        choice = choose_continuous(design, data["groups"])
        result = method_for(choice.test, design)(x, y, labels=(a, b), **choice.options)
    else:
        choice = choose_continuous(design, data["groups"])
        result = method_for(choice.test, design)(data["groups"], **choice.options)
    return result


def procedure(design: Design, data: Mapping[str, Any]) -> Result:
    """The procedure under test. Change this one line to check ``statmargin.analyze`` instead."""
    return _run_rules(design, data)


def _design_of(cell: Cell) -> Design:
    if cell.design == "one_sample":
        return Design.ONE_SAMPLE_CONTINUOUS
    if cell.design == "paired":
        return Design.PAIRED_CONTINUOUS
    return Design.TWO_GROUP_CONTINUOUS if cell.k == 2 else Design.MULTI_GROUP_CONTINUOUS


def _welch_t_p(x: np.ndarray, y: np.ndarray) -> float:
    vx, vy = x.var(ddof=1) / x.size, y.var(ddof=1) / y.size
    if vx + vy == 0:
        return 1.0
    t = (x.mean() - y.mean()) / math.sqrt(vx + vy)
    df = (vx + vy) ** 2 / (vx**2 / (x.size - 1) + vy**2 / (y.size - 1))
    return float(2.0 * stats.t.sf(abs(t), df))


def _welch_anova_p(arrays: list[np.ndarray]) -> float:
    n = np.array([a.size for a in arrays], dtype=float)
    means = np.array([a.mean() for a in arrays])
    var = np.array([a.var(ddof=1) for a in arrays])
    if np.any(var == 0):
        return 1.0
    w = n / var
    total = w.sum()
    centre = float(np.sum(w * means) / total)
    k = len(arrays)
    tmp = float(np.sum((1 - w / total) ** 2 / (n - 1))) / (k * k - 1)
    f = float(np.sum(w * (means - centre) ** 2)) / ((k - 1) * (1 + 2 * (k - 2) * tmp))
    return float(stats.f.sf(f, k - 1, 1 / (3 * tmp)))


def _rank_p(arrays: list[np.ndarray]) -> float:
    """Mann-Whitney (continuity-corrected) or Kruskal-Wallis p with the tie correction."""
    pooled = np.concatenate(arrays)
    n = pooled.size
    ranks = stats.rankdata(pooled)
    _, counts = np.unique(pooled, return_counts=True)
    tie = 1.0 - float(np.sum(counts**3 - counts)) / (n**3 - n)
    if tie <= 0:
        return 1.0
    sizes = [a.size for a in arrays]
    if len(arrays) == 2:
        n1, n2 = sizes
        u = float(ranks[:n1].sum()) - n1 * (n1 + 1) / 2.0
        sigma = math.sqrt(n1 * n2 * (n + 1) / 12.0 * tie)
        z = (abs(u - n1 * n2 / 2.0) - 0.5) / sigma
        return float(min(1.0, 2.0 * stats.norm.sf(max(z, 0.0))))
    starts = np.cumsum([0] + sizes)
    term = sum(float(ranks[a:b].sum()) ** 2 / (b - a) for a, b in zip(starts[:-1], starts[1:], strict=True))
    h = (12.0 / (n * (n + 1)) * term - 3.0 * (n + 1)) / tie
    return float(stats.chi2.sf(h, len(arrays) - 1))


def reference_p(cell: Cell, data: Mapping[str, Any]) -> tuple[float, float]:
    """p of always-Welch (Welch's t / Welch's ANOVA / t) and always-rank (MW / KW / signed-rank).

    Written out for speed; the same formulas as ``scipy.stats.ttest_ind(equal_var=False)``,
    ``f_oneway(equal_var=False)``, ``mannwhitneyu(method="asymptotic")``, ``kruskal``,
    ``ttest_1samp`` and ``wilcoxon(correction=True, method="approx")``.
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if cell.design == "groups":
            arrays = list(data["groups"].values())
            welch = _welch_t_p(*arrays) if len(arrays) == 2 else _welch_anova_p(arrays)
            return welch, _rank_p(arrays)
        d = data["values"] - data["target"] if cell.design == "one_sample" else data["first"] - data["second"]
        sd = d.std(ddof=1)
        welch = 1.0 if sd == 0 else float(2 * stats.t.sf(abs(d.mean() / (sd / math.sqrt(d.size))), d.size - 1))
        nonzero = d[d != 0]
        if nonzero.size == 0:
            return welch, 1.0
        ranks = stats.rankdata(np.abs(nonzero))
        m = nonzero.size
        _, counts = np.unique(np.abs(nonzero), return_counts=True)
        sigma = math.sqrt(m * (m + 1) * (2 * m + 1) / 24.0 - float(np.sum(counts**3 - counts)) / 48.0)
        v = float(ranks[nonzero > 0].sum()) - m * (m + 1) / 4.0
        rank = 1.0 if sigma == 0 else float(min(1.0, 2 * stats.norm.sf(max((abs(v) - 0.5) / sigma, 0.0))))
        return welch, rank


# ---------------------------------------------------------------- true values


def truths(cell: Cell, shift: float) -> dict[str, float]:
    """True value of every estimate and effect kind the procedure can report in this cell.

    Probabilities (superiority, relative effects, shares) come from 2 million seeded
    draws; the rest are exact for the shapes used.
    """
    shape = SHAPES[cell.shape]
    mean, median, sd = _population_cached(cell.shape)
    rng = np.random.default_rng(7)
    m = 2_000_000
    out: dict[str, float] = {}
    if cell.design == "groups":
        plan = group_plan(cell)
        sizes = np.array([size for size, _ in plan], dtype=float)
        sds = np.array([group_sd for _, group_sd in plan])
        means = np.full(cell.k, mean)
        means = (means - median) / sd * sds + median
        means[0] += shift
        # one large sample per distinct group scale; the first group shifted
        samples = {}
        for i, (_, group_sd) in enumerate(plan):
            key = (group_sd, i == 0)
            if key not in samples:
                x = (shape.draw(rng, m) - median) / sd * group_sd + median
                samples[key] = x + (shift if i == 0 else 0.0)

        def superiority(i: int, j: int) -> float:
            xi = samples[(plan[i][1], i == 0)]
            xj = np.random.default_rng(11 + j).permutation(samples[(plan[j][1], j == 0)])
            return float(np.mean(xi > xj) + 0.5 * np.mean(xi == xj))

        if cell.k == 2:
            out[EstimateKind.MEAN_DIFFERENCE] = means[0] - means[1]
            out[EstimateKind.LOCATION_SHIFT] = shift  # median of X - Y: X - Y is symmetric about the shift
            out[EffectKind.PROBABILITY_OF_SUPERIORITY] = superiority(0, 1)
            pooled = math.sqrt(float(np.sum((sizes - 1) * sds**2) / (np.sum(sizes) - 2)))
            out[EffectKind.HEDGES_G] = (means[0] - means[1]) / pooled
            out[EffectKind.HEDGES_G_AV] = (means[0] - means[1]) / math.sqrt(float(np.mean(sds**2)))
        weights = sizes / sds**2
        weighted = float(np.sum(weights * means) / np.sum(weights))
        lam = float(np.sum(weights * (means - weighted) ** 2))
        out[EffectKind.ETA_SQUARED_WEIGHTED] = lam / (lam + float(np.sum(sizes)))
        cache: dict[tuple[float, bool, float, bool], float] = {}
        p = np.zeros(cell.k)
        for i in range(cell.k):
            total = 0.0
            for j in range(cell.k):
                if i == j:
                    total += 0.5
                    continue
                key = (plan[i][1], i == 0, plan[j][1], j == 0)
                if key not in cache:
                    cache[key] = superiority(i, j)
                total += cache[key]
            p[i] = total / cell.k
        out[EffectKind.EPSILON_SQUARED_EQUAL_WEIGHTS] = 12.0 / cell.k * float(np.sum((p - 0.5) ** 2))
        return out
    if cell.design == "one_sample":
        x = shape.draw(rng, m) + shift
        out[EstimateKind.MEAN_DIFFERENCE_FROM_VALUE] = mean + shift - median
        out[EffectKind.HEDGES_G] = (mean + shift - median) / sd
        out[EstimateKind.MEDIAN] = median + shift
        centre = x - median
    else:
        d = shape.draw(rng, m) - shape.draw(rng, m) + shift
        out[EstimateKind.PAIRED_MEAN_DIFFERENCE] = shift
        out[EffectKind.HEDGES_G_Z] = shift / float(np.std(d))
        out[EstimateKind.PAIRED_MEDIAN_DIFFERENCE] = shift
        out[EstimateKind.PAIRED_PSEUDO_MEDIAN] = shift
        centre = d
    if cell.design == "one_sample" and shape.symmetric:
        out[EstimateKind.PSEUDO_MEDIAN] = median + shift
    nonzero = centre[centre != 0]
    out[EffectKind.SHARE_ABOVE] = float(np.mean(nonzero > 0))
    half = centre.size // 2
    walsh = centre[:half] + centre[half : 2 * half]
    out[EffectKind.RANK_BISERIAL_PAIRED] = float(np.mean(walsh > 0) - np.mean(walsh < 0))
    return out


# ---------------------------------------------------------------- one cell


def _covered(low: float | None, high: float | None, truth: float) -> bool:
    lo = -math.inf if low is None else low
    hi = math.inf if high is None else high
    return bool(lo - 1e-12 * max(1.0, abs(truth)) <= truth <= hi + 1e-12 * max(1.0, abs(truth)))


def _tally(result: Result, truth: Mapping[str, float], covered: Counter, counted: Counter) -> None:
    """Count, per kind and per role (any estimate, any effect), whether the interval covered."""
    for role, item in (("estimate", result.estimate), ("effect", result.effect)):
        if item is None or item.ci_low is None and item.ci_high is None:
            continue
        kind = str(item.kind)
        if kind not in truth:
            continue
        hit = _covered(item.ci_low, item.ci_high, truth[kind])
        for key in (kind, role):
            counted[key] += 1
            covered[key] += hit


def run_cell(cell: Cell, reps: int, reps_alt: int, seed: int) -> dict[str, Any]:
    """Null and shifted runs of one cell; rates, coverage and choices."""
    design = _design_of(cell)
    rng = np.random.default_rng([seed, zlib.crc32(cell.label.encode())])  # str hash() varies by process
    _, _, sd = _population_cached(cell.shape)
    base_sd = group_plan(cell)[0][1] if cell.design == "groups" else 1.0
    out: dict[str, Any] = {"cell": cell.__dict__, "label": cell.label, "reps": reps, "reps_alt": reps_alt}
    started = time.time()
    for phase, count, shift in (("null", reps, 0.0), ("alt", reps_alt, shift_of(cell, base_sd if cell.design == "groups" else sd))):
        truth = truths(cell, shift)
        rejected = welch_rejected = rank_rejected = skipped = 0
        covered: Counter = Counter()
        counted: Counter = Counter()
        chosen: Counter = Counter()
        for _ in range(count):
            data = draw_data(cell, rng, shift)
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                try:
                    result = procedure(design, data)
                except Exception as error:  # a skipped analysis counts as not rejected
                    if type(error).__name__ != "NotEnoughDataError":
                        raise
                    skipped += 1
                    continue
            chosen[str(result.test)] += 1
            rejected += bool(result.p_value is not None and result.p_value < ALPHA)
            _tally(result, truth, covered, counted)
            welch_p, rank_p = reference_p(cell, data)
            welch_rejected += welch_p < ALPHA
            rank_rejected += rank_p < ALPHA
        rate = rejected / count
        out[phase] = {
            "rate": rate,
            "se": math.sqrt(max(rate * (1 - rate), 0.25 / count) / count),
            "always_welch": welch_rejected / count,
            "always_rank": rank_rejected / count,
            "coverage": {k: covered[k] / counted[k] for k in counted},
            "coverage_runs": dict(counted),
            "chosen": dict(chosen),
            "skipped": skipped,
            "shift": shift,
        }
    out["seconds"] = time.time() - started
    return out


# ---------------------------------------------------------------- the grid


def grid(quick: bool, sizes: tuple[int, ...] = SIZES) -> list[Cell]:
    """The cells: groups of every shape at 2, 4, 8 groups, one-sample and paired rows."""
    if quick:
        return [Cell("groups", "normal", 2, 10), Cell("groups", "skewed", 2, 20), Cell("groups", "unequal", 2, 12),
                Cell("groups", "heavy", 4, 10), Cell("groups", "unequal", 4, 20), Cell("groups", "ceiling", 4, 20),
                Cell("paired", "skewed", 1, 20), Cell("one_sample", "heavy", 1, 30)]
    cells = [Cell("groups", shape, k, n) for k in (2, 4, 8) for shape in SHAPES for n in sizes]
    cells += [Cell("one_sample", shape, 1, n) for shape in ("normal", "heavy") for n in sizes]
    cells += [Cell("paired", shape, 1, n) for shape in ("normal", "skewed", "heavy", "ceiling") for n in sizes]
    return cells


def _worker(args: tuple[Cell, int, int, int]) -> dict[str, Any]:
    return run_cell(*args)


def run(quick: bool, reps: int, reps_alt: int, workers: int, seed: int = SEED,
        sizes: tuple[int, ...] = SIZES, only: str | None = None) -> list[dict[str, Any]]:
    """Every cell of the grid (or those whose label contains ``only``), over ``workers`` processes."""
    cells = [cell for cell in grid(quick, sizes) if only is None or only in cell.label]
    jobs = [(cell, reps, reps_alt, seed) for cell in cells]
    rows: list[dict[str, Any]] = []
    if workers <= 1:
        for job in jobs:
            rows.append(_worker(job))
            _progress(rows[-1], len(rows), len(jobs))
        return rows
    with ProcessPoolExecutor(max_workers=workers) as pool:
        for row in pool.map(_worker, jobs):
            rows.append(row)
            _progress(row, len(rows), len(jobs))
    return rows


def _progress(row: dict[str, Any], done: int, total: int) -> None:
    """One line per finished cell on standard error: the error rate and the lowest coverage."""
    lowest = min(((value, f"{phase} {kind}") for phase in ("null", "alt")
                  for kind, value in row[phase]["coverage"].items()), default=(math.nan, "-"))
    print(f"[{done}/{total}] {row['label']}: FPR {row['null']['rate']:.3f}, lowest coverage {lowest[0]:.3f} "
          f"({lowest[1]}), {row['seconds']:.0f} s", file=sys.stderr, flush=True)


def markdown(rows: list[dict[str, Any]]) -> str:
    """The README table: one line per cell."""
    lines = [
        "| cell | FPR (SE) | always-Welch FPR | always-rank FPR | estimate coverage null / shift | "
        "effect coverage null / shift | power | always-Welch power | always-rank power | chosen (null) |",
        "|---|---|---|---|---|---|---|---|---|---|",
    ]

    def cover(phase: dict[str, Any], role: str) -> str:
        value = phase["coverage"].get(role)
        return "-" if value is None else f"{value:.3f}"

    for row in rows:
        null, alt = row["null"], row["alt"]
        chosen = ", ".join(f"{k} {v / row['reps']:.0%}" for k, v in sorted(null["chosen"].items(), key=lambda kv: -kv[1]))
        lines.append(
            f"| {row['label']} | {null['rate']:.3f} ({null['se']:.3f}) | {null['always_welch']:.3f} | "
            f"{null['always_rank']:.3f} | {cover(null, 'estimate')} / {cover(alt, 'estimate')} | "
            f"{cover(null, 'effect')} / {cover(alt, 'effect')} | {alt['rate']:.3f} | "
            f"{alt['always_welch']:.3f} | {alt['always_rank']:.3f} | {chosen} |"
        )
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="a few cells, few runs (the CI size)")
    parser.add_argument("--reps", type=int, default=None, help="runs per cell with no difference")
    parser.add_argument("--reps-alt", type=int, default=None, help="runs per cell with a shift")
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--json", type=Path, default=None, help="write all numbers here")
    parser.add_argument("--markdown", type=Path, default=None, help="write the README table here")
    parser.add_argument("--sizes", type=str, default=None, help="comma-separated group sizes (default: all)")
    parser.add_argument("--only", type=str, default=None, help="run only cells whose label contains this")
    args = parser.parse_args(argv)
    reps = args.reps or (400 if args.quick else 6000)
    reps_alt = args.reps_alt or (150 if args.quick else 1500)
    sizes = tuple(int(v) for v in args.sizes.split(",")) if args.sizes else SIZES
    rows = run(args.quick, reps, reps_alt, args.workers, sizes=sizes, only=args.only)
    text = markdown(rows)
    print(text)
    if args.json:
        args.json.write_text(json.dumps(rows, indent=1, default=str))
    if args.markdown:
        args.markdown.write_text(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
