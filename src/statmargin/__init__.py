"""statmargin: sound statistical tests run inside monitoring workbooks, explained in plain words.

The Python API mirrors the ``statmargin test`` command::

    import statmargin
    results = statmargin.analyze(frame, outcome="wait_minutes", by="site")
"""

from . import errors
from ._version import __version__
from .engine import analyze
from .results import Effect, Estimate, Followup, Result
from .roles import Plan
from .table import Table

__all__ = [
    "Effect",
    "Estimate",
    "Followup",
    "Plan",
    "Result",
    "Table",
    "__version__",
    "analyze",
    "errors",
]
