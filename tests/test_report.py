"""Sheet models for the results, shape-check, data-notes and run-log sheets.

Numbers come from R 4.2.2 reference cases (tests/reference/r_cases.json and the
R datasets in tests/reference/data/, named beside each use) or are invented in
our own scenario where marked "invented".
"""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from result_builders import (
    mtcars_cyl_by_gear,
    mtcars_cyl_shares,
    plantgrowth_anova,
    skipped_wait_by_district,
    sleep_mean_difference,
    sleep_welch_t,
    tukey_trt2_vs_trt1,
)
from statmargin.designs.engine import run_answers
from statmargin.io.addresses import column_index
from statmargin.options import build_plan
from statmargin.plan.model import Settings
from statmargin.read.table import DataNote, NoteKind, Table
from statmargin.results import Estimate, Result
from statmargin.sheets import report, shapes
from statmargin.sheets import results as results_layout
from statmargin.sheets.model import STYLES, SheetModel
from statmargin.sheets.report import ReportContext
from statmargin.vocabulary import EstimateKind, MeasureType
from statmargin.vocabulary.codes import Reason, Skip, coded
from statmargin.words import cautions, explain, notes_words, results_text

DATA = Path(__file__).parent / "reference" / "data"
RUN_TIME = datetime(2026, 12, 2, 3, 0, 0, tzinfo=timezone.utc)


def plant_growth() -> dict[str, np.ndarray]:
    """PlantGrowth weights by group (R datasets, via tests/reference/data)."""
    frame = pd.read_csv(DATA / "plantgrowth_weight_by_group.csv")
    return {str(k): g["weight"].to_numpy(dtype=float) for k, g in frame.groupby("group", sort=True)}


def anova_result() -> Result:
    """R 4.2.2: oneway.test(weight ~ group, data = PlantGrowth, var.equal = TRUE) with R's Tukey pair."""
    groups = []
    for label, values in plant_growth().items():
        groups.append(
            {
                "label": label,
                "n": len(values),
                "mean": float(values.mean()),
                "sd": float(values.std(ddof=1)),
                "median": float(np.median(values)),
                "q1": float(np.quantile(values, 0.25)),
                "q3": float(np.quantile(values, 0.75)),
                "min": float(values.min()),
                "max": float(values.max()),
                "skewness": 0.1,
                "excess_kurtosis": -0.5,
                "normality_test": "Shapiro-Wilk",
                "normality_p": 0.5,
                "outliers": 0,
            }
        )
    return plantgrowth_anova(  # effect CI: illustrative input (invented)
        p_adjusted=0.031819916651245824,
        groups=groups,
        reasons=[coded(Reason.SPREAD_SIMILAR, outcome="weight", by="group", p=0.3412)],
        followups=[tukey_trt2_vs_trt1()],  # R 4.2.2: TukeyHSD(aov(weight ~ group))
    )


def welch_result() -> Result:
    """R 4.2.2: t.test(extra ~ group, data = sleep, var.equal = FALSE)."""
    return sleep_welch_t(
        p_adjusted=0.07939414018735817,
        n_excluded=0,
        estimate=sleep_mean_difference(-1.58),
    )


def crosstab_result() -> Result:
    """R 4.2.2: chisq.test(table(mtcars$cyl, mtcars$gear), correct = FALSE) with R's expected counts."""
    return mtcars_cyl_by_gear(p_method="asymptotic")


def gof_result() -> Result:
    """R 4.2.2: chisq.test(table(mtcars$cyl), p = c(0.25, 0.25, 0.5))."""
    return mtcars_cyl_shares(statistic_name="X-squared")


def context(**changes) -> ReportContext:
    """A context for an invented run over the R example data."""
    base = dict(
        workbook="plants.xlsx",
        data_sheet="Plant data",
        rows_read=30,
        rows_used=30,
        run_time=RUN_TIME,
        version="0.1.0",
        units={"weight": "g"},
        fingerprint="abc123",
        samples={("weight", "group", ""): plant_growth()},
    )
    base.update(changes)
    return ReportContext(**base)


def cell_at(model: SheetModel, address: str):
    """The cell at an A1 address."""
    letters = "".join(c for c in address if c.isalpha())
    row = int("".join(c for c in address if c.isdigit())) - 1
    return model.cells.get((row, column_index(letters)))


def find_row(model: SheetModel, col: int, value) -> int:
    """The first row whose cell in ``col`` holds ``value``."""
    rows = [r for (r, c), cell in model.cells.items() if c == col and cell.value == value]
    assert rows, f"{value!r} not found in column {col}"
    return min(rows)


def header_row(model: SheetModel) -> int:
    return find_row(model, 0, "Question")


# ---------------------------------------------------------------- results sheet


def test_results_header_block_lists_the_run() -> None:
    """The run line names the workbook, data sheet, rows read, time, version and settings; a status line follows."""
    model = report.results_sheet([anova_result()], context())
    run_line = model.cells[(1, 0)].value
    for part in ("plants.xlsx", "sheet Plant data", "30 rows read", "2026-12-02T03:00:00Z",
                 "statmargin 0.1.0", "95% intervals", "two-sided"):
        assert part in run_line
    assert model.cells[(2, 0)].value == "The question was answered."
    assert "A2:D2" in model.merged and "A3:D3" in model.merged
    assert "Sharing mode" not in " ".join(str(c.value) for c in model.cells.values())
    assert model.kind == "results"


def test_results_table_has_one_row_per_analysis_and_followup() -> None:
    """Each analysis gets a row with its numbers unrounded, followed by indented follow-up rows."""
    model = report.results_sheet([anova_result(), welch_result()], context())
    top = header_row(model)
    # Only the header row is frozen, and only when the rows above it fit well on a screen.
    assert model.freeze == ((top + 1, 1) if top + 1 <= results_layout.FREEZE_MAX_ROW else None)
    headers = [model.cells[(top, c)].value for c in range(len(report.RESULT_COLUMNS))]
    assert headers[:10] == [
        "Question",
        "Reading",
        "Cautions",
        "Since last run",
        "Outcome",
        "Compared by / against",
        "n used",
        "n excluded",
        "Test",
        "Why this test",
    ]
    assert headers[-1] == "Details"
    col = report.COL
    anova_row, followup_row, welch_row = top + 1, top + 2, top + 3
    assert model.cells[(anova_row, col["Question"])].value == "Does weight differ by group?"
    assert model.cells[(anova_row, col["Test"])].value == "One-way ANOVA"
    assert (
        model.cells[(anova_row, col["Why this test"])].value
        == "The spread of weight is similar across the groups of group (Brown-Forsythe p = 0.34), so the classic one-way ANOVA was used."
    )
    # R 4.2.2 oneway.test: F = 4.846087862380137, p = 0.015909958325622912 kept at full precision
    assert model.cells[(anova_row, col["Statistic value"])].value == 4.846087862380137
    assert model.cells[(anova_row, col["p"])].value == 0.015909958325622912
    assert model.cells[(anova_row, col["p"])].style == "p_value"
    assert model.cells[(anova_row, col["df"])].value == "2, 27"
    assert model.cells[(anova_row, col["n used"])].value == 30
    assert model.cells[(anova_row, col["n used"])].is_count
    assert model.cells[(followup_row, col["Question"])].value == "  trt2 vs trt1"
    assert model.cells[(followup_row, col["Test"])].value == "Tukey HSD"
    assert model.cells[(followup_row, col["Adjusted p"])].value == 0.01200642397945273
    assert model.cells[(followup_row, col["CI low"])].value == pytest.approx(0.17378394858954183)
    # R 4.2.2 t.test(extra ~ group, sleep): difference -1.58, CI -3.365 to 0.205, df 17.776
    assert model.cells[(welch_row, col["Test"])].value == "Welch's t-test"
    assert model.cells[(welch_row, col["Estimate value"])].value == pytest.approx(-1.58)
    assert model.cells[(welch_row, col["CI low"])].value == -3.3654832307117104
    assert model.cells[(welch_row, col["df"])].value == 17.7764735161785
    assert model.cells[(welch_row, col["df"])].style == "decimal2"
    assert "compatible with no difference" in model.cells[(welch_row, col["Reading"])].value
    # The review line is stated once above the table, not on each row.
    assert explain.REVIEW_LINE not in model.cells[(welch_row, col["Cautions"])].value
    assert all(width >= 8 for width in model.widths.values())


def test_results_rows_link_to_their_shape_blocks() -> None:
    """Each analysis row links to its own block on the shape sheet through the {shape} placeholder."""
    results = [anova_result(), welch_result(), crosstab_result()]
    shape = report.shape_sheet(results, context())
    model = report.results_sheet(results, context(), shape.anchors)
    top = header_row(model)
    links = [
        cell.link
        for (r, c), cell in sorted(model.cells.items())
        if c == report.COL["Details"] and r > top
    ]
    assert links == [f"{{shape}}!{shape.anchors[f'analysis_{i}']}" for i in range(3)]
    for i, result in enumerate(results):
        title = cell_at(shape, shape.anchors[f"analysis_{i}"]).value
        assert title == f"{i + 1}. {explain.question(result)}"


def test_skipped_result_row_says_why() -> None:
    """A skipped analysis still gets a row, with the reason and no numbers."""
    skipped = skipped_wait_by_district(coded(Skip.FEWER_THAN_TWO_GROUPS, by="District", level="South"), n=3)
    model = report.results_sheet([skipped], context())
    row = header_row(model) + 1
    assert (
        model.cells[(row, report.COL["Why this test"])].value
        == "not run: District has fewer than two groups ('South') among the usable rows, so there is nothing to compare."
    )
    assert model.cells[(row, report.COL["p"])].value is None
    assert model.cells[(row, report.COL["Reading"])].value.startswith("No test was run")


def test_every_style_is_known() -> None:
    """Every cell of every sheet uses a style key the writers support."""
    table = Table.from_frame(
        pd.read_csv(DATA / "plantgrowth_weight_by_group.csv"), sheet="Plant data"
    )
    table.notes.append(
        DataNote("Plant data", "A5", "weight", "n/a", NoteKind.MISSING_MARKER, "skipped")
    )
    for model in report.build_sheets(
        [anova_result(), crosstab_result(), gof_result(), welch_result()], table, context()
    ):
        assert {cell.style for cell in model.cells.values()} <= set(STYLES), model.kind


# ---------------------------------------------------------------- shape sheet


def test_shape_block_has_group_table_and_spread_check() -> None:
    """The per-group table holds each group's summaries and the spread check its statistic and p."""
    model = report.shape_sheet([anova_result()], context())
    row = find_row(model, 0, "trt1")
    values = plant_growth()["trt1"]
    assert model.cells[(row, 1)].value == 10
    assert model.cells[(row, 1)].is_count
    assert model.cells[(row, 2)].value == pytest.approx(
        4.661
    )  # R: mean(PlantGrowth$weight[group == "trt1"])
    assert model.cells[(row, 3)].value == pytest.approx(0.7936756964347033)  # R: sd(...)
    assert model.cells[(row, 8)].value == values.max()
    spread = find_row(model, 0, "Spread check")
    assert model.cells[(spread, 1)].value == "Brown-Forsythe"
    assert (
        model.cells[(spread, 4)].value == 1.1191856948703909
    )  # R 4.2.2 r_cases.json brown_forsythe_median
    assert model.cells[(spread, 6)].value == 0.3412266241254738
    # the group's n reveals, and is revealed by, its summaries: all are listed as dependents
    assert (row, 2) in model.count_dependents[(row, 1)]
    lines = [cell.value for (r, c), cell in model.cells.items() if c == 0 and cell.style == "wrap"]
    assert "One-way ANOVA (two-sided), 30 records used." in lines


def test_histogram_uses_shared_bins_and_counts_every_value() -> None:
    """Histogram counts per group use one set of edges and add up to each group's n."""
    model = report.shape_sheet([anova_result()], context())
    chart = next(c for c in model.charts if c.kind == "column")
    samples = plant_growth()
    edges = report.bin_edges(np.concatenate(list(samples.values())))
    assert shapes.MIN_BINS <= len(edges) - 1 <= shapes.MAX_BINS
    first, last = chart.categories.replace("$", "").split(":")
    assert "!" not in chart.categories
    labels = [cell_at(model, f"A{r}").value for r in range(int(first[1:]), int(last[1:]) + 1)]
    assert len(labels) == len(edges) - 1
    assert labels[0].startswith(explain.fmt_number(edges[0], 2))
    for series in chart.series:
        start, end = series.values.replace("$", "").split(":")
        col = "".join(ch for ch in start if ch.isalpha())
        counts = [
            cell_at(model, f"{col}{r}").value
            for r in range(int(start[len(col) :]), int(end[len(col) :]) + 1)
        ]
        expected, _ = np.histogram(samples[series.name], bins=edges)
        assert counts == expected.tolist()
        assert sum(counts) == len(samples[series.name])
    # The chart sits in column B under the bin table it draws, in rows of its own.
    assert chart.anchor.startswith("B")
    assert int(chart.anchor[1:]) > int(last[1:])


def test_bin_edges_follow_numpy_auto_within_limits() -> None:
    """Bin edges span the data with NumPy's 'auto' count held to 8..15 bins."""
    weights = np.concatenate(list(plant_growth().values()))  # PlantGrowth (R datasets)
    edges = report.bin_edges(weights)
    auto = len(np.histogram_bin_edges(weights, bins="auto")) - 1
    assert len(edges) - 1 == min(shapes.MAX_BINS, max(shapes.MIN_BINS, auto))
    assert edges[0] == weights.min() and edges[-1] == weights.max()
    many = np.random.default_rng(20261202).normal(size=5000)  # seeded, invented
    assert len(report.bin_edges(many)) - 1 == shapes.MAX_BINS
    assert report.bin_edges([3.0, 3.0]).tolist() == [2.5, 3.5]


def test_crosstab_block_has_totals_expected_counts_and_bars() -> None:
    """A two-categorical block shows observed counts with totals, expected counts and 100% bars."""
    model = report.shape_sheet([crosstab_result()], context())
    top = find_row(model, 0, "Observed counts") + 1
    # R 4.2.2 table(mtcars$cyl, mtcars$gear): row 8 = 12, 0, 2; column totals 15, 12, 5; n = 32
    assert [model.cells[(top + 3, c)].value for c in range(5)] == ["8", 12, 0, 2, 14]
    assert [model.cells[(top + 4, c)].value for c in range(5)] == ["Total", 15, 12, 5, 32]
    assert all(model.cells[(top + 3, c)].is_count for c in range(1, 5))
    expected_top = find_row(model, 0, "Expected counts if the two were unrelated") + 1
    assert (
        model.cells[(expected_top + 2, 3)].value == 1.09375
    )  # R: chisq.test(...)$expected["6", "5"]
    chart = next(c for c in model.charts if c.kind == "percent_bar")
    assert [s.name for s in chart.series] == ["3", "4", "5"]
    assert chart.categories == f"$A${top + 2}:$A${top + 4}"
    assert len(model.count_sets) == 3 + 3 + 2  # each row, each column, and the two margins


def test_goodness_of_fit_block_has_counts_shares_and_bars() -> None:
    """A one-sample categorical block lists counts, shares, stated shares and expected counts."""
    model = report.shape_sheet([gof_result()], context())
    row = find_row(model, 0, "8")
    # R 4.2.2: chisq.test(table(mtcars$cyl), p = c(.25, .25, .5)) expected = 8, 8, 16
    assert [model.cells[(row, c)].value for c in range(5)] == ["8", 14, 14 / 32, 0.5, 16.0]
    total = find_row(model, 0, "Total")
    assert model.cells[(total, 1)].value == 32
    assert any(c.kind == "percent_bar" for c in model.charts)


def test_blocks_leave_room_for_charts() -> None:
    """Charts of one block never reach into the next block."""
    results = [anova_result(), crosstab_result(), gof_result()]
    model = report.shape_sheet(results, context())
    starts = sorted(int(model.anchors[f"analysis_{i}"][1:]) for i in range(len(results)))
    for chart in model.charts:
        top = int(chart.anchor[1:])
        later = [s for s in starts if s > top]
        if later:
            assert top + chart.height_rows <= later[0]


def test_two_measures_get_one_histogram_each() -> None:
    """A correlation shows each variable's own histogram (they have different units)."""
    frame = pd.read_csv(DATA / "mtcars_mpg_vs_wt.csv")  # mtcars (R datasets)
    result = Result(
        outcome="mpg",
        exposure="wt",
        design="two_continuous",
        test="pearson_r",
        n=32,
        p_value=1.2939587013505163e-10,  # R 4.2.2 cor.test(mtcars$mpg, mtcars$wt)
        estimate=Estimate(EstimateKind.PEARSON_R, -0.8676593765172278, -0.9338264132849942, -0.7440871964601128
        ),
    )
    samples = {("mpg", "wt", ""): {"mpg": frame["mpg"].tolist(), "wt": frame["wt"].tolist()}}
    model = report.shape_sheet([result], context(samples=samples))
    assert [c.title for c in model.charts] == ["mpg: distribution", "wt: distribution"]


# ---------------------------------------------------------------- notes and log


def test_notes_sheet_links_each_note_to_its_cell() -> None:
    """Every data note is listed with a quoted link to the offending cell."""
    notes = [
        DataNote("Site visits", "C17", "Wait (minutes)", "n/a", NoteKind.MISSING_MARKER, "skipped"),
        DataNote("O'Brien data", "D4", "Count", "<5", NoteKind.SUPPRESSED, "skipped"),
    ]
    model = report.notes_sheet(notes, ["2 pairs were incomplete and left out."], context())
    row = find_row(model, 1, "C17")
    assert model.cells[(row, 1)].link == "'Site visits'!C17"
    assert [model.cells[(row, c)].value for c in (0, 2, 3, 4, 5)] == [
        "Site visits",
        "Wait (minutes)",
        "n/a",
        "missing marker",
        "skipped",
    ]
    assert model.cells[(find_row(model, 1, "D4"), 1)].link == "'O''Brien data'!D4"
    assert find_row(model, 0, "2 pairs were incomplete and left out.") > row
    assert model.kind == "notes"


@pytest.mark.parametrize("kind", list(NoteKind))
def test_every_kind_of_note_has_its_own_words(kind: NoteKind) -> None:
    """Each kind of data note shows words of its own in the notes sheet's "What was wrong" column."""
    note = DataNote("Site visits", "C17", "Wait (minutes)", "x", kind, "skipped")
    model = report.notes_sheet([note], [], context())
    shown = model.cells[(find_row(model, 1, "C17"), 4)].value
    others = {notes_words.kind_words(k) for k in NoteKind if k is not kind}
    assert shown == notes_words.kind_words(kind) and shown not in others


def test_log_sheet_keeps_previous_runs_and_adds_this_one() -> None:
    """The log lists earlier runs (as read back) and appends this run's row."""
    previous = [
        [
            "2026-12-01T10:00:00Z",
            "0.1.0",
            "plants.xlsx",
            "Plant data",
            "confidence 0.95",
            30,
            30,
            1,
            "old",
        ]
    ]
    info = report.run_info(context(), [anova_result(), welch_result()])
    model = report.log_sheet(previous, info)
    top = find_row(model, 0, "Time (UTC)")
    assert model.cells[(top + 1, 8)].value == "old"
    this_run = [model.cells[(top + 2, c)].value for c in range(9)]
    assert this_run == [
        "2026-12-02T03:00:00Z",
        "0.1.0",
        "plants.xlsx",
        "Plant data",
        "confidence 0.95; adjustment holm; two-sided; alpha 0.05",
        30,
        30,
        2,
        "abc123",
    ]
    assert model.kind == "log"


def test_build_sheets_returns_the_four_kinds() -> None:
    """One call builds results, shape, notes and log sheets with their preferred names."""
    models = report.build_sheets([anova_result()], context=context())
    assert [m.kind for m in models] == ["results", "shape", "notes", "log"]
    assert [m.name for m in models] == [report.SHEET_NAMES[m.kind] for m in models]


def test_context_settings_reach_the_readings() -> None:
    """Readings written by the report use the run's settings (here a 90% interval)."""
    result = welch_result()
    result.confidence = 0.90
    model = report.results_sheet([result], context(settings=Settings(confidence=0.90)))
    row = header_row(model) + 1
    assert "(90% CI" in model.cells[(row, report.COL["Reading"])].value


# ---------------------------------------------------------------- run context, log and engine formats


def test_context_from_run_fills_from_the_table() -> None:
    """from_run takes sheet, rows, letters, units and fingerprint from the table, histograms from the samples."""
    frame = pd.read_csv(DATA / "plantgrowth_weight_by_group.csv")  # PlantGrowth (R datasets)
    table = Table.from_frame(frame, sheet="Plant data")
    table.columns["weight"].units = "g"
    table.fingerprint = "f00d"
    [answer] = run_answers(table, build_plan(["weight"], ["group"]))
    result = answer.result
    made = ReportContext.from_run(
        workbook="plants.xlsx", table=table, results=[result], samples=[answer.prepared.samples],
        started=RUN_TIME, share_min_count=5,
    )
    assert (made.data_sheet, made.rows_read, made.rows_used) == ("Plant data", 30, 30)
    assert made.units == {"weight": "g"} and made.column_letters == {"weight": "A", "group": "B"}
    assert made.share_mode and made.share_min_count == 5 and made.fingerprint == "f00d"
    samples = made.samples[report.analysis_key(result)]
    assert {k: len(v) for k, v in samples.items()} == {"ctrl": 10, "trt1": 10, "trt2": 10}
    off = ReportContext.from_run(workbook="plants.xlsx", table=table, results=[result])
    assert not off.share_mode


def test_samples_follow_the_design() -> None:
    """Histogram values from each design: one sample, groups by their labels, none for a table."""
    frame = pd.read_csv(DATA / "mtcars_cyl_by_gear.csv")  # mtcars (R datasets)
    table = Table.from_frame(frame, sheet="cars")
    plan = build_plan(["mpg"], against={"mpg": "20"})
    [one] = run_answers(table, plan)
    assert len(one.prepared.samples["mpg"]) == 32
    [by_gear] = run_answers(table, build_plan(["mpg"], ["gear"], treat={"gear": (MeasureType.CATEGORICAL, None)}))
    counts = {k: len(v) for k, v in by_gear.prepared.samples.items()}
    assert counts == {"3": 15, "4": 12, "5": 5}  # R: table(mtcars$gear)
    [crosstab] = run_answers(table, build_plan(["cyl"], ["gear"]))
    assert crosstab.prepared.samples == {}


def test_parse_log_rows_reads_back_a_written_log() -> None:
    """A log sheet read back as raw rows gives the earlier runs' rows again, in order."""
    first = report.log_sheet([], report.run_info(context(), [anova_result()]))
    grid = [
        [first.cells.get((r, c), None) and first.cells[(r, c)].value for c in range(first.n_cols)]
        for r in range(first.n_rows)
    ]
    grid.append([None] * first.n_cols)  # a trailing blank row is ignored
    rows = report.parse_log_rows(grid)
    assert rows == [
        [
            "2026-12-02T03:00:00Z",
            "0.1.0",
            "plants.xlsx",
            "Plant data",
            "confidence 0.95; adjustment holm; two-sided; alpha 0.05",
            30,
            30,
            1,
            "abc123",
        ]
    ]
    second = report.log_sheet(rows, report.run_info(context(), []))
    assert (
        len(
            report.parse_log_rows(
                [
                    [second.cells.get((r, c)) and second.cells[(r, c)].value for c in range(9)]
                    for r in range(second.n_rows)
                ]
            )
        )
        == 2
    )


def test_engine_style_summaries_are_shown() -> None:
    """Shape summaries named as the engine names them (check, check_p, n_outliers, verdict) fill the table."""
    result = welch_result()
    result.groups = [
        {
            "label": "1",
            "n": 10,
            "mean": 0.75,
            "check": "shapiro_wilk",
            "check_p": 0.4,
            "n_outliers": 1,
            "verdict": "close to normal (Shapiro-Wilk p = 0.40)",
        },
        {
            "label": "2",
            "n": 10,
            "mean": 2.33,
            "check": "too_few",
            "check_p": None,
            "n_outliers": 0,
            "verdict": "x",
        },
    ]
    result.shape = {
        "spread": {"name": "Brown-Forsythe", "statistic": 1.2, "df": [1, 18], "p_value": 0.29}
    }
    model = report.shape_sheet([result], context(samples={}))
    row = find_row(model, 0, "1")
    second = min(
        r for (r, c), cell in model.cells.items() if c == 0 and cell.value == "1" and r > row
    )
    values, positions = {}, {}
    for part, at in zip(shapes.GROUP_TABLE_PARTS, (row, second), strict=True):
        for c, header in enumerate(part, start=1):
            values[header] = model.cells[(at, c)].value
            positions[header] = (at, c)
    assert set(values) == {h for h, _, _ in shapes.GROUP_COLUMNS}
    assert values["Normality check"] == "Shapiro-Wilk"
    assert values["Normality p"] == 0.4
    assert (
        values["Outliers (1.5 IQR)"] == 1 and model.cells[positions["Outliers (1.5 IQR)"]].is_count
    )
    # The n cell lists every summary of its group, in both parts, as revealing it.
    assert positions["Outliers (1.5 IQR)"] in model.count_dependents[positions["n"]]
    assert values["Shape"] == "close to normal (Shapiro-Wilk p = 0.40)"
    spread = find_row(model, 0, "Spread check")
    assert model.cells[(spread, 1)].value == "Brown-Forsythe"


def test_crosstab_from_engine_counts_entry() -> None:
    """A table kept under shape["counts"] (rows = compare-by groups) is drawn like one in extra."""
    result = crosstab_result()
    observed = result.extra.pop("observed")
    result.shape = {
        "counts": {
            "observed": observed["values"],
            "row_labels": observed["row_labels"],
            "col_labels": observed["col_labels"],
            "expected": result.shape["expected"],
            "min_expected": 1.09375,
        }
    }
    model = report.shape_sheet([result], context())
    top = find_row(model, 0, "Observed counts") + 1
    assert [model.cells[(top + 1, c)].value for c in range(5)] == [
        "4",
        1,
        8,
        2,
        11,
    ]  # R: table(cyl, gear)
    assert find_row(model, 0, "Expected counts if the two were unrelated") > top


def test_incomplete_pairs_reach_the_notes_sheet() -> None:
    """Pairs left out by the engine are named on the data-notes sheet."""
    paired = Result(
        outcome="Weight",
        exposure="Visit",
        design="paired_continuous",
        test="paired_t",
        pairing="Client",
        n=12,
        extra={"incomplete_pairs": ["C07", "C19"]},
    )  # invented
    notes = report.build_sheets([paired], context=context(samples={}))[2]
    texts = [cell.value for cell in notes.cells.values()]
    assert (
        "2 incomplete pairs by Client were left out of the analysis (one of the two "
        "measurements of Weight was missing)."
    ) in texts


def test_sheets_from_the_engine_on_r_data() -> None:
    """End to end on PlantGrowth: the engine's results become linked, charted sheets."""
    from statmargin.words.explain import apply

    table = Table.from_frame(
        pd.read_csv(DATA / "plantgrowth_weight_by_group.csv"), sheet="Plant data"
    )
    answers = run_answers(table, build_plan(["weight"], ["group"]))
    results = apply([a.result for a in answers], Settings())
    made = ReportContext.from_run(
        workbook="plants.xlsx", table=table, results=results,
        samples=[a.prepared.samples for a in answers], started=RUN_TIME,
    )
    models = report.build_sheets(results, table, made)
    results_model, shape = models[0], models[1]
    row = header_row(results_model) + 1
    # SciPy: stats.alexandergovern on PlantGrowth's three groups, A = 8.328463126814757
    assert results_model.cells[(row, report.COL["Statistic value"])].value == pytest.approx(
        8.328463126814757, rel=1e-9
    )
    assert results_model.cells[(row, report.COL["Test"])].value == "Alexander-Govern test"
    assert results_model.cells[(row + 3, report.COL["Question"])].value == "  trt2 vs trt1"
    assert [c.kind for c in shape.charts] == ["column"]
    spread = find_row(shape, 1, "Brown-Forsythe")
    # R 4.2.2 r_cases.json brown_forsythe_median: p = 0.3412266241254738
    assert shape.cells[(spread, 6)].value == pytest.approx(0.3412266241254738, rel=1e-9)


# ---------------------------------------------------------------- layout for reading and printing


def test_results_columns_put_plain_words_first() -> None:
    """Question, Reading, Cautions and Since last run come first; every technical column follows, none dropped."""
    names = [name for name, _ in report.RESULT_COLUMNS]
    assert names[:4] == ["Question", "Reading", "Cautions", "Since last run"]
    assert set(names[4:]) == {
        "Outcome",
        "Compared by / against",
        "n used",
        "n excluded",
        "Test",
        "Why this test",
        "Statistic",
        "Statistic value",
        "df",
        "p",
        "Adjusted p",
        "How p was found",
        "Estimate",
        "Estimate value",
        "CI low",
        "CI high",
        "Effect size",
        "Effect value",
        "Effect CI low",
        "Effect CI high",
        "Details",
    }
    assert names.index("p") < names.index("Adjusted p") < names.index("Estimate")


def test_results_sheet_prints_plain_columns_on_their_own_pages() -> None:
    """The results sheet prints landscape with a column break right after Since last run."""
    model = report.results_sheet([anova_result(), welch_result()], context())
    assert model.landscape and not model.fit_to_width and model.page_numbers
    assert model.print_scale == report.RESULT_PRINT_SCALE
    assert model.column_breaks[0] == report.COL["Since last run"] + 1
    assert model.column_breaks == list(report.RESULT_PAGE_BREAKS)
    assert model.column_breaks == sorted(model.column_breaks)
    # Each printed page holds at most 122 width units: at the print scale that fits a
    # Letter landscape page inside default margins even with a wider substitute font
    # (our measurement with LibreOffice: about 9.3 px per unit at 96 dpi).
    edges = [0, *model.column_breaks, len(report.RESULT_COLUMNS)]
    for start, stop in zip(edges[:-1], edges[1:], strict=True):
        width = sum(model.widths[c] for c in range(start, stop))
        inches = (9.3 * width + 5 * (stop - start)) / 96 * model.print_scale / 100
        assert inches <= 11 - 2 * 0.7, (start, stop)


def test_run_wide_cautions_are_stated_once_above_the_table() -> None:
    """The review, routine-records and several-comparisons lines sit once above the table, merged and in caution style."""
    results = [anova_result(), welch_result()]
    explain.apply(results, Settings(), context())
    model = report.results_sheet(results, context())
    top = header_row(model)
    heading = find_row(model, 0, results_text.KEEP_IN_MIND)
    assert heading < top
    above = [model.cells[(r, 0)] for r in range(heading + 1, heading + 4)]
    assert [cell.value for cell in above] == [
        explain.REVIEW_LINE,
        explain.OBSERVATIONAL_LINE,
        explain.MULTIPLE_LINE.format(count=2, method="Holm"),
    ]
    assert all(cell.style == "caution" for cell in above)
    for r in range(heading, heading + 4):
        assert f"A{r + 1}:D{r + 1}" in model.merged
    # Not repeated on any row, but every Result keeps its full list.
    row_texts = [
        cell.value
        for (r, c), cell in model.cells.items()
        if r > top and c == report.COL["Cautions"] and isinstance(cell.value, str)
    ]
    for line in above:
        assert not any(line.value in text for text in row_texts)
    for result in results:
        assert result.cautions[-1] == explain.REVIEW_LINE
        assert explain.OBSERVATIONAL_LINE in result.cautions


def test_row_cautions_keep_what_is_specific_to_the_row() -> None:
    """A row keeps its own cautions (a small group), and a row with none says so plainly."""
    small = welch_result()
    small.groups = [{"label": "1", "n": 4, "mean": 0.75}, {"label": "2", "n": 16, "mean": 2.33}]
    results = [small, anova_result()]
    explain.apply(results, Settings(), context())
    model = report.results_sheet(results, context())
    top = header_row(model)
    first = model.cells[(top + 1, report.COL["Cautions"])].value
    assert cautions.SMALL_GROUPS_LINE.format(limit=cautions.SMALL_GROUP_LIMIT) in first
    assert explain.REVIEW_LINE not in first
    assert model.cells[(top + 1, report.COL["Cautions"])].style == "wrap"


def test_answer_block_opens_the_sheet() -> None:
    """Before the table, one line per question says what the data show, the size and the evidence."""
    skipped = skipped_wait_by_district(coded(Skip.FEWER_THAN_TWO_GROUPS, by="District", level="South"), n=3)
    model = report.results_sheet([anova_result(), welch_result(), skipped], context())
    block = find_row(model, 0, results_text.ANSWER_HEADERS[0])
    assert block < header_row(model)
    # R 4.2.2 PlantGrowth group means 5.032, 4.661, 5.526 (g)
    assert model.cells[(block + 1, 1)].value == "Mean weight: ctrl 5.03, trt1 4.66, trt2 5.53 g."
    assert "moderate evidence (p = 0.032 after allowing for the 2 questions" in model.cells[(block + 1, 2)].value.lower()
    # R 4.2.2 t.test(extra ~ group, sleep): 2 - 1 = 1.58 hours, 95% CI -0.21 to 3.37
    assert model.cells[(block + 2, 2)].value.startswith("1.58 (95% CI -0.21 to 3.37)")
    assert model.cells[(block + 3, 1)].value.startswith("Not run: District has fewer than two groups")
    assert model.cells[(2, 0)].value == "2 answered; 1 question could not be run (the reason is beside each)."


def test_shape_sheet_fits_a_portrait_page_and_charts_sit_clear_of_text() -> None:
    """The shape sheet prints portrait at page width; each chart sits in empty rows under its block."""
    results = [anova_result(), crosstab_result(), gof_result()]
    model = report.shape_sheet(results, context())
    assert model.fit_to_width and not model.landscape and model.page_numbers
    assert max(c for _, c in model.cells) <= shapes.SHAPE_LAST_COL
    starts = sorted(int(model.anchors[f"analysis_{i}"][1:]) - 1 for i in range(len(results)))
    spans = []
    for chart in model.charts:
        row, col = (int(chart.anchor[1:]) - 1, column_index(chart.anchor[0]))
        assert col + chart.width_cells - 1 <= shapes.SHAPE_LAST_COL
        rows = range(row, row + chart.height_rows)
        covered = [
            (r, c) for (r, c) in model.cells if r in rows and col <= c < col + chart.width_cells
        ]
        assert covered == [], chart.title
        block = max(s for s in starts if s <= row)  # the block the chart belongs to
        assert all(s > row + chart.height_rows or s <= block for s in starts)
        spans.append(rows)
    for a, b in zip(spans, spans[1:], strict=False):
        assert a.stop <= b.start  # no two charts overlap


def test_notes_and_log_sheets_fit_the_page_width() -> None:
    """The data notes print portrait at page width with long sentences merged and wrapped; the log landscape."""
    note = DataNote("Plant data", "B7", "weight", "n/a", NoteKind.MISSING_MARKER, "skipped")
    notes = report.notes_sheet([note], ["An invented note that is long enough to wrap."], context())
    assert notes.fit_to_width and not notes.landscape
    other = find_row(notes, 0, "An invented note that is long enough to wrap.")
    assert f"A{other + 1}:F{other + 1}" in notes.merged
    assert notes.cells[(other, 0)].style == "wrap"
    log = report.log_sheet([], report.run_info(context(), []))
    assert log.fit_to_width and log.landscape


def test_results_print_the_answer_block_apart_from_the_technical_columns() -> None:
    """The plain columns print from the top (answer block first); the technical ones from the table header only."""
    from statmargin.sheets.layout import print_area

    model = report.results_sheet([anova_result(), welch_result()], context())
    header = model.print_title_rows[0]
    plain, technical = model.print_areas
    col = results_layout.COL
    assert plain[:2] == (0, 0) and plain[3] == col["Outcome"] - 1
    assert technical[:2] == (header, col["Outcome"]) and technical[3] == len(results_layout.RESULT_COLUMNS) - 1
    assert plain[2] == technical[2] >= header + 2  # both end at the last row of the table
    assert print_area(model, "r").startswith("'r'!$A$1:$D$")
