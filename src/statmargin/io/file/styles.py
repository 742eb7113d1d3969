"""Add statmargin's cell styles to a workbook's styles part.

The user's styles stay as they are: our fonts, fills, borders, number formats
and cell formats are appended after theirs, the ``count`` attributes are
updated, and the result is a map from style key (see ``sheets.model.STYLES``) to
the index of the cell format that sheets refer to with ``s="..."``.

The looks themselves (colours, fonts, number formats) are defined, independent
of the file format, in ``sheets.looks``.
"""

from __future__ import annotations

import html
import re
from xml.sax.saxutils import quoteattr

from ...errors import WriteError
from ...sheets.looks import BUILTIN_FORMATS, CUSTOM_FORMATS, INPUT_BORDER, LOOKS, RULE, Font
from ...sheets.model import STYLES
from ...words import file_messages as messages

MINIMAL_STYLES = (
    b'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    b'<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    b'<fonts count="1"><font><sz val="11"/><name val="Calibri"/><family val="2"/></font></fonts>'
    b'<fills count="2"><fill><patternFill patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill></fills>'
    b'<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
    b'<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>'
    b'<cellXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/></cellXfs>'
    b'<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>'
    b"</styleSheet>"
)

# Children of <styleSheet> in schema order (ECMA-376 Part 1, 18.8.39 CT_Stylesheet).
_ATTR = re.compile(r"""([\w:]+)\s*=\s*(?:"([^"]*)"|'([^']*)')""")
_ORDER = (
    "numFmts",
    "fonts",
    "fills",
    "borders",
    "cellStyleXfs",
    "cellXfs",
    "cellStyles",
    "dxfs",
    "tableStyles",
    "colors",
    "extLst",
)
_CHILD = {
    "numFmts": "numFmt",
    "fonts": "font",
    "fills": "fill",
    "borders": "border",
    "cellXfs": "xf",
}


def add_styles(styles_xml: bytes) -> tuple[bytes, dict[str, int]]:
    """Append statmargin's formats to a styles part.

    Parameters
    ----------
    styles_xml : bytes
        The workbook's ``xl/styles.xml`` (or :data:`MINIMAL_STYLES` if it has none).

    Returns
    -------
    tuple of (bytes, dict)
        The edited styles part and the map style key -> cell format index.

    Raises
    ------
    WriteError
        If the styles part is not the SpreadsheetML styles we expect.

    Notes
    -----
    Edits are textual insertions so that every existing element, prefix and
    namespace declaration stays exactly as written by the user's program.
    Our fonts take their face and size from the workbook's default font.
    """
    try:
        text = styles_xml.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise WriteError(messages.styles_not_utf8()) from exc
    prefix = _main_prefix(text)
    base_name, base_size, base_family = _default_font(text, prefix)

    format_ids: dict[str, int] = dict(BUILTIN_FORMATS)

    # Only <numFmts> declares formats cells may use; a <numFmt> inside a differential
    # format (<dxfs>, used by conditional formats) is private to it, so its code is
    # never reused, but its id is avoided in case a reader shares the id space.
    existing_fmts: dict[str, int] = {}
    all_fmt_ids = [163]  # custom formats start at 164 (ECMA-376 Part 1, 18.8.30)
    declared = _section(text, prefix, "numFmts")
    declared_span = (declared.start(), declared.end()) if declared else (0, 0)
    for tag in re.finditer(r"<(?:\w+:)?numFmt\b([^>]*)>", text):
        fmt_attrs = {k: html.unescape(a or b) for k, a, b in _ATTR.findall(tag.group(1))}
        if not fmt_attrs.get("numFmtId", "").isdigit():
            continue
        all_fmt_ids.append(int(fmt_attrs["numFmtId"]))
        if declared_span[0] <= tag.start() < declared_span[1]:
            existing_fmts.setdefault(fmt_attrs.get("formatCode", ""), int(fmt_attrs["numFmtId"]))
    next_fmt = max(all_fmt_ids) + 1
    new_fmts = []
    for key, code in CUSTOM_FORMATS.items():
        if code in existing_fmts:  # ours from an earlier run, or the user's identical one
            format_ids[key] = existing_fmts[code]
            continue
        format_ids[key] = next_fmt
        new_fmts.append(f'<{prefix}numFmt numFmtId="{next_fmt}" formatCode={quoteattr(code)}/>')
        next_fmt += 1

    # Elements already present verbatim (from an earlier run) are reused, so
    # re-running never makes the styles part grow.
    have = {tag: _children(text, prefix, tag) for tag in ("fonts", "fills", "borders", "cellXfs")}
    new: dict[str, list[str]] = {tag: [] for tag in have}

    def index_of(tag: str, element: str) -> int:
        if element in have[tag]:
            return have[tag].index(element)
        if element not in new[tag]:
            new[tag].append(element)
        return len(have[tag]) + new[tag].index(element)

    style_map: dict[str, int] = {}
    for key in STYLES:
        look = LOOKS[key]
        font_id = index_of("fonts", _font_xml(prefix, look.font, base_name, base_size, base_family))
        fill_id = 0
        if look.fill:
            fill_id = index_of(
                "fills",
                f'<{prefix}fill><{prefix}patternFill patternType="solid"><{prefix}fgColor rgb="{look.fill}"/>'
                f'<{prefix}bgColor indexed="64"/></{prefix}patternFill></{prefix}fill>',
            )
        border_id = index_of("borders", _border_xml(prefix, look.border)) if look.border else 0
        fmt_id = format_ids[look.number_format] if look.number_format else 0
        attrs = (
            f'numFmtId="{fmt_id}" fontId="{font_id}" fillId="{fill_id}" '
            f'borderId="{border_id}" xfId="0" applyFont="1"'
        )
        if fmt_id:
            attrs += ' applyNumberFormat="1"'
        if fill_id:
            attrs += ' applyFill="1"'
        if border_id:
            attrs += ' applyBorder="1"'
        # Top alignment everywhere: rows grow for wrapped readings, and the other
        # cells of the row should start level with them.
        align = f"<{prefix}alignment"
        if look.horizontal:
            align += f' horizontal="{look.horizontal}"'
        align += ' vertical="top"'
        if look.wrap:
            align += ' wrapText="1"'
        xf = f'<{prefix}xf {attrs} applyAlignment="1">{align}/></{prefix}xf>'
        style_map[key] = index_of("cellXfs", xf)
    new_fonts, new_fills, new_borders, new_xfs = (
        new["fonts"],
        new["fills"],
        new["borders"],
        new["cellXfs"],
    )

    text = _append(text, prefix, "numFmts", new_fmts)
    text = _append(text, prefix, "fonts", new_fonts)
    text = _append(text, prefix, "fills", new_fills)
    text = _append(text, prefix, "borders", new_borders)
    text = _append(text, prefix, "cellXfs", new_xfs)
    return text.encode("utf-8"), style_map


def _main_prefix(text: str) -> str:
    """The element prefix used for the SpreadsheetML namespace ('' or 'x:')."""
    match = re.search(r"<(?:(\w+):)?styleSheet\b", text)
    if not match:
        raise WriteError(messages.no_stylesheet())
    return f"{match.group(1)}:" if match.group(1) else ""


def _section(text: str, prefix: str, tag: str) -> re.Match[str] | None:
    return re.search(rf"<{prefix}{tag}\b[^>]*?(/>|>(.*?)</{prefix}{tag}>)", text, re.S)


def _children(text: str, prefix: str, tag: str) -> list[str]:
    """The child elements of a collection such as <fonts>, as written."""
    match = _section(text, prefix, tag)
    if match is None or match.group(2) is None:
        return []
    child = _CHILD[tag]
    pattern = rf"<{prefix}{child}\b(?:[^>]*?/>|[^>]*?>.*?</{prefix}{child}>)"
    return re.findall(pattern, match.group(2), re.S)


def _count(text: str, prefix: str, tag: str) -> int:
    """Number of child elements in a collection such as <fonts>."""
    match = _section(text, prefix, tag)
    if match is None or match.group(2) is None:
        return 0
    return len(re.findall(rf"<{prefix}{_CHILD[tag]}[\s/>]", match.group(2)))


def _append(text: str, prefix: str, tag: str, items: list[str]) -> str:
    """Append children to a collection, creating it in schema order if missing."""
    if not items:
        return text
    match = _section(text, prefix, tag)
    if match is None:
        count = len(items)
        block = f'<{prefix}{tag} count="{count}">{"".join(items)}</{prefix}{tag}>'
        later = _ORDER[_ORDER.index(tag) + 1 :]
        for nxt in later:
            found = re.search(rf"<{prefix}{nxt}\b", text)
            if found:
                return text[: found.start()] + block + text[found.start() :]
        close = text.rindex(f"</{prefix}styleSheet>")
        return text[:close] + block + text[close:]
    count = _count(text, prefix, tag) + len(items)
    start_tag_end = text.index(">", match.start())
    start_tag = text[match.start() : start_tag_end + 1].rstrip("/>").rstrip("/")
    if re.search(r'\bcount="\d+"', start_tag):
        start_tag = re.sub(r'\bcount="\d+"', f'count="{count}"', start_tag)
    else:
        start_tag = start_tag.rstrip(">") + f' count="{count}"'
    if not start_tag.endswith(">"):
        start_tag += ">"
    inner = match.group(2) or ""
    block = f"{start_tag}{inner}{''.join(items)}</{prefix}{tag}>"
    return text[: match.start()] + block + text[match.end() :]


def _default_font(text: str, prefix: str) -> tuple[str, float, str | None]:
    """Face, size and family of the workbook's first (default) font."""
    fonts = _section(text, prefix, "fonts")
    first = (
        re.search(rf"<{prefix}font\b.*?</{prefix}font>", fonts.group(2) or "", re.S)
        if fonts
        else None
    )
    body = first.group(0) if first else ""
    name = re.search(r'<(?:\w+:)?name val="([^"]*)"', body)
    size = re.search(r'<(?:\w+:)?sz val="([\d.]+)"', body)
    family = re.search(r'<(?:\w+:)?family val="(\d+)"', body)
    return (
        name.group(1) if name else "Calibri",
        float(size.group(1)) if size else 11.0,
        family.group(1) if family else None,
    )


def _font_xml(prefix: str, font: Font, name: str, size: float, family: str | None) -> str:
    parts = []
    if font.bold:
        parts.append(f"<{prefix}b/>")
    if font.italic:
        parts.append(f"<{prefix}i/>")
    if font.underline:
        parts.append(f"<{prefix}u/>")
    size_text = f"{size + font.size_step:g}"
    parts.append(f'<{prefix}sz val="{size_text}"/>')
    parts.append(f'<{prefix}color rgb="{font.color}"/>')
    parts.append(f"<{prefix}name val={quoteattr(name)}/>")
    if family:
        parts.append(f'<{prefix}family val="{family}"/>')
    return f"<{prefix}font>{''.join(parts)}</{prefix}font>"


def _border_xml(prefix: str, kind: str) -> str:
    def side(tag: str, on: bool, colour: str) -> str:
        if not on:
            return f"<{prefix}{tag}/>"
        return f'<{prefix}{tag} style="thin"><{prefix}color rgb="{colour}"/></{prefix}{tag}>'

    box = kind == "box"
    colour = INPUT_BORDER if box else RULE
    return (
        f"<{prefix}border>{side('left', box, colour)}{side('right', box, colour)}"
        f"{side('top', box, colour)}{side('bottom', True, colour)}<{prefix}diagonal/></{prefix}border>"
    )
