"""The methods refuse and warn in codes; words/ writes the sentences, unchanged from when stats/ wrote them.

The expected messages are the texts the methods wrote themselves before their
wording moved to ``words/`` (regression pins: the same sentence a user read), and
the caveat's text is ``words.sentences.say`` of the note the result carries.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from statmargin.errors import CaveatWarning, NotEnoughDataError, OptionError
from statmargin.stats import _common, adjust, categorical, multigroup, rates, relative, twogroup
from statmargin.vocabulary.codes import Caution, Note, Reason, Refusal, Skip, Subject
from statmargin.words.sentences import SUBJECTS, TEMPLATES, say


def test_every_refusal_is_worded_and_every_subject_has_a_phrase() -> None:
    """Each Refusal code has a sentence and each Subject a phrase."""
    assert [code for code in Refusal if code not in TEMPLATES] == []
    assert set(SUBJECTS) == set(Subject)


def test_no_two_code_families_share_a_value() -> None:
    """Codes of all families key one table of sentences, so no two codes may have the same value."""
    values = [code.value for family in (Skip, Note, Reason, Caution, Refusal) for code in family]
    shared = {v for v in values if values.count(v) > 1} - {Note.SHARE_HIDDEN.value}  # one sentence for both
    assert shared == set()


@pytest.mark.parametrize(
    ("call", "code", "message"),
    [
        (lambda: _common.check_options("up", 0.95), Refusal.UNKNOWN_ALTERNATIVE,
         "The alternative 'up' is not known; use one of: two-sided, greater, less."),
        (lambda: _common.check_confidence(95), Refusal.CONFIDENCE_RANGE,
         "The confidence level 95 must be a number between 0 and 1, such as 0.95."),
        (lambda: adjust.adjust_p([0.1], "bonf"), Refusal.UNKNOWN_ADJUSTMENT,
         "Unknown p-value adjustment 'bonf'; choose one of 'holm', 'benjamini-hochberg', 'none'."),
        (lambda: adjust.adjust_by_family([], "holm", "weird"), Refusal.UNKNOWN_FAMILY,
         "'Adjust across' 'weird' is not one of: 'this run', 'each outcome', 'none'."),
        (lambda: categorical.chi_square_independence([[1, "z"], [3, 4]], ["a", "d"], ["b", "c"]),
         Refusal.NOT_A_COUNT, "A table cell is 'z', not a count; use whole numbers."),
        (lambda: categorical.chi_square_goodness_of_fit({"a": 3.5, "b": 4}, {"a": 0.5, "b": 0.5}),
         Refusal.NOT_WHOLE_COUNT, "The count of 'a' is 3.5; counts must be whole numbers 0 or more."),
        (lambda: categorical.chi_square_goodness_of_fit({"a": 3, "b": 4}, {"a": 0.5, "b": 0.6}),
         Refusal.SHARES_SUM, "The expected shares add up to 1.1, not 1; correct them so they add up to 1."),
        (lambda: categorical.binomial_exact(5, 3, share=0.5, label="yes"), Refusal.COUNT_ABOVE_TOTAL,
         "The count of 'yes' (5) is larger than the total (3); check the counts."),
        (lambda: categorical.mcnemar([[1, 2, 3], [3, 4, 5]], ["a", "b"]), Refusal.MCNEMAR_TWO_BY_TWO,
         "McNemar's test takes a 2x2 table of paired counts."),
        (lambda: rates._target(-1), Refusal.TARGET_RATE,
         "The target rate -1 must be a number above 0, such as '2 per 1000'."),
        (lambda: relative._check_p_method("x"), Refusal.UNKNOWN_P_METHOD,
         "p_method must be one of auto, permutation, asymptotic, not 'x'."),
    ],
)
def test_a_refusal_carries_its_code_and_reads_as_before(call, code: Refusal, message: str) -> None:
    """A method's refusal is an OptionError with its Refusal code, worded as the method once wrote it."""
    with pytest.raises(OptionError) as caught:
        call()
    assert caught.value.reason is not None and caught.value.reason.code is code
    assert str(caught.value) == message


def test_a_subject_fact_is_written_as_its_phrase() -> None:
    """Two constant groups are refused with the Subject of both groups, written as the phrase users read."""
    with pytest.raises(NotEnoughDataError) as caught:
        twogroup.welch_t(np.array([1.0, 1.0, 1.0]), np.array([1.0, 1.0, 1.0]))
    assert caught.value.reason is not None and caught.value.reason.facts["what"] is Subject.OUTCOME_BOTH_GROUPS
    assert str(caught.value) == "Every value of the outcome in both groups is the same (1), so there is no spread to test."


def test_a_caveat_is_a_note_and_a_worded_warning() -> None:
    """Kruskal-Wallis with a group of three values notes it and warns with the note's sentence."""
    groups = {"a": np.array([1.0, 2.0, 3.5]), "b": np.array([2.0, 4.0, 5.0, 6.5, 7.0, 8.0])}
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        result = multigroup.kruskal_wallis(groups)
    [note] = [n for n in result.notes if n.code is Note.KRUSKAL_SMALL_GROUPS]
    [warned] = [w.message for w in seen if isinstance(w.message, CaveatWarning)]
    assert isinstance(warned, UserWarning) and warned.note == note
    assert str(warned) == say(note)
