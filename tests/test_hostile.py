"""Hostile and broken cells: numbers at the edges, control characters, markup, formulas,
outputs aimed at inputs. Each input is made in the test; what loopdocs must do is written
beside it (the table in docs/testing.md lists them)."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.cli import app
from loopdocs.sheets.index_template import write_index_workbook

sys.path.insert(0, str(Path(__file__).resolve().parent))
from workbook_helpers import Filler  # noqa: E402

runner = CliRunner()


def _workbook(tmp_path, rows, name="index.xlsx"):
    path = tmp_path / name
    write_index_workbook(path, rows, spare_rows=0)
    return path


@pytest.mark.parametrize("text", ["nan", "inf", "-inf", "1e999", "5e-324", "1e-15", "2e12"])
def test_numbers_at_the_edges_are_findings_with_cells(tmp_path, text):
    # a value that is not finite, or beyond any plausible setting, is an error at its cell,
    # never carried into a table as nan or inf
    from loopdocs.checks import check_project

    path = _workbook(tmp_path, [{"tag": "PT-1", "signal": "4-20 mA", "range_low": 0, "range_high": text,
                                 "units": "barg", "accuracy_pct": 0.25}])
    checked = check_project(path)
    bad = [f for f in checked.findings if f.rule == "index.not-a-number"]
    assert len(bad) == 1 and bad[0].location.row == 2 and bad[0].counts_as_error
    assert checked.project.tags["PT-1"].range_high is None


def test_float_cells_that_are_not_finite(tmp_path):
    # the same for numbers stored as numbers (openpyxl writes inf as a number cell)
    from loopdocs.model.from_rows import to_number

    for value in (math.nan, math.inf, 1e300, 5e-324):
        with pytest.raises(ValueError):
            to_number(value)
    assert to_number(0.0) == 0.0 and to_number(-1e-3) == -1e-3


def test_control_characters_removed_with_a_finding(tmp_path):
    from loopdocs.checks import check_project

    # written as CSV: a workbook writer refuses these characters, an export from another system may not
    path = tmp_path / "index.csv"
    path.write_text("Tag,Service,Signal\nPT-2,Jacket\x1b[31m supply\x0b\u202e,4-20 mA\n", encoding="utf-8")
    checked = check_project(path)
    assert checked.project.tags["PT-2"].service == "Jacket[31m supply"
    found = [f for f in checked.findings if f.rule == "index.unprintable"]
    assert len(found) == 1 and found[0].location.row == 2


def test_square_brackets_print_as_written(tmp_path):
    # rich markup in a cell is text: no MarkupError, no hidden word, no terminal link
    path = _workbook(tmp_path, [
        {"tag": "PT-3", "service": "Jacket [cw] supply [/]", "signal": "4-20 mA", "range_low": 0,
         "range_high": 10, "units": "barg", "accuracy_pct": 0.25, "loop": "[link=file:///etc/passwd]P-3[/link]"},
    ])
    result = runner.invoke(app, ["check", str(path)], env={"COLUMNS": "200"})
    assert result.exception is None or isinstance(result.exception, SystemExit), result.output
    assert "[link=file:///etc/passwd]P-3[/link]" in result.output
    result = runner.invoke(app, ["calibrate", str(path)], env={"COLUMNS": "200"})
    assert "Jacket [cw] supply [/]" in result.output


def test_formulas_are_written_as_text_and_readings_as_formulas_are_invalid(tmp_path):
    from loopdocs.calibration.grading import verify
    from loopdocs.sheets.technicians_workbook import read_workbook

    index = _workbook(tmp_path, [{"tag": "PT-4", "service": "=HYPERLINK(\"http://example.invalid\",\"x\")",
                                  "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg",
                                  "accuracy_pct": 0.25}])
    out = tmp_path / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(index), "--out", str(out)])
    assert result.exit_code == 0, result.output
    wb = openpyxl.load_workbook(out)
    # OWASP formula injection: no cell written by loopdocs is a formula
    assert not [c.coordinate for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.data_type == "f"]
    # a reading typed as a formula that copies the expected value is never graded, nor is a date
    filler = Filler(out)
    ws, r, col = filler.where["PT-4/01"]
    filler.set("PT-4/01", "As-Found", f"={ws.cell(r, col['Expected']).coordinate}")
    filler.set("PT-4/02", "As-Found", __import__("datetime").datetime(2026, 12, 2))
    report = verify(read_workbook(filler.save()))
    points = {p.ref: p for t in report.tags for p in t.points}
    assert points["PT-4/01"].as_found.status == "invalid" and points["PT-4/02"].as_found.status == "invalid"


def test_out_never_overwrites_the_input(tmp_path):
    index = _workbook(tmp_path, [{"tag": "PT-5", "signal": "4-20 mA", "range_low": 0, "range_high": 10,
                                  "units": "barg"}])
    before = index.read_bytes()
    result = runner.invoke(app, ["calibrate", str(index), "--out", str(index)])
    assert result.exit_code == 2 and "is an input" in result.output
    assert index.read_bytes() == before
    result = runner.invoke(app, ["calibrate", str(index), "--out", str(tmp_path / "cal.csv")])
    assert result.exit_code == 2 and ".xlsx" in result.output


def test_cache_records_never_delete_outside_the_output_folder(tmp_path):
    # a manifest edited to name a file outside the output folder, an absolute path or a link
    # deletes nothing (only regular .pdf files inside the folder are ever removed)
    from loopdocs.core.files import remove_inside

    out = tmp_path / "out"
    (out / "loops").mkdir(parents=True)
    victim = tmp_path / "precious.pdf"
    victim.write_bytes(b"%PDF keep")
    (out / "loops" / "link.pdf").symlink_to(victim)
    own = out / "loops" / "T-1.pdf"
    own.write_bytes(b"%PDF ours")
    for relative in ("../precious.pdf", str(victim), "loops/link.pdf", "loops/../../precious.pdf"):
        assert remove_inside(out, relative) is False
    assert victim.read_bytes() == b"%PDF keep"
    assert remove_inside(out, "loops/T-1.pdf") is True and not own.exists()


@pytest.mark.parametrize("toml,message", [
    ('[index]\nfile = "../elsewhere/index.xlsx"\n', "outside the project folder"),
    ("x = " + "[" * 100000 + "]" * 100000 + "\n", "loopdocs.toml"),
])
def test_project_file_mistakes_are_one_line(tmp_path, toml, message):
    # a project file pointing outside its folder, or nested past any real use, ends in exit 2
    # with one line, never a traceback
    project = tmp_path / "proj"
    project.mkdir()
    (project / "loopdocs.toml").write_text(toml, encoding="utf-8")
    result = runner.invoke(app, ["check", str(project)])
    assert result.exit_code == 2 and message in result.output and "Traceback" not in result.output


def _rezip(src, dst, replace=None, extra=None):
    import zipfile

    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            data = zin.read(info.filename)
            if replace and info.filename in replace:
                data = replace[info.filename](data)
            zout.writestr(info, data)
        for name, data in (extra or {}).items():
            zout.writestr(name, data)


def test_far_corner_cell_is_refused_before_parsing(tmp_path):
    # a cell at XFD1048576 made the reader allocate the whole sheet and abort the process;
    # it is now refused in one line naming the limit (the process never aborts)
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["Tag", "Signal"])
    ws.append(["PT-1", "4-20 mA"])
    ws["XFD1048576"] = "x"
    path = tmp_path / "far.xlsx"
    wb.save(path)
    result = runner.invoke(app, ["check", str(path)])
    assert result.exit_code == 2 and "LOOPDOCS_MAX_ROWS" in result.output and "XFD1048576" in result.output


def test_zip_bomb_part_and_entities_are_refused(tmp_path):
    base = _workbook(tmp_path, [{"tag": "PT-1", "signal": "4-20 mA"}], "base.xlsx")
    bomb = tmp_path / "bomb.xlsx"
    _rezip(base, bomb, extra={"xl/media/padding.bin": b"\0" * 60_000_000})  # 60 MB of zeros packs to ~60 kB
    result = runner.invoke(app, ["check", str(bomb)])
    assert result.exit_code == 2 and "LOOPDOCS_MAX_PART_MB" in result.output, result.output
    entity = tmp_path / "entity.xlsx"
    doctype = b'<!DOCTYPE x [<!ENTITY e "boom">]>'
    _rezip(base, entity, replace={"xl/worksheets/sheet1.xml": lambda d: (
        d.replace(b"?>", b"?>" + doctype, 1) if d.startswith(b"<?xml") else doctype + d)})
    result = runner.invoke(app, ["check", str(entity)])
    assert result.exit_code == 2 and "entities" in result.output


def test_a_huge_text_cell_is_cut_with_a_finding(tmp_path):
    # a 1 MB Service made the build wrap text for minutes; a long one is cut at 10,000 characters, marked
    # (a CSV field past 131,072 characters is refused by the CSV reader in one line)
    from loopdocs.checks import check_project

    path = tmp_path / "index.csv"
    path.write_text("Tag,Service,Signal\nPT-6," + "x" * 100_000 + ",4-20 mA\n", encoding="utf-8")
    checked = check_project(path)
    service = checked.project.tags["PT-6"].service
    assert len(service) == 10_000 + len(" [...]") and service.endswith(" [...]")
    assert [f.location.row for f in checked.findings if f.rule == "index.long-text"] == [2]


@pytest.mark.parametrize("pattern,refused", [
    (r"(?P<letters>(A+)+)(?P<number>[0-9]+)", True),          # the textbook catastrophic shape
    (r"(?P<letters>([A-Z]+-?)*)(?P<number>[0-9]+)", True),    # optional separator: the same
    (r"(?P<letters>[A-Z]+)-(?P<number>[0-9]+)(-[0-9]+)*", False),  # each repeat starts with its literal
])
def test_tag_patterns_that_backtrack_are_refused(tmp_path, pattern, refused):
    # a project tag pattern that backtracks catastrophically ran past 60 s on one tag
    project = tmp_path / "proj"
    project.mkdir()
    write_index_workbook(project / "index.xlsx", [{"tag": "PT-1"}], spare_rows=0)
    (project / "loopdocs.toml").write_text(f"[index]\ntag_pattern = '{pattern}'\n", encoding="utf-8")
    result = runner.invoke(app, ["check", str(project)])
    assert (result.exit_code == 2 and "opens with a repeat" in result.output) is refused, result.output


def test_an_internal_error_is_one_line_and_a_log(tmp_path, monkeypatch, capsys):
    # any failure that is not the input's ends in exit 3 with one line naming the log that holds
    # the traceback; --debug shows it
    import loopdocs.cli as cli

    def broken(*args, **kwargs):
        raise ZeroDivisionError("planted")

    monkeypatch.setattr("loopdocs.checks.check_project", broken)
    index = _workbook(tmp_path, [{"tag": "PT-9"}])
    monkeypatch.setattr("sys.argv", ["loopdocs", "check", str(index)])
    with pytest.raises(SystemExit) as stop:
        cli.main()
    err = capsys.readouterr().err
    assert stop.value.code == 3 and "Traceback" not in err and "ZeroDivisionError: planted" in err
    log = Path(err.split("the details are in ")[1].split(",")[0])
    assert "ZeroDivisionError" in log.read_text() and "Traceback" in log.read_text()
    monkeypatch.setattr("sys.argv", ["loopdocs", "check", str(index), "--debug"])
    with pytest.raises(ZeroDivisionError):
        cli.main()


def test_a_superscript_digit_in_a_loop_cell_is_text(tmp_path):
    # found by tests/test_fuzz.py: "¹" counts as a digit to str.isdigit but not to int(); loop
    # ids sort with ASCII digits only
    from loopdocs.checks import check_project

    path = tmp_path / "index.csv"
    path.write_text("Tag,Loop\nTT-101,T-101\u00b9\nTT-102,T-102\n", encoding="utf-8")
    assert "T-101\u00b9" in check_project(path).project.loops


def test_outputs_get_the_permissions_of_the_users_other_files(tmp_path):
    # SVGs, the workbook and init files were created 0600 (mkstemp) while PDFs were 0644:
    # every output now gets 0666 less the umask, like a file the user creates
    import os

    from loopdocs.core.files import atomic_write

    mask = os.umask(0o022)
    try:
        target = tmp_path / "drawing.svg"
        atomic_write(target, lambda tmp: tmp.write_text("<svg/>"))
        assert target.stat().st_mode & 0o777 == 0o644
    finally:
        os.umask(mask)
