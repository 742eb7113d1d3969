"""Spreadsheet column addresses: 0-based column indexes and their letters (A, Z, AA, XFD).

Every stage that names a cell (the back ends, the reader, the roles sheet and the
results sheets) uses these two, so a column is spelled the same everywhere.
"""

from __future__ import annotations


def column_letter(index: int) -> str:
    """Spreadsheet column letters for a 0-based column index.

    Examples
    --------
    >>> [column_letter(i) for i in (0, 25, 26, 16383)]
    ['A', 'Z', 'AA', 'XFD']
    """
    letters = ""
    index += 1
    while index:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def column_index(letter: str) -> int:
    """0-based column index for spreadsheet column letters (case does not matter).

    Examples
    --------
    >>> [column_index(s) for s in ("A", "z", "AA", "XFD")]
    [0, 25, 26, 16383]
    """
    index = 0
    for ch in letter.upper():
        index = index * 26 + (ord(ch) - 64)
    return index - 1
