"""A count column: every design gives the result of the same rows repeated ``count`` times.

The reference for each check is the same design run on the expanded records
(whose methods the other test files check against R, SciPy and statsmodels);
the data are invented and seeded. Results, shape checks, follow-ups and the
histograms of the shape-check sheet must agree to 1e-10.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

import numpy as np
import pandas as pd
import pytest

from statmargin import analyze
from statmargin.designs.engine import run_answers
from statmargin.options import build_plan
from statmargin.read.table import Table
from statmargin.sheets.context import ReportContext
from statmargin.sheets.shapes import shape_sheet

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")
TOL = 1e-10


def expand(frame: pd.DataFrame, count: str = "n") -> pd.DataFrame:
    """Each row repeated ``count`` times (rows with a count of 0 stand for no record)."""
    return frame.loc[frame.index.repeat(frame[count].astype(int))].drop(columns=[count]).reset_index(drop=True)


def close(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return math.isclose(a, b, rel_tol=TOL, abs_tol=1e-12) or (math.isnan(a) and math.isnan(b))
    return a == b


def same(a: Any, b: Any, where: str = "") -> None:
    """Nested records equal, floats to 1e-10 (the JSON-ready form of two results)."""
    if isinstance(a, dict) and isinstance(b, dict):
        assert set(a) == set(b), where
        for key in a:
            same(a[key], b[key], f"{where}.{key}")
    elif isinstance(a, list) and isinstance(b, list):
        assert len(a) == len(b), where
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            same(x, y, f"{where}[{i}]")
    else:
        assert close(a, b), f"{where}: {a!r} != {b!r}"


def records(results: Iterable[Any]) -> list[dict[str, Any]]:
    """Results as records, without the fields only a weighted run has (rows without a count)."""
    out = []
    for result in results:
        record = result.to_record()
        record["extra"].pop("rows_without_count", None)
        out.append(record)
    return out


RNG = np.random.default_rng(20261211)


def counted_values(groups: dict[str, float], rows: int = 40, spread: float = 4.0) -> pd.DataFrame:
    """Invented measurements on a coarse grid (so values repeat), each row with a count of 0 to 6."""
    frames = []
    for label, centre in groups.items():
        values = np.round(RNG.lognormal(np.log(centre), 0.35, rows) * 2) / 2 + RNG.normal(0, spread / 100, rows).round(2)
        frames.append(pd.DataFrame({"Site": label, "Wait": values, "n": RNG.integers(0, 7, rows)}))
    return pd.concat(frames, ignore_index=True)


CASES = [
    ("two groups, shape checks decide", {"Site": ["A", "B"]}, {"outcome": "Wait", "by": "Site"}),
    ("two groups, rank-based", {"Site": ["A", "B"]}, {"outcome": "Wait", "by": "Site", "shape": "rank"}),
    ("two groups, assume normal", {"Site": ["A", "B"]}, {"outcome": "Wait", "by": "Site", "shape": "normal"}),
    ("three groups, shape checks decide", {"Site": ["A", "B", "C"]}, {"outcome": "Wait", "by": "Site"}),
    ("three groups, rank-based", {"Site": ["A", "B", "C"]}, {"outcome": "Wait", "by": "Site", "shape": "rank"}),
    ("three groups, assume normal", {"Site": ["A", "B", "C"]}, {"outcome": "Wait", "by": "Site", "shape": "normal"}),
    ("one value", {"Site": ["A"]}, {"outcome": "Wait", "against": "12"}),
    ("one value, rank-based", {"Site": ["A"]}, {"outcome": "Wait", "against": "12", "shape": "rank"}),
]


@pytest.mark.parametrize("name,keep,kwargs", CASES, ids=[c[0] for c in CASES])
def test_continuous_designs_equal_repeated_rows(name, keep, kwargs):
    """Tests, estimates, effects, shape checks and follow-ups of counted rows equal those of the records."""
    frame = counted_values({"A": 10.0, "B": 13.0, "C": 11.0})
    frame = frame[frame.Site.isin(keep["Site"])].reset_index(drop=True)
    weighted = analyze(frame, count="n", **kwargs)
    repeated = analyze(expand(frame), **kwargs)
    same(records(weighted), records(repeated))
    assert weighted[0].n == int(frame.n.sum())


@pytest.mark.parametrize("rows,expected", [(60, "alexander_govern"), (6, None)],
                         ids=["alexander-govern-games-howell", "shapiro-band"])
def test_equal_spreads_and_small_groups_equal_repeated_rows(rows, expected):
    """Normal-shaped groups (Alexander-Govern, Games-Howell) and groups of under 50 records (Shapiro-Wilk)."""
    frame = pd.concat([pd.DataFrame({"Site": label, "Wait": RNG.normal(centre, 2.0, rows).round(1),
                                     "n": RNG.integers(1, 4, rows)})
                       for label, centre in (("A", 10.0), ("B", 12.5), ("C", 11.0))], ignore_index=True)
    shape = "normal" if expected else "auto"
    weighted = analyze(frame, outcome="Wait", by="Site", count="n", shape=shape)
    same(records(weighted), records(analyze(expand(frame), outcome="Wait", by="Site", shape=shape)))
    if expected:
        assert weighted[0].test == expected and weighted[0].followups[0].test == "games_howell"
    else:
        assert weighted[0].shape["assessment"]["groups"][0]["check"] == "shapiro_wilk"


@pytest.mark.parametrize("shape", ["auto", "rank"])
def test_small_groups_with_permutation_p_equal_repeated_rows(shape):
    """Groups of under 15 records: the seeded permutation p of the rank tests equals the records'."""
    frame = pd.DataFrame({"Site": ["A"] * 4 + ["B"] * 4 + ["C"] * 4,
                          "Wait": [3.0, 8.0, 21.0, 40.0, 5.0, 6.0, 9.0, 55.0, 2.0, 12.0, 13.0, 90.0],
                          "n": [2, 3, 1, 4, 1, 5, 2, 3, 3, 2, 1, 1]})
    for keep in (["A", "B"], ["A", "B", "C"]):
        part = frame[frame.Site.isin(keep)].reset_index(drop=True)
        kwargs = {"outcome": "Wait", "by": "Site", "shape": shape, "treat": {"Wait": "continuous"}}
        weighted = analyze(part, count="n", **kwargs)
        assert weighted[0].test in ("brunner_munzel", "rank_anova_type", "welch_t")
        if weighted[0].test != "welch_t":
            assert weighted[0].p_method == "permutation"
        same(records(weighted), records(analyze(expand(part), **kwargs)))


def test_equal_changes_and_a_skewed_target_equal_repeated_rows():
    """Equal non-zero changes (sign test of pairs) and a skewed measure against a target (sign test)."""
    pairs = pd.DataFrame({"Before": [10.0, 12.0, 9.0, 14.0], "After": [12.5, 14.5, 11.5, 16.5], "n": [3, 1, 4, 2]})
    kwargs = {"outcome": "Before", "paired_with": "After", "treat": {"Before": "continuous", "After": "continuous"}}
    weighted = analyze(pairs, count="n", **kwargs)
    assert weighted[0].test == "sign_test"
    same(records(weighted), records(analyze(expand(pairs), **kwargs)))
    waits = pd.DataFrame({"Wait": np.round(RNG.lognormal(np.log(20.0), 0.9, 60), 1), "n": RNG.integers(1, 6, 60)})
    weighted = analyze(waits, outcome="Wait", against="20", count="n")
    assert weighted[0].test == "sign_test"
    same(records(weighted), records(analyze(expand(waits), outcome="Wait", against="20")))


def test_more_than_5000_records_judged_like_the_records():
    """Above 5000 records Shapiro-Wilk reads a seeded subsample: the same records are read from counted rows."""
    frame = pd.DataFrame({"Site": ["A"] * 800 + ["B"] * 900,
                          "Wait": np.round(np.concatenate([RNG.gamma(4.0, 3.0, 800), RNG.gamma(4.0, 3.2, 900)]), 1),
                          "n": RNG.integers(5, 10, 1700)})
    weighted = analyze(frame, outcome="Wait", by="Site", count="n")
    assert min(frame.n[frame.Site == s].sum() for s in "AB") > 5000
    same(records(weighted), records(analyze(expand(frame), outcome="Wait", by="Site")))


def test_pairs_and_correlation_equal_repeated_rows():
    """Wide-form pairs (paired t, signed-rank) and correlations (Pearson, Spearman) of counted rows."""
    before = RNG.normal(140, 12, 50).round()
    frame = pd.DataFrame({"Before": before, "After": (before - 5 + RNG.normal(0, 6, 50)).round(),
                          "n": RNG.integers(1, 5, 50)})
    for kwargs in ({"paired_with": "After"}, {"paired_with": "After", "shape": "rank"}, {"by": "After"},
                   {"by": "After", "shape": "rank"}):
        same(records(analyze(frame, outcome="Before", count="n", **kwargs)),
             records(analyze(expand(frame), outcome="Before", **kwargs)))


def test_weighted_chi_square_equals_records():
    """A table given as counted rows: chi-square, Cramer's V and cell residuals equal the records'."""
    frame = pd.DataFrame({"District": ["North", "North", "South", "South", "East", "East", "East"],
                          "Result": ["Pass", "Fail", "Pass", "Fail", "Pass", "Fail", "Fail"],
                          "n": [120, 14, 98, 31, 77, 9, 3]})
    weighted = analyze(frame, outcome="Result", by="District", count="n")
    repeated = analyze(expand(frame), outcome="Result", by="District")
    assert weighted[0].test == "chi_square_independence" and weighted[0].followups
    same(records(weighted), records(repeated))


@pytest.mark.parametrize("kwargs", [{"against": "Fail=0.1"}, {"against": "Pass=0.6,Fail=0.3,Conditional=0.1"},
                                    {"by": "District"}], ids=["binomial", "goodness-of-fit", "fisher"])
def test_weighted_count_designs_equal_records(kwargs):
    """Binomial, goodness of fit and Fisher's test on counted rows equal the records' results."""
    frame = pd.DataFrame({"District": ["North", "North", "North", "South", "South", "South"],
                          "Result": ["Pass", "Fail", "Conditional", "Pass", "Fail", "Conditional"],
                          "n": [40, 3, 6, 35, 9, 4]})
    if "by" in kwargs:
        frame = frame[frame.Result != "Conditional"].assign(n=[7, 1, 5, 6]).reset_index(drop=True)
    weighted = analyze(frame, outcome="Result", count="n", **kwargs)
    repeated = analyze(expand(frame), outcome="Result", **kwargs)
    same(records(weighted), records(repeated))


def test_mcnemar_on_counted_pairs_equals_records():
    """Wide-form yes/no pairs given as counted rows: McNemar's test of the records."""
    frame = pd.DataFrame({"Before": ["Yes", "Yes", "No", "No"], "After": ["Yes", "No", "Yes", "No"],
                          "n": [31, 12, 4, 50]})
    same(records(analyze(frame, outcome="Before", paired_with="After", count="n")),
         records(analyze(expand(frame), outcome="Before", paired_with="After")))


def test_left_out_records_follow_the_counts():
    """A row with a blank value leaves out its count of records; a row with a blank count counts once."""
    frame = pd.DataFrame({"Site": ["A", "A", "B", "B", "B", "A"], "Wait": [3.0, None, 4.0, 5.0, 6.0, 2.0],
                          "n": [2, 5, 3, 1, None, 4]})
    [result] = analyze(frame, outcome="Wait", by="Site", count="n")
    assert result.n == 2 + 3 + 1 + 4
    assert result.n_excluded == 5 + 1


def test_shape_sheet_histograms_equal_repeated_rows():
    """The shape-check sheet of counted rows (checks, group tables, histogram bins) equals the records' sheet."""
    frame = counted_values({"A": 10.0, "B": 13.0, "C": 11.0}, rows=60)

    def sheet(data: pd.DataFrame, count: str | None) -> dict[tuple[int, int], Any]:
        table = Table.from_frame(data)
        plan = build_plan(["Wait"], ["Site"], count=count)
        answers = run_answers(table, plan)
        results = [a.result for a in answers]
        context = ReportContext.from_run(workbook="w.xlsx", table=table, results=results,
                                         samples=[a.prepared.samples for a in answers], settings=plan.settings)
        return {pos: cell.value for pos, cell in shape_sheet(results, context).cells.items()}

    weighted, repeated = sheet(frame, "n"), sheet(expand(frame), None)
    assert set(weighted) == set(repeated)
    bins = [pos for pos, value in repeated.items() if value == "Bin"]
    assert bins, "the sheet draws a histogram"
    for pos in weighted:
        assert close(weighted[pos], repeated[pos]), (pos, weighted[pos], repeated[pos])
