"""Inputs built by hand through the Python API (not through a plan or a file name).

The planner never builds these, but ``run_analysis`` and ``first_data_sheet`` are
public, so a hand-built question or an open source passed twice must end in a
one-line typed error or a sensible answer, never a traceback. All values are
invented.
"""

from __future__ import annotations

import pandas as pd
import pytest

from statmargin.designs.engine import run_analysis
from statmargin.errors import OptionError
from statmargin.io.memory import MemoryWorkbook
from statmargin.options import make_settings
from statmargin.plan.expand import Analysis
from statmargin.read.reader import first_data_sheet
from statmargin.read.table import Table

# Invented waits (minutes) at two invented sites.
WAITS = Table.from_frame(
    pd.DataFrame(
        {
            "Wait": [12.0, 15.5, 9.0, 20.0, 14.0, 11.5],
            "Site": ["North", "North", "North", "South", "South", "South"],
        }
    )
)


def one_sheet_book(sheet: str) -> MemoryWorkbook:
    """A workbook held in memory with one sheet of invented rows."""
    return MemoryWorkbook.from_sheets({sheet: [["Wait"], [12.0]]}, name="in-memory book")


def test_question_with_nothing_to_compare_is_refused():
    """An outcome with no compare-by column, value or partner gets a typed one-line error."""
    with pytest.raises(OptionError, match="Nothing to compare Wait with") as info:
        run_analysis(WAITS, Analysis("Wait"), make_settings())
    assert "\n" not in str(info.value)


def test_shares_against_a_numeric_outcome_are_refused():
    """Shares by label given for a column of numbers get a typed error, not a TypeError."""
    analysis = Analysis("Wait", against={"North": 0.5})
    with pytest.raises(OptionError, match="give one number such as 20") as info:
        run_analysis(WAITS, analysis, make_settings())
    assert "\n" not in str(info.value)


def test_hand_built_one_sample_question_still_runs():
    """A single number against a numeric outcome still runs a one-sample test on every value."""
    result, _ = run_analysis(WAITS, Analysis("Wait", against=10.0), make_settings())
    assert result.skipped is None
    assert result.design == "one_sample_continuous"
    assert result.n == 6


def test_first_data_sheet_with_a_source_in_both_places():
    """An open source passed first and another by keyword: the keyword one is read, no TypeError."""
    assert first_data_sheet(one_sheet_book("Ignored"), source=one_sheet_book("Visits")) == "Visits"
