"""All wording a user reads: numbers, p-values, reasons, readings and cautions."""
