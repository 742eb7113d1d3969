"""Where the tool's sheets go: which earlier tool sheets are replaced and what the new ones are called.

Every back end (the file writer and the Excel bridge) asks the same question
before it writes: given the workbook's sheets in order, each with its
tool-sheet kind or None, and the sheet models to write, which sheets are
replaced, which copies lose their marker, and what name each new sheet gets.
Answering it in one place keeps the two back ends' sheet names and messages
identical.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass

from ..errors import WriteError
from ..sheets.model import UNWRITABLE_TEXT, SheetModel
from ..words import sheet_messages

FORBIDDEN_NAME_CHARS = re.compile(r"[\[\]:*?/\\]")
MAX_SHEET_NAME = 31


def clean_sheet_name(name: str, fallback: str) -> str:
    """A legal sheet name: no []:*?/\\, no leading/trailing apostrophe, at most 31 characters.

    Parameters
    ----------
    name : str
        The wanted name.
    fallback : str
        Used when nothing legal is left (or the name is Excel's reserved "History").

    Returns
    -------
    str
        The cleaned name.

    Examples
    --------
    >>> clean_sheet_name("a/b:c", "results")
    'a b c'
    >>> clean_sheet_name("History", "log")
    'log'
    """
    cleaned = FORBIDDEN_NAME_CHARS.sub(" ", UNWRITABLE_TEXT.sub("", name))
    cleaned = re.sub(r"\s+", " ", cleaned).strip().strip("'").strip()
    if not cleaned or cleaned.casefold() == "history":  # "History" is reserved by Excel
        cleaned = fallback
    return cleaned[:MAX_SHEET_NAME].rstrip()


def _numbered(base: str, n: int) -> str:
    suffix = f" ({n})"
    return base[: MAX_SHEET_NAME - len(suffix)].rstrip() + suffix


def choose_name(preferred: str, kind: str, taken: set[str]) -> str:
    """The preferred name if free, else "statmargin <name>", else with " (2)", " (3)" ...

    Parameters
    ----------
    preferred : str
        The model's preferred name (already cleaned).
    kind : str
        The sheet kind, used if the name is empty.
    taken : set of str
        Case-folded names already in use.

    Returns
    -------
    str
        A name not in ``taken`` (comparison ignores case, as spreadsheet programs do).

    Examples
    --------
    >>> choose_name("results", "results", {"results"})
    'statmargin results'
    """
    candidates = [preferred]
    if not preferred.casefold().startswith("statmargin"):
        candidates.append(clean_sheet_name(f"statmargin {preferred}", kind))
    for name in candidates:
        if name.casefold() not in taken:
            return name
    base = candidates[-1]
    n = 2
    while _numbered(base, n).casefold() in taken:
        n += 1
    return _numbered(base, n)


@dataclass(frozen=True)
class Placement:
    """The answer for one write.

    ``removed`` and ``unmarked`` are positions in the workbook's sheet list:
    the earlier tool sheets replaced by new ones, and copies of tool sheets
    that keep their content but lose the marker (they become the user's).
    ``final`` maps each new sheet's kind to its name; ``kind_to_name`` adds the
    tool sheets that stay (for resolving links between tool sheets).
    """

    removed: list[int]
    unmarked: list[int]
    final: dict[str, str]
    renamed: list[str]
    kind_to_name: dict[str, str]


def place(sheets: Sequence[tuple[str, str | None]], models: Sequence[SheetModel]) -> Placement:
    """Decide which sheets a write replaces and what the new sheets are called.

    Parameters
    ----------
    sheets : sequence of (str, str or None)
        The workbook's sheets in order: name and tool-sheet kind (None for the user's).
    models : sequence of SheetModel
        The sheets to write; at most one per kind.

    Returns
    -------
    Placement
        Replaced and unmarked positions, final names, and one sentence per
        name that differs from what the user would expect.

    Raises
    ------
    WriteError
        If two models have the same kind.

    Notes
    -----
    A copy of a tool sheet made in a spreadsheet program carries the marker
    too; only one sheet per kind is replaced (the one with the model's name,
    else the first), the others are kept as the user's own. User sheets are
    never removed or renamed; a user sheet with a wanted name makes the tool
    pick another one.

    Examples
    --------
    >>> from statmargin.sheets.model import SheetModel
    >>> p = place([("Data", None), ("results", None)], [SheetModel("results", "results")])
    >>> p.final, p.removed
    ({'results': 'statmargin results'}, [])
    """
    kinds = [m.kind for m in models]
    if len(set(kinds)) != len(kinds):
        raise WriteError(sheet_messages.same_kind_twice())
    removed: list[int] = []
    unmarked: list[int] = []
    renamed: list[str] = []
    for model in models:
        same_kind = [i for i, (_, kind) in enumerate(sheets) if kind == model.kind]
        if not same_kind:
            continue
        ours = min(same_kind, key=lambda i: (sheets[i][0] != model.name, i))
        removed.append(ours)
        for i in same_kind:
            if i != ours:
                unmarked.append(i)
                renamed.append(sheet_messages.copy_kept(sheets[i][0], model.kind))
    removed.sort()
    kept = [s for i, s in enumerate(sheets) if i not in removed]
    old_name_by_kind = {sheets[i][1]: sheets[i][0] for i in removed}
    taken = {name.casefold() for name, _ in kept}
    final: dict[str, str] = {}
    for model in models:
        preferred = old_name_by_kind.get(model.kind) or clean_sheet_name(model.name, model.kind)
        name = choose_name(preferred, model.kind, taken)
        taken.add(name.casefold())
        final[model.kind] = name
        if name != model.name and model.kind not in old_name_by_kind:
            if preferred != model.name:
                renamed.append(sheet_messages.name_not_allowed(model.name, model.kind, name))
            else:
                renamed.append(sheet_messages.name_taken(model.name, model.kind, name))
        elif model.kind in old_name_by_kind and name != old_name_by_kind[model.kind]:
            renamed.append(sheet_messages.kind_renamed(model.kind, name))
    kind_to_name = {kind: name for name, kind in kept if kind}
    kind_to_name.update(final)
    return Placement(removed, sorted(unmarked), final, renamed, kind_to_name)
