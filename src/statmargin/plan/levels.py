"""Levels of category columns: which level is the event of a yes/no outcome, and look-alike labels.

Event level: the share a reading reports for a two-level outcome is the share
of its event level ("Yes", "Pass", "Positive", "1", ...), never simply the
alphabetically first level. The user's choice (roles sheet or ``--event``)
wins; otherwise it is inferred from common words and shown for confirmation.

Look-alike labels: "Old  Mill", "old mill" and "Old Mill." are the same place
typed three ways; ``label_key`` gives them one key so they can be shown at plan
time and merged when the user agrees.
"""

from __future__ import annotations

import re
import unicodedata
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

# Words that name the "it happened" level of a yes/no column (common practice, English
# spreadsheets; no single source). Compared after label_key, so case and spacing do not matter.
EVENT_WORDS = frozenset(
    {
        "yes", "y", "true", "t", "1", "pass", "passed", "positive", "pos", "present", "done",
        "complete", "completed", "attended", "met", "compliant", "vaccinated", "success",
        "successful", "achieved", "on time", "within target", "reached", "seen", "treated",
    }
)
_SPACES = re.compile(r"\s+")
_TRAILING = re.compile(r"[\s.,;:!?]+$")


def label_key(label: str) -> str:
    """A label with case, spacing, accents-as-typed width and trailing punctuation normalized.

    Examples
    --------
    >>> label_key("Old  Mill.") == label_key("old mill")
    True
    """
    text = unicodedata.normalize("NFKC", str(label)).casefold()
    text = _SPACES.sub(" ", text).strip()
    return _TRAILING.sub("", text)


def infer_event(levels: Sequence[str]) -> str | None:
    """The event level of a two-level column, when exactly one of its levels is an event word.

    Examples
    --------
    >>> infer_event(["No", "Yes"])
    'Yes'
    >>> infer_event(["Female", "Male"]) is None
    True
    """
    if len(levels) != 2:
        return None
    found = [level for level in levels if label_key(level) in EVENT_WORDS]
    return found[0] if len(found) == 1 else None


def event_first(levels: Sequence[str], event: str | None) -> list[str]:
    """The levels with the event level first (unchanged when there is none or it is absent)."""
    out = list(levels)
    if event is not None and event in out:
        out.remove(event)
        out.insert(0, event)
    return out


@dataclass(frozen=True)
class LookAlike:
    """Labels that differ only in case, spacing or trailing punctuation, with their counts."""

    key: str
    labels: dict[str, int]  # label as typed -> number of cells

    @property
    def kept(self) -> str:
        """The label the others merge into: the most common one (first typed on a tie)."""
        return max(self.labels, key=lambda label: self.labels[label])


def look_alikes(counts: Mapping[str, int] | Iterable[tuple[str, int]]) -> list[LookAlike]:
    """Groups of look-alike labels among a column's labels and their counts.

    Examples
    --------
    >>> [group.labels for group in look_alikes({"Old Mill": 180, "Old  Mill": 1, "Riverside": 40})]
    [{'Old Mill': 180, 'Old  Mill': 1}]
    """
    items = counts.items() if isinstance(counts, Mapping) else counts
    groups: dict[str, dict[str, int]] = {}
    for label, count in items:
        groups.setdefault(label_key(label), {})[label] = count
    return [LookAlike(key, labels) for key, labels in groups.items() if len(labels) > 1]
