"""The layering rules of DEVELOPERS.md, checked on the source itself.

* Design, test and effect names are values of the vocabulary enums: outside
  ``vocabulary/`` and ``words/`` no string literal spells one (identifiers in
  ``__all__`` lists aside), so no module recovers meaning from display text.
* The vocabulary comes first in the pipeline: it imports nothing of the rest.
"""

from __future__ import annotations

import ast
from pathlib import Path

from statmargin.vocabulary import Design, EffectKind, Test

SRC = Path(__file__).resolve().parents[1] / "src" / "statmargin"
NAMES = {member.value for enum in (Design, Test, EffectKind) for member in enum}


def _modules(skip: tuple[str, ...] = ()) -> list[Path]:
    return [p for p in sorted(SRC.rglob("*.py")) if p.relative_to(SRC).parts[0] not in skip]


def _docstrings(tree: ast.AST) -> set[int]:
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, (ast.Module, ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)) and node.body:
            first = node.body[0]
            if isinstance(first, ast.Expr) and isinstance(first.value, ast.Constant):
                found.add(id(first.value))
    return found


def _all_lists(tree: ast.AST) -> set[int]:
    """Constants inside ``__all__ = [...]``: identifiers, not names of designs."""
    inside = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Assign) and any(isinstance(t, ast.Name) and t.id == "__all__" for t in node.targets):
            inside.update(id(c) for c in ast.walk(node.value))
    return inside


def test_no_design_test_or_effect_name_is_spelled_outside_the_vocabulary() -> None:
    hits = []
    for path in _modules(skip=("vocabulary", "words")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        allowed = _docstrings(tree) | _all_lists(tree)
        for node in ast.walk(tree):
            if isinstance(node, ast.Constant) and node.value in NAMES and id(node) not in allowed:
                hits.append(f"{path.relative_to(SRC)}:{node.lineno}: {node.value!r}")
    assert hits == []


def _imported_packages(path: Path) -> set[str]:
    """The statmargin packages a module imports (relative or absolute)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    depth = len(path.relative_to(SRC).parts) - 1
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                parts = list(path.relative_to(SRC).parts[: depth - node.level + 1])
                parts += (node.module or "").split(".") if node.module else []
                if parts:
                    found.add(parts[0])
                else:  # "from .. import x": x is a top-level module or package
                    found.update(alias.name for alias in node.names)
            elif node.module and node.module.startswith("statmargin."):
                found.add(node.module.split(".")[1])
        elif isinstance(node, ast.Import):
            found.update(a.name.split(".")[1] for a in node.names if a.name.startswith("statmargin."))
    return found


def test_vocabulary_imports_nothing_of_the_pipeline() -> None:
    hits = {
        str(path.relative_to(SRC)): sorted(_imported_packages(path) - {"vocabulary", "errors"})
        for path in (SRC / "vocabulary").rglob("*.py")
        if _imported_packages(path) - {"vocabulary", "errors"}
    }
    assert hits == {}
