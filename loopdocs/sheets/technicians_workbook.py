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
    The workbook is streamed (openpyxl write-only mode): each sheet's rows go to disk as
    they are made, as text (:class:`loopdocs.sheets.sheet_rows.RowWriter`), and the sheet
    is closed before the next, so memory does not grow with the number of test points
    (10,000 loops within a minute; ``benchmarks/bench_workbook.py``).
    """
    from openpyxl import Workbook

    from loopdocs.core.files import atomic_write

    wb = Workbook(write_only=True)
    try:
        counts = _fill_workbook(cset, wb, sheet_per)
        atomic_write(Path(path), lambda tmp: wb.save(tmp))
    except BaseException:
        _discard(wb)
        raise
    return counts


def _discard(wb: Any) -> None:
    """Close and delete the sheet parts of a workbook that will not be saved (a write that
    failed or was interrupted): none left open or on disk until the process ends."""
    for ws in wb._sheets:
        writer = getattr(ws, "_writer", None)
        if writer is None:
            continue
        try:
            writer.xf.close()
            writer.cleanup()
        except (OSError, ValueError):
            pass


def _fill_workbook(cset: CalibrationSet, wb: Any, sheet_per: str) -> dict[str, int]:
    """The sheets of ``write_workbook``, each written and closed in turn; rows per sheet."""
    from openpyxl.formatting.rule import FormulaRule
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation
    from openpyxl.worksheet.properties import PageSetupProperties

    from loopdocs.core.wording import CAUTION
    from loopdocs.sheets.sheet_rows import RowWriter

    if sheet_per not in ("loop", "area"):
        raise ValueError(f"sheet_per must be loop or area, got {sheet_per!r}")
    rj = cset.reference_junction_c if cset.reference_junction_c not in (None, 0.0) else None
    columns = ["Ref", "Tag", "Check", "Point", "Dir", "Apply", SIMULATE]
    if rj is not None:
        columns.append(f"Simulate, RJ {rj:g} degC")
    # a view has a column in the calibrator's unit when a point simulates in it (present_table);
    # the views themselves are made sheet by sheet, so that they are not all held at once
    if any(sim.basis == CALIBRATOR_BASIS for table in cset.tables for point in table.points for sim in point.simulate):
        columns.append(CALIBRATOR)
    columns += ["Expected", "Unit", "Low limit", "High limit", "As-Found", "As-Left", "Remarks"]
    n_cols = len(columns)
    col = {name: i + 1 for i, name in enumerate(columns)}
    sim_col = {"main": col[SIMULATE], "rj": col.get(f"Simulate, RJ {rj:g} degC") if rj is not None else None,
               "calibrator": col.get(CALIBRATOR)}
    widths = {"Ref": 12, "Tag": 12, "Check": 11, "Point": 9, "Dir": 8, "Apply": 14, SIMULATE: 13, CALIBRATOR: 13,
              "Expected": 12, "Unit": 9, "Low limit": 11, "High limit": 11, "As-Found": 12, "As-Left": 12,
              "Remarks": 28}
    last_col = get_column_letter(n_cols)
    found_letter, left_letter = get_column_letter(col["As-Found"]), get_column_letter(col["As-Left"])

    contents = wb.create_sheet(CONTENTS_SHEET)
    style = _StyleMaker(contents)
    thin = Side(style="thin", color="808080")
    box = Border(left=thin, right=thin, top=thin, bottom=thin)
    bold = Font(bold=True)
    unlocked = Protection(locked=False)
    input_fill = PatternFill("solid", fgColor=_FILL_INPUT)
    title_fill = PatternFill("solid", fgColor=_FILL_TITLE)
    header_fill = PatternFill("solid", fgColor=_FILL_HEADER)
    green = PatternFill("solid", fgColor="C6EFCE")
    red = PatternFill("solid", fgColor="FFC7CE")
    # the borders a merged range gives the cells on its edges (openpyxl MergedCellRange.format)
    merged_right = Border(top=thin, bottom=thin, right=thin)
    merged_middle = Border(top=thin, bottom=thin)
    # the styles of the loop sheets, each made once
    sheet_title = style(font=Font(bold=True, size=14))
    plain = style()
    caution = style(font=Font(bold=True, color="C00000"), alignment=Alignment(wrap_text=True, vertical="top"))
    label = style(font=bold)
    input_box = style(protection=unlocked, fill=input_fill, border=box)
    input_right = style(protection=unlocked, border=merged_right)
    input_middle = style(protection=unlocked, border=merged_middle)
    column_head = style(font=bold, fill=header_fill, border=box,
                        alignment=Alignment(horizontal="center", vertical="center", wrap_text=True))
    table_title = style(font=bold, fill=title_fill)
    title_rest = style(fill=title_fill)
    note_styles: dict[Any, Any] = {}
    unit_head = None  # made at first use, as are the note styles: the style table keeps the order of first use
    boxed: dict[str | None, Any] = {}
    inputs_styled: dict[str | None, Any] = {}

    def box_style(number_format: str | None) -> Any:
        if number_format not in boxed:
            boxed[number_format] = style(border=box, **({"number_format": number_format} if number_format else {}))
        return boxed[number_format]

    def input_style(number_format: str | None) -> Any:
        if number_format not in inputs_styled:
            inputs_styled[number_format] = style(border=box, protection=unlocked, fill=input_fill,
                                                 **({"number_format": number_format} if number_format else {}))
        return inputs_styled[number_format]

    # group tables into sheets, in the order the set gives them; names and counts first,
    # since the contents sheet (the first) lists them
    groups: dict[str, list[CalibrationTable]] = {}
    for table in cset.tables:
        groups.setdefault(_sheet_key(table, cset, sheet_per), []).append(table)
    used: set[str] = {CONTENTS_SHEET.lower(), RECORD_SHEET.lower()}
    names = {key: _sheet_name(key, used) for key in groups}
    counts = {names[key]: sum(len(table.points) for table in tables) for key, tables in groups.items()}  # a reading a point

    _write_contents(contents, cset, counts, sheet_per, rj, style, PageSetupProperties)
    record = _start_record(wb, cset)

    n_found, n_left, n_remarks = col["As-Found"], col["As-Left"], col["Remarks"]
    for key, tables in groups.items():
        name = names[key]
        ws = _new_sheet(wb, name)
        # what is written before the rows: column widths, row heights, panes, page setup
        for name_, c in col.items():
            ws.column_dimensions[get_column_letter(c)].width = widths.get(name_, 14)
        ws.row_dimensions[3].height = 30
        ws.row_dimensions[HEADER_ROW].height = 30
        ws.freeze_panes = f"{get_column_letter(col['Check'])}{FIRST_ROW}"
        _page_setup(ws, cset, PageSetupProperties)
        rows = RowWriter(ws)

        def merge(row: int, first: int, last: int) -> None:
            rows.merge(f"{get_column_letter(first)}{row}:{get_column_letter(last)}{row}")

        service = cset.loop_services.get(key, "") if sheet_per == "loop" else ""
        rows.append([(f"Calibration: {'loop' if sheet_per == 'loop' else 'area'} {key}" + (f"  {service}" if service else ""),
                      sheet_title)])
        rows.append([(f"{cset.project}  |  index {Path(cset.index_path).name}"
                      + (f", revision {cset.revision}" if cset.revision else ""), plain)])
        rows.append([("CAUTION: " + CAUTION, caution)])
        for row in (3, 1, 2):
            merge(row, 1, n_cols)
        # technician, date, calibrator: labels, and input cells (merged B:C and I:last)
        tech: list[Any] = [None] * n_cols
        for text, label_col, value_col in (("Technician", 1, 2), ("Date", 4, 5), ("Calibrator, serial, cal. due", 7, 9)):
            tech[label_col - 1] = (text, label)
            tech[value_col - 1] = (None, input_box)
        tech[2] = (None, input_right)
        for c in range(10, n_cols + 1):
            tech[c - 1] = (None, input_right if c == n_cols else input_middle)
        rows.append(tech)
        merge(4, 2, 3)
        merge(4, 9, n_cols)
        rows.append([])
        rows.append([(name_, column_head) for name_ in col])

        value_ranges: dict[tuple[float, float, str], list[str]] = {}
        title_tail = [(None, title_rest)] * (n_cols - 1)
        for table in tables:
            view = present_table(table)
            placed = _simulate_columns(view, rj)
            r = rows.append([(_title_text(view), table_title)] + title_tail)
            merge(r, 1, n_cols)
            for note in view.notes:
                if note.emphasis not in note_styles:
                    note_styles[note.emphasis] = style(font=Font(italic=True, bold=bool(note.emphasis),
                                                                 color="C00000" if note.emphasis == "error" else None))
                r = rows.append([None, (note.text, note_styles[note.emphasis])])
                merge(r, 2, n_cols)
            # the view's heads with their units, over the columns they head
            apply_col, expect_col = view.column(APPLY), view.column(EXPECT)
            assert apply_col is not None and expect_col is not None
            heads = {col["Point"]: view.percent_head, col["Apply"]: apply_col.label, col["Expected"]: expect_col.label}
            for slot, index in placed.items():
                if sim_col.get(slot) is not None:
                    heads[sim_col[slot]] = view.columns[index].label  # type: ignore[index]
            if unit_head is None:
                unit_head = style(font=Font(italic=True, bold=True), alignment=Alignment(horizontal="right", wrap_text=True))
            head_row: list[Any] = [None] * n_cols
            for c, text in heads.items():
                head_row[c - 1] = (text, unit_head)
            rows.append(head_row)
            check = CHECK_NAMES.get(table.kind, table.kind)
            tol = table.tolerance
            tolerance_pct = tol.percent_of_span if tol else None
            i_apply, i_expect = view.columns.index(apply_col), view.columns.index(expect_col)
            expect_format = _number_format(expect_col.decimals)
            # the style of each column of this table's test rows; simulated columns by value
            row_styles: list[Any] = [box_style(None)] * n_cols
            row_styles[col["Point"] - 1] = box_style(_number_format(view.percent_decimals, "%"))
            row_styles[col["Apply"] - 1] = box_style(_number_format(apply_col.decimals, apply_col.unit))
            sim_styles = {col_: box_style(_number_format(view.columns[index].decimals, view.columns[index].unit))
                          for col_, index in sorted((sim_col.get(slot), index) for slot, index in placed.items()
                                                    if sim_col.get(slot) is not None)}
            for c in (col["Expected"], col["Low limit"], col["High limit"]):
                row_styles[c - 1] = box_style(expect_format)
            row_styles[n_found - 1] = row_styles[n_left - 1] = input_style(expect_format)
            row_styles[n_remarks - 1] = input_style(None)
            span = table.output_span
            olo = min(table.output_range[0].value, table.output_range[1].value)
            prefix = f"{table.tag}/{_REF_PREFIX.get(table.kind, '')}"
            for i, reading in enumerate(view.readings, start=1):
                point = reading.point
                ref = f"{prefix}{i:02d}"
                expected = reading.values[i_expect]
                low, high = reading.low, reading.high
                values: list[Any] = [None] * n_cols
                values[0], values[1], values[2] = ref, table.tag, check
                values[col["Point"] - 1], values[col["Dir"] - 1] = point.percent, point.direction
                values[col["Apply"] - 1], values[col["Expected"] - 1] = reading.values[i_apply], expected
                values[col["Unit"] - 1], values[col["Low limit"] - 1], values[col["High limit"] - 1] = expect_col.unit, low, high
                cells = list(zip(values, row_styles))
                for slot, index in placed.items():
                    c_sim = sim_col.get(slot)
                    value = reading.values[index]
                    if c_sim is not None and value is not None:
                        cells[c_sim - 1] = (value, sim_styles[c_sim])
                r = rows.append(cells)
                vkey = (olo - span, olo + 2 * span, point.output.unit)
                value_ranges.setdefault(vkey, []).append(f"{found_letter}{r}:{left_letter}{r}")
                record.append_values(_record_values(IssuedRow(
                    ref=ref, sheet=name, tag=table.tag, check=check, loop=table.loop, percent=point.percent,
                    direction=point.direction, apply=point.input.value, apply_unit=point.input.unit,
                    expected=expected, unit=point.output.unit, low=low, high=high, output_span=span,
                    tolerance_pct=tolerance_pct,
                    digest=row_digest(ref, table.tag, check, point.percent, point.direction, point.input.value,
                                      expected, point.output.unit, low, high),
                )))
            rows.append([])  # blank row between tables
        last_row = rows.row

        for (vmin, vmax, unit), ranges in value_ranges.items():
            dv = DataValidation(
                type="decimal", operator="between", formula1=f"{vmin:.6g}", formula2=f"{vmax:.6g}",
                allow_blank=True, showErrorMessage=True, showInputMessage=True,
                errorTitle="Reading", error=f"Enter the reading as a number in {unit}; leave blank if not tested.",
                promptTitle="Reading", prompt=f"Reading in {unit}. Blank = not tested.",
            )
            dv.sqref = " ".join(ranges)  # type: ignore[assignment]
            ws.data_validations.append(dv)
        lo_c, hi_c = get_column_letter(col["Low limit"]), get_column_letter(col["High limit"])
        area = f"{found_letter}{FIRST_ROW}:{left_letter}{max(FIRST_ROW, last_row)}"
        anchor = f"{found_letter}{FIRST_ROW}"
        ok = f"AND(ISNUMBER({anchor}),ISNUMBER(${lo_c}{FIRST_ROW}),{anchor}>=${lo_c}{FIRST_ROW},{anchor}<=${hi_c}{FIRST_ROW})"
        bad = f"AND(ISNUMBER({anchor}),ISNUMBER(${lo_c}{FIRST_ROW}),OR({anchor}<${lo_c}{FIRST_ROW},{anchor}>${hi_c}{FIRST_ROW}))"
        ws.conditional_formatting.add(area, FormulaRule(formula=[ok], fill=green))
        ws.conditional_formatting.add(area, FormulaRule(formula=[bad], fill=red))

        ws.print_title_rows = f"{HEADER_ROW}:{HEADER_ROW}"
        ws.print_area = f"A1:{last_col}{max(HEADER_ROW, last_row)}"
        ws.protection.sheet = True
        ws.protection.formatColumns = False
        ws.protection.formatRows = False
        ws.protection.selectLockedCells = False
        ws.protection.selectUnlockedCells = False
        ws.close()  # its rows are on disk; the next sheet starts
        _release_written(ws)

    record.sheet.close()
    wb._sheets.remove(record.sheet)  # streamed alongside the loop sheets, kept last
    wb._sheets.append(record.sheet)
    return counts


def _release_written(ws: Any) -> None:
    """Drop what a closed write-only sheet has written already (merges, validations,
    conditional formats, column and row settings, panes, protection, page setup, local
    names): saving the workbook reads only its name, state, print titles and area, and its
    written part (openpyxl's ExcelWriter and WorkbookWriter); 10,000 sheets held them as
    hundreds of megabytes."""
    for written in ("merged_cells", "data_validations", "conditional_formatting", "column_dimensions",
                    "row_dimensions", "HeaderFooter", "page_setup", "page_margins", "print_options", "views",
                    "protection", "sheet_properties", "sheet_format", "defined_names", "scenarios"):
        setattr(ws, written, None)


def _new_sheet(wb: Any, name: str) -> Any:
    """A write-only sheet ``name`` added last to ``wb``. The names are made unique (ignoring
    case) by :func:`_sheet_name`, so openpyxl's own check against every sheet name, which
    makes adding n sheets take time in n squared (10,000 loops: tens of seconds), is
    skipped: the sheet is made while the workbook's sheet list is set aside."""
    sheets, wb._sheets = wb._sheets, []
    try:
        ws = wb.create_sheet(name)
    finally:
        wb._sheets = sheets
    sheets.append(ws)
    return ws


class _StyleMaker:
    """``style(font=..., fill=..., ...)``: a :class:`~loopdocs.sheets.sheet_rows.CellStyle`,
    the same object for the same settings."""

    def __init__(self, ws: Any) -> None:
        self._ws = ws  # any sheet of the workbook: styles belong to the workbook
        self._made: dict[tuple, Any] = {}

    def __call__(self, **attrs: Any) -> Any:
        from loopdocs.sheets.cells import cell_style
        from loopdocs.sheets.sheet_rows import CellStyle

        key = tuple(sorted(attrs.items()))  # openpyxl style objects hash and compare by their settings
        if key not in self._made:
            self._made[key] = CellStyle(cell_style(self._ws, **attrs))
        return self._made[key]


def _page_setup(ws: Any, cset: CalibrationSet, PageSetupProperties: Any) -> None:
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = "9"  # A4: openpyxl Worksheet.PAPERSIZE_A4 (a write-only sheet lacks the constant)
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
                    rj: float | None, style: Any, PageSetupProperties: Any) -> None:
    """The first sheet (streamed): title, caution, reference junction, instructions, and the
    sheets with their test points and tags."""
    from openpyxl.styles import Alignment, Font

    from loopdocs.core.wording import CAUTION
    from loopdocs.sheets.sheet_rows import RowWriter

    for column, width in (("A", 30), ("B", 26), ("C", 90), ("D", 10)):
        ws.column_dimensions[column].width = width
    ws.row_dimensions[3].height = 45
    _page_setup(ws, cset, PageSetupProperties)
    rows = RowWriter(ws)
    bold, plain = style(font=Font(bold=True)), style()
    rows.append([(f"Calibration workbook: {cset.project}", style(font=Font(bold=True, size=14)))])
    rows.append([(f"Index {Path(cset.index_path).name}" + (f", revision {cset.revision}" if cset.revision else ""), plain)])
    rows.append([("CAUTION: " + CAUTION, style(font=Font(bold=True, color="C00000"),
                                               alignment=Alignment(wrap_text=True, vertical="top")))])
    rows.merge("A3:D3")
    rows.append([])
    rows.append([("Thermocouple reference junction", bold),
                 (f"0 degC ({SIMULATE} column)" + (f" and {rj:g} degC (Simulate, RJ column)" if rj is not None else ""), plain)])
    rows.append([])
    for i, line in enumerate(_INSTRUCTIONS):
        r = rows.append([(line, bold if i == 0 else style(font=Font()))])
        rows.merge(f"A{r}:D{r}")
    rows.append([])
    rows.append([("Sheet", bold), ("Test points", bold), ("Tags", bold)])
    tags_by_sheet: dict[str, list[str]] = {}
    for row_sheet, tag in _sheet_tags(cset, counts, sheet_per):
        tags_by_sheet.setdefault(row_sheet, [])
        if tag not in tags_by_sheet[row_sheet]:
            tags_by_sheet[row_sheet].append(tag)
    for name, n in counts.items():
        rows.append([(name, plain), (n, plain), (", ".join(tags_by_sheet.get(name, [])), plain)])
    if cset.skipped:
        rows.append([])
        rows.append([("Tags without a table", bold)])
        for s in cset.skipped:
            rows.append([(s.tag, plain), (s.loop, plain), (s.reason, plain)])
    ws.print_area = f"A1:D{rows.row + 1}"
    ws.close()


def _sheet_tags(cset: CalibrationSet, counts: dict[str, int], sheet_per: str) -> Iterable[tuple[str, str]]:
    used: set[str] = {CONTENTS_SHEET.lower(), RECORD_SHEET.lower()}
    names: dict[str, str] = {}
    for table in cset.tables:
        key = _sheet_key(table, cset, sheet_per)
        if key not in names:
            names[key] = _sheet_name(key, used)
        yield names[key], table.tag


def _start_record(wb: Any, cset: CalibrationSet) -> Any:
    """The very hidden record sheet, streamed: its two head rows now, a row per test row
    as the value sheets are written (:func:`_record_values`); its ``RowWriter``."""
    from loopdocs.sheets.sheet_rows import RowWriter

    ws = wb.create_sheet(RECORD_SHEET)
    ws.sheet_state = "veryHidden"
    ws.protection.sheet = True
    rows = RowWriter(ws)
    rows.append_values((FORMAT_TAG, cset.project, cset.revision, cset.index_path))
    rows.append_values(RECORD_COLUMNS)
    return rows


def _record_values(row: IssuedRow) -> list[Any]:
    """The record sheet's cells of one issued row, in ``RECORD_COLUMNS`` order."""
    return [getattr(row, name) for name in RECORD_COLUMNS]


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
