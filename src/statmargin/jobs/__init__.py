"""The jobs a user runs: plan a workbook, run it, test one question, run the demo."""
