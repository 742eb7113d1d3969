"""Progress lines: silent for short steps off a terminal, periodic plain lines for long ones, a bar on a terminal."""

from __future__ import annotations

import io

from statmargin.progress import PLAIN_AFTER, PLAIN_EVERY, ProgressDisplay
from statmargin.words import console
from statmargin.words import progress as words


class Clock:
    """A hand-moved clock, so the tests do not wait."""

    def __init__(self) -> None:
        self.now = 100.0

    def __call__(self) -> float:
        return self.now


def test_short_steps_write_nothing_off_a_terminal():
    """Steps that end before PLAIN_AFTER seconds leave a log empty."""
    stream, clock = io.StringIO(), Clock()
    with ProgressDisplay(stream, terminal=False, clock=clock, ticker=False) as say:
        say(console.reading_sheet("Visits"))
        clock.now += PLAIN_AFTER / 2
        say(words.READING_ROWS, done=500, total=1000)
        say(words.READING_ROWS, done=1000, total=1000)
        say.tick()
    assert stream.getvalue() == ""


def test_long_step_writes_a_plain_line_every_period():
    """A step that runs on gets a line once it is PLAIN_AFTER seconds old, then one per PLAIN_EVERY seconds."""
    stream, clock = io.StringIO(), Clock()
    with ProgressDisplay(stream, terminal=False, clock=clock, ticker=False) as say:
        say(console.WRITING)
        for _ in range(20):  # 5 seconds in quarter-second ticks
            clock.now += 0.25
            say.tick()
    lines = stream.getvalue().splitlines()
    assert len(lines) == 1 + int((5 - PLAIN_AFTER) // PLAIN_EVERY)
    assert lines[0] == f"statmargin: {console.WRITING} ... {PLAIN_AFTER:.0f} s"


def test_counted_step_shows_counts_and_share():
    """A counted step's plain line says how far it is, with the unit and the percentage."""
    stream, clock = io.StringIO(), Clock()
    with ProgressDisplay(stream, terminal=False, clock=clock, ticker=False) as say:
        say(words.READING_ROWS, done=0, total=1_048_575)
        clock.now += 3
        say(words.READING_ROWS, done=412_000, total=1_048_575)
    assert stream.getvalue() == "statmargin: reading rows: 412,000 of 1,048,575 rows (39%) ... 3 s\n"


def test_terminal_redraws_one_line_with_a_bar():
    """On a terminal the status line is redrawn in place with a bar, and ended when the step changes."""
    stream, clock = io.StringIO(), Clock()
    with ProgressDisplay(stream, terminal=True, clock=clock, ticker=False) as say:
        say(words.RUNNING_ANALYSES, done=1, total=4)
        say(words.RUNNING_ANALYSES, done=4, total=4)
        say(console.WRITING)
    text = stream.getvalue()
    first, second = text.split("\n")[0].split("\r")[1:3]
    assert first.startswith("[" + "#" * 6 + "." * 18 + "] statmargin: running analyses: 1 of 4 analyses (25%)")
    assert second.startswith("[" + "#" * 24 + "]")
    assert text.endswith("\n") and "writing results sheets" in text.split("\n")[1]


def test_follow_ups_report_their_progress() -> None:
    """run_answers says after each analysis's follow-ups how many are done, so a long follow-up step moves."""
    import numpy as np
    import pandas as pd

    from statmargin.designs.engine import run_answers
    from statmargin.options import build_plan
    from statmargin.read.table import Table

    rng = np.random.default_rng(3)
    frame = pd.DataFrame({"site": np.repeat(["A", "B", "C"], 30), "wait": rng.normal(30, 5, 90),
                          "score": rng.normal(5, 1, 90)})
    frame.loc[frame.site == "C", "wait"] += 10
    calls: list[tuple[int, int]] = []
    answers = run_answers(Table.from_frame(frame), build_plan(["wait", "score"], ["site"]),
                          followup_progress=lambda done, total: calls.append((done, total)))
    assert calls == [(1, 2), (2, 2)]
    assert answers[0].result.followups  # the clear difference in waits got its pairs
