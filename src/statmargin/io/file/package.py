"""Package-level edits: add the tool's sheets to a workbook and remove earlier ones.

Only a handful of parts change: the workbook part (sheet list, defined names,
active tab), its relationships, ``[Content_Types].xml``, ``docProps/app.xml``
(sheet titles) and the styles part. Those are edited as text, inserting or
cutting whole elements, so every prefix, namespace declaration and extension
the user's program wrote stays as it was. Every other part is carried over
byte for byte. A replaced tool sheet's successor takes its place and its
visibility in the sheet list (the user may have moved or hidden it); tool
sheets of new kinds are appended after the last sheet. No sheet changes
position.

A tool sheet is recognised by a hidden, sheet-scoped defined name
(``backend.TOOL_SHEET_MARKER``) holding its kind, never by its name alone.
"""

from __future__ import annotations

import html
import posixpath
import re
import xml.etree.ElementTree as ET
from collections.abc import Set as AbstractSet
from dataclasses import dataclass, field

from ... import stages
from ...errors import WorkbookError, WriteError
from ...sheets.layout import print_names
from ...sheets.model import SheetModel
from ...words import file_messages as messages
from ..placement import place
from ..protocol import TOOL_SHEET_MARKER
from . import charts as chartxml
from . import sheetxml, styles
from .zipio import ZipEntry, new_entry

MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
STRICT_NS = "http://purl.oclc.org/ooxml/spreadsheetml/main"
DOC_REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG_REL_NS = "http://schemas.openxmlformats.org/package/2006/relationships"
CT_NS = "http://schemas.openxmlformats.org/package/2006/content-types"

REL_OFFICE_DOCUMENT = DOC_REL_NS + "/officeDocument"
REL_WORKSHEET = DOC_REL_NS + "/worksheet"
REL_STYLES = DOC_REL_NS + "/styles"
REL_DRAWING = DOC_REL_NS + "/drawing"
REL_CHART = DOC_REL_NS + "/chart"
REL_CALC_CHAIN = DOC_REL_NS + "/calcChain"

CT_WORKSHEET = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
CT_DRAWING = "application/vnd.openxmlformats-officedocument.drawing+xml"
CT_CHART = "application/vnd.openxmlformats-officedocument.drawingml.chart+xml"
CT_STYLES = "application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"

CONTENT_TYPES_PART = "[Content_Types].xml"
APP_PART = "docProps/app.xml"
_ATTR = re.compile(r"""([\w:.-]+)\s*=\s*(?:"([^"]*)"|'([^']*)')""")


@dataclass(frozen=True)
class SheetInfo:
    """A sheet listed in the workbook part, in workbook order."""

    name: str
    sheet_id: int
    rel_id: str
    part: str  # resolved part name, e.g. "xl/worksheets/sheet1.xml"
    rel_type: str
    tool_kind: str | None  # the marker's kind for tool sheets, else None


@dataclass
class PackageResult:
    """The rewritten package and what happened, for the sink's report and checks."""

    entries: list[ZipEntry]
    sheets: dict[str, str]  # kind -> final sheet name
    renamed: list[str]
    replaced: list[str]
    edited: set[str]  # original parts whose bytes changed
    removed: set[str]  # original parts dropped
    added: set[str]  # new parts
    notes: list[str] = field(default_factory=list)


# --------------------------------------------------------------------------- reading


def _attrs(tag_text: str) -> dict[str, str]:
    """Attributes of one start tag, unescaped; prefixes kept as written."""
    return {
        m.group(1): html.unescape(m.group(2) if m.group(2) is not None else m.group(3))
        for m in _ATTR.finditer(tag_text)
    }


def _local(attrs: dict[str, str], local: str) -> str | None:
    """An attribute by local name, whatever its prefix."""
    for key, value in attrs.items():
        if key == local or key.endswith(":" + local):
            return value
    return None


def rels_part_for(part: str) -> str:
    """The relationships part of a part: xl/workbook.xml -> xl/_rels/workbook.xml.rels."""
    folder, base = posixpath.split(part)
    return posixpath.join(folder, "_rels", base + ".rels")


def read_rels(xml: bytes | None, source_part: str) -> list[dict[str, str]]:
    """Relationships of a part, each with a resolved ``part`` key for internal targets.

    Parameters
    ----------
    xml : bytes or None
        The rels part (None when the part has no relationships).
    source_part : str
        The part the relationships belong to ("" for the package root).

    Returns
    -------
    list of dict
        Attributes ``Id``, ``Type``, ``Target``, optionally ``TargetMode``, and
        ``part`` (the resolved part name) for internal targets.
    """
    if not xml:
        return []
    text = xml.decode("utf-8")
    rels = []
    for match in re.finditer(r"<(?:\w+:)?Relationship\b([^>]*?)/?>", text):
        attrs = _attrs(match.group(1))
        if attrs.get("TargetMode") != "External" and "Target" in attrs:
            target = attrs["Target"]
            if target.startswith("/"):
                resolved = target[1:]
            else:
                resolved = posixpath.normpath(
                    posixpath.join(posixpath.dirname(source_part), target)
                )
            attrs["part"] = resolved
        rels.append(attrs)
    return rels


def office_document_part(parts: dict[str, ZipEntry]) -> str:
    """The workbook part named by the package's root relationships."""
    root = parts.get("_rels/.rels")
    for rel in read_rels(root.data() if root else None, ""):
        if rel.get("Type") == REL_OFFICE_DOCUMENT and "part" in rel:
            return rel["part"]
    if "xl/workbook.xml" in parts:
        return "xl/workbook.xml"
    raise WorkbookError(messages.no_workbook_part())


def _main_prefix(text: str) -> str:
    match = re.search(r"<(?:(\w+):)?workbook\b([^>]*)>", text)
    if not match:
        raise WorkbookError(messages.no_workbook_element())
    if STRICT_NS in match.group(2):
        raise WriteError(messages.strict_not_writable())
    return f"{match.group(1)}:" if match.group(1) else ""


def _sheet_elements(text: str, prefix: str) -> list[re.Match[str]]:
    sheets = re.search(rf"<{prefix}sheets\b[^>]*>(.*?)</{prefix}sheets>", text, re.S)
    if not sheets:
        return []
    pattern = re.compile(rf"<{prefix}sheet\b([^>]*?)(?:/>|>\s*</{prefix}sheet>)", re.S)
    return list(pattern.finditer(text, sheets.start(1), sheets.end(1)))


def _defined_names(text: str, prefix: str) -> list[re.Match[str]]:
    pattern = re.compile(
        rf"<{prefix}definedName\b([^>]*?)(?:/>|>(.*?)</{prefix}definedName>)", re.S
    )
    return list(pattern.finditer(text))


def marker_kinds(workbook_xml: bytes) -> dict[int, str]:
    """Tool-sheet markers in a workbook part: sheet position (0-based) -> kind.

    Parameters
    ----------
    workbook_xml : bytes
        The workbook part.

    Returns
    -------
    dict
        Position of each marked sheet in the sheet list -> its kind.
    """
    text = workbook_xml.decode("utf-8")
    prefix = _main_prefix(text)
    kinds: dict[int, str] = {}
    for match in _defined_names(text, prefix):
        attrs = _attrs(match.group(1))
        if attrs.get("name") != TOOL_SHEET_MARKER or "localSheetId" not in attrs:
            continue
        value = html.unescape(match.group(2) or "").strip()
        if len(value) >= 2 and value[0] == value[-1] == '"':
            kinds[int(attrs["localSheetId"])] = value[1:-1]
    return kinds


def read_sheets(parts: dict[str, ZipEntry]) -> tuple[str, list[SheetInfo]]:
    """The workbook part's name and its sheets in order, with tool markers.

    Parameters
    ----------
    parts : dict
        Part name -> entry, for the whole package.

    Returns
    -------
    tuple of (str, list of SheetInfo)
    """
    workbook_part = office_document_part(parts)
    if workbook_part not in parts:
        raise WorkbookError(messages.workbook_part_missing())
    workbook_xml = parts[workbook_part].data()
    text = workbook_xml.decode("utf-8")
    prefix = _main_prefix(text)
    rels_name = rels_part_for(workbook_part)
    rels = {
        r["Id"]: r
        for r in read_rels(parts[rels_name].data() if rels_name in parts else None, workbook_part)
    }
    kinds = marker_kinds(workbook_xml)
    sheets = []
    for index, match in enumerate(_sheet_elements(text, prefix)):
        attrs = _attrs(match.group(1))
        rel_id = _local({k: v for k, v in attrs.items() if ":" in k}, "id") or ""
        rel = rels.get(rel_id, {})
        sheets.append(
            SheetInfo(
                name=attrs.get("name", ""),
                sheet_id=int(attrs.get("sheetId", "0")),
                rel_id=rel_id,
                part=rel.get("part", ""),
                rel_type=rel.get("Type", ""),
                tool_kind=kinds.get(index),
            )
        )
    return workbook_part, sheets


def tool_sheets(parts: dict[str, ZipEntry]) -> dict[str, str]:
    """Sheets statmargin wrote before: sheet name -> kind."""
    _, sheets = read_sheets(parts)
    return {s.name: s.tool_kind for s in sheets if s.tool_kind}


# --------------------------------------------------------------------------- writing


def _fresh(prefix: str, suffix: str, used: set[str]) -> str:
    n = 1
    lowered = {u.lower() for u in used}
    while f"{prefix}{n}{suffix}".lower() in lowered:
        n += 1
    name = f"{prefix}{n}{suffix}"
    used.add(name)
    return name


def _fresh_rel_id(used: set[str]) -> str:
    numbers = [int(m.group(1)) for u in used if (m := re.fullmatch(r"rId(\d+)", u))]
    n = max(numbers, default=0) + 1
    while f"rId{n}" in used:
        n += 1
    used.add(f"rId{n}")
    return f"rId{n}"


def _rels_xml(rels: list[tuple[str, str, str]]) -> bytes:
    body = "".join(
        f'<Relationship Id="{i}" Type="{t}" Target="{sheetxml.escape(target)}"/>'
        for i, t, target in rels
    )
    return (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<Relationships xmlns="{PKG_REL_NS}">{body}</Relationships>'
    ).encode()


def _reachable(parts: dict[str, ZipEntry], skip_rels: set[tuple[str, str]]) -> set[str]:
    """Parts reachable from the package root through relationships."""
    seen: set[str] = set()
    stack = [""]
    while stack:
        part = stack.pop()
        rels_name = "_rels/.rels" if part == "" else rels_part_for(part)
        if rels_name not in parts:
            continue
        for rel in read_rels(parts[rels_name].data(), part):
            target = rel.get("part")
            if target and (part, rel.get("Id", "")) not in skip_rels and target not in seen:
                seen.add(target)
                stack.append(target)
    return seen


def build_package(entries: list[ZipEntry], models: list[SheetModel]) -> PackageResult:
    """Put tool sheets into a workbook package, replacing earlier tool sheets of the same kinds.

    Parameters
    ----------
    entries : list of ZipEntry
        The workbook's zip entries as read.
    models : list of SheetModel
        The sheets to write; at most one per kind.

    Returns
    -------
    PackageResult
        New entries (original ones carried over unchanged unless edited) and a
        summary of names, replacements and changed parts.

    Raises
    ------
    WriteError
        If the models or the workbook cannot be combined.
    WorkbookError
        If the workbook's structure cannot be read.

    Notes
    -----
    Tool sheets of kinds not being written (for example the roles sheet when
    only results are written) are kept. User sheets are never removed or
    renamed; a user sheet with a wanted name makes the tool pick another one.
    """
    parts = {e.name: e for e in entries}
    workbook_part, sheets = read_sheets(parts)
    wb_dir = posixpath.dirname(workbook_part)
    wb_rels_part = rels_part_for(workbook_part)
    if wb_rels_part not in parts:
        raise WorkbookError(messages.no_workbook_rels())

    # Which sheets go, which stay, and the new sheets' names (shared with every back end).
    placement = place([(s.name, s.tool_kind) for s in sheets], models)
    removed_idx, unmark_idx = placement.removed, placement.unmarked
    final, renamed, kind_to_name = placement.final, placement.renamed, placement.kind_to_name

    # Parts of removed sheets, dropped only if nothing that stays still refers to them.
    removed_sheet_parts = {sheets[i].part for i in removed_idx if sheets[i].part}
    skip = {(workbook_part, sheets[i].rel_id) for i in removed_idx}
    candidates: set[str] = set()
    stack = list(removed_sheet_parts)
    while stack:
        part = stack.pop()
        if part in candidates:
            continue
        candidates.add(part)
        rels_name = rels_part_for(part)
        if rels_name in parts:
            candidates.add(rels_name)
            stack.extend(r["part"] for r in read_rels(parts[rels_name].data(), part) if "part" in r)
    reachable = _reachable(parts, skip)
    removed_core = {
        p
        for p in candidates
        if not p.endswith(".rels")
        and p in parts
        and (p in removed_sheet_parts or p not in reachable)
    }
    removed_parts = removed_core | {
        rels_part_for(p) for p in removed_core if rels_part_for(p) in parts
    }

    wb_rels = read_rels(parts[wb_rels_part].data(), workbook_part)
    removed_sheet_ids = {sheets[i].sheet_id for i in removed_idx}
    drop_rel_ids = {sheets[i].rel_id for i in removed_idx}
    for rel in wb_rels:
        if rel.get("Type") == REL_CALC_CHAIN and rel.get("part") in parts and removed_sheet_ids:
            chain = parts[rel["part"]].data().decode("utf-8", "replace")
            ids = {int(v) for v in re.findall(r'\bi="(\d+)"', chain)}
            if ids & removed_sheet_ids:
                drop_rel_ids.add(rel["Id"])
                removed_parts.add(rel["part"])

    # Styles: the workbook's own part, or a new minimal one.
    styles_rel = next(
        (r for r in wb_rels if r.get("Type") == REL_STYLES and r.get("part") in parts), None
    )
    used_parts = {p for p in parts if p not in removed_parts}
    used_rel_ids = {r["Id"] for r in wb_rels if "Id" in r}
    new_wb_rels: list[tuple[str, str, str]] = []
    overrides: list[tuple[str, str]] = []
    added: dict[str, bytes] = {}
    if styles_rel is None:
        styles_part = (
            posixpath.join(wb_dir, "styles.xml")
            if posixpath.join(wb_dir, "styles.xml") not in used_parts
            else _fresh(posixpath.join(wb_dir, "styles"), ".xml", used_parts)
        )
        used_parts.add(styles_part)
        new_wb_rels.append(
            (_fresh_rel_id(used_rel_ids), REL_STYLES, posixpath.relpath(styles_part, wb_dir or "."))
        )
        overrides.append(("/" + styles_part, CT_STYLES))
        styles_xml, style_map = styles.add_styles(styles.MINIMAL_STYLES)
        added[styles_part] = styles_xml
        edited_styles = None
    else:
        styles_part = styles_rel["part"]
        styles_xml, style_map = styles.add_styles(parts[styles_part].data())
        edited_styles = styles_part

    workbook_text = parts[workbook_part].data().decode("utf-8")
    date1904 = bool(re.search(r"<(?:\w+:)?workbookPr\b[^>]*\bdate1904=\"(1|true)\"", workbook_text))
    notes: list[str] = []

    # New sheet, drawing and chart parts.
    new_sheets: list[tuple[str, str, int]] = []  # (name, rel id, sheet id)
    next_sheet_id = max([s.sheet_id for s in sheets] + [0]) + 1
    for model in models:
        name = final[model.kind]
        sheet_part = _fresh(posixpath.join(wb_dir, "worksheets/sheet"), ".xml", used_parts)
        drawing_rel = None
        if model.charts:
            drawing_part = _fresh(posixpath.join(wb_dir, "drawings/drawing"), ".xml", used_parts)
            chart_rel_ids, drawing_rels = [], []
            for n, chart in enumerate(model.charts, start=1):
                chart_part = _fresh(posixpath.join(wb_dir, "charts/chart"), ".xml", used_parts)
                added[chart_part] = chartxml.chart_xml(chart, name, model)
                overrides.append(("/" + chart_part, CT_CHART))
                chart_rel_ids.append(f"rId{n}")
                drawing_rels.append(
                    (f"rId{n}", REL_CHART, "../charts/" + posixpath.basename(chart_part))
                )
            added[drawing_part] = chartxml.drawing_xml(model.charts, chart_rel_ids, name)
            added[rels_part_for(drawing_part)] = _rels_xml(drawing_rels)
            overrides.append(("/" + drawing_part, CT_DRAWING))
            drawing_rel = "rId1"
            added[rels_part_for(sheet_part)] = _rels_xml(
                [("rId1", REL_DRAWING, "../drawings/" + posixpath.basename(drawing_part))]
            )
        with stages.stage("write.render"):  # building the sheets' XML, apart from copying the user's parts
            added[sheet_part] = sheetxml.render_sheet(
                model,
                style_map,
                kind_to_name,
                drawing_rel_id=drawing_rel,
                date1904=date1904,
                on_note=notes.append,
            )
        overrides.append(("/" + sheet_part, CT_WORKSHEET))
        rel_id = _fresh_rel_id(used_rel_ids)
        new_wb_rels.append((rel_id, REL_WORKSHEET, posixpath.relpath(sheet_part, wb_dir or ".")))
        new_sheets.append((name, rel_id, next_sheet_id))
        next_sheet_id += 1

    # Edited parts.
    edited: dict[str, bytes] = {}
    titles = [print_names(m, name) for m, (name, _, _) in zip(models, new_sheets, strict=True)]
    edited[workbook_part] = _edit_workbook(
        workbook_text, sheets, removed_idx, new_sheets, [m.kind for m in models], set(unmark_idx), titles,
        hidden={k for k, m in enumerate(models) if m.hidden},
    )
    edited[wb_rels_part] = _edit_rels(parts[wb_rels_part].data(), drop_rel_ids, new_wb_rels)
    edited[CONTENT_TYPES_PART] = _edit_content_types(
        parts[CONTENT_TYPES_PART].data(), removed_parts, overrides
    )
    if edited_styles:
        edited[edited_styles] = styles_xml
    if APP_PART in parts:
        successors = {i: final[str(sheets[i].tool_kind)] for i in removed_idx}
        replaced_kinds = {sheets[i].tool_kind for i in removed_idx}
        appended = [final[k] for k in final if k not in replaced_kinds]
        app = _edit_app(parts[APP_PART].data(), sheets, successors, appended)
        if app is not None:
            edited[APP_PART] = app

    out: list[ZipEntry] = []
    for entry in entries:
        if entry.name in removed_parts:
            continue
        if entry.name in edited:
            replacement = new_entry(entry.name, edited[entry.name])
            replacement.external_attr = entry.external_attr
            out.append(replacement)
        else:
            out.append(entry)
    for name, data in added.items():
        if name in parts and name not in removed_parts:
            raise WriteError(messages.would_overwrite(name))
        out.append(new_entry(name, data))
    return PackageResult(
        entries=out,
        sheets=final,
        renamed=renamed,
        replaced=[sheets[i].name for i in removed_idx],
        edited=set(edited),
        removed=removed_parts,
        added=set(added),
        notes=notes,
    )


def _edit_workbook(
    text: str,
    sheets: list[SheetInfo],
    removed_idx: list[int],
    new_sheets: list[tuple[str, str, int]],
    kinds: list[str],
    unmark: AbstractSet[int] = frozenset(),
    titles: list[list[tuple[str, str]]] | None = None,
    hidden: AbstractSet[int] = frozenset(),
) -> bytes:
    """Swap replaced <sheet> elements for new ones in place, append new kinds, add markers.

    A replaced tool sheet's successor takes its place in the sheet list and its
    visibility (``state="hidden"`` or ``"veryHidden"``), so no sheet changes
    position and sheet-scoped names, the active tab and the first visible tab
    keep pointing where they did. Kinds the workbook did not have yet are
    appended after the last sheet. Names scoped to a replaced sheet go with it.
    ``titles`` holds each new sheet's printing names (``Print_Titles``, ``Print_Area``)
    with their references; each becomes a sheet-scoped ``_xlnm.`` name, removed with
    the sheet on the next run.
    ``hidden`` holds the positions (in ``new_sheets``) of sheets written hidden
    (``state="hidden"``, ECMA-376 Part 1, 18.2.19) when the workbook did not have them yet.
    """
    prefix = _main_prefix(text)
    removed = set(removed_idx)
    positions = sheet_positions(sheets, removed_idx, kinds)
    states = {}
    elements = _sheet_elements(text, prefix)
    for i in removed:
        state = _attrs(elements[i].group(1)).get("state")
        if state and state != "visible":
            states[sheets[i].tool_kind] = state

    # Defined names first (offsets are recomputed after each structural edit).
    def drop_name(match: re.Match[str]) -> str:
        attrs = _attrs(match.group(1))
        local = attrs.get("localSheetId")
        if local is None or not local.strip().isdigit():
            return match.group(0)
        index = int(local)
        if index in removed or (index in unmark and attrs.get("name") == TOOL_SHEET_MARKER):
            return ""
        return match.group(0)

    pattern = re.compile(
        rf"<{prefix}definedName\b([^>]*?)(?:/>|>(.*?)</{prefix}definedName>)", re.S
    )
    text = pattern.sub(drop_name, text)
    markers = "".join(
        f'<{prefix}definedName name="{TOOL_SHEET_MARKER}" localSheetId="{positions[k]}" hidden="1">"{sheetxml.escape(kind)}"</{prefix}definedName>'
        for k, kind in enumerate(kinds)
    ) + "".join(
        f'<{prefix}definedName name="_xlnm.{name}" localSheetId="{positions[k]}">{sheetxml.escape(ref)}</{prefix}definedName>'
        for k, named in enumerate(titles or [])
        for name, ref in named
    )
    block = re.search(rf"<{prefix}definedNames\b[^>]*>(.*?)</{prefix}definedNames>", text, re.S)
    if block:
        text = text[: block.end(1)] + markers + text[block.end(1) :]
    else:
        empty = re.search(rf"<{prefix}definedNames\b[^>]*/>", text)
        if empty:
            text = (
                text[: empty.start()]
                + f"<{prefix}definedNames>{markers}</{prefix}definedNames>"
                + text[empty.end() :]
            )
        else:
            after = None
            for tag in ("externalReferences", "functionGroups", "sheets"):
                found = re.search(rf"</{prefix}{tag}>", text)
                if found:
                    after = found.end()
                    break
            if after is None:
                raise WriteError(messages.no_sheet_list())
            text = (
                text[:after]
                + f"<{prefix}definedNames>{markers}</{prefix}definedNames>"
                + text[after:]
            )
    # An emptied <definedNames></definedNames> cannot happen: markers are always added.

    # Sheet list: successors in place (from the end, so earlier offsets stay valid), then new kinds.
    r_prefix = _rel_prefix(text)
    by_kind = dict(zip(kinds, new_sheets, strict=True))
    elements = _sheet_elements(text, prefix)
    for i in sorted(removed, reverse=True):
        kind = sheets[i].tool_kind
        assert kind is not None  # only tool sheets are replaced
        element = _sheet_element(prefix, r_prefix, *by_kind[kind], states.get(kind))
        text = text[: elements[i].start()] + element + text[elements[i].end() :]
    close = re.search(rf"</{prefix}sheets>", text)
    if close is None:
        raise WriteError(messages.no_sheet_list())
    replaced_kinds = {sheets[i].tool_kind for i in removed}
    added = "".join(
        _sheet_element(prefix, r_prefix, *by_kind[kind], "hidden" if k in hidden else None)
        for k, kind in enumerate(kinds)
        if kind not in replaced_kinds
    )
    text = text[: close.start()] + added + text[close.start() :]
    encoded = text.encode("utf-8")
    ET.fromstring(encoded)  # must still be well-formed
    return encoded


def sheet_positions(sheets: list[SheetInfo], removed_idx: list[int], kinds: list[str]) -> list[int]:
    """Final 0-based position of each new tool sheet: its predecessor's, else after the last sheet.

    Parameters
    ----------
    sheets : list of SheetInfo
        The workbook's sheets before the write.
    removed_idx : list of int
        Positions of the tool sheets being replaced.
    kinds : list of str
        Kinds of the sheets being written, in the order given.

    Returns
    -------
    list of int
        One position per kind.

    Examples
    --------
    >>> data = SheetInfo("Data", 1, "rId1", "", "", None)
    >>> roles = SheetInfo("roles", 2, "rId2", "", "", "roles")
    >>> sheet_positions([roles, data], [0], ["roles", "results"])
    [0, 2]
    """
    where = {sheets[i].tool_kind: i for i in removed_idx}
    positions, extra = [], len(sheets)
    for kind in kinds:
        if kind in where:
            positions.append(where[kind])
        else:
            positions.append(extra)
            extra += 1
    return positions


def _sheet_element(
    prefix: str, r_prefix: str | None, name: str, rel_id: str, sheet_id: int, state: str | None
) -> str:
    """A <sheet> element; declares the relationships namespace itself when the root does not."""
    declare = "" if r_prefix else f' xmlns:r="{DOC_REL_NS}"'
    state_attr = f' state="{state}"' if state else ""
    return (
        f'<{prefix}sheet{declare} name="{sheetxml.escape(name)}" sheetId="{sheet_id}"'
        f'{state_attr} {r_prefix or "r"}:id="{rel_id}"/>'
    )


def _rel_prefix(text: str) -> str | None:
    """The prefix the workbook element binds to the relationships namespace, if any.

    Only the root's own declarations count: some writers (openpyxl with lxml)
    declare the prefix on each <sheet> element instead, where it is out of scope
    for an element we add.
    """
    root = re.search(r"<(?:\w+:)?workbook\b[^>]*>", text)
    if root is None:
        return None
    match = re.search(
        rf"""xmlns:([\w.-]+)\s*=\s*["']{re.escape(DOC_REL_NS)}["']""", root.group(0)
    )
    return match.group(1) if match else None


def _edit_rels(xml: bytes, drop_ids: set[str], add: list[tuple[str, str, str]]) -> bytes:
    """Remove relationships by id and append new ones."""
    text = xml.decode("utf-8")

    def drop(match: re.Match[str]) -> str:
        return "" if _attrs(match.group(1)).get("Id") in drop_ids else match.group(0)

    text = re.sub(
        r"<(?:\w+:)?Relationship\b([^>]*?)(?:/>|>\s*</(?:\w+:)?Relationship>)", drop, text
    )
    prefix_match = re.search(r"<(?:(\w+):)?Relationships\b", text)
    prefix = f"{prefix_match.group(1)}:" if prefix_match and prefix_match.group(1) else ""
    body = "".join(
        f'<{prefix}Relationship Id="{i}" Type="{t}" Target="{sheetxml.escape(target)}"/>'
        for i, t, target in add
    )
    close = text.rindex(f"</{prefix}Relationships>")
    return (text[:close] + body + text[close:]).encode("utf-8")


def _edit_content_types(
    xml: bytes, removed_parts: set[str], overrides: list[tuple[str, str]]
) -> bytes:
    """Drop overrides of removed parts and add overrides for new ones."""
    text = xml.decode("utf-8")
    removed = {"/" + p.lower() for p in removed_parts}
    added = {name.lower() for name, _ in overrides}

    def drop(match: re.Match[str]) -> str:
        name = (_attrs(match.group(1)).get("PartName") or "").lower()
        return "" if name in removed or name in added else match.group(0)

    text = re.sub(r"<(?:\w+:)?Override\b([^>]*?)(?:/>|>\s*</(?:\w+:)?Override>)", drop, text)
    prefix_match = re.search(r"<(?:(\w+):)?Types\b", text)
    prefix = f"{prefix_match.group(1)}:" if prefix_match and prefix_match.group(1) else ""
    body = "".join(
        f'<{prefix}Override PartName="{sheetxml.escape(name)}" ContentType="{ctype}"/>'
        for name, ctype in overrides
    )
    close = text.rindex(f"</{prefix}Types>")
    return (text[:close] + body + text[close:]).encode("utf-8")


def _edit_app(
    xml: bytes, sheets: list[SheetInfo], successors: dict[int, str], appended: list[str]
) -> bytes | None:
    """Update the sheet titles listed in docProps/app.xml; None leaves the part alone.

    The titles are grouped by the heading pairs (e.g. worksheets, then named
    ranges). The worksheet group is found by content, since its heading is
    written in the user's language; if it cannot be found the part is left as
    it was (it is informational only). ``successors`` maps the position of each
    replaced sheet to its successor's name, which takes its place in the list;
    ``appended`` names come last. A part that declares a DOCTYPE is left alone:
    spreadsheet programs never write one, and its entities are not ours to expand.
    """
    text = xml.decode("utf-8")
    if "<!DOCTYPE" in text:
        return None
    heading = re.search(
        r"(<(\w+:)?HeadingPairs>\s*<(\w+:)?vector\b[^>]*>)(.*?)(</\3vector>)", text, re.S
    )
    titles = re.search(
        r"(<(\w+:)?TitlesOfParts>\s*<(\w+:)?vector\b[^>]*>)(.*?)(</\3vector>)", text, re.S
    )
    if not heading or not titles:
        return None
    vt = titles.group(3) or ""
    counts = [int(v) for v in re.findall(rf"<{vt}i4>(\d+)</{vt}i4>", heading.group(4))]
    title_items = re.findall(rf"<{vt}lpstr>(.*?)</{vt}lpstr>", titles.group(4), re.S)
    if sum(counts) != len(title_items):
        return None
    worksheets = [i for i, s in enumerate(sheets) if s.rel_type == REL_WORKSHEET]
    worksheet_names = [sheets[i].name for i in worksheets]
    start = 0
    group = None
    for g, count in enumerate(counts):
        if [html.unescape(t) for t in title_items[start : start + count]] == worksheet_names:
            group = g
            break
        start += count
    if group is None:
        return None
    current = title_items[start : start + counts[group]]
    new_group = [
        sheetxml.escape(successors[i]) if i in successors else title
        for i, title in zip(worksheets, current, strict=True)
    ] + [sheetxml.escape(n) for n in appended]
    title_items[start : start + counts[group]] = new_group
    counts[group] = len(new_group)

    count_iter = iter(counts)
    new_heading_body = re.sub(
        rf"<{vt}i4>\d+</{vt}i4>", lambda m: f"<{vt}i4>{next(count_iter)}</{vt}i4>", heading.group(4)
    )
    new_titles_body = "".join(f"<{vt}lpstr>{t}</{vt}lpstr>" for t in title_items)
    new_titles_open = re.sub(r'\bsize="\d+"', f'size="{len(title_items)}"', titles.group(1))
    # Replace the later match first so the earlier offsets stay valid.
    pieces = sorted(
        [
            (heading.start(4), heading.end(4), new_heading_body),
            (titles.start(1), titles.end(4), new_titles_open + new_titles_body),
        ],
        reverse=True,
    )
    for s, e, new in pieces:
        text = text[:s] + new + text[e:]
    return text.encode("utf-8")
