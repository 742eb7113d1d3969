"""Cleaning before the analyses (statmargin.plan.clean): look-alike labels, left-out cells, one excluded count.

All data are invented; expected values are direct counts of the invented rows.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from statmargin import analyze
from statmargin.designs.engine import run_answers
from statmargin.options import build_plan
from statmargin.read.table import NoteKind, Table

# Invented: waits at two sites, one "Old Mill" typed with a double space, one in lower case,
# one wait typed as a note, one blank wait and one blank site.
SITES = ["Old Mill"] * 10 + ["Old  Mill", "old mill"] + ["Riverside"] * 10 + [None]
WAITS = [12.0, 14, 15, 11, 13, 16, 12, 14, 15, 13, 14, 12] + [20.0, 22, 19, 25, 21, 23, 24, 20, 22, 21] + [18.0]
WAITS[3] = "called twice, no answer"
WAITS[15] = None
FRAME = pd.DataFrame({"Site": SITES, "Wait": WAITS}, dtype=object)


def test_look_alike_labels_are_merged_and_noted() -> None:
    """'Old  Mill' and 'old mill' join 'Old Mill': two groups, each merged cell on the data notes."""
    table = Table.from_frame(FRAME)
    [answer] = run_answers(table, build_plan(["Wait"], ["Site"]))
    labels = [g["label"] for g in answer.result.groups]
    assert labels == ["Old Mill", "Riverside"]
    merged = [n for n in table.notes if n.kind is NoteKind.MERGED_LABEL]
    assert [(n.cell, n.value) for n in merged] == [("A12", "Old  Mill"), ("A13", "old mill")]


def test_merging_can_be_turned_off() -> None:
    """With the setting off, the look-alikes stay separate groups (here four of them)."""
    table = Table.from_frame(FRAME)
    plan = build_plan(["Wait"], ["Site"])
    plan.settings = type(plan.settings)(merge_look_alikes=False)
    [answer] = run_answers(table, plan)
    assert len(answer.result.groups) == 4


def test_text_in_a_numeric_column_is_a_data_note() -> None:
    """The typed note in the wait column is listed with its cell, once per column."""
    table = Table.from_frame(FRAME)
    run_answers(table, build_plan(["Wait"], ["Site"]))
    [note] = [n for n in table.notes if n.kind is NoteKind.NOT_A_NUMBER]
    assert (note.cell, note.value) == ("B5", "called twice, no answer")


def test_excluded_counts_agree_across_analyses_of_one_outcome() -> None:
    """Wait against a value and Wait by Site both leave out the typed note and the blank (2 records)."""
    [alone] = analyze(FRAME, outcome="Wait", against=15)
    [by_site] = analyze(FRAME, outcome="Wait", by="Site")
    assert alone.n_excluded == 2
    # by site also leaves out the record with no site (23 rows - 20 used)
    assert by_site.n_excluded == 3 and by_site.n == 20
    assert np.isclose(alone.n, 21)


def test_a_group_of_one_is_named_with_its_cell() -> None:
    """With merging off, 'Old  Mill' (row 12 of the sheet, site in column A) is a group of one: named by cell."""
    from statmargin.vocabulary.codes import Skip
    from statmargin.words.sentences import say

    table = Table.from_frame(FRAME)
    plan = build_plan(["Wait"], ["Site"])
    plan.settings = type(plan.settings)(merge_look_alikes=False)
    [answer] = run_answers(table, plan)
    skipped = answer.result.skipped
    assert skipped is not None and skipped.code is Skip.GROUP_OF_ONE
    assert skipped.facts["level"] == "Old  Mill" and skipped.facts["cell"] == "A12"
    assert "(cell A12)" in say(skipped)
