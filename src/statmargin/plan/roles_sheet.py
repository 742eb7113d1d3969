"""The roles sheet: where the user marks what each column is for.

``build_roles_sheet`` lays the sheet out (one row per data column, dropdowns on
the cells the user edits, a small settings block); ``parse_roles_sheet`` reads
the user's choices back from the sheet's cell values into a ``Plan``. Both sides
use the labels defined here, so layout and parsing cannot drift apart.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

from ..errors import RoleError
from ..sheets.model import SheetModel, Validation
from ..vocabulary import AdjustMethod, Alternative, MeasureType, Role, ShapeHandling
from .model import ColumnChoice, Plan, Settings

KIND = "roles"
SHEET_NAME = "statmargin roles"

# Settings block: label shown in column A -> Plan/Settings attribute.
SETTING_LABELS = {
    "Data sheet": "sheet",
    "Header row": "header_row",
    "Confidence level": "confidence",
    "Multiple comparisons": "adjust",
    "Sides": "alternative",
}

# Column table, in sheet order. The first six are filled by the tool; the rest are the user's.
HEADERS = (
    "Column",
    "Letter",
    "Inferred type",
    "Sample values",
    "Blank cells",
    "Unreadable cells",
    "Role",
    "Treat as",
    "Shape",
    "Compare with",
    "Paired with",
    "Label order",
    "Status",
)
_COL = {name: i for i, name in enumerate(HEADERS)}
TREAT_CHOICES = ("", *(t.value for t in (MeasureType.CONTINUOUS, MeasureType.CATEGORICAL, MeasureType.ORDINAL)))

INSTRUCTIONS = (
    "Pick a role for each column in the shaded cells, then press Run in Excel, "
    "or save and run: statmargin run <this file>.",
    "Each outcome is compared by every 'compare by' column, against its 'Compare with' value "
    "(85, Fail=0.10), or with its 'Paired with' column.",
)
SETTINGS_FIRST_ROW = 1 + len(INSTRUCTIONS) + 1  # 0-based row of "Data sheet"
TABLE_HEADER_ROW = SETTINGS_FIRST_ROW + len(SETTING_LABELS) + 1
STATUS_MISSING = "not in the data any more"
STATUS_NEW = "new column"


@dataclass
class ColumnFacts:
    """What the tool found in one data column, shown read-only beside the user's choices."""

    name: str
    letter: str
    inferred: str
    sample: str
    n_blank: int
    n_unreadable: int


@dataclass
class RolesSheet:
    """The roles sheet's contents as read back: the plan plus facts about the layout."""

    plan: Plan
    missing: list[str] = field(default_factory=list)  # columns flagged as gone from the data


def build_roles_sheet(
    facts: Sequence[ColumnFacts],
    plan: Plan,
    *,
    data_sheet: str,
    header_row: int,
    missing: Iterable[ColumnChoice] = (),
    new: Iterable[str] = (),
) -> SheetModel:
    """Lay out the roles sheet for the data columns in ``facts`` with the choices in ``plan``.

    Columns that were on the sheet before but are gone from the data (``missing``)
    keep their row and choices, flagged, so a user who renamed a header sees it.
    """
    model = SheetModel(name=SHEET_NAME, kind=KIND)
    model.put(0, 0, "Column roles", "title")
    for row, line in enumerate(INSTRUCTIONS, start=1):
        model.put(row, 0, line, "muted")
    settings = plan.settings
    values: dict[str, Any] = {
        "sheet": data_sheet,
        "header_row": header_row,
        "confidence": settings.confidence,
        "adjust": settings.adjust.value,
        "alternative": settings.alternative.value,
    }
    for offset, (label, attr) in enumerate(SETTING_LABELS.items()):
        row = SETTINGS_FIRST_ROW + offset
        model.put(row, 0, label, "label")
        model.put(row, 1, values[attr], "input")
        model.merged.append(f"B{row + 1}:C{row + 1}")  # room for a long sheet name
    adjust_row = SETTINGS_FIRST_ROW + list(SETTING_LABELS).index("Multiple comparisons")
    sides_row = SETTINGS_FIRST_ROW + list(SETTING_LABELS).index("Sides")
    model.validations.append(Validation(f"B{adjust_row + 1}", [m.value for m in AdjustMethod]))
    model.validations.append(Validation(f"B{sides_row + 1}", [a.value for a in Alternative]))

    model.put_row(TABLE_HEADER_ROW, list(HEADERS), "header")
    new_names = set(new)
    row = TABLE_HEADER_ROW
    for fact in facts:
        row += 1
        choice = plan.choice(fact.name) or ColumnChoice(fact.name)
        status = STATUS_NEW if fact.name in new_names else ""
        _put_column_row(model, row, fact, choice, status)
    for choice in missing:
        row += 1
        gone = ColumnFacts(choice.name, "", "", "", 0, 0)
        _put_column_row(model, row, gone, choice, STATUS_MISSING)
    first, last = TABLE_HEADER_ROW + 2, max(row + 1, TABLE_HEADER_ROW + 2)
    for header, choices in (
        ("Role", [r.value for r in Role]),
        ("Treat as", [c for c in TREAT_CHOICES if c]),
        ("Shape", [s.value for s in ShapeHandling]),
    ):
        letter = chr(65 + _COL[header])
        model.validations.append(Validation(f"{letter}{first}:{letter}{last}", choices))
    model.freeze = (TABLE_HEADER_ROW + 1, 1)
    model.landscape = True
    model.fit_to_width = True
    model.print_title_rows = (TABLE_HEADER_ROW, TABLE_HEADER_ROW)
    model.widths = {0: 24, 1: 7, 2: 14, 3: 34, 4: 11, 5: 15, 6: 14, 7: 13, 8: 15, 9: 16, 10: 16, 11: 22, 12: 22}
    return model


def _put_column_row(model: SheetModel, row: int, fact: ColumnFacts, choice: ColumnChoice, status: str) -> None:
    treat = choice.treat_as.value if choice.treat_as else ""
    order = ", ".join(choice.order) if choice.order else ""
    model.put_row(
        row,
        [fact.name, fact.letter, fact.inferred, fact.sample, fact.n_blank, fact.n_unreadable],
        "text",
    )
    model.put_row(
        row,
        [choice.role.value, treat, choice.shape.value, choice.against or "", choice.paired_with or "", order],
        "input",
        start_col=_COL["Role"],
    )
    model.put(row, _COL["Status"], status, "caution" if status else "muted")


def parse_roles_sheet(rows: Iterable[Sequence[Any]], *, sheet_name: str = SHEET_NAME) -> RolesSheet:
    """Read the user's choices back from the roles sheet's rows of cell values.

    Raises
    ------
    RoleError
        When the sheet's column table is missing or a cell holds a word that is not
        one of the dropdown's choices; the message names the cell.
    """
    plan = Plan()
    setting_values: dict[str, tuple[Any, str]] = {}
    header_at: int | None = None
    missing: list[str] = []
    for r, row in enumerate(rows):
        cells = list(row)
        first = _text(cells[0]) if cells else ""
        if header_at is None:
            if first in SETTING_LABELS and len(cells) > 1:
                setting_values[SETTING_LABELS[first]] = (cells[1], f"B{r + 1}")
            elif first == HEADERS[0] and _text(_at(cells, _COL["Role"])) == "Role":
                header_at = r
            continue
        if not first:
            continue
        choice = _parse_choice(first, cells, r + 1, sheet_name)
        plan.columns.append(choice)
        if _text(_at(cells, _COL["Status"])) == STATUS_MISSING:
            missing.append(first)
    if header_at is None:
        raise RoleError(
            f"Sheet {sheet_name!r} has no column table (a row starting 'Column' ... 'Role'); "
            "run 'statmargin plan' to make a fresh roles sheet."
        )
    plan.sheet = _text(setting_values.get("sheet", ("", ""))[0]) or None
    plan.header_row = _parse_int(setting_values.get("header_row"), sheet_name)
    plan.settings = _parse_settings(setting_values, sheet_name)
    return RolesSheet(plan=plan, missing=missing)


def _parse_choice(name: str, cells: Sequence[Any], sheet_row: int, sheet_name: str) -> ColumnChoice:
    def word(header: str) -> str:
        return _text(_at(cells, _COL[header]))

    def where(header: str) -> str:
        return f"cell {chr(65 + _COL[header])}{sheet_row} of sheet {sheet_name!r}"

    role = _pick(Role, word("Role") or Role.IGNORE.value, where("Role"))
    shape = _pick(ShapeHandling, word("Shape") or ShapeHandling.AUTO.value, where("Shape"))
    treat_word = word("Treat as")
    treat = _pick(MeasureType, treat_word, where("Treat as"), allowed=TREAT_CHOICES[1:]) if treat_word else None
    order_text = word("Label order")
    order = [part.strip() for part in order_text.split(",") if part.strip()] or None
    return ColumnChoice(
        name=name,
        role=role,
        treat_as=treat,
        shape=shape,
        against=_against_text(_at(cells, _COL["Compare with"])),
        paired_with=word("Paired with") or None,
        order=order,
    )


def _pick(enum, word: str, where: str, allowed: Sequence[str] | None = None):
    choices = list(allowed) if allowed else [m.value for m in enum]
    lowered = word.strip().lower()
    for value in choices:
        if value == lowered:
            return enum(value)
    raise RoleError(f"The {where} says {word!r}; choose one of: {', '.join(choices)}.")


def _parse_settings(values: dict[str, tuple[Any, str]], sheet_name: str) -> Settings:
    defaults = Settings()
    confidence = defaults.confidence
    if "confidence" in values and _text(values["confidence"][0]):
        raw, cell = values["confidence"]
        confidence = _parse_float(raw, cell, sheet_name)
        if confidence > 1:  # typed as a percentage, e.g. 95
            confidence /= 100
        if not 0.5 <= confidence < 1:
            raise RoleError(
                f"The confidence level in cell {cell} of sheet {sheet_name!r} is {raw!r}; "
                "use a value such as 0.95 (or 95%)."
            )
    adjust, alternative = defaults.adjust, defaults.alternative
    if "adjust" in values and _text(values["adjust"][0]):
        adjust = _pick(AdjustMethod, _text(values["adjust"][0]), f"cell {values['adjust'][1]} of sheet {sheet_name!r}")
    if "alternative" in values and _text(values["alternative"][0]):
        alternative = _pick(
            Alternative, _text(values["alternative"][0]), f"cell {values['alternative'][1]} of sheet {sheet_name!r}"
        )
    return Settings(confidence=confidence, adjust=adjust, alternative=alternative, alpha=round(1 - confidence, 10))


def _parse_float(raw: Any, cell: str, sheet_name: str) -> float:
    try:
        return float(str(raw).strip().rstrip("%"))
    except ValueError:
        raise RoleError(f"Cell {cell} of sheet {sheet_name!r} should hold a number but holds {raw!r}.") from None


def _parse_int(entry: tuple[Any, str] | None, sheet_name: str) -> int | None:
    if entry is None or not _text(entry[0]):
        return None
    value = _parse_float(entry[0], entry[1], sheet_name)
    if value < 1 or value != int(value):
        raise RoleError(f"The header row in cell {entry[1]} of sheet {sheet_name!r} must be a whole number from 1 up.")
    return int(value)


def _against_text(value: Any) -> str | None:
    """A comparison value as the user typed it; numbers come back from the sheet as floats."""
    if value is None or value == "":
        return None
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip() or None


def _at(cells: Sequence[Any], index: int) -> Any:
    return cells[index] if index < len(cells) else None


def _text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip()
