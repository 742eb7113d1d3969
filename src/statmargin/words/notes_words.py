"""What the data-notes sheet says a cell became."""

from __future__ import annotations


def cells_noted(count: str) -> str:
    """The notes sheet's first line; ``count`` is the number as shown (hidden in sharing mode)."""
    cells = "1 cell was" if count == "1" else f"{count} cells were"
    return f"{cells} skipped, converted or merged while reading; each cell address links to the cell."


def merged_into(kept: str) -> str:
    return f"merged into {kept!r}"


def left_out_as(kind: str) -> str:
    return f"left out: {kind}"


def more_like_this(more: int) -> str:
    return f"and {more} more like this from this cell down (not listed one by one)"
