"""The benchmark's generator and harness run end to end at a tiny size (a smoke test: no timing is judged).

The workbook is the benchmark's own invented visit log (``benchmarks/generate.py``).
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import python_calamine

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO / "benchmarks"))

import generate  # noqa: E402 - the benchmark scripts are not a package

STEPS = ["floor", "copy", "read", "plan", "run", "test (rank)", "test (normal)"]


def test_generator_writes_the_described_sheet(tmp_path):
    """The generated sheet has the 12 headers, one row per record, shared strings and dirty cells."""
    path = generate.write_workbook(tmp_path / "tiny.xlsx", 3000, seed=7)
    rows = python_calamine.CalamineWorkbook.from_path(str(path)).get_sheet_by_name("Visits").to_python()
    assert rows[0] == generate.HEADERS
    assert len(rows) == 3001
    assert [r[0] for r in rows[1:4]] == [1.0, 2.0, 3.0]
    sites = {r[2] for r in rows[1:]}
    assert sites <= set(generate.SITES) and len(sites) == len(generate.SITES)
    wait = [r[5] for r in rows[1:]]
    assert any(v == "" for v in wait) and any(isinstance(v, str) and v in generate.DIRTY_TEXTS for v in wait)
    again = generate.write_workbook(tmp_path / "again.xlsx", 3000, seed=7)
    assert again.read_bytes() == path.read_bytes()


def test_harness_writes_a_row_for_every_step(tmp_path):
    """A tiny run writes the results table with every step and positive times and memory."""
    results = tmp_path / "results"
    subprocess.run(
        [sys.executable, str(REPO / "benchmarks" / "run_benchmark.py"), "--rows", "300", "--reps", "1",
         "--work", str(tmp_path / "work"), "--results", str(results), "--src", str(REPO / "src")],
        check=True, capture_output=True, timeout=600,
    )
    text = (results / "300.md").read_text(encoding="utf-8")
    for step in STEPS:
        row = next(line for line in text.splitlines() if line.startswith(f"| {step} |"))
        cells = [c.strip() for c in row.strip("|").split("|")]
        seconds, peak = float(cells[1]), float(cells[4])
        assert seconds > 0 and peak > 0, row
    assert re.search(r"Stage split of `run`", text)
    for stage in ("| read |", "| analyses |", "| follow-ups |", "| report |", "| write |"):
        assert stage in text
    assert "Machine:" in text
