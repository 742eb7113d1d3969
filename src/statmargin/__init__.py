"""statmargin: sound statistical tests run inside monitoring workbooks, explained in plain words.

The Python API mirrors the ``statmargin test`` command::

    import statmargin
    results = statmargin.analyze(frame, outcome="wait_minutes", by="site")

and the workbook jobs mirror ``statmargin plan`` and ``statmargin run``::

    statmargin.plan_workbook("visits.xlsx", outcome=["wait_minutes"], by=["site"])
    summary = statmargin.run_workbook("visits.xlsx")
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from . import errors
from ._version import __version__

if TYPE_CHECKING:
    from .designs.engine import analyze
    from .jobs.question import test_workbook
    from .jobs.workbook import plan_workbook, run_workbook
    from .plan.model import Plan
    from .read.reader import read_table
    from .read.table import Table
    from .results import Effect, Estimate, Followup, Result

# Imported on first use (PEP 562), so a command or a reader that needs only part of the
# package does not pay for importing the statistics libraries at start-up.
_LAZY = {
    "analyze": ".designs.engine",
    "test_workbook": ".jobs.question",
    "plan_workbook": ".jobs.workbook",
    "run_workbook": ".jobs.workbook",
    "Plan": ".plan.model",
    "read_table": ".read.reader",
    "Table": ".read.table",
    "Effect": ".results",
    "Estimate": ".results",
    "Followup": ".results",
    "Result": ".results",
}


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        from .words.refusals import no_such_name

        raise AttributeError(no_such_name(__name__, name))
    value = getattr(importlib.import_module(module, __name__), name)
    globals()[name] = value
    return value


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
