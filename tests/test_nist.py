"""One-way ANOVA and Pearson r against NIST StRD certified values.

Certified values: NIST/ITL Statistical Reference Datasets (public domain), stored in
tests/reference/nist_anova/*.dat and tests/reference/nist_linregress/Norris.dat.
Accuracy is the log relative error LRE = -log10(|computed - certified| / |certified|).
Because the decimal data are not exactly representable as doubles, even exact
arithmetic on the parsed doubles misses the certified values on the hardest sets; our
LRE must be within 0.5 of that exact-arithmetic LRE.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

from statmargin.stats.correlation import pearson_r
from statmargin.stats.multigroup import one_way_anova

NIST = Path(__file__).parent / "reference"
ANOVA_FILES = sorted((NIST / "nist_anova").glob("*.dat"))
MAX_LRE = 15.0  # certified values carry 15 significant digits
# Lower bounds stated for a sound two-pass algorithm (NIST difficulty levels).
EXPECTED_MINIMUM = {"SmLs07": 3.7, "SmLs08": 3.7, "SmLs09": 3.7}


def parse_anova(path: Path) -> tuple[dict[str, float], dict[str, np.ndarray]]:
    """Certified between/within SS and F, and the data grouped by treatment."""
    lines = path.read_text().splitlines()
    certified: dict[str, float] = {}
    groups: dict[str, list[float]] = {}
    in_data = False
    for line in lines:
        tokens = line.split()
        if line.startswith("Between"):
            certified["ss_between"], certified["f"] = float(tokens[-3]), float(tokens[-1])
        elif line.startswith("Within"):
            certified["ss_within"] = float(tokens[-2])
        elif line.startswith("Data:") and len(tokens) == 3 and not tokens[1][0].isdigit():
            in_data = True  # the header row of the data block ("Data: Treatment Response")
        elif in_data and len(tokens) == 2:
            groups.setdefault(tokens[0], []).append(float(tokens[1]))
    return certified, {label: np.array(values) for label, values in groups.items()}


def exact_anova(groups: dict[str, np.ndarray]) -> dict[str, float]:
    """Between/within SS and F in exact rational arithmetic on the parsed doubles."""
    exact = {label: [Fraction(float(v)) for v in values] for label, values in groups.items()}
    everything = [v for values in exact.values() for v in values]
    grand = sum(everything, Fraction(0)) / len(everything)
    between = Fraction(0)
    within = Fraction(0)
    for values in exact.values():
        mean = sum(values, Fraction(0)) / len(values)
        between += len(values) * (mean - grand) ** 2
        within += sum(((v - mean) ** 2 for v in values), Fraction(0))
    df1, df2 = len(exact) - 1, len(everything) - len(exact)
    f = (between / df1) / (within / df2)
    return {"ss_between": float(between), "ss_within": float(within), "f": float(f)}


def lre(computed: float, certified: float) -> float:
    """Log relative error, capped at the 15 digits a certified value carries."""
    if computed == certified:
        return MAX_LRE
    return min(MAX_LRE, -math.log10(abs(computed - certified) / abs(certified)))


@pytest.mark.parametrize("path", ANOVA_FILES, ids=lambda p: p.stem)
def test_anova_lre_matches_exact_arithmetic(path: Path) -> None:
    """Our SS and F are as accurate as exact arithmetic on the same doubles allows (within 0.5 LRE)."""
    certified, groups = parse_anova(path)  # NIST StRD certified values
    result = one_way_anova(groups)
    ours = {"ss_between": result.extra["ss_between"], "ss_within": result.extra["ss_within"], "f": result.statistic}
    exact = exact_anova(groups)
    for key, value in certified.items():
        best = lre(exact[key], value)
        got = lre(ours[key], value)
        assert got >= best - 0.5, f"NIST StRD {path.stem} certified {key}: LRE {got:.2f} vs exact {best:.2f}"
        assert got >= EXPECTED_MINIMUM.get(path.stem, 9.7), f"NIST StRD {path.stem} {key}: LRE {got:.2f}"


def test_norris_r_squared() -> None:
    """Pearson r^2 on NIST Norris equals the certified R-squared 0.999993745883712 to 9 significant digits."""
    lines = (NIST / "nist_linregress" / "Norris.dat").read_text().splitlines()
    start = next(i for i, line in enumerate(lines) if re.match(r"\s*Data:\s+y\s+x", line))
    pairs = np.array([[float(t) for t in line.split()] for line in lines[start + 1 :] if line.strip()])
    assert pairs.shape == (36, 2)
    result = pearson_r(pairs[:, 0], pairs[:, 1])
    # NIST StRD Norris certified R-Squared
    assert lre(result.extra["r_squared"], 0.999993745883712) >= 9.0
