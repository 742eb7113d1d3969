"""Load the R 4.2.2 reference cases (tests/reference/r_cases.json) and their data.

Values in r_cases.json were computed by R 4.2.2 (stats package) on datasets from the
R datasets package; see tests/reference/README.md for the conventions. The CSV of a
case is its data frame before missing values are dropped.
"""

from __future__ import annotations

import functools
import json
from pathlib import Path
from typing import Any

import pandas as pd

REFERENCE_DIR = Path(__file__).parent / "reference"


@functools.lru_cache(maxsize=1)
def _all_cases() -> dict[str, dict[str, Any]]:
    """Parse r_cases.json once; cases keyed by case_id."""
    with open(REFERENCE_DIR / "r_cases.json", encoding="utf-8") as handle:
        document = json.load(handle)
    return {case["case_id"]: case for case in document["cases"]}


def load_case(case_id: str) -> tuple[dict[str, Any], pd.DataFrame]:
    """Return one case's dict and its data frame (level columns read as text)."""
    case = _all_cases()[case_id]
    frame = pd.read_csv(REFERENCE_DIR / case["data_file"], dtype=_text_columns(case))
    return case, frame


def cases_by_design(design: str) -> list[str]:
    """The case ids of one design, in file order."""
    return [case_id for case_id, case in _all_cases().items() if case["design"] == design]


def _text_columns(case: dict[str, Any]) -> dict[str, type]:
    """Group, pairing and category columns stay text so labels match R's levels."""
    variables = case.get("variables") or {}
    names = [variables.get(key) for key in ("group", "paired_id", "row_var", "col_var")]
    return {name: str for name in names if name}


def assert_close(actual: float, expected: float, *, rel: float, abs_floor: float = 0.0, context: str = "") -> None:
    """Assert ``actual`` matches a reference value to ``rel`` (or within ``abs_floor``)."""
    import math

    assert actual is not None and expected is not None, context
    tolerance = max(rel * abs(expected), abs_floor)
    assert math.isfinite(actual) and abs(actual - expected) <= tolerance, (
        f"{context}: got {actual!r}, reference {expected!r} (tolerance {tolerance:.3g})"
    )


def group_arrays(case: dict[str, Any], frame: pd.DataFrame) -> dict[str, Any]:
    """Complete-case outcome values per group level, in R's level order."""
    variables = case["variables"]
    outcome, group = variables["outcome"], variables["group"]
    complete = frame.dropna(subset=[outcome, group])
    return {level: complete.loc[complete[group] == level, outcome].to_numpy(float) for level in case["group_levels"]}


def paired_arrays(case: dict[str, Any], frame: pd.DataFrame) -> tuple[Any, Any]:
    """x1 and x2 of a paired case, merged on the pairing key as the case's r_data_prep does."""
    variables = case["variables"]
    outcome, group, key = variables["outcome"], variables["group"], variables["paired_id"]
    complete = frame.dropna(subset=[outcome, group, key])
    levels = sorted(complete[group].unique())
    first = complete[complete[group] == levels[0]][[key, outcome]]
    second = complete[complete[group] == levels[1]][[key, outcome]]
    merged = first.merge(second, on=key, suffixes=(".1", ".2"))
    return merged[f"{outcome}.1"].to_numpy(float), merged[f"{outcome}.2"].to_numpy(float)
