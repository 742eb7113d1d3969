"""Counts agree with their nouns: no sentence hedges with '(s)' or '(es)' (use ``words.numbers.counted``)."""

from __future__ import annotations

import ast
import re
from pathlib import Path

SRC = Path(__file__).resolve().parents[1] / "src" / "statmargin"
HEDGED = re.compile(r"[a-z]\((?:e?s)\)")


def _literals(path: Path) -> list[tuple[int, str]]:
    """String literals of one module, docstrings and other lone strings (never shown) left out."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    lone = {id(node.value) for node in ast.walk(tree) if isinstance(node, ast.Expr)}
    return [(node.lineno, node.value) for node in ast.walk(tree)
            if isinstance(node, ast.Constant) and isinstance(node.value, str) and id(node) not in lone]


def test_no_hedged_plural_in_any_text() -> None:
    """Every string literal of the package but docstrings, f-string parts included, is free of 'analysis(es)' and 'row(s)'."""
    hits = [f"{path.relative_to(SRC)}:{line}: {text[:60]!r}"
            for path in sorted(SRC.rglob("*.py")) for line, text in _literals(path) if HEDGED.search(text)]
    assert hits == []


def test_the_pattern_finds_a_hedged_plural() -> None:
    """The pattern itself catches both spellings and leaves a plain bracket alone."""
    assert HEDGED.search("1 analysis(es) written") and HEDGED.search("2 row(s)")
    assert not HEDGED.search("Welch (see below)")
