"""All wording a user reads: numbers, p-values, reasons, readings and cautions."""

from . import rates_words  # noqa: F401  (registers the templates of aggregated-row codes)
