"""Every period, trend, chart and folder code has one sentence, and refusals are one line each."""

from __future__ import annotations

import datetime as dt

import pytest

from statmargin.vocabulary import ChartKind, ControlRule, Grain, SinceLastRun
from statmargin.vocabulary.codes import Count, Note, Reason, Skip, coded
from statmargin.words import period_words
from statmargin.words.sentences import Hidden, say

CASES = [
    (coded(Skip.TOO_FEW_PERIODS, n=2, minimum=3),
     "Only 2 periods have rows; a trend across periods needs at least 3."),
    (coded(Skip.NO_BASELINE, n=4, minimum=5),
     "Only 4 periods before the latest have rows; control limits need at least 5."),
    (coded(Skip.TOO_FEW_PERIODS, n=Count(1), minimum=3),
     "Only 1 period has rows; a trend across periods needs at least 3."),
    (coded(Note.PERIOD_PARTIAL, period="2026-07", last_date=dt.date(2026, 7, 14), period_end=dt.date(2026, 7, 31)),
     "2026-07 is partial (rows up to 2026-07-14, the period ends 2026-07-31), so the last complete period is "
     "read as the latest; 2026-07 is shown in the series but not compared or flagged."),
    (coded(Note.PERIOD_PARTIAL, period="2026-07", last_date=None, period_end=dt.date(2026, 7, 31)),
     "2026-07 is partial, so the last complete period is read as the latest; 2026-07 is shown in the series "
     "but not compared or flagged."),
    (coded(Note.PERIOD_UNREADABLE, column="Month", n=Count(7), grain=Grain.MONTH, examples=[(4, "soon")]),
     "7 cells of Month could not be read as a period by month (row 4: 'soon', ...); their rows were left "
     "out of the period series."),
    (coded(Note.PERIOD_GAPS, column="Month", periods=["2026-02", "2026-03"]),
     "Month has no rows in 2026-02, 2026-03; those periods are shown with n = 0."),
    (coded(Note.PERIOD_FEW_ROWS, periods=[("2026-02", Count(3))], minimum=10),
     "Periods with fewer than 10 rows: 2026-02 (n = 3); each is kept as its own period, and its share or "
     "mean is uncertain (see its interval)."),
    (coded(Note.PERIOD_FEW_ROWS, periods=[("2026-02", Hidden(11))], minimum=10),
     "Periods with fewer than 10 rows: 2026-02 (n = fewer than 11); each is kept as its own period, and its "
     "share or mean is uncertain (see its interval)."),
    (coded(Note.PERIOD_USER_LATEST, period="2026-05"), "The latest period is 2026-05, as set on the roles sheet."),
    (coded(Note.OVERDISPERSED, ratio=2.4, statistic=60.0, df=11, p=1e-8),
     "The baseline periods vary 2.4 times as much as their sizes alone explain, so the control limits were "
     "widened by that factor (Laney's p' chart); with plain p-chart limits most periods of a large program "
     "would be flagged."),
    (coded(Note.TREND_NOT_LINEAR, statistic=10.254, df=3, p=0.0165),
     "The periods differ more than a straight-line trend explains (chi-square 10.3 on 3 df, p = 0.017); the "
     "trend test assumes records are independent, so its p-value may be too small."),
    (coded(Reason.TREND_SHARES, outcome="Vaccinated same day", level="Yes"),
     "The share of 'Yes' in Vaccinated same day is tested for a straight-line trend across periods with the "
     "Cochran-Armitage test."),
    (coded(Reason.TREND_SERIES, outcome="Wait", centre="median"),
     "The period medians of Wait are tested for a steady rise or fall with the Mann-Kendall test; the "
     "Theil-Sen slope gives the change per period."),
]


@pytest.mark.parametrize(("item", "sentence"), CASES)
def test_period_sentences(item, sentence: str) -> None:
    """Each code reads as its one sentence (sharing mode's hidden counts included)."""
    assert say(item) == sentence


def test_every_new_code_and_enum_is_worded() -> None:
    """Every period code, rule, chart kind and since-last-run flag has its words."""
    codes = [Skip.TOO_FEW_PERIODS, Skip.NO_BASELINE, Note.SHORT_SERIES, Note.AUTOCORRELATED,
             Note.TREND_NOT_LINEAR, Note.OVERDISPERSED, Note.PERIOD_UNREADABLE, Note.PERIOD_GAPS,
             Note.PERIOD_PARTIAL, Note.PERIOD_FEW_ROWS, Note.PERIOD_USER_LATEST, Reason.TREND_SHARES,
             Reason.TREND_SERIES]
    assert all(code in period_words.TEMPLATES for code in codes)
    assert set(period_words.RULE_NAMES) == set(ControlRule)
    assert set(period_words.CHART_NAMES) == set(ChartKind)
    assert set(period_words.SINCE_LAST_RUN_WORDS) == set(SinceLastRun)


@pytest.mark.parametrize(
    "message",
    [
        period_words.not_a_period_column("District", Grain.MONTH, None, [(2, "North")]),
        period_words.not_a_period_column("Month", Grain.WEEK, Grain.MONTH, []),
        period_words.unknown_latest("2025-12", "Month", "2026-01", "2026-07"),
        period_words.folder_empty("/data", "*.xlsx"),
        period_words.summary_exists("/data/statmargin-summary.xlsx"),
        period_words.unknown_grain("fortnight"),
    ],
)
def test_refusals_are_one_line_that_says_what_to_do(message: str) -> None:
    """Refusal messages are single lines that end with what to do."""
    assert "\n" not in message and message.endswith(".")
    assert any(word in message for word in ("set ", "give ", "Fix ", "check ", "move ", "one of"))


def test_since_last_run_lines() -> None:
    """The top of the sheet says nothing changed in one line, or lists the changes most important first."""
    assert period_words.since_last_run_lines([], "2026-07-02 08:00") == [
        "Nothing changed since the last run on 2026-07-02 08:00."
    ]
    lines = period_words.since_last_run_lines(
        [(SinceLastRun.DIRECTION_REVERSED, ["Same-day vaccination, latest month against the one before"]),
         (SinceLastRun.NOW_BELOW_LEVEL, ["Same-day vaccination, trend across months"])],
        "2026-07-02 08:00",
    )
    assert lines == [
        "What changed since the last run on 2026-07-02 08:00:",
        "Direction reversed: Same-day vaccination, latest month against the one before.",
        "Now below the significance level: Same-day vaccination, trend across months.",
    ]
    assert len(period_words.since_last_run_lines([], None)) == 1
