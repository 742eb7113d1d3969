"""Sharing mode discloses nothing by accident: regression tests for the leaks a tester found, and checks by design.

The rule under test: with ``--share`` no output (JSON of ``run`` and ``test``,
the sheets, the terminal) shows a count from 1 to 10, or anything that gives
one back. The default threshold of 11 is common practice for small-cell
suppression (for example in public-health data dissemination rules such as the
US Centers for Medicare & Medicaid Services cell-size policy; recalled from
memory); thresholds are local policy, so the tests also run with others.

"Gives one back" is checked independently of the tool's own audit: the shown
cells and totals of a table are taken from the JSON (or the sheet) and a
hidden entry counts as given back when the equations the shown numbers satisfy
fix it, i.e. when its unit vector lies in the row space of the equations
(numpy.linalg.matrix_rank, not the null space the tool uses).

Workbooks are invented (tests/leak_workbooks.py and below).
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st
from python_calamine import CalamineWorkbook

from leak_workbooks import site_visits
from statmargin.cli import main
from statmargin.vocabulary import Design, Test
from workbook_edit import sheet_rows, tool_sheet_name

FLOOR = 11  # common practice (see the module notes)


def invoke(*args: str) -> Any:
    result = CliRunner().invoke(main, list(args), catch_exceptions=False)
    assert result.exit_code == 0, result.output
    return result


@pytest.fixture(scope="module")
def visits(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The tester's workbook, planned: Wait and Seen by Site."""
    book = site_visits(tmp_path_factory.mktemp("visits") / "lk.xlsx")
    invoke("plan", str(book), "--outcome", "Wait", "--outcome", "Seen", "--by", "Site")
    return book


# ---------------------------------------------------------------- independent checks


def given_back(cells: list[list[Any]], row_totals: list[Any], col_totals: list[Any] | None,
               n: Any) -> list[str]:
    """Hidden (None) cells and totals of a table that the shown ones fix: the tester's subtraction, generalised.

    Unknowns are the hidden cells and totals (column totals not published at all
    count as unknowns too); the equations are each row and column adding up to
    its total and the totals adding up to n.
    """
    n_rows, n_cols = len(cells), len(cells[0])
    cols = col_totals if col_totals is not None else [None] * n_cols
    names: list[str] = []
    index: dict[tuple[str, int, int], int] = {}

    def var(kind: str, i: int, j: int = 0) -> int:
        key = (kind, i, j)
        if key not in index:
            index[key] = len(names)
            names.append(f"{kind}[{i},{j}]" if kind == "cell" else f"{kind}[{i}]")
        return index[key]

    def term(kind: str, value: Any, i: int, j: int = 0) -> tuple[int | None, float]:
        return (var(kind, i, j), 0.0) if value is None else (None, float(value))

    equations: list[tuple[list[tuple[int, float]], float]] = []

    def add(members: list[tuple[int | None, float]], total: tuple[int | None, float]) -> None:
        coefficients = [(v, 1.0) for v, _ in members if v is not None]
        right = -sum(value for v, value in members if v is None)
        if total[0] is not None:
            coefficients.append((total[0], -1.0))
        else:
            right += total[1]
        equations.append((coefficients, right))

    for i in range(n_rows):
        add([term("cell", cells[i][j], i, j) for j in range(n_cols)], term("row", row_totals[i], i))
    for j in range(n_cols):
        add([term("cell", cells[i][j], i, j) for i in range(n_rows)], term("col", cols[j], j))
    add([term("row", row_totals[i], i) for i in range(n_rows)], term("n", n, 0))
    add([term("col", cols[j], j) for j in range(n_cols)], term("n", n, 0))
    if not names:
        return []
    matrix = np.zeros((len(equations), len(names)))
    for r, (coefficients, _) in enumerate(equations):
        for v, c in coefficients:
            matrix[r, v] += c
    rank = np.linalg.matrix_rank(matrix)
    out = []
    for v, name in enumerate(names):
        unit = np.zeros(len(names))
        unit[v] = 1.0
        if np.linalg.matrix_rank(np.vstack([matrix, unit])) == rank and not name.startswith(("col", "n")):
            out.append(name)
    return out


COUNT_KEYS = {"n", "count", "events", "total", "n_excluded", "n_outliers", "discordant_b", "discordant_c"}


def small_counts(value: Any, path: str = "") -> list[str]:
    """Counts from 1 to 10 under count keys (and in count tables) anywhere in a JSON document."""
    found: list[str] = []
    if isinstance(value, dict):
        for key, item in value.items():
            here = f"{path}.{key}"
            if key in COUNT_KEYS and isinstance(item, int) and 0 < item < FLOOR:
                found.append(f"{here}={item}")
            elif key in ("counts", "observed", "values", "row_totals", "col_totals") and (
                isinstance(item, list) or (isinstance(item, dict) and all(
                    v is None or isinstance(v, int) for v in item.values()))):
                flat = list(item.values()) if isinstance(item, dict) else item
                for cell in (c for row in flat for c in (row if isinstance(row, list) else [row])):
                    if isinstance(cell, int) and 0 < cell < FLOOR:
                        found.append(f"{here} holds {cell}")
                found.extend(small_counts(item, here) if isinstance(item, dict) else [])
            else:
                found.extend(small_counts(item, here))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            found.extend(small_counts(item, f"{path}[{i}]"))
    return found


def share_gives_count_back(analysis: dict[str, Any]) -> list[str]:
    """Groups whose hidden count a shown share (with a shown n) gives back: count = share x n."""
    found = []
    for group in analysis.get("groups") or []:
        n = group.get("n", group.get("count", group.get("total")))
        counts, shares = group.get("counts") or {}, group.get("shares") or {}
        for level, count in counts.items():
            if count is None and shares.get(level) is not None and n is not None:
                found.append(f"{group['label']}: share of {level} {shares[level]} with n {n}")
        if n is None and group.get("share") is not None and analysis.get("n") is not None:
            found.append(f"{group['label']}: share of all records with n {analysis['n']}")
        if group.get("events") is None and group.get("rate") is not None and group.get("total") is not None:
            found.append(f"{group['label']}: rate with its total")
    return found


def table_of(analysis: dict[str, Any]) -> tuple[list[list[Any]], list[Any], list[Any] | None, Any] | None:
    """The observed table of a JSON analysis with its row totals (group sizes) and column totals, if any."""
    observed = (analysis.get("extra") or {}).get("observed")
    if not isinstance(observed, dict) or not isinstance(observed.get("values"), list):
        return None
    values = observed["values"]
    if not values or not isinstance(values[0], list):
        return None
    rows = observed.get("row_totals")
    if rows is None:
        sizes = {g["label"]: g.get("n", g.get("count", g.get("total"))) for g in analysis.get("groups") or []}
        rows = [sizes.get(label) for label in observed.get("row_labels", [])]
    return values, rows, observed.get("col_totals"), analysis.get("n")


# Designs whose groups' (or levels', or periods') counts add up to the analysis's n, and the key of that count.
ADDING_UP = {"multi_group_continuous": "n", "two_group_continuous": "n", "period_centre": "n",
             "period_shares": "n", "one_sample_categorical": "count", "group_rates": "events"}


def leaks(document: dict[str, Any]) -> list[str]:
    """Every way the JSON document shows or gives back a small count (empty when it is safe)."""
    found = small_counts(document)
    for analysis in document["analyses"]:
        found += share_gives_count_back(analysis)
        table = table_of(analysis)
        if table is not None:
            found += [f"{analysis['outcome']}: {name}" for name in given_back(*table)]
        key = ADDING_UP.get(analysis["design"])
        sizes = [g.get(key) for g in analysis.get("groups") or [] if key and key in g]
        if sizes and analysis.get("n") is not None and sum(size is None for size in sizes) == 1:
            found.append(f"{analysis['outcome']}: one group's count is n less the others")
        categories = [c.get("count") for c in (analysis.get("extra") or {}).get("categories") or []
                      if isinstance(c, dict)]
        if analysis.get("n") is not None and sum(c is None for c in categories) == 1:
            found.append(f"{analysis['outcome']}: one category's count is n less the other")
    return found


# ---------------------------------------------------------------- 1: test --share --json and the terminal


def test_test_json_gives_no_count_back(visits: Path) -> None:
    """`test --share --json`: no share with n, and no total less a shown count, gives a hidden count back."""
    plain = json.loads(invoke("test", str(visits), "--outcome", "Seen", "--by", "Site", "--json", "-").stdout)
    assert leaks(plain)  # without sharing mode the small counts are there (Harbor's 1, Old Mill's 8)
    shared = json.loads(invoke("test", str(visits), "--outcome", "Seen", "--by", "Site", "--share",
                               "--json", "-").stdout)
    assert leaks(shared) == []
    [seen] = shared["analyses"]
    groups = {g["label"]: g for g in seen["groups"]}
    # The tester's two findings: Harbour's 0.5 and 0.5 with n = 20, and Old Mill's 22 - 14.
    assert groups["Harbour"]["shares"] is None or set(groups["Harbour"]["shares"].values()) == {None}
    assert groups["Old Mill"]["counts"]["No"] is None and groups["Old Mill"]["counts"]["Yes"] is None
    assert groups["Old Mill"]["n"] == 22 and seen["n"] == 43  # shown totals stay shown
    expected = seen["extra"]["expected"]["values"]
    assert all(v is None for row in expected for v in row)  # they add up to Harbor's hidden n of 1


def test_test_terminal_gives_no_count_back(visits: Path) -> None:
    """The terminal summary of `test --share` states no small count and no share of a hidden one."""
    plain = invoke("test", str(visits), "--outcome", "Seen", "--by", "Site").stdout
    # Invented data: Harbor 1 of 1, Harbour 10 of 20, Old Mill 14 of 22 seen; what sharing mode must not say.
    assert "100.0% in Harbor, 50.0% in Harbour, 63.6% in Old Mill" in plain
    shared = invoke("test", str(visits), "--outcome", "Seen", "--by", "Site", "--share").stdout
    for text in ("100.0%", "50.0%", "63.6%", "0.500", "(smallest 0.419)"):
        assert text in plain and text not in shared, text
    # Old Mill's share, however rounded, is 14 of its shown 22: the hidden "No" would be 22 - 14.
    assert "64%" not in shared and "in Old Mill" not in shared
    assert "n = 43 (0 row" in shared
    assert "Some numbers for this analysis are hidden in sharing mode" in shared


# ---------------------------------------------------------------- 2: run --share, the sheets


def crosstab(path: Path) -> dict[str, list[Any]]:
    """The shape-check sheet's observed counts of Seen by Site, rows by label (read with python-calamine)."""
    rows = sheet_rows(path, tool_sheet_name(path, "shape"))
    start = next(i for i, row in enumerate(rows) if row and row[0] == "Observed counts")
    out = {}
    for row in rows[start + 2:]:
        if not row or not row[0]:
            break
        out[str(row[0])] = list(row[1:4])
    return out


def expected_table(path: Path) -> dict[str, list[Any]]:
    rows = sheet_rows(path, tool_sheet_name(path, "shape"))
    start = next(i for i, row in enumerate(rows) if row and row[0] == "Expected counts if the two were unrelated")
    return {str(row[0]): list(row[1:3]) for row in rows[start + 2:start + 5]}


@pytest.fixture(scope="module")
def runs(visits: Path, tmp_path_factory: pytest.TempPathFactory) -> dict[str, Any]:
    """The workbook run plainly and with --share (each to its own copy), with JSON and terminal."""
    folder = tmp_path_factory.mktemp("runs")
    out: dict[str, Any] = {}
    for mode in ("plain", "shared"):
        book = folder / f"{mode}.xlsx"
        extra = ["--share"] if mode == "shared" else []
        terminal = invoke("run", str(visits), "--out", str(book), "--quiet", *extra).stdout
        document = json.loads(invoke("run", str(visits), "--out", str(folder / f"{mode}-json.xlsx"), *extra,
                                     "--json", "-").stdout)
        out[mode] = {"book": book, "terminal": terminal, "json": document}
    return out


def test_run_sheet_totals_are_true_or_hidden(runs: dict[str, Any]) -> None:
    """The observed-counts table never shows a wrong total: every number is the plain run's, hidden ones are marked."""
    plain, shared = crosstab(runs["plain"]["book"]), crosstab(runs["shared"]["book"])
    # Plain run (invented data): Harbor 1 (1 Yes), Harbour 20, Old Mill 22, 43 in all.
    assert plain["Harbor"][2] == 1 and plain["Harbour"][2] == 20 and plain["Total"][2] == 43
    assert shared["Harbor"][2] == "<11" and shared["Harbour"][2] == "suppressed"
    assert shared["Total"][2] == 43 and shared["Old Mill"][2] == 22
    for label, cells in shared.items():
        for mine, true in zip(cells, plain[label], strict=True):
            if isinstance(mine, float):
                assert mine == true, (label, cells, plain[label])  # never a wrong number
                assert not 0 < mine < FLOOR
            else:
                assert mine in ("<11", "suppressed")
    # The shown cells and totals give no hidden one back.
    values = [[c if isinstance(c, float) else None for c in shared[label][:2]] for label in ("Harbor", "Harbour", "Old Mill")]
    totals = [shared[label][2] if isinstance(shared[label][2], float) else None for label in ("Harbor", "Harbour", "Old Mill")]
    columns = [c if isinstance(c, float) else None for c in shared["Total"][:2]]
    assert given_back(values, totals, columns, shared["Total"][2]) == []


def test_run_sheet_hides_expected_counts_of_a_hidden_total(runs: dict[str, Any]) -> None:
    """Harbor's expected counts (0.58 and 0.42) add up to its n of 1: they are hidden with it."""
    plain, shared = expected_table(runs["plain"]["book"]), expected_table(runs["shared"]["book"])
    assert plain["Harbor"][0] == pytest.approx(25 / 43)  # row total 1 x column total 25 / 43
    assert set(v for row in shared.values() for v in row) == {"suppressed"}


def test_run_json_and_terminal_give_no_count_back(runs: dict[str, Any]) -> None:
    """`run --share --json` and the run summary show no small count (the data notes' 2 included)."""
    assert leaks(runs["plain"]["json"])
    assert leaks(runs["shared"]["json"]) == []
    assert runs["plain"]["json"]["data_notes"] == 2 and runs["shared"]["json"]["data_notes"] is None
    assert "2 data notes" in runs["plain"]["terminal"]
    assert "fewer than 11 data notes" in runs["shared"]["terminal"]
    # Three rows are hidden by the sheet's filter (invented workbook).
    assert "3 rows hidden or filtered" in runs["plain"]["terminal"]
    assert "Fewer than 11 rows hidden or filtered" in runs["shared"]["terminal"]
    assert small_counts_in_text(runs["shared"]["terminal"]) == []


def test_run_results_sheet_names_no_single_record(runs: dict[str, Any]) -> None:
    """The skipped question's reason names no cell and no minimum of 2 (either would say Harbor has one row)."""
    rows = sheet_rows(runs["shared"]["book"], tool_sheet_name(runs["shared"]["book"], "results"))
    texts = [str(c) for row in rows for c in row if isinstance(c, str)]
    assert not any("A44" in t or "at least 2" in t for t in texts)
    assert any("has too few values to compare (sharing mode hides how many)" in t for t in texts)
    header = next(t for t in texts if "rows read" in t)
    assert "fewer than 11 of them hidden or filtered" in header  # 3 rows hidden by the filter


def test_run_data_notes_are_counted_not_listed(runs: dict[str, Any]) -> None:
    """In sharing mode the data notes give no cell address or value, and their small counts are hidden."""
    book = runs["shared"]["book"]
    rows = sheet_rows(book, tool_sheet_name(book, "notes"))
    flat = [c for row in rows for c in row]
    assert "A42" not in flat and "old mill" not in flat  # the merged look-alikes' cells and values
    counted = next(row for row in rows if row and row[0] == "Visits")
    assert counted[1:] == ["Site", "label merged with a look-alike", "merged into 'Old Mill'", "<11"]


def test_every_tool_sheet_cell_is_safe(runs: dict[str, Any]) -> None:
    """No numeric cell marked as a count on any tool sheet holds 1 to 10 (whole workbook scan)."""
    book = runs["shared"]["book"]
    workbook = CalamineWorkbook.from_path(str(book))
    for name in workbook.sheet_names:
        if not name.startswith("statmargin") or "roles" in name or "log" in name or "history" in name:
            continue
        for row in workbook.get_sheet_by_name(name).to_python():
            label = str(row[0]) if row else ""
            if label in ("Harbor", "Harbour", "Old Mill", "Total"):
                for cell in row[1:]:
                    if isinstance(cell, float) and cell.is_integer():
                        assert not 0 < cell < FLOOR, (name, row)


# ---------------------------------------------------------------- every design


QUESTIONS = {
    "one_sample_categorical": ["--outcome", "Grade", "--against", "A=0.6,B=0.3,C=0.1"],
    "one_sample_binomial": ["--outcome", "Grade", "--against", "C=0.2"],
    "multi_group_continuous": ["--outcome", "Wait", "--by", "Site"],
    "two_categorical": ["--outcome", "Grade", "--by", "Site"],
    "two_categorical_zero": ["--outcome", "Seen", "--by", "Site"],
    "paired_categorical": ["--outcome", "Seen", "--paired-with", "Seen=Seen again"],
    "paired_continuous": ["--outcome", "Wait", "--paired-with", "Wait=Wait again"],
    "period_shares": ["--outcome", "Seen", "--period", "Visit"],
    "period_centre": ["--outcome", "Wait", "--period", "Visit"],
    "means_of_zero_one_by_site": ["--outcome", "Returned", "--treat", "Returned=continuous", "--by", "Site",
                                  "--shape", "normal"],
    "means_of_zero_one_by_month": ["--outcome", "Returned", "--treat", "Returned=continuous", "--period", "Visit",
                                   "--shape", "normal"],
    "group_pooled_shares": ["--sheet", "Areas", "--events", "Positive", "--out-of", "Positive=Screened",
                            "--by", "Area"],
    "group_rates": ["--sheet", "Areas", "--events", "Positive", "--per", "Positive=Person-years", "--by", "Area"],
    "one_sample_pooled_share": ["--sheet", "Outreach", "--events", "Positive", "--out-of", "Positive=Screened",
                                "--against", "0.1"],
    "one_sample_rate": ["--sheet", "Outreach", "--events", "Positive", "--per", "Positive=Person-years",
                        "--against", "0.01"],
}


@pytest.fixture(scope="module")
def designs(tmp_path_factory: pytest.TempPathFactory) -> Path:
    from leak_workbooks import every_design

    return every_design(tmp_path_factory.mktemp("designs") / "designs.xlsx")


@pytest.mark.parametrize("question", list(QUESTIONS))
def test_every_design_gives_no_count_back(designs: Path, question: str) -> None:
    """Each design's `test --share` JSON passes the independent checks; the plain run has counts to hide."""
    args = QUESTIONS[question]
    plain = json.loads(invoke("test", str(designs), *args, "--json", "-").stdout)
    shared = json.loads(invoke("test", str(designs), *args, "--share", "--json", "-").stdout)
    assert small_counts(plain), "the invented data has a small count for this design"
    assert leaks(shared) == []
    [analysis] = shared["analyses"]
    hidden = set(analysis["extra"].get("suppressed", []))
    for group in analysis["groups"]:
        size = group.get("n", group.get("count", group.get("events")))
        if size is None:  # a hidden group keeps no summary that would single it out
            numbers = {k: v for k, v in group.items()
                       if isinstance(v, float) and k not in ("total", "per", "expected", "expected_share")}
            assert numbers == {}, (question, group)
    for point in analysis.get("periods") or []:
        if point["n"] is None:
            assert point["value"] is None and point["lower_limit"] is None
    for followup in analysis["followups"]:
        labels = {g["label"] for g in analysis["groups"] if g.get("suppressed")}
        if set(followup["levels"]) & labels:
            assert followup["estimate"] is None, followup
    if question.startswith("means_of_zero_one"):
        # The mean of a 0/1 column is the share of 1s: with n it gives the count of 1s (and of 0s) back.
        means = [(g["n"], g["mean"]) for g in analysis["groups"] if g.get("mean") is not None]
        means += [(p["n"], p["value"]) for p in analysis.get("periods") or [] if p["value"] is not None]
        before = [(g["n"], g["mean"]) for g in plain["analyses"][0]["groups"] if g.get("mean") is not None]
        # Plain run: a small count of 1s or 0s shows (North: 20 returns of 30 visits, so 10 without one).
        assert any(0 < round(n * mean) < FLOOR or 0 < n - round(n * mean) < FLOOR for n, mean in before)
        for n, mean in means:
            ones = round(n * mean)
            assert not 0 < ones < FLOOR and not 0 < n - ones < FLOOR, (n, mean)
    table = table_of(analysis)
    if table is not None and any(v is None for row in table[0] for v in row):
        two_by_two = len(table[0]) == 2 and len(table[0][0]) == 2
        assert not two_by_two or analysis["p_value"] is None  # its p-value would pin the cells down
        assert hidden or analysis["estimate"] is None or analysis["estimate"]["value"] is None


def test_period_shares_trend_cannot_solve_for_hidden_periods(designs: Path) -> None:
    """The trend's z is a weighted sum of the periods' counts: with the total, it must leave the hidden ones free.

    Checked independently: the unknown counts of hidden periods satisfy the total of the
    counted level and the Cochran-Armitage score sum (positions 0, 1, ... as scores), and no
    single one of them is fixed by those equations (numpy rank test).
    """
    plain = json.loads(invoke("test", str(designs), *QUESTIONS["period_shares"], "--json", "-").stdout)
    shared = json.loads(invoke("test", str(designs), *QUESTIONS["period_shares"], "--share", "--json", "-").stdout)
    [before], [after] = plain["analyses"], shared["analyses"]
    hidden = [i for i, p in enumerate(after["periods"]) if p["value"] is None]
    assert hidden and after["trend"]["p_value"] == before["trend"]["p_value"]
    if len(hidden) < len(after["periods"]):
        equations = np.array([[1.0] * len(hidden), [float(i) for i in hidden]])
        rank = np.linalg.matrix_rank(equations)
        for k in range(len(hidden)):
            unit = np.eye(len(hidden))[k]
            assert np.linalg.matrix_rank(np.vstack([equations, unit])) > rank


def test_run_share_sheets_of_every_design(designs: Path, tmp_path: Path) -> None:
    """`run --share` on every design: every shown count cell is the plain run's number, none of 1 to 10."""
    book = tmp_path / "designs.xlsx"
    book.write_bytes(designs.read_bytes())
    invoke("plan", str(book), "--outcome", "Wait", "--outcome", "Seen", "--outcome", "Grade", "--by", "Site")
    plain, shared = tmp_path / "plain.xlsx", tmp_path / "shared.xlsx"
    invoke("run", str(book), "--out", str(plain), "--quiet")
    invoke("run", str(book), "--out", str(shared), "--quiet", "--share")
    name = tool_sheet_name(shared, "shape")
    before, after = sheet_rows(plain, tool_sheet_name(plain, "shape")), sheet_rows(shared, name)
    assert len(before) <= len(after)
    marks = 0
    for row_before, row_after in zip(before, after, strict=False):
        if not row_after or row_after[0] != row_before[0]:
            continue  # rows line up until a block gains its chart-data table
        for mine, true in zip(row_after[1:], row_before[1:], strict=False):
            if mine in ("<11", "suppressed"):
                marks += 1
            elif isinstance(mine, float) and isinstance(true, float) and mine != true:
                pytest.fail(f"{row_after[0]}: {mine} shown for {true}")
    assert marks > 0


# ---------------------------------------------------------------- any table, any groups


@pytest.mark.filterwarnings("ignore::UserWarning")  # small expected counts: the method's own caveats
@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.lists(st.integers(0, 40), min_size=2, max_size=4), min_size=2, max_size=6).filter(
        lambda t: len({len(r) for r in t}) == 1 and all(sum(r) > 0 for r in t)
        and all(sum(c) > 0 for c in zip(*t, strict=True))),
    st.sampled_from([5, 11]),
)
def test_any_table_gives_no_count_back(table: list[list[int]], floor: int) -> None:
    """Any table through the chi-square test and sharing mode: the JSON gives no hidden count back (rank check)."""
    from statmargin.sheets.share import suppress_result
    from statmargin.stats.categorical import chi_square_independence

    rows = [f"site {i}" for i in range(len(table))]
    cols = [f"level {j}" for j in range(len(table[0]))]
    result = chi_square_independence(np.array(table), rows, cols, resamples=200, seed=1)
    result.extra["observed"] = {"values": table, "row_labels": rows, "col_labels": cols}
    record = suppress_result(result, floor).to_record()
    values = record["extra"]["observed"]["values"]
    for line in values:
        assert not any(isinstance(v, int) and 0 < v < floor for v in line)
    totals = [g.get("count") for g in record["groups"]]
    columns = record["extra"]["observed"].get("col_totals")
    assert given_back(values, totals, columns, record["n"]) == []
    hidden = any(v is None for line in values for v in line)
    if hidden and len(table) == 2 and len(table[0]) == 2:
        assert record["p_value"] is None and record["effect"]["value"] is None


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(0, 40), min_size=2, max_size=8).filter(lambda sizes: sum(s > 1 for s in sizes) >= 2))
def test_any_groups_give_no_size_back(sizes: list[int]) -> None:
    """Groups of any sizes, adding up to n: none is hidden alone, and hidden ones keep no summary."""
    from statmargin.results import Result
    from statmargin.sheets.share import suppress_result

    groups = [{"label": f"g{i}", "n": n, "mean": 10.0 + i, "sd": 1.0} for i, n in enumerate(sizes) if n > 0]
    result = Result(outcome="Wait", exposure="Site", design=Design.MULTI_GROUP_CONTINUOUS, test=Test.KRUSKAL_WALLIS,
                    n=sum(sizes), groups=groups)
    record = suppress_result(result, 11).to_record()
    shown = [g["n"] for g in record["groups"]]
    assert sum(n is None for n in shown) != 1
    assert all(g["mean"] is None for g in record["groups"] if g["n"] is None)
    assert not any(isinstance(n, int) and 0 < n < 11 for n in shown)


def test_shared_file_keeps_no_earlier_numbers_in_its_history(visits: Path, tmp_path: Path) -> None:
    """A plain run's p-values and estimates, kept in the hidden history sheet, are not written into a shared file."""
    book = tmp_path / "visits.xlsx"
    book.write_bytes(visits.read_bytes())
    invoke("run", str(book), "--quiet")  # a plain refresh: its numbers go to the history sheet
    shared = tmp_path / "shared.xlsx"
    terminal = invoke("run", str(book), "--out", str(shared), "--share").stdout
    assert "Nothing changed since the last run" in terminal or "What changed" in terminal  # flags still worked out

    def history(path: Path) -> list[list[Any]]:
        return sheet_rows(path, tool_sheet_name(path, "history"))

    plain_rows, shared_rows = history(book), history(shared)
    header = plain_rows[0]
    p_col, estimate_col = header.index("p_value"), header.index("estimate")
    assert any(isinstance(row[p_col], float) for row in plain_rows[1:])  # the plain run kept its p-values
    first_run = plain_rows[1][0]
    earlier = [row for row in shared_rows[1:] if row[0] == first_run]
    assert earlier and all(row[p_col] in ("", None) and row[estimate_col] in ("", None) for row in earlier)


@settings(max_examples=80, deadline=None)
@given(
    st.integers(2, 7), st.integers(2, 5), st.integers(0, 10_000),
    st.lists(st.integers(0, 34), min_size=0, max_size=40),
)
def test_audit_agrees_with_an_independent_rank_test(n_rows: int, n_cols: int, seed: int,
                                                    hidden_cells: list[int]) -> None:
    """share_audit.exposed names exactly the hidden counts a rank test says the shown sums fix, and the same freedom."""
    from statmargin.sheets.share_audit import CountWeb, exposed

    rng = np.random.default_rng(seed)
    table = rng.integers(0, 30, (n_rows, n_cols))
    web = CountWeb()
    cells = [[web.add(v) for v in line] for line in table]
    rows = [web.add(v) for v in table.sum(axis=1)]
    cols = [web.add(v) for v in table.sum(axis=0)]
    total = web.add(table.sum())
    for i in range(n_rows):
        web.line(cells[i], rows[i])
    for j in range(n_cols):
        web.line([line[j] for line in cells], cols[j])
    web.line(rows, total)
    web.line(cols, total)
    if seed % 3 == 0:  # a trend-like weighted sum over the first column
        web.equations.append({cells[i][0]: float(i) for i in range(n_rows)})
    hidden = sorted({h % len(web.values) for h in hidden_cells} - {total})
    fixed, free = exposed(web, hidden)
    matrix = web.matrix()[:, hidden] if hidden else np.zeros((0, 0))
    rank = np.linalg.matrix_rank(matrix) if hidden else 0
    assert free == len(hidden) - rank
    expected = [h for k, h in enumerate(hidden)
                if np.linalg.matrix_rank(np.vstack([matrix, np.eye(len(hidden))[k]])) == rank]
    assert fixed == expected


def small_counts_in_text(text: str) -> list[str]:
    """Numbers 1 to 10 next to a word for records (the sheets test's own scan), outside stated thresholds."""
    from test_share import _COUNT_NEAR_WORD, _THRESHOLD_BEFORE

    found = []
    for match in _COUNT_NEAR_WORD.finditer(text):
        number = int(match.group(1) or match.group(2))
        after = text[match.end(): match.end() + 20]
        if " of" in match.group(0) and any(word in after for word in ("group", "pairs")):
            continue  # "2 of 3 groups": a count of groups, not of records
        if 0 < number < FLOOR and not _THRESHOLD_BEFORE.search(text[: match.start()]):
            found.append(text[max(0, match.start() - 60): match.end() + 20])
    return found


@pytest.mark.parametrize("question", list(QUESTIONS))
def test_every_design_terminal_states_no_small_count(designs: Path, question: str) -> None:
    """The terminal summary of `test --share` names no count from 1 to 10 (a thin month's "n = 9" included)."""
    plain = invoke("test", str(designs), *QUESTIONS[question]).stdout
    shared = invoke("test", str(designs), *QUESTIONS[question], "--share").stdout
    assert small_counts_in_text(shared) == []
    if "period" in question or "month" in question:
        # Invented months of 18, 12, 10, 9 and 11 visits: the plain note names April's 9; sharing mode
        # neither names it nor flags it "few", which would tell March's hidden n is exactly 10.
        assert "2026-04 (n = 9)" in plain and "Periods with fewer than 10 rows" not in shared
        document = json.loads(invoke("test", str(designs), *QUESTIONS[question], "--share", "--json", "-").stdout)
        assert not any(p["few"] for p in document["analyses"][0]["periods"] if p["n"] is None)
