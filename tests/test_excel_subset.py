"""The declared xlwings subset holds on both sides: real xlwings has it, the stand-in has only it.

Source of truth for "real xlwings" is the installed package itself (the ``test``
extra installs it on Linux, without Excel): the public classes of
``xlwings.main`` and the two desktop engines, ``xlwings/_xlwindows.py`` and
``xlwings/_xlmac.py``. The engines import pywin32 or appscript, so they are
read as source (``ast``) rather than imported.
"""

from __future__ import annotations

import ast
import os
from pathlib import Path
from typing import get_args

import pytest
import xlwings
from xlwings import base_classes
from xlwings import main as xw_main

import xlwings_standin as xs
from statmargin.io.excel import entry, render
from statmargin.io.excel.subset import ENGINE_MAY_LACK, MIN_VERSION, RANGE_OPTIONS, USED
from statmargin.sheets.looks import LOOKS

XLWINGS_DIR = Path(xlwings.__file__).parent
ENGINES = ("_xlwindows.py", "_xlmac.py")
# Members whose facade reaches the engine through xlwings' conversion layer rather than
# ``self.impl``: reading and writing values ends in the engine's ``raw_value``.
VIA_CONVERSION = {("Range", "value"): {"raw_value"}}


def _classes(path: Path) -> dict[str, ast.ClassDef]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return {node.name: node for node in tree.body if isinstance(node, ast.ClassDef)}


MAIN = _classes(XLWINGS_DIR / "main.py")
BASE = _classes(XLWINGS_DIR / "base_classes.py")
ENGINE_CLASSES = {name: _classes(XLWINGS_DIR / name) for name in ENGINES}


def _functions(node: ast.ClassDef, name: str) -> list[ast.FunctionDef]:
    return [f for f in node.body if isinstance(f, ast.FunctionDef) and f.name == name]


def _facade_functions(cls: str, member: str) -> list[ast.FunctionDef]:
    """The facade's definitions of a member, looking through its bases in xlwings.main."""
    node = MAIN[cls]
    found = _functions(node, member)
    for base in node.bases:
        base_name = base.value.id if isinstance(base, ast.Subscript) and isinstance(base.value, ast.Name) else (
            base.id if isinstance(base, ast.Name) else None)
        if not found and base_name in MAIN:
            found = _functions(MAIN[base_name], member)
    return found


def _impl_uses(cls: str, member: str, seen: set[str] | None = None) -> set[tuple[str, bool]]:
    """(engine member, set?) pairs a facade member reaches through ``self.impl``, following self-calls."""
    seen = seen if seen is not None else set()
    if member in seen:
        return set()
    seen.add(member)
    uses: set[tuple[str, bool]] = set()
    for function in _facade_functions(cls, member):
        for node in ast.walk(function):
            if isinstance(node, ast.Attribute) and isinstance(node.value, ast.Attribute) and \
                    isinstance(node.value.value, ast.Name) and node.value.value.id == "self" and node.value.attr == "impl":
                uses.add((node.attr, isinstance(node.ctx, ast.Store)))
            if isinstance(node, ast.For) and ast.unparse(node.iter) == "self.impl":
                uses.add(("__iter__", False))
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and \
                    isinstance(node.func.value, ast.Name) and node.func.value.id == "self":
                uses |= _impl_uses(cls, node.func.attr, seen)
    return uses


def _is_stub(function: ast.FunctionDef) -> bool:
    body = [n for n in function.body if not (isinstance(n, ast.Expr) and isinstance(n.value, ast.Constant))]
    return len(body) == 1 and isinstance(body[0], ast.Raise) and "NotImplementedError" in ast.unparse(body[0])


def _defines(classes: dict[str, ast.ClassDef], cls: str, member: str, setter: bool) -> bool:
    """Whether an engine class (or an engine base it names) implements the member (or its setter)."""
    todo, done = [cls], set()
    while todo:
        name = todo.pop()
        if name in done or name not in classes:
            continue
        done.add(name)
        node = classes[name]
        for function in _functions(node, member):
            decorators = [ast.unparse(d) for d in function.decorator_list]
            if not setter or f"{member}.setter" in decorators:
                return True
        todo.extend(b.id for b in node.bases if isinstance(b, ast.Name))
    base = BASE.get(cls)
    if base is None:
        return False
    for function in _functions(base, member):
        decorators = [ast.unparse(d) for d in function.decorator_list]
        if (not setter or f"{member}.setter" in decorators) and not _is_stub(function):
            return True
    return False


def _declared() -> list[tuple[str, str]]:
    return sorted((cls, member) for cls, members in USED.items() for member in members)


def test_installed_xlwings_is_new_enough() -> None:
    """The xlwings installed for the tests is at least the version the bridge declares (MIN_VERSION)."""
    version = tuple(int(p) for p in xlwings.__version__.split(".")[:3])
    assert version >= MIN_VERSION


@pytest.mark.parametrize(("cls", "member"), _declared())
def test_member_exists_on_the_real_xlwings_class(cls, member) -> None:
    """Every declared member is an attribute of the public xlwings class of that name, outside xlwings.pro."""
    real = getattr(xw_main, cls)
    assert hasattr(real, member), f"xlwings.main.{cls} has no {member}"
    assert real.__module__ == "xlwings.main"


@pytest.mark.parametrize(("cls", "member"), _declared())
@pytest.mark.parametrize("engine", ENGINES)
def test_desktop_engines_implement_the_member(cls, member, engine) -> None:
    """What each declared member asks of the engine is implemented by Excel's desktop engines (or declared missing)."""
    uses = _impl_uses(cls, member) | {(m, False) for m in VIA_CONVERSION.get((cls, member), ())}
    missing = [m for m, setter in sorted(uses) if not _defines(ENGINE_CLASSES[engine], cls, m, setter)]
    if (cls, member) in ENGINE_MAY_LACK:
        return
    assert missing == [], f"{engine} lacks {cls}.{missing} used by {cls}.{member}"


def test_declared_gaps_are_still_gaps() -> None:
    """Each member the bridge tries but may not get is indeed missing from a desktop engine (else drop the entry)."""
    for cls, member in ENGINE_MAY_LACK:
        uses = _impl_uses(cls, member)
        assert uses, (cls, member)
        assert any(not _defines(ENGINE_CLASSES[e], cls, m, s) for e in ENGINES for m, s in uses), (cls, member)


def test_range_options_are_xlwings_options() -> None:
    """The Range.options keywords the bridge passes are converter options xlwings reads."""
    converter = (XLWINGS_DIR / "conversion" / "standard.py").read_text(encoding="utf-8")
    for option in RANGE_OPTIONS:
        assert f'"{option}"' in converter, option


def test_words_passed_to_xlwings_are_in_its_vocabulary() -> None:
    """Chart types, plot direction, legend place, border sides and styles, alignments and alert mode are xlwings' words."""
    assert set(render.CHART_TYPES.values()) <= set(base_classes.CHART_TYPES)
    assert render.PLOT_BY in get_args(base_classes.ChartPlotBy)
    assert render.LEGEND_POSITION in get_args(base_classes.ChartLegendPosition)
    assert render.LINE_STYLE in get_args(base_classes.BorderLineStyle)
    assert render.LINE_WEIGHT in get_args(base_classes.BorderWeight)
    assert set(render.RULE_SIDES) <= set(base_classes.BORDER_SIDES)
    assert render.BOX_SIDES == "all" and base_classes.BORDER_GRID_SIDES
    assert render.VERTICAL in base_classes.VERTICAL_ALIGNMENTS
    assert {look.horizontal for look in LOOKS.values() if look.horizontal} <= set(base_classes.HORIZONTAL_ALIGNMENTS)
    alert_source = ast.unparse(_functions(_classes(XLWINGS_DIR / "_xlwindows.py")["App"], "alert")[0])
    assert f"'{entry.ALERT_MODE}'" in alert_source


def test_standin_offers_exactly_the_declared_members() -> None:
    """Each stand-in class defines the declared public members of its xlwings class and no other public ones."""
    standins = {obj._facade: obj for obj in vars(xs).values()
                if isinstance(obj, type) and issubclass(obj, xs._Strict) and obj._facade}
    assert set(standins) == set(USED)
    for facade, cls in standins.items():
        public = {name for name in vars(cls) if not name.startswith("_")} | (
            {"__iter__"} if "__iter__" in vars(cls) else set())
        assert public == set(USED[facade]), facade


def test_standin_refuses_anything_else() -> None:
    """Asking the stand-in for a member outside the subset raises and is recorded."""
    book = xs.new_book(sheets={"Data": [[1, 2]]})
    sheet = next(iter(book.sheets))
    with pytest.raises(xs.SubsetViolation):
        sheet.cells  # noqa: B018 - an attribute the bridge must not use
    with pytest.raises(xs.SubsetViolation):
        sheet.range((1, 1)).api  # noqa: B018
    with pytest.raises(xs.SubsetViolation):
        sheet.range((1, 1)).options(chunksize=10)
    with pytest.raises(xs.SubsetViolation):
        sheet._grid  # noqa: B018 - the stand-in's own state is off limits too
    assert xs.recorder(book).violations == ["Sheet.cells", "Range.api", "Range.options(['chunksize'])", "Sheet._grid"]


def test_bridge_never_uses_the_licensed_parts() -> None:
    """No bridge module names xlwings.pro or a licence key, and the tests set none."""
    folder = Path(render.__file__).parent
    sources = [p.read_text(encoding="utf-8") for p in folder.glob("*.py")]
    sources.append((folder.parent.parent / "excel.py").read_text(encoding="utf-8"))
    for text in sources:
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, ast.Import):
                assert not any(a.name.startswith("xlwings.pro") for a in node.names)
            if isinstance(node, ast.ImportFrom):
                assert not (node.module or "").startswith("xlwings.pro")
                assert not (node.module == "xlwings" and any(a.name == "pro" for a in node.names))
        assert "LICENSE_KEY" not in text
    assert "XLWINGS_LICENSE_KEY" not in os.environ
