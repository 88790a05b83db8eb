"""The calibration stage: the tables of a project from its records and split groups
(``project_tables``), tables of tags with index errors marked (``marks``), the
technicians' workbook as data (``workbook_record``) and the grading of a returned one
(``grading``). The formulas are in ``loopdocs.calc.tables``."""
