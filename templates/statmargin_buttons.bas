Attribute VB_Name = "statmargin_buttons"
' statmargin: the Plan and Run buttons of this workbook.
'
' Plan adds (or refreshes) the roles sheet; Run writes the results sheets.
' Both act on this open workbook through xlwings' RunPython: nothing is saved
' for you, so save the workbook afterwards as usual.
'
' Needs, once per computer (see templates/README.md for the exact steps):
'   - Python with statmargin and xlwings:   pip install ".[excel]"  (in the statmargin folder)
'   - the xlwings add-in:                   xlwings addin install
'   - macOS only:                           xlwings runpython install
'   - in this VBA editor: Tools > References > tick "xlwings"
'
' A problem is shown in one message box; the one-line text says what to do.
Option Explicit

Public Sub StatmarginPlan()
    ' Add or refresh the roles sheet: one row per data column, roles picked in the shaded cells.
    RunPython "import statmargin.excel as sm; sm.main('plan')"
End Sub

Public Sub StatmarginRun()
    ' Run every analysis the roles sheet asks for and write the results sheets beside the data.
    RunPython "import statmargin.excel as sm; sm.main('run')"
End Sub
