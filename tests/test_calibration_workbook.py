"""The technicians' workbook written by ``loopdocs calibrate --out`` (loopdocs.sheets.technicians_workbook)."""

from __future__ import annotations

from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.calibration.project_tables import calibration_set
from loopdocs.sheets.technicians_workbook import (
    CONTENTS_SHEET,
    HEADER_ROW,
    RECORD_SHEET,
    SIMULATE,
    read_workbook,
    write_workbook,
)
from loopdocs.calibration.workbook_record import row_digest
from loopdocs.cli import app
from loopdocs.core.wording import CAUTION
from loopdocs.model.loading import load_project
from loopdocs.sheets.index_template import write_index_workbook

EXAMPLE = Path(__file__).resolve().parent.parent / "project_example"
runner = CliRunner()


@pytest.fixture(scope="module")
def workbook_path(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("cal") / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--out", str(path), "--ref-junction-c", "23"])
    assert result.exit_code == 0, result.output
    return path


def header(ws) -> dict[str, int]:
    return {c.value: c.column for c in ws[HEADER_ROW] if c.value}


def test_one_sheet_per_loop_plus_contents_and_hidden_record(workbook_path):
    wb = openpyxl.load_workbook(workbook_path)
    project, _ = load_project(EXAMPLE)
    loops_with_tables = {t.loop for t in calibration_set(project).tables}
    assert wb.sheetnames[0] == CONTENTS_SHEET
    assert set(wb.sheetnames[1:-1]) == loops_with_tables
    assert wb.sheetnames[-1] == RECORD_SHEET
    assert wb[RECORD_SHEET].sheet_state == "veryHidden"


def test_every_sheet_is_printable_and_carries_the_cautions(workbook_path):
    wb = openpyxl.load_workbook(workbook_path)
    for name in wb.sheetnames[1:-1]:
        ws = wb[name]
        text = " ".join(str(c.value) for row in ws.iter_rows(min_row=1, max_row=4) for c in row if c.value)
        assert CAUTION in text  # isolate and verify; confirm against the design; codes and practice prevail
        assert ws.page_setup.orientation == "landscape"
        assert ws.sheet_properties.pageSetUpPr.fitToPage and ws.page_setup.fitToWidth == 1
        assert ws.page_setup.fitToHeight == 0
        assert ws.print_title_rows == f"${HEADER_ROW}:${HEADER_ROW}"  # header repeated on every page
        assert ws.print_area  # set
        assert ws.freeze_panes == f"C{HEADER_ROW + 1}"
        assert "&P" in ws.oddHeader.right.text and "&N" in ws.oddHeader.right.text
        assert ws.oddHeader.center.text == "&A"  # sheet name
        assert "Kettle Creek" in ws.oddHeader.left.text  # project
        assert "Isolate" in ws.oddFooter.left.text
        assert ws.protection.sheet


def test_rows_expected_values_limits_and_open_reading_cells(workbook_path):
    wb = openpyxl.load_workbook(workbook_path)
    ws = wb["T-3105"]
    col = header(ws)
    assert {"Ref", "Apply", SIMULATE, "Simulate, RJ 23 degC", "Expected", "Low limit", "High limit",
            "As-Found", "As-Left"} <= set(col)
    rows = {ws.cell(r, 1).value: r for r in range(HEADER_ROW + 1, ws.max_row + 1) if ws.cell(r, 1).value}
    r = rows["TT-3105/03"]  # 50 % up: 17.5 degC -> 12 mA, 0.25 % of 16 mA = 0.04 mA
    assert ws.cell(r, col["Point"]).value == 50
    assert ws.cell(r, col["Apply"]).value == pytest.approx(17.5)
    assert ws.cell(r, col["Expected"]).value == pytest.approx(12.0)
    assert ws.cell(r, col["Low limit"]).value == pytest.approx(11.96)
    assert ws.cell(r, col["High limit"]).value == pytest.approx(12.04)
    assert ws.cell(r, col["As-Found"]).value is None and ws.cell(r, col["As-Left"]).value is None
    # only the reading cells are unlocked on a protected sheet
    assert not ws.cell(r, col["As-Found"]).protection.locked
    assert not ws.cell(r, col["As-Left"]).protection.locked
    assert ws.cell(r, col["Expected"]).protection.locked
    # a sensor without Accuracy % has no limits (nothing is invented)
    r = rows["TE-3105/01"]
    assert ws.cell(r, col["Low limit"]).value is None


def test_reading_cells_take_numbers_only(workbook_path):
    wb = openpyxl.load_workbook(workbook_path)
    ws = wb["T-3105"]
    col = header(ws)
    found = openpyxl.utils.get_column_letter(col["As-Found"])
    rows = [r for r in range(HEADER_ROW + 1, ws.max_row + 1) if ws.cell(r, 1).value and "/" in str(ws.cell(r, 1).value)
            and " " not in str(ws.cell(r, 1).value)]
    validations = ws.data_validations.dataValidation
    assert validations and all(v.type == "decimal" for v in validations)
    for r in rows:
        assert any(f"{found}{r}" in v.sqref for v in validations), r


def test_thermocouple_columns_in_the_workbook(workbook_path):
    # NIST Monograph 175 type K (from memory): E(150) = 6.138 mV; E(23) = 0.919 mV, so at a 23 degC
    # reference junction the calibrator injects 5.219 mV.
    ws = openpyxl.load_workbook(workbook_path)["T-7402"]
    col = header(ws)
    rows = {ws.cell(r, 1).value: r for r in range(HEADER_ROW + 1, ws.max_row + 1) if ws.cell(r, 1).value}
    r = rows["TT-7402A/02"]
    assert ws.cell(r, col[SIMULATE]).value == pytest.approx(6.138, abs=0.0006)
    assert ws.cell(r, col["Simulate, RJ 23 degC"]).value == pytest.approx(6.138 - 0.919, abs=0.001)


def test_dcs_scaling_and_ne43_are_written_for_the_technician(workbook_path):
    ws = openpyxl.load_workbook(workbook_path)["L-2101"]
    text = [str(c.value) for row in ws.iter_rows() for c in row if isinstance(c.value, str)]
    assert any("Enter in the control system for LV-2101A" in t and "controller output 25 %" in t for t in text)
    assert any(t.startswith("NAMUR NE 43") for t in text)


def test_record_matches_the_visible_rows(workbook_path):
    returned = read_workbook(workbook_path)
    seen = {row.ref: row for row in returned.seen}
    assert len(returned.issued) == len(seen) > 500
    for issued in returned.issued:
        assert issued.own_digest() == issued.digest
        assert seen[issued.ref].digest() == issued.digest


def test_digest_changes_with_any_expected_value():
    base = ("TT-1/01", "TT-1", "calibration", 0.0, "up", 0.0, 4.0, "mA", 3.96, 4.04)
    assert row_digest(*base) == row_digest(*base)
    for i, changed in ((6, 4.01), (8, 3.9), (5, 0.5), (4, "down")):
        edited = list(base)
        edited[i] = changed
        assert row_digest(*edited) != row_digest(*base)
    # a value that went through a spreadsheet program's float formatting keeps its digest
    assert row_digest(*base[:6], 12.000000000000002, *base[7:]) == row_digest(*base[:6], 12.0, *base[7:])


def test_sheet_per_area_and_atomic_write(tmp_path):
    rows = [
        {"tag": "41-PT-101", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg", "accuracy_pct": 0.1},
        {"tag": "41-PT-102", "signal": "4-20 mA", "range_low": 0, "range_high": 6, "units": "barg", "accuracy_pct": 0.1},
        {"tag": "42-TT-201", "signal": "4-20 mA", "sensor": "Pt100", "range_low": 0, "range_high": 100, "units": "degC",
         "accuracy_pct": 0.25},
    ]
    index = tmp_path / "index.xlsx"
    write_index_workbook(index, rows)
    project, _ = load_project(index)
    out = tmp_path / "by_area.xlsx"
    counts = write_workbook(calibration_set(project), out, sheet_per="area")
    assert counts == {"41": 20, "42": 10}
    assert not list(tmp_path.glob(".*.part"))  # no half-written temporary left behind
    assert openpyxl.load_workbook(out).sheetnames == [CONTENTS_SHEET, "41", "42", RECORD_SHEET]


def test_unwritable_out_is_one_line_exit_2(tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--out", str(blocker / "cal.xlsx")])
    assert result.exit_code == 2
    assert "Traceback" not in result.output and len(result.output.strip().splitlines()) == 1


# --------------------------------------------------------------------------- rows written as text


def _both_ways(tmp_path: Path, rows: list[list]) -> tuple[Path, Path]:
    """The same styled rows written by openpyxl's own write-only cells and by RowWriter."""
    from openpyxl.cell import WriteOnlyCell

    from loopdocs.sheets.cells import cell_style
    from loopdocs.sheets.sheet_rows import CellStyle, RowWriter

    by_openpyxl, by_text = tmp_path / "openpyxl.xlsx", tmp_path / "text.xlsx"
    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("S")
    ws.row_dimensions[2].height = 30
    for row in rows:
        cells = []
        for item in row:
            if item is None:
                cells.append(None)
                continue
            value, attrs = item
            cell = WriteOnlyCell(ws, value)
            if cell.data_type == "f":  # text is text: no formula (OWASP formula injection)
                cell.data_type = "s"
            for name, setting in attrs.items():
                setattr(cell, name, setting)
            cells.append(cell)
        ws.append(cells)
    wb.save(by_openpyxl)

    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("S")
    ws.row_dimensions[2].height = 30
    writer = RowWriter(ws)
    made: dict[str, CellStyle] = {}
    for row in rows:
        cells = []
        for item in row:
            if item is None:
                cells.append(None)
                continue
            value, attrs = item
            key = repr(sorted(attrs.items(), key=lambda kv: kv[0]))
            if key not in made:
                made[key] = CellStyle(cell_style(ws, **attrs))
            cells.append((value, made[key]))
        writer.append(cells)
    wb.save(by_text)
    return by_openpyxl, by_text


def test_rows_as_text_are_the_bytes_openpyxl_writes(tmp_path):
    # reference: openpyxl 3.1's own write-only cell writer (openpyxl.cell._writer), SpreadsheetML
    # rows and cells of ECMA-376 Part 1 §18.3.1.73 (row), §18.3.1.4 (c), §18.3.1.53 (is) (clause numbers
    # from memory)
    import zipfile

    from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side

    thin = Side(style="thin", color="808080")
    boxed = {"border": Border(left=thin, right=thin, top=thin, bottom=thin), "number_format": '0.00" mA"'}
    typed = {"border": Border(left=thin), "protection": Protection(locked=False),
             "fill": PatternFill("solid", fgColor="FFF2CC"), "number_format": "0.000"}
    rows = [
        [("Calibration: loop T-1  Fermenter <FV-5> & jacket", {"font": Font(bold=True, size=14)})],
        [("CAUTION: isolate first", {"font": Font(bold=True, color="C00000"),
                                     "alignment": Alignment(wrap_text=True, vertical="top")}), None, (None, typed)],
        [],
        [("TT-1/01", boxed), ("=HYPERLINK(\"http://x\")", boxed), ("+A1", {}), ("-5 degC", {}), ("@SUM(A1)", {}),
         (50, boxed), (17.5, boxed), (-0.0, boxed), (12.000000000000002, boxed), (1e-300, boxed), (True, {}),
         (None, boxed), (None, typed), ("", boxed), ("#N/A", {}), ("  padded ", {}), ("   ", {}), ("x" * 40000, {})],
        [None, ("note in column B", {"font": Font(italic=True)}), None, None],
    ]
    by_openpyxl, by_text = _both_ways(tmp_path, rows)
    with zipfile.ZipFile(by_openpyxl) as a, zipfile.ZipFile(by_text) as b:
        assert a.namelist() == b.namelist()
        for part in a.namelist():
            if part != "docProps/core.xml":  # creation time
                assert a.read(part) == b.read(part), part
    # and read back alike: text stays text (no formula cell), the error code is an error cell, long text cut
    ws = openpyxl.load_workbook(by_text)["S"]
    assert [c.data_type for c in ws[4][:5]] == ["s", "s", "s", "s", "s"]
    assert ws["B4"].value == "=HYPERLINK(\"http://x\")"
    assert ws["O4"].data_type == "e"
    assert len(ws["R4"].value) == 32767  # openpyxl's cell limit (Excel's 32,767 characters a cell)
    assert ws["H4"].number_format == '0.00" mA"' and ws["M4"].protection.locked is False


def test_rows_as_text_refuse_characters_xml_forbids(tmp_path):
    # XML 1.0 §2.2 Char excludes most C0 controls; openpyxl refuses them the same way (IllegalCharacterError)
    from openpyxl.utils.exceptions import IllegalCharacterError

    from loopdocs.sheets.sheet_rows import RowWriter

    ws = openpyxl.Workbook(write_only=True).create_sheet("S")
    writer = RowWriter(ws)
    with pytest.raises(IllegalCharacterError):
        writer.append([("TT-1\x1b[31m", None)])
    with pytest.raises(TypeError):  # a value no cell can hold, named
        writer.append([(object(), None)])
    ws.close()  # the sheet's part is finished and its file closed


def test_workbook_opens_without_warnings_and_every_sheet_name_once(tmp_path):
    # openpyxl warns on parts it cannot read as written (reference library); names are unique
    # ignoring case, as Excel requires of sheet names (common practice)
    import warnings

    path = tmp_path / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--out", str(path), "--sheet-per", "loop"])
    assert result.exit_code == 0, result.output
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        wb = openpyxl.load_workbook(path)
    assert [str(w.message) for w in caught] == []
    names = [name.lower() for name in wb.sheetnames]
    assert len(names) == len(set(names))
    assert wb.sheetnames[0] == CONTENTS_SHEET and wb.sheetnames[-1] == RECORD_SHEET


def test_a_failed_write_leaves_no_sheet_parts_behind(tmp_path):
    # every sheet part is a temporary file until the workbook is saved; a write that fails
    # (here: the output folder is a file) closes and deletes them at once (common practice)
    import gc
    import warnings

    from openpyxl.worksheet._writer import ALL_TEMP_FILES

    project, _ = load_project(EXAMPLE)
    cset = calibration_set(project)
    blocker = tmp_path / "file"
    blocker.write_text("x")
    before = set(ALL_TEMP_FILES)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with pytest.raises(OSError):
            write_workbook(cset, blocker / "cal.xlsx")
        gc.collect()
    left = [p for p in set(ALL_TEMP_FILES) - before if Path(p).exists()]
    assert left == []
    assert [str(w.message) for w in caught if issubclass(w.category, ResourceWarning)] == []
