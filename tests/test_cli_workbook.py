"""The bundled outreach demo run end to end from the command line, read back by independent readers.

The demo data are invented (``src/statmargin/data/outreach_demo.xlsx``: five
sites, systolic pressure and smoking before and after). References: Holm's
step-down procedure recomputed here from the run's raw p-values (Holm 1979,
Scand J Statist 6:65-70); the paired t confidence interval recomputed from the
data sheet with the textbook formula mean(d) +/- t(0.975, n-1) * sd(d)/sqrt(n)
(e.g. Altman, Practical Statistics for Medical Research, 1991, section 9.6,
recalled from memory); python-calamine, LibreOffice and pdftotext as readers of
the written file.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from click.testing import CliRunner
from scipy import stats

from libreoffice import convert, find_soffice, require_soffice
from statmargin.cli import main
from statmargin.io.file.sink import FileSink
from statmargin.io.file.source import FileSource
from statmargin.io.file.zipio import read_zip
from statmargin.jobs.demo import DEMO_WORKBOOKS, TEMPLATE, packaged_file
from statmargin.jobs.workbook import run_workbook
from statmargin.sheets import share
from workbook_edit import results_records, sheet_rows, table_records, tool_sheet_name

DEMO = "outreach_demo.xlsx"
DATA_SHEET = "Participants"
ALPHA = 0.05
MIN_COUNT = 11


def invoke(*args: str):
    """Run the command line in-process (stdout and stderr kept apart)."""
    return CliRunner().invoke(main, list(args), catch_exceptions=False)


def holm(p: list[float]) -> list[float]:
    """Holm's step-down adjusted p-values, written out from the textbook definition (Holm 1979).

    Sort ascending; the i-th smallest (1-based) gets max over j <= i of
    min(1, (m - j + 1) * p_(j)).
    """
    m = len(p)
    order = sorted(range(m), key=lambda i: p[i])
    out = [0.0] * m
    running = 0.0
    for rank, i in enumerate(order, start=1):
        running = max(running, min(1.0, (m - rank + 1) * p[i]))
        out[i] = running
    return out


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory) -> dict[str, Any]:
    """The outreach demo copied to a temp folder and run once with --json."""
    folder = tmp_path_factory.mktemp("outreach")
    book = folder / DEMO
    shutil.copyfile(packaged_file(DEMO), book)
    result = invoke("run", str(book), "--json", str(folder / "run.json"), "--quiet")
    assert result.exit_code == 0, result.stderr
    return {"book": book, "folder": folder, "json": json.loads((folder / "run.json").read_text(encoding="utf-8"))}


def analysis(demo_run, outcome: str, design: str) -> dict[str, Any]:
    hits = [a for a in demo_run["json"]["analyses"] if a["outcome"] == outcome and a["design"] == design]
    assert len(hits) == 1, (outcome, design)
    return hits[0]


# ---------------------------------------------------------------- Beyond the basic table


class TestBeyondTheBasicTable:
    def test_every_p_adjusted_is_holm_over_the_run(self, demo_run) -> None:
        """Each analysis's adjusted p equals Holm's step-down over all non-skipped raw p-values of the run."""
        analyses = [a for a in demo_run["json"]["analyses"] if not a["skipped"]]
        assert len(analyses) >= 5
        expected = holm([a["p_value"] for a in analyses])
        for a, want in zip(analyses, expected, strict=True):
            assert a["p_adjusted"] == pytest.approx(want, rel=1e-12), (a["outcome"], a["exposure"])

    def test_sheet_adjusted_p_equals_json(self, demo_run) -> None:
        """The results sheet's adjusted p of each analysis row equals the JSON's, read by python-calamine."""
        rows = [r for r in results_records(demo_run["book"]) if not str(r["Question"]).startswith("  ")]
        for a in demo_run["json"]["analyses"]:
            target = a["exposure"] or a["pairing"]
            hits = [r for r in rows if r["Outcome"] == a["outcome"] and target in str(r["Compared by / against"])]
            assert len(hits) == 1, (a["outcome"], target)
            assert hits[0]["p"] == a["p_value"]
            assert hits[0]["Adjusted p"] == a["p_adjusted"]

    def test_sites_that_differ_are_flagged(self, demo_run) -> None:
        """The five-site comparison has follow-up pairs with adjusted p; flagged exactly when below alpha."""
        days = analysis(demo_run, "Days to first visit", "multi_group_continuous")
        assert days["exposure"] == "Site"
        followups = days["followups"]
        assert len(followups) == 10  # 5 sites, 10 pairs
        flagged = [f for f in followups if f["flagged"]]
        assert flagged, "no pair of sites was flagged"
        for f in followups:
            assert f["flagged"] == (f["p_adjusted"] < ALPHA), f["levels"]

    def test_followup_adjustment_is_holm_within_the_family(self, demo_run) -> None:
        """Brunner-Munzel pairs are Holm-adjusted over the ten pairs (Holm 1979), as their reason says."""
        followups = analysis(demo_run, "Days to first visit", "multi_group_continuous")["followups"]
        assert {f["test"] for f in followups} == {"pairwise_brunner_munzel"}
        expected = holm([f["p_value"] for f in followups])
        assert [f["p_adjusted"] for f in followups] == pytest.approx(expected, rel=1e-12)

    def test_followup_rows_on_sheet(self, demo_run) -> None:
        """Each follow-up pair has its own row on the results sheet with the same adjusted p."""
        rows = [r for r in results_records(demo_run["book"]) if str(r["Question"]).startswith("  ")]
        followups = analysis(demo_run, "Days to first visit", "multi_group_continuous")["followups"]
        for f in followups:
            hits = [r for r in rows if all(level in r["Question"] for level in f["levels"])]
            assert len(hits) == 1, f["levels"]
            assert hits[0]["Adjusted p"] == f["p_adjusted"]

    def test_paired_change_with_ci_from_the_data(self, demo_run) -> None:
        """The before/after change and its CI equal the textbook paired t interval on the sheet's complete pairs."""
        result = analysis(demo_run, "Systolic before (mmHg)", "paired_continuous")
        assert result["test"] == "paired_t"
        rows = sheet_rows(demo_run["book"], DATA_SHEET)
        header = [str(h) for h in rows[0]]
        before_col, after_col = header.index("Systolic before (mmHg)"), header.index("Systolic after (mmHg)")

        def number(value: Any) -> float | None:
            if isinstance(value, (int, float)) and not isinstance(value, bool):
                return float(value)
            try:
                return float(str(value).strip())
            except ValueError:
                return None

        pairs = [(number(r[before_col]), number(r[after_col])) for r in rows[1:]]
        diffs = np.array([a - b for a, b in pairs if a is not None and b is not None])
        n = diffs.size
        assert n == result["n"] == 209
        mean, se = diffs.mean(), diffs.std(ddof=1) / math.sqrt(n)
        half = stats.t.ppf(0.975, n - 1) * se
        est = result["estimate"]
        assert est["value"] == pytest.approx(mean, rel=1e-12)
        assert est["ci_low"] == pytest.approx(mean - half, rel=1e-10)
        assert est["ci_high"] == pytest.approx(mean + half, rel=1e-10)
        assert result["statistic"] == pytest.approx(mean / se, rel=1e-10)
        sheet_row = [r for r in results_records(demo_run["book"]) if r["Outcome"] == "Systolic before (mmHg)"
                     and "Systolic after" in str(r["Compared by / against"])][0]
        assert (sheet_row["Estimate value"], sheet_row["CI low"], sheet_row["CI high"]) == (
            est["value"], est["ci_low"], est["ci_high"])

    def test_incomplete_pairs_in_data_notes(self, demo_run) -> None:
        """The 11 pairs with one half missing are counted on the data-notes sheet and listed by row in the JSON."""
        book = demo_run["book"]
        result = analysis(demo_run, "Systolic before (mmHg)", "paired_continuous")
        listed = result["extra"]["incomplete_pairs"]
        assert len(listed) == result["n_excluded"] == 11
        rows = sheet_rows(book, DATA_SHEET)
        header = [str(h) for h in rows[0]]
        a, b = header.index("Systolic before (mmHg)"), header.index("Systolic after (mmHg)")
        for label in listed:
            sheet_row = rows[int(label.split()[1]) - 1]
            assert "" in (sheet_row[a], sheet_row[b]), label  # one half of the pair is blank
        text = " ".join(str(c) for row in sheet_rows(book, tool_sheet_name(book, "notes")) for c in row)
        assert "11 incomplete pairs" in text and "Systolic before (mmHg)" in text

    def test_data_notes_list_dirty_cells(self, demo_run) -> None:
        """The demo's text-stored number and missing markers are listed with their cell addresses."""
        book = demo_run["book"]
        notes = table_records(sheet_rows(book, tool_sheet_name(book, "notes")), "Sheet")
        cells = {r["Cell"]: r["What was wrong"] for r in notes if r["Sheet"] == DATA_SHEET}
        assert cells["D59"] == "number stored as text"
        assert cells["H103"] == "missing marker" and cells["H151"] == "missing marker"


# ---------------------------------------------------------------- Results a manager can read


def _tokens(text: str) -> list[str]:
    """Words without hyphens or curly quotes, so wrapping and hyphenation in the PDF do not matter."""
    text = text.replace("\u00ad", "").replace("\u2019", "'").replace("\u2018", "'")
    return [re.sub(r"[\-\u2010\u2011]", "", w) for w in text.split() if re.sub(r"[\-\u2010\u2011]", "", w)]


def _printed(reading: str, pdf_words: list[str]) -> bool:
    """True when the reading's words appear in order and close together in the PDF's words.

    The results sheet prints its wide text columns side by side, so a reading's
    lines are interleaved with the next column's lines; its words must still
    all be there, in order, within a window a few times the reading's length.
    A word hyphenated across a line break shows up as two PDF words.
    """
    want = _tokens(reading)
    window = 3 * len(want) + 20
    for start, word in enumerate(pdf_words):
        if word != want[0]:
            continue
        i, j = 1, start + 1
        while i < len(want) and j < min(len(pdf_words), start + window):
            if pdf_words[j] == want[i]:
                i += 1
            elif j + 1 < len(pdf_words) and pdf_words[j] + pdf_words[j + 1] == want[i]:
                i += 1
                j += 1
            j += 1
        if i == len(want):
            return True
    return False


@pytest.fixture(scope="module")
def demo_pdf_text(demo_run, tmp_path_factory) -> str | None:
    """pdftotext of the run demo workbook printed to PDF by LibreOffice (converted once per module)."""
    program = find_soffice()
    if program is None or shutil.which("pdftotext") is None:
        return None
    outdir = tmp_path_factory.mktemp("pdf")
    pdf = convert(demo_run["book"], "pdf", outdir, soffice=program)
    done = subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True, check=True)
    return done.stdout


class TestManagerCanRead:
    def test_pdf_holds_every_reading(self, demo_pdf_text, demo_run) -> None:
        """Printed to PDF by LibreOffice, the results contain every analysis's full reading."""
        require_soffice()
        if demo_pdf_text is None:
            pytest.fail("pdftotext is not installed")
        words = _tokens(demo_pdf_text)
        for a in demo_run["json"]["analyses"]:
            assert a["reading"], a["outcome"]
            assert _printed(a["reading"], words), a["reading"][:80]
            for f in a["followups"]:
                assert _printed(f["reading"], words), f["reading"][:80]
        assert not _printed("Mean values were 6.12 lower in every site than anywhere else.", words)

    def test_pdf_holds_shape_check_sheet(self, demo_pdf_text, demo_run) -> None:
        """The shape-check sheet prints too: its title and each outcome's name appear in the PDF."""
        require_soffice()
        if demo_pdf_text is None:
            pytest.fail("pdftotext is not installed")
        book = demo_run["book"]
        shape_rows = sheet_rows(book, tool_sheet_name(book, "shape"))
        title = next(str(c) for row in shape_rows for c in row if str(c).strip())
        words = _tokens(demo_pdf_text)
        assert _printed(title, words)
        sentences = {c for row in shape_rows for c in row if isinstance(c, str) and len(c.split()) >= 6}
        assert sentences
        for sentence in sentences:
            assert _printed(sentence, words), sentence[:80]
        for a in demo_run["json"]["analyses"]:
            assert _printed(a["outcome"], words)

    def test_charts_reference_tool_ranges_holding_the_bins(self, demo_run) -> None:
        """Every chart the tool wrote points at ranges of its own sheet that hold labels and numbers."""
        book = demo_run["book"]
        parts = {e.name: e for e in read_zip(book.read_bytes())}
        charts = [name for name in parts if re.fullmatch(r"xl/charts/chart\d+\.xml", name)]
        assert charts, "no chart parts"
        tool_names = set(FileSource(book).tool_sheets())
        cache: dict[str, list[list[Any]]] = {}
        checked = 0
        for name in charts:
            xml = parts[name].data().decode("utf-8")
            for kind, formula in re.findall(r"<c:(cat|val)>.*?<c:f>(.*?)</c:f>", xml, re.S):
                found = re.fullmatch(r"'?(.*?)'?!\$([A-Z]+)\$(\d+):\$([A-Z]+)\$(\d+)", formula.replace("&apos;", "'"))
                assert found, formula
                sheet, c1, r1, c2, r2 = found.groups()
                sheet = sheet.replace("''", "'")
                assert sheet in tool_names, formula
                assert c1 == c2, formula
                rows = cache.setdefault(sheet, sheet_rows(book, sheet))
                col = ord(c1) - 65
                values = [rows[r - 1][col] if r - 1 < len(rows) and col < len(rows[r - 1]) else ""
                          for r in range(int(r1), int(r2) + 1)]
                assert all(v != "" for v in values), (formula, values)
                if kind == "val":
                    assert all(isinstance(v, (int, float)) for v in values), (formula, values)
                checked += 1
        assert checked >= 4

    def test_histogram_bins_count_the_data(self, demo_run) -> None:
        """A chart's category labels are the levels or bins the tool computed; bar counts are non-negative."""
        book = demo_run["book"]
        parts = {e.name: e for e in read_zip(book.read_bytes())}
        site_levels = {"Alder Point", "Brackenford", "Copperleigh", "Dunmere Cross", "Elswick Green"}
        seen_levels = False
        for name, entry in parts.items():
            if not re.fullmatch(r"xl/charts/chart\d+\.xml", name):
                continue
            xml = entry.data().decode("utf-8")
            for formula in re.findall(r"<c:cat>.*?<c:f>(.*?)</c:f>", xml, re.S):
                sheet, c1, r1, _, r2 = re.fullmatch(
                    r"'?(.*?)'?!\$([A-Z]+)\$(\d+):\$([A-Z]+)\$(\d+)", formula.replace("&apos;", "'")).groups()
                rows = sheet_rows(book, sheet.replace("''", "'"))
                labels = {str(rows[r - 1][ord(c1) - 65]) for r in range(int(r1), int(r2) + 1)}
                seen_levels |= labels == site_levels
        assert seen_levels, "no chart over the five sites"


class CapturingSink:
    """A file sink that also keeps the sheet models it was given (to check the is_count marks)."""

    def __init__(self, path: Path) -> None:
        self.inner = FileSink(path)
        self.models: list[Any] = []

    def check(self, out=None):
        return self.inner.check(out)

    def write_sheets(self, models, out=None):
        self.models = list(models)
        return self.inner.write_sheets(models, out=out)


@pytest.fixture(scope="module")
def shared_run(tmp_path_factory) -> dict[str, Any]:
    """The outreach demo run in sharing mode (N = 11), with the models that were written."""
    folder = tmp_path_factory.mktemp("shared")
    book = folder / DEMO
    shutil.copyfile(packaged_file(DEMO), book)
    sink = CapturingSink(book)
    summary = run_workbook(book, share=True, min_count=MIN_COUNT, source=FileSource(book), sink=sink)
    return {"book": book, "models": sink.models, "summary": summary}


class TestSharingMode:
    def test_no_small_count_in_any_count_cell(self, shared_run) -> None:
        """No cell marked as a count on any tool sheet holds a count from 1 to N-1."""
        counted = 0
        for model in shared_run["models"]:
            for (r, c), cell in model.cells.items():
                if cell.is_count:
                    counted += 1
                    assert not share.is_small_count(cell.value, MIN_COUNT), (model.kind, r, c, cell.value)
        assert counted > 20

    def test_written_file_shows_the_marker(self, shared_run) -> None:
        """Every count cell that was hidden reads as the suppression marker in the written file."""
        book = shared_run["book"]
        names = shared_run["summary"].write.sheets
        hidden = 0
        for model in shared_run["models"]:
            rows = sheet_rows(book, names[model.kind])
            for (r, c), cell in model.cells.items():
                written = rows[r][c] if r < len(rows) and c < len(rows[r]) else ""
                if cell.value == share.SUPPRESSED_TEXT:
                    assert written == share.SUPPRESSED_TEXT, (model.kind, r, c)
                    hidden += 1
                elif cell.is_count and isinstance(cell.value, (int, float)):
                    assert written == cell.value and not share.is_small_count(written, MIN_COUNT)
        assert hidden > 0, "the demo has small groups; something should be hidden"

    def test_header_says_sharing_is_on_and_data_is_record_level(self, shared_run) -> None:
        """The results sheet's header says sharing mode is on and that the data sheet still holds record-level data."""
        book = shared_run["book"]
        rows = sheet_rows(book, tool_sheet_name(book, "results"))
        head = " ".join(str(c) for row in rows[:20] for c in row)
        assert "Sharing mode" in head
        assert f"counts below {MIN_COUNT}" in head or f"1 to {MIN_COUNT - 1}" in head
        assert "record-level data" in head

    def test_plain_run_hides_nothing(self, demo_run) -> None:
        """Without --share, no cell of the tool's sheets reads as the suppression marker."""
        book = demo_run["book"]
        for kind in ("results", "shape", "notes"):
            rows = sheet_rows(book, tool_sheet_name(book, kind))
            assert all(c != share.SUPPRESSED_TEXT for row in rows for c in row), kind

    def test_share_from_command_line(self, tmp_path) -> None:
        """statmargin run --share --min-count 11 writes the marker and says sharing mode is on."""
        book = tmp_path / DEMO
        shutil.copyfile(packaged_file(DEMO), book)
        result = invoke("run", str(book), "--share", "--min-count", str(MIN_COUNT), "--quiet")
        assert result.exit_code == 0, result.stderr
        cells = [c for kind in ("results", "shape") for row in sheet_rows(book, tool_sheet_name(book, kind))
                 for c in row]
        assert share.SUPPRESSED_TEXT in cells


# ---------------------------------------------------------------- statmargin demo


class TestDemoCommand:
    def test_demo_twice(self, tmp_path) -> None:
        """statmargin demo FOLDER writes the demo workbooks with results, and running it again works."""
        folder = tmp_path / "try it"
        for attempt in (1, 2):
            result = invoke("demo", str(folder), "--quiet")
            assert result.exit_code == 0, result.stderr
            for name in DEMO_WORKBOOKS:
                kinds = sorted(FileSource(folder / name).tool_sheets().values())
                over_time = ["periods"] if name == "riverbend_visits_demo.xlsx" else []
                assert kinds == sorted(["history", "log", "notes", "results", "roles", "shape", *over_time]), name
                log = table_records(sheet_rows(folder / name, tool_sheet_name(folder / name, "log")), "Time (UTC)")
                assert len(log) == attempt
                assert results_records(folder / name), name
            assert (folder / TEMPLATE).exists()
            assert "Open the workbooks" in result.stdout
