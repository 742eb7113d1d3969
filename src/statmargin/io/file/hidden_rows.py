"""Rows a filter or the user hid, found in a worksheet's XML.

Both an autofilter and Format > Hide store ``hidden="1"`` on the ``<row>``
element, so one search finds both. The search looks for the attribute with a
plain substring search (a block without hidden rows costs one pass at memory
speed) and parses only the tags around the hits.
"""

from __future__ import annotations

import re

_HIDDEN = b"hidden="
_ROW_TAG = re.compile(rb"<(?:\w+:)?row\s")
_ROW_NUMBER = re.compile(rb"\sr=[\"'](\d+)[\"']")
_TRUE = (b'"1"', b"'1'", b'"true"', b"'true'")


def hidden_rows_in_block(block: bytes, found: set[int]) -> None:
    """Add to ``found`` the 1-based numbers of the hidden rows whose start tags are in ``block``.

    Examples
    --------
    >>> found = set()
    >>> hidden_rows_in_block(b'<row r="2"><c r="A2"/></row><row r="3" hidden="1"></row>', found)
    >>> found
    {3}

    Notes
    -----
    Attribute values cannot hold ``<``, so the last ``<`` before a hit opens the
    tag that holds it. Columns can be hidden too (``<col hidden="1">``); only row
    tags count. A row without an ``r`` number cannot be placed and is skipped.
    """
    at = block.find(_HIDDEN)
    while at >= 0:
        value = block[at + len(_HIDDEN) : at + len(_HIDDEN) + 6]
        if value.startswith(_TRUE):
            start = block.rfind(b"<", 0, at)
            end = block.find(b">", at)
            if start >= 0 and _ROW_TAG.match(block, start):
                number = _ROW_NUMBER.search(block, start, end if end >= 0 else len(block))
                if number is not None:
                    found.add(int(number.group(1)))
        at = block.find(_HIDDEN, at + len(_HIDDEN))
