"""The period designs wired into the engine: each outcome over time, its comparisons, its family.

Reference values come from SciPy and statsmodels (named beside each check): the
trend statistic against statsmodels' linear-by-linear association test (Agresti
2013, Categorical Data Analysis, section 3.4), the series trend against SciPy's
``kendalltau`` and ``theilslopes``, the latest-period comparisons against
SciPy's two-group tests. All data are invented and seeded.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from statmargin import analyze
from statmargin.errors import RoleError
from statmargin.jobs.history import analysis_key, comparison_parts
from statmargin.stats.adjust import adjust_p
from statmargin.words.results_text import run_line
from statmargin.words.sentences import say


def month_frame(counts: list[tuple[int, int]], start: tuple[int, int] = (2025, 1)) -> pd.DataFrame:
    """One row per record: month labels ('2025-01', ...) and Yes/No outcomes with the given (yes, n) per month."""
    rows = []
    year, month = start
    for yes, n in counts:
        label = f"{year:04d}-{month:02d}"
        rows += [{"Month": label, "Seen": "Yes" if i < yes else "No"} for i in range(n)]
        year, month = (year + 1, 1) if month == 12 else (year, month + 1)
    return pd.DataFrame(rows)


def test_shares_trend_is_cochran_armitage_as_statsmodels_computes_it() -> None:
    """z^2 (N-1)/N equals statsmodels' linear-by-linear M^2; the p-value is the normal one of z."""
    from statsmodels.stats.contingency_tables import Table

    counts = [(40, 60), (45, 62), (38, 58), (52, 61), (55, 64)]
    [result] = analyze(month_frame(counts), outcome="Seen", period="Month")
    assert result.design == "period_shares" and result.test == "cochran_armitage"
    table = np.array([[y, n - y] for y, n in counts], dtype=float)
    m2 = Table(table).test_ordinal_association(row_scores=np.arange(5.0), col_scores=np.array([1.0, 0.0]))
    total = sum(n for _, n in counts)
    assert (total - 1) / total * result.statistic ** 2 == pytest.approx(m2.zscore ** 2, rel=1e-10)
    assert result.p_value == pytest.approx(2 * stats.norm.sf(abs(result.statistic)), rel=1e-12)
    assert result.estimate.kind == "share_change_per_period" and result.estimate.value > 0
    assert [p.n for p in result.periods] == [n for _, n in counts]
    assert [p.value for p in result.periods] == pytest.approx([y / n for y, n in counts], rel=1e-12)


def test_latest_against_previous_uses_the_design_tables_two_group_test() -> None:
    """A 2 x 2 with an expected count below 5 gets Fisher's exact test (Cochran's rule), as SciPy computes it."""
    counts = [(40, 60), (45, 62), (38, 58), (9, 10), (3, 9)]
    [result] = analyze(month_frame(counts), outcome="Seen", period="Month")
    [versus] = result.followups
    assert result.extra["comparisons"] == ["latest_vs_previous"]
    assert versus.test == "fisher_exact" and versus.levels == ("2025-05", "2025-04")
    assert versus.p_value == pytest.approx(stats.fisher_exact([[3, 6], [9, 1]]).pvalue, rel=1e-12)
    assert versus.p_adjusted == versus.p_value  # one comparison: nothing to adjust it with
    assert versus.estimate.value == pytest.approx(3 / 9 - 9 / 10, rel=1e-12)


def test_a_year_earlier_is_compared_too_and_both_are_adjusted_together() -> None:
    """With 13 months the latest month is also set against the same month a year before; Holm over the two."""
    counts = [(50 + (i % 3), 80) for i in range(12)] + [(70, 80)]
    [result] = analyze(month_frame(counts), outcome="Seen", period="Month")
    kinds = [part for part, _ in comparison_parts(result)]
    assert kinds == ["latest_vs_previous", "latest_vs_year_earlier"]
    previous, year = result.followups
    assert previous.levels == ("2026-01", "2025-12") and year.levels == ("2026-01", "2025-01")
    raw = [stats.chi2_contingency([[70, 10], [y, 80 - y]], correction=False)[1] for y in (50 + 11 % 3, 50)]
    assert [previous.p_value, year.p_value] == pytest.approx(raw, rel=1e-10)
    assert [previous.p_adjusted, year.p_adjusted] == pytest.approx(adjust_p(raw, "holm"), rel=1e-12)
    low, high = min(1.0, 2 * min(raw)), min(1.0, max(2 * min(raw), max(raw)))  # Holm (1979) by hand
    assert [f.p_adjusted for f in result.followups] == pytest.approx(
        [low if p == min(raw) else high for p in raw], rel=1e-12)


def test_continuous_series_uses_mann_kendall_and_theil_sen_on_the_period_means() -> None:
    """Normal-shaped waits: period means; Mann-Kendall p and Theil-Sen slope as SciPy gives them on the means."""
    rng = np.random.default_rng(20260801)
    frames = []
    for m in range(1, 10):
        frames.append(pd.DataFrame({"Month": f"2025-{m:02d}", "Wait": rng.normal(30 + 0.4 * m, 4.0, 80)}))
    data = pd.concat(frames, ignore_index=True)
    [result] = analyze(data, outcome="Wait", period="Month")
    assert result.design == "period_centre" and result.extra["centre"] == "mean"
    means = data.groupby("Month")["Wait"].mean().to_numpy()
    t = np.arange(9.0)
    assert [p.value for p in result.periods] == pytest.approx(means, rel=1e-12)
    assert result.p_value == pytest.approx(stats.kendalltau(t, means).pvalue, rel=1e-12)
    assert result.estimate.value == pytest.approx(stats.theilslopes(means, t).slope, rel=1e-12)
    [versus] = result.followups
    assert versus.test == "welch_t"
    august, september = (data.loc[data.Month == m, "Wait"].to_numpy() for m in ("2025-09", "2025-08"))
    assert versus.p_value == pytest.approx(stats.ttest_ind(august, september, equal_var=False).pvalue, rel=1e-10)


def test_skewed_outcome_is_summarised_by_its_median() -> None:
    """Strongly skewed values: each period's median, and the reason names the shape."""
    rng = np.random.default_rng(20260802)
    data = pd.DataFrame({"Month": np.repeat([f"2025-{m:02d}" for m in range(1, 7)], 60),
                         "Days": rng.lognormal(1.0, 1.2, 360)})
    [result] = analyze(data, outcome="Days", period="Month")
    assert result.extra["centre"] == "median"
    medians = data.groupby("Month")["Days"].median().to_numpy()
    assert [p.value for p in result.periods] == pytest.approx(medians, rel=1e-12)
    assert "so each period is summarised by its median" in say(result.reasons[0])


def test_latest_against_previous_is_chosen_by_the_same_rule_as_any_two_groups() -> None:
    """Small skewed months: the comparison is the rule table's choice for the two months, run as any two groups."""
    from statmargin.designs.rules import choose_continuous
    from statmargin.stats.relative import brunner_munzel
    from statmargin.vocabulary import Design

    rng = np.random.default_rng(20260803)
    data = pd.DataFrame({"Month": np.repeat([f"2025-{m:02d}" for m in range(1, 7)], 12),
                         "Days": np.round(rng.lognormal(1.0, 1.1, 72), 1)})
    [result] = analyze(data, outcome="Days", period="Month")
    [versus] = result.followups
    latest, previous = (data.loc[data.Month == m, "Days"].to_numpy() for m in ("2025-06", "2025-05"))
    choice = choose_continuous(Design.TWO_GROUP_CONTINUOUS, {"2025-06": latest, "2025-05": previous})
    assert versus.test == choice.test == "brunner_munzel"
    alone = brunner_munzel(latest, previous, labels=("2025-06", "2025-05"), **choice.options)
    assert versus.p_value == pytest.approx(alone.p_value, rel=1e-12)
    [two_groups] = analyze(data[data.Month.isin(["2025-05", "2025-06"])], outcome="Days", by="Month",
                           treat=["Month=categorical:2025-06,2025-05"])
    assert two_groups.test == versus.test and two_groups.p_value == pytest.approx(versus.p_value, rel=1e-12)


def test_two_periods_give_no_trend_but_keep_the_series_and_the_comparison() -> None:
    """With two months the analysis is not run (too few periods), yet the series and July-vs-June remain."""
    [result] = analyze(month_frame([(40, 60), (30, 60)]), outcome="Seen", period="Month")
    assert result.skipped is not None and result.skipped.code == "too_few_periods"
    assert result.p_value is None and len(result.periods) == 2 and len(result.followups) == 1


def test_an_outcome_with_three_levels_is_not_followed_over_time() -> None:
    """A series by period follows one share: a three-level outcome is skipped with a plain reason."""
    data = pd.DataFrame({"Month": np.repeat(["2025-01", "2025-02", "2025-03"], 30),
                         "Result": ["Pass", "Fail", "Conditional"] * 30})
    [result] = analyze(data, outcome="Result", period="Month")
    assert result.skipped.code == "period_many_levels"
    assert say(result.skipped).startswith("Result has 3 levels;")


def test_dates_in_a_frame_are_read_as_days() -> None:
    """Pandas datetimes reach the period role as dates (spreadsheet day numbers)."""
    days = [dt.date(2025, m, d) for m in (1, 2, 3, 4) for d in range(1, 21)]
    data = pd.DataFrame({"Date": pd.to_datetime(days), "Seen": ["Yes", "No"] * 40})
    [result] = analyze(data, outcome="Seen", period="Date", period_length="month")
    assert [p.period for p in result.periods] == ["2025-01", "2025-02", "2025-03", "2025-04"]


def test_month_labels_as_compare_by_are_refused_with_the_period_role_named() -> None:
    """A compare-by column of month labels would be unordered groups: refused, unless typed categorical."""
    data = month_frame([(40, 60), (45, 62), (38, 58)])
    with pytest.raises(RoleError, match=r"^Month holds periods \(2025-01, 2025-02, 2025-03\), .* role 'period'"):
        analyze(data, outcome="Seen", by="Month")
    [result] = analyze(data, outcome="Seen", by="Month", treat={"Month": "categorical"})
    assert result.design == "two_categorical"


def test_a_date_compare_by_column_points_at_the_period_role() -> None:
    """A column of dates cannot be compared by; the message says to give it the role 'period'."""
    data = pd.DataFrame({"Date": pd.to_datetime([dt.date(2025, 1, d) for d in range(1, 21)]),
                         "Seen": ["Yes", "No"] * 10})
    with pytest.raises(RoleError, match="give it the role 'period'"):
        analyze(data, outcome="Seen", by="Date")


def test_series_by_group_gives_one_series_per_group() -> None:
    """With series by group each team gets its own series, keyed apart in the history."""
    data = month_frame([(40, 60), (45, 62), (38, 58), (52, 61)])
    data["Team"] = np.resize(["Heron", "Otter"], len(data))
    results = analyze(data, outcome="Seen", by="Team", period="Month", series_by_group=True)
    assert [(r.design, r.exposure, r.extra.get("group")) for r in results] == [
        ("period_shares", None, None), ("two_categorical", "Team", None),
        ("period_shares", "Team", "Heron"), ("period_shares", "Team", "Otter"),
    ]
    heron = results[2]
    assert sum(p.n for p in heron.periods) == int((data.Team == "Heron").sum())
    assert analysis_key(heron) == "Seen | by Team = Heron | period_shares"
    assert heron.reading and "Team = Heron" in __import__("statmargin").words.explain.question(heron)


def test_adjust_across_each_outcome_keeps_another_outcomes_p_values() -> None:
    """'each outcome': adding a question about another outcome leaves these adjusted p-values where they were."""
    data = month_frame([(40, 60), (45, 62), (38, 58), (52, 61)])
    data["Team"] = np.resize(["Heron", "Otter"], len(data))
    data["Other"] = np.resize(["a", "b", "b"], len(data))
    one = analyze(data, outcome="Seen", by="Team", period="Month", adjust_across="each outcome")
    two = analyze(data, outcome=["Seen", "Other"], by="Team", period="Month", adjust_across="each outcome")
    assert [r.p_adjusted for r in one] == [r.p_adjusted for r in two[:2]]
    assert [r.p_adjusted for r in one] == pytest.approx(adjust_p([r.p_value for r in one], "holm"), rel=1e-12)
    run = analyze(data, outcome=["Seen", "Other"], by="Team", period="Month")
    assert [r.p_adjusted for r in run] == pytest.approx(adjust_p([r.p_value for r in run], "holm"), rel=1e-12)


@pytest.mark.parametrize(
    ("across", "words"),
    [
        ("this run", "p-values adjusted across the 4 questions of this run (Holm)"),
        ("each outcome", "p-values adjusted within each outcome's questions (Holm)"),
        ("none", "p-values not adjusted (adjust across: none)"),
    ],
)
def test_run_line_states_the_adjustment_family(across: str, words: str) -> None:
    """The results sheet's run line says which family the p-values were adjusted in."""
    line = run_line(workbook="w.xlsx", sheet="Visits", rows_read=10, when="now", version="0", confidence=0.95,
                    adjust="Holm", family=4, sides="two-sided", hidden_rows="", across=across)
    assert words in line


def test_two_period_columns_are_refused() -> None:
    """Only one column may be the period."""
    from statmargin.designs.engine import run_plan
    from statmargin.options import build_plan
    from statmargin.plan.model import ColumnChoice
    from statmargin.read.table import Table
    from statmargin.vocabulary import Role

    data = month_frame([(40, 60), (45, 62), (38, 58)])
    data["Quarter"] = "2025 Q1"
    plan = build_plan(["Seen"], [], period="Month")
    plan.columns.append(ColumnChoice("Quarter", role=Role.PERIOD))
    with pytest.raises(RoleError, match=r"^Only one period column is allowed, but 'Month', 'Quarter' are marked"):
        run_plan(Table.from_frame(data), plan)
