"""An in-memory stand-in for the part of xlwings the Excel bridge uses, for tests without Excel.

It offers exactly the members declared in ``statmargin.io.excel.subset.USED``
(values, sheets added, deleted and renamed, column widths, row heights,
number formats, fonts, fills, borders, wrap, alignment, merges, list
validations, names, tables, charts, frozen panes, the status bar and message
boxes), with Excel's behaviour where the bridge depends on it:

* a string written to a cell is typed the way Excel types it: ``=...`` (and
  ``+``, ``-``, ``@`` before text) becomes a formula, ``007`` a number,
  ``2026-03-01`` a date, ``TRUE`` a boolean, and a leading apostrophe keeps
  the rest as text (Microsoft, "Display numbers as text");
* ``HYPERLINK("#target","shown")`` formulas evaluate to their shown text and
  are recorded as links; any other formula evaluates to ``#NAME?``;
* reading gives floats for numbers, None for empty cells, and error values as
  their text only with ``err_to_str=True`` (as xlwings does);
* ``Sheet.visible`` reports -1/0/2 as Excel on Windows does;
* ``Sheet.freeze_panes`` raises ``NotImplementedError`` as xlwings 0.37's
  desktop engines do, unless the book is made with ``freeze_supported=True``;
* chart types, border sides and styles, alignments, legend positions and list
  validation sources are checked against xlwings' own vocabulary.

Any other member asked for from outside this module raises ``SubsetViolation``
(a ``BaseException``, so the bridge cannot swallow it) and is recorded on the
book, so a test fails when the bridge steps outside the declared subset. Every
use of a declared member is counted (``calls``), which is how tests bound the
number of calls a large sheet takes.

``load(path)`` builds a stand-in book from an .xlsx file with openpyxl (cell
values as saved, tables, merged cells, hidden sheets, sheet-scoped names).
"""

from __future__ import annotations

import datetime as dt
import re
import sys
from collections import Counter
from pathlib import Path
from typing import Any, get_args

from xlwings import base_classes as xw_words
from xlwings.main import DataValidation as XwDataValidation

from statmargin.io.excel.subset import RANGE_OPTIONS, USED

_MODULE = __name__
MAX_ROWS, MAX_COLS = 1_048_576, 16_384
_A1 = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+)$")
_COLS = re.compile(r"^\$?([A-Za-z]{1,3}):\$?([A-Za-z]{1,3})$")
_ROWS = re.compile(r"^\$?(\d+):\$?(\d+)$")
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?%?$")
_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")
_HYPERLINK = re.compile(r'^=HYPERLINK\("((?:[^"]|"")*)","((?:[^"]|"")*)"\)$')
_FORBIDDEN_SHEET_CHARS = set("[]:*?/\\")


class SubsetViolation(BaseException):
    """The bridge used an xlwings member outside the declared subset."""


class ExcelError:
    """An error value in a cell, such as #N/A."""

    def __init__(self, text: str) -> None:
        self.text = text

    def __repr__(self) -> str:
        return f"ExcelError({self.text!r})"

    def __eq__(self, other: object) -> bool:
        return isinstance(other, ExcelError) and other.text == self.text

    def __hash__(self) -> int:
        return hash(self.text)


class Recorder:
    """Calls counted per member and members asked for outside the subset."""

    def __init__(self) -> None:
        self.calls: Counter[str] = Counter()
        self.violations: list[str] = []


class _Strict:
    """Base of every stand-in object: only the declared members are reachable from outside."""

    _facade = ""

    def __getattribute__(self, name: str) -> Any:
        if name.startswith("__") and name.endswith("__"):
            return object.__getattribute__(self, name)
        facade = type(self)._facade
        if not name.startswith("_") and name in USED.get(facade, ()):
            object.__getattribute__(self, "_recorder")().calls[f"{facade}.{name}"] += 1
            return object.__getattribute__(self, name)
        if sys._getframe(1).f_globals.get("__name__") == _MODULE:
            return object.__getattribute__(self, name)
        object.__getattribute__(self, "_recorder")().violations.append(f"{facade}.{name}")
        raise SubsetViolation(f"{facade}.{name} is outside the declared xlwings subset")

    def __setattr__(self, name: str, value: Any) -> None:
        facade = type(self)._facade
        if not name.startswith("_") and name in USED.get(facade, ()):
            object.__getattribute__(self, "_recorder")().calls[f"{facade}.{name}"] += 1
            object.__setattr__(self, name, value)
            return
        if sys._getframe(1).f_globals.get("__name__") == _MODULE:
            object.__setattr__(self, name, value)
            return
        object.__getattribute__(self, "_recorder")().violations.append(f"{facade}.{name}=")
        raise SubsetViolation(f"setting {facade}.{name} is outside the declared xlwings subset")

    def _recorder(self) -> Recorder:
        return self._book._rec

    def _count(self, member: str) -> None:
        self._recorder().calls[member] += 1


# --------------------------------------------------------------------------- helpers


def column_number(letters: str) -> int:
    n = 0
    for ch in letters.upper():
        n = n * 26 + ord(ch) - 64
    return n


def column_letters(n: int) -> str:
    out = ""
    while n:
        n, rem = divmod(n - 1, 26)
        out = chr(65 + rem) + out
    return out


def parse_address(text: str) -> tuple[int, int, int, int]:
    """1-based bounds of "B3", "B3:D10", "A:C" or "1:3"."""
    text = text.strip()
    if ":" in text:
        a, b = text.split(":", 1)
        if _COLS.match(text):
            m = _COLS.match(text)
            assert m is not None
            return 1, column_number(m.group(1)), MAX_ROWS, column_number(m.group(2))
        if _ROWS.match(text):
            m = _ROWS.match(text)
            assert m is not None
            return int(m.group(1)), 1, int(m.group(2)), MAX_COLS
        r1, c1, _, _ = parse_address(a)
        r2, c2, _, _ = parse_address(b)
        return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)
    m = _A1.match(text)
    if m is None:
        raise ValueError(f"not an address: {text!r}")
    r, c = int(m.group(2)), column_number(m.group(1))
    return r, c, r, c


def excel_typed(value: Any) -> tuple[Any, str | None]:
    """What Excel stores when a value is assigned: (value, formula or None)."""
    if value is None:
        return None, None
    if isinstance(value, bool):
        return value, None
    if isinstance(value, (int, float)):
        return float(value), None
    if isinstance(value, dt.datetime):
        return value, None
    if isinstance(value, dt.date):
        return dt.datetime(value.year, value.month, value.day), None
    if not isinstance(value, str):
        raise TypeError(f"Excel cannot take a {type(value).__name__}")
    if value == "":
        return None, None
    if value.startswith("'"):
        return value[1:], None
    if value.startswith("="):
        link = _HYPERLINK.match(value)
        return (link.group(2).replace('""', '"') if link else ExcelError("#NAME?")), value
    stripped = value.strip()
    if _NUMBER.match(stripped):
        number = float(stripped.rstrip("%"))
        return (number / 100 if stripped.endswith("%") else number), None
    if value[0] in "+-@" and len(value) > 1:
        return ExcelError("#NAME?"), "=" + value.lstrip("+@")
    if stripped.upper() in ("TRUE", "FALSE"):
        return stripped.upper() == "TRUE", None
    if _ISO_DATE.match(stripped):
        return dt.datetime.fromisoformat(stripped), None
    return value, None


def _field(name: str, check: Any = None) -> property:
    """A plain stored attribute of an xlwings object (get and set), optionally validated."""
    key = "_" + name

    def get(self: Any) -> Any:
        return object.__getattribute__(self, key)

    def set_(self: Any, value: Any) -> None:
        object.__setattr__(self, key, check(value) if check else value)

    return property(get, set_)


def _one_of(*allowed: str) -> Any:
    def check(value: Any) -> Any:
        if value not in allowed:
            raise ValueError(value)
        return value

    return check


# --------------------------------------------------------------------------- objects


class App(_Strict):
    _facade = "App"

    def __init__(self, book: Book) -> None:
        self._book = book
        self._screen_updating = True
        self._calculation = "automatic"
        self._status_bar: Any = False
        self._alerts: list[tuple[str, str | None, str | None]] = []

    screen_updating = _field("screen_updating", bool)
    calculation = _field("calculation", _one_of("automatic", "manual", "semiautomatic"))
    status_bar = _field("status_bar")

    def alert(self, prompt: str, title: str | None = None, buttons: str = "ok", mode: str | None = None,
              callback: str | None = None) -> str:
        if mode not in (None, "info", "critical"):
            raise ValueError(mode)
        self._alerts.append((prompt, title, mode))
        return "ok"


class Book(_Strict):
    _facade = "Book"
    _caller: Book | None = None

    def __init__(self, name: str = "Book1.xlsx", *, freeze_supported: bool = False) -> None:
        self._rec = Recorder()
        self._book = self
        self._name = name
        self._sheet_list: list[Sheet] = []
        self._active: Sheet | None = None
        self._app = App(self)
        self._freeze_supported = freeze_supported

    @classmethod
    def caller(cls) -> Book:
        if cls._caller is None:
            raise Exception("Book.caller() must not be called directly. Call through Excel.")
        return cls._caller

    @property
    def name(self) -> str:
        return self._name

    @property
    def sheets(self) -> Sheets:
        return Sheets(self)

    @property
    def app(self) -> App:
        return self._app

    def _new_sheet(self, name: str, position: int | None = None) -> Sheet:
        sheet = Sheet(self, name)
        self._check_name(name, None)
        if position is None:
            self._sheet_list.append(sheet)
        else:
            self._sheet_list.insert(position, sheet)
        return sheet

    def _check_name(self, name: str, sheet: Sheet | None) -> None:
        if not name or len(name) > 31 or any(ch in _FORBIDDEN_SHEET_CHARS for ch in name):
            raise Exception(f"Excel refuses the sheet name {name!r}")
        if name.startswith("'") or name.endswith("'") or name.casefold() == "history":
            raise Exception(f"Excel refuses the sheet name {name!r}")
        for other in self._sheet_list:
            if other is not sheet and other._name.casefold() == name.casefold():
                raise Exception(f"That name is already taken: {name!r}")


class Sheets(_Strict):
    _facade = "Sheets"

    def __init__(self, book: Book) -> None:
        self._book = book

    def __iter__(self):
        self._count("Sheets.__iter__")
        return iter(list(self._book._sheet_list))

    def add(self, name: str | None = None, before: Sheet | None = None, after: Sheet | None = None) -> Sheet:
        book = self._book
        if name is None:
            n = len(book._sheet_list) + 1
            while any(s._name.casefold() == f"sheet{n}" for s in book._sheet_list):
                n += 1
            name = f"Sheet{n}"
        if after is not None:
            position = book._sheet_list.index(after) + 1
        elif before is not None:
            position = book._sheet_list.index(before)
        else:  # Excel adds a sheet before the active one
            position = book._sheet_list.index(book._active) if book._active in book._sheet_list else 0
        sheet = book._new_sheet(name, position)
        book._active = sheet
        return sheet


class Sheet(_Strict):
    _facade = "Sheet"

    def __init__(self, book: Book, name: str) -> None:
        self._book = book
        self._name = name
        self._visible: int = -1
        self._grid: list[list[Any] | None] = []  # row r-1 -> list of values (col c-1) or None
        self._formulas: dict[tuple[int, int], str] = {}
        self._formats: dict[tuple[int, int], dict[str, Any]] = {}
        self._col_widths: dict[int, float] = {}
        self._row_heights: dict[int, float] = {}
        self._merged: list[tuple[int, int, int, int]] = []
        self._validations: list[tuple[tuple[int, int, int, int], list[str], bool]] = []
        self._names: dict[str, str] = {}
        self._tables: list[Table] = []
        self._charts: list[Chart] = []
        self._frozen: str | None = None
        self._cache: dict[str, Any] = {"errors": False}  # used-range bounds; whether any error value is held

    # values ------------------------------------------------------------------
    def _get(self, r: int, c: int) -> Any:
        if r - 1 < len(self._grid):
            row = self._grid[r - 1]
            if row is not None and c - 1 < len(row):
                return row[c - 1]
        return None

    def _put(self, r: int, c: int, value: Any) -> None:
        cache = self._cache
        cache.pop("bounds", None)
        if isinstance(value, ExcelError):
            cache["errors"] = True
        while len(self._grid) < r:
            self._grid.append(None)
        row = self._grid[r - 1]
        if row is None:
            if value is None:
                return
            row = self._grid[r - 1] = []
        if len(row) < c:
            if value is None:
                return
            row.extend([None] * (c - len(row)))
        row[c - 1] = value

    def _typed_put(self, r: int, c: int, value: Any) -> None:
        stored, formula = excel_typed(value)
        self._put(r, c, stored)
        if formula is None:
            self._formulas.pop((r, c), None)
        else:
            self._formulas[(r, c)] = formula

    def _bounds(self) -> tuple[int, int, int, int] | None:
        if "bounds" not in self._cache:
            self._cache["bounds"] = self._scan_bounds()
        return self._cache["bounds"]

    def _scan_bounds(self) -> tuple[int, int, int, int] | None:
        grid = self._grid
        top = left = right = bottom = 0
        for i, row in enumerate(grid, start=1):
            if not row:
                continue
            filled = [j for j, v in enumerate(row, start=1) if v is not None]
            if not filled:
                continue
            top = top or i
            bottom = i
            left = min(left or filled[0], filled[0])
            right = max(right, filled[-1])
        return (top, left, bottom, right) if top else None

    # members -------------------------------------------------------------------
    @property
    def name(self) -> str:
        return self._name

    @name.setter
    def name(self, value: str) -> None:
        self._book._check_name(value, self)
        self._name = value

    @property
    def visible(self) -> int:
        return self._visible

    @visible.setter
    def visible(self, value: Any) -> None:
        self._visible = -1 if value is True or value == -1 else (2 if value == 2 else 0)

    @property
    def names(self) -> Names:
        return Names(self)

    def range(self, first: Any, second: Any = None) -> Range:
        if isinstance(first, str):
            r1, c1, r2, c2 = parse_address(first)
        else:
            r1, c1 = first
            r2, c2 = second if second is not None else first
        if second is not None and isinstance(second, str):
            raise TypeError("the bridge passes tuples or one address")
        if min(r1, c1, r2, c2) < 1:
            raise IndexError("xlwings/Excel ranges are 1-based")
        return Range(self, min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2))

    @property
    def used_range(self) -> Range:
        bounds = self._bounds()
        return Range(self, *(bounds or (1, 1, 1, 1)))

    @property
    def tables(self) -> Tables:
        return Tables(self)

    @property
    def charts(self) -> Charts:
        return Charts(self)

    def delete(self) -> None:
        book = self._book
        visible = [s for s in book._sheet_list if s._visible == -1]
        if visible == [self]:
            raise Exception("A workbook must contain at least one visible worksheet.")
        book._sheet_list.remove(self)
        if book._active is self:
            book._active = book._sheet_list[0]

    def activate(self) -> None:
        self._book._active = self

    @property
    def freeze_panes(self) -> FreezePanes:
        if not self._book._freeze_supported:
            raise NotImplementedError()
        return FreezePanes(self)


class FreezePanes(_Strict):
    _facade = "FreezePanes"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._sheet = sheet

    def freeze_at(self, frozen_range: str) -> None:
        parse_address(frozen_range)
        self._sheet._frozen = frozen_range


class Range(_Strict):
    _facade = "Range"

    def __init__(self, sheet: Sheet, r1: int, c1: int, r2: int, c2: int, options: dict[str, Any] | None = None) -> None:
        self._book = sheet._book
        self._sheet = sheet
        self._box = (r1, c1, r2, c2)
        self._options = options or {}

    def _cells(self):
        r1, c1, r2, c2 = self._box
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                yield r, c

    def options(self, **options: Any) -> Range:
        unknown = set(options) - RANGE_OPTIONS
        if unknown:
            self._recorder().violations.append(f"Range.options({sorted(unknown)})")
            raise SubsetViolation(f"Range.options {sorted(unknown)} outside the declared subset")
        return Range(self._sheet, *self._box, options={**self._options, **options})

    @property
    def value(self) -> Any:
        r1, c1, r2, c2 = self._box
        err_to_str = bool(self._options.get("err_to_str"))
        grid = self._sheet._grid
        errors = self._sheet._cache["errors"]
        rows = []
        for r in range(r1, r2 + 1):
            src = grid[r - 1] if r - 1 < len(grid) else None
            if src is None:
                rows.append([None] * (c2 - c1 + 1))
                continue
            row = src[c1 - 1 : c2]
            if len(row) < c2 - c1 + 1:
                row = row + [None] * (c2 - c1 + 1 - len(row))
            if errors and any(isinstance(v, ExcelError) for v in row):
                row = [(v.text if err_to_str else None) if isinstance(v, ExcelError) else v for v in row]
            rows.append(row)
        if self._options.get("ndim") == 2:
            return rows
        if r1 == r2 and c1 == c2:
            return rows[0][0]
        if r1 == r2:
            return rows[0]
        if c1 == c2:
            return [row[0] for row in rows]
        return rows

    @value.setter
    def value(self, data: Any) -> None:
        r1, c1, r2, c2 = self._box
        if isinstance(data, (list, tuple)):
            rows = [list(row) if isinstance(row, (list, tuple)) else None for row in data]
            if any(row is None for row in rows):
                rows = [list(data)]
            for i, row in enumerate(rows):
                assert row is not None
                for j, value in enumerate(row):
                    self._sheet._typed_put(r1 + i, c1 + j, value)
        else:
            for r, c in self._cells():
                self._sheet._typed_put(r, c, data)

    @property
    def row(self) -> int:
        return self._box[0]

    @property
    def column(self) -> int:
        return self._box[1]

    @property
    def shape(self) -> tuple[int, int]:
        r1, c1, r2, c2 = self._box
        return r2 - r1 + 1, c2 - c1 + 1

    @property
    def width(self) -> float:
        _, c1, _, c2 = self._box
        return sum(7.0 * self._sheet._col_widths.get(c, 8.43) + 5.0 for c in range(c1, c2 + 1))

    @property
    def height(self) -> float:
        r1, _, r2, _ = self._box
        return sum(self._sheet._row_heights.get(r, 15.0) for r in range(r1, r2 + 1))

    def _common(self, key: str, default: Any) -> Any:
        seen = {self._sheet._formats.get(rc, {}).get(key, default) for rc in self._cells()}
        return seen.pop() if len(seen) == 1 else None

    def _set_format(self, key: str, value: Any) -> None:
        for rc in self._cells():
            self._sheet._formats.setdefault(rc, {})[key] = value

    @property
    def number_format(self) -> Any:
        return self._common("number_format", "General")

    @number_format.setter
    def number_format(self, value: str) -> None:
        self._set_format("number_format", value)

    @property
    def column_width(self) -> Any:
        widths = {self._sheet._col_widths.get(c, 8.43) for c in range(self._box[1], self._box[3] + 1)}
        return widths.pop() if len(widths) == 1 else None

    @column_width.setter
    def column_width(self, value: float) -> None:
        if not 0 <= value <= 255:
            raise ValueError("column width outside 0..255")
        for c in range(self._box[1], self._box[3] + 1):
            self._sheet._col_widths[c] = float(value)

    @property
    def row_height(self) -> Any:
        heights = {self._sheet._row_heights.get(r, 15.0) for r in range(self._box[0], self._box[2] + 1)}
        return heights.pop() if len(heights) == 1 else None

    @row_height.setter
    def row_height(self, value: float) -> None:
        if not 0 <= value <= 409:
            raise ValueError("row height outside 0..409")
        for r in range(self._box[0], self._box[2] + 1):
            self._sheet._row_heights[r] = float(value)

    @property
    def wrap_text(self) -> Any:
        return self._common("wrap", False)

    @wrap_text.setter
    def wrap_text(self, value: bool) -> None:
        self._set_format("wrap", bool(value))

    def merge(self, across: bool = False) -> None:
        r1, c1, r2, c2 = self._box
        for rc in self._cells():
            if rc != (r1, c1) and self._sheet._get(*rc) is not None:
                raise Exception("Merging would drop values other than the upper-left one (Excel asks first).")
        for area in self._sheet._merged:
            if not (area[2] < r1 or r2 < area[0] or area[3] < c1 or c2 < area[1]):
                raise Exception("Cannot merge over a merged area.")
        self._sheet._merged.append(self._box)

    def _area_of(self, r: int, c: int) -> tuple[int, int, int, int] | None:
        for area in self._sheet._merged:
            if area[0] <= r <= area[2] and area[1] <= c <= area[3]:
                return area
        return None

    @property
    def merge_cells(self) -> bool | None:
        r1, c1, r2, c2 = self._box
        covered = 0
        for a1, b1, a2, b2 in self._sheet._merged:  # merged areas never overlap
            covered += max(0, min(r2, a2) - max(r1, a1) + 1) * max(0, min(c2, b2) - max(c1, b1) + 1)
        if covered == 0:
            return False
        return True if covered == (r2 - r1 + 1) * (c2 - c1 + 1) else None

    @property
    def merge_area(self) -> Range:
        area = self._area_of(self._box[0], self._box[1])
        return Range(self._sheet, *(area or self._box[:2] * 2))

    @property
    def color(self) -> Any:
        return self._common("fill", None)

    @color.setter
    def color(self, value: Any) -> None:
        self._set_format("fill", value)

    @property
    def font(self) -> Font:
        return Font(self)

    @property
    def borders(self) -> Borders:
        return Borders(self)

    @property
    def horizontal_alignment(self) -> Any:
        return self._common("horizontal", "general")

    @horizontal_alignment.setter
    def horizontal_alignment(self, value: str) -> None:
        if value not in xw_words.HORIZONTAL_ALIGNMENTS:
            raise ValueError(value)
        self._set_format("horizontal", value)

    @property
    def vertical_alignment(self) -> Any:
        return self._common("vertical", "bottom")

    @vertical_alignment.setter
    def vertical_alignment(self, value: str) -> None:
        if value not in xw_words.VERTICAL_ALIGNMENTS:
            raise ValueError(value)
        self._set_format("vertical", value)

    @property
    def data_validation(self) -> Validation:
        return Validation(self)


class Font(_Strict):
    _facade = "Font"

    def __init__(self, rng: Range) -> None:
        self._book = rng._book
        self._range = rng

    def _attr(self, key: str, default: Any) -> Any:
        return self._range._common("font_" + key, default)

    @property
    def bold(self) -> Any:
        return self._attr("bold", False)

    @bold.setter
    def bold(self, value: bool) -> None:
        self._range._set_format("font_bold", bool(value))

    @property
    def italic(self) -> Any:
        return self._attr("italic", False)

    @italic.setter
    def italic(self, value: bool) -> None:
        self._range._set_format("font_italic", bool(value))

    @property
    def color(self) -> Any:
        return self._attr("color", "#000000")

    @color.setter
    def color(self, value: str) -> None:
        if not (isinstance(value, str) and re.fullmatch(r"#[0-9A-Fa-f]{6}", value)):
            raise ValueError(value)
        self._range._set_format("font_color", value.upper())

    @property
    def size(self) -> Any:
        return self._attr("size", 11.0)

    @size.setter
    def size(self, value: float) -> None:
        self._range._set_format("font_size", float(value))


class Borders(_Strict):
    _facade = "Borders"

    def __init__(self, rng: Range) -> None:
        self._book = rng._book
        self._range = rng

    def set(self, which: Any = "all", *, line_style: str | None = None, weight: str | None = None,
            color: str | None = None) -> None:
        groups = {"outside": xw_words.BORDER_SIDES[:4], "inside": xw_words.BORDER_SIDES[4:6],
                  "all": xw_words.BORDER_GRID_SIDES, "everything": xw_words.BORDER_SIDES}
        sides = list(groups[which]) if isinstance(which, str) and which in groups else (
            [which] if isinstance(which, str) else list(which))
        if any(side not in xw_words.BORDER_SIDES for side in sides):
            raise ValueError(sides)
        if line_style is not None and line_style not in get_args(xw_words.BorderLineStyle):
            raise ValueError(line_style)
        if weight is not None and weight not in get_args(xw_words.BorderWeight):
            raise ValueError(weight)
        self._range._set_format("border", (tuple(sides), line_style, weight, color))


class Validation(_Strict):
    _facade = "DataValidation"

    def __init__(self, rng: Range) -> None:
        self._book = rng._book
        self._range = rng

    def set_list(self, source: Any, *, in_cell_dropdown: bool = True) -> None:
        values = XwDataValidation._literal_source(source)  # xlwings' own check of a literal list
        self._range._sheet._validations.append((self._range._box, values, in_cell_dropdown))


class Names(_Strict):
    _facade = "Names"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._sheet = sheet

    def __iter__(self):
        self._count("Names.__iter__")
        return iter([Name(self._sheet, key) for key in list(self._sheet._names)])

    def add(self, name: str, refers_to: str) -> Name:
        if not re.fullmatch(r"[A-Za-z_\\][A-Za-z0-9_.]*", name) or re.fullmatch(r"[A-Za-z]{1,3}\d+", name):
            raise Exception(f"Excel refuses the name {name!r}")
        if not str(refers_to).startswith("="):
            raise Exception("RefersTo must start with '='")
        self._sheet._names[name] = refers_to
        return Name(self._sheet, name)


class Name(_Strict):
    _facade = "Name"

    def __init__(self, sheet: Sheet, key: str) -> None:
        self._book = sheet._book
        self._sheet = sheet
        self._key = key

    @property
    def name(self) -> str:
        sheet = self._sheet._name
        quoted = sheet if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_.]*", sheet) else "'" + sheet.replace("'", "''") + "'"
        return f"{quoted}!{self._key}"

    @property
    def refers_to(self) -> str:
        return self._sheet._names[self._key]

    def delete(self) -> None:
        del self._sheet._names[self._key]


class Tables(_Strict):
    _facade = "Tables"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._sheet = sheet

    def __iter__(self):
        self._count("Tables.__iter__")
        return iter(list(self._sheet._tables))


class Table(_Strict):
    _facade = "Table"

    def __init__(self, sheet: Sheet, name: str, box: tuple[int, int, int, int], headers: bool, totals: bool) -> None:
        self._book = sheet._book
        self._sheet = sheet
        self._name = name
        self._box = box
        self._headers = headers
        self._totals = totals

    @property
    def name(self) -> str:
        return self._name

    @property
    def range(self) -> Range:
        return Range(self._sheet, *self._box)

    @property
    def show_headers(self) -> bool:
        return self._headers

    @property
    def show_totals(self) -> bool:
        return self._totals


class Charts(_Strict):
    _facade = "Charts"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._sheet = sheet

    def add(self, left: float = 0, top: float = 0, width: float = 355, height: float = 211,
            chart_type: str | None = None, source: Range | None = None, plot_by: str | None = None,
            name: str | None = None, anchor: Range | None = None, style: int | None = 227) -> Chart:
        if chart_type is not None and chart_type not in xw_words.CHART_TYPES:
            raise ValueError(chart_type)
        if plot_by is not None and (plot_by not in get_args(xw_words.ChartPlotBy) or source is None):
            raise ValueError(plot_by)
        if anchor is not None and (left or top):
            raise ValueError("anchor with left/top")
        chart = Chart(self._sheet, chart_type, source, plot_by, anchor, width, height)
        self._sheet._charts.append(chart)
        return chart


class Chart(_Strict):
    _facade = "Chart"

    def __init__(self, sheet: Sheet, chart_type: str | None, source: Range | None, plot_by: str | None,
                 anchor: Range | None, width: float, height: float) -> None:
        self._book = sheet._book
        self._sheet = sheet
        self._type = chart_type
        self._source = source._box if source is not None else None
        self._plot_by = plot_by
        self._anchor = anchor._box[:2] if anchor is not None else None
        self._size = (width, height)
        self._title: str | None = None
        self._x_values: tuple[int, int, int, int] | None = None
        n = 0
        if self._source is not None:
            r1, c1, r2, c2 = self._source
            n = (c2 - c1 + 1) if plot_by == "columns" else (r2 - r1 + 1)
        self._series = [ChartSeries(sheet) for _ in range(n)]
        self._axes = {"category": ChartAxis(sheet), "value": ChartAxis(sheet)}
        self._legend = ChartLegend(sheet)

    title = _field("title")

    @property
    def series(self) -> ChartSeriesCollection:
        return ChartSeriesCollection(self)

    def set_x_axis_values(self, source: Range) -> None:
        self._x_values = source._box

    @property
    def category_axis(self) -> ChartAxis:
        return self._axes["category"]

    @property
    def value_axis(self) -> ChartAxis:
        return self._axes["value"]

    @property
    def legend(self) -> ChartLegend:
        return self._legend


class ChartSeriesCollection(_Strict):
    _facade = "ChartSeriesCollection"

    def __init__(self, chart: Chart) -> None:
        self._book = chart._book
        self._chart = chart

    def __iter__(self):
        self._count("ChartSeriesCollection.__iter__")
        return iter(list(self._chart._series))


class ChartSeries(_Strict):
    _facade = "ChartSeries"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._name: str | None = None
        self._fill: str | None = None

    name = _field("name")
    fill_color = _field("fill")


class ChartAxis(_Strict):
    _facade = "ChartAxis"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._title: str | None = None
        self._format = "General"

    title = _field("title")
    number_format = _field("format")


class ChartLegend(_Strict):
    _facade = "ChartLegend"

    def __init__(self, sheet: Sheet) -> None:
        self._book = sheet._book
        self._visible = True
        self._position = "right"

    visible = _field("visible", bool)
    position = _field("position", _one_of(*get_args(xw_words.ChartLegendPosition)))


# --------------------------------------------------------------------------- for tests


def new_book(name: str = "Book1.xlsx", sheets: dict[str, list[list[Any]]] | None = None, *,
             freeze_supported: bool = False) -> Book:
    """A book with sheets of stored values (row lists from A1); values are stored as Excel holds them."""
    book = Book(name, freeze_supported=freeze_supported)
    for sheet_name, rows in (sheets or {"Sheet1": []}).items():
        sheet = book._new_sheet(sheet_name)
        sheet._grid = [
            [float(v) if isinstance(v, int) and not isinstance(v, bool) else v for v in row] or None
            for row in rows
        ]
        sheet._cache["errors"] = any(isinstance(v, ExcelError) for row in rows for v in row)
    book._active = book._sheet_list[0]
    return book


def load(path: str | Path, *, name: str | None = None, freeze_supported: bool = False) -> Book:
    """A stand-in book holding an .xlsx file's saved values, tables, merges, hidden sheets and names."""
    import openpyxl

    workbook = openpyxl.load_workbook(path, data_only=True)
    book = Book(name or Path(path).name, freeze_supported=freeze_supported)
    for ws in workbook.worksheets:
        sheet = book._new_sheet(ws.title)
        sheet._visible = {"visible": -1, "hidden": 0, "veryHidden": 2}[ws.sheet_state]
        for row in ws.iter_rows():
            for cell in row:
                value = cell.value
                if value is None:
                    continue
                if cell.data_type == "e":
                    value = ExcelError(str(value))
                elif isinstance(value, int) and not isinstance(value, bool):
                    value = float(value)
                elif isinstance(value, dt.time):
                    value = dt.datetime.combine(dt.date(1899, 12, 30), value)
                elif isinstance(value, dt.date) and not isinstance(value, dt.datetime):
                    value = dt.datetime(value.year, value.month, value.day)
                elif isinstance(value, str) and value == "":
                    continue
                sheet._put(cell.row, cell.column, value)
        for merged in ws.merged_cells.ranges:
            sheet._merged.append((merged.min_row, merged.min_col, merged.max_row, merged.max_col))
        for table in ws.tables.values():
            box = parse_address(table.ref)
            sheet._tables.append(Table(sheet, table.displayName or table.name, box,
                                       (table.headerRowCount or 0) != 0 if table.headerRowCount is not None else True,
                                       bool(table.totalsRowCount)))
        for key, defined in ws.defined_names.items():
            sheet._names[key] = "=" + str(defined.attr_text).lstrip("=")
    active = workbook.active
    book._active = next((s for s in book._sheet_list if active is not None and s._name == active.title),
                        book._sheet_list[0])
    return book


def add_merge(sheet_: Sheet, box: tuple[int, int, int, int]) -> None:
    """Merge cells as a user did before (1-based first row, first col, last row, last col)."""
    sheet_._merged.append(box)


def add_table(sheet_: Sheet, name: str, box: tuple[int, int, int, int], *, headers: bool = True,
              totals: bool = False) -> None:
    """An Excel table the user made over ``box`` (1-based, header and totals rows included)."""
    sheet_._tables.append(Table(sheet_, name, box, headers, totals))


def hide(sheet_: Sheet, very: bool = False) -> None:
    sheet_._visible = 2 if very else 0


def sheet(book: Book, name: str) -> Sheet:
    return next(s for s in book._sheet_list if s._name == name)


def sheet_names(book: Book) -> list[str]:
    return [s._name for s in book._sheet_list]


def markers(book: Book) -> dict[str, str]:
    """Sheet name -> the statmargin_sheet name's value, for marked sheets."""
    return {s._name: s._names["statmargin_sheet"] for s in book._sheet_list if "statmargin_sheet" in s._names}


def values(sheet_: Sheet) -> dict[tuple[int, int], Any]:
    """Non-empty cells by 0-based (row, col), as Excel holds them (error values as ExcelError)."""
    out = {}
    for i, row in enumerate(sheet_._grid):
        for j, value in enumerate(row or []):
            if value is not None:
                out[(i, j)] = value
    return out


def rows(sheet_: Sheet) -> list[list[Any]]:
    bounds = sheet_._bounds()
    if bounds is None:
        return []
    return [[sheet_._get(r, c) for c in range(1, bounds[3] + 1)] for r in range(1, bounds[2] + 1)]


def formulas(sheet_: Sheet) -> dict[tuple[int, int], str]:
    return {(r - 1, c - 1): f for (r, c), f in sheet_._formulas.items()}


def formats(sheet_: Sheet) -> dict[tuple[int, int], dict[str, Any]]:
    return {(r - 1, c - 1): dict(f) for (r, c), f in sheet_._formats.items()}


def type_in(sheet_: Sheet, address: str, value: Any) -> None:
    """A user typing ``value`` into a cell (Excel's typing rules apply)."""
    r, c, _, _ = parse_address(address)
    sheet_._typed_put(r, c, value)


def layout(sheet_: Sheet) -> dict[str, Any]:
    """Widths, heights, merges, validations, frozen area and names of a sheet (1-based where Excel is)."""
    return {
        "widths": dict(sheet_._col_widths),
        "heights": dict(sheet_._row_heights),
        "merged": list(sheet_._merged),
        "validations": list(sheet_._validations),
        "frozen": sheet_._frozen,
        "names": dict(sheet_._names),
        "charts": [
            {"type": ch._type, "source": ch._source, "plot_by": ch._plot_by, "x_values": ch._x_values,
             "anchor": ch._anchor, "title": ch._title,
             "series": [(s._name, s._fill) for s in ch._series],
             "x_title": ch._axes["category"]._title, "y_title": ch._axes["value"]._title,
             "value_format": ch._axes["value"]._format,
             "legend": (ch._legend._visible, ch._legend._position)}
            for ch in sheet_._charts
        ],
    }


def recorder(book: Book) -> Recorder:
    return book._rec


def app_state(book: Book) -> dict[str, Any]:
    app = book._app
    return {"status_bar": app._status_bar, "alerts": list(app._alerts), "screen_updating": app._screen_updating,
            "calculation": app._calculation, "active": book._active._name if book._active else None}


def set_caller(book: Book | None) -> None:
    Book._caller = book


class MirroredBridge:
    """A sink that writes through the Excel bridge into a stand-in book, then the same models into the file.

    The bridge and the file back end must agree on the write report and, afterwards,
    on the sheets: names and order, markers, hidden sheets, tables, merged ranges
    and every cell of every tool sheet. The job gets the file's report, so the
    test's own file-based checks see what they always saw. A write with ``out``
    (a copy) goes to the file only: from inside Excel there is no copy to write.
    """

    def __init__(self, bridge: Any, path: str | Path) -> None:
        from statmargin.io.file.sink import FileSink
        from statmargin.io.protocol import WorkbookSink
        from strict_backend import strict

        self.bridge = bridge
        self.strict_bridge = strict(bridge, WorkbookSink)
        self.file = FileSink(path)

    def check(self, out: str | None = None) -> str | None:
        if out is None:
            self.strict_bridge.check(out)
        return self.file.check(out)

    def write_sheets(self, models: list[Any], out: str | None = None) -> Any:
        from statmargin.io.excel.book import ExcelBook
        from statmargin.io.file.source import FileSource
        from strict_backend import normal_rows, report_fields

        if out is not None:
            return self.file.write_sheets(models, out=out)
        from_bridge = self.strict_bridge.write_sheets(models, out=None)
        from_file = self.file.write_sheets(models, out=None)
        assert report_fields(from_bridge) == report_fields(from_file)
        assert recorder(self.bridge.book).violations == []
        written, reread = ExcelBook(self.bridge.book), FileSource(from_file.path)
        try:
            assert written.sheet_names() == reread.sheet_names()
            assert written.tool_sheets() == reread.tool_sheets()
            assert written.hidden_sheet_names() == reread.hidden_sheet_names()
            for name in written.sheet_names():
                assert written.tables(name) == reread.tables(name), name
                assert sorted(written.merged_ranges(name)) == sorted(reread.merged_ranges(name)), name
            for name in written.tool_sheets():
                assert normal_rows(written.iter_rows(name)) == normal_rows(reread.iter_rows(name)), name
        finally:
            reread.close()
        return from_file
