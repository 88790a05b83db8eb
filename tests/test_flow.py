"""Root-extracting DP flow transmitters: tables over a flow range or a DP range, and the
``flow.*`` rules.

References:
- ISO 5167-1 (2003), equation (1): the mass flow through a differential-pressure device
  is ``qm = C / sqrt(1 - beta^4) * epsilon * pi/4 * d^2 * sqrt(2 * DP * rho1)``, so at a
  fixed discharge coefficient the flow is proportional to sqrt(DP); cross-checked below
  with the ``fluids`` library's ISO 5167 orifice solver.
- A root-extracting transmitter's output is linear in flow: 4 mA + 16 mA x flow/flow
  span (IEC 60381-1 for 4-20 mA; 50 % flow = 25 % DP = 12 mA, common practice).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loopdocs.calc.tables import (
    DP_BASIS,
    DP_PCT_UNIT,
    DpRange,
    sqrt_flow_table,
    transmitter_table,
)
from loopdocs.calc.signals import MA_4_20, PSIG_3_15
from loopdocs.calibration.project_tables import calibration_set
from loopdocs.model.loading import load_project


def _point(table, pct, direction="up"):
    return next(p for p in table.points if p.percent == pct and p.direction == direction)


# --------------------------------------------------------------------------- calc


def test_flow_range_pairs_flow_with_linear_output_and_squared_dp():
    # 0-120 m3/h, DP 0-25 kPa. 30 m3/h is 25 % flow: 4 + 16 * 0.25 = 8 mA, and the DP is
    # 0.25^2 * 25 = 1.5625 kPa; 60 m3/h is 50 % flow: 12 mA at 6.25 kPa (ISO 5167-1 square law).
    t = sqrt_flow_table("FT-1", 0.0, 120.0, "m3/h", MA_4_20, DpRange(0.0, 25.0, "kPa"), 0.5)
    p25, p50 = _point(t, 25.0), _point(t, 50.0)
    assert (p25.input.value, p25.input.unit, p25.output.value) == (30.0, "m3/h", 8.0)
    assert (p25.simulate[0].value, p25.simulate[0].unit) == (pytest.approx(1.5625), "kPa")
    assert (p50.input.value, p50.output.value, p50.simulate[0].value) == (60.0, 12.0, pytest.approx(6.25))
    # 10 % flow is 1 % DP (0.25 kPa) and 5.6 mA: the low-flow point where the root matters.
    p10 = _point(t, 10.0)
    assert (p10.input.value, p10.output.value) == (pytest.approx(12.0), pytest.approx(5.6))
    assert p10.simulate[0].value == pytest.approx(0.25)
    assert p10.simulate[0].basis == DP_BASIS
    # the tolerance is Accuracy % of the flow span and of the 16 mA output span
    assert t.tolerance.input.value == pytest.approx(0.6) and t.tolerance.output.value == pytest.approx(0.08)
    # every point read rising and falling
    assert [p.percent for p in t.points] == [0, 10, 25, 50, 75, 100, 100, 75, 50, 25, 10, 0]


def test_flow_range_without_dp_range_gives_percent_of_dp_span():
    # 75 % flow -> 56.25 % of the DP span, 16 mA (square law, arithmetic)
    t = sqrt_flow_table("FT-2", 0.0, 8000.0, "kg/h", MA_4_20)
    p = _point(t, 75.0)
    assert (p.input.value, p.output.value) == (6000.0, 16.0)
    assert (p.simulate[0].value, p.simulate[0].unit) == (pytest.approx(56.25), DP_PCT_UNIT)
    assert any("DP Low/DP High/DP Units blank" in n for n in t.notes)


def test_low_flow_cutoff_points_below_it_expect_zero_flow():
    # A low-flow cut-off of 15 % flow: the 10 % point reads zero flow (4 mA); the 25 % point
    # is above it and linear (common practice: below the cut-off the transmitter reports 0).
    t = sqrt_flow_table("FT-3", 0.0, 50.0, "t/h", MA_4_20, DpRange(0.0, 100.0, "inH2O"), cutoff_pct=15.0)
    assert _point(t, 10.0).output.value == 4.0
    assert _point(t, 25.0).output.value == 8.0
    assert _point(t, 0.0).output.value == 4.0
    assert any("low-flow cut-off 15 % flow (2.25 % DP)" in n for n in t.notes)


def test_pneumatic_and_digital_outputs_are_linear_in_flow():
    # 3-15 psig (ANSI/ISA-50.00.01): 50 % flow = 9 psig
    t = sqrt_flow_table("FT-4", 0.0, 200.0, "gpm", PSIG_3_15, DpRange(0.0, 100.0, "inH2O"))
    assert _point(t, 50.0).output.value == 9.0
    assert _point(t, 50.0).simulate[0].value == pytest.approx(25.0)
    digital = sqrt_flow_table("FT-5", 0.0, 200.0, "gpm", None, DpRange(0.0, 100.0, "inH2O"))
    assert (_point(digital, 50.0).output.value, _point(digital, 50.0).output.unit) == (100.0, "gpm")


def test_calibrator_unit_adds_the_dp_in_that_unit():
    # 25 kPa = 250 mbar (SI), so 50 % flow = 62.5 mbar
    t = sqrt_flow_table("FT-6", 0.0, 120.0, "m3/h", MA_4_20, DpRange(0.0, 25.0, "kPa"), calibrator_unit="mbar")
    sims = _point(t, 50.0).simulate
    assert [(s.unit, round(s.value, 9)) for s in sims] == [("kPa", 6.25), ("mbar", 62.5)]


@pytest.mark.parametrize("low,high,dp", [
    (10.0, 120.0, None),                              # flow range not from zero
    (0.0, 120.0, DpRange(2.0, 25.0, "kPa")),          # DP range not from zero
    (0.0, 120.0, DpRange(0.0, 25.0, "degC")),         # DP units not a pressure
    (0.0, -120.0, None),                              # reverse flow range
])
def test_ranges_that_cannot_be_root_extracted_are_refused(low, high, dp):
    with pytest.raises(ValueError):
        sqrt_flow_table("FT-7", low, high, "m3/h", MA_4_20, dp)


def test_dp_range_table_has_the_low_flow_point():
    # range in pressure units is the DP range: 1 % DP = 10 % flow = 5.6 mA, 25 % DP = 12 mA
    t = transmitter_table("FT-8", 0.0, 250.0, "mbar", MA_4_20, "sqrt")
    assert _point(t, 1.0).input.value == pytest.approx(2.5) and _point(t, 1.0).output.value == pytest.approx(5.6)
    assert _point(t, 25.0).output.value == 12.0
    with pytest.raises(ValueError):
        transmitter_table("FT-9", 0.0, 120.0, "m3/h", MA_4_20, "sqrt")  # a flow range is not a DP range
    with pytest.raises(ValueError):
        transmitter_table("FT-9", 5.0, 250.0, "mbar", MA_4_20, "sqrt")  # DP range must start at 0


FLOW_UNITS = ["m3/h", "Nm3/h", "Sm3/h", "kg/h", "t/h", "kg/s", "lb/h", "gpm", "l/min", "scfm", "bbl/d"]
DP_UNITS = ["kPa", "mbar", "inH2O", "mmH2O", "psi", "bar", "Pa"]


@settings(max_examples=200, deadline=None)
@given(
    flow_unit=st.sampled_from(FLOW_UNITS),
    flow_high=st.floats(min_value=1e-3, max_value=1e7, allow_nan=False),
    dp_unit=st.sampled_from(DP_UNITS + [None]),
    dp_high=st.floats(min_value=1e-2, max_value=1e5, allow_nan=False),
)
def test_property_every_sqrt_flow_point_is_linear_in_flow_and_square_in_dp(flow_unit, flow_high, dp_unit, dp_high):
    # For every point: output mA = 4 + 16 * flow / flow span, and DP / DP span = (flow / flow span)^2
    # (IEC 60381-1 4-20 mA; ISO 5167-1 square law), whatever the units.
    dp = DpRange(0.0, dp_high, dp_unit) if dp_unit else None
    t = sqrt_flow_table("FT-P", 0.0, flow_high, flow_unit, MA_4_20, dp)
    for p in t.points:
        q = p.input.value / flow_high
        assert p.output.value == pytest.approx(4.0 + 16.0 * q, abs=1e-9)
        dp_fraction = p.simulate[0].value / (dp_high if dp else 100.0)
        assert dp_fraction == pytest.approx(q * q, abs=1e-12)


@settings(max_examples=100, deadline=None)
@given(dp_unit=st.sampled_from(DP_UNITS), dp_high=st.floats(min_value=1e-2, max_value=1e5, allow_nan=False))
def test_property_dp_range_tables_are_linear_in_flow(dp_unit, dp_high):
    # Range in pressure units: flow fraction = sqrt(DP fraction), output = 4 + 16 * flow fraction.
    t = transmitter_table("FT-Q", 0.0, dp_high, dp_unit, MA_4_20, "sqrt")
    for p in t.points:
        assert p.output.value == pytest.approx(4.0 + 16.0 * math.sqrt(p.input.value / dp_high), abs=1e-9)


def test_square_law_against_fluids_iso_5167_orifice():
    # The DP our table gives for 50 % and 10 % flow, put through the fluids library's ISO 5167
    # orifice solver (water, D 100 mm, d 50 mm, corner taps): with a fixed discharge coefficient
    # and expansibility the flow is exactly 50 % and 10 % (ISO 5167-1 eq. 1); with the
    # Reader-Harris/Gallagher coefficient of ISO 5167-2, which varies with Reynolds number,
    # within 1.5 % and 4 % of the intended flow.
    from fluids.flow_meter import differential_pressure_meter_solver

    t = sqrt_flow_table("FT-F", 0.0, 100.0, "m3/h", MA_4_20, DpRange(0.0, 25.0, "kPa"))
    p1 = 5e5

    def mass_flow(dp_kpa: float, **fixed) -> float:
        return differential_pressure_meter_solver(
            D=0.1, D2=0.05, P1=p1, P2=p1 - dp_kpa * 1e3, rho=998.0, mu=1.0e-3, k=1.33,
            meter_type="ISO 5167 orifice", taps="corner", **fixed)

    fixed = {"C_specified": 0.6, "epsilon_specified": 1.0}
    full, full_fixed = mass_flow(25.0), mass_flow(25.0, **fixed)
    for pct, rel in ((50.0, 0.015), (10.0, 0.04)):
        dp_kpa = _point(t, pct).simulate[0].value
        assert mass_flow(dp_kpa, **fixed) / full_fixed == pytest.approx(pct / 100.0, rel=1e-9)
        assert mass_flow(dp_kpa) / full == pytest.approx(pct / 100.0, rel=rel)


# --------------------------------------------------------------------------- index


ROWS = [
    # 0: flow range with its DP range (clean)
    {"tag": "FT-601", "signal": "4-20 mA", "range_low": 0, "range_high": 120, "units": "m3/h",
     "transfer": "sqrt", "dp_low": 0, "dp_high": 25, "dp_units": "kPa", "accuracy_pct": 0.5},
    # 1: flow range in kg/h, numbers as text, no DP range (clean: % of DP span)
    {"tag": "FT-602", "signal": "4-20 mA", "range_low": "0", "range_high": "8000", "units": "kg/h",
     "transfer": "square root"},
    # 2: sqrt on a temperature range
    {"tag": "TT-603", "signal": "4-20 mA", "range_low": 0, "range_high": 150, "units": "degC", "transfer": "sqrt"},
    # 3: DP range without units
    {"tag": "FT-604", "signal": "4-20 mA", "range_low": 0, "range_high": 50, "units": "t/h", "transfer": "sqrt",
     "dp_low": 0, "dp_high": 100},
    # 4: DP range, flow range, Transfer blank
    {"tag": "FT-605", "signal": "4-20 mA", "range_low": 0, "range_high": 50, "units": "t/h",
     "dp_low": 0, "dp_high": 100, "dp_units": "inH2O"},
    # 5: sqrt flow range from 10
    {"tag": "FT-606", "signal": "4-20 mA", "range_low": 10, "range_high": 50, "units": "m3/h", "transfer": "sqrt"},
    # 6: DP range linear (root taken in the control system)
    {"tag": "FT-607", "signal": "4-20 mA", "range_low": 0, "range_high": 50, "units": "m3/h", "transfer": "linear",
     "dp_low": 0, "dp_high": 200, "dp_units": "mbar"},
    # 7: DP range on a transmitter already ranged in DP
    {"tag": "FT-608", "signal": "4-20 mA", "range_low": 0, "range_high": 250, "units": "mbar", "transfer": "sqrt",
     "dp_low": 0, "dp_high": 250, "dp_units": "mbar"},
    # 8: cut-off above 100 %
    {"tag": "FT-609", "signal": "4-20 mA", "range_low": 0, "range_high": 50, "units": "m3/h", "transfer": "sqrt",
     "flow_cutoff_pct": 120},
]


@pytest.fixture(scope="module")
def flow_index(index_files):
    return index_files.write(ROWS)


def _flow_findings(index_files, path):
    from loopdocs.checks import check_project

    return [f for f in check_project(path).findings if f.rule.startswith("flow.")]


def test_flow_rules_name_the_cell(index_files, flow_index):
    found = {(f.rule, f.tags[0]): index_files.where(f) for f in _flow_findings(index_files, flow_index)}
    assert found == {
        ("flow.sqrt-units", "TT-603"): index_files.cell("transfer", 2),
        ("flow.dp-range", "FT-604"): index_files.cell("dp_units", 3),
        ("flow.transfer-blank", "FT-605"): index_files.cell("transfer", 4),
        ("flow.sqrt-range", "FT-606"): index_files.cell("range_low", 5),
        ("flow.dp-unused", "FT-608"): index_files.cell("dp_low", 7),
        ("flow.cutoff", "FT-609"): index_files.cell("flow_cutoff_pct", 8),
    }
    severities = {f.rule: f.severity.value for f in _flow_findings(index_files, flow_index)}
    assert severities["flow.dp-unused"] == "warning"
    assert all(v == "error" for k, v in severities.items() if k != "flow.dp-unused")


def test_flow_tables_from_the_index(flow_index):
    project, _ = load_project(flow_index)
    cset = calibration_set(project)
    tables = {t.tag: t for t in cset.tables}
    skipped = {s.tag: s.reason for s in cset.skipped}
    # FT-601: 30 m3/h -> 8 mA at 1.5625 kPa (not 12 mA: that belongs to 60 m3/h)
    p = _point(tables["FT-601"], 25.0)
    assert (p.input.value, p.output.value, round(p.simulate[0].value, 6)) == (30.0, 8.0, 1.5625)
    # FT-602 (numbers stored as text): 50 % flow = 4000 kg/h -> 12 mA at 25 % of the DP span
    p = _point(tables["FT-602"], 50.0)
    assert (p.input.value, p.output.value, p.simulate[0].value, p.simulate[0].unit) == (4000.0, 12.0, 25.0, DP_PCT_UNIT)
    # FT-607 linear in DP: 50 % of 200 mbar -> 12 mA, the note gives the root law
    p = _point(tables["FT-607"], 50.0)
    assert (p.input.value, p.input.unit, p.output.value) == (100.0, "mbar", 12.0)
    assert any("control system extracts the root" in n for n in tables["FT-607"].notes)
    # refused, with the index's own values in the reason
    assert "Units 'degC'" in skipped["TT-603"]
    assert "DP Low, DP High and DP Units" in skipped["FT-604"]
    assert "Transfer blank" in skipped["FT-605"] and "0 to 100 inH2O" in skipped["FT-605"]
    assert "10 to 50 m3/h" in skipped["FT-606"]
    # FT-608's range is the DP range: the ordinary sqrt table over 0-250 mbar
    assert _point(tables["FT-608"], 25.0).output.value == 12.0


def test_verify_passes_a_correct_flow_transmitter(flow_index, tmp_path):
    # Readings equal to 4 + 16 * flow / span at every point (a correctly working transmitter)
    # must pass; the old wrong pairing (12 mA at 25 % flow) must fail.
    import openpyxl

    from loopdocs.sheets.technicians_workbook import HEADER_ROW, read_workbook, write_workbook
    from loopdocs.calibration.grading import verify

    project, _ = load_project(flow_index)
    cset = calibration_set(project).select(["FT-601"])
    path = tmp_path / "cal.xlsx"
    write_workbook(cset, path)

    def fill(reading_for_flow_pct, name):
        wb = openpyxl.load_workbook(path)
        for ws in wb.worksheets:
            col = {c.value: c.column for c in ws[HEADER_ROW] if c.value}
            if "As-Found" not in col:
                continue
            for r in range(HEADER_ROW + 1, ws.max_row + 1):
                ref, point = ws.cell(r, 1).value, ws.cell(r, col["Point"]).value
                if isinstance(ref, str) and ref.startswith("FT-601/") and isinstance(point, (int, float)):
                    ws.cell(r, col["As-Found"]).value = reading_for_flow_pct(float(point))
        out = tmp_path / name
        wb.save(out)
        return out

    good = verify(read_workbook(fill(lambda pct: 4.0 + 16.0 * pct / 100.0, "good.xlsx")))
    wrong = verify(read_workbook(fill(lambda pct: 4.0 + 16.0 * math.sqrt(pct / 100.0), "wrong.xlsx")))
    good_points = [p for t in good.tags for p in t.points if p.status != "not tested"]
    assert good_points and all(p.status == "pass" for p in good_points)
    assert any(p.status == "fail" for t in wrong.tags for p in t.points)
