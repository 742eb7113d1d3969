"""The Excel bridge: the open workbook as a back end, through xlwings' open-source core.

``book.ExcelBook`` reads the calling workbook's cells and writes the tool's
sheets into it (the same ``WorkbookSource``/``WorkbookSink`` protocol as the
file back end), ``render`` turns sheet models into xlwings calls, ``entry``
holds the plan and run entry points a workbook calls with ``RunPython``, and
``udf`` the worksheet functions. ``subset`` declares every xlwings member the
bridge uses. xlwings is imported only when Excel is actually used, never by
``import statmargin``.
"""
