"""Workbook back ends behind one protocol (``protocol``): the file back end (``file``), the
in-memory one (``memory``) and the Excel bridge; ``backends`` opens the file back end for a path."""
