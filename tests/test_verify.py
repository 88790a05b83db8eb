"""Round trip: write a calibration workbook, fill it in as a technician would (openpyxl), verify.

Error in % of span = (reading - expected) / output span * 100 (docs/design.md §6.10 tolerance is
Accuracy % of span); hysteresis = |rising - falling| / span * 100 at the same point
(common practice definitions).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.calibration.grading import judge_reading, verify
from loopdocs.calibration.project_tables import calibration_set
from loopdocs.cli import app
from loopdocs.model.loading import load_project
from loopdocs.sheets.index_template import write_index_workbook
from loopdocs.sheets.technicians_workbook import HEADER_ROW, read_workbook, write_workbook

sys.path.insert(0, str(Path(__file__).resolve().parent))
from workbook_helpers import Filler, by_ref  # noqa: E402

EXAMPLE = Path(__file__).resolve().parent.parent / "project_example"
runner = CliRunner()

ROWS = [
    # 0-10 barg -> 4-20 mA, 0.25 % of span: +/-0.04 mA
    {"tag": "PT-101", "service": "Wort kettle pressure", "signal": "4-20 mA", "range_low": 0, "range_high": 10,
     "units": "barg", "accuracy_pct": 0.25},
    # 0-100 degC Pt100 -> 4-20 mA, 0.5 % of span: +/-0.08 mA
    {"tag": "TT-102", "service": "Wort kettle temperature", "signal": "4-20 mA", "sensor": "Pt100", "range_low": 0,
     "range_high": 100, "units": "degC", "accuracy_pct": 0.5},
    # no Accuracy %: no tolerance
    {"tag": "LT-103", "service": "Wort kettle level", "signal": "4-20 mA", "range_low": 0, "range_high": 2000,
     "units": "mm"},
]


@pytest.fixture()
def issued(tmp_path) -> Path:
    index = tmp_path / "index.xlsx"
    write_index_workbook(index, ROWS)
    project, _ = load_project(index)
    path = tmp_path / "cal.xlsx"
    write_workbook(calibration_set(project), path)
    return path


def test_judge_reading_rules():
    # 12.03 mA against 12 mA on a 16 mA span: +0.1875 % of span, inside 0.25 %.
    assert judge_reading(12.03, 12.0, 16.0, 0.25).status == "pass"
    assert judge_reading(12.05, 12.0, 16.0, 0.25).status == "fail"  # +0.3125 %
    assert judge_reading(12.04, 12.0, 16.0, 0.25).status == "pass"  # exactly on the limit
    assert judge_reading(None, 12.0, 16.0, 0.25).status == "not tested"
    assert judge_reading("  ", 12.0, 16.0, 0.25).status == "not tested"
    assert judge_reading("12,01", 12.0, 16.0, 0.25).status == "pass"  # decimal comma typed as text
    assert judge_reading("n/a", 12.0, 16.0, 0.25).status == "invalid"
    assert judge_reading(12.0, 12.0, 16.0, None).status == "no tolerance"


def test_round_trip_pass_fail_not_tested_refused(issued):
    f = Filler(issued)
    # PT-101: every As-Found 0.02 mA high (0.125 % of span): pass ...
    f.fill_all("PT-101", +0.02)
    # ... except 75 % rising, 0.06 mA high (0.375 %): fail, corrected by As-Left 16.01 mA
    f.set("PT-101/04", "As-Found", 16.06)
    f.set("PT-101/04", "As-Left", 16.01)
    # ... and 25 % falling 0.1 mA low (-0.625 %) with no As-Left: the failure stands
    f.set("PT-101/09", "As-Found", f.expected("PT-101/09") - 0.1)
    # ... and 0 % falling left blank: not tested
    f.set("PT-101/10", "As-Found", None)
    # TT-102: 50 % rising expected value edited on the sheet (12 -> 12.5 mA): refused, not judged
    f.set("TT-102/03", "Expected", 12.5)
    f.set("TT-102/03", "As-Found", 12.5)
    f.set("TT-102/01", "As-Found", 4.0)
    # LT-103 has no tolerance in the index
    f.set("LT-103/01", "As-Found", 4.001)
    report = verify(read_workbook(f.save()))
    points = by_ref(report)

    assert points["PT-101/01"].status == "pass"
    assert points["PT-101/01"].as_found.error_pct == pytest.approx(0.02 / 16 * 100)
    assert points["PT-101/04"].as_found.status == "fail"
    assert points["PT-101/04"].as_found.error_pct == pytest.approx(0.375)
    assert points["PT-101/04"].status == "pass" and "corrected" in points["PT-101/04"].reason
    assert points["PT-101/09"].status == "fail"
    assert points["PT-101/09"].as_found.error_pct == pytest.approx(-0.625)
    assert points["PT-101/10"].status == "not tested"
    assert points["TT-102/03"].status == "refused" and "expected" in points["TT-102/03"].reason
    assert points["TT-102/03"].as_found is None  # refused rows are not judged
    assert points["TT-102/01"].status == "pass"
    assert points["TT-102/02"].status == "not tested"
    assert points["LT-103/01"].status == "no tolerance"

    tags = {t.tag: t for t in report.tags}
    assert tags["PT-101"].status == "fail" and tags["PT-101"].as_found_failures == 2
    assert tags["TT-102"].status == "refused"
    assert tags["LT-103"].status == "no tolerance"
    c = report.counts
    assert (c["pass"], c["fail"], c["refused"], c["no tolerance"]) == (9, 1, 1, 1)
    assert report.exit_code == 1


def test_hysteresis_between_rising_and_falling(issued):
    f = Filler(issued)
    f.fill_all("PT-101", 0.0)
    # 50 %: rising 12.02, falling 11.99 -> |0.03| / 16 = 0.1875 % of span
    f.set("PT-101/03", "As-Found", 12.02)
    f.set("PT-101/08", "As-Found", 11.99)
    report = verify(read_workbook(f.save()))
    (pt,) = [t for t in report.tags if t.tag == "PT-101"]
    h = {x.percent: x for x in pt.hysteresis}
    assert h[50.0].as_found_pct == pytest.approx(0.1875)
    assert h[0.0].as_found_pct == pytest.approx(0.0)
    assert not h[50.0].exceeds_tolerance  # 0.1875 <= 0.25
    assert pt.status == "pass"
    assert pt.max_hysteresis_pct == pytest.approx(0.1875)


def test_all_pass_exit_0_and_summary(issued, tmp_path):
    f = Filler(issued)
    for tag in ("PT-101", "TT-102"):
        f.fill_all(tag, +0.01)
    path = f.save()
    out = tmp_path / "summary.xlsx"
    result = runner.invoke(app, ["verify", str(path), "--out", str(out)])
    # LT-103 (no tolerance) untested: blank is not a pass, but not a failure either
    assert result.exit_code == 0, result.output
    summary = openpyxl.load_workbook(out)
    assert summary.sheetnames == ["Summary", "Points"]
    statuses = {row[0]: row[3] for row in summary["Summary"].iter_rows(min_row=6, values_only=True)}
    assert statuses == {"PT-101": "pass", "TT-102": "pass", "LT-103": "not tested"}


def test_json_output_and_exit_1_on_failure(issued):
    f = Filler(issued)
    f.fill_all("PT-101", +0.05)  # 0.3125 % of span: every point fails
    result = runner.invoke(app, ["verify", str(f.save()), "--format", "json"])
    assert result.exit_code == 1
    data = json.loads(result.stdout)
    assert data["summary"]["fail"] == 10 and data["summary"]["exit_code"] == 1
    (pt,) = [t for t in data["tags"] if t["tag"] == "PT-101"]
    assert pt["status"] == "fail"
    assert pt["max_error_pct_of_span"] == pytest.approx(0.3125)


def test_nothing_tested_is_not_a_pass(issued):
    result = runner.invoke(app, ["verify", str(issued)])
    assert result.exit_code == 1
    assert "nothing was tested" in result.stdout


def test_deleted_duplicated_and_added_rows_are_refused(issued):
    f = Filler(issued)
    f.fill_all("PT-101", 0.0)
    ws, r, col = f.where["PT-101/02"]
    ws.cell(r, 1).value = "PT-101/99"  # Ref edited: the row is unknown, PT-101/02 is missing
    ws, r, col = f.where["PT-101/05"]
    ws2, r2, _ = f.where["PT-101/06"]
    ws2.cell(r2, 1).value = "PT-101/05"  # Ref copied onto another row: duplicated
    report = verify(read_workbook(f.save()))
    points = by_ref(report)
    assert points["PT-101/02"].status == "refused" and "missing" in points["PT-101/02"].reason
    assert points["PT-101/05"].status == "refused" and "2 times" in points["PT-101/05"].reason
    assert [u.ref for u in report.unknown_rows] == ["PT-101/99"]
    assert report.exit_code == 1


def test_invalid_reading_fails(issued):
    f = Filler(issued)
    f.fill_all("PT-101", 0.0)
    f.set("PT-101/03", "As-Found", "OK")
    report = verify(read_workbook(f.save()))
    assert by_ref(report)["PT-101/03"].status == "invalid"
    assert report.exit_code == 1


def test_unreadable_workbook_exit_2(tmp_path):
    not_xlsx = tmp_path / "notes.xlsx"
    not_xlsx.write_text("not a workbook")
    other = tmp_path / "other.xlsx"
    openpyxl.Workbook().save(other)
    for path in (not_xlsx, other, tmp_path / "missing.xlsx"):
        result = runner.invoke(app, ["verify", str(path)])
        assert result.exit_code == 2, path
        assert "Traceback" not in result.output and len(result.output.strip().splitlines()) == 1


def test_example_valves_round_trip(tmp_path):
    # The example project's workbook: a stroke check and a split loop check filled in.
    path = tmp_path / "cal.xlsx"
    assert runner.invoke(app, ["calibrate", str(EXAMPLE), "--out", str(path)]).exit_code == 0
    f = Filler(path)
    f.fill_all("TV-3105A", +0.5)  # stroke 0.5 % travel off, tolerance 1 % of travel (docs/design.md §6.7)
    for i in range(1, 23):
        ref = f"TV-3105B/L{i:02d}"
        f.set(ref, "As-Found", f.expected(ref))
    f.set("TV-3105B/L08", "As-Found", f.expected("TV-3105B/L08") + 2.0)  # CO 70 % rising, 2 % travel off
    report = verify(read_workbook(f.save()))
    tags = {(t.tag, t.check): t for t in report.tags}
    assert tags[("TV-3105A", "stroke")].status == "pass"
    assert tags[("TV-3105B", "loop check")].status == "fail"
    assert by_ref(report)["TV-3105B/L08"].as_found.error_pct == pytest.approx(2.0)
