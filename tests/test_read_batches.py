"""The batched reader gives, cell for cell, what classifying each cell on its own gives.

The reader fills columns a batch at a time and switches between a numbers-first
and a codebook-first way of filling as the column's content changes; both must
agree with ``classify_cell`` applied to every cell (the reader's documented cell
rules). The rows are invented and seeded.
"""

from __future__ import annotations

import datetime as dt
import math
import random

import numpy as np
import pytest

from statmargin.io.memory import MemoryWorkbook
from statmargin.read import reader
from statmargin.read.reader import classify_cell, read_table

# One pool per kind of column; every value is a kind of cell the reader meets.
ODD_CELLS = [
    "", None, "   ", "North", " South ", "NA", "n/a", "#N/A", "<5", "1,250", "12.5%", "2 400",
    True, False, 1, 0, dt.date(2024, 1, 2), dt.datetime(2024, 1, 2, 12, 30), math.nan, "see notes",
]


def _cell(rng: random.Random, numeric_share: float):
    if rng.random() < numeric_share:
        return rng.choice([rng.uniform(-50, 50), float(rng.randint(0, 3))])
    return rng.choice(ODD_CELLS)


def _rows(seed: int, n: int) -> list[list]:
    """Three columns whose mix of numbers and other cells changes every 20 rows."""
    rng = random.Random(seed)
    rows: list[list] = [["A", "B", "C"]]
    for i in range(n):
        phase = (i // 20) % 3
        shares = [(0.95, 0.1, 0.5), (0.1, 0.95, 0.5), (0.6, 0.4, 0.0)][phase]
        rows.append([_cell(rng, share) for share in shares])
    rows.append([1.5, 2.5, 3.5])  # a last row with numbers, so no trailing rows are dropped
    return rows


def _expected(values: list):
    numbers, labels, blank, unreadable, dates, noted = [], [], 0, 0, 0, 0
    for value in values:
        if type(value) is float and math.isnan(value):
            value = None
        if value is None or value == "":
            numbers.append(math.nan)
            labels.append(None)
            blank += 1
            continue
        kind, number, label = classify_cell(value)
        numbers.append(number)
        labels.append(label)
        blank += kind in (reader._BLANK, reader._MARKER)
        unreadable += kind in (reader._ERROR, reader._SUPP)
        dates += kind == reader._DATE
        noted += kind in reader._NOTED
    return np.array(numbers), labels, blank, unreadable, dates, noted


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_batches_match_cell_by_cell_rules(seed, monkeypatch):
    """Numbers, labels and counts equal the one-cell-at-a-time classification, across mode switches."""
    monkeypatch.setattr(reader, "BATCH_ROWS", 7)
    rows = _rows(seed, 300)
    table = read_table(None, source=MemoryWorkbook.from_sheets({"Data": rows}))
    assert table.n_rows_read == len(rows) - 1
    for j, name in enumerate(["A", "B", "C"]):
        numbers, labels, blank, unreadable, dates, noted = _expected([r[j] for r in rows[1:]])
        column = table.columns[name]
        np.testing.assert_array_equal(column.numbers, numbers)
        assert column.labels.tolist() == labels
        assert (column.n_blank, column.n_unreadable, column.n_dates) == (blank, unreadable, dates)
        assert sum(1 for n in table.notes if n.column == name) == noted


def test_true_and_one_keep_their_own_meaning(monkeypatch):
    """TRUE stays the label "TRUE" and the number 1 stays a number, even in one batch."""
    monkeypatch.setattr(reader, "BATCH_ROWS", 4)
    rows = [["A"], [1.0], [True], [1], ["x"], [True], [1.0], [1], [False], [0]]
    column = read_table(None, source=MemoryWorkbook.from_sheets({"Data": rows})).columns["A"]
    assert column.labels.tolist() == [None, "TRUE", None, "x", "TRUE", None, None, "FALSE", None]
    np.testing.assert_array_equal(column.numbers, [1, np.nan, 1, np.nan, np.nan, 1, 1, np.nan, 0])
