"""Run history: key results as sheet rows, bounded to the last runs, and the since-last-run flags.

The flags and their precedence are this project's own definitions (jobs/history.py); the
expected values below are worked out by hand from those definitions.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from statmargin.jobs.history import (
    HEADER,
    KEEP_RUNS,
    TREND_PART,
    KeyResult,
    analysis_key,
    apply_since_last_run,
    compare_runs,
    direction,
    headline,
    history_rows,
    key_results,
    last_run,
    parse_history_rows,
    since_last_run,
)
from statmargin.results import Estimate, Result, Trend
from statmargin.vocabulary import Design, EstimateKind, SinceLastRun, Test
from statmargin.vocabulary.codes import Skip, coded


def record(p: float | None, estimate: float | None = 1.0, low: float | None = 0.5, high: float | None = 1.5,
           sign: int | None = 1, run: str = "r", key: str = "a", alpha: float = 0.05,
           kind: str = "mean_difference") -> KeyResult:
    """A key result with the numbers that matter for a flag."""
    return KeyResult(run, key, "welch_t", p, p, kind, estimate, low, high, sign, alpha)


@pytest.mark.parametrize(
    ("previous", "current", "flag"),
    [
        (None, record(0.2), SinceLastRun.NEW),
        (record(None), record(0.2), SinceLastRun.NEW),  # skipped last time
        (None, record(None), SinceLastRun.NEW),  # new and skipped
        (record(None), record(None), SinceLastRun.UNCHANGED),  # skipped last time and now
        (record(None), None, SinceLastRun.UNCHANGED),  # skipped last time, no longer asked
        (record(0.2), None, SinceLastRun.NO_LONGER_RUN),
        (record(0.2), record(None), SinceLastRun.NO_LONGER_RUN),  # skipped now
        (record(0.2), record(0.3, 1.2), SinceLastRun.UNCHANGED),
        (record(0.2), record(0.01, 1.2), SinceLastRun.NOW_BELOW_LEVEL),
        (record(0.01), record(0.2, 1.2), SinceLastRun.NO_LONGER_BELOW_LEVEL),
        (record(0.2), record(0.3, 2.0), SinceLastRun.MOVED_OUTSIDE_INTERVAL),
        (record(0.2), record(0.3, 0.4), SinceLastRun.MOVED_OUTSIDE_INTERVAL),
        # A sign flip between two results above the level is noise: not "reversed".
        (record(0.4), record(0.6, -0.2, sign=-1), SinceLastRun.MOVED_OUTSIDE_INTERVAL),
        (record(0.4, 0.1, -0.5, 0.7), record(0.6, -0.2, sign=-1), SinceLastRun.UNCHANGED),
        # Reversal with either run below the level comes before crossing.
        (record(0.01), record(0.3, -0.4, sign=-1), SinceLastRun.DIRECTION_REVERSED),
        (record(0.3), record(0.01, -0.8, sign=-1), SinceLastRun.DIRECTION_REVERSED),
        # Crossing comes before the interval check.
        (record(0.2), record(0.01, 3.0), SinceLastRun.NOW_BELOW_LEVEL),
        # Each run is judged by its own level.
        (record(0.03, alpha=0.01), record(0.03, alpha=0.05), SinceLastRun.NOW_BELOW_LEVEL),
        # Estimates of another kind are not compared with the old interval.
        (record(0.2), record(0.3, 9.0, kind="location_shift"), SinceLastRun.UNCHANGED),
        # Estimates without a direction are never "reversed".
        (record(0.01, sign=None), record(0.01, -5.0, sign=None), SinceLastRun.MOVED_OUTSIDE_INTERVAL),
    ],
)
def test_flags_and_precedence(previous: KeyResult | None, current: KeyResult | None, flag: SinceLastRun) -> None:
    """Each case gets the first flag that applies in the documented precedence."""
    assert since_last_run(previous, current) is flag


def test_adjusted_p_is_compared_when_the_run_adjusted() -> None:
    """The flag follows the adjusted p-value (what the results sheet flags), not the raw one."""
    before = KeyResult("r1", "a", "welch_t", 0.01, 0.12, "mean_difference", 1.0, 0.5, 1.5, 1, 0.05)
    after = KeyResult("r2", "a", "welch_t", 0.01, 0.03, "mean_difference", 1.0, 0.5, 1.5, 1, 0.05)
    assert since_last_run(before, after) is SinceLastRun.NOW_BELOW_LEVEL


def _result(outcome: str, by: str | None, p: float | None, value: float, kind=EstimateKind.MEAN_DIFFERENCE,
            skipped: bool = False, against=None, trend: Trend | None = None) -> Result:
    return Result(
        outcome=outcome, exposure=by, design=Design.TWO_GROUP_CONTINUOUS, test=Test.WELCH_T,
        p_value=p, p_adjusted=p, estimate=Estimate(kind, value, value - 1, value + 1),
        skipped=coded(Skip.NO_P_VALUE) if skipped else None, against=against, trend=trend,
    )


def test_directions_by_estimate_kind() -> None:
    """Differences and slopes carry their sign; a share or pseudo-median is compared with its fixed value."""
    assert direction(_result("a", "b", 0.1, -2.0)) == -1
    assert direction(_result("a", None, 0.1, 0.62, kind=EstimateKind.SHARE, against=0.7)) == -1
    assert direction(_result("a", None, 0.1, 0.62, kind=EstimateKind.SHARE)) is None
    assert direction(_result("a", "b", 0.1, 3.0, kind=EstimateKind.LARGEST_MEAN_GAP)) is None


def test_key_results_round_trip_through_sheet_rows() -> None:
    """Records written as plain rows read back equal, including a trend record and a skipped one."""
    trend = Trend(Test.COCHRAN_ARMITAGE, -2.4, 0.016,
                  Estimate(EstimateKind.SHARE_CHANGE_PER_PERIOD, -0.021, -0.038, -0.004, level="Yes"), 7)
    results = [_result("Same day", None, 0.04, -0.05, trend=trend), _result("Wait", "Site", None, 1.0, skipped=True)]
    records = key_results(results, "2026-08-01T09:00:00+00:00", 0.05)
    assert [r.analysis for r in records] == [
        "Same day | two_group_continuous",
        f"Same day | two_group_continuous | {TREND_PART}",
        "Wait | by Site | two_group_continuous",
    ]
    assert records[1].direction == -1 and records[1].p_value == 0.016
    assert records[2].p_value is None and records[2].estimate is None
    rows = history_rows([], records)
    assert rows[0] == list(HEADER)
    # As a spreadsheet reader gives them back: blanks as '' and numbers as floats.
    as_read = [[("" if v is None else float(v) if isinstance(v, int) else v) for v in row] for row in rows]
    assert parse_history_rows(as_read) == records


def test_history_is_bounded_to_the_last_runs() -> None:
    """Only the last KEEP_RUNS runs stay in the sheet, oldest first."""
    records = [record(0.1, run=f"2026-{i:03d}") for i in range(KEEP_RUNS + 5)]
    rows = history_rows(records[:-1], records[-1:])
    runs = [row[0] for row in rows[1:]]
    assert len(runs) == KEEP_RUNS
    assert runs[0] == "2026-005" and runs[-1] == f"2026-{KEEP_RUNS + 4:03d}"


def test_unreadable_history_rows_are_skipped() -> None:
    """Rows above the header, blank rows and rows edited into nonsense are dropped, not fatal."""
    rows = [["title"], list(HEADER), ["r1", "a", "welch_t", 0.2, 0.2, "mean_difference", 1.0, 0.5, 1.5, 1.0, 0.05],
            [None] * 11, ["r1", "b", "x", "junk", None, None, None, None, None, None, "not a level"]]
    parsed = parse_history_rows(rows)
    assert [r.analysis for r in parsed] == ["a"]


def test_compare_runs_names_what_is_gone_and_what_changed() -> None:
    """Analyses gone since the last run are 'no longer run'; the headline lists changes most important first."""
    earlier = [record(0.2, key="a", run="r1"), record(0.01, key="b", run="r1"), record(0.3, key="c", run="r1"),
               record(0.3, key="a", run="r2"), record(0.01, key="b", run="r2"), record(0.3, key="c", run="r2")]
    now = [record(0.01, key="a", run="r3"), record(0.01, key="b", run="r3"), record(0.2, key="d", run="r3")]
    flags = compare_runs(last_run(earlier), now)
    assert flags == {"a": SinceLastRun.NOW_BELOW_LEVEL, "b": SinceLastRun.UNCHANGED,
                     "c": SinceLastRun.NO_LONGER_RUN, "d": SinceLastRun.NEW}
    assert headline(flags) == [(SinceLastRun.NO_LONGER_RUN, ["c"]), (SinceLastRun.NEW, ["d"]),
                               (SinceLastRun.NOW_BELOW_LEVEL, ["a"])]
    assert compare_runs({}, now) == {}  # first run: no flags at all
    assert headline({"b": SinceLastRun.UNCHANGED}) == []  # nothing changed


def test_apply_takes_the_more_important_of_result_and_trend() -> None:
    """A result's flag is its own or its trend's, whichever comes first in the precedence."""
    trend = Trend(Test.MANN_KENDALL, 20.0, 0.01, Estimate(EstimateKind.THEIL_SEN_SLOPE, 0.3, 0.1, 0.5), 9)
    result = _result("Wait", None, 0.5, 1.0, trend=trend)
    flags = {analysis_key(result): SinceLastRun.UNCHANGED,
             analysis_key(result, TREND_PART): SinceLastRun.NOW_BELOW_LEVEL}
    apply_since_last_run([result], flags)
    assert result.since_last_run is SinceLastRun.NOW_BELOW_LEVEL
    assert result.to_record()["since_last_run"] == "now_below_level"
    first = _result("Wait", None, 0.5, 1.0)
    apply_since_last_run([first], {})
    assert first.since_last_run is None and first.to_record()["since_last_run"] is None


def test_infinite_one_sided_bounds_are_stored_blank() -> None:
    """A one-sided interval's open end is stored as a blank, not as infinity."""
    result = Result("Wait", "Site", Design.TWO_GROUP_CONTINUOUS, Test.WELCH_T, p_value=0.2,
                    estimate=Estimate(EstimateKind.MEAN_DIFFERENCE, 1.0, 0.1, math.inf))
    (rec,) = key_results([result], "r", 0.05)
    assert rec.ci_low == 0.1 and rec.ci_high is None


def period_result(change: float, p: float, *, hidden: bool = False) -> Result:
    """A result over time with one latest-period comparison (a difference in shares of ``change``)."""
    from statmargin.results import Followup

    followup = Followup(Test.CHI_SQUARE_INDEPENDENCE, ("2026-07", "2026-06"),
                        Estimate(EstimateKind.SHARE_DIFFERENCE, None if hidden else change, None, None,
                                 ("2026-07", "2026-06"), "Yes"),
                        None if hidden else p, None if hidden else p)
    result = Result("Seen", None, Design.PERIOD_SHARES, Test.COCHRAN_ARMITAGE, p_value=0.2, p_adjusted=0.2,
                    estimate=Estimate(EstimateKind.SHARE_CHANGE_PER_PERIOD, -0.01, -0.03, 0.01, ("month",), "Yes"))
    result.followups = [followup]
    result.extra = {"comparisons": ["latest_vs_previous"], **({"suppressed": ["periods"]} if hidden else {})}
    return result


def test_latest_period_comparison_is_kept_and_can_reverse() -> None:
    """The comparison is its own record (key part 'latest_vs_previous'); a sign flip below the level reverses it."""
    june = key_results([period_result(+0.065, 0.20)], "r1", 0.05)
    july = key_results([period_result(-0.166, 0.001)], "r2", 0.05)
    key = "Seen | period_shares | latest_vs_previous"
    assert [r.analysis for r in july] == ["Seen | period_shares", key]
    assert {r.analysis: r.direction for r in july}[key] == -1
    flags = compare_runs(last_run(june), july)
    assert flags[key] is SinceLastRun.DIRECTION_REVERSED and flags["Seen | period_shares"] is SinceLastRun.UNCHANGED
    result = period_result(-0.166, 0.001)
    apply_since_last_run([result], flags)
    assert result.since_last_run is SinceLastRun.DIRECTION_REVERSED


def test_comparison_hidden_in_sharing_mode_is_not_flagged() -> None:
    """A comparison whose numbers sharing mode hid is recorded as hidden and gets no flag (not 'no longer run')."""
    before = key_results([period_result(+0.065, 0.20)], "r1", 0.05)
    now = key_results([period_result(-0.166, 0.001, hidden=True)], "r2", 0.05)
    assert now[1].test == "hidden"
    flags = compare_runs(last_run(before), now)
    assert "Seen | period_shares | latest_vs_previous" not in flags


def test_a_groups_series_has_its_own_key() -> None:
    """Series of two groups of one compare-by column are told apart by the group."""
    heron = Result("Seen", "Team", Design.PERIOD_SHARES, Test.COCHRAN_ARMITAGE, extra={"group": "Heron"})
    otter = Result("Seen", "Team", Design.PERIOD_SHARES, Test.COCHRAN_ARMITAGE, extra={"group": "Otter"})
    assert analysis_key(heron) == "Seen | by Team = Heron | period_shares" != analysis_key(otter)


@pytest.mark.parametrize(
    ("before", "now", "flag"),
    [
        ((+0.06, 0.17), (-0.17, 0.001), SinceLastRun.DIRECTION_REVERSED),  # June up (unclear), July clearly down
        ((-0.15, 0.002), (+0.12, 0.01), SinceLastRun.DIRECTION_REVERSED),  # both clear, opposite ways
        ((+0.03, 0.40), (+0.15, 0.004), SinceLastRun.NOW_BELOW_LEVEL),  # the same way, clear only now
        ((+0.15, 0.004), (+0.14, 0.006), SinceLastRun.UNCHANGED),  # clear both times, the same way
        ((-0.15, 0.002), (-0.02, 0.70), SinceLastRun.UNCHANGED),  # last month's clear change is not news now
        ((+0.01, 0.90), (-0.09, 0.09), SinceLastRun.UNCHANGED),  # outside the old interval, clear neither time
    ],
)
def test_latest_period_comparison_flags(before: tuple[float, float], now: tuple[float, float],
                                        flag: SinceLastRun) -> None:
    """A comparison of the latest period is flagged only when its change is clear now (worked out by hand)."""
    from statmargin.jobs.history import since_last_comparison

    def rec(change: float, p: float) -> KeyResult:
        return KeyResult("r", "a", "chi_square_independence", p, p, "share_difference", change,
                         change - 0.02, change + 0.02, 1 if change > 0 else -1, 0.05)

    assert since_last_comparison(rec(*before), rec(*now)) is flag


def test_comparison_flags_of_a_stable_program_stay_near_the_level() -> None:
    """Simulated stable months (78% of 150 each): July-vs-June is flagged about as often as one test's level.

    Flagged as any other analysis (moved outside the interval, no longer below the level)
    the same comparisons would be flagged at about one refresh in four; p-values from
    SciPy's chi-square test of the 2 x 2 table (no continuity correction). Seeded; 4,000 refreshes.
    """
    from scipy import stats

    from statmargin.jobs.history import since_last_comparison

    rng = np.random.default_rng(20261205)

    def comparison(later: int, earlier: int) -> KeyResult:
        p1, p2 = float(later) / 150, float(earlier) / 150
        change = p1 - p2
        half = 1.96 * math.sqrt(p1 * (1 - p1) / 150 + p2 * (1 - p2) / 150)
        p = stats.chi2_contingency([[later, 150 - later], [earlier, 150 - earlier]], correction=False)[1]
        return KeyResult("r", "a", "chi_square_independence", p, p, "share_difference", change,
                         change - half, change + half, int(change > 0) - int(change < 0), 0.05)

    ours, plain = 0, 0
    for _ in range(4000):
        may, june, july = rng.binomial(150, 0.78, size=3)
        before, now = comparison(june, may), comparison(july, june)
        ours += since_last_comparison(before, now) is not SinceLastRun.UNCHANGED
        plain += since_last_run(before, now) is not SinceLastRun.UNCHANGED
    assert 0.035 < ours / 4000 < 0.075  # about the 5% level of the one test (Monte Carlo SE 0.0035)
    assert plain / 4000 > 0.2


def test_a_question_skipped_twice_is_not_new_every_run(tmp_path) -> None:
    """Two plain runs where one question cannot be run: the second says nothing changed (invented site visits)."""
    import json

    from click.testing import CliRunner

    from leak_workbooks import site_visits
    from statmargin.cli import main
    from workbook_edit import results_records

    book = site_visits(tmp_path / "visits.xlsx")
    runner = CliRunner()
    planned = runner.invoke(main, ["plan", str(book), "--outcome", "Wait", "--outcome", "Seen", "--by", "Site"])
    assert planned.exit_code == 0, planned.output
    first = runner.invoke(main, ["run", str(book), "--quiet"])
    second = runner.invoke(main, ["run", str(book), "--quiet", "--json", str(tmp_path / "second.json")])
    assert first.exit_code == 0 and second.exit_code == 0, second.output
    assert "First run" in first.stdout
    # Wait by Site is skipped both times (the one-row group 'Harbor'): no "New:" line.
    assert "New:" not in second.stdout and "Nothing changed since the last run" in second.stdout
    document = json.loads((tmp_path / "second.json").read_text())
    flags = {(a["outcome"], a["skipped"] is not None): a["since_last_run"] for a in document["analyses"]}
    assert flags == {("Wait", True): "unchanged", ("Seen", False): "unchanged"}
    records = results_records(book)
    assert [r["Since last run"] for r in records] == ["unchanged", "unchanged"]
