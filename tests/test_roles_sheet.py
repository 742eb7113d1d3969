"""The roles sheet's layout and the parsing of the user's choices back from it."""

import pytest

from statmargin.errors import RoleError
from statmargin.io.addresses import column_letter
from statmargin.plan.model import ColumnChoice, Plan, Settings
from statmargin.plan.roles_sheet import (
    HEADERS,
    STATUS_MISSING,
    ColumnFacts,
    build_roles_sheet,
    parse_roles_sheet,
)
from statmargin.vocabulary import AdjustMethod, Alternative, MeasureType, Role, ShapeHandling

FACTS = [
    ColumnFacts("Site", "A", "categorical", "North, South", 0, 0),
    ColumnFacts("Wait (minutes)", "B", "continuous", "12, 40, 7", 2, 1),
    ColumnFacts("Client ID", "C", "identifier", "C-001, C-002", 0, 0),
]


def as_rows(model):
    """The model's cell values as the rows a reader would return (None for empty cells)."""
    rows = [[None] * model.n_cols for _ in range(model.n_rows)]
    for (r, c), cell in model.cells.items():
        rows[r][c] = cell.value
    return rows


def test_round_trip_keeps_every_choice():
    """Choices laid out on the sheet are read back unchanged."""
    plan = Plan(
        columns=[
            ColumnChoice("Site", role=Role.COMPARE_BY),
            ColumnChoice("Wait (minutes)", role=Role.OUTCOME, shape=ShapeHandling.RANK, against="15"),
            ColumnChoice("Client ID", role=Role.PAIRING_KEY, treat_as=MeasureType.CATEGORICAL),
        ],
        settings=Settings(confidence=0.9, adjust=AdjustMethod.BH, alternative=Alternative.GREATER),
    )
    model = build_roles_sheet(FACTS, plan, data_sheet="Visits", header_row=3)
    parsed = parse_roles_sheet(as_rows(model)).plan
    assert parsed.sheet == "Visits"
    assert parsed.header_row == 3
    assert parsed.settings.confidence == 0.9
    assert parsed.settings.adjust is AdjustMethod.BH
    assert parsed.settings.alternative is Alternative.GREATER
    assert [(c.name, c.role, c.shape, c.against, c.treat_as) for c in parsed.columns] == [
        ("Site", Role.COMPARE_BY, ShapeHandling.AUTO, None, None),
        ("Wait (minutes)", Role.OUTCOME, ShapeHandling.RANK, "15", None),
        ("Client ID", Role.PAIRING_KEY, ShapeHandling.AUTO, None, MeasureType.CATEGORICAL),
    ]


def test_dropdowns_cover_the_editable_cells():
    """Role, treat-as and shape cells carry dropdown lists with the enum words."""
    model = build_roles_sheet(FACTS, Plan(), data_sheet="Visits", header_row=1)
    lists = {tuple(v.choices) for v in model.validations}
    assert tuple(r.value for r in Role) in lists
    assert ("outcome", "compare by", "pairing key", "period", "count", "events", "ignore") in lists
    assert ("auto", "assume normal", "rank-based") in lists
    assert ("holm", "benjamini-hochberg", "none") in lists


def test_missing_columns_are_flagged_and_kept():
    """A column that left the data keeps its row and choices, flagged as gone."""
    gone = ColumnChoice("Old score", role=Role.OUTCOME)
    model = build_roles_sheet(FACTS, Plan(), data_sheet="Visits", header_row=1, missing=[gone])
    parsed = parse_roles_sheet(as_rows(model))
    assert parsed.missing == ["Old score"]
    assert parsed.plan.choice("Old score").role is Role.OUTCOME
    statuses = [c.value for (r, col), c in model.cells.items() if col == HEADERS.index("Status")]
    assert STATUS_MISSING in statuses


def test_typed_words_are_case_insensitive_and_numbers_are_kept_as_typed():
    """'Outcome' typed by hand counts, and a numeric comparison value 20.0 reads as '20'."""
    rows = as_rows(build_roles_sheet(FACTS, Plan(), data_sheet="Visits", header_row=1))
    header = next(i for i, r in enumerate(rows) if r[0] == "Column")
    rows[header + 2][HEADERS.index("Role")] = "Outcome "
    rows[header + 2][HEADERS.index("Compare with")] = 20.0
    rows[header + 2][HEADERS.index("Label order")] = "low, mid , high"
    choice = parse_roles_sheet(rows).plan.choice("Wait (minutes)")
    assert (choice.role, choice.against, choice.order) == (Role.OUTCOME, "20", ["low", "mid", "high"])


def test_confidence_typed_as_percent_is_accepted():
    """A confidence level typed as 95 means 0.95."""
    rows = as_rows(build_roles_sheet(FACTS, Plan(), data_sheet="Visits", header_row=1))
    row = next(r for r in rows if r[0] == "Confidence level")
    row[1] = 95
    assert parse_roles_sheet(rows).plan.settings.confidence == pytest.approx(0.95)


def test_unknown_role_word_names_the_cell():
    """A misspelt role is refused with the cell address and the allowed words."""
    rows = as_rows(build_roles_sheet(FACTS, Plan(), data_sheet="Visits", header_row=1))
    header = next(i for i, r in enumerate(rows) if r[0] == "Column")
    rows[header + 1][HEADERS.index("Role")] = "outcom"
    with pytest.raises(RoleError) as err:
        parse_roles_sheet(rows)
    assert str(err.value) == (
        f"The cell {column_letter(HEADERS.index('Role'))}{header + 2} of sheet 'statmargin roles' says 'outcom'; "
        "choose one of: outcome, compare by, pairing key, period, count, events, ignore."
    )


def test_sheet_without_column_table_is_refused():
    """A roles sheet whose table was deleted gets a one-line fix."""
    with pytest.raises(RoleError, match="run 'statmargin plan'"):
        parse_roles_sheet([["Column roles"], ["something else"]])
