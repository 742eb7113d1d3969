"""How the tool's sheets look, independent of the file format: colours, fonts, fills, formats.

Each style key of ``sheets.model.STYLES`` has a ``Look``. The file writer
(``io.file.styles``) turns the looks into cell formats of the styles part; the
Excel bridge (``io.excel.render``) sets the same attributes through xlwings.

The look is our own and deliberately quiet: dark slate text, headers on a pale
warm-grey band with a thin rule beneath, soft editable-cell shading, no strong
colours.
"""

from __future__ import annotations

from dataclasses import dataclass

from .model import STYLES

# Colours (ARGB). Chosen to read well in print and for colour-blind readers:
# distinctions never rely on hue alone (headers also have a rule, inputs a border).
SLATE = "FF2F3B45"
SLATE_SOFT = "FF4A5560"
GREY_MUTED = "FF6F757C"
WARM_GREY_FILL = "FFEEEBE6"
RULE = "FF8C8579"
INPUT_FILL = "FFFBF6E9"
INPUT_BORDER = "FFB8AE9C"
LINK_BLUE = "FF2B5C8A"
CAUTION_RUST = "FF8A3B12"

# Quiet chart series colours of our own (slate, sand, sage, dusk, clay, stone), RGB hex;
# bars are told apart by order and legend too, not by hue alone.
SERIES_COLOURS = ("4F6272", "C2A878", "7E9C86", "8C7AA0", "B07156", "9A9A8E")

# Number formats. Built-in ids: 0 General, 1 "0", 2 "0.00".
P_VALUE_FORMAT = '[<0.001]"<0.001";0.000'
CUSTOM_FORMATS = {
    "number": "0.000",
    "fixed1": "0.0",
    "fixed3": "0.000",
    "fixed4": "0.0000",
    "p_value": P_VALUE_FORMAT,
    "percent": "0.0%",
    "date": "yyyy-mm-dd hh:mm",
}
BUILTIN_FORMATS = {"integer": 1, "decimal2": 2, "fixed0": 1, "fixed2": 2}


@dataclass(frozen=True)
class Font:
    bold: bool = False
    italic: bool = False
    underline: bool = False
    color: str = SLATE
    size_step: float = 0.0


@dataclass(frozen=True)
class Look:
    font: Font = Font()
    fill: str | None = None
    border: str | None = None  # "rule_below" or "box"
    number_format: str | None = None  # key into CUSTOM_FORMATS or BUILTIN_FORMATS
    wrap: bool = False  # wrap text (rows are given a fitting height by the sheet writer)
    horizontal: str | None = None


LOOKS: dict[str, Look] = {
    "text": Look(),
    "wrap": Look(wrap=True),
    "title": Look(font=Font(bold=True, size_step=4)),
    "subtitle": Look(font=Font(bold=True, size_step=1)),
    "header": Look(font=Font(bold=True), fill=WARM_GREY_FILL, border="rule_below", wrap=True),
    "label": Look(font=Font(color=SLATE_SOFT)),
    "number": Look(number_format="number"),
    **{f"fixed{d}": Look(number_format=f"fixed{d}") for d in range(5)},
    "integer": Look(number_format="integer"),
    "decimal2": Look(number_format="decimal2"),
    "p_value": Look(number_format="p_value"),
    "percent": Look(number_format="percent"),
    "date": Look(number_format="date"),
    "link": Look(font=Font(underline=True, color=LINK_BLUE)),
    "input": Look(fill=INPUT_FILL, border="box"),
    "muted": Look(font=Font(color=GREY_MUTED)),
    "caution": Look(font=Font(bold=True, color=CAUTION_RUST), wrap=True),
    "suppressed": Look(font=Font(italic=True, color=GREY_MUTED), horizontal="center"),
}
assert set(LOOKS) == set(STYLES), "every sheets.model style key needs a look"

# The format code each number-format key stands for; built-in ids 1 and 2 are "0" and "0.00"
# (ECMA-376 Part 1, 18.8.30).
# The built-in formats' codes, for back ends that set formats by code (the Excel bridge).
BUILTIN_CODES = {1: "0", 2: "0.00"}
FORMAT_CODES = {**CUSTOM_FORMATS, **{key: BUILTIN_CODES[i] for key, i in BUILTIN_FORMATS.items()}}


def number_format_code(style: str) -> str:
    """The number format a style key shows its cells in ("General" when it sets none).

    Examples
    --------
    >>> number_format_code("p_value")
    '[<0.001]"<0.001";0.000'
    >>> number_format_code("header")
    'General'
    """
    key = LOOKS.get(style, LOOKS["text"]).number_format
    return FORMAT_CODES[key] if key else "General"
