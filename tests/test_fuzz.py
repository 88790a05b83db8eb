"""Random indexes, valid and broken, through check, calibrate and the workbook writer: nothing escapes but the
documented input error, every finding about a cell names it, the same index gives the same
findings, and the index file is left as it was. A fixed number of examples keeps CI bounded;
`HYPOTHESIS_PROFILE=long` (200 examples) is the longer run."""

from __future__ import annotations

import csv
import hashlib
import os

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from loopdocs.calibration.project_tables import calibration_set
from loopdocs.checks import check_project
from loopdocs.core.errors import InputError

HEADERS = ["Tag", "Loop", "Service", "Signal", "Range Low", "Range High", "Units", "Transfer", "Sensor",
           "Accuracy %", "Air Action", "Fail Position", "Driven By", "Split Method", "CO Start %", "CO End %",
           "Input Low", "Input High", "Input Units", "Control Action", "Effect", "Cv", "Set Point", "Reset",
           "Alarm H", "DP Low", "DP High", "DP Units", "Accessories"]

TEXT = st.text(alphabet=st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=30)
HOSTILE = st.sampled_from(["[/]", "[link=file:///etc/passwd]x[/link]", "=1+1", "@SUM(A1)", "\x1b[31m", "\x00",
                           "\u202e", "nan", "inf", "1e999", "-0", "5e-324", "", " ", "TIC-101", "4-20 mA", "sqrt",
                           "degC", "m3/h", "kPa", "ATO", "FC", "positioner", "dcs", "48", "52", "100", "0"])
CELL = st.one_of(HOSTILE, TEXT, st.integers(-10**6, 10**6).map(str),
                 st.floats(allow_nan=True, allow_infinity=True).map(repr))
TAGS = st.sampled_from(["TT-101", "TIC-101", "TV-101A", "TV-101B", "FT-102", "FIC-102", "FV-102", "PSH-103",
                        "PY-101", "ZSC-101", "HIC-104", "XX", "", "tt 101", "[b]TT-105[/b]"])

profile = os.environ.get("HYPOTHESIS_PROFILE", "")


@settings(max_examples=200 if profile == "long" else 40, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(rows=st.lists(st.tuples(TAGS, st.lists(CELL, min_size=len(HEADERS) - 1, max_size=len(HEADERS) - 1)),
                     min_size=1, max_size=12))
def test_random_indexes_never_escape(tmp_path_factory, rows):
    path = tmp_path_factory.mktemp("fuzz") / "index.csv"
    with path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(HEADERS)
        for tag, cells in rows:
            writer.writerow([tag, *cells])
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    try:
        first = check_project(path)
    except InputError:
        return  # documented: one line, exit 2
    second = check_project(path)
    assert [f.as_json() for f in first.findings] == [f.as_json() for f in second.findings]  # deterministic
    for finding in first.findings:
        if finding.rule.startswith(("index.", "range.", "flow.", "sensor.", "units.", "alarm.")):
            assert finding.location is not None, finding
        assert "nan" not in finding.message.split() and "inf" not in finding.message.split()
    cset = calibration_set(first.project)
    for table in cset.tables:
        for point in table.points:
            for value in (point.input.value, point.output.value):
                assert value == value and abs(value) != float("inf"), (table.tag, point)
    from loopdocs.sheets.technicians_workbook import write_workbook

    write_workbook(cset, path.with_name("cal.xlsx"))  # hostile text never breaks the workbook writer
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before  # the input is never touched
