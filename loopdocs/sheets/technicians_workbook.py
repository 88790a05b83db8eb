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
    they are made and the sheet is closed before the next, so memory does not grow with
    the number of test points (10,000 loops within a minute; ``benchmarks/bench_workbook.py``).
    """
    from openpyxl import Workbook
    from openpyxl.formatting.rule import FormulaRule
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation
    from openpyxl.worksheet.properties import PageSetupProperties

    from loopdocs.core.wording import CAUTION
    from loopdocs.core.files import atomic_write
    from loopdocs.sheets.cells import cell_style, streamed_cell

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
    n_cols = len(columns)
    col = {name: i + 1 for i, name in enumerate(columns)}
    sim_col = {"main": col[SIMULATE], "rj": col.get(f"Simulate, RJ {rj:g} degC") if rj is not None else None,
               "calibrator": col.get(CALIBRATOR)}
    widths = {"Ref": 12, "Tag": 12, "Check": 11, "Point": 9, "Dir": 8, "Apply": 14, SIMULATE: 13, CALIBRATOR: 13,
              "Expected": 12, "Unit": 9, "Low limit": 11, "High limit": 11, "As-Found": 12, "As-Left": 12,
              "Remarks": 28}
    last_col = get_column_letter(n_cols)

    wb = Workbook(write_only=True)
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

    # group tables into sheets, in the order the set gives them; names and counts first,
    # since the contents sheet (the first) lists them
    groups: dict[str, list[tuple[CalibrationTable, TableView, dict[str, int]]]] = {}
    for table, view, placed in zip(cset.tables, views, placements):
        groups.setdefault(_sheet_key(table, cset, sheet_per), []).append((table, view, placed))
    used: set[str] = {CONTENTS_SHEET.lower(), RECORD_SHEET.lower()}
    names = {key: _sheet_name(key, used) for key in groups}
    counts = {names[key]: sum(len(view.readings) for _, view, _ in tables) for key, tables in groups.items()}

    contents = wb.create_sheet(CONTENTS_SHEET)
    _write_contents(contents, cset, counts, sheet_per, rj, bold, PageSetupProperties)
    record = _start_record(wb, cset)

    def cell(ws: Any, value: Any = None, **style: Any) -> Any:
        return streamed_cell(ws, value, **style)

    styles: dict[tuple, Any] = {}

    def styled(ws: Any, value: Any, kind: str, number_format: str | None = None) -> Any:
        """A cell of a test row or a table title row, its style made once per kind."""
        key = (kind, number_format)
        if key not in styles:
            attrs: dict[str, Any] = {"title": {"fill": title_fill}, "box": {"border": box},
                                     "input": {"border": box, "protection": unlocked, "fill": input_fill}}[kind]
            styles[key] = cell_style(ws, **attrs, **({"number_format": number_format} if number_format else {}))
        return streamed_cell(ws, value, styles[key])

    for key, tables in groups.items():
        name = names[key]
        ws = wb.create_sheet(name)
        # what is written before the rows: column widths, row heights, panes, page setup
        for name_, c in col.items():
            ws.column_dimensions[get_column_letter(c)].width = widths.get(name_, 14)
        ws.row_dimensions[3].height = 30
        ws.row_dimensions[HEADER_ROW].height = 30
        ws.freeze_panes = f"{get_column_letter(col['Check'])}{FIRST_ROW}"
        _page_setup(ws, cset, PageSetupProperties)

        def merge(row: int, first: int, last: int) -> None:
            ws.merged_cells.add(f"{get_column_letter(first)}{row}:{get_column_letter(last)}{row}")

        service = cset.loop_services.get(key, "") if sheet_per == "loop" else ""
        ws.append([cell(ws, f"Calibration: {'loop' if sheet_per == 'loop' else 'area'} {key}" + (f"  {service}" if service else ""),
                        font=Font(bold=True, size=14))])
        ws.append([cell(ws, f"{cset.project}  |  index {Path(cset.index_path).name}"
                        + (f", revision {cset.revision}" if cset.revision else ""))])
        ws.append([cell(ws, "CAUTION: " + CAUTION, font=Font(bold=True, color="C00000"),
                        alignment=Alignment(wrap_text=True, vertical="top"))])
        for row in (3, 1, 2):
            merge(row, 1, n_cols)
        # technician, date, calibrator: labels, and input cells (merged B:C and I:last)
        tech: list[Any] = [None] * n_cols
        for label, label_col, value_col in (("Technician", 1, 2), ("Date", 4, 5), ("Calibrator, serial, cal. due", 7, 9)):
            tech[label_col - 1] = cell(ws, label, font=bold)
            tech[value_col - 1] = cell(ws, protection=unlocked, fill=input_fill, border=box)
        tech[2] = cell(ws, protection=unlocked, border=merged_right)
        for c in range(10, n_cols + 1):
            tech[c - 1] = cell(ws, protection=unlocked, border=merged_right if c == n_cols else merged_middle)
        ws.append(tech)
        merge(4, 2, 3)
        merge(4, 9, n_cols)
        ws.append([])
        ws.append([cell(ws, name_, font=bold, fill=header_fill, border=box,
                        alignment=Alignment(horizontal="center", vertical="center", wrap_text=True)) for name_ in col])

        r = FIRST_ROW
        value_ranges: dict[tuple[float, float, str], list[str]] = {}
        for table, view, placed in tables:
            ws.append([cell(ws, _title_text(view), font=bold, fill=title_fill)]
                      + [styled(ws, None, "title") for _ in range(n_cols - 1)])
            merge(r, 1, n_cols)
            r += 1
            for note in view.notes:
                error_mark = note.emphasis == "error"
                ws.append([None, cell(ws, note.text, font=Font(italic=True, bold=bool(note.emphasis),
                                                               color="C00000" if error_mark else None))])
                merge(r, 2, n_cols)
                r += 1
            # the view's heads with their units, over the columns they head
            apply_col, expect_col = view.column(APPLY), view.column(EXPECT)
            assert apply_col is not None and expect_col is not None
            heads = {col["Point"]: view.percent_head, col["Apply"]: apply_col.label, col["Expected"]: expect_col.label}
            for slot, index in placed.items():
                if sim_col.get(slot) is not None:
                    heads[sim_col[slot]] = view.columns[index].label  # type: ignore[index]
            head_row: list[Any] = [None] * n_cols
            for c, text in heads.items():
                head_row[c - 1] = cell(ws, text, font=Font(italic=True, bold=True),
                                       alignment=Alignment(horizontal="right", wrap_text=True))
            ws.append(head_row)
            r += 1
            check = CHECK_NAMES.get(table.kind, table.kind)
            tol = table.tolerance
            i_apply, i_expect = view.columns.index(apply_col), view.columns.index(expect_col)
            expect_format = _number_format(expect_col.decimals)
            formats = {col["Point"]: _number_format(view.percent_decimals, "%"),
                       col["Apply"]: _number_format(apply_col.decimals, apply_col.unit),
                       col["Expected"]: expect_format, col["Low limit"]: expect_format, col["High limit"]: expect_format}
            inputs = {col["As-Found"]: expect_format, col["As-Left"]: expect_format, col["Remarks"]: None}
            for i, reading in enumerate(view.readings, start=1):
                point = reading.point
                ref = f"{table.tag}/{_REF_PREFIX.get(table.kind, '')}{i:02d}"
                expected = reading.values[i_expect]
                low, high = reading.low, reading.high
                values: dict[int, Any] = {
                    col["Ref"]: ref, col["Tag"]: table.tag, col["Check"]: check, col["Point"]: point.percent,
                    col["Dir"]: point.direction, col["Apply"]: reading.values[i_apply], col["Expected"]: expected,
                    col["Unit"]: expect_col.unit, col["Low limit"]: low, col["High limit"]: high,
                }
                sim_formats: dict[int, str] = {}
                for slot, index in placed.items():
                    c_sim = sim_col.get(slot)
                    value = reading.values[index]
                    if c_sim is not None and value is not None:
                        values[c_sim] = value
                        sim_formats[c_sim] = _number_format(view.columns[index].decimals, view.columns[index].unit)
                ws.append([styled(ws, values.get(c), "input", inputs[c]) if c in inputs
                           else styled(ws, values.get(c), "box", formats.get(c) or sim_formats.get(c))
                           for c in range(1, n_cols + 1)])
                span = table.output_span
                olo = min(table.output_range[0].value, table.output_range[1].value)
                vkey = (olo - span, olo + 2 * span, point.output.unit)
                value_ranges.setdefault(vkey, []).append(
                    f"{get_column_letter(col['As-Found'])}{r}:{get_column_letter(col['As-Left'])}{r}"
                )
                _record_row(record, IssuedRow(
                    ref=ref, sheet=name, tag=table.tag, check=check, loop=table.loop, percent=point.percent,
                    direction=point.direction, apply=point.input.value, apply_unit=point.input.unit,
                    expected=expected, unit=point.output.unit, low=low, high=high, output_span=span,
                    tolerance_pct=tol.percent_of_span if tol else None,
                    digest=row_digest(ref, table.tag, check, point.percent, point.direction, point.input.value,
                                      expected, point.output.unit, low, high),
                ))
                r += 1
            ws.append([])  # blank row between tables
            r += 1
        last_row = r - 1

        for (vmin, vmax, unit), ranges in value_ranges.items():
            dv = DataValidation(
                type="decimal", operator="between", formula1=f"{vmin:.6g}", formula2=f"{vmax:.6g}",
                allow_blank=True, showErrorMessage=True, showInputMessage=True,
                errorTitle="Reading", error=f"Enter the reading as a number in {unit}; leave blank if not tested.",
                promptTitle="Reading", prompt=f"Reading in {unit}. Blank = not tested.",
            )
            dv.sqref = " ".join(ranges)  # type: ignore[assignment]
            ws.data_validations.append(dv)
        found, left = get_column_letter(col["As-Found"]), get_column_letter(col["As-Left"])
        lo_c, hi_c = get_column_letter(col["Low limit"]), get_column_letter(col["High limit"])
        area = f"{found}{FIRST_ROW}:{left}{max(FIRST_ROW, last_row)}"
        anchor = f"{found}{FIRST_ROW}"
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

    wb._sheets.remove(record)  # streamed alongside the loop sheets, kept last
    wb._sheets.append(record)
    atomic_write(Path(path), lambda tmp: wb.save(tmp))
    return counts


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
                    rj: float | None, bold: Any, PageSetupProperties: Any) -> None:
    """The first sheet (streamed): title, caution, reference junction, instructions, and the
    sheets with their test points and tags."""
    from openpyxl.styles import Alignment, Font

    from loopdocs.core.wording import CAUTION
    from loopdocs.sheets.cells import streamed_cell as cell

    for column, width in (("A", 30), ("B", 26), ("C", 90), ("D", 10)):
        ws.column_dimensions[column].width = width
    ws.row_dimensions[3].height = 45
    _page_setup(ws, cset, PageSetupProperties)
    ws.append([cell(ws, f"Calibration workbook: {cset.project}", font=Font(bold=True, size=14))])
    ws.append([cell(ws, f"Index {Path(cset.index_path).name}" + (f", revision {cset.revision}" if cset.revision else ""))])
    ws.append([cell(ws, "CAUTION: " + CAUTION, font=Font(bold=True, color="C00000"),
                    alignment=Alignment(wrap_text=True, vertical="top"))])
    ws.merged_cells.add("A3:D3")
    ws.append([])
    ws.append([cell(ws, "Thermocouple reference junction", font=bold),
               cell(ws, f"0 degC ({SIMULATE} column)" + (f" and {rj:g} degC (Simulate, RJ column)" if rj is not None else ""))])
    ws.append([])
    r = 7
    for i, line in enumerate(_INSTRUCTIONS):
        ws.append([cell(ws, line, font=bold if i == 0 else Font())])
        ws.merged_cells.add(f"A{r}:D{r}")
        r += 1
    ws.append([])
    r += 1
    ws.append([cell(ws, "Sheet", font=bold), cell(ws, "Test points", font=bold), cell(ws, "Tags", font=bold)])
    r += 1
    tags_by_sheet: dict[str, list[str]] = {}
    for row_sheet, tag in _sheet_tags(cset, counts, sheet_per):
        tags_by_sheet.setdefault(row_sheet, [])
        if tag not in tags_by_sheet[row_sheet]:
            tags_by_sheet[row_sheet].append(tag)
    for name, n in counts.items():
        ws.append([cell(ws, name), cell(ws, n), cell(ws, ", ".join(tags_by_sheet.get(name, [])))])
        r += 1
    if cset.skipped:
        ws.append([])
        ws.append([cell(ws, "Tags without a table", font=bold)])
        r += 2
        for s in cset.skipped:
            ws.append([cell(ws, s.tag), cell(ws, s.loop), cell(ws, s.reason)])
            r += 1
    ws.print_area = f"A1:D{r}"
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
    as the value sheets are written (:func:`_record_row`)."""
    from loopdocs.sheets.cells import streamed_cell

    ws = wb.create_sheet(RECORD_SHEET)
    ws.sheet_state = "veryHidden"
    ws.protection.sheet = True
    ws.append([streamed_cell(ws, value) for value in (FORMAT_TAG, cset.project, cset.revision, cset.index_path)])
    ws.append(list(RECORD_COLUMNS))
    return ws


def _record_row(ws: Any, row: IssuedRow) -> None:
    from loopdocs.sheets.cells import streamed_values

    ws.append(streamed_values(ws, [getattr(row, name) for name in RECORD_COLUMNS]))


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
