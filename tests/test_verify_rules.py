"""verify on workbooks written in the test (calibrate --out), filled with openpyxl as a technician would.

Sources:
- NAMUR NE 43 (2003), "Standardization of the signal level for the failure information of
  digital transmitters": measuring range 3.8 to 20.5 mA; a current at or below 3.6 mA or
  at or above 21 mA is a failure signal (from memory of the recommendation's table of levels).
- Error in % of span = (reading - expected) / span * 100 (ISA-51.1 accuracy expressed in %
  of span, from memory).
- Fail positions: FC closes (0 % travel), FO opens (100 %), FL stays where it was, FAI is
  indeterminate: ISA-5.1 fail-action letters, meaning common practice.
- I/P converter with Accuracy % blank: 1 % of span taken. From memory: makers of
  general-purpose I/P converters commonly state 0.5 to 1 % of span.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.calibration.grading import verify
from loopdocs.cli import app
from loopdocs.sheets.index_template import write_index_workbook
from loopdocs.sheets.technicians_workbook import read_workbook

sys.path.insert(0, str(Path(__file__).resolve().parent))
from workbook_helpers import Filler, by_ref  # noqa: E402

runner = CliRunner()

PT = {"tag": "PT-101", "service": "Wort kettle pressure", "signal": "4-20 mA", "range_low": 0, "range_high": 10,
      "units": "barg", "accuracy_pct": 0.25}  # +/-0.04 mA
TT = {"tag": "TT-102", "service": "Wort kettle temperature", "signal": "4-20 mA", "range_low": 0, "range_high": 100,
      "units": "degC", "accuracy_pct": 0.5}  # +/-0.08 mA
# I/P converter: 4-20 mA in, 3-15 psig out, Accuracy % blank
PY = {"tag": "PY-104", "service": "Kettle steam valve converter", "signal": "3-15 psig", "range_low": 4,
      "range_high": 20, "units": "mA"}
FIC = {"tag": "FIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}


def valve(tag: str, air: str, fail: str | None, driver: str = "FIC-201") -> dict:
    row = {"tag": tag, "signal": "4-20 mA", "air_action": air, "positioner_action": "direct", "driven_by": driver,
           "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises"}
    if fail:
        row["fail_position"] = fail
    return row


def issue(tmp_path: Path, rows: list[dict]) -> Path:
    index = tmp_path / "index.xlsx"
    write_index_workbook(index, rows)
    out = tmp_path / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(index), "--out", str(out)])
    assert out.exists(), result.output
    return out


# --------------------------------------------------------------------------- 12a NE 43


def test_ne43_failure_current_is_not_an_ordinary_failure(tmp_path):
    f = Filler(issue(tmp_path, [PT, TT]))
    f.fill_all("PT-101", 0.0)
    f.fill_all("TT-102", 0.0)
    # NAMUR NE 43 (2003): at or below 3.6 mA is a failure signal (downscale)
    f.set("PT-101/01", "As-Found", 3.55)
    # NAMUR NE 43 (2003): at or above 21 mA is a failure signal (upscale); exactly 21.0 counts
    f.set("TT-102/05", "As-Found", 21.0)
    # 3.61 mA at the 0 % point: above the NE 43 failure limit, an ordinary out-of-tolerance
    # reading (-2.4375 % of a 16 mA span against +/-0.25 %)
    f.set("PT-101/10", "As-Found", 3.61)
    report = verify(read_workbook(f.save()))
    points = by_ref(report)
    low = points["PT-101/01"]
    assert low.status == "failure current"
    assert "failure current 3.55 mA: NE 43 failure signal" in low.reason
    assert low.as_found.error_pct is None  # a fault signal, not a measurement error
    assert points["TT-102/05"].status == "failure current"
    assert points["PT-101/10"].status == "fail"
    assert points["PT-101/10"].as_found.error_pct == pytest.approx((3.61 - 4.0) / 16 * 100)
    tags = {t.tag: t for t in report.tags}
    assert tags["PT-101"].status == "failure current" and tags["TT-102"].status == "failure current"
    assert report.counts["failure current"] == 2 and report.counts["fail"] == 1
    assert report.exit_code == 1


def test_ne43_applies_to_milliamp_outputs_only(tmp_path):
    # A 3-15 psig converter output read at 3.0 psig (its 0 % value) is a good reading:
    # NE 43 is a 4-20 mA convention (NAMUR NE 43 (2003) scope: current output signals).
    f = Filler(issue(tmp_path, [PY]))
    f.set("PY-104/01", "As-Found", 3.0)
    points = by_ref(verify(read_workbook(f.save())))
    assert points["PY-104/01"].status == "pass"


def test_ne43_failure_current_in_text_and_json(tmp_path):
    f = Filler(issue(tmp_path, [PT]))
    f.fill_all("PT-101", 0.0)
    f.set("PT-101/03", "As-Found", 21.6)
    path = f.save()
    text = runner.invoke(app, ["verify", str(path)], env={"COLUMNS": "200"})
    assert text.exit_code == 1
    assert "failure current 21.6 mA: NE 43 failure signal" in text.stdout
    data = json.loads(runner.invoke(app, ["verify", str(path), "--format", "json"]).stdout)
    assert data["summary"]["failure current"] == 1
    (tag,) = data["tags"]
    assert tag["status"] == "failure current"


def test_failure_current_corrected_by_as_left_stays_reported_and_out_of_hysteresis(tmp_path):
    f = Filler(issue(tmp_path, [PT]))
    f.fill_all("PT-101", 0.0)
    f.set("PT-101/01", "As-Found", 3.5)  # NAMUR NE 43 (2003): failure signal, at or below 3.6 mA
    f.set("PT-101/01", "As-Left", 4.01)  # fault cleared, then +0.0625 % of span
    report = verify(read_workbook(f.save()))
    (tag,) = report.tags
    point = by_ref(report)["PT-101/01"]
    assert point.status == "pass" and "failure current 3.5 mA" in point.reason
    assert tag.as_found_failures == 1
    # hysteresis at 0 %: |3.5 - 4.0| / 16 would be 3.125 %; a fault signal measures nothing
    (h0,) = [h for h in tag.hysteresis if h.percent == 0.0]
    assert h0.as_found_pct is None and h0.as_left_pct == pytest.approx(0.01 / 16 * 100)


# --------------------------------------------------------------------------- 12b invalid entries


def test_tag_with_only_unreadable_entries_is_invalid_entries_not_fail(tmp_path):
    f = Filler(issue(tmp_path, [PT, TT]))
    f.fill_all("PT-101", 0.0)
    f.set("PT-101/03", "As-Found", "OK")  # text where a number belongs
    f.fill_all("TT-102", 0.0)
    f.set("TT-102/02", "As-Found", "12.0 mA?")
    f.set("TT-102/03", "As-Found", 12.5)  # +3.125 % of span against +/-0.5 %: a real failure
    report = verify(read_workbook(f.save()))
    tags = {t.tag: t for t in report.tags}
    assert tags["PT-101"].status == "invalid entries"
    assert tags["TT-102"].status == "fail"  # a failed reading outranks an unreadable one
    assert report.exit_code == 1  # unknown readings are no pass


# --------------------------------------------------------------------------- 12c largest errors


def test_largest_as_found_and_as_left_errors_in_text_json_and_xlsx(tmp_path):
    f = Filler(issue(tmp_path, [PT]))
    f.fill_all("PT-101", +0.02)  # +0.125 % of span everywhere
    f.set("PT-101/04", "As-Found", 16.06)  # +0.375 %
    f.set("PT-101/09", "As-Found", 8.0 - 0.1)  # -0.625 %: the largest as-found error, below
    f.set("PT-101/04", "As-Left", 16.01)  # +0.0625 %
    f.set("PT-101/09", "As-Left", 8.0 - 0.03)  # -0.1875 %: the largest as-left error
    path = f.save()
    (tag,) = verify(read_workbook(path)).tags
    assert tag.largest_as_found_error_pct == pytest.approx(-0.625)
    assert tag.largest_as_left_error_pct == pytest.approx(-0.1875)

    data = json.loads(runner.invoke(app, ["verify", str(path), "--format", "json"]).stdout)
    (jtag,) = data["tags"]
    assert jtag["largest_as_found_error_pct_of_span"] == pytest.approx(-0.625)
    assert jtag["largest_as_left_error_pct_of_span"] == pytest.approx(-0.1875)

    summary = tmp_path / "summary.xlsx"
    text = runner.invoke(app, ["verify", str(path), "--out", str(summary)], env={"COLUMNS": "200"})
    assert "largest as-found err" in text.stdout and "largest as-left err" in text.stdout
    row = [line for line in text.stdout.splitlines() if "PT-101" in line and "calibration" in line][0]
    assert {"-0.625", "-0.188"} <= set(row.replace("│", " ").split())  # whole numbers, not parts of longer ones
    ws = openpyxl.load_workbook(summary)["Summary"]
    header = [c.value for c in ws[5]]
    values = dict(zip(header, [c.value for c in ws[6]]))
    assert values["Largest as-found error, % of span"] == pytest.approx(-0.625)
    assert values["Largest as-left error, % of span"] == pytest.approx(-0.1875)


# --------------------------------------------------------------------------- 12d I/P default tolerance


def test_ip_converter_with_blank_accuracy_is_judged_on_one_percent_of_span(tmp_path):
    path = issue(tmp_path, [PY])
    wb = openpyxl.load_workbook(path)
    titles = [c.value for ws in wb.worksheets[1:-1] for row in ws.iter_rows() for c in row
              if isinstance(c.value, str) and c.value.startswith("PY-104")]
    # 1 % of a 12 psig span (3-15 psig) = 0.12 psig; the basis is printed with it
    assert any("\u00b10.12 psig" in t and "1 % of span taken" in t and "I/P converter" in t for t in titles)
    f = Filler(path)
    f.set("PY-104/03", "As-Found", 9.10)  # +0.833 % of span: inside 1 %
    f.set("PY-104/04", "As-Found", 12.15)  # +1.25 %: outside
    points = by_ref(verify(read_workbook(f.save())))
    assert points["PY-104/03"].status == "pass"
    assert points["PY-104/03"].tolerance_pct == 1.0
    assert points["PY-104/04"].status == "fail"
    text = runner.invoke(app, ["calibrate", str(tmp_path / "index.xlsx")], env={"COLUMNS": "200"})
    assert "1 % of span taken (typical stated accuracy of an I/P converter" in " ".join(text.stdout.split())


# --------------------------------------------------------------------------- 12e fail action


def test_fail_action_row_per_valve_written_and_judged(tmp_path):
    rows = [FIC, valve("FV-201", "ATO", "FC"), {**FIC, "tag": "FIC-202"}, valve("FV-202", "ATC", "FO", "FIC-202"),
            {**FIC, "tag": "FIC-203"}, valve("FV-203", "ATO", "FL", "FIC-203"),
            {**FIC, "tag": "FIC-204"}, valve("FV-204", "ATO", "FAI", "FIC-204"),
            {**FIC, "tag": "FIC-205"}, valve("FV-205", "ATC", None, "FIC-205")]
    path = issue(tmp_path, rows)
    issued = {r.ref: r for r in read_workbook(path).issued}
    # FC closes (0 % travel), FO opens (100 %), FL stays at the 50 % it was held at
    assert issued["FV-201/F01"].expected == 0.0 and issued["FV-201/F01"].check == "fail action"
    assert issued["FV-202/F01"].expected == 100.0
    assert issued["FV-203/F01"].expected == 50.0
    # the valve is held at 50 % travel first: 12 mA on a 4-20 mA positioner, ATO
    assert issued["FV-201/F01"].apply == pytest.approx(12.0)
    # FAI is indeterminate: no row, and the stroke table says why
    assert not any(ref.startswith("FV-204/F") for ref in issued)
    # Fail Position blank on an ATC spring-return actuator: fails open (common practice)
    assert issued["FV-205/F01"].expected == 100.0
    wb = openpyxl.load_workbook(path)
    text = " ".join(str(c.value) for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.value)
    assert "no fail-action test: fail position FAI" in text
    assert "remove the instrument air supply" in text

    f = Filler(path)
    f.set("FV-201/F01", "As-Found", 0.4)  # closed within 1 % of travel
    f.set("FV-202/F01", "As-Found", 96.0)  # stopped 4 % short of fully open
    f.set("FV-203/F01", "As-Found", 50.5)
    report = verify(read_workbook(f.save()))
    points = by_ref(report)
    assert points["FV-201/F01"].status == "pass"
    assert points["FV-202/F01"].status == "fail"
    assert "did not reach its fail position" in points["FV-202/F01"].reason
    assert points["FV-203/F01"].status == "pass"
    tags = {(t.tag, t.check): t for t in report.tags}
    assert tags[("FV-202", "fail action")].status == "fail"
