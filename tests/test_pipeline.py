"""The two workbook jobs through the Python API: plan_workbook and run_workbook.

Numbers are checked against R 4.2.2 (tests/reference/r_cases.json, values
from the R datasets package ``sleep`` and ``PlantGrowth``); the workbooks are
those data sets written to .xlsx here, plus a few invented rows where a check
needs incomplete pairs or an added column (said where it happens).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import xlsxwriter

from reference_cases import assert_close, load_case
from statmargin.errors import ColumnNotFoundError, OptionError, RoleError
from statmargin.io.file.source import FileSource
from statmargin.jobs.workbook import plan_workbook, read_roles, run_workbook
from statmargin.plan.roles_sheet import STATUS_MISSING, STATUS_NEW
from statmargin.vocabulary import Role
from workbook_edit import results_records, set_cells, set_roles, sheet_rows, table_records

RTOL = 1e-9
# Every job runs through the file back end and again through the in-memory one (conftest).
pytestmark = pytest.mark.usefixtures("pipeline_backend")


def _write(path: Path, headers: list[str], rows: list[list[object]], sheet: str = "Data") -> Path:
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet(sheet)
    ws.write_row(0, 0, headers)
    for r, row in enumerate(rows, start=1):
        for c, value in enumerate(row):
            if value is None:
                continue
            if isinstance(value, str):
                ws.write_string(r, c, value)
            else:
                ws.write_number(r, c, value)
    book.close()
    return path


def sleep_wide(path: Path, *, extra_rows: list[list[object]] = ()) -> Path:
    """R's sleep data in wide form (one row per ID, drug 1 and drug 2 side by side)."""
    _, frame = load_case("sleep_extra_paired")
    first = frame[frame["group"] == "1"].set_index("ID")["extra"]
    second = frame[frame["group"] == "2"].set_index("ID")["extra"]
    rows = [[f"P{int(i):02d}", float(first[i]), float(second[i])] for i in first.index]
    return _write(path, ["ID", "Drug 1 extra", "Drug 2 extra"], rows + list(extra_rows))


def sleep_long(path: Path) -> Path:
    """R's sleep data in long form (extra, group, ID) exactly as in the reference CSV."""
    _, frame = load_case("sleep_extra_paired")
    rows = [[float(r.extra), f"drug {r.group}", f"P{int(r.ID):02d}"] for r in frame.itertuples()]
    return _write(path, ["extra", "group", "ID"], rows)


def plant_growth(path: Path) -> Path:
    """R's PlantGrowth data (weight by group)."""
    _, frame = load_case("plantgrowth_weight_by_group")
    return _write(path, ["weight", "group"], [[float(r.weight), str(r.group)] for r in frame.itertuples()])


class TestWideFormPairs:
    def test_paired_t_matches_r_with_incomplete_pairs_listed(self, tmp_path) -> None:
        """Two columns paired by preset give R's paired t; two invented half-empty rows are listed as incomplete."""
        # Two invented extra rows, each with one half of the pair missing.
        path = sleep_wide(tmp_path / "sleep.xlsx", extra_rows=[["X01", 1.5, None], ["X02", None, 0.4]])
        plan_workbook(path, outcome=["Drug 1 extra"], paired_with={"Drug 1 extra": "Drug 2 extra"},
                      shape={"Drug 1 extra": "assume normal"})
        summary = run_workbook(path)
        (result,) = summary.results
        case, _ = load_case("sleep_extra_paired")
        ref = case["tests"]["t_test_paired"]
        assert result.test == "paired_t"
        # R 4.2.2: t.test(x1, x2, paired = TRUE) on datasets::sleep
        assert_close(result.statistic, ref["statistic"], rel=RTOL, context="t")
        assert result.df == pytest.approx(ref["df"][0])
        assert_close(result.p_value, ref["p_value"], rel=1e-7, context="p")
        assert_close(result.estimate.value, ref["estimate"]["mean difference"], rel=RTOL, context="mean diff")
        assert_close(result.estimate.ci_low, ref["conf_int"][0], rel=RTOL, context="CI low")
        assert_close(result.estimate.ci_high, ref["conf_int"][1], rel=RTOL, context="CI high")
        assert result.n == 10 and result.n_excluded == 2
        assert result.extra["incomplete_pairs"] == ["row 12", "row 13"]
        notes = " ".join(str(c) for row in sheet_rows(path, summary.write.sheets["notes"]) for c in row)
        assert "2 incomplete pairs" in notes

    def test_single_analysis_is_not_adjusted(self, tmp_path) -> None:
        """With one analysis in the run, the adjusted p equals the raw p (Holm with m = 1)."""
        path = sleep_wide(tmp_path / "sleep.xlsx")
        plan_workbook(path, outcome=["Drug 1 extra"], paired_with={"Drug 1 extra": "Drug 2 extra"})
        (result,) = run_workbook(path).results
        assert result.p_adjusted == result.p_value


class TestLongFormPairs:
    def test_pairing_key_matches_r(self, tmp_path) -> None:
        """Outcome by group with ID as pairing key gives R's paired t (group 1 minus group 2)."""
        path = sleep_long(tmp_path / "sleep_long.xlsx")
        plan_workbook(path, outcome=["extra"], by=["group"], pairing_key="ID", shape={"extra": "assume normal"})
        (result,) = run_workbook(path).results
        ref = load_case("sleep_extra_paired")[0]["tests"]["t_test_paired"]
        assert result.design == "paired_continuous" and result.pairing == "ID"
        # R 4.2.2: t.test(x1, x2, paired = TRUE); the sign follows the condition order.
        assert_close(abs(result.statistic), abs(ref["statistic"]), rel=RTOL, context="t")
        assert_close(result.p_value, ref["p_value"], rel=1e-7, context="p")
        assert result.extra["incomplete_pairs"] == []


class TestPlanKeepsChoices:
    def test_replan_keeps_roles_and_flags_new_and_missing(self, tmp_path) -> None:
        """Re-planning keeps the user's roles, flags an added column as new and a renamed one as gone."""
        path = plant_growth(tmp_path / "plants.xlsx")
        plan_workbook(path)
        set_roles(path, {"weight": {"Role": "outcome"}, "group": {"Role": "compare by"}})
        # The user adds a column (invented batch labels) to the data sheet and re-plans.
        set_cells(path, "Data", {"C1": "batch", **{f"C{r}": f"b{r % 2}" for r in range(2, 32)}})
        summary = plan_workbook(path)
        assert summary.new_columns == ["batch"]
        roles = {c.name: c.role for c in read_roles(FileSource(path)).plan.columns}
        assert roles == {"weight": Role.OUTCOME, "group": Role.COMPARE_BY, "batch": Role.IGNORE}
        rows = table_records(sheet_rows(path, "statmargin roles"), "Column")
        assert {r["Column"]: r["Status"] for r in rows}["batch"] == STATUS_NEW
        # Then renames the outcome's header: the old row stays, flagged, and run refuses.
        set_cells(path, "Data", {"A1": "dry weight"})
        summary = plan_workbook(path)
        assert summary.missing_columns == ["weight"]
        rows = table_records(sheet_rows(path, "statmargin roles"), "Column")
        assert {r["Column"]: r["Status"] for r in rows}["weight"] == STATUS_MISSING
        with pytest.raises(RoleError, match="no longer in the data"):
            run_workbook(path)

    def test_presets_override_and_unknown_column_is_refused(self, tmp_path) -> None:
        """Presets set roles on named columns; a misspelt name raises ColumnNotFoundError and writes nothing."""
        path = plant_growth(tmp_path / "plants.xlsx")
        before = path.read_bytes()
        with pytest.raises(ColumnNotFoundError, match="weight"):
            plan_workbook(path, outcome=["weigth"])
        assert path.read_bytes() == before
        with pytest.raises(OptionError, match="--treat"):
            plan_workbook(path, outcome=["weight"], treat={"weight": "numberish"})
        assert path.read_bytes() == before


class TestRunOnReferenceData:
    def test_anova_matches_r_and_sheet(self, tmp_path) -> None:
        """PlantGrowth weight by group (normal shape assumed) matches SciPy's Alexander-Govern and is on the sheet."""
        from scipy import stats

        from statmargin.stats.multigroup import alexander_govern_permutation_p

        path = plant_growth(tmp_path / "plants.xlsx")
        plan_workbook(path, outcome=["weight"], by=["group"], shape={"weight": "assume normal"})
        summary = run_workbook(path)
        (result,) = summary.results
        _, frame = load_case("plantgrowth_weight_by_group")
        check = stats.alexandergovern(*[frame.weight[frame.group == g] for g in ("ctrl", "trt1", "trt2")])
        assert result.test == "alexander_govern"
        assert_close(result.statistic, float(check.statistic), rel=RTOL, context="A")
        groups = [frame.weight[frame.group == g].to_numpy() for g in ("ctrl", "trt1", "trt2")]
        # Groups of 10: the seeded permutation p, within Monte Carlo error of SciPy's chi-square p.
        assert result.p_value == alexander_govern_permutation_p(groups, float(check.statistic))
        assert abs(result.p_value - float(check.pvalue)) < 3 * math.sqrt(check.pvalue * (1 - check.pvalue) / 4000)
        assert result.df == 2.0
        (row,) = [r for r in results_records(path) if r["Outcome"] == "weight"]
        assert row["Statistic value"] == result.statistic and row["p"] == result.p_value
        assert summary.rows_read == 30 and summary.data_sheet == "Data"

    def test_out_copy_and_record(self, tmp_path) -> None:
        """run_workbook(out=...) writes the copy, leaves the input alone and reports the copy's path."""
        path = plant_growth(tmp_path / "plants.xlsx")
        plan_workbook(path, outcome=["weight"], by=["group"])
        before = path.read_bytes()
        summary = run_workbook(path, out=tmp_path / "copy.xlsx")
        assert path.read_bytes() == before
        assert Path(summary.path).name == "copy.xlsx"
        record = summary.to_record()
        assert record["rows_read"] == 30 and len(record["analyses"]) == 1
        assert record["analyses"][0]["p_value"] == summary.results[0].p_value

    def test_progress_messages(self, tmp_path) -> None:
        """The progress callback hears each step (reading, running, writing) and the counts of analyses and follow-ups."""
        path = plant_growth(tmp_path / "plants.xlsx")
        plan_workbook(path, outcome=["weight"], by=["group"])
        steps: list[str] = []
        counts: list[tuple[str, int, int]] = []

        def hear(message: str, done: int | None = None, total: int | None = None) -> None:
            if done is None:
                steps.append(message.split()[0])
            else:
                counts.append((message, done, total))

        run_workbook(path, progress=hear)
        assert steps == ["reading", "running", "building", "writing"]
        assert counts == [("reading rows", 30, 30), ("running analyses", 1, 1),
                          ("running follow-up comparisons", 1, 1)]
