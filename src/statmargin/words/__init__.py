"""All wording a user reads: numbers, p-values, reasons, readings and cautions."""

from . import (
    period_words,  # noqa: F401  (registers the period templates)
    rates_words,  # noqa: F401  (registers the templates of aggregated-row codes)
)
