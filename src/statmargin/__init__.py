"""statmargin: sound statistical tests run inside monitoring workbooks, explained in plain words.

The Python API mirrors the ``statmargin test`` command::

    import statmargin
    results = statmargin.analyze(frame, outcome="wait_minutes", by="site")

and the workbook jobs mirror ``statmargin plan`` and ``statmargin run``::

    statmargin.plan_workbook("visits.xlsx", outcome=["wait_minutes"], by=["site"])
    summary = statmargin.run_workbook("visits.xlsx")
"""

from . import errors
from ._version import __version__
from .designs.engine import analyze
from .jobs.question import test_workbook
from .jobs.workbook import plan_workbook, run_workbook
from .plan.model import Plan
from .read.reader import read_table
from .read.table import Table
from .results import Effect, Estimate, Followup, Result

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
    "plan_workbook",
    "read_table",
    "run_workbook",
    "test_workbook",
]
