"""The paths that keep `check` of a large index fast and small: rows read one at a time,
the sheet XML scanned in blocks, texts kept once, rows released as records are built,
the index read on a second thread, the JSON report written member by member.

Each path must give what the plain path gives. References: openpyxl (a general-purpose
spreadsheet library) for the cells and their A1 references, ECMA-376 Part 1 (SpreadsheetML;
clause numbers from memory) for the sheet XML, Python's json module for the JSON text.
"""

from __future__ import annotations

import io
import json
import re
import sys
from pathlib import Path

import pytest
from openpyxl import Workbook, load_workbook

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Location
from loopdocs.read import read_index
from loopdocs.read import xlsx as xlsx_reader
from loopdocs.read.background import read_project, start_reading

HEADER = ["Tag", "Loop", "Service", "Range Low", "Range High", "Units", "Cv"]


def workbook(path: Path, rows, first_column: int = 1, first_row: int = 1, merges=()) -> Path:
    """A workbook written with openpyxl, ``rows`` placed from (first_row, first_column)."""
    book = Workbook()
    sheet = book.active
    sheet.title = "Index"
    for r, row in enumerate(rows):
        for c, value in enumerate(row):
            if value is not None:
                sheet.cell(first_row + r, first_column + c, value)
    for ref in merges:
        sheet.merge_cells(ref)
    book.save(path)
    return path


def test_rows_of_a_sheet_not_starting_in_column_a_keep_their_cells(tmp_path: Path):
    # reference: openpyxl's own reading of the same cells (cell.coordinate, ECMA-376 A1
    # references); calamine starts its row iterator at the first used column, loopdocs pads
    rows = [HEADER, ["TT-1", "T-1", "Mash tun", 0, 100, "degC", None], ["TV-1", "T-1", "Mash tun steam", None, None, None, 25]]
    path = workbook(tmp_path / "a.xlsx", rows, first_column=3, first_row=4)
    table = read_index(path)
    book = load_workbook(path, read_only=True)
    expected = []
    for cells in book["Index"].iter_rows(min_row=5):
        expected.append({str(c.coordinate): c.value for c in cells if c.value is not None})
    got = [{f"{table.columns[k]}{row.row}": v for k, v in row.values.items()} for row in table.rows]
    assert got == expected
    assert table.columns["tag"] == "C" and table.header_row == 4


def test_merged_loop_cells_fill_down_when_the_sheet_starts_right_of_column_a(tmp_path: Path):
    # ECMA-376 §18.3.1.55 mergeCell: only the top-left cell of a merged range holds a value
    rows = [HEADER, ["TT-2", "T-2", "Lauter tun"], ["TIC-2", None, None], ["TV-2", None, None], ["PT-3", "P-3", "Kettle"]]
    path = workbook(tmp_path / "a.xlsx", rows, first_column=2, merges=["C2:C4", "D2:D3"])
    table = read_index(path)
    assert [r.values.get("loop") for r in table.rows] == ["T-2", "T-2", "T-2", "P-3"]
    assert [r.values.get("service") for r in table.rows] == ["Lauter tun", "Lauter tun", None, "Kettle"]


@pytest.mark.parametrize("block_bytes", [16, 97, 1 << 20])
def test_formula_scan_in_blocks_finds_every_cell_whatever_the_block(tmp_path: Path, block_bytes: int, monkeypatch):
    # openpyxl stores formulas without a cached value (openpyxl docs, "Using formulae");
    # ECMA-376 §18.18.11 ST_CellType "e": an error cell. Blocks end after a row (</row>),
    # so a block as small as a few bytes still sees whole cells.
    rows = [HEADER] + [[f"TT-{n}", f"T-{n}", "Fermenter", 0, "=1+1" if n % 7 == 0 else 50, "degC", None] for n in range(1, 60)]
    path = workbook(tmp_path / "a.xlsx", rows)
    with xlsx_reader.zipfile.ZipFile(path) as source:
        items = [(info, source.read(info.filename)) for info in source.infolist()]
    with xlsx_reader.zipfile.ZipFile(path, "w") as target:
        for info, data in items:
            if info.filename.startswith("xl/worksheets/"):
                data = re.sub(rb'(<row r="30"[^>]*>)(.*?)(</row>)', rb'\1\2<c r="G30" t="e"><v>#REF!</v></c>\3', data)
            target.writestr(info, data)
    monkeypatch.setattr(xlsx_reader, "SCAN_BLOCK_BYTES", block_bytes)
    notices = xlsx_reader.formula_notices(path, "Index")
    formula_rows = [n + 1 for n in range(1, 60) if n % 7 == 0]
    expected = sorted([(Location("Index", r, "E"), "no cached value") for r in formula_rows]
                      + [(Location("Index", 30, "G"), "#REF!")], key=lambda x: (x[0].row, x[0].column))
    assert [(n.location, "no cached value" if "no cached value" in n.message else "#REF!") for n in notices] == expected


def test_repeated_texts_are_kept_once(tmp_path: Path):
    # common practice: an index repeats its units and services on every row; the rows
    # share one copy of each text (identity, not only equality)
    rows = [HEADER] + [[f"TT-{n}", f"T-{n}", "Bright beer tank", 0, 4, "barg", None] for n in range(1, 6)]
    table = read_index(workbook(tmp_path / "a.xlsx", rows))
    units = [row.values["units"] for row in table.rows]
    assert units == ["barg"] * 5 and len({id(u) for u in units}) == 1


def test_rows_released_while_building_give_the_same_project(tmp_path: Path):
    from loopdocs.model.from_rows import build_project

    rows = [HEADER] + [[f"TT-{n}", f"T-{n}", "Fermenter", 0, 40, "degC", None] for n in range(1, 9)]
    rows += [["TT-3", "T-3", "duplicate", 0, 40, "degC", None], ["TV-4", "T-4", "valve", None, None, None, "ten"]]
    path = workbook(tmp_path / "a.xlsx", rows)
    kept, kept_findings = build_project(read_index(path))
    table = read_index(path)
    released, released_findings = build_project(table, release_rows=True)
    assert table.rows == []
    # common practice: a duplicate tag and a word in a numeric column are both reported
    assert {f.rule for f in kept_findings} >= {"index.duplicate-tag", "index.not-a-number"}
    assert [f.as_json() for f in released_findings] == [f.as_json() for f in kept_findings]
    assert {k: t.model_dump() for k, t in released.tags.items()} == {k: t.model_dump() for k, t in kept.tags.items()}
    assert all(t.model_fields_set == kept.tags[k].model_fields_set for k, t in released.tags.items())


def test_reading_on_a_second_thread_gives_the_same_table_and_errors(tmp_path: Path):
    rows = [HEADER, ["TT-1", "T-1", "Mash tun", 0, 100, "degC", None]]
    path = workbook(tmp_path / "a.xlsx", rows)
    _, _, table = start_reading(path).result()
    assert [r.values for r in table.rows] == [r.values for r in read_project(path)[2].rows]
    broken = tmp_path / "b.xlsx"
    broken.write_bytes(b"PK\x03\x04 not a whole archive")
    pending = start_reading(broken)
    with pytest.raises(InputError, match="damaged or incomplete"):
        pending.result()
    with pytest.raises(InputError, match="no such file"):
        start_reading(tmp_path / "missing.xlsx")


def test_json_written_member_by_member_is_what_json_dumps_gives(monkeypatch):
    # reference: Python's json module (json.dumps, default separators ", " and ": ")
    from loopdocs.commands.check import write_json_parts

    report = {"findings": [{"rule": "split.gap", "message": "dead band of 4 % CO \u2013 TV-1A", "cell": None}],
              "splits": [], "summary": {"error": 0, "warning": 1, "ratio": 0.1 + 0.2}}
    out = io.StringIO()
    monkeypatch.setattr(sys, "stdout", out)
    write_json_parts(report)
    assert out.getvalue() == json.dumps(report) + "\n"
