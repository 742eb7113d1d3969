"""Expanding roles into analyses and parsing comparison values (statmargin.plan).

The data are invented small tables.
"""

from __future__ import annotations

import pandas as pd
import pytest

from statmargin.errors import ColumnNotFoundError, OptionError, RoleError
from statmargin.options import parse_against
from statmargin.plan.expand import expand
from statmargin.plan.model import ColumnChoice, Plan
from statmargin.plan.types import TypeInfo
from statmargin.read.table import Table
from statmargin.vocabulary import MeasureType, Role

CONT = TypeInfo(MeasureType.CONTINUOUS)
ABC = TypeInfo(MeasureType.CATEGORICAL, 3, ("A", "B", "C"))
YES_NO = TypeInfo(MeasureType.CATEGORICAL, 2, ("no", "yes"))

# Invented: visits at three sites, before/after on the same people.
FRAME = pd.DataFrame(
    {
        "person": [1, 1, 2, 2, 3, 3],
        "when": ["before", "after"] * 3,
        "site": ["A", "A", "B", "B", "C", "C"],
        "wait": [10.5, 8.25, 12.0, 9.5, 15.75, 11.0],
        "later": [9.0, 7.5, 11.0, 8.0, 14.0, 10.5],
    }
)
TABLE = Table.from_frame(FRAME)


class TestParseAgainst:
    def test_number_for_continuous(self):
        """A number is the comparison value of a continuous outcome."""
        assert parse_against(" 20 ", CONT) == 20.0

    def test_one_share(self):
        """LABEL=SHARE gives one share."""
        assert parse_against("yes=0.3", YES_NO) == {"yes": 0.3}

    def test_percent_share(self):
        """Shares may be written as percentages."""
        assert parse_against("yes=30%", YES_NO) == {"yes": pytest.approx(0.3)}

    def test_all_shares(self):
        """A full set of shares names every category and adds to 1."""
        assert parse_against("A=0.25,B=0.25,C=0.5", ABC) == {"A": 0.25, "B": 0.25, "C": 0.5}

    @pytest.mark.parametrize(
        "text,info,message",
        [
            ("abc", CONT, "is not a number"),
            ("A=0.5", CONT, "gives shares, but x holds numbers"),
            ("0.5", YES_NO, "write LABEL=SHARE"),
            ("D=0.5", ABC, "'D' is not a category of x (categories: A, B, C)"),
            ("A=0.5,B=0.5", ABC, "shares are missing for 'C'"),
            ("A=0.5,B=0.3,C=0.3", ABC, "add up to 1.1, not 1"),
            ("yes=1.5", YES_NO, "must be between 0 and 1"),
            ("", CONT, "is empty"),
        ],
    )
    def test_bad_values_give_one_line(self, text, info, message):
        """A value that does not fit the outcome is an OptionError with a one-line message."""
        with pytest.raises(OptionError, match=message.replace("(", r"\(").replace(")", r"\)")) as err:
            parse_against(text, info, column="x")
        assert "\n" not in str(err.value)


class TestExpand:
    def test_outcome_by_each_compare_column(self):
        """Each outcome is analysed by each compare-by column, in plan order."""
        plan = Plan(columns=[ColumnChoice("wait", Role.OUTCOME), ColumnChoice("site", Role.COMPARE_BY),
                             ColumnChoice("when", Role.COMPARE_BY)])
        got = [(a.outcome, a.by, a.pairing_key) for a in expand(plan, TABLE)]
        assert got == [("wait", "site", None), ("wait", "when", None)]

    def test_against_and_pairs_come_first(self):
        """The comparison value and the wide-form pair come before compare-by analyses."""
        plan = Plan(columns=[ColumnChoice("wait", Role.OUTCOME, against="10", paired_with="later"),
                             ColumnChoice("site", Role.COMPARE_BY)])
        got = expand(plan, TABLE)
        assert got[0].against == 10.0 and got[0].by is None
        assert got[1].paired_with == "later"
        assert got[2].by == "site"

    def test_pairing_key_goes_with_compare_by(self):
        """A pairing key is attached to each compare-by analysis."""
        plan = Plan(columns=[ColumnChoice("wait", Role.OUTCOME), ColumnChoice("when", Role.COMPARE_BY),
                             ColumnChoice("person", Role.PAIRING_KEY)])
        (a,) = expand(plan, TABLE)
        assert (a.by, a.pairing_key) == ("when", "person")

    def test_no_outcome(self):
        """A plan without an outcome is refused."""
        with pytest.raises(RoleError, match="mark at least one outcome"):
            expand(Plan(columns=[ColumnChoice("site", Role.COMPARE_BY)]), TABLE)

    def test_two_pairing_keys(self):
        """Only one pairing key is allowed."""
        plan = Plan(columns=[ColumnChoice("wait", Role.OUTCOME), ColumnChoice("when", Role.COMPARE_BY),
                             ColumnChoice("person", Role.PAIRING_KEY), ColumnChoice("site", Role.PAIRING_KEY)])
        with pytest.raises(RoleError, match="Only one pairing key"):
            expand(plan, TABLE)

    def test_outcome_with_nothing_to_compare(self):
        """An outcome with no comparison at all is refused with what to do."""
        with pytest.raises(RoleError, match="has nothing to be compared with"):
            expand(Plan(columns=[ColumnChoice("wait", Role.OUTCOME)]), TABLE)

    def test_unknown_column_suggests(self):
        """A misspelt column name suggests the closest header."""
        with pytest.raises(ColumnNotFoundError, match="Did you mean 'wait'"):
            expand(Plan(columns=[ColumnChoice("wiat", Role.OUTCOME)]), TABLE)

    def test_bad_against_in_plan(self):
        """A comparison value that does not fit is refused while expanding."""
        plan = Plan(columns=[ColumnChoice("site", Role.OUTCOME, against="A=0.5,B=0.5")])
        with pytest.raises(OptionError, match="shares are missing for 'C'"):
            expand(plan, TABLE)


def test_ignored_missing_column_is_fine():
    """A column marked ignore that is no longer in the sheet does not stop the plan."""
    plan = Plan(columns=[ColumnChoice("wait", Role.OUTCOME), ColumnChoice("site", Role.COMPARE_BY),
                         ColumnChoice("old column", Role.IGNORE)])
    assert [a.by for a in expand(plan, TABLE)] == ["site"]
