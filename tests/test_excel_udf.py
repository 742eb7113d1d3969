"""The worksheet functions give the same numbers as ``statmargin test`` for the same cells.

References: the command line's own ``--json`` output on the same workbook (the
one-question command, itself checked against R and scipy in test_cli_test.py);
scipy.stats.ttest_ind (Welch) and scipy.stats.shapiro as outside references on
R's ``sleep`` data (datasets::sleep, Cushny & Peebles 1905, as printed in R).
The cells are passed as xlwings passes a range (a flat list, error cells as
their text), taken from the invented newcomer workbook loaded into the stand-in.
"""

from __future__ import annotations

import importlib
import json
import sys
import types

import pytest
from click.testing import CliRunner
from scipy import stats

import statmargin.excel
import xlwings_standin as xs
from statmargin.cli import main
from workbook_edit import NEWCOMER_SHEET, make_newcomer_workbook

DRUG1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
DRUG2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]


@pytest.fixture(scope="module")
def newcomer(tmp_path_factory) -> dict:
    """The newcomer workbook, its columns as Excel would pass them, and the command line's answers."""
    path = make_newcomer_workbook(tmp_path_factory.mktemp("udf") / "visits.xlsx")
    rows = xs.rows(xs.sheet(xs.load(path), NEWCOMER_SHEET))
    as_passed = [[v.text if isinstance(v, xs.ExcelError) else v for v in row] for row in rows]
    column = {name: [row[i] if i < len(row) else None for row in as_passed] for i, name in enumerate(as_passed[0])}
    runner = CliRunner()
    compare = runner.invoke(main, ["test", str(path), "--outcome", "Wait minutes", "--by", "Site", "--json", "-"])
    one = runner.invoke(main, ["test", str(path), "--outcome", "Wait minutes", "--against", "30", "--json", "-"])
    assert compare.exit_code == 0 and one.exit_code == 0
    return {"column": column, "compare": json.loads(compare.stdout)["analyses"][0],
            "one": json.loads(one.stdout)["analyses"][0]}


def _as_dict(block: list[list]) -> dict:
    return {label: value for label, value in block}


def test_compare_equals_the_command_line(newcomer) -> None:
    """SM_COMPARE on the Wait minutes and Site cells gives the test, statistic, df, p, estimate, CI and n of statmargin test."""
    col = newcomer["column"]
    got = _as_dict(statmargin.excel.SM_COMPARE(col["Wait minutes"], col["Site"]))
    want = newcomer["compare"]
    from statmargin.words.technical import TEST_NAMES

    assert got["Test"] == TEST_NAMES[want["test"]]
    assert got["Statistic"] == want["statistic_name"]
    assert got["Statistic value"] == want["statistic"]
    assert got["p"] == want["p_value"]
    assert got["Estimate"] == want["estimate"]["name"]
    assert got["Estimate value"] == want["estimate"]["value"]
    assert got["95% CI low"] == want["estimate"]["ci_low"]
    assert got["95% CI high"] == want["estimate"]["ci_high"]
    assert got["n used"] == want["n"] == 31
    df = want["df"]
    assert got["df"] == (", ".join(f"{float(v):.6g}" for v in df) if isinstance(df, list) else df)


def test_shape_equals_the_command_lines_shape_check(newcomer) -> None:
    """SM_SHAPE on the Wait minutes cells gives the shape check statmargin test reports for that column."""
    got = _as_dict(statmargin.excel.SM_SHAPE(newcomer["column"]["Wait minutes"]))
    [want] = newcomer["one"]["shape"]["assessment"]["groups"]
    assert got["n"] == want["n"] == 31
    assert want["check"] == "shapiro_wilk" and got["Check"] == "Shapiro-Wilk"  # the JSON keeps the identifier, the cell its name
    assert got["Check statistic"] == want["check_statistic"]
    assert got["Check p"] == want["check_p"]
    assert got["Skewness"] == want["skewness"]
    assert got["Excess kurtosis"] == want["excess_kurtosis"]
    assert got["Verdict"] == want["verdict"]


def test_welch_on_the_sleep_data_matches_scipy() -> None:
    """Two groups of R's sleep data without headers: Welch's t-test, p equal to scipy.stats.ttest_ind(equal_var=False)."""
    block = _as_dict(statmargin.excel.SM_COMPARE(DRUG1 + DRUG2, ["1"] * 10 + ["2"] * 10, False))
    reference = stats.ttest_ind(DRUG1, DRUG2, equal_var=False)
    assert block["Test"] == "Welch's t-test"
    assert block["p"] == pytest.approx(reference.pvalue, rel=1e-12)
    assert block["Statistic value"] == pytest.approx(reference.statistic, rel=1e-12)
    assert block["p"] == pytest.approx(0.0794, abs=5e-5)  # R: t.test(extra ~ group, sleep), p-value = 0.07939
    assert block["n used"] == 20


def test_shape_without_header_matches_scipy_shapiro() -> None:
    """SM_SHAPE on bare numbers uses Shapiro-Wilk for n = 10, with W and p equal to scipy.stats.shapiro."""
    block = _as_dict(statmargin.excel.SM_SHAPE([[v] for v in DRUG2], False))
    reference = stats.shapiro(DRUG2)
    assert block["n"] == 10 and block["Check"] == "Shapiro-Wilk"
    assert block["Check statistic"] == pytest.approx(reference.statistic, rel=1e-12)
    assert block["Check p"] == pytest.approx(reference.pvalue, rel=1e-12)


@pytest.mark.parametrize(
    ("args", "start"),
    [
        (([1.0, 2.0, 3.0], ["a", "b"]), "The outcome range has 3 cells and the group range 2"),
        (([1.0, 2.0, 3.0], ["a", "b", "c"]), "The first cell of the outcome range holds a number"),
        ((["w", 1.0, 2.0], ["g", "a", "b"], True, 1.5), "The confidence 1.5 is not a level"),
    ],
)
def test_bad_cells_give_one_line(args, start) -> None:
    """A problem with the cells comes back as one line of text in the cell, no traceback."""
    block = statmargin.excel.SM_COMPARE(*args)
    assert len(block) == 1 and len(block[0]) == 1
    assert block[0][0].startswith(start) and "\n" not in block[0][0]


def test_one_group_is_reported_as_not_run() -> None:
    """With a single group there is nothing to compare: the result says so instead of inventing numbers."""
    block = statmargin.excel.SM_COMPARE(["Wait", 1.0, 2.0, 3.0], ["Site", "A", "A", "A"])
    assert block[0][0] == "Test" and str(block[0][1]).startswith("not run: ")


def test_functions_register_with_xlwings_when_it_is_loaded(monkeypatch) -> None:
    """Loaded by xlwings (already imported), the module marks both functions with flat-list, errors-as-text ranges."""
    recorded: dict[str, dict] = {}

    def arg(name, **options):
        def mark(f):
            recorded.setdefault(f.__name__, {})[name] = options
            return f
        return mark

    def func(**options):
        def mark(f):
            recorded.setdefault(f.__name__, {})["func"] = options
            return f
        return mark

    fake = types.SimpleNamespace(arg=arg, func=func)
    monkeypatch.setitem(sys.modules, "xlwings", fake)
    try:
        importlib.reload(statmargin.excel)
    finally:
        monkeypatch.delitem(sys.modules, "xlwings")
        importlib.reload(statmargin.excel)
    flat = {"ndim": 1, "err_to_str": True}
    assert recorded["SM_COMPARE"] == {"outcome": flat, "groups": flat, "func": {"category": "statmargin"}}
    assert recorded["SM_SHAPE"] == {"values": flat, "func": {"category": "statmargin"}}
