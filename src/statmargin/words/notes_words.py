"""What the data-notes sheet says a cell became."""

from __future__ import annotations


def cells_noted(count: str) -> str:
    return f"{count} cells were skipped, converted or merged while reading; each cell address links to the cell."


def merged_into(kept: str) -> str:
    return f"merged into {kept!r}"


def left_out_as(kind: str) -> str:
    return f"left out: {kind}"


def more_like_this(more: int) -> str:
    return f"and {more} more like this from this cell down (not listed one by one)"
