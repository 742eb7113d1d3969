"""Every option check, shared by the command line, the Python API and the roles sheet.

Words users type (``two-sided``, ``holm``, ``rank``, ``Score=85``) are parsed
here once; each refusal is a typed error with its one-line message from
``statmargin.words.refusals``.
"""

from .against import parse_against
from .columns import build_plan, parse_col_values, parse_treat, plan_from_options
from .settings import make_settings

__all__ = ["build_plan", "make_settings", "parse_against", "parse_col_values", "parse_treat",
           "plan_from_options"]
