"""`loopdocs check`: structural findings located to the cell, the docs/design.md §9.1 JSON contract,
exit codes 0/1/2, and the starter project of `loopdocs init`."""

from __future__ import annotations

import csv
import json
import os
import subprocess
import sys
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.checks import check_project
from loopdocs.cli import app
from loopdocs.model.loading import load_project
from loopdocs.read.columns import COLUMNS
from loopdocs.sheets.index_template import write_index_workbook

REPO = Path(__file__).resolve().parents[1]
runner = CliRunner()
LETTER = {c.key: openpyxl.utils.get_column_letter(i) for i, c in enumerate(COLUMNS, start=1)}

BASE_ROWS = [
    {"tag": "TT-101", "service": "Test tank temperature", "signal": "4-20 mA", "range_low": 0, "range_high": 100, "units": "degC"},
    {"tag": "TIC-101", "service": "Test tank temperature", "signal": "4-20 mA", "control_action": "reverse", "platform": "dcs"},
]


def write(tmp_path: Path, rows: list[dict], name: str = "index.xlsx") -> Path:
    path = tmp_path / name
    write_index_workbook(path, rows)
    return path


def findings_of(path: Path, rule: str) -> list:
    return [f for f in check_project(path).findings if f.rule == rule]


def run(*args: str):
    return runner.invoke(app, [str(a) for a in args])


# --- each structural finding, provoked and located ---------------------------------------

@pytest.mark.parametrize("rows, rule, severity, row, key", [
    # duplicate tag: the second occurrence (row 3) is reported at its Tag cell
    (BASE_ROWS + [{"tag": "TT-101", "service": "again"}], "index.duplicate-tag", "error", 4, "tag"),
    (BASE_ROWS + [{"tag": "T-3105"}], "index.bad-tag", "error", 4, "tag"),
    (BASE_ROWS + [{"tag": "TV-101", "air_action": "air to wobble"}], "index.vocabulary", "error", 4, "air_action"),
    (BASE_ROWS + [{"tag": "TV-101", "cv": "about ten"}], "index.not-a-number", "error", 4, "cv"),
    # a tolerance of 0 % (or less) of span cannot be met by any reading (common practice:
    # tolerances are a positive +/- % of span); found by the fuzzing run of tests/test_fuzz.py
    (BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "range_high": 10, "units": "bar", "accuracy_pct": 0}],
     "index.not-a-number", "error", 4, "accuracy_pct"),
    (BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "range_high": 10, "units": "bar", "accuracy_pct": "-0.5"}],
     "index.not-a-number", "error", 4, "accuracy_pct"),
    (BASE_ROWS + [{"tag": "PT-7", "range_low": 5, "range_high": 5, "units": "bar"}], "range.zero-span", "error", 4, "range_high"),
    (BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "range_high": 10}], "range.no-units", "error", 4, "units"),
    (BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "units": "bar"}], "range.incomplete", "error", 4, "range_high"),
    (BASE_ROWS + [{"tag": "PT-7", "loop": "P-8"}], "loop.mismatch", "warning", 4, "loop"),
    (BASE_ROWS + [{"service": "a row with no tag"}], "index.no-tag", "warning", 4, "tag"),
])
def test_structural_finding_is_located(tmp_path, rows, rule, severity, row, key):
    found = findings_of(write(tmp_path, rows), rule)
    assert len(found) == 1, [f.as_json() for f in check_project(tmp_path / "index.xlsx").findings]
    finding = found[0]
    assert finding.severity.value == severity
    assert (finding.location.sheet, finding.location.row, finding.location.column) == ("Index", row, LETTER[key])


def test_clean_rows_give_no_structural_finding(tmp_path):
    result = check_project(write(tmp_path, BASE_ROWS))
    assert [f.rule for f in result.findings] == []


@pytest.mark.parametrize("loop_cell", ["T-101", "T101", "101", "TIC-101", "t-101"])
def test_loop_cell_that_agrees_is_canonical(tmp_path, loop_cell):
    rows = [dict(BASE_ROWS[0], loop=loop_cell)]
    project, findings = load_project(write(tmp_path, rows))
    assert project.tags["TT-101"].loop == "T-101"
    assert not findings_of(tmp_path / "index.xlsx", "loop.mismatch")


def test_numbers_stored_as_text_and_spellings_are_converted(tmp_path):
    rows = [{"tag": " TV-101 ", "cv": " 12.5 ", "co_end_pct": "48 %", "air_action": "A.T.O.", "fail_position": "fail closed"}]
    project, findings = load_project(write(tmp_path, rows))
    tag = project.tags["TV-101"]
    assert (tag.cv, tag.co_end_pct, tag.air_action.value, tag.fail_position.value) == (12.5, 48.0, "ATO", "FC")
    assert findings == []


def test_loops_group_tags_in_natural_order(tmp_path):
    rows = [{"tag": "TT-10"}, {"tag": "TT-9"}, {"tag": "TV-9A"}, {"tag": "TIC-9"}, {"tag": "FT-100"}]
    project, _ = load_project(write(tmp_path, rows))
    assert list(project.loops) == ["F-100", "T-9", "T-10"]
    assert project.loops["T-9"].tags == ("TT-9", "TV-9A", "TIC-9")


def test_csv_and_xlsx_give_the_same_records(tmp_path):
    rows = BASE_ROWS + [{"tag": "TV-101", "air_action": "ATC", "cv": 4, "co_start_pct": 50, "driven_by": "TIC-101"}]
    xlsx_project, _ = load_project(write(tmp_path, rows))
    csv_path = tmp_path / "index.csv"
    with csv_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow([c.header for c in COLUMNS])
        for row in rows:
            writer.writerow(["" if row.get(c.key) is None else row[c.key] for c in COLUMNS])
    csv_project, _ = load_project(csv_path)
    dump = lambda p: {name: t.model_dump(exclude={"row"}) for name, t in p.tags.items()}  # noqa: E731
    assert dump(csv_project) == dump(xlsx_project)


# --- JSON contract and exit codes (docs/design.md §9.1) ---------------------------------------------

def assert_design_json(data: dict) -> None:
    """Structural check of the `check --format json` object against docs/design.md §9.1."""
    assert set(data) >= {"findings", "splits", "summary"}
    for finding in data["findings"]:
        assert set(finding) >= {"rule", "severity", "loop", "tags", "message", "location"}
        assert finding["severity"] in {"error", "warning", "info"}
        assert isinstance(finding["tags"], list) and isinstance(finding["message"], str)
        location = finding["location"]
        assert location is None or (set(location) == {"sheet", "row", "column"} and isinstance(location["row"], int))
    for split in data["splits"]:
        assert set(split) >= {"controller", "loop", "mode", "elements", "recommended_boundaries"}
        for element in split["elements"]:
            assert set(element) >= {"tag", "co_start", "co_end", "travel_start", "travel_end", "method"}
    assert all(isinstance(v, int) for v in data["summary"].values())


def test_exit_0_and_json_contract_on_the_example_project():
    result = run("check", REPO / "project_example", "--format", "json")
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert_design_json(data)
    assert data["summary"]["error"] == 0


def test_exit_1_when_an_error_is_found(tmp_path):
    result = run("check", write(tmp_path, BASE_ROWS + [{"tag": "TT-101"}]), "--format", "json")
    assert result.exit_code == 1
    data = json.loads(result.output)
    assert_design_json(data)
    assert data["summary"]["error"] == 1


def test_accepted_error_stays_in_json_but_not_in_exit_code(tmp_path):
    write(tmp_path, BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "range_high": 10}])
    (tmp_path / "loopdocs.toml").write_text(
        '[[accept]]\nrule = "range.no-units"\ntag = "PT-7"\nreason = "spare transmitter, range set at site"\nby = "A. Engineer"\n'
    )
    result = run("check", tmp_path, "--format", "json")
    assert result.exit_code == 0, result.output
    accepted = [f for f in json.loads(result.output)["findings"] if f["rule"] == "range.no-units"]
    assert accepted[0]["accepted"] == {"reason": "spare transmitter, range set at site", "by": "A. Engineer"}


def _file(name: str, content: bytes):
    def make(folder: Path) -> Path:
        (folder / name).write_bytes(content)
        return folder / name
    return make


@pytest.mark.parametrize("make, expect", [
    (lambda d: d / "missing.xlsx", "no such file"),
    (_file("empty.xlsx", b""), "empty"),
    (_file("notes.txt", b"hello"), ".txt"),
    # an encrypted workbook is an OLE compound file (magic D0 CF 11 E0 A1 B1 1A E1, MS-CFB 2.2)
    (_file("locked.xlsx", bytes.fromhex("D0CF11E0A1B11AE1") + b"\0" * 512), "password"),
    (_file("broken.xlsx", b"PK\x03\x04 not really a zip"), "broken.xlsx"),
    (lambda d: d, "loopdocs.toml"),
])
def test_unreadable_input_exits_2_with_one_line(tmp_path, make, expect):
    path = make(tmp_path)
    proc = subprocess.run(
        [sys.executable, "-m", "loopdocs", "check", str(path), "--format", "json"],
        capture_output=True, text=True, cwd=REPO, env={**os.environ, "PYTHONPATH": str(REPO)},
    )
    assert proc.returncode == 2
    assert proc.stdout == ""
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and expect.lower() in lines[0].lower(), proc.stderr
    assert "Traceback" not in proc.stderr


def test_bad_config_exits_2_naming_the_key(tmp_path):
    write(tmp_path, BASE_ROWS)
    (tmp_path / "loopdocs.toml").write_text("[title_block]\nprojet = 'typo'\n")
    result = run("check", tmp_path)
    assert result.exit_code == 2
    assert "title_block.projet" in result.output


def test_human_output_groups_by_loop(tmp_path):
    result = run("check", write(tmp_path, BASE_ROWS + [{"tag": "PT-7", "range_low": 0, "range_high": 10}]))
    assert result.exit_code == 1
    assert "loop P-7" in result.output and "range.no-units" in result.output and "Index!" in result.output


# --- loopdocs init ---------------------------------------------------------------------

def test_init_writes_a_usable_starter(tmp_path):
    target = tmp_path / "new"
    result = run("init", target)
    assert result.exit_code == 0, result.output
    workbook = openpyxl.load_workbook(target / "index.xlsx")
    sheet = workbook["Index"]
    assert [c.value for c in sheet[1]] == [c.header for c in COLUMNS]
    assert all(c.comment is not None and c.comment.text for c in sheet[1])
    assert sheet.freeze_panes == "B2"
    lists = {str(v.sqref).split(":")[0]: v.formula1 for v in sheet.data_validations.dataValidation if v.type == "list"}
    assert '"ATO,ATC"' == lists[LETTER["air_action"] + "2"]
    assert "FC" in lists[LETTER["fail_position"] + "2"]
    # the starter is itself a valid, empty project
    assert run("check", target).exit_code == 0
    # and init refuses to overwrite
    again = run("init", target)
    assert again.exit_code == 2 and "already exists" in again.output


def test_index_format_doc_is_current():
    sys.path.insert(0, str(REPO / "docs"))
    try:
        import make_index_format
    finally:
        sys.path.pop(0)
    assert (REPO / "docs" / "index-format.md").read_text(encoding="utf-8") == make_index_format.render()


def test_formula_without_cached_value_is_reported_once_per_column(tmp_path):
    # openpyxl writes formulas without a cached value (ECMA-376 Part 1, 18.3.1.40: <f> without <v>)
    path = write(tmp_path, BASE_ROWS)
    workbook = openpyxl.load_workbook(path)
    sheet = workbook["Index"]
    for row in range(4, 10):
        sheet[f"{LETTER['tag']}{row}"] = f"TT-{row}"
        sheet[f"{LETTER['service']}{row}"] = "=\"Tank \"&ROW()"
    workbook.save(path)
    found = findings_of(path, "index.read")
    assert len(found) == 1
    assert "6 cells in column " + LETTER["service"] in found[0].message
    assert (found[0].location.row, found[0].location.column) == (4, LETTER["service"])


def test_check_leaves_fast_with_its_output_complete(tmp_path):
    # the console entry leaves check without the interpreter's teardown (cli._leave): the
    # JSON must still be complete on a pipe and the exit code kept (docs/design.md §9.4)
    import subprocess
    import sys

    from loopdocs.sheets.index_template import write_index_workbook

    index = tmp_path / "index.xlsx"
    write_index_workbook(index, [{"tag": "PT-1", "range_low": 5, "range_high": 5, "units": "barg"}], spare_rows=0)
    run = subprocess.run([sys.executable, "-m", "loopdocs", "check", str(index), "--format", "json"],
                         capture_output=True, text=True)
    assert run.returncode == 1 and json.loads(run.stdout)["summary"]["error"] == 1


def test_starter_config_documents_the_revision_sequence_defaults():
    # The commented [revisions] block of the starter loopdocs.toml, uncommented, must give
    # the defaults loopdocs uses (letters before construction, numbers from the first issue
    # for construction: common practice), so the starter never documents a stale default.
    import re
    import tomllib

    from loopdocs.model.revisions import RevisionScheme
    from loopdocs.sheets.index_template import STARTER_CONFIG

    block = STARTER_CONFIG[STARTER_CONFIG.index("# [revisions]"):].split("\n\n")[0]
    uncommented = "\n".join(re.sub(r"^# ", "", line) for line in block.splitlines())
    documented = RevisionScheme(**tomllib.loads(uncommented)["revisions"])
    assert documented == RevisionScheme()
    assert (documented.before_construction, documented.for_construction) == ("A", "0")


def test_zero_accuracy_on_a_split_valve_is_a_finding_and_the_tables_still_come(tmp_path):
    # Regression (tests/test_fuzz.py found it): Accuracy % 0 on a valve of a split group
    # ended calibrate with a ValueError from the loop check table. The cell is an error
    # finding and the valve's tables use the default tolerance of a blank Accuracy %
    # (1 % of travel, common practice for a valve stroke check).
    rows = [
        {"tag": "PT-9", "service": "s", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "bar"},
        {"tag": "PIC-9", "service": "s", "signal": "4-20 mA", "control_action": "reverse", "platform": "dcs"},
        {"tag": "PV-9A", "service": "s", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
         "co_start_pct": 0, "co_end_pct": 50, "accuracy_pct": 0},
        {"tag": "PV-9B", "service": "s", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
         "co_start_pct": 50, "co_end_pct": 100},
    ]
    path = write(tmp_path, rows)
    bad = findings_of(path, "index.not-a-number")
    assert [(f.tags, f.location.column) for f in bad] == [(("PV-9A",), LETTER["accuracy_pct"])]
    result = run("calibrate", path)
    # exit 1: the index has errors (the tables are written, marked); never a traceback
    assert result.exit_code == 1, result.output
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert "PV-9A" in result.output
