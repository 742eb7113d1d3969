"""Wall-clock seconds and peak memory by pipeline stage, always on and nearly free.

The pipeline marks its steps with :func:`stage` (a context manager) or
:func:`add`; each costs two clock reads and one ``getrusage`` call, so the
timer stays on in every run. Stage names are dotted: ``"analyses.types"`` is
time spent inside ``"analyses"``, so sub-stages are parts of their parent, not
additions to the total.

When the environment variable ``STATMARGIN_STAGES`` names a file, the times
are written there as JSON when the process exits; the benchmark harness
(``benchmarks/run_benchmark.py``) reads that file for its stage split.
"""

from __future__ import annotations

import atexit
import json
import os
import sys
import time
from collections.abc import Iterator
from contextlib import contextmanager

try:
    import resource
except ImportError:  # Windows has no resource module; peak memory then reads 0
    resource = None  # type: ignore[assignment]

ENV_VAR = "STATMARGIN_STAGES"

_seconds: dict[str, float] = {}
_peak_mib: dict[str, float] = {}  # process peak resident memory when the stage last ended
_calls: dict[str, int] = {}


def _peak_rss_mib() -> float:
    """Peak resident memory of this process so far (Linux reports KiB, macOS bytes)."""
    if resource is None:
        return 0.0
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak / 2**20 if sys.platform == "darwin" else peak / 1024


def add(name: str, seconds: float) -> None:
    """Add ``seconds`` to stage ``name`` and note the process's peak memory now."""
    _seconds[name] = _seconds.get(name, 0.0) + seconds
    _calls[name] = _calls.get(name, 0) + 1
    _peak_mib[name] = _peak_rss_mib()


@contextmanager
def stage(name: str) -> Iterator[None]:
    """Time the ``with`` block as (part of) stage ``name``."""
    start = time.perf_counter()
    try:
        yield
    finally:
        add(name, time.perf_counter() - start)


def snapshot() -> dict[str, dict[str, float]]:
    """Every stage so far: ``{name: {"seconds", "calls", "peak_mib"}}`` in the order first seen."""
    return {
        name: {"seconds": _seconds[name], "calls": _calls[name], "peak_mib": _peak_mib[name]}
        for name in _seconds
    }


def reset() -> None:
    """Forget every stage (tests and repeated runs in one process)."""
    _seconds.clear()
    _calls.clear()
    _peak_mib.clear()


def _write_at_exit(path: str) -> None:
    record = {"stages": snapshot(), "peak_mib": _peak_rss_mib()}
    try:
        with open(path, "w", encoding="utf-8") as handle:
            json.dump(record, handle, indent=1)
    except OSError:
        pass  # a benchmark aid only; never a reason for a run to fail


if os.environ.get(ENV_VAR):
    atexit.register(_write_at_exit, os.environ[ENV_VAR])
