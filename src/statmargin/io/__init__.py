"""Workbook back ends behind one protocol: the file back end, the in-memory one (and the Excel bridge)."""
