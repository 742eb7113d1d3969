"""What a user does to a workbook in a spreadsheet program, done on the package for tests.

Moving a sheet, hiding one and deleting rows change the same things a
spreadsheet program changes (the sheet list, sheet-scoped names' positions, the
active tab, row numbers); every other part keeps its bytes.
"""

from __future__ import annotations

import re
from pathlib import Path

from statmargin.io.file.zipio import new_entry, read_zip, write_zip
from workbook_edit import sheet_part

_SHEET = re.compile(r"<sheet\b[^>]*/>")
_LOCAL_ID = re.compile(r'localSheetId="(\d+)"')


def _edit_part(path: Path, part: str, edit) -> None:  # noqa: ANN001 - str -> str
    entries = read_zip(path.read_bytes())
    out = []
    for entry in entries:
        if entry.name == part:
            entry = new_entry(part, edit(entry.data().decode("utf-8")).encode("utf-8"))
        out.append(entry)
    path.write_bytes(write_zip(out))


def sheet_order(path: Path) -> list[tuple[str, str]]:
    """(name, state) of every sheet, in order; state is "visible" when not set."""
    text = {e.name: e for e in read_zip(path.read_bytes())}["xl/workbook.xml"].data().decode("utf-8")
    out = []
    for tag in _SHEET.findall(text):
        name = re.search(r'\bname="([^"]*)"', tag).group(1)
        state = re.search(r'\bstate="([^"]*)"', tag)
        out.append((name, state.group(1) if state else "visible"))
    return out


def move_sheet(path: Path, name: str, to: int) -> None:
    """Drag the sheet ``name`` to position ``to`` (0-based), as in a spreadsheet program."""

    def edit(text: str) -> str:
        tags = _SHEET.findall(text)
        names = [re.search(r'\bname="([^"]*)"', t).group(1) for t in tags]
        old = names.index(name)
        order = list(range(len(tags)))
        order.insert(to, order.pop(old))
        new_index = {o: n for n, o in enumerate(order)}
        start = text.index(tags[0])
        end = text.index(tags[-1]) + len(tags[-1])
        text = text[:start] + "".join(tags[o] for o in order) + text[end:]
        text = _LOCAL_ID.sub(lambda m: f'localSheetId="{new_index[int(m.group(1))]}"', text)
        return re.sub(r'\b(activeTab|firstSheet)="(\d+)"', lambda m: f'{m.group(1)}="{new_index[int(m.group(2))]}"', text)

    _edit_part(path, "xl/workbook.xml", edit)


def hide_sheet(path: Path, name: str, state: str = "hidden") -> None:
    """Hide a sheet (``state`` "hidden", or "veryHidden" as only a macro can)."""

    def edit(text: str) -> str:
        def one(match: re.Match[str]) -> str:
            tag = match.group(0)
            if f'name="{name}"' not in tag:
                return tag
            tag = re.sub(r'\s+state="[^"]*"', "", tag)
            return tag.replace("<sheet ", f'<sheet state="{state}" ', 1)

        return _SHEET.sub(one, text)

    _edit_part(path, "xl/workbook.xml", edit)


def delete_rows(path: Path, sheet: str, first: int, count: int = 1) -> None:
    """Delete rows ``first`` .. ``first + count - 1`` (1-based) of a sheet; rows below move up."""

    def edit(text: str) -> str:
        def row(match: re.Match[str]) -> str:
            number = int(match.group(1))
            if first <= number < first + count:
                return ""
            if number < first:
                return match.group(0)
            shifted = number - count
            body = re.sub(r'(<c r="[A-Z]+)\d+"', lambda m: f'{m.group(1)}{shifted}"', match.group(0))
            return re.sub(r'<row r="\d+"', f'<row r="{shifted}"', body, count=1)

        return re.sub(r'<row r="(\d+)"[^>]*?(?:/>|>.*?</row>)', row, text, flags=re.S)

    _edit_part(path, sheet_part(path, sheet), edit)
