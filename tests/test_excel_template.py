"""The Excel template: data and roles sheets, two buttons wired to the macros of the shipped VBA module.

The buttons are read from the workbook's VML drawing (``x:FmlaMacro``, the macro a
form button runs: ECMA-376 Part 4, 19.1 legacy VML), the macros from the .bas
text; the template is then run through the bridge (stand-in) and the command
line, which must agree.
"""

from __future__ import annotations

import importlib.util
import re
import shutil
import zipfile
from pathlib import Path

import pytest
from click.testing import CliRunner

import statmargin.excel
import xlwings_standin as xs
from statmargin.cli import main
from statmargin.io.file.source import FileSource

TEMPLATES = Path(__file__).resolve().parent.parent / "templates"
TEMPLATE = TEMPLATES / "statmargin_excel_template.xlsx"
MODULE = TEMPLATES / "statmargin_buttons.bas"


def _buttons(path: Path) -> dict[str, str]:
    """Caption -> macro of every form button in a workbook."""
    found = {}
    with zipfile.ZipFile(path) as archive:
        for name in archive.namelist():
            if name.endswith(".vml"):
                xml = archive.read(name).decode("utf-8")
                for shape in re.findall(r"<v:shape\b.*?</v:shape>", xml, re.S):
                    macro = re.search(r"<x:FmlaMacro>\[0\]!(\w+)</x:FmlaMacro>", shape)
                    caption = re.search(r"<font[^>]*>([^<]+)</font>", shape)
                    if macro and caption:
                        found[caption.group(1)] = macro.group(1)
    return found


def _macros(path: Path) -> dict[str, str]:
    """Public Sub name -> the RunPython command it sends."""
    text = path.read_text(encoding="utf-8")
    return dict(re.findall(r'Public Sub (\w+)\(\)\s*(?:\'[^\n]*\n\s*)*RunPython "([^"]+)"', text))


def test_buttons_run_the_macros_of_the_module() -> None:
    """The Plan and Run buttons call StatmarginPlan and StatmarginRun, which the .bas module defines."""
    buttons = _buttons(TEMPLATE)
    assert buttons == {"Plan": "StatmarginPlan", "Run": "StatmarginRun"}
    macros = _macros(MODULE)
    assert set(buttons.values()) == set(macros)
    assert macros["StatmarginPlan"] == "import statmargin.excel as sm; sm.main('plan')"
    assert macros["StatmarginRun"] == "import statmargin.excel as sm; sm.main('run')"


def test_module_commands_name_real_entry_points() -> None:
    """The commands the macros send import and call functions that exist with those actions."""
    for command in _macros(MODULE).values():
        action = re.fullmatch(r"import statmargin\.excel as sm; sm\.main\('(\w+)'\)", command).group(1)
        assert callable(statmargin.excel.main) and action in ("plan", "run")
    assert MODULE.read_text(encoding="utf-8").startswith('Attribute VB_Name = "statmargin_buttons"')


def test_template_has_data_start_and_roles_sheets() -> None:
    """Data first, the instructions second, then the roles sheet marked as statmargin's."""
    source = FileSource(TEMPLATE)
    assert source.sheet_names() == ["Data", "Start here", "statmargin roles"]
    assert source.tool_sheets() == {"statmargin roles": "roles"}
    rows = list(source.iter_rows("Data"))
    assert rows[0] == ["Visit ID", "Site", "Wait minutes", "Seen same day"]
    assert len(rows) == 67


def test_template_runs_the_same_through_the_bridge_and_the_command_line(tmp_path) -> None:
    """Pressing Run on the template (bridge) and statmargin run on a copy give the same results numbers."""
    book = xs.load(TEMPLATE)
    assert statmargin.excel.run(book) == 0
    assert xs.recorder(book).violations == []
    copy = tmp_path / TEMPLATE.name
    shutil.copyfile(TEMPLATE, copy)
    assert CliRunner().invoke(main, ["run", str(copy), "--quiet"]).exit_code == 0
    results = next(n for n, k in FileSource(copy).tool_sheets().items() if k == "results")
    file_numbers = [v for row in FileSource(copy).iter_rows(results) for v in row if isinstance(v, float)]
    bridge = xs.rows(xs.sheet(book, results))
    bridge_numbers = [v for row in bridge for v in row if isinstance(v, float)]
    # The run log's time differs between the runs; the results sheet holds no time.
    assert bridge_numbers == pytest.approx(file_numbers, rel=0, abs=0)


def test_rebuilding_gives_the_same_workbook(tmp_path) -> None:
    """The builder script writes the same sheets, values and buttons again (fixed seed)."""
    spec = importlib.util.spec_from_file_location("make_excel_template", TEMPLATES / "make_excel_template.py")
    builder = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(builder)
    rebuilt = tmp_path / TEMPLATE.name
    builder.main(["make_excel_template.py", str(rebuilt)])
    old, new = FileSource(TEMPLATE), FileSource(rebuilt)
    assert new.sheet_names() == old.sheet_names()
    for sheet in old.sheet_names():
        assert list(new.iter_rows(sheet)) == list(old.iter_rows(sheet)), sheet
    assert _buttons(rebuilt) == _buttons(TEMPLATE)
