"""The base of every vocabulary enum: a str whose text is its value."""

from __future__ import annotations

from enum import Enum


class Word(str, Enum):
    """An enum member that is its value wherever text is made (``str``, f-strings, JSON)."""

    def __str__(self) -> str:
        return str(self.value)

    def __format__(self, spec: str) -> str:
        return format(str(self.value), spec)

    def __repr__(self) -> str:
        # Shown as the plain identifier (as in JSON), so doctests and messages read the same.
        return repr(self.value)
