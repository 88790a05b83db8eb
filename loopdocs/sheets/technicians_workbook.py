"""The technicians' calibration workbook: written from a ``CalibrationSet``, read back for ``verify``.

Layout (every value sheet, one per loop or per plant area):

- rows 1 to 4: title (project, loop or area and service), index and revision, the
  caution (``report.CAUTION``), and cells for technician, date and calibrator;
- row 6: the column header (frozen, repeated on every printed page);
- per table, all worded by ``loopdocs.calibration.presentation`` (as on the loop sheet
  and the terminal): a shaded title row (tag, what is checked, service, range,
  tolerance), note rows (NAMUR NE 43 levels, control-system scaling, square-root
  convention ...), a row with the table's own heads and units over the columns they
  head (``Apply degC``, ``Simulate ohm``, ``Expect mA``), then one row per test point
  and direction, numbers shown with the view's decimals: Ref, Tag, Check, Point %, Dir, Apply, Simulate (ohm, mV, or
  the signal at the element), [Simulate at the site reference junction], Expected,
  Unit, Low limit, High limit, As-Found, As-Left, Remarks.

Only As-Found, As-Left, Remarks and the technician cells are unlocked (the sheets are
protected without a password, against slips, not against intent); As-Found and As-Left
take numbers only (data validation), and turn green or red against the limits.

A very hidden sheet (``_record``) keeps, per test row, the expected values as issued
and a digest of the visible row (:func:`row_digest`); ``read_workbook`` gives both
back, so ``verify`` can refuse rows whose expected values were edited. The digest
detects edits; it is not a signature (anyone can recompute it).
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any, Iterable

from loopdocs.calc.tables import CalibrationTable
from loopdocs.calibration.presentation import (
    CALIBRATOR_BASIS,
    EXPECT,
    SIMULATE as SIMULATE_ROLE,
    APPLY,
    TableView,
    present_table,
)
from loopdocs.calibration.project_tables import CalibrationSet
from loopdocs.calibration.workbook_record import (
    CHECK_NAMES,
    IssuedRow,
    ReturnedWorkbook,
    SeenRow,
    canonical_text,
    row_digest,
)
from loopdocs.core.errors import InputError

RECORD_SHEET = "_record"
CONTENTS_SHEET = "Contents"
FORMAT_TAG = "loopdocs calibration workbook 1"
HEADER_ROW = 6
#: Header of the column with what a calibrator sources (ohm, mV) or the signal an element receives.
SIMULATE = "Simulate / signal"
#: Header of the column with the input (or the DP) in the calibrator's unit (``calibrate --pressure-unit``).
CALIBRATOR = "Apply, calibrator unit"
FIRST_ROW = HEADER_ROW + 1

RECORD_COLUMNS = (
    "ref", "sheet", "tag", "check", "loop", "percent", "direction", "apply", "apply_unit",
    "expected", "unit", "low", "high", "output_span", "tolerance_pct", "digest",
)

#: Ref of a test row: ``TAG/NN``; a loop check's ``TAG/LNN``, a fail-action test's ``TAG/FNN``, an alarm test's
#: ``TAG/ANN``, a switch test's ``TAG/SNN``.
_REF_PREFIX = {"loop check": "L", "fail action": "F", "alarm": "A", "switch": "S", "accessory": "X"}

_FILL_TITLE = "DCE6F1"
_FILL_HEADER = "BFBFBF"
_FILL_INPUT = "FFF2CC"


def _sheet_key(table: CalibrationTable, cset: CalibrationSet, sheet_per: str) -> str:
    if sheet_per == "area":
        return cset.loop_areas.get(table.loop, "") or "No area"
    return table.loop or "No loop"


_BAD_SHEET_CHARS = re.compile(r"[\[\]:*?/\\]")


def _sheet_name(key: str, used: set[str]) -> str:
    from loopdocs.core.names import without_bidi_controls

    base = _BAD_SHEET_CHARS.sub("-", without_bidi_controls(key)).strip("'")[:28] or "Sheet"
    if base in (RECORD_SHEET, CONTENTS_SHEET):
        base = f"{base}-1"
    name, n = base, 2
    while name.lower() in used:
        name = f"{base[:25]}~{n}"
        n += 1
    used.add(name.lower())
    return name


def _number_format(decimals: int, unit: str = "") -> str:
    body = "0" if decimals == 0 else "0." + "0" * decimals
    if unit:
        safe = unit.replace('"', "")
        return f'{body}" {safe}"'
    return body


def _title_text(view: TableView) -> str:
    """The shaded title row: tag and what is checked, service, range, tolerance (all from the view)."""
    parts = [f"{view.tag}  {view.words}"]
    if view.service:
        parts.append(view.service)
    parts += [view.range_text, f"tolerance {view.tolerance}"]
    return "  |  ".join(parts)


def _simulate_columns(view: TableView, reference_junction_c: float | None) -> dict[str, int]:
    """Which of the view's simulated columns goes in which workbook column: ``main`` (the
    Simulate / signal column), ``rj`` (at the site reference junction), ``calibrator``
    (the input in the calibrator's unit); values are indexes into ``view.columns``."""
    placed: dict[str, int] = {}
    for i, column in enumerate(view.columns):
        if column.role != SIMULATE_ROLE:
            continue
        if column.basis == CALIBRATOR_BASIS:
            placed.setdefault("calibrator", i)
        elif column.reference_junction_c in (None, 0.0):
            placed.setdefault("main", i)
        elif reference_junction_c is not None and column.reference_junction_c == reference_junction_c:
            placed.setdefault("rj", i)
    return placed


# --------------------------------------------------------------------------- writing


def write_workbook(cset: CalibrationSet, path: Path, sheet_per: str = "loop") -> dict[str, int]:
    """Write the workbook for ``cset`` to ``path`` atomically; returns rows per sheet.

    ``sheet_per`` is ``loop`` (one sheet per loop) or ``area`` (per plant area prefix).
    """
    from openpyxl import Workbook
    from openpyxl.formatting.rule import FormulaRule
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation
    from openpyxl.worksheet.properties import PageSetupProperties

    from loopdocs.core.wording import CAUTION
    from loopdocs.core.files import atomic_write
    from loopdocs.sheets.cells import keep_as_text

    if sheet_per not in ("loop", "area"):
        raise ValueError(f"sheet_per must be loop or area, got {sheet_per!r}")
    rj = cset.reference_junction_c if cset.reference_junction_c not in (None, 0.0) else None
    views = [present_table(table) for table in cset.tables]
    placements = [_simulate_columns(view, rj) for view in views]
    columns = ["Ref", "Tag", "Check", "Point", "Dir", "Apply", SIMULATE]
    if rj is not None:
        columns.append(f"Simulate, RJ {rj:g} degC")
    if any("calibrator" in placed for placed in placements):
        columns.append(CALIBRATOR)
    columns += ["Expected", "Unit", "Low limit", "High limit", "As-Found", "As-Left", "Remarks"]
    col = {name: i + 1 for i, name in enumerate(columns)}
    sim_col = {"main": col[SIMULATE], "rj": col.get(f"Simulate, RJ {rj:g} degC") if rj is not None else None,
               "calibrator": col.get(CALIBRATOR)}
    widths = {"Ref": 12, "Tag": 12, "Check": 11, "Point": 9, "Dir": 8, "Apply": 14, SIMULATE: 13, CALIBRATOR: 13,
              "Expected": 12, "Unit": 9, "Low limit": 11, "High limit": 11, "As-Found": 12, "As-Left": 12,
              "Remarks": 28}
    last_col = get_column_letter(len(columns))

    wb = Workbook()
    contents = wb.active
    contents.title = CONTENTS_SHEET
    thin = Side(style="thin", color="808080")
    box = Border(left=thin, right=thin, top=thin, bottom=thin)
    bold = Font(bold=True)
    unlocked = Protection(locked=False)
    input_fill = PatternFill("solid", fgColor=_FILL_INPUT)
    title_fill = PatternFill("solid", fgColor=_FILL_TITLE)
    header_fill = PatternFill("solid", fgColor=_FILL_HEADER)
    green = PatternFill("solid", fgColor="C6EFCE")
    red = PatternFill("solid", fgColor="FFC7CE")

    # group tables into sheets, in the order the set gives them
    groups: dict[str, list[tuple[CalibrationTable, TableView, dict[str, int]]]] = {}
    for table, view, placed in zip(cset.tables, views, placements):
        groups.setdefault(_sheet_key(table, cset, sheet_per), []).append((table, view, placed))

    used: set[str] = {CONTENTS_SHEET.lower(), RECORD_SHEET.lower()}
    issued: list[IssuedRow] = []
    counts: dict[str, int] = {}
    for key, tables in groups.items():
        name = _sheet_name(key, used)
        ws = wb.create_sheet(name)
        service = cset.loop_services.get(key, "") if sheet_per == "loop" else ""
        ws["A1"] = f"Calibration: {'loop' if sheet_per == 'loop' else 'area'} {key}" + (f"  {service}" if service else "")
        ws["A1"].font = Font(bold=True, size=14)
        ws["A2"] = f"{cset.project}  |  index {Path(cset.index_path).name}" + (f", revision {cset.revision}" if cset.revision else "")
        ws["A3"] = "CAUTION: " + CAUTION
        ws["A3"].font = Font(bold=True, color="C00000")
        ws["A3"].alignment = Alignment(wrap_text=True, vertical="top")
        ws.merge_cells(f"A3:{last_col}3")
        ws.row_dimensions[3].height = 30
        ws.merge_cells(f"A1:{last_col}1")
        ws.merge_cells(f"A2:{last_col}2")
        # technician, date, calibrator
        for label, label_col, value_col in (("Technician", 1, 2), ("Date", 4, 5), ("Calibrator, serial, cal. due", 7, 9)):
            ws.cell(4, label_col, label).font = bold
            cell = ws.cell(4, value_col)
            cell.protection = unlocked
            cell.fill = input_fill
            cell.border = box
        ws.merge_cells(start_row=4, start_column=2, end_row=4, end_column=3)
        ws.merge_cells(start_row=4, start_column=9, end_row=4, end_column=len(columns))
        for name_, c in col.items():
            cell = ws.cell(HEADER_ROW, c, name_)
            cell.font = bold
            cell.fill = header_fill
            cell.border = box
            cell.alignment = Alignment(horizontal="center", vertical="center", wrap_text=True)
            ws.column_dimensions[get_column_letter(c)].width = widths.get(name_, 14)
        ws.row_dimensions[HEADER_ROW].height = 30

        r = FIRST_ROW
        n_points = 0
        value_ranges: dict[tuple[float, float, str], list[str]] = {}
        for table, view, placed in tables:
            ws.cell(r, 1, _title_text(view)).font = bold
            ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=len(columns))
            for c in range(1, len(columns) + 1):
                ws.cell(r, c).fill = title_fill
            r += 1
            for note in view.notes:
                error_mark = note.emphasis == "error"
                ws.cell(r, 2, note.text).font = Font(italic=True, bold=bool(note.emphasis),
                                                     color="C00000" if error_mark else None)
                ws.merge_cells(start_row=r, start_column=2, end_row=r, end_column=len(columns))
                r += 1
            # the view's heads with their units, over the columns they head
            apply_col, expect_col = view.column(APPLY), view.column(EXPECT)
            assert apply_col is not None and expect_col is not None
            heads = {col["Point"]: view.percent_head, col["Apply"]: apply_col.label, col["Expected"]: expect_col.label}
            for slot, index in placed.items():
                if sim_col.get(slot) is not None:
                    heads[sim_col[slot]] = view.columns[index].label  # type: ignore[index]
            for c, text in heads.items():
                cell = ws.cell(r, c, text)
                cell.font = Font(italic=True, bold=True)
                cell.alignment = Alignment(horizontal="right", wrap_text=True)
            r += 1
            check = CHECK_NAMES.get(table.kind, table.kind)
            tol = table.tolerance
            i_apply, i_expect = view.columns.index(apply_col), view.columns.index(expect_col)
            for i, reading in enumerate(view.readings, start=1):
                point = reading.point
                ref = f"{table.tag}/{_REF_PREFIX.get(table.kind, '')}{i:02d}"
                expected = reading.values[i_expect]
                low, high = reading.low, reading.high
                values = {
                    "Ref": ref, "Tag": table.tag, "Check": check, "Point": point.percent, "Dir": point.direction,
                    "Apply": reading.values[i_apply], "Expected": expected, "Unit": expect_col.unit,
                    "Low limit": low, "High limit": high,
                }
                for name_, value in values.items():
                    ws.cell(r, col[name_], value)
                for slot, index in placed.items():
                    c_sim = sim_col.get(slot)
                    value = reading.values[index]
                    if c_sim is not None and value is not None:
                        ws.cell(r, c_sim, value).number_format = _number_format(
                            view.columns[index].decimals, view.columns[index].unit)
                ws.cell(r, col["Point"]).number_format = _number_format(view.percent_decimals, "%")
                ws.cell(r, col["Apply"]).number_format = _number_format(apply_col.decimals, apply_col.unit)
                for name_ in ("Expected", "Low limit", "High limit"):
                    ws.cell(r, col[name_]).number_format = _number_format(expect_col.decimals)
                for name_ in ("As-Found", "As-Left", "Remarks"):
                    cell = ws.cell(r, col[name_])
                    cell.protection = unlocked
                    cell.fill = input_fill
                    if name_ != "Remarks":
                        cell.number_format = _number_format(expect_col.decimals)
                for c in range(1, len(columns) + 1):
                    ws.cell(r, c).border = box
                span = table.output_span
                olo = min(table.output_range[0].value, table.output_range[1].value)
                vkey = (olo - span, olo + 2 * span, point.output.unit)
                value_ranges.setdefault(vkey, []).append(
                    f"{get_column_letter(col['As-Found'])}{r}:{get_column_letter(col['As-Left'])}{r}"
                )
                issued.append(IssuedRow(
                    ref=ref, sheet=name, tag=table.tag, check=check, loop=table.loop, percent=point.percent,
                    direction=point.direction, apply=point.input.value, apply_unit=point.input.unit,
                    expected=expected, unit=point.output.unit, low=low, high=high, output_span=span,
                    tolerance_pct=tol.percent_of_span if tol else None,
                    digest=row_digest(ref, table.tag, check, point.percent, point.direction, point.input.value,
                                      expected, point.output.unit, low, high),
                ))
                r += 1
                n_points += 1
            r += 1  # blank row between tables
        last_row = r - 1
        counts[name] = n_points

        for (vmin, vmax, unit), ranges in value_ranges.items():
            dv = DataValidation(
                type="decimal", operator="between", formula1=f"{vmin:.6g}", formula2=f"{vmax:.6g}",
                allow_blank=True, showErrorMessage=True, showInputMessage=True,
                errorTitle="Reading", error=f"Enter the reading as a number in {unit}; leave blank if not tested.",
                promptTitle="Reading", prompt=f"Reading in {unit}. Blank = not tested.",
            )
            dv.sqref = " ".join(ranges)  # type: ignore[assignment]
            ws.add_data_validation(dv)
        found, left = get_column_letter(col["As-Found"]), get_column_letter(col["As-Left"])
        lo_c, hi_c = get_column_letter(col["Low limit"]), get_column_letter(col["High limit"])
        area = f"{found}{FIRST_ROW}:{left}{max(FIRST_ROW, last_row)}"
        anchor = f"{found}{FIRST_ROW}"
        ok = f"AND(ISNUMBER({anchor}),ISNUMBER(${lo_c}{FIRST_ROW}),{anchor}>=${lo_c}{FIRST_ROW},{anchor}<=${hi_c}{FIRST_ROW})"
        bad = f"AND(ISNUMBER({anchor}),ISNUMBER(${lo_c}{FIRST_ROW}),OR({anchor}<${lo_c}{FIRST_ROW},{anchor}>${hi_c}{FIRST_ROW}))"
        ws.conditional_formatting.add(area, FormulaRule(formula=[ok], fill=green))
        ws.conditional_formatting.add(area, FormulaRule(formula=[bad], fill=red))

        ws.freeze_panes = f"{get_column_letter(col['Check'])}{FIRST_ROW}"
        ws.print_title_rows = f"{HEADER_ROW}:{HEADER_ROW}"
        ws.print_area = f"A1:{last_col}{max(HEADER_ROW, last_row)}"
        _page_setup(ws, cset, PageSetupProperties)
        ws.protection.sheet = True
        ws.protection.formatColumns = False
        ws.protection.formatRows = False
        ws.protection.selectLockedCells = False
        ws.protection.selectUnlockedCells = False

    _write_contents(contents, cset, counts, sheet_per, rj, bold, PageSetupProperties)
    _write_record(wb, cset, issued)
    keep_as_text(wb)
    atomic_write(Path(path), lambda tmp: wb.save(tmp))
    return counts


def _page_setup(ws: Any, cset: CalibrationSet, PageSetupProperties: Any) -> None:
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = ws.PAPERSIZE_A4
    ws.sheet_properties.pageSetUpPr = PageSetupProperties(fitToPage=True)
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    ws.print_options.gridLines = False
    ws.page_margins.left = ws.page_margins.right = 0.5
    ws.page_margins.top = ws.page_margins.bottom = 0.75
    project = cset.project.replace("&", "&&")
    ws.oddHeader.left.text = project
    ws.oddHeader.center.text = "&A"
    ws.oddHeader.right.text = "Page &P of &N"
    ws.oddFooter.left.text = "Confirm values against the issued design. Isolate and verify before work."
    ws.oddFooter.right.text = "Local codes, site procedures and licensed engineering practice prevail."
    for part in (ws.oddHeader.left, ws.oddHeader.center, ws.oddHeader.right, ws.oddFooter.left, ws.oddFooter.right):
        part.size = 8


_INSTRUCTIONS = (
    "How to use this workbook",
    "1. Confirm every value against the issued design before work; isolate and verify before touching live plant.",
    "2. Apply the value in the Apply column, or source the Simulate value (ohm for RTDs, mV for thermocouples; "
    "for a square-root flow transmitter ranged in flow, Apply is the flow and Simulate is the differential "
    "pressure to apply). "
    "In a loop check, set the controller output (manual) to the Apply value; the signal column is what the element "
    "should receive.",
    "3. Read the output signal (mA, psig, kPa) or the valve travel (%) and write it in As-Found before any "
    "adjustment. Write As-Left after adjusting; "
    "if nothing was adjusted, As-Found stands and As-Left may stay blank.",
    "4. Go up through the points, then down; approach each falling point from above (past 100 % first).",
    "5. Fail action (one row per valve): hold the valve at 50 % travel, remove the instrument air supply (or the "
    "signal, for an electric actuator) and write the valve travel it comes to rest at.",
    "6. A transmitter reading at or below 3.6 mA or at or above 21 mA is a failure signal (NAMUR NE 43): write it "
    "as read; loopdocs verify reports it as a failure current.",
    "7. Leave a cell blank when the point was not tested: blank is never a pass.",
    "8. Do not edit Ref, Apply, Expected or the limits: loopdocs verify refuses rows whose issued values changed.",
    "9. Cells turn green inside the limits and red outside them. Return the file for loopdocs verify.",
)


def _write_contents(ws: Any, cset: CalibrationSet, counts: dict[str, int], sheet_per: str,
                    rj: float | None, bold: Any, PageSetupProperties: Any) -> None:
    from openpyxl.styles import Alignment, Font

    from loopdocs.core.wording import CAUTION

    ws["A1"] = f"Calibration workbook: {cset.project}"
    ws["A1"].font = Font(bold=True, size=14)
    ws["A2"] = f"Index {Path(cset.index_path).name}" + (f", revision {cset.revision}" if cset.revision else "")
    ws["A3"] = "CAUTION: " + CAUTION
    ws["A3"].font = Font(bold=True, color="C00000")
    ws["A3"].alignment = Alignment(wrap_text=True, vertical="top")
    ws.merge_cells("A3:D3")
    ws.row_dimensions[3].height = 45
    r = 5
    ws.cell(r, 1, "Thermocouple reference junction").font = bold
    ws.cell(r, 2, f"0 degC ({SIMULATE} column)" + (f" and {rj:g} degC (Simulate, RJ column)" if rj is not None else ""))
    r += 2
    for i, line in enumerate(_INSTRUCTIONS):
        cell = ws.cell(r, 1, line)
        cell.font = bold if i == 0 else Font()
        ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=4)
        r += 1
    r += 1
    ws.cell(r, 1, "Sheet").font = bold
    ws.cell(r, 2, "Test points").font = bold
    ws.cell(r, 3, "Tags").font = bold
    r += 1
    tags_by_sheet: dict[str, list[str]] = {}
    for row_sheet, tag in _sheet_tags(cset, counts, sheet_per):
        tags_by_sheet.setdefault(row_sheet, [])
        if tag not in tags_by_sheet[row_sheet]:
            tags_by_sheet[row_sheet].append(tag)
    for name, n in counts.items():
        ws.cell(r, 1, name)
        ws.cell(r, 2, n)
        ws.cell(r, 3, ", ".join(tags_by_sheet.get(name, [])))
        r += 1
    if cset.skipped:
        r += 1
        ws.cell(r, 1, "Tags without a table").font = bold
        r += 1
        for s in cset.skipped:
            ws.cell(r, 1, s.tag)
            ws.cell(r, 2, s.loop)
            ws.cell(r, 3, s.reason)
            r += 1
    ws.column_dimensions["A"].width = 30
    ws.column_dimensions["B"].width = 26
    ws.column_dimensions["C"].width = 90
    ws.column_dimensions["D"].width = 10
    ws.print_area = f"A1:D{r}"
    _page_setup(ws, cset, PageSetupProperties)


def _sheet_tags(cset: CalibrationSet, counts: dict[str, int], sheet_per: str) -> Iterable[tuple[str, str]]:
    used: set[str] = {CONTENTS_SHEET.lower(), RECORD_SHEET.lower()}
    names: dict[str, str] = {}
    for table in cset.tables:
        key = _sheet_key(table, cset, sheet_per)
        if key not in names:
            names[key] = _sheet_name(key, used)
        yield names[key], table.tag


def _write_record(wb: Any, cset: CalibrationSet, issued: list[IssuedRow]) -> None:
    ws = wb.create_sheet(RECORD_SHEET)
    ws.sheet_state = "veryHidden"
    ws.append([FORMAT_TAG, cset.project, cset.revision, cset.index_path])
    ws.append(list(RECORD_COLUMNS))
    for row in issued:
        ws.append([getattr(row, name) for name in RECORD_COLUMNS])
    ws.protection.sheet = True


# --------------------------------------------------------------------------- reading


def _number_or_none(value: Any) -> float | None:
    if value is None or value == "":
        return None
    return float(value)


def read_workbook(path: Path) -> ReturnedWorkbook:
    """Read a returned workbook: the issued record and every visible row with a Ref.

    Raises ``InputError`` (one line) when the file cannot be opened or is not a loopdocs
    calibration workbook (no record sheet, or a record in an unknown format).
    """
    path = Path(path)
    try:
        from openpyxl import load_workbook

        # formulas as written, not their cached results: a reading typed as a formula (=H23
        # copies the expected value) is an invalid entry, never graded
        wb = load_workbook(path, data_only=False, read_only=False)
    except FileNotFoundError:
        raise InputError(f"{path}: no such file") from None
    except Exception as exc:  # zip, XML and format errors of many kinds
        raise InputError(f"{path}: cannot be read as an .xlsx workbook ({type(exc).__name__})") from None
    if RECORD_SHEET not in wb.sheetnames:
        raise InputError(f"{path}: not a loopdocs calibration workbook (no {RECORD_SHEET} sheet); write one with loopdocs calibrate --out")
    rec = wb[RECORD_SHEET]
    rows = list(rec.iter_rows(values_only=True))
    if len(rows) < 2 or rows[0][0] != FORMAT_TAG or tuple(rows[1][: len(RECORD_COLUMNS)]) != RECORD_COLUMNS:
        raise InputError(f"{path}: the {RECORD_SHEET} sheet is not in the format {FORMAT_TAG!r}")
    project, revision = rows[0][1] or "", rows[0][2] or ""
    issued: list[IssuedRow] = []
    try:
        for values in rows[2:]:
            if values[0] is None:
                continue
            d = dict(zip(RECORD_COLUMNS, values))
            issued.append(IssuedRow(
                ref=str(d["ref"]), sheet=str(d["sheet"]), tag=str(d["tag"]), check=str(d["check"]),
                loop=str(d["loop"] or ""), percent=float(d["percent"]), direction=str(d["direction"]),
                apply=float(d["apply"]), apply_unit=str(d["apply_unit"]), expected=float(d["expected"]),
                unit=str(d["unit"]), low=_number_or_none(d["low"]), high=_number_or_none(d["high"]),
                output_span=float(d["output_span"]), tolerance_pct=_number_or_none(d["tolerance_pct"]),
                digest=str(d["digest"]),
            ))
    except (TypeError, ValueError) as exc:
        raise InputError(f"{path}: the {RECORD_SHEET} sheet has a damaged row ({exc})") from None
    seen: list[SeenRow] = []
    for ws in wb.worksheets:
        if ws.title in (RECORD_SHEET, CONTENTS_SHEET):
            continue
        header_row, col = _find_header(ws)
        if header_row is None:
            continue
        for r in range(header_row + 1, ws.max_row + 1):
            ref = ws.cell(r, col["Ref"]).value
            if ref is None or not isinstance(ref, str) or "/" not in ref or " " in ref.strip():
                continue

            def cell(name: str) -> Any:
                return ws.cell(r, col[name]).value if name in col else None

            seen.append(SeenRow(
                ref=ref.strip(), sheet=ws.title, row=r, tag=cell("Tag"), check=cell("Check"), percent=cell("Point"),
                direction=cell("Dir"), apply=cell("Apply"), expected=cell("Expected"), unit=cell("Unit"),
                low=cell("Low limit"), high=cell("High limit"), as_found=cell("As-Found"), as_left=cell("As-Left"),
                remarks=cell("Remarks"),
            ))
    return ReturnedWorkbook(str(path), str(project), str(revision), tuple(issued), tuple(seen))


def _find_header(ws: Any) -> tuple[int | None, dict[str, int]]:
    """The header row (the first in the first 20 rows with Ref in column A) and column numbers by name."""
    for r in range(1, min(ws.max_row, 20) + 1):
        if ws.cell(r, 1).value == "Ref":
            col = {}
            for c in range(1, ws.max_column + 1):
                value = ws.cell(r, c).value
                if isinstance(value, str):
                    col[value.strip()] = c
            return r, col
    return None, {}
