"""Rows of events out of a total listed as the people they stand for, one per row (for record-level checks)."""

from __future__ import annotations

import pandas as pd


def records_of(rows: pd.DataFrame) -> pd.DataFrame:
    """Each row's Positive people (Result "Positive") and its Screened - Positive others ("Negative"), with Site."""
    site, result = [], []
    for row in rows.itertuples(index=False):
        site += [row.Site] * int(row.Screened)
        result += ["Positive"] * int(row.Positive) + ["Negative"] * int(row.Screened - row.Positive)
    return pd.DataFrame({"Site": site, "Result": result})
