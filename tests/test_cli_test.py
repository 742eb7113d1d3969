"""The ``statmargin test`` command (statmargin.cli) through click's CliRunner.

Workbooks are written with xlsxwriter from R datasets (tests/reference/data) or
invented data; JSON output is compared with ``analyze()`` on the same data, whose
numbers tests/test_engine.py checks against R 4.2.2.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import click
import pandas as pd
import pytest
from click.testing import CliRunner

from statmargin import analyze
from statmargin.cli import main

REF = Path(__file__).parent / "reference"
pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")


def frame_of(case_file: str) -> pd.DataFrame:
    """An R dataset as written in tests/reference/data."""
    return pd.read_csv(REF / "data" / case_file)


def run(*args: str):
    """Invoke the command line and return click's result."""
    return CliRunner().invoke(main, [str(a) for a in args])


def records(results) -> list[dict]:
    return json.loads(json.dumps([r.to_record() for r in results]))


# One row per design in the decision table: (data file, CLI options, analyze() keywords, expected test).
DESIGN_ROWS = [
    ("mtcars_mpg_vs_mu20.csv", ["--outcome", "mpg", "--against", "20"], {"outcome": "mpg", "against": "20"}, "one_sample_t"),
    ("mtcars_cyl_vs_proportions.csv", ["--outcome", "cyl", "--against", "4=0.25,6=0.25,8=0.5"],
     {"outcome": "cyl", "against": "4=0.25,6=0.25,8=0.5"}, "chi_square_goodness_of_fit"),
    ("mtcars_am_by_vs.csv", ["--outcome", "am", "--by", "vs"], {"outcome": "am", "by": "vs"}, "chi_square_independence"),
    ("sleep_extra_by_group.csv", ["--outcome", "extra", "--by", "group", "--treat", "group=categorical"],
     {"outcome": "extra", "by": "group", "treat": ["group=categorical"]}, "welch_t"),
    ("plantgrowth_weight_by_group.csv", ["--outcome", "weight", "--by", "group"], {"outcome": "weight", "by": "group"}, "alexander_govern"),
    ("insectsprays_count_by_spray.csv", ["--outcome", "count", "--by", "spray"], {"outcome": "count", "by": "spray"}, "rank_anova_type"),
    ("mtcars_mpg_vs_wt.csv", ["--outcome", "mpg", "--by", "wt"], {"outcome": "mpg", "by": "wt"}, "spearman_rho"),
    ("women_height_vs_weight.csv", ["--outcome", "height", "--by", "weight"], {"outcome": "height", "by": "weight"},
     "pearson_r"),
    ("sleep_extra_paired.csv", ["--outcome", "extra", "--by", "group", "--paired-by", "ID"],
     {"outcome": "extra", "by": "group", "paired_by": "ID"}, "wilcoxon_signed_rank"),
]


@pytest.mark.parametrize("case_file,options,kwargs,test", DESIGN_ROWS, ids=[r[3] for r in DESIGN_ROWS])
def test_each_design_json_equals_analyze(tmp_workbook, case_file, options, kwargs, test):
    """Each design runs through the CLI; its JSON equals analyze() on the same data."""
    frame = frame_of(case_file)
    book = tmp_workbook({c: frame[c].tolist() for c in frame.columns})
    result = run("test", book, *options, "--json", "-")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["tool"] == "statmargin" and doc["version"]
    assert doc["analyses"][0]["test"] == test
    assert doc["analyses"] == records(analyze(frame, **kwargs))


def test_paired_categorical_and_wide_form(tmp_workbook):
    """Wide-form yes/no columns run McNemar's test through the CLI (invented data)."""
    before = ["yes"] * 10 + ["no"] * 10
    after = ["yes"] * 9 + ["no"] + ["yes"] * 6 + ["no"] * 4
    book = tmp_workbook({"before": before, "after": after})
    result = run("test", book, "--outcome", "before", "--paired-with", "after", "--json", "-")
    assert result.exit_code == 0, result.output
    rec = json.loads(result.stdout)["analyses"][0]
    assert rec["test"] == "mcnemar" and rec["design"] == "paired_categorical"
    # Discordant pairs 6 and 1: exact McNemar p = 2 * P(Binom(7, 0.5) <= 1) = 0.125 (hand computation).
    assert rec["p_value"] == pytest.approx(0.125)


def test_summary_lists_test_p_and_reasons(tmp_workbook):
    """The human summary shows the test, statistic, df, p, estimate, effect and reasons."""
    frame = frame_of("plantgrowth_weight_by_group.csv")
    book = tmp_workbook({c: frame[c].tolist() for c in frame.columns})
    result = run("test", book, "--outcome", "weight", "--by", "group")
    assert result.exit_code == 0
    out = result.stdout
    # SciPy 1.x: stats.alexandergovern on the three groups of PlantGrowth: A = 8.328 (k - 1 = 2 df); groups of 10
    # take the seeded permutation p, 0.0167 (chi-square p 0.0155, within Monte Carlo error).
    assert "weight by group  [alexander_govern]" in out
    assert "A = 8.33, df = 2, p = 0.017" in out
    assert "why: weight within the groups of group shows no clear departure from a normal shape" in out
    assert "caution:" in out


def test_json_to_file_and_workbook_unchanged(tmp_workbook, tmp_path):
    """--json PATH writes the document; the workbook stays byte-identical."""
    frame = frame_of("mtcars_mpg_vs_wt.csv")
    book = tmp_workbook({c: frame[c].tolist() for c in frame.columns})
    before = hashlib.sha256(book.read_bytes()).hexdigest()
    out = tmp_path / "out.json"
    result = run("test", book, "--outcome", "mpg", "--by", "wt", "--json", out)
    assert result.exit_code == 0
    assert json.loads(out.read_text())["analyses"][0]["test"] == "spearman_rho"
    assert hashlib.sha256(book.read_bytes()).hexdigest() == before


def test_sheet_option(tmp_workbook):
    """--sheet picks a sheet other than the first."""
    frame = frame_of("mtcars_mpg_vs_wt.csv")
    book = tmp_workbook(sheets={"notes": {"text": ["invented notes"]},
                                "cars": {c: frame[c].tolist() for c in frame.columns}})
    result = run("test", book, "--sheet", "cars", "--outcome", "mpg", "--by", "wt", "--json", "-")
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["analyses"][0]["test"] == "spearman_rho"


class TestErrors:
    @pytest.fixture
    def book(self, tmp_workbook):
        frame = frame_of("plantgrowth_weight_by_group.csv")
        return tmp_workbook({c: frame[c].tolist() for c in frame.columns}, name="plants.xlsx")

    def test_unknown_column_suggests(self, book):
        """An unknown column exits 2 with the closest header on one stderr line."""
        result = run("test", book, "--outcome", "wieght", "--by", "group")
        assert result.exit_code == 2
        assert result.stderr == (
            "statmargin: Column 'wieght' is not a header on sheet 'data'. Did you mean 'weight'?"
            " Headers are read from row 1.\n"
        )

    def test_missing_file(self, tmp_path):
        """A missing workbook exits 2 with one line."""
        missing = tmp_path / "nope.xlsx"
        result = run("test", missing, "--outcome", "y", "--by", "g")
        assert result.exit_code == 2
        assert result.stderr == "statmargin: File 'nope.xlsx' was not found. Check the path.\n"

    def test_not_a_workbook(self, tmp_path):
        """A file that is not a workbook exits 2 with one 'statmargin:' line and no traceback."""
        bad = tmp_path / "bad.xlsx"
        bad.write_text("this is not a workbook")
        result = run("test", bad, "--outcome", "y", "--by", "g")
        assert result.exit_code == 2
        assert result.stderr.startswith("statmargin: ") and result.stderr.count("\n") == 1
        assert "Traceback" not in result.output

    def test_missing_sheet(self, book):
        """A sheet that is not there exits 2 and lists the sheets."""
        result = run("test", book, "--sheet", "other", "--outcome", "weight", "--by", "group")
        assert result.exit_code == 2
        assert result.stderr.startswith("statmargin: Sheet 'other' is not in")

    def test_against_does_not_fit(self, book):
        """Shares given for a numeric outcome exit 2 with what to give instead."""
        result = run("test", book, "--outcome", "weight", "--against", "ctrl=0.5")
        assert result.exit_code == 2
        assert result.stderr == (
            "statmargin: Comparison value for weight: 'ctrl=0.5' gives shares, but weight holds numbers;"
            " give one number such as 20.\n"
        )

    def test_nothing_to_compare(self, book):
        """An outcome alone exits 2 and names the options to use."""
        result = run("test", book, "--outcome", "weight")
        assert result.exit_code == 2
        assert result.stderr == (
            "statmargin: Say what the outcome is compared with: --by COL, --against VALUE or --paired-with COL.\n"
        )

    def test_against_with_by(self, book):
        """--against cannot be combined with --by."""
        result = run("test", book, "--outcome", "weight", "--by", "group", "--against", "5")
        assert result.exit_code == 2
        assert "use it without --by" in result.stderr

    def test_bad_treat(self, book):
        """An unknown type in --treat exits 2."""
        result = run("test", book, "--outcome", "weight", "--by", "group", "--treat", "group=nominal")
        assert result.exit_code == 2
        assert result.stderr == (
            "statmargin: --treat: type 'nominal' for 'group' is not known; use categorical, continuous or ordinal.\n"
        )

    def test_internal_error_is_one_line(self, book, monkeypatch):
        """An unexpected exception prints one bug line and exits 70; --debug shows the traceback."""
        import statmargin.designs.engine as engine

        def broken(*args, **kwargs):
            raise ZeroDivisionError("boom")

        monkeypatch.setattr(engine, "run_plan", broken)
        result = run("test", book, "--outcome", "weight", "--by", "group")
        assert result.exit_code == 70
        assert result.stderr == (
            "statmargin hit an internal error (ZeroDivisionError: boom); rerun with --debug for the"
            " details and report it\n"
        )
        debug = run("--debug", "test", book, "--outcome", "weight", "--by", "group")
        assert isinstance(debug.exception, ZeroDivisionError)


def test_every_command_has_help_and_example():
    """Every command has a one-line help and an Example: line."""
    assert main.help and "Example:" in main.help
    for name, command in main.commands.items():
        assert command.get_short_help_str(), name
        assert "Example:" in (command.help or ""), name
        result = run(name, "--help")
        assert result.exit_code == 0 and "Example:" in result.stdout


def test_version_option():
    """--version prints the package version."""
    from statmargin import __version__

    result = run("--version")
    assert result.exit_code == 0 and __version__ in result.stdout
    assert isinstance(main, click.Group)


def test_test_reports_progress_and_can_be_quiet(tmp_workbook):
    """test_workbook says when rows are read and analyses run; --quiet prints no progress line."""
    from statmargin.jobs.question import test_workbook
    from statmargin.words import console
    from statmargin.words import progress as progress_words

    frame = frame_of("plantgrowth_weight_by_group.csv").assign(note="free text", other=1.0)
    book = tmp_workbook({c: frame[c].tolist() for c in frame.columns})
    said: list[tuple] = []
    summary = test_workbook(book, outcome="weight", by="group",
                            progress=lambda message, done=None, total=None: said.append((message, done, total)))
    assert [r.test for r in summary.results] == ["alexander_govern"]  # three groups, normal-shaped: the rule table
    assert progress_words.READING_ROWS in {m for m, _, _ in said}
    assert (console.RUNNING, 1, 1) in said
    quiet = run("test", book, "--outcome", "weight", "--by", "group", "--quiet")
    assert quiet.exit_code == 0 and quiet.stderr == ""


def test_an_unknown_column_lists_the_headers_when_none_is_close(tmp_workbook):
    """With no header near the name typed, the one line lists the sheet's headers instead."""
    frame = frame_of("plantgrowth_weight_by_group.csv")
    book = tmp_workbook({c: frame[c].tolist() for c in frame.columns})
    result = run("test", book, "--outcome", "weight", "--by", "District")
    assert result.exit_code != 0
    assert "Its headers are 'weight', 'group'." in result.stderr and len(result.stderr.splitlines()) == 1
