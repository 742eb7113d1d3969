"""The layering rules of DEVELOPERS.md, checked on the source itself.

* Design, test and effect names are values of the vocabulary enums: outside
  ``vocabulary/`` and ``words/`` no string literal spells one (identifiers in
  ``__all__`` lists aside), so no module recovers meaning from display text.
* The vocabulary comes first in the pipeline: it imports nothing of the rest.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

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
    return _imported_packages_of(path.read_text(encoding="utf-8"), path)


def _imported_packages_of(source: str, path: Path) -> set[str]:
    """The statmargin packages imported by ``source``, read as the module at ``path``."""
    tree = ast.parse(source)
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


# Packages the methods must not import: they come after stats/ in the pipeline or hold wording.
NOT_FOR_STATS = {"words", "plan", "designs", "sheets", "jobs", "cli"}


def test_stats_imports_no_wording_planning_or_later_stage() -> None:
    """stats/ computes from arrays: it imports none of words/, plan/, designs/, sheets/, jobs/ or the cli.

    The scan sees every import statement, inside functions too, so a deferred import counts.
    """
    hits = {
        str(path.relative_to(SRC)): sorted(_imported_packages(path) & NOT_FOR_STATS)
        for path in (SRC / "stats").rglob("*.py")
        if _imported_packages(path) & NOT_FOR_STATS
    }
    assert hits == {}


@pytest.mark.parametrize(
    ("source", "found"),
    [
        ("from statmargin.words.sentences import say", {"words"}),
        ("def f():\n    from ..plan.periods import PeriodAxis", {"plan"}),
        ("from .. import cli", {"cli"}),
        ("from ..vocabulary.codes import Refusal", {"vocabulary"}),
    ],
)
def test_import_scan_sees_deferred_and_relative_imports(source: str, found: set[str]) -> None:
    """The import scan finds absolute, relative and deferred imports of a module in stats/."""
    assert _imported_packages_of(source, SRC / "stats" / "probe.py") == found  # a path only: nothing is written


def test_vocabulary_imports_nothing_of_the_pipeline() -> None:
    hits = {
        str(path.relative_to(SRC)): sorted(_imported_packages(path) - {"vocabulary", "errors"})
        for path in (SRC / "vocabulary").rglob("*.py")
        if _imported_packages(path) - {"vocabulary", "errors"}
    }
    assert hits == {}


# ---------------------------------------------------------------- sentences live in words/

WORD = re.compile(r"[A-Za-z]+(?:['’-][A-Za-z]+)*")
# Markup the file back end writes: a tag, a closing "/>", or an attribute (name="...").
MARKUP = re.compile(r"<[A-Za-z/?!]|/>|\w=\"")
# Regular-expression syntax no sentence holds: a group "(?", or an escape such as \d, \s, \b, \u.
REGEX = re.compile(r"\(\?|\\[dDsSwWbBuU.()\[\]{}+*?|^$]")
# Packages whose text is not scanned: words/ makes the sentences and vocabulary/ holds the words users type.
NOT_SCANNED = ("vocabulary", "words")
# Texts let through by name, each with why it is not a sentence made outside words/.
ALLOWED = {
    ("stats/rates.py", "events in first group"): (
        "the name of the exact rate-ratio test's statistic, a label in the Statistic column like 't' or 'z'"
    ),
}


def _is_sentence(text: str) -> bool:
    """Four or more words with a space between: what a person reads, not an identifier or a key."""
    return len(WORD.findall(text)) >= 4 and " " in text.strip()


def _not_shown(tree: ast.AST) -> set[int]:
    """Strings that never reach a user as text: documentation, assert messages, texts matched against."""
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Expr) and isinstance(node.value, ast.Constant):
            found.add(id(node.value))  # a docstring, or a string standing alone as a note
        elif isinstance(node, ast.Assert) and node.msg is not None:
            found.update(id(n) for n in ast.walk(node.msg))  # for developers: an assert never fires for a user
        elif isinstance(node, ast.Compare):  # "... in detail": a library's text matched, not ours shown
            found.update(id(n) for operand in (node.left, *node.comparators) for n in ast.walk(operand)
                         if isinstance(n, ast.Constant))
    return found


def sentences_in(source: str) -> list[tuple[int, str]]:
    """Sentence-like string literals of one module: ``(line, text)`` for each.

    An f-string is judged as a whole (its literal parts joined). Markup (XML the
    file back end writes) and regular expressions are not sentences, whatever
    their words; neither is a string that is never shown (see ``_not_shown``).
    """
    tree = ast.parse(source)
    skip = _not_shown(tree)
    for node in ast.walk(tree):
        if isinstance(node, ast.JoinedStr):
            skip.update(id(part) for part in node.values)
    hits = []
    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.Constant) and isinstance(node.value, str):
            text = node.value
        elif isinstance(node, ast.JoinedStr):
            text = "".join(p.value for p in node.values if isinstance(p, ast.Constant) and isinstance(p.value, str))
        else:
            continue
        if _is_sentence(text) and not MARKUP.search(text) and not REGEX.search(text):
            hits.append((node.lineno, text))
    return hits


def test_no_sentence_outside_words() -> None:
    """Every sentence a user reads is made in words/: no other package holds a sentence-like string literal.

    The allow-list is by kind of text, never by file: docstrings and lone strings,
    assert messages, texts compared against (a library's message searched for a
    phrase), XML markup and regular expressions; and the few texts of ``ALLOWED``,
    each named with its file and the reason it is let through.
    """
    hits = [
        f"{path.relative_to(SRC)}:{line}: {text[:80]!r}"
        for path in _modules(skip=NOT_SCANNED)
        for line, text in sentences_in(path.read_text(encoding="utf-8"))
        if (path.relative_to(SRC).as_posix(), text) not in ALLOWED
    ]
    assert hits == []


def test_every_allowed_text_is_still_there() -> None:
    """Each entry of the allow-list names a text its file still holds, so the list never outlives its reason."""
    found = {
        (path.relative_to(SRC).as_posix(), text)
        for path in _modules(skip=NOT_SCANNED)
        for _, text in sentences_in(path.read_text(encoding="utf-8"))
    }
    assert set(ALLOWED) - found == set()


@pytest.mark.parametrize(
    ("source", "found"),
    [
        ('raise RoleError("This column has no values at all here")', True),
        ('raise RoleError(f"Column {name!r} has no values at all here")', True),
        ('model.put(0, 0, "Every cell used was read as it stood.", "muted")', True),
        ('raise ValueError(f"not an A1 range: {ref!r}")', True),
        ('x = "three words only"', False),
        ('x = f\'<sheet name="{n}" sheetId="{i}" r:id="{r}"/>\'', False),
        ('x = \' t="inlineStr"><is><t xml:space="preserve">\'', False),
        ('x = re.compile(r"^(?P<m>\\d{1,2}) of the (?P<d>\\d+) in this$")', False),
        ('if "larger than its declared size" in detail: pass', False),
        ('assert ok, "every style key needs a look"', False),
        ('def f():\n    """A docstring of many words is documentation."""', False),
    ],
)
def test_sentence_scan_finds_sentences_and_passes_other_text(source: str, found: bool) -> None:
    """The scan flags a sentence raised or shown from code, and passes markup, patterns and unshown text."""
    assert bool(sentences_in(source)) is found
