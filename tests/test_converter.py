"""I/P converter rows: a Range written in mA is the input range; a Range written in pressure
units is the output range (input 4-20 mA). Signal ranges: IEC 60381-1 (4-20 mA), IEC 60382
and ANSI/ISA-50.00.01 (3-15 psig, 20-100 kPa, 0.2-1.0 bar)."""

from __future__ import annotations

import pytest

from loopdocs.calibration.project_tables import calibration_set
from loopdocs.model.loading import load_project

ROWS = [
    {"tag": "TY-130", "signal": "3-15 psig", "range_low": 3, "range_high": 15, "units": "psig", "accuracy_pct": 0.5},
    {"tag": "TY-131", "signal": "20-100 kPa", "range_low": 0.2, "range_high": 1.0, "units": "bar"},
    {"tag": "TY-132", "signal": "3-15 psig", "range_low": 4, "range_high": 20, "units": "mA"},
    {"tag": "TY-133", "signal": "3-15 psig", "range_low": 20, "range_high": 4, "units": "mA"},
    {"tag": "TY-134", "signal": "3-15 psig", "range_low": 0, "range_high": 100, "units": "%"},
    # the input Signal written with the output range
    {"tag": "TY-135", "signal": "4-20 mA", "range_low": 3, "range_high": 15, "units": "psig"},
]


def test_converter_rows(index_files):
    project, _ = load_project(index_files.write(ROWS))
    cset = calibration_set(project)
    tables = {t.tag: t for t in cset.tables}
    skipped = {s.tag: s.reason for s in cset.skipped}

    def pairs(tag):
        return [(p.input.value, p.output.value) for p in tables[tag].points[:5]]

    # 4-20 mA in, 3-15 psig out, linear: 12 mA -> 9 psig
    assert pairs("TY-130") == [(4, 3), (8, 6), (12, 9), (16, 12), (20, 15)]
    assert any("read as the output range" in n for n in tables["TY-130"].notes)
    # 0.2-1.0 bar output (IEC 60382): 12 mA -> 0.6 bar
    assert [round(o, 9) for _, o in pairs("TY-131")] == [0.2, 0.4, 0.6, 0.8, 1.0]
    assert pairs("TY-132") == pairs("TY-130") == pairs("TY-135")
    # a reversed input range is not silently turned round
    assert "reverse-acting" in skipped["TY-133"]
    assert "Units is %" in skipped["TY-134"]
    # 1 % of span default when Accuracy % is blank (I/P converters, from memory: 0.5 to 1 %)
    assert tables["TY-131"].tolerance.percent_of_span == pytest.approx(1.0)
    assert tables["TY-130"].tolerance.output.value == pytest.approx(0.06)  # 0.5 % of 12 psig
