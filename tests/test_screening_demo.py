"""The demo workbook of monthly site summaries, end to end through ``statmargin test`` and ``statmargin run``.

The data are invented (demo_workbooks/make_screening_demo.py). The checks: the
workbook is reproducible and shipped unchanged; positivity against its 4% target
and the sites compared on positivity equal the record-level designs run on the
same people listed one per row (whose methods are checked against R in
tests/test_methods_categorical.py); the sites compared on positives per 1,000
person-years equal SciPy's chi-square against person-time shares and
statsmodels' score tests; and the readings say so in plain words.
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner
from python_calamine import CalamineWorkbook
from scipy import stats
from statsmodels.stats import rates as sm_rates
from statsmodels.stats.multitest import multipletests

from event_records import records_of
from script_loader import REPO_ROOT, load_script
from statmargin import analyze
from statmargin.cli import main
from statmargin.jobs.demo import DEMO_WORKBOOKS, packaged_file
from statmargin.jobs.workbook import run_workbook

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")
demo = load_script("demo_workbooks/make_screening_demo.py")
TOL = 1e-10


def _values(path: Path) -> dict[str, list[list[object]]]:
    book = CalamineWorkbook.from_path(str(path))
    return {name: book.get_sheet_by_name(name).to_python() for name in book.sheet_names}


@pytest.fixture(scope="module")
def rows() -> pd.DataFrame:
    """The demo's rows as the generator draws them, with the untidy cells as blanks (they are left out)."""
    frame = pd.DataFrame(demo.monthly_rows(np.random.default_rng(demo.SEED)))
    frame["Positive"] = pd.to_numeric(frame["Positive"], errors="coerce")
    return frame.dropna(subset=["Screened", "Positive"]).reset_index(drop=True)


@pytest.fixture
def book(tmp_path: Path) -> Path:
    """A copy of the shipped demo workbook."""
    path = tmp_path / demo.FILE
    shutil.copyfile(packaged_file(demo.FILE), path)
    return path


def close(a: float | None, b: float | None) -> bool:
    return a is not None and b is not None and math.isclose(a, b, rel_tol=TOL, abs_tol=1e-12)


def cli_json(*args: object) -> list[dict]:
    out = CliRunner().invoke(main, ["test", *(str(a) for a in args), "--json", "-"])
    assert out.exit_code == 0, out.output
    return json.loads(out.stdout)["analyses"]


# ---------------------------------------------------------------- the workbook itself


def test_built_twice_the_same(tmp_path):
    """Building from the fixed seed twice gives byte-identical workbooks."""
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    first, second = demo.build(tmp_path / "a" / demo.FILE), demo.build(tmp_path / "b" / demo.FILE)
    assert first.read_bytes() == second.read_bytes()


def test_repository_and_package_copies_are_current(tmp_path):
    """The committed workbook's data sheets are what the script writes now, and the package ships the same file."""
    fresh = _values(demo.build(tmp_path / "fresh.xlsx"))
    repo = _values(REPO_ROOT / "demo_workbooks" / demo.FILE)
    for sheet in (demo.SHEET, "About"):
        assert repo[sheet] == fresh[sheet], sheet
    assert _values(packaged_file(demo.FILE)) == repo
    assert demo.FILE in DEMO_WORKBOOKS


def test_says_the_data_are_invented():
    """The About sheet and the README say the data are invented."""
    about = _values(packaged_file(demo.FILE))["About"]
    assert any("invented" in str(cell) for row in about for cell in row)
    assert "screening_demo.xlsx" in (REPO_ROOT / "demo_workbooks" / "README.md").read_text()


# ---------------------------------------------------------------- statmargin test


def test_positivity_against_target_equals_records(book, rows):
    """statmargin test: positivity 4.7% against the 4% target, exactly the records' binomial test."""
    [record] = cli_json(book, "--events", "Positive", "--out-of", "Positive=Screened", "--against", "4%")
    [people] = analyze(records_of(rows), outcome="Result", against="Positive=0.04")
    assert record["test"] == people.test == "binomial_exact"
    assert close(record["p_value"], people.p_value) and record["p_value"] < 0.01
    for key in ("value", "ci_low", "ci_high"):
        assert close(record["estimate"][key], getattr(people.estimate, key))
    assert record["groups"][0]["events"] == 378 and record["groups"][0]["total"] == 8100
    assert record["reading"].startswith("Positive out of Screened: 4.7% overall (378 of 8,100; 95% CI 4.2 to 5.1%), "
                                        "against a target of 4%.")
    assert "0.7 percentage points above the target: strong evidence of a difference (p = 0.003)" in record["reading"]


def test_sites_compared_on_positivity_equal_records(book, rows):
    """statmargin test: sites compared on positivity; chi-square and intervals equal the records'."""
    [record] = cli_json(book, "--events", "Positive", "--out-of", "Positive=Screened", "--by", "Site")
    [people] = analyze(records_of(rows), outcome="Result", by="Site")
    assert record["test"] == people.test == "chi_square_independence"
    assert close(record["statistic"], people.statistic) and close(record["p_value"], people.p_value)
    assert close(record["effect"]["ci_low"], people.effect.ci_low)
    sites = {g["label"]: g for g in record["groups"]}
    assert sorted(sites) == sorted(demo.SITES)
    for site, group in sites.items():
        mine = rows[rows.Site == site]
        assert group["events"] == mine.Positive.sum() and group["total"] == mine.Screened.sum()
        low, high = stats.binomtest(int(group["events"]), int(group["total"])).proportion_ci(method="wilson")
        assert close(group["ci_low"], low) and close(group["ci_high"], high)  # SciPy's Wilson interval
    assert record["reading"].startswith("Positive out of Screened: 3.9% in Ashgrove (89 of 2,278), ")
    assert "Strong evidence that Positive out of Screened differs by Site (p = 0.003)" in record["reading"]


def test_sites_compared_on_rate_per_1000(book, rows):
    """statmargin test: positives per 1,000 person-years by site: SciPy's chi-square and statsmodels' pairs."""
    [record] = cli_json(book, "--events", "Positive", "--per", "Positive=Person-years", "--by", "Site",
                        "--per-unit", "per 1,000 person-years")
    assert record["test"] == "rate_homogeneity" and record["extra"]["dispersion"]["overdispersed"] is False
    totals = rows.groupby("Site").agg(events=("Positive", "sum"), years=("Person-years", "sum"))
    expected = totals.events.sum() * totals.years / totals.years.sum()
    chi = stats.chisquare(totals.events.to_numpy(float), expected.to_numpy())
    assert close(record["statistic"], chi.statistic) and close(record["p_value"], chi.pvalue)
    for group in record["groups"]:
        site = totals.loc[group["label"]]
        assert close(group["rate"], site.events / site.years * 1000)
        assert group["ci_low"] < group["rate"] < group["ci_high"]
    pairs = record["followups"]
    plain = [sm_rates.test_poisson_2indep(*totals.loc[a], *totals.loc[b], method="score").pvalue
             for a, b in (p["levels"] for p in pairs)]
    assert all(close(p["p_value"], q) for p, q in zip(pairs, plain, strict=True))
    assert all(close(p["p_adjusted"], q) for p, q in zip(pairs, multipletests(plain, method="holm")[1], strict=True))
    assert record["reading"].startswith("Positive per 1,000 person-years: 3.71 in Ashgrove, 5.08 in Bellmoor, ")
    assert "the widest gap is Dunlow over Ashgrove, a rate 1.67 times as high (95% CI 1.10 to 2.55, allowing for the 6 pairs" in record["reading"]
    # The widest pair's intervals hold for all 6 pairs together: statsmodels' score intervals at 0.05 / 6 (Bonferroni).
    high, low = totals.loc["Dunlow"], totals.loc["Ashgrove"]
    ratio = sm_rates.confint_poisson_2indep(*high, *low, method="score", compare="ratio", alpha=0.05 / 6)
    diff = sm_rates.confint_poisson_2indep(*high, *low, method="score", compare="diff", alpha=0.05 / 6)
    ours = (record["effect"]["ci_low"], record["effect"]["ci_high"], record["estimate"]["ci_low"] / 1000,
            record["estimate"]["ci_high"] / 1000)
    assert all(math.isclose(a, b, rel_tol=1e-5) for a, b in zip(ours, (*ratio, *diff), strict=True))
    # statsmodels finds its difference limits to a loose tolerance; at ours its own score statistic is the quantile.
    z = stats.norm.ppf(1 - 0.05 / 12)
    for value, compare, sign in zip(ours, ("ratio", "ratio", "diff", "diff"), (1, -1, 1, -1), strict=True):
        statistic = sm_rates.test_poisson_2indep(*high, *low, value=value, method="score", compare=compare).statistic
        assert math.isclose(statistic, sign * z, rel_tol=1e-7)


# ---------------------------------------------------------------- statmargin run


def test_run_answers_the_three_questions(book, tmp_path):
    """statmargin run on the demo: three answers with readings, equal to the one-off questions, file left as it was."""
    before = book.read_bytes()
    out = tmp_path / "answered.xlsx"
    result = CliRunner().invoke(main, ["run", str(book), "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert book.read_bytes() == before
    summary = run_workbook(book, out=tmp_path / "again.xlsx")
    designs = [r.design for r in summary.results]
    assert designs == ["one_sample_pooled_share", "group_pooled_shares", "group_rates"]
    assert all(r.skipped is None and r.p_adjusted < 0.05 for r in summary.results)
    assert all(not r.extra["dispersion"]["overdispersed"] for r in summary.results)
    [alone] = cli_json(book, "--events", "Positive", "--out-of", "Positive=Screened", "--against", "4%")
    assert close(summary.results[0].p_value, alone["p_value"])
    cells = [str(c) for row in _values(out)["statmargin results"] for c in row]
    assert any(c.startswith("Positive out of Screened: 4.7% overall") for c in cells)
    assert any(c.startswith("Positive per 1,000 person-years: 3.71 in Ashgrove") for c in cells)
    assert "against 4%" in cells
    shape = [[str(c) for c in row] for row in _values(out)["statmargin shape checks"]]
    assert ["Group", "Positive", "Person-years", "Rate per 1,000 person-years", "CI low", "CI high", "Rows"] in [
        row[:7] for row in shape
    ]
