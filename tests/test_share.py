"""Sharing mode: no small count, or anything that gives one away, is left on a tool sheet.

Tables are R datasets (mtcars, PlantGrowth via tests/reference/) or invented in
our own scenario (marked "invented"). The threshold convention (hide counts
1..10) is common public-health practice, not an outside numeric reference; the
checks here are structural: every cell of every tool sheet is scanned.
"""

from __future__ import annotations

import copy
import re
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from result_builders import (
    cyl_groups,
    cyl_share_of_4,
    mtcars_am_by_vs,
    mtcars_cyl_by_gear,
    mtcars_cyl_shares,
)
from statmargin.errors import OptionError
from statmargin.plan.model import Settings
from statmargin.results import Effect, Estimate, Result
from statmargin.sheets import report, share
from statmargin.sheets.model import SheetModel
from statmargin.sheets.report import ReportContext
from statmargin.vocabulary import EffectKind, EstimateKind
from statmargin.words import explain

DATA = Path(__file__).parent / "reference" / "data"


def small_group_result() -> Result:
    """Invented: waits at three clinic districts, one with only 4 visits."""
    return Result(
        outcome="Wait",
        exposure="District",
        design="multi_group_continuous",
        test="kruskal_wallis",
        statistic_name="H",
        statistic=6.2,
        df=2.0,
        p_value=0.045,
        n=34,
        estimate=Estimate(EstimateKind.LARGEST_MEDIAN_GAP, 12.5, 2.0, 21.0, levels=("Hill", "Coast")),
        effect=Effect(EffectKind.EPSILON_SQUARED, 0.19),
        groups=[
            {
                "label": "Coast",
                "n": 18,
                "mean": 21.0,
                "sd": 6.0,
                "median": 20.0,
                "min": 9.0,
                "max": 35.0,
                "outliers": 1,
            },
            {
                "label": "Hill",
                "n": 4,
                "mean": 33.25,
                "sd": 4.1,
                "median": 32.5,
                "min": 29.0,
                "max": 39.0,
                "outliers": 0,
            },
            {
                "label": "Plain",
                "n": 12,
                "mean": 24.0,
                "sd": 5.0,
                "median": 23.5,
                "min": 14.0,
                "max": 36.0,
                "outliers": 0,
            },
        ],
    )


def small_group_samples() -> dict[str, list[float]]:
    """Invented values matching the groups above (seeded)."""
    rng = np.random.default_rng(20261202)
    return {
        "Coast": list(rng.normal(21, 6, 18)),
        "Hill": [29.0, 31.0, 34.0, 39.0],
        "Plain": list(rng.normal(24, 5, 12)),
    }


def mtcars_crosstab() -> Result:
    """R 4.2.2: table(mtcars$cyl, mtcars$gear) has cells 1, 2, 2, 1, 0 and 2 (r_cases.json mtcars_cyl_by_gear)."""
    return mtcars_cyl_by_gear(groups=cyl_groups())


def mtcars_two_by_two() -> Result:
    """R 4.2.2: fisher.test(table(mtcars$am, mtcars$vs)); cells 12, 7, 6, 7 (r_cases.json mtcars_am_by_vs)."""
    return mtcars_am_by_vs()


def gof_result() -> Result:
    """R datasets: table(mtcars$cyl) = 11, 7, 14 against shares 0.25, 0.25, 0.5."""
    return mtcars_cyl_shares(estimate=cyl_share_of_4())


def shared_run(
    min_count: int = share.DEFAULT_MIN_COUNT,
) -> tuple[list[Result], list[SheetModel], list[SheetModel]]:
    """The sharing-mode pipeline: suppress results, write readings, build sheets (suppressed).

    Returns the results, the sheets as built before sheet suppression, and the
    sheets build_sheets returns in sharing mode.
    """
    context = ReportContext(
        workbook="clinics.xlsx",
        data_sheet="Visits",
        rows_read=40,
        rows_used=34,
        share_mode=True,
        share_min_count=min_count,
        samples={("Wait", "District", ""): small_group_samples()},
        run_time=datetime(2026, 1, 5, 12, 0, tzinfo=timezone.utc),  # fixed: two builds must not straddle a second
    )
    results = share.suppress(
        [small_group_result(), mtcars_crosstab(), mtcars_two_by_two(), gof_result()], min_count
    )
    explain.apply(results, Settings(), context)
    shape = report.shape_sheet(results, context)
    raw = [
        report.results_sheet(results, context, shape.anchors),
        shape,
        report.notes_sheet([], [], context),
        report.log_sheet([], report.run_info(context, results)),
    ]
    return results, raw, report.build_sheets(results, context=context)


def test_build_sheets_in_sharing_mode_returns_suppressed_sheets() -> None:
    """build_sheets suppresses by itself in sharing mode, and a second pass changes nothing."""
    _, raw, built = shared_run()
    assert [m.cells for m in share.suppress(raw)] == [m.cells for m in built]
    assert [m.cells for m in share.suppress(built)] == [m.cells for m in built]
    for model in built:
        assert not any(c.is_count and share.is_small_count(c.value) for c in model.cells.values())


def hidden(model: SheetModel, pos: tuple[int, int]) -> bool:
    return model.cells[pos].style == "suppressed"


@pytest.mark.parametrize("min_count", [5, 11])
def test_no_small_count_remains_on_any_tool_sheet(min_count: int) -> None:
    """Every count cell of every tool sheet is scanned: none holds a whole number from 1 to N-1."""
    _, before, after = shared_run(min_count)
    small_before = 0
    for old, new in zip(before, after, strict=True):
        assert set(old.cells) == set(new.cells)
        for pos, cell in new.cells.items():
            assert cell.is_count == old.cells[pos].is_count
            if old.cells[pos].is_count and share.is_small_count(old.cells[pos].value, min_count):
                small_before += 1
            if cell.is_count:
                assert not share.is_small_count(cell.value, min_count), (new.kind, pos, cell.value)
    assert small_before > 0  # the scenario really had small counts to hide


def test_no_count_set_is_left_with_one_hidden_member() -> None:
    """Complementary suppression: a row, column or bin set never has exactly one hidden cell."""
    _, _, after = shared_run()
    checked = 0
    for model in after:
        for members in model.count_sets:
            count = sum(hidden(model, pos) for pos in members if pos in model.cells)
            assert count != 1, (model.kind, members)
            checked += 1
    assert checked > 0


def test_summaries_of_a_small_group_are_hidden() -> None:
    """A group under N has its mean, SD, median, min and max hidden with its n."""
    _, _, after = shared_run()
    shape = after[1]
    row = next(r for (r, c), cell in shape.cells.items() if c == 0 and cell.value == "Hill")
    for col in range(1, 9):  # n, mean, SD, median, Q1, Q3, min and max
        assert shape.cells[(row, col)].style == "suppressed", col
    second = next(
        r for (r, c), cell in shape.cells.items() if c == 0 and cell.value == "Hill" and r > row
    )
    for col in range(1, 5):  # skewness, kurtosis, normality p, outliers
        assert shape.cells[(second, col)].style == "suppressed", col
    coast = next(r for (r, c), cell in shape.cells.items() if c == 0 and cell.value == "Coast")
    assert shape.cells[(coast, 1)].value == 18  # a group of 11 or more stays visible
    assert shape.cells[(coast, 2)].value == 21.0


def test_small_counts_show_a_threshold_and_complements_say_suppressed() -> None:
    """A small count reads '<11'; a cell hidden only to protect it reads 'suppressed'."""
    _, _, after = shared_run()
    values = {
        cell.value for model in after for cell in model.cells.values() if cell.style == "suppressed"
    }
    assert "<11" in values and "suppressed" in values


@pytest.mark.parametrize(("min_count", "zero_shown"), [(5, True), (11, False)])
def test_zeros_stay_visible_unless_their_total_is_hidden(min_count: int, zero_shown: bool) -> None:
    """A zero reveals no one beside a shown total; beside a hidden total it says the rest is all of it.

    mtcars (R datasets) has no 8-cylinder car with 4 gears. Under 5, gear 4's total (12) stays and
    so does the zero; under 11, gear 5's total (5) is hidden, so gear 4's total is hidden with it
    (n = 32 is shown) and the zero goes too.
    """
    _, _, after = shared_run(min_count)
    shape = after[1]
    top = (
        next(
            r for (r, c), cell in shape.cells.items() if c == 0 and cell.value == "Observed counts"
        )
        + 1
    )
    zero = shape.cells[(top + 3, 2)]  # R: table(mtcars$cyl, mtcars$gear)["8", "4"] == 0
    assert (zero.value == 0) is zero_shown
    assert (shape.cells[(top + 4, 2)].value == 12) is zero_shown  # gear 4's total


def test_results_header_says_sharing_mode_and_record_level_data() -> None:
    """The results header says counts are hidden and that the data sheet still holds record-level data."""
    _, _, after = shared_run()
    results_model = after[0]
    texts = [cell.value for cell in results_model.cells.values() if isinstance(cell.value, str)]
    assert texts.count(explain.SHARE_NOTE.format(floor=11)) == 1
    assert any("record-level data" in t for t in texts)


def test_readings_never_quote_hidden_numbers() -> None:
    """Readings are written after result suppression, so a small group's mean never appears."""
    results, _, _ = shared_run()
    kruskal = results[0]
    assert "33.2" not in kruskal.reading and "32.5" not in kruskal.reading
    assert kruskal.estimate.value is None and "estimate" in kruskal.extra["suppressed"]
    assert explain.SHARE_CAUTION.format(floor=11) in kruskal.cautions


def test_two_by_two_with_small_cell_hides_its_statistics() -> None:
    """With its margins shown, a 2 x 2 table's p-value or odds ratio would give a small cell back."""
    result = share.suppress(mtcars_two_by_two(), 11)  # cells 7 and 6 are under 11
    assert result.p_value is None and result.effect.value is None and result.estimate.value is None
    assert explain.reading(result, settings=Settings()) == explain.SHARE_HIDDEN_READING.format(
        question="Does the mix of vs differ by am?"
    )
    kept = share.suppress(mtcars_two_by_two(), 5)  # no cell under 5
    assert kept.p_value == 0.4726974416017796


def test_inputs_are_not_changed() -> None:
    """suppress returns copies; the results and models passed in keep their values."""
    original = small_group_result()
    snapshot = copy.deepcopy(original)
    share.suppress(original)
    assert original == snapshot
    _, before, _ = shared_run()
    frozen = copy.deepcopy(before)
    share.suppress(before)
    assert [m.cells for m in before] == [m.cells for m in frozen]


def test_bad_threshold_is_a_one_line_option_error() -> None:
    """A threshold below 2 or not a whole number is refused with a plain message."""
    with pytest.raises(OptionError, match="at least 2"):
        share.suppress([small_group_result()], 1)
    with pytest.raises(OptionError, match="whole number"):
        share.suppress([small_group_result()], 5.5)
    with pytest.raises(OptionError, match="only hide counts"):
        share.suppress(["not a sheet"])


def test_default_threshold_is_eleven() -> None:
    """The documented default hides counts 1 to 10 (common public-health practice)."""
    assert share.DEFAULT_MIN_COUNT == 11
    assert share.is_small_count(10) and not share.is_small_count(11)
    assert (
        not share.is_small_count(0)
        and not share.is_small_count(3.5)
        and not share.is_small_count(True)
    )


def test_histogram_bins_of_a_whole_dataset() -> None:
    """PlantGrowth (R datasets, 10 per group): every group and every bin count is under 11, so all are hidden."""
    frame = pd.read_csv(DATA / "plantgrowth_weight_by_group.csv")
    samples = {str(k): g["weight"].tolist() for k, g in frame.groupby("group")}
    result = Result(
        outcome="weight",
        exposure="group",
        design="multi_group_continuous",
        test="one_way_anova",
        n=30,
        p_value=0.015909958325622912,  # R 4.2.2 oneway.test(weight ~ group, var.equal = TRUE)
        groups=[{"label": k, "n": len(v), "mean": float(np.mean(v))} for k, v in samples.items()],
    )
    context = ReportContext(share_mode=True, samples={("weight", "group", ""): samples})
    model = share.suppress(report.shape_sheet(share.suppress([result]), context))
    counts = [cell for cell in model.cells.values() if cell.is_count]
    assert counts and all(c.value == 0 or c.style == "suppressed" for c in counts)


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.lists(st.integers(0, 30), min_size=2, max_size=4), min_size=2, max_size=4).filter(
        lambda t: len({len(r) for r in t}) == 1 and sum(map(sum, t)) > 0
    )
)
def test_any_crosstab_is_safe_after_suppression(table: list[list[int]]) -> None:
    """For any table: no small count stays, and no row, column or margin set has one hidden cell."""
    result = Result(
        outcome="Outcome",
        exposure="Site",
        design="two_categorical",
        test="chi_square_independence",
        n=sum(map(sum, table)),
        extra={"observed": table},
    )
    model = share.suppress(report.shape_sheet([result], ReportContext()), 5)
    for cell in model.cells.values():
        if cell.is_count:
            assert not share.is_small_count(cell.value, 5)
    for members in model.count_sets:
        assert sum(model.cells[p].style == "suppressed" for p in members) != 1


def test_sheet_suppression_alone_hides_what_reveals_a_count() -> None:
    """Without result-level suppression, sheet suppression still hides a small group's summaries and expected counts."""
    context = ReportContext(samples={("Wait", "District", ""): small_group_samples()})
    model = share.suppress(
        report.shape_sheet([small_group_result(), mtcars_crosstab()], context), 11
    )
    hill = next(r for (r, c), cell in model.cells.items() if c == 0 and cell.value == "Hill")
    assert model.cells[(hill, 1)].value == "<11"
    assert all(model.cells[(hill, c)].style == "suppressed" for c in (2, 3, 4, 7, 8))
    # R 4.2.2 table(mtcars$cyl, mtcars$gear): gear 5 has 5 cars, so its expected counts (which sum to 5) go too
    top = (
        next(
            r
            for (r, c), cell in model.cells.items()
            if c == 0 and cell.value == "Expected counts if the two were unrelated"
        )
        + 1
    )
    assert all(model.cells[(top + i, 3)].style == "suppressed" for i in (1, 2, 3))
    # row 6 (7 cars) is hidden, so row 4 (11) is hidden beside it; row 8 (14) and gear 3 (15) stay
    assert model.cells[(top + 1, 1)].style == "suppressed"
    assert model.cells[(top + 3, 1)].value == 6.5625


def test_whole_data_statistics_are_kept() -> None:
    """Statistics, p-values and standardized effects of larger tables and continuous comparisons stay."""
    crosstab = share.suppress(mtcars_crosstab())
    # R 4.2.2 chisq.test(table(mtcars$cyl, mtcars$gear), correct = FALSE) and Cramer's V from r_cases.json
    assert crosstab.statistic == 18.036363636363635
    assert crosstab.effect.value == 0.5308655025693249
    kruskal = share.suppress(small_group_result())
    assert kruskal.effect.value == 0.19 and kruskal.p_value == 0.045  # invented scenario values
    assert kruskal.groups[0]["mean"] == 21.0 and kruskal.groups[1]["mean"] is None


# ---------------------------------------------------------------- free text


# The test's own scan of the written text (an independent check: the tool never rewrites prose).
_COUNT_NEAR_WORD = re.compile(
    r"(?<![\d.,])(\d+)(?![\d.])\s+(?:of|records?|rows?|values?|pairs?|incomplete pairs|cells?|"
    r"participants?|people|expected)\b|\bn\s*=\s*(\d+)",
    re.IGNORECASE,
)
_THRESHOLD_BEFORE = re.compile(r"(fewer than|less than|under|below|at least|more than)\s*$")


@pytest.mark.usefixtures("pipeline_backend")  # through the file back end, then the in-memory one
def test_share_run_of_a_tiny_group_leaves_no_small_count_in_any_text(tmp_path: Path) -> None:
    """A --share run where one site has 3 records: no text cell on a tool sheet quotes a count under 11."""
    import openpyxl

    from statmargin.jobs.demo import packaged_file
    from statmargin.jobs.workbook import run_workbook

    # The bundled outreach workbook (invented data) with one site cut to 3 records.
    book = openpyxl.load_workbook(packaged_file("outreach_demo.xlsx"))
    sheet = book["Participants"]
    site = [c.value for c in sheet[1]].index("Site") + 1
    tiny = [r for r in range(2, sheet.max_row + 1) if sheet.cell(r, site).value == "Elswick Green"]
    for r in sorted(tiny[3:], reverse=True):
        sheet.delete_rows(r)
    path = tmp_path / "tiny.xlsx"
    book.save(path)
    out = tmp_path / "shared.xlsx"
    run_workbook(path, out=out, share=True)
    written = openpyxl.load_workbook(out)
    tool_sheets = [n for n in written.sheetnames if n.startswith("statmargin") and "roles" not in n]
    assert len(tool_sheets) == 5  # results, shape checks, data notes, run log and the hidden history
    offending, texts = [], 0
    for name in tool_sheets:
        for row in written[name].iter_rows():
            for cell in row:
                if not isinstance(cell.value, str):
                    continue
                texts += 1
                for match in _COUNT_NEAR_WORD.finditer(cell.value):
                    number = int(match.group(1) or match.group(2))
                    words = match.group(0).lower()
                    if (
                        " of" in words
                        and "expected" not in cell.value[match.end() : match.end() + 40]
                    ):
                        # "4 of the 5 groups", "3 of the pairs below": counts of groups, not of records.
                        if any(w in cell.value[match.end() : match.end() + 20] for w in ("group", "pairs")):
                            continue
                    if _THRESHOLD_BEFORE.search(cell.value[: match.start()]):
                        continue  # a stated rule at or over the minimum (smaller ones are rewritten)
                    if 0 < number < share.DEFAULT_MIN_COUNT:
                        offending.append(f"{name}!{cell.coordinate}: {cell.value}")
    assert texts > 100
    assert offending == []
    # The tiny group is still named, its count is shown only as hidden.
    shape = written[[n for n in tool_sheets if "shape" in n][0]]
    shown = [c.value for row in shape.iter_rows() for c in row if c.value == "<11"]
    assert shown


def _small_counts_in(value, min_count: int, path: str = "") -> list[str]:
    """Paths of counts from 1 to min_count - 1 under count keys of a JSON document (this test's own walk)."""
    found: list[str] = []
    if isinstance(value, dict):
        for key, item in value.items():
            here = f"{path}.{key}"
            if key in ("n", "count", "events", "total", "n_excluded") and isinstance(item, int) and 0 < item < min_count:
                found.append(f"{here}={item}")
            elif key in ("counts", "observed") and isinstance(item, (dict, list)):
                flat = list(item.values()) if isinstance(item, dict) else item
                for cell in (c for row in flat for c in (row if isinstance(row, list) else [row])):
                    if isinstance(cell, int) and 0 < cell < min_count:
                        found.append(f"{here} holds {cell}")
            else:
                found.extend(_small_counts_in(item, min_count, here))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            found.extend(_small_counts_in(item, min_count, f"{path}[{i}]"))
    return found


def test_share_hides_small_counts_in_json_and_summary(tmp_path: Path) -> None:
    """With --share the JSON of run and test and the terminal summary carry no count under 11 (a site of 3 invented records)."""
    import json

    from click.testing import CliRunner

    from statmargin.cli import main

    frame = {
        "Site": ["North"] * 30 + ["South"] * 3,
        "Passed": (["Yes"] * 20 + ["No"] * 10) + ["Yes"] * 3,  # every South inspection passed
        "Score": [70.0 + (i % 7) for i in range(30)] + [91.0, 93.0, 95.0],
    }  # invented
    import pandas as pd

    book = tmp_path / "tiny.xlsx"
    pd.DataFrame(frame).to_excel(book, index=False, sheet_name="Data", engine="xlsxwriter")
    runner = CliRunner()
    result = runner.invoke(main, ["test", str(book), "--outcome", "Passed", "--outcome", "Score",
                                  "--by", "Site", "--share", "--json", "-"])
    assert result.exit_code == 0, result.output
    document = json.loads(result.stdout)
    assert _small_counts_in(document, 11) == []
    plain = runner.invoke(main, ["test", str(book), "--outcome", "Passed", "--by", "Site", "--json", "-"])
    assert _small_counts_in(json.loads(plain.stdout), 11) != []  # without --share the 3 is there
    summary = runner.invoke(main, ["test", str(book), "--outcome", "Score", "--by", "Site", "--share"])
    assert "n = 33" in summary.stdout and "South 93" not in summary.stdout
