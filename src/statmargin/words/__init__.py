"""All wording a user reads: numbers, p-values, reasons, readings and cautions."""

from . import (
    choice,  # noqa: F401  (registers the choice rule's sentences)
    method_refusals,  # noqa: F401  (registers the refusals of the statistical methods)
    period_words,  # noqa: F401  (registers the period templates)
    rate_readings,  # noqa: F401  (registers the readings of the event designs)
    rates_words,  # noqa: F401  (registers the templates of aggregated-row codes)
)
