"""The choose-then-test simulation at its CI size: error rates and coverage within Monte Carlo error."""

from __future__ import annotations

import importlib.util
import math
import sys
from pathlib import Path

import pytest

SCRIPT = Path(__file__).resolve().parents[1] / "simulations" / "choose_then_test.py"
REPS, REPS_ALT = 300, 100


def _load():  # the script is not a package module; load it by path
    spec = importlib.util.spec_from_file_location("choose_then_test", SCRIPT)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules["choose_then_test"] = module
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def rows() -> list[dict]:
    return _load().run(quick=True, reps=REPS, reps_alt=REPS_ALT, workers=2)


def _se(rate: float, runs: int) -> float:
    return math.sqrt(rate * (1 - rate) / runs)


def test_false_positive_rate_is_near_five_percent(rows: list[dict]) -> None:
    """With no difference the procedure rejects at 0.05 within 3 Monte Carlo SEs (0.013 at 300 runs)."""
    for row in rows:
        assert abs(row["null"]["rate"] - 0.05) <= 3 * _se(0.05, REPS), row["label"]


def test_intervals_cover_their_true_values(rows: list[dict]) -> None:
    """Estimate and effect intervals cover at least 93%, allowing 3 Monte Carlo SEs."""
    for row in rows:
        for phase, runs in (("null", REPS), ("alt", REPS_ALT)):
            for role in ("estimate", "effect"):
                coverage = row[phase]["coverage"].get(role)
                if coverage is not None:
                    assert coverage >= 0.93 - 3 * _se(0.93, runs), (row["label"], phase, role)


def test_unequal_spreads_beat_always_rank(rows: list[dict]) -> None:
    """Where spreads and sizes differ, always-rank (Mann-Whitney / Kruskal-Wallis) is far off 0.05; the procedure is not."""
    unequal = [row for row in rows if row["cell"]["shape"] == "unequal"]
    assert unequal
    for row in unequal:
        assert row["null"]["always_rank"] > 0.05 + 3 * _se(0.05, REPS), row["label"]


def test_power_is_reported_beside_the_references(rows: list[dict]) -> None:
    """Every cell reports power for the procedure, always-Welch and always-rank, all between 0 and 1."""
    for row in rows:
        alt = row["alt"]
        assert 0.0 <= min(alt["rate"], alt["always_welch"], alt["always_rank"])
        assert max(alt["rate"], alt["always_welch"], alt["always_rank"]) <= 1.0
        assert alt["rate"] > row["null"]["rate"], row["label"]
