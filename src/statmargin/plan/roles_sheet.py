"""The roles sheet: where the user marks what each column is for.

``build_roles_sheet`` lays the sheet out: a settings block (label in column A,
value in B), then a table with one row per data column: what the tool found
(read-only) beside the user's choices (shaded, with dropdowns).
``parse_roles_sheet`` reads the choices back into a ``Plan``. Both sides use the
tables below, so layout and parsing cannot drift apart, and adding a setting or
a column is one line in ``SETTINGS`` or ``CHOICE_COLUMNS``.

Parsing finds the table by its headers, so a user who moved, cleared or
retyped a header, or deleted rows, still gets their choices read (a header not
found is taken at its usual place).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field, replace
from enum import Enum
from typing import Any

from ..errors import RoleError
from ..io.addresses import column_letter
from ..sheets.model import SheetModel, Validation
from ..vocabulary import (
    AdjustFamily,
    AdjustMethod,
    Alternative,
    Grain,
    MeasureType,
    Role,
    RowsToUse,
    ShapeHandling,
    YesNo,
)
from ..words import roles_words
from .model import ColumnChoice, Plan, Settings

KIND = "roles"
SHEET_NAME = "statmargin roles"
STATUS_MISSING = roles_words.STATUS_MISSING
STATUS_NEW = roles_words.STATUS_NEW
TREAT_CHOICES = ("", *(t.value for t in (MeasureType.CONTINUOUS, MeasureType.CATEGORICAL, MeasureType.ORDINAL)))


@dataclass(frozen=True)
class SettingRow:
    """One line of the settings block: its label, the plan or settings field, and its dropdown."""

    label: str
    key: str
    choices: tuple[str, ...] = ()  # the dropdown's words; empty = free text or a number


_CHOICES: dict[str, tuple[str, ...]] = {
    "adjust": tuple(m.value for m in AdjustMethod),
    "family": tuple(f.value for f in AdjustFamily),
    "alternative": tuple(a.value for a in Alternative),
    "rows": tuple(r.value for r in RowsToUse),
    "merge_look_alikes": tuple(y.value for y in YesNo),
    "grain": tuple(g.value for g in Grain),
    "series_by_group": tuple(y.value for y in YesNo),
}
SETTINGS: tuple[SettingRow, ...] = tuple(
    SettingRow(label, key, _CHOICES.get(key, ())) for key, label in roles_words.SETTING_LABELS.items()
)
SETTING_LABELS = {row.label: row.key for row in SETTINGS}
INSTRUCTIONS = roles_words.INSTRUCTIONS
SETTINGS_FIRST_ROW = 1 + len(INSTRUCTIONS) + 1  # 0-based row of "Data sheet"
TABLE_HEADER_ROW = SETTINGS_FIRST_ROW + len(SETTINGS) + 1


@dataclass(frozen=True)
class ChoiceColumn:
    """A column of the table the user edits: its header, the ColumnChoice field, its dropdown."""

    header: str
    key: str
    choices: tuple[str, ...] = ()
    width: float = 14


# What the tool found, read-only; then the user's choices; then the status.
FACT_HEADERS: tuple[tuple[str, float], ...] = (
    ("Column", 24),
    ("Letter", 7),
    ("Inferred type", 13),
    ("Levels", 8),
    ("Sample values", 32),
    ("Blank cells", 9),
    ("Unreadable cells", 12),
    ("Look-alike labels", 26),
)
CHOICE_COLUMNS: tuple[ChoiceColumn, ...] = (
    ChoiceColumn("Role", "role", tuple(r.value for r in Role), 14),
    ChoiceColumn("Treat as", "treat_as", TREAT_CHOICES[1:], 13),
    ChoiceColumn("Shape", "shape", tuple(s.value for s in ShapeHandling), 14),
    ChoiceColumn("Compare with", "against", (), 15),
    ChoiceColumn("Paired with", "paired_with", (), 15),
    ChoiceColumn("Out of", "out_of", (), 14),
    ChoiceColumn("Per", "per", (), 14),
    ChoiceColumn("Label order", "order", (), 20),
    ChoiceColumn("Event level", "event", (), 13),
)
STATUS_HEADER = ("Status", 30)
HEADERS = tuple(
    [name for name, _ in FACT_HEADERS] + [c.header for c in CHOICE_COLUMNS] + [STATUS_HEADER[0]]
)
_COL = {name: i for i, name in enumerate(HEADERS)}


@dataclass
class ColumnFacts:
    """What the tool found in one data column, shown read-only beside the user's choices."""

    name: str
    letter: str
    inferred: str
    sample: str
    n_blank: int
    n_unreadable: int
    n_levels: int | None = None  # categories and ordinal labels
    look_alikes: str = ""  # e.g. "Old Mill (180), Old  Mill (1)"
    event: str | None = None  # the inferred event level of a two-level column
    suggestion: str = ""  # a role the data suggest (shown in the Status column, never applied)


@dataclass
class RolesSheet:
    """The roles sheet's contents as read back: the plan plus facts about the layout."""

    plan: Plan
    missing: list[str] = field(default_factory=list)  # columns flagged as gone from the data


# ---------------------------------------------------------------- building


def _setting_value(plan: Plan, data_sheet: str, header_row: int, key: str) -> Any:
    settings = plan.settings
    if key == "sheet":
        return data_sheet
    if key == "header_row":
        return header_row
    if key in ("merge_look_alikes", "series_by_group"):
        return (YesNo.YES if getattr(settings, key) else YesNo.NO).value
    value = getattr(settings, key)
    return value.value if isinstance(value, Enum) else ("" if value is None else value)


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
    model.put(0, 0, roles_words.TITLE, "title")
    for row, line in enumerate(INSTRUCTIONS, start=1):
        model.put(row, 0, line, "muted")
    for offset, setting in enumerate(SETTINGS):
        row = SETTINGS_FIRST_ROW + offset
        model.put(row, 0, setting.label, "label")
        model.put(row, 1, _setting_value(plan, data_sheet, header_row, setting.key), "input")
        model.merged.append(f"B{row + 1}:C{row + 1}")  # room for a long sheet name
        if setting.choices:
            model.validations.append(Validation(f"B{row + 1}", list(setting.choices)))

    model.put_row(TABLE_HEADER_ROW, list(HEADERS), "header")
    new_names = set(new)
    row = TABLE_HEADER_ROW
    for fact in facts:
        row += 1
        choice = plan.choice(fact.name) or ColumnChoice(fact.name)
        status = "; ".join(t for t in (STATUS_NEW if fact.name in new_names else "", fact.suggestion) if t)
        _put_column_row(model, row, fact, choice, status)
    for choice in missing:
        row += 1
        _put_column_row(model, row, ColumnFacts(choice.name, "", "", "", 0, 0), choice, STATUS_MISSING)
    first, last = TABLE_HEADER_ROW + 2, max(row + 1, TABLE_HEADER_ROW + 2)
    for column in CHOICE_COLUMNS:
        if column.choices:
            letter = column_letter(_COL[column.header])
            model.validations.append(Validation(f"{letter}{first}:{letter}{last}", list(column.choices)))
    model.freeze = (TABLE_HEADER_ROW + 1, 1)
    model.landscape = True
    model.fit_to_width = True
    model.print_title_rows = (TABLE_HEADER_ROW, TABLE_HEADER_ROW)
    widths = [w for _, w in FACT_HEADERS] + [c.width for c in CHOICE_COLUMNS] + [STATUS_HEADER[1]]
    model.widths = dict(enumerate(widths))
    return model


def _choice_text(choice: ColumnChoice, key: str, fact: ColumnFacts) -> str:
    value = getattr(choice, key)
    if key == "order":
        return ", ".join(value) if value else ""
    if key == "event" and value is None:
        return fact.event or ""  # the inferred event level, shown for the user to confirm
    if isinstance(value, Enum):
        return str(value.value)
    return "" if value is None else str(value)


def _put_column_row(model: SheetModel, row: int, fact: ColumnFacts, choice: ColumnChoice, status: str) -> None:
    levels = fact.n_levels if fact.n_levels is not None else ""
    model.put_row(
        row,
        [fact.name, fact.letter, fact.inferred, levels, fact.sample, fact.n_blank, fact.n_unreadable, fact.look_alikes],
        "text",
    )
    model.put_row(row, [_choice_text(choice, c.key, fact) for c in CHOICE_COLUMNS], "input", start_col=_COL["Role"])
    model.put(row, _COL["Status"], status, "caution" if status else "muted")


# ---------------------------------------------------------------- parsing


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
    columns: dict[str, int] | None = None
    missing: list[str] = []
    for r, row in enumerate(rows):
        cells = list(row)
        first = _text(cells[0]) if cells else ""
        if columns is None:
            if first in SETTING_LABELS and len(cells) > 1:
                setting_values[SETTING_LABELS[first]] = (cells[1], f"B{r + 1}")
            else:
                columns = _table_columns(cells)
            continue
        name = _text(_at(cells, columns["Column"]))
        if not name:
            continue
        plan.columns.append(_parse_choice(name, cells, r + 1, sheet_name, columns))
        if _text(_at(cells, columns["Status"])) == STATUS_MISSING:
            missing.append(name)
    if columns is None:
        raise RoleError(roles_words.no_table(sheet_name, TABLE_HEADER_ROW + 1, list(HEADERS[:9])))
    plan.sheet = _text(setting_values.get("sheet", ("", ""))[0]) or None
    plan.header_row = _parse_int(setting_values.get("header_row"), sheet_name)
    plan.settings = _parse_settings(setting_values, sheet_name)
    return RolesSheet(plan=plan, missing=missing)


def _table_columns(cells: Sequence[Any]) -> dict[str, int] | None:
    """Header -> column index when ``cells`` is the column table's header row, else None.

    A user may retype, clear or move a header: the row still counts when its first
    cell says "Column" and the "Role" header is in place, or when at least half the
    headers are in their places. A header found by its text anywhere in the row is
    taken there; one that is not is taken at its usual position.
    """
    texts = [_text(c) for c in cells]
    in_place = sum(1 for header, i in _COL.items() if i < len(texts) and texts[i] == header)
    classic = bool(texts) and texts[0] == HEADERS[0] and "Role" in texts
    if not classic and in_place < len(HEADERS) // 2:
        return None
    found = {text: i for i, text in enumerate(texts) if text in _COL}
    return {header: found.get(header, _COL[header]) for header in HEADERS}


def _parse_choice(name: str, cells: Sequence[Any], sheet_row: int, sheet_name: str,
                  columns: dict[str, int]) -> ColumnChoice:
    def word(header: str) -> str:
        return _text(_at(cells, columns[header]))

    def where(header: str) -> str:
        return roles_words.cell_of(f"{column_letter(columns[header])}{sheet_row}", sheet_name)

    treat_word = word("Treat as")
    order = [part.strip() for part in word("Label order").split(",") if part.strip()] or None
    return ColumnChoice(
        name=name,
        role=_pick(Role, word("Role") or Role.IGNORE.value, where("Role")),
        treat_as=_pick(MeasureType, treat_word, where("Treat as"), allowed=TREAT_CHOICES[1:]) if treat_word else None,
        shape=_pick(ShapeHandling, word("Shape") or ShapeHandling.AUTO.value, where("Shape")),
        against=_against_text(_at(cells, columns["Compare with"])),
        paired_with=word("Paired with") or None,
        out_of=word("Out of") or None,
        per=word("Per") or None,
        order=order,
        event=word("Event level") or None,
    )


def _pick(enum: Any, word: str, where: str, allowed: Sequence[str] | None = None) -> Any:
    choices = list(allowed) if allowed else [m.value for m in enum]
    lowered = word.strip().lower()
    for value in choices:
        if value == lowered:
            return enum(value)
    raise RoleError(roles_words.not_a_choice(where, word, choices))


def _parse_settings(values: dict[str, tuple[Any, str]], sheet_name: str) -> Settings:
    defaults = Settings()
    changes: dict[str, Any] = {}

    def given(key: str) -> tuple[str, str] | None:
        if key in values and _text(values[key][0]):
            return _text(values[key][0]), values[key][1]
        return None

    if "confidence" in values and _text(values["confidence"][0]):
        raw, cell = values["confidence"]
        confidence = _parse_float(raw, cell, sheet_name)
        if confidence > 1:  # typed as a percentage, e.g. 95
            confidence /= 100
        if not 0.5 <= confidence < 1:
            raise RoleError(roles_words.bad_confidence(cell, sheet_name, raw))
        changes.update(confidence=confidence, alpha=round(1 - confidence, 10))
    parsers: dict[str, Callable[[str, str], Any]] = {
        "adjust": lambda word, cell: _pick(AdjustMethod, word, roles_words.cell_of(cell, sheet_name)),
        "family": lambda word, cell: _pick(AdjustFamily, word, roles_words.cell_of(cell, sheet_name)),
        "alternative": lambda word, cell: _pick(Alternative, word, roles_words.cell_of(cell, sheet_name)),
        "rows": lambda word, cell: _pick(RowsToUse, word, roles_words.cell_of(cell, sheet_name)),
        "merge_look_alikes": lambda word, cell: _pick(YesNo, word, roles_words.cell_of(cell, sheet_name))
        is YesNo.YES,
        "grain": lambda word, cell: _pick(Grain, word, roles_words.cell_of(cell, sheet_name)),
        "latest_period": lambda word, cell: word,
        "series_by_group": lambda word, cell: _pick(YesNo, word, roles_words.cell_of(cell, sheet_name))
        is YesNo.YES,
        "per_unit": lambda word, cell: word,
    }
    for key, parse in parsers.items():
        entry = given(key)
        if entry is not None:
            changes[key] = parse(*entry)
    return replace(defaults, **changes)


def _parse_float(raw: Any, cell: str, sheet_name: str) -> float:
    try:
        return float(str(raw).strip().rstrip("%"))
    except ValueError:
        raise RoleError(roles_words.not_a_number(cell, sheet_name, raw)) from None


def _parse_int(entry: tuple[Any, str] | None, sheet_name: str) -> int | None:
    if entry is None or not _text(entry[0]):
        return None
    value = _parse_float(entry[0], entry[1], sheet_name)
    if value < 1 or value != int(value):
        raise RoleError(roles_words.bad_header_row(entry[1], sheet_name))
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
