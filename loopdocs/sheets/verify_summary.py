"""The ``verify --out`` workbook: one summary sheet by tag, one sheet of every point."""

from __future__ import annotations

from pathlib import Path

from loopdocs.calibration.grading import VerifyReport

_STATUS_FILL = {"pass": "C6EFCE", "fail": "FFC7CE", "failure current": "FFC7CE", "invalid": "FFC7CE",
                "invalid entries": "FFC7CE", "refused": "F4B084",
                "no tolerance": "FFEB9C", "incomplete": "FFEB9C", "not tested": "EDEDED"}


def write_summary(report: VerifyReport, path: Path) -> None:
    """Write the verification summary to ``path`` (atomically)."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.worksheet.properties import PageSetupProperties

    from loopdocs.core.wording import CAUTION
    from loopdocs.core.files import atomic_write
    from loopdocs.sheets.cells import keep_as_text

    wb = Workbook()
    ws = wb.active
    ws.title = "Summary"
    bold = Font(bold=True)
    ws.append([f"Verification of {Path(report.path).name}: {report.project}" + (f", revision {report.revision}" if report.revision else "")])
    ws["A1"].font = Font(bold=True, size=13)
    ws.append(["CAUTION: " + CAUTION])
    ws["A2"].font = Font(bold=True, color="C00000")
    c = report.counts
    ws.append([f"{report.tested} point(s) tested: {c['pass']} pass, {c['fail']} fail, "
               f"{c['failure current']} failure current, {c['invalid']} invalid entries, "
               f"{c['no tolerance']} without tolerance, {c['refused']} refused, {c['not tested']} not tested"])
    ws.append([])
    header = ["Tag", "Check", "Loop", "Status", "Pass", "Fail", "Failure current", "Invalid entries", "No tolerance",
              "Refused", "Not tested", "As-found failures", "Largest as-found error, % of span",
              "Largest as-left error, % of span", "Max hysteresis, % of span"]
    ws.append(header)
    for cell in ws[5]:
        cell.font = bold
        cell.alignment = Alignment(wrap_text=True, vertical="bottom")
    ws.row_dimensions[5].height = 30
    for t in report.tags:
        k = t.counts
        ws.append([t.tag, t.check, t.loop, t.status, k["pass"], k["fail"], k["failure current"], k["invalid"],
                   k["no tolerance"], k["refused"], k["not tested"], t.as_found_failures,
                   _round(t.largest_as_found_error_pct), _round(t.largest_as_left_error_pct),
                   _round(t.max_hysteresis_pct)])
        ws.cell(ws.max_row, 4).fill = PatternFill("solid", fgColor=_STATUS_FILL.get(t.status, "FFFFFF"))
    ws.freeze_panes = "A6"
    ws.print_title_rows = "5:5"
    for letter, width in zip("ABCDEFGHIJKLMNO", (14, 12, 10, 14, 6, 6, 9, 9, 12, 8, 10, 14, 18, 18, 22)):
        ws.column_dimensions[letter].width = width

    pts = wb.create_sheet("Points")
    pts.append(["Ref", "Tag", "Check", "Sheet", "Row", "Point %", "Dir", "Expected", "Unit", "Tolerance, % of span",
                "As-Found", "Error found, % of span", "As-Left", "Error left, % of span", "Status", "Reason"])
    for cell in pts[1]:
        cell.font = bold
        cell.alignment = Alignment(wrap_text=True, vertical="bottom")
    pts.row_dimensions[1].height = 30
    rows = [p for t in report.tags for p in t.points] + list(report.unknown_rows)
    for p in rows:
        f, l = p.as_found, p.as_left
        pts.append([p.ref, p.tag, p.check, p.sheet, p.row, p.percent, p.direction, p.expected, p.unit, p.tolerance_pct,
                    f.value if f else None, _round(f.error_pct) if f else None,
                    l.value if l else None, _round(l.error_pct) if l else None, p.status, p.reason])
        pts.cell(pts.max_row, 15).fill = PatternFill("solid", fgColor=_STATUS_FILL.get(p.status, "FFFFFF"))
    pts.freeze_panes = "C2"
    pts.print_title_rows = "1:1"
    for letter, width in zip("ABCDEFGHIJKLMNOP", (14, 12, 11, 10, 6, 8, 6, 10, 9, 10, 10, 12, 10, 12, 12, 40)):
        pts.column_dimensions[letter].width = width
    for sheet in (ws, pts):
        sheet.page_setup.orientation = "landscape"
        sheet.page_setup.paperSize = sheet.PAPERSIZE_A4
        sheet.sheet_properties.pageSetUpPr = PageSetupProperties(fitToPage=True)
        sheet.page_setup.fitToWidth = 1
        sheet.page_setup.fitToHeight = 0
        sheet.oddHeader.left.text = report.project.replace("&", "&&")
        sheet.oddHeader.center.text = "&A"
        sheet.oddHeader.right.text = "Page &P of &N"
    keep_as_text(wb)
    atomic_write(Path(path), lambda tmp: wb.save(tmp))


def _round(value: float | None) -> float | None:
    return None if value is None else round(value, 4)
