"""Reading the instrument index: workbooks written here with openpyxl, CSVs with csv.

The reference for cell positions is openpyxl (a general-purpose spreadsheet library:
``cell.coordinate``, ``get_column_letter``) and the file formats themselves: ECMA-376
Part 1 (SpreadsheetML) for workbooks, RFC 4180 for CSV, [MS-CFB] for the compound file
an encrypted workbook is stored in. Section and clause numbers cited below (ECMA-376,
[MS-CFB], [MS-OFFCRYPTO], the Unicode Standard) are from memory.
"""

from __future__ import annotations

import csv
import datetime as dt
import importlib.util
import re
import zipfile
from pathlib import Path

import pytest
from openpyxl import Workbook
from openpyxl.utils import get_column_letter

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Location
from loopdocs.read import IndexTable, read_index

ROOT = Path(__file__).resolve().parents[1]

TITLE = [["Kettle Creek Brewery"], ["Instrument index, fermentation cellar"], ["Rev B", "2025-02-11"], []]
HEADER = ["Tag", "Loop", "Service", "Range Low", "Range High", "Units", "Driven By", "CO Start %", "CO End %"]
DATA = [
    ["TT-3105", "T-3105", "Fermenter 5 jacket", 0, 40, "degC", None, None, None],
    ["TIC-3105", "T-3105", "Fermenter 5 jacket", 0, 40, "degC", None, None, None],
    ["TV-3105A", "T-3105", "Fermenter 5 glycol", None, None, None, "TIC-3105", 0, 48],
    ["TV-3105B", "T-3105", "Fermenter 5 hot water", None, None, None, "TIC-3105", 52, 100],
    ["PT-3120", "P-3120", "Bright beer tank 2 top pressure", -1, 2.5, "barg", None, None, None],
]


def write_xlsx(path: Path, rows, sheet: str = "Index", merges=(), more_sheets=()) -> Path:
    """A real workbook written with openpyxl; ``rows`` from A1 down, None = empty cell."""
    book = Workbook()
    first = book.active
    first.title = sheet
    for title, extra_rows in more_sheets:  # (name, rows) sheets placed before ``sheet``
        other = book.create_sheet(title, 0)
        for row in extra_rows:
            other.append(row)
    for row in rows:
        first.append(row)
    for ref in merges:
        first.merge_cells(ref)
    book.save(path)
    return path


def rewrite_sheet_xml(path: Path, edit) -> None:
    """Apply ``edit(bytes) -> bytes`` to the first worksheet part of the workbook at ``path``."""
    with zipfile.ZipFile(path) as source:
        items = [(info, source.read(info.filename)) for info in source.infolist()]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as target:
        for info, data in items:
            if info.filename == "xl/worksheets/sheet1.xml":
                data = edit(data)
            target.writestr(info, data)


def write_csv(path: Path, rows, delimiter: str = ",", encoding: str = "utf-8") -> Path:
    with path.open("w", newline="", encoding=encoding) as handle:
        writer = csv.writer(handle, delimiter=delimiter)
        for row in rows:
            writer.writerow(["" if v is None else v for v in row])
    return path


@pytest.fixture
def index_xlsx(tmp_path: Path) -> Path:
    return write_xlsx(tmp_path / "index.xlsx", [*TITLE, HEADER, *DATA])


def one_line_error(call, *args, **kwargs) -> str:
    with pytest.raises(InputError) as caught:
        call(*args, **kwargs)
    message = str(caught.value)
    assert message and "\n" not in message  # the CLI prints it as one line (docs/design.md §9.4, exit 2)
    return message


# -- header, columns ---------------------------------------------------------------------


def test_header_found_below_title_block(index_xlsx: Path):
    # common practice: an index carries a title block above the header row
    table = read_index(index_xlsx)
    assert table.sheet == "Index"
    assert table.header_row == 5
    assert [r.row for r in table.rows] == [6, 7, 8, 9, 10]
    assert table.columns["tag"] == "A" and table.columns["co_end_pct"] == "I"
    assert table.rows[2].values["tag"] == "TV-3105A"
    assert table.rows[2].values["driven_by"] == "TIC-3105"


def test_aliases_odd_case_and_spaces(tmp_path: Path):
    header = ["Tag No", "LRV", "  range   HIGH ", "UNITS", "Fail_Position", "Notes"]
    path = write_xlsx(tmp_path / "a.xlsx", [header, ["FV-2201", 0, 30, "m3/h", "FC", "spare cable"]])
    table = read_index(path)
    assert table.columns == {"tag": "A", "range_low": "B", "range_high": "C", "units": "D", "fail_position": "E", "notes": "F"}
    assert table.rows[0].values == {
        "tag": "FV-2201", "range_low": 0, "range_high": 30, "units": "m3/h", "fail_position": "FC", "notes": "spare cable",
    }


def test_macro_enabled_workbook_suffix(tmp_path: Path):
    # .xlsm is the same SpreadsheetML package with a macro part (ECMA-376 Part 2 packaging)
    table = read_index(write_xlsx(tmp_path / "index.XLSM", [HEADER, DATA[0]]))
    assert table.rows[0].values["tag"] == "TT-3105"


def test_header_written_over_two_lines_in_its_cell(tmp_path: Path):
    # common practice: long headers are wrapped with Alt+Enter, which stores a line feed in the cell
    path = write_xlsx(tmp_path / "a.xlsx", [["Tag", "Range\nLow", "CO Start\n%"], ["TV-1", 4, 0]])
    assert read_index(path).columns == {"tag": "A", "range_low": "B", "co_start_pct": "C"}


def test_column_map_maps_project_headers(tmp_path: Path):
    rows = [["Instrument", "Ctrl Out From", "Ctrl Out To", "Remarks"], ["TV-3105A", 0, 48, "glycol side"]]
    path = write_xlsx(tmp_path / "a.xlsx", rows)
    # without the map there is no Tag column at all
    assert "no 'Tag' column header" in one_line_error(read_index, path)
    table = read_index(path, column_map={"Instrument": "tag", "Ctrl Out From": "CO Start %", "ctrl out to": "co_end_pct"})
    assert table.columns == {"tag": "A", "co_start_pct": "B", "co_end_pct": "C", "notes": "D"}
    assert table.rows[0].values == {"tag": "TV-3105A", "co_start_pct": 0, "co_end_pct": 48, "notes": "glycol side"}
    message = one_line_error(read_index, path, column_map={"Instrument": "tag", "Ctrl Out From": "Output Begin"})
    assert "Output Begin" in message


def test_unknown_columns_kept_in_extra(tmp_path: Path):
    rows = [["Tag", "Vendor", "Range High", "PO Number "], ["LT-2104", "Acme Level", 3500, "PO-77"], ["LIC-2104", None, 3500, None]]
    table = read_index(write_xlsx(tmp_path / "a.xlsx", rows))
    assert table.extra_columns == {"Vendor": "B", "PO Number": "D"}
    assert table.rows[0].extra == {"Vendor": "Acme Level", "PO Number": "PO-77"}
    assert table.rows[1].extra == {}  # blank cells are left out
    assert table.location(2, "Vendor") == Location("Index", 2, "B")


def test_two_headers_for_one_column_is_an_error(tmp_path: Path):
    path = write_xlsx(tmp_path / "a.xlsx", [["Tag", "Service", "Description"], ["TT-1", "a", "b"]])
    message = one_line_error(read_index, path)
    assert "columns B ('Service') and C ('Description')" in message and "a.xlsx" in message


def test_header_with_no_data_rows_is_an_empty_table(tmp_path: Path):
    table = read_index(write_xlsx(tmp_path / "a.xlsx", [*TITLE, HEADER]))
    assert table.header_row == 5 and table.rows == [] and table.notices == []


# -- sheets ------------------------------------------------------------------------------


def test_first_sheet_with_a_tag_header_is_chosen(tmp_path: Path):
    cover = [["Kettle Creek Brewery"], ["Document", "Instrument index"]]
    path = write_xlsx(tmp_path / "a.xlsx", [HEADER, DATA[0]], sheet="Instruments", more_sheets=[("Cover", cover)])
    table = read_index(path)
    assert table.sheet == "Instruments" and table.rows[0].values["tag"] == "TT-3105"


def test_named_sheet_and_missing_sheet(tmp_path: Path):
    path = write_xlsx(tmp_path / "a.xlsx", [HEADER, DATA[0]], sheet="Index", more_sheets=[("Old index", [HEADER, DATA[4]])])
    assert read_index(path).rows[0].values["tag"] == "PT-3120"  # the first sheet with a header
    assert read_index(path, sheet="Index").rows[0].values["tag"] == "TT-3105"
    message = one_line_error(read_index, path, sheet="Idx")
    assert "'Idx'" in message and "'Old index', 'Index'" in message


def test_no_header_names_file_sheet_and_headers_seen(tmp_path: Path):
    rows = [["Kettle Creek Brewery"], [], ["Item", "Description", "Range"], ["1", "x", "0-10"]]
    message = one_line_error(read_index, write_xlsx(tmp_path / "plant.xlsx", rows, sheet="List"))
    assert "plant.xlsx" in message and "'List'" in message
    assert "row 3: 'Item', 'Description', 'Range'" in message


def test_header_below_row_20_is_not_found(tmp_path: Path):
    # docs/design.md §2.1: the header is looked for in the first 20 rows only
    rows = [[f"title line {n}"] for n in range(20)] + [HEADER, DATA[0]]
    assert "first 20 rows" in one_line_error(read_index, write_xlsx(tmp_path / "a.xlsx", rows))


# -- values ------------------------------------------------------------------------------


def test_merged_loop_and_service_cells_fill_their_rows(tmp_path: Path):
    # ECMA-376 Part 1 §18.3.1.55 mergeCell: only the top-left cell of a merged range holds a value
    rows = [HEADER, *([r[0], r[1] if i == 0 else None, r[2] if i in (0, 2) else None, *r[3:]] for i, r in enumerate(DATA[:4]))]
    path = write_xlsx(tmp_path / "a.xlsx", rows, merges=["B2:B5", "C2:C3", "C4:C5"])
    table = read_index(path)
    assert [r.values["loop"] for r in table.rows] == ["T-3105"] * 4
    assert [r.values["service"] for r in table.rows] == ["Fermenter 5 jacket"] * 2 + ["Fermenter 5 glycol"] * 2
    assert table.notices == []


def test_merge_across_columns_does_not_copy_into_the_next_column(tmp_path: Path):
    # a wide Service cell spanning Service and P&ID: the P&ID is not given (common practice)
    rows = [["Tag", "Service", "P&ID"], ["TT-1", "Mash tun", None], ["TT-2", "Lauter tun", "PID-012"]]
    table = read_index(write_xlsx(tmp_path / "a.xlsx", rows, merges=["B2:C2"]))
    assert table.rows[0].values == {"tag": "TT-1", "service": "Mash tun"}


def test_blank_rows_skipped_row_numbers_kept(tmp_path: Path):
    rows = [HEADER, DATA[0], [], [None, "  ", None], DATA[1]]
    table = read_index(write_xlsx(tmp_path / "a.xlsx", rows))
    assert [(r.row, r.values["tag"]) for r in table.rows] == [(2, "TT-3105"), (5, "TIC-3105")]


def test_text_stripped_inner_spaces_kept(tmp_path: Path):
    rows = [["Tag", "Service", "Units"], ["  TV-3105A  ", "Fermenter 5   glycol supply ", "\u00a0%\u00a0"]]
    values = read_index(write_xlsx(tmp_path / "a.xlsx", rows)).rows[0].values
    assert values == {"tag": "TV-3105A", "service": "Fermenter 5   glycol supply", "units": "%"}


def test_numbers_stored_as_text_stay_text(tmp_path: Path):
    # ECMA-376 §18.18.11 ST_CellType: a text cell is a string whatever it looks like
    rows = [["Tag", "Loop", "Range High", "Input High", "Cv"], ["TV-3105A", 3105, "0150", "11.68", 25.0], ["TV-3105B", "3105", 150, 11.68, 2.5]]
    table = read_index(write_xlsx(tmp_path / "a.xlsx", rows))
    first, second = table.rows
    assert first.values["loop"] == 3105 and type(first.values["loop"]) is int  # whole number, not 3105.0
    assert first.values["range_high"] == "0150" and first.values["input_high"] == "11.68"
    assert first.values["cv"] == 25 and type(first.values["cv"]) is int
    assert second.values["loop"] == "3105"
    assert second.values["range_high"] == 150 and second.values["input_high"] == 11.68 and second.values["cv"] == 2.5


def test_dates_become_iso_text_booleans_kept(tmp_path: Path):
    # ISO 8601 calendar date and time of day
    rows = [["Tag", "Calibrated", "At", "Spare"], ["TT-1", dt.date(2025, 3, 4), dt.datetime(2025, 3, 4, 9, 30), True]]
    extra = read_index(write_xlsx(tmp_path / "a.xlsx", rows)).rows[0].extra
    assert extra == {"Calibrated": "2025-03-04", "At": "2025-03-04T09:30:00", "Spare": True}


def test_formula_with_cached_value_reads_the_value(tmp_path: Path):
    # ECMA-376 §18.3.1.40 f holds the formula, §18.3.1.96 v the value last calculated
    rows = [["Tag", "Range Low", "Range High"], ["TT-1", 0, "=B2+40"]]
    path = write_xlsx(tmp_path / "a.xlsx", rows)
    rewrite_sheet_xml(path, lambda xml: re.sub(rb"(<c r=\"C2\"[^>]*><f>[^<]*</f>)(<v\s*/>|<v></v>)?", rb"\g<1><v>40</v>", xml))
    table = read_index(path)
    assert table.rows[0].values["range_high"] == 40
    assert table.notices == []


def test_formula_without_cached_value_gives_notice_at_its_cell(tmp_path: Path):
    # openpyxl stores formulas without calculating them: no cached value (openpyxl docs, "Using formulae")
    rows = [*TITLE, HEADER, *DATA[:2], ["TV-3105A", "=LEFT(A8,1)&\"-3105\"", "Fermenter 5 glycol"]]
    table = read_index(write_xlsx(tmp_path / "a.xlsx", rows))
    assert table.rows[2].values.get("loop") is None
    assert [n.location for n in table.notices] == [Location("Index", 8, "B")]
    assert "no cached value" in table.notices[0].message


def test_formula_notices_ignore_title_block_and_unread_columns(tmp_path: Path):
    rows = [["=TODAY()"], ["Tag", "Loop", None], ["TT-1", "T-1", "=1+1"]]
    assert read_index(write_xlsx(tmp_path / "a.xlsx", rows)).notices == []


def test_error_cell_gives_notice(tmp_path: Path):
    # ECMA-376 §18.18.11 ST_CellType "e": the cell holds an error such as #N/A
    path = write_xlsx(tmp_path / "a.xlsx", [["Tag", "Cv"], ["FV-1", 10], ["FV-2", 99]])
    rewrite_sheet_xml(path, lambda xml: re.sub(rb"<c r=\"B3\"[^>]*>.*?</c>", rb'<c r="B3" t="e"><f>VLOOKUP(A3,X!A:B,2,0)</f><v>#N/A</v></c>', xml))
    table = read_index(path)
    assert table.rows[1].values.get("cv") is None
    assert [(n.location, n.message) for n in table.notices] == [
        (Location("Index", 3, "B"), "cell holds the spreadsheet error #N/A, read as blank")
    ]


def test_formula_scan_with_prefixed_sheet_xml(tmp_path: Path):
    # ECMA-376 uses XML namespaces; some writers give SpreadsheetML a prefix (<x:c>, <x:f>)
    path = write_xlsx(tmp_path / "a.xlsx", [["Tag", "Loop"], ["TT-1", "=1+1"], ["TT-2", "T-2"]])

    def prefix(xml: bytes) -> bytes:
        xml = re.sub(rb"<(/?)(?!\?)([A-Za-z]\w*)", rb"<\1x:\2", xml)
        return xml.replace(b'xmlns="', b'xmlns:x="', 1)

    rewrite_sheet_xml(path, prefix)
    table = read_index(path)
    assert [r.values for r in table.rows] == [{"tag": "TT-1"}, {"tag": "TT-2", "loop": "T-2"}]
    assert [n.location for n in table.notices] == [Location("Index", 2, "B")]


def test_locations_match_openpyxl_coordinates(tmp_path: Path):
    # reference: openpyxl cell.coordinate and get_column_letter (ECMA-376 A1 references)
    header = ["Tag"] + [f"Spare {n}" for n in range(1, 27)] + ["Cv"]  # Cv lands in column AB
    path = tmp_path / "wide.xlsx"
    book = Workbook()
    sheet = book.active
    sheet.title = "Cellar index"
    for col, text in enumerate(header, start=1):
        sheet.cell(row=3, column=col, value=text)
    cells = {"tag": sheet.cell(row=7, column=1, value="FV-4410"), "cv": sheet.cell(row=7, column=28, value=63)}
    spare = sheet.cell(row=9, column=26, value="x")  # 'Spare 25'
    sheet.cell(row=9, column=1, value="FV-4411")
    book.save(path)
    table = read_index(path)
    assert table.sheet == "Cellar index" and table.header_row == 3
    for key, cell in cells.items():
        location = table.location(cell.row, key)
        assert f"{location.column}{location.row}" == cell.coordinate
    assert table.columns["cv"] == get_column_letter(28) == "AB"
    assert str(table.location(spare.row, "Spare 25")) == f"Cellar index!{spare.coordinate}"
    assert table.location(7, "range_low") is None


# -- CSV -----------------------------------------------------------------------------------


def _same(a: IndexTable, b: IndexTable) -> None:
    assert (a.header_row, a.columns, a.extra_columns) == (b.header_row, b.columns, b.extra_columns)
    assert [(r.row, r.values, r.extra) for r in a.rows] == [(r.row, r.values, r.extra) for r in b.rows]


@pytest.mark.parametrize("delimiter", [",", ";", "\t"])
def test_csv_and_xlsx_with_same_content_read_the_same(tmp_path: Path, delimiter: str):
    rows = [*TITLE, HEADER + ["Vendor"], *(r + ["Kettle Instruments"] for r in DATA), [], [None] * 3, ["TT-3199", True, None, 0.25]]
    from_xlsx = read_index(write_xlsx(tmp_path / "index.xlsx", rows))
    as_text = [[("TRUE" if v is True else v) for v in row] for row in rows]  # how spreadsheet programs export booleans
    from_csv = read_index(write_csv(tmp_path / "index.csv", as_text, delimiter))
    _same(from_xlsx, from_csv)
    assert from_csv.sheet == "index.csv"
    assert from_csv.location(8, "driven_by") == Location("index.csv", 8, "G")


def test_csv_keeps_leading_zeros_and_codes_as_text(tmp_path: Path):
    # common practice: codes such as 0150 or 1E3 keep their text; only plain decimals are numbers
    rows = [["Tag", "IO Address", "Cable", "Range High", "Accuracy %"], ["TT-1", "0103", "1E3", "-5", ".5"]]
    values = read_index(write_csv(tmp_path / "a.csv", rows)).rows[0].values
    assert values == {"tag": "TT-1", "io_address": "0103", "cable": "1E3", "range_high": -5, "accuracy_pct": 0.5}


def test_csv_windows_1252_read_with_notice(tmp_path: Path):
    # Windows-1252 encodes the degree sign as byte 0xB0 (code page 1252 table), invalid as UTF-8
    rows = [["Tag", "Units", "Service"], ["TT-1", "°C", "Würze cooler"]]
    path = write_csv(tmp_path / "a.csv", rows, encoding="cp1252")
    table = read_index(path)
    assert table.rows[0].values == {"tag": "TT-1", "units": "°C", "service": "Würze cooler"}
    assert [n.location for n in table.notices] == [Location("a.csv", 2, "B")]
    assert "Windows-1252" in table.notices[0].message


def test_csv_utf8_with_bom(tmp_path: Path):
    # Unicode 15 §23.8: U+FEFF at the start is a byte order mark, not text of the first header
    table = read_index(write_csv(tmp_path / "a.csv", [["Tag", "Units"], ["TT-1", "°C"]], encoding="utf-8-sig"))
    assert table.columns == {"tag": "A", "units": "B"} and table.notices == []


def test_csv_semicolon_decimal_comma(tmp_path: Path):
    # common practice: comma-decimal locales export CSV with ';' between fields
    path = write_csv(tmp_path / "a.csv", [["Tag", "Input Low", "Input High"], ["TV-1", "4", "11,68"]], delimiter=";")
    table = read_index(path)
    assert table.rows[0].values == {"tag": "TV-1", "input_low": 4, "input_high": 11.68}
    assert [n.location for n in table.notices] == [Location("a.csv", 2, "C")]


def test_csv_utf16_tab_separated(tmp_path: Path):
    # Unicode 15 §23.8: UTF-16 text starts with the byte order mark FF FE (little-endian)
    path = write_csv(tmp_path / "a.csv", [["Tag", "Units"], ["TT-1", "°C"]], delimiter="\t", encoding="utf-16")
    assert path.read_bytes()[:2] == b"\xff\xfe"
    table = read_index(path)
    assert table.rows[0].values == {"tag": "TT-1", "units": "°C"} and table.notices == []


def test_csv_quoted_line_break_stays_in_one_row(tmp_path: Path):
    # RFC 4180 §2 rule 6: a quoted field may contain line breaks
    path = write_csv(tmp_path / "a.csv", [["Tag", "Notes"], ["TT-1", "line one\nline two"], ["TT-2", None]])
    table = read_index(path)
    assert [(r.row, r.values.get("notes")) for r in table.rows] == [(2, "line one\nline two"), (3, None)]


# -- files that cannot be read -------------------------------------------------------------


def test_missing_file(tmp_path: Path):
    assert "no such file" in one_line_error(read_index, tmp_path / "nope.xlsx")


def test_directory(tmp_path: Path):
    assert "folder" in one_line_error(read_index, tmp_path)


@pytest.mark.parametrize("name", ["empty.xlsx", "empty.csv"])
def test_empty_file(tmp_path: Path, name: str):
    path = tmp_path / name
    path.write_bytes(b"")
    message = one_line_error(read_index, path)
    assert name in message and "empty" in message


def test_other_file_type(tmp_path: Path):
    path = tmp_path / "index.txt"
    path.write_text("Tag\tLoop\nTT-1\tT-1\n")
    assert ".xlsx, .xlsm or .csv" in one_line_error(read_index, path)


def test_encrypted_workbook(tmp_path: Path):
    # [MS-OFFCRYPTO] §2.3.4.1: an encrypted workbook is an OLE compound file; [MS-CFB] §2.2
    # header signature D0 CF 11 E0 A1 B1 1A E1
    path = tmp_path / "locked.xlsx"
    path.write_bytes(bytes.fromhex("D0CF11E0A1B11AE1") + bytes(range(256)) * 8)
    message = one_line_error(read_index, path)
    assert "password-protected" in message and "save it unprotected as .xlsx" in message


def test_not_a_zip(tmp_path: Path):
    path = tmp_path / "index.xlsx"
    path.write_text("Tag,Loop\nTT-1,T-1\n")  # a CSV renamed .xlsx
    assert "not a zip archive" in one_line_error(read_index, path)


def test_corrupt_zip(tmp_path: Path, index_xlsx: Path):
    data = index_xlsx.read_bytes()
    broken = tmp_path / "broken.xlsx"
    broken.write_bytes(data[: len(data) // 2])  # a download cut short
    message = one_line_error(read_index, broken)
    assert "broken.xlsx" in message and "damaged or incomplete" in message


def test_legacy_xls(tmp_path: Path):
    path = tmp_path / "old.xls"
    path.write_bytes(bytes.fromhex("D0CF11E0A1B11AE1") + bytes(504))
    assert "save it as .xlsx" in one_line_error(read_index, path)


# -- the benchmark's generated index ------------------------------------------------------


def _make_index_module():
    spec = importlib.util.spec_from_file_location("make_index", ROOT / "benchmarks" / "make_index.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_generated_index_is_deterministic_and_readable(tmp_path: Path):
    make_index = _make_index_module()
    assert make_index.generate_rows(40, seed=3) == make_index.generate_rows(40, seed=3)
    path = make_index.write_index(tmp_path / "gen.xlsx", 300, seed=1)
    table = read_index(path)
    assert table.header_row == 5 and table.extra_columns == {}
    assert set(table.columns) == {c.key for c in make_index.COLUMNS}  # every default header recognised
    loops = {r.values["loop"] for r in table.rows}
    assert len(loops) == 300
    assert 3.0 <= len(table.rows) / len(loops) <= 3.6
    assert sum(1 for r in table.rows if r.values.get("split_method")) > 50
    _same(table, read_index(make_index.write_index(tmp_path / "gen.csv", 300, seed=1)))
