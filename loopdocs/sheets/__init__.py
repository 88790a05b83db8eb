"""Spreadsheet writers: the starter index (``index_template``), the technicians'
calibration workbook and its reading back (``technicians_workbook``), and the verify
summary (``verify_summary``). openpyxl is imported only when a workbook is written."""
