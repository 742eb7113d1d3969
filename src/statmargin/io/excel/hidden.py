"""Hidden and filtered rows of a sheet open in Excel, found through row heights.

The open-source xlwings API has no "is this row hidden" call, but a hidden row
has height 0 and ``Range.row_height`` gives the rows' common height (None when
they differ). Splitting the used range in halves until each part has one
height finds the hidden runs in about (runs x log2 rows) calls.
"""

from __future__ import annotations

from typing import Any

MAX_CALLS = 4000  # beyond this (a sheet of many scattered heights) the answer is "cannot tell"


def hidden_rows(xsheet: Any, top: int, bottom: int) -> frozenset[int] | None:
    """1-based rows between ``top`` and ``bottom`` (inclusive) whose height is 0, or None past ``MAX_CALLS``.

    Examples
    --------
    >>> class Rows:
    ...     def __init__(self, heights): self.heights = heights
    ...     def range(self, a, b): return Span(self.heights[a[0] - 1 : b[0]])
    >>> class Span:
    ...     def __init__(self, h): self.row_height = h[0] if len(set(h)) == 1 else None
    >>> sorted(hidden_rows(Rows([15, 0, 0, 15, 30, 0]), 1, 6))
    [2, 3, 6]
    """
    found: set[int] = set()
    pending = [(top, bottom)] if bottom >= top else []
    calls = 0
    while pending:
        first, last = pending.pop()
        calls += 1
        if calls > MAX_CALLS:
            return None
        height = xsheet.range((first, 1), (last, 1)).row_height
        if height is not None:
            if float(height) == 0.0:
                found.update(range(first, last + 1))
            continue
        middle = (first + last) // 2
        pending.extend(((middle + 1, last), (first, middle)))
    return frozenset(found)
