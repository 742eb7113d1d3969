"""Every corpus file through the command line: the right outcome, one clear line, nothing of the user's lost.

The corpus (``corpus/make_corpus.py``) holds workbooks saved by other writers,
files that are no workbook, hostile files and awkward but valid data. For each
case every command is run as a user would type it (``statmargin.cli.main`` with
the same arguments); the test checks the exit code, that a refusal is one line
saying what is wrong, that a refused file is byte-identical afterwards, that no
stray file is left beside it, and, for processed files, that every part of the
user's was carried over byte for byte, that the user's sheets kept their order
and that the tool's numbers point at number formats the workbook declares.
"""

from __future__ import annotations

import hashlib
import re
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from click.testing import CliRunner

from corpus.make_corpus import CASES, OK, SHEET, Case, make, visits
from libreoffice import require_soffice, sheet_to_csv
from statmargin.cli import main
from statmargin.io.file.package import read_sheets
from statmargin.io.file.sink import FileSink
from statmargin.io.file.zipio import ZipEntry, read_zip
from workbook_fixtures import sample_tool_models

MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
# Parts the writer edits (the sheet list, its relationships, content types, document
# properties, styles); every other part of the user's must keep its bytes.
EDITED = {"xl/workbook.xml", "xl/_rels/workbook.xml.rels", "[Content_Types].xml", "docProps/app.xml", "xl/styles.xml"}
FIRST_CUSTOM_FORMAT = 164  # ids below are built in (ECMA-376 Part 1, 18.8.30)
_made: dict[str, Path] = {}


@pytest.fixture(scope="session")
def corpus_folder(tmp_path_factory) -> Path:
    """The folder the corpus is generated into, once per session."""
    return tmp_path_factory.mktemp("corpus")


def corpus_file(case: Case, folder: Path) -> Path:
    """The case's file, made on first use."""
    if case.needs_soffice:
        require_soffice()
    if case.name not in _made:
        _made[case.name] = make(case, folder)
    return _made[case.name]


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def entries(path: Path) -> dict[str, ZipEntry]:
    return {e.name: e for e in read_zip(path.read_bytes())}


def run_step(args: list[str]) -> tuple[int, str, str]:
    """Run one command; fail on a traceback or an exception that escaped the command line."""
    result = CliRunner().invoke(main, args)
    output = result.stdout + result.stderr
    assert "Traceback" not in output, output
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    return result.exit_code, result.stdout, result.stderr


def sheet_names(path: Path) -> list[str]:
    return [s.name for s in read_sheets(entries(path))[1]]


def tool_sheet_parts(path: Path) -> dict[str, str]:
    """Tool kind -> worksheet part, found through the sheet markers."""
    return {s.tool_kind: s.part for s in read_sheets(entries(path))[1] if s.tool_kind}


def number_formats(path: Path) -> tuple[dict[int, str], list[int]]:
    """Declared number formats (id -> code, from <numFmts> only) and each cell format's numFmtId."""
    parts = entries(path)
    styles_part = next(n for n in parts if n.endswith("styles.xml") and n.startswith("xl/"))
    root = ET.fromstring(parts[styles_part].data())
    declared: dict[int, str] = {}
    numfmts = root.find(f"{MAIN}numFmts")
    for fmt in numfmts if numfmts is not None else []:
        declared[int(fmt.get("numFmtId", "-1"))] = fmt.get("formatCode", "")
    cell_xfs = root.find(f"{MAIN}cellXfs")
    assert cell_xfs is not None
    return declared, [int(xf.get("numFmtId", "0")) for xf in cell_xfs]


def check_numbers_formatted(path: Path, *, estimates: bool) -> None:
    """Every number on the tool's sheets uses a built-in format or one declared in <numFmts>.

    With ``estimates``, the results must also show numbers in the three-decimal format.
    """
    declared, xf_formats = number_formats(path)
    parts = entries(path)
    used_codes: set[str] = set()
    for kind, part in tool_sheet_parts(path).items():
        xml = parts[part].data().decode("utf-8")
        for attrs in re.findall(r"<c ([^>]*)><v>", xml):
            if ' t="' in attrs:
                continue  # booleans, strings
            style = int(re.search(r'\bs="(\d+)"', attrs).group(1))
            fmt = xf_formats[style]
            assert fmt < FIRST_CUSTOM_FORMAT or fmt in declared, (kind, attrs, fmt, declared)
            if fmt in declared:
                used_codes.add(declared[fmt])
    if estimates:
        assert "0.000" in used_codes, used_codes  # the results' estimates and statistics


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_corpus_case(case: Case, corpus_folder: Path, tmp_path: Path) -> None:
    """Each command gives the case's outcome; refusals are one line and leave the file as it was; nothing stray is left."""
    master = corpus_file(case, corpus_folder)
    path = tmp_path / master.name
    shutil.copyfile(master, path)
    original_parts = entries(path) if case.processed else {}
    original_sheets = sheet_names(path) if case.processed else []
    for step in case.steps:
        before = sha(path)
        args = [str(path) if a == "{book}" else a for a in step.args]
        code, stdout, stderr = run_step(args)
        assert code == step.code, (args, code, stdout, stderr)
        if code != OK:
            lines = stderr.splitlines()
            assert len(lines) == 1 and lines[0].startswith("statmargin: "), stderr
            assert step.says in lines[0], (step.says, lines[0])
            assert sha(path) == before, "a refused file changed"
        elif step.says:
            assert step.says in stdout, stdout
        assert sorted(p.name for p in tmp_path.iterdir()) == [path.name], "a stray file was left"
    if case.processed:
        after = entries(path)
        for name, entry in original_parts.items():
            if name not in EDITED:
                assert name in after and after[name].raw == entry.raw, f"{name} was not carried over"
        for name in case.carried:
            assert name in original_parts and after[name].raw == original_parts[name].raw, name
        names = sheet_names(path)
        assert names[: len(original_sheets)] == original_sheets, "the user's sheets moved"
        check_numbers_formatted(path, estimates=case.group == "writers")


def test_openpyxl_lxml_case_declares_the_prefix_on_each_sheet(corpus_folder: Path) -> None:
    """The lxml case is what it claims: the relationships prefix is declared on <sheet>, not on the root."""
    case = next(c for c in CASES if c.name == "openpyxl-lxml")
    text = entries(corpus_file(case, corpus_folder))["xl/workbook.xml"].data().decode()
    root_tag = re.match(r"(?:<\?xml[^>]*>\s*)?(<workbook\b[^>]*>)", text).group(1)
    assert "xmlns:r=" not in root_tag
    assert re.search(r"<sheet xmlns:r=", text)


def test_dxf_case_has_its_formats_only_among_differential_styles(corpus_folder: Path) -> None:
    """The conditional-format case declares 0.000 and 0.0% only inside <dxfs>, as the bug needs."""
    case = next(c for c in CASES if c.name == "dxf-formats")
    styles = entries(corpus_file(case, corpus_folder))["xl/styles.xml"].data().decode()
    assert "<numFmts" not in styles
    assert 'formatCode="0.000"' in styles and 'formatCode="0.0%"' in styles


def test_libreoffice_shows_our_formats_in_a_workbook_with_dxf_formats(
    corpus_folder: Path, tmp_path: Path
) -> None:
    """In a workbook whose 0.000 and 0.0% exist only as differential styles, LibreOffice shows 1.235 and 37.5%."""
    soffice = require_soffice()
    case = next(c for c in CASES if c.name == "dxf-formats")
    path = tmp_path / "dxf.xlsx"
    shutil.copyfile(corpus_file(case, corpus_folder), path)
    FileSink(path).write_sheets(sample_tool_models())
    assert sheet_names(path) == [SHEET, "results", "charts"]
    csv = sheet_to_csv(path, 2, tmp_path / "shown", as_shown=True, soffice=soffice)
    rows = [line.split(",") for line in csv.read_text(encoding="utf-8").splitlines()]
    # Values and formats of workbook_fixtures.sample_tool_models: 1.23456789 as "number", 0.375 as "percent".
    assert rows[3][2] == "1.235"
    assert rows[4][2] == "37.5%"
    # The user's own numbers still show as before (General: every digit).
    data = sheet_to_csv(path, 1, tmp_path / "data", as_shown=True, soffice=soffice)
    first_wait = data.read_text(encoding="utf-8").splitlines()[1].split(",")[1]
    assert float(first_wait) == visits()[0][1]


@pytest.mark.parametrize("name", ["empty", "strict", "bomb-ratio"])
def test_console_script_gives_the_same_line(name: str, corpus_folder: Path, tmp_path: Path) -> None:
    """The installed command (a separate process) prints the same single line and exit code as the in-process runs."""
    case = next(c for c in CASES if c.name == name)
    path = tmp_path / f"{name}.xlsx"
    shutil.copyfile(corpus_file(case, corpus_folder), path)
    step = case.steps[-1]
    args = [str(path) if a == "{book}" else a for a in step.args]
    done = subprocess.run([sys.executable, "-m", "statmargin", *args], capture_output=True, text=True,
                          timeout=120, check=False)
    assert done.returncode == step.code
    lines = done.stderr.splitlines()
    assert len(lines) == 1 and step.says in lines[0], done.stderr
