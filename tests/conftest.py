"""Shared fixtures for the test suite."""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import Any

import pytest
from hypothesis import settings

# CI runs property tests with a fixed seed so a red run always reproduces; locally they explore.
settings.register_profile("ci", derandomize=True)
if os.environ.get("CI"):
    settings.load_profile("ci")


@pytest.fixture
def tmp_workbook(tmp_path: Path) -> Callable[..., Path]:
    """Factory: write columns (header -> values) to a new .xlsx in tmp_path and return its path.

    ``None`` and NaN values become blank cells. Pass ``sheets={"name": columns, ...}``
    instead of ``columns`` for several sheets (written in the given order).
    """
    import math

    import xlsxwriter

    counter = {"n": 0}

    def make(
        columns: Mapping[str, Sequence[Any]] | None = None,
        *,
        name: str | None = None,
        sheet: str = "data",
        sheets: Mapping[str, Mapping[str, Sequence[Any]]] | None = None,
    ) -> Path:
        counter["n"] += 1
        path = tmp_path / (name or f"book{counter['n']}.xlsx")
        book = xlsxwriter.Workbook(str(path))
        for sheet_name, cols in (sheets or {sheet: columns or {}}).items():
            ws = book.add_worksheet(sheet_name)
            for j, (header, values) in enumerate(cols.items()):
                ws.write_string(0, j, str(header))
                for i, value in enumerate(values, start=1):
                    if value is None or (isinstance(value, float) and math.isnan(value)):
                        continue
                    if isinstance(value, str):
                        ws.write_string(i, j, value)
                    else:
                        ws.write_number(i, j, float(value))
        book.close()
        return path

    return make
