"""Measurement-type inference and usable values (statmargin.plan.types).

The data here are invented small columns; the rules checked are the documented
ones in statmargin/plan/types.py (common practice, no single source).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from statmargin.errors import RoleError
from statmargin.plan.model import ColumnChoice
from statmargin.plan.types import infer_type, usable_values
from statmargin.read.table import Column, Table
from statmargin.vocabulary import MeasureType


def col(values, name: str = "x") -> Column:
    """One Column built the same way the Python API builds them."""
    return Table.from_frame(pd.DataFrame({name: values})).column(name)


class TestInferType:
    def test_decimals_are_continuous(self):
        """Numbers with decimals are continuous."""
        info = infer_type(col([1.5, 2.25, 3.0, 4.75, 10.1]))
        assert info.type is MeasureType.CONTINUOUS
        assert info.n_levels == 0

    def test_few_whole_numbers_are_categorical(self):
        """Whole numbers with at most 10 distinct values are read as category codes."""
        info = infer_type(col([1, 2, 3, 1, 2, 3, 2, 1, 1, 2] * 3))
        assert info.type is MeasureType.CATEGORICAL
        assert info.levels == ("1", "2", "3")
        assert info.n_levels == 3

    def test_binary_codes(self):
        """A 0/1 column is a two-level category."""
        info = infer_type(col([0, 1, 1, 0, 1]))
        assert info.is_binary
        assert info.levels == ("0", "1")

    def test_eleven_whole_numbers_are_continuous(self):
        """Eleven distinct whole numbers pass the 10-code limit, so they are continuous."""
        info = infer_type(col(list(range(11)) + [3, 4]))
        assert info.type is MeasureType.CONTINUOUS

    def test_unique_whole_numbers_are_identifier(self):
        """More than 20 distinct whole numbers, one per row, are an identifier."""
        assert infer_type(col(list(range(101, 126)))).type is MeasureType.IDENTIFIER

    def test_unique_text_is_identifier(self):
        """More than 20 text values, over 90% distinct, are an identifier."""
        assert infer_type(col([f"P{i:03d}" for i in range(25)])).type is MeasureType.IDENTIFIER

    def test_text_labels_are_categorical_sorted(self):
        """Text with few labels is categorical; levels are sorted alphabetically."""
        info = infer_type(col(["north", "south", "east", "north", "east"]))
        assert info.type is MeasureType.CATEGORICAL
        assert info.levels == ("east", "north", "south")

    def test_empty(self):
        """A column with no values is empty."""
        assert infer_type(col([None, None, None])).type is MeasureType.EMPTY

    def test_dates_dominant(self):
        """A column whose cells were mostly dates is a date column."""
        c = col([45000.0, 45001.0, 45002.0, 45003.0])
        c.n_dates = 4
        assert infer_type(c).type is MeasureType.DATE

    def test_user_override_wins(self):
        """treat_as overrides the inferred type."""
        info = infer_type(col([1, 2, 3, 1, 2]), ColumnChoice("x", treat_as=MeasureType.CONTINUOUS))
        assert info.type is MeasureType.CONTINUOUS
        assert not info.inferred

    def test_ordinal_text_needs_order(self):
        """Ordinal text without a label order is refused with a one-line RoleError."""
        with pytest.raises(RoleError, match="lowest first"):
            infer_type(col(["low", "high", "mid"]), ColumnChoice("x", treat_as=MeasureType.ORDINAL))


class TestUsableValues:
    def test_text_in_numeric_column_is_excluded(self):
        """Text cells in a numeric column are left out and counted."""
        c = col([1.5, "n/a?", 2.5, None, 3.5])
        vals = usable_values(c, infer_type(c))
        assert vals.n == 3
        assert vals.excluded == {"text in a numeric column": 1}
        np.testing.assert_array_equal(vals.values[vals.usable], [1.5, 2.5, 3.5])

    def test_ordinal_labels_become_ranks(self):
        """Ordinal labels with an order map to ranks 1..k; unknown labels are excluded."""
        c = col(["mild", "none", "severe", "mild", "unsure"])
        info = infer_type(c, ColumnChoice("x", treat_as=MeasureType.ORDINAL, order=["none", "mild", "severe"]))
        vals = usable_values(c, info)
        np.testing.assert_array_equal(vals.values, [2.0, 1.0, 3.0, 2.0, np.nan])
        assert vals.excluded == {"not one of the ordered levels": 1}

    def test_numeric_ordinal_keeps_numbers(self):
        """Numeric ordinal values keep their own numbers."""
        c = col([1, 5, 3, 5])
        vals = usable_values(c, infer_type(c, ColumnChoice("x", treat_as=MeasureType.ORDINAL)))
        np.testing.assert_array_equal(vals.values, [1.0, 5.0, 3.0, 5.0])

    def test_categorical_labels_from_numbers(self):
        """Numeric category codes become labels without a decimal point."""
        c = col([1, 2, 2, None])
        vals = usable_values(c, infer_type(c))
        assert list(vals.values) == ["1", "2", "2", None]
        assert vals.n == 3


def test_category_labels_of_numbers_match_the_one_by_one_text():
    """Numbers as category labels: the array path gives what ``format_number`` gives each value
    (whole numbers without ".0", others as Python's shortest repr)."""
    from statmargin.plan.types import category_labels, format_number

    values = [-3.0, -0.0, 1.0, 2.5, 1e14, 1e15, 1e16, 123456789012345.0, 0.1, 1e-7, 7.0, None]
    labels = category_labels(col(values))
    assert labels.tolist() == [None if v is None else format_number(v) for v in values]
    assert labels.tolist()[:4] == ["-3", "0", "1", "2.5"]
