"""Split groups built from the index (``loopdocs.model.groups``): the example project's
arrangements, defaults, settings loopdocs recommends, the docs/design.md §9.1 JSON, and two
properties (hypothesis): a group does not depend on row order, and the settings loopdocs
recommends realise the intent for every method, air action and positioner action.

Sources: 4-20 mA (IEC 60381-1) and 3-15 psig (IEC 60382, ANSI/ISA-50.00.01) spans; the
half-range boundary at 12 mA (common practice); capacity-proportional split points
(Cv 10 and 30 -> 25 %, from memory; docs/design.md §6.9 gives the same example).
"""

from __future__ import annotations

import json
import os
import random
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import given, settings as hyp_settings
from hypothesis import strategies as st

from loopdocs.checks import run_checks
from loopdocs.checks import check_project
from loopdocs.model.from_rows import build_project
from loopdocs.model.groups import build_groups, groups_for
from loopdocs.read import IndexRow, IndexTable
from loopdocs.read.columns import COLUMNS

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"
MODES = {"opposed", "staged", "staged-opposed", "parallel", "mixed", "single", "incomplete"}
OUR_RULES = ("split.", "valve.", "loop.control-sense", "loop.load", "io.", "check.not-verified")


@pytest.fixture(scope="module")
def example():
    return check_project(EXAMPLE)


def _group(checked, controller):
    return next(g for g in checked.splits if g.controller == controller)


# --------------------------------------------------------------------------- the example project


def test_example_arrangements(example):
    # The three textbook forms and their variants, each reported with its mode.
    modes = {g.controller: g.mode for g in example.splits if g.is_split}
    assert modes == {
        "TIC-3105": "staged-opposed",   # glycol closes 0-48 %, hot water opens 52-100 %
        "LIC-2101": "staged",           # small then large make-up valve
        "PIC-4120": "staged",           # three letdown valves on one I/P
        "TIC-5310": "opposed",          # hot and cold water across the whole CO
        "PIC-6201": "staged-opposed",   # CO2 supply closes, vent opens
    }
    methods = {g.controller: g.method for g in example.splits if g.is_split}
    assert methods == {"TIC-3105": "positioner", "LIC-2101": "dcs", "PIC-4120": "pneumatic",
                       "TIC-5310": "positioner", "PIC-6201": "dcs"}
    # Ordinary valves are groups of one, not splits.
    singles = {g.controller: g.mode for g in example.splits if not g.is_split}
    assert singles == {"FIC-1201": "single", "LIC-2105": "single"}


def test_example_has_no_split_error_or_warning_and_reports_its_dead_bands(example):
    ours = [f for f in example.findings if f.rule.startswith(OUR_RULES)]
    assert [f.as_json() for f in ours if f.severity.value != "info"] == []
    dead_bands = sorted((f.loop, f.rule, f.tags) for f in ours)
    assert dead_bands == [("P-6201", "split.gap", ("PV-6201A", "PV-6201B")),
                          ("T-3105", "split.gap", ("TV-3105A", "TV-3105B"))]
    messages = " ".join(f.message for f in ours)
    assert "dead band of 4 % CO" in messages and "dead band of 10 % CO" in messages


def test_example_pneumatic_split_through_the_ip(example):
    group = _group(example, "PIC-4120")
    assert [c.tag for c in group.converters] == ["PY-4120"]
    assert {(e.span.low, e.span.high, e.span.unit) for e in group.elements} == {(3.0, 15.0, "psig")}
    assert [e.tag for e in group.elements] == ["PV-4120A", "PV-4120B", "PV-4120C"]
    # Cv 5, 15, 40: boundaries 5/60 and 20/60 of the CO (capacity proportional, from memory).
    assert group.recommended_boundaries_pct == pytest.approx((100 * 5 / 60, 100 * 20 / 60))
    # 3 + 12 * 0.0833 = 4.0 psig and 3 + 12 * 0.3333 = 7.0 psig (IEC 60382 span).
    assert [e.required_input_range for e in group.elements] == [
        pytest.approx((3.0, 4.0), abs=1e-3), pytest.approx((4.0, 7.0), abs=1e-3), pytest.approx((7.0, 15.0), abs=1e-3)]


def test_example_positioner_and_dcs_settings(example):
    t3105 = _group(example, "TIC-3105")
    # 4 + 16 * 0.48 = 11.68 mA; 4 + 16 * 0.52 = 12.32 mA (IEC 60381-1).
    assert [e.required_input_range for e in t3105.elements] == [
        pytest.approx((4.0, 11.68)), pytest.approx((12.32, 20.0))]
    assert [e.required_dcs_scaling for e in t3105.elements] == [None, None]
    p6201 = _group(example, "PIC-6201")
    supply, vent = p6201.elements
    assert (supply.required_dcs_scaling.co_at_0_pct, supply.required_dcs_scaling.co_at_100_pct) == (45.0, 0.0)
    assert supply.required_dcs_scaling.reversed and not vent.required_dcs_scaling.reversed
    assert supply.required_input_range == (4.0, 20.0)  # a dcs split keeps the positioner at full span
    l2101 = _group(example, "LIC-2101")
    assert l2101.recommended_boundaries_pct == pytest.approx((25.0,))  # Cv 10 and 30


def test_example_realised_travel_and_signal(example):
    cool, heat = _group(example, "TIC-3105").elements
    # CO 76 %: I = 4 + 16 * 0.76 = 16.16 mA; heat valve (12.32-20 mA) at 50 %; cool shut.
    assert heat.signal_at_co(76) == pytest.approx(16.16)
    assert heat.realised_travel_pct(76) == pytest.approx(50.0)
    assert cool.realised_travel_pct(76) == pytest.approx(0.0)
    assert cool.intended_travel_pct(24) == pytest.approx(50.0)


def test_example_combined_capacity_is_a_straight_line(example):
    # Capacity-proportional boundaries with linear trims give total Cv = 40 * CO / 100.
    curve = _group(example, "LIC-2101").capacity_curve(step_pct=25)
    assert curve == [(0.0, pytest.approx(0.0)), (25.0, pytest.approx(10.0)), (50.0, pytest.approx(20.0)),
                     (75.0, pytest.approx(30.0)), (100.0, pytest.approx(40.0))]
    # heat/cool against each other: a summed Cv of glycol and hot water means nothing
    assert _group(example, "TIC-3105").capacity_curve() is None
    assert _group(example, "TIC-5310").capacity_curve() is not None  # hot + cold blend to one stream


def _assert_design_json(report: dict) -> None:
    """A structural check of the docs/design.md §9.1 object (keys and types; no schema library)."""
    number = (int, float)
    assert set(report) == {"findings", "splits", "summary"}
    for f in report["findings"]:
        assert {"rule", "severity", "loop", "tags", "message", "location"} <= set(f) <= {
            "rule", "severity", "loop", "tags", "message", "location", "accepted"}
        assert isinstance(f["rule"], str) and "." in f["rule"]
        assert f["severity"] in ("error", "warning", "info")
        assert f["loop"] is None or isinstance(f["loop"], str)
        assert isinstance(f["tags"], list) and all(isinstance(t, str) for t in f["tags"])
        assert isinstance(f["message"], str) and f["message"]
        loc = f["location"]
        assert loc is None or (set(loc) == {"sheet", "row", "column"} and isinstance(loc["sheet"], str)
                               and isinstance(loc["row"], int) and isinstance(loc["column"], str))
    for s in report["splits"]:
        assert set(s) == {"controller", "loop", "mode", "elements", "recommended_boundaries"}
        assert isinstance(s["controller"], str) and isinstance(s["loop"], str) and s["mode"] in MODES
        assert s["recommended_boundaries"] is None or all(isinstance(b, number) for b in s["recommended_boundaries"])
        assert s["elements"]
        for e in s["elements"]:
            assert set(e) == {"tag", "co_start", "co_end", "travel_start", "travel_end", "method", "valid", "problem"}
            assert isinstance(e["valid"], bool) and (e["problem"] is None) == e["valid"]
            assert all(isinstance(e[k], number) for k in ("co_start", "co_end", "travel_start", "travel_end"))
            assert e["method"] in ("positioner", "pneumatic", "dcs")
    assert {"error", "warning", "info", "accepted"} <= set(report["summary"])
    assert all(isinstance(v, int) for v in report["summary"].values())


def test_check_json_of_the_example_follows_design_5():
    script = Path(sys.executable).parent / "loopdocs"
    run = subprocess.run([str(script), "check", str(EXAMPLE), "--format", "json"],
                         capture_output=True, text=True, cwd=REPO)
    assert run.returncode == 0, run.stderr
    report = json.loads(run.stdout)
    _assert_design_json(report)
    splits = {s["controller"]: s for s in report["splits"]}
    assert set(splits) == {"TIC-3105", "LIC-2101", "PIC-4120", "TIC-5310", "PIC-6201"}
    assert splits["TIC-3105"]["elements"] == [
        {"tag": "TV-3105A", "co_start": 0.0, "co_end": 48.0, "travel_start": 100.0, "travel_end": 0.0, "method": "positioner",
         "valid": True, "problem": None},
        {"tag": "TV-3105B", "co_start": 52.0, "co_end": 100.0, "travel_start": 0.0, "travel_end": 100.0, "method": "positioner",
         "valid": True, "problem": None},
    ]
    assert splits["LIC-2101"]["recommended_boundaries"] == [25.0]
    assert splits["TIC-3105"]["recommended_boundaries"] is None


def test_check_of_the_example_does_not_import_pint():
    # Every input range of the example is in its signal's own unit: no conversion needed.
    code = "import sys; from loopdocs.checks import check_project; check_project(sys.argv[1]); print('pint' in sys.modules)"
    run = subprocess.run([sys.executable, "-c", code, str(EXAMPLE)], capture_output=True, text=True, cwd=REPO,
                         env={**os.environ, "PYTHONPATH": str(REPO)})
    assert run.stdout.strip() == "False", run.stderr


# --------------------------------------------------------------------------- defaults


CTRL = {"tag": "TIC-101", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}


def _valve(tag, **values):
    row = {"tag": tag, "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "positioner_action": "direct",
           "driven_by": "TIC-101", "effect": "raises", **values}
    return {k: v for k, v in row.items() if v is not None}


def test_blank_method_is_dcs_with_own_outputs_else_positioner(index_files):
    own = index_files.check([CTRL, _valve("TV-101A", io_address="AO-1", co_end_pct=50),
                             _valve("TV-101B", io_address="AO-2", co_start_pct=50)])
    assert [e.method for e in own.splits[0].elements] == ["dcs", "dcs"]
    assert "taken as dcs" in own.splits[0].elements[0].assumptions["method"]
    shared = index_files.check([CTRL, _valve("TV-101A", io_address="AO-1", co_end_pct=50),
                                _valve("TV-101B", io_address="AO-1", co_start_pct=50)])
    assert [e.method for e in shared.splits[0].elements] == ["positioner", "positioner"]


def test_blank_co_and_travel_of_a_dcs_split(index_files):
    result = index_files.check([CTRL, _valve("TV-101A", split_method="dcs", io_address="AO-1"),
                                _valve("TV-101B", split_method="dcs", io_address="AO-2")])
    group = result.splits[0]
    assert group.mode == "parallel"  # both 0-100 % CO, both opening: duplicated elements
    e = group.elements[0]
    assert (e.co_start_pct, e.co_end_pct, e.travel_start_pct, e.travel_end_pct) == (0, 100, 0, 100)
    assert e.intent_source == "default" and {"co", "travel", "input_range"} <= set(e.assumptions)


def test_blank_travel_of_a_positioner_split_comes_from_the_settings(index_files):
    # ATC, direct positioner on 4-12 mA: open at 4 mA (CO 0 %), shut at 12 mA (CO 50 %).
    result = index_files.check([CTRL, _valve("TV-101A", air_action="ATC", fail_position="FO", effect="lowers",
                                             split_method="positioner", input_low=4, input_high=12),
                                _valve("TV-101B", split_method="positioner", input_low=12, input_high=20)])
    cool, heat = result.splits[0].elements
    assert (cool.co_start_pct, cool.co_end_pct, cool.travel_start_pct, cool.travel_end_pct) == (0, 50, 100, 0)
    assert (heat.co_start_pct, heat.co_end_pct, heat.travel_start_pct, heat.travel_end_pct) == (50, 100, 0, 100)
    assert cool.intent_source == heat.intent_source == "settings"
    assert result.splits[0].mode == "staged-opposed"


def test_relay_in_the_driven_by_chain(index_files):
    rows = [{"tag": "PIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
            {"tag": "PY-201", "signal": "20-100 kPa", "driven_by": "PIC-201"},
            _valve("PV-201A", driven_by="PY-201", signal="20-100 kPa", co_end_pct=50, travel_start_pct=0,
                   travel_end_pct=100, input_low=20, input_high=60, input_units="kPa"),
            _valve("PV-201B", driven_by="PIC-201", signal="20-100 kPa", co_start_pct=50, travel_start_pct=0,
                   travel_end_pct=100, input_low=60, input_high=100, input_units="kPa")]
    (group,) = index_files.check(rows).splits
    assert group.controller == "PIC-201" and [c.tag for c in group.converters] == ["PY-201"]
    # Blank Split Method with a pneumatic I/P: pneumatic, on the I/P's 20-100 kPa (IEC 60382).
    assert [e.method for e in group.elements] == ["pneumatic", "pneumatic"]
    assert [e.travel_error[0] for e in group.elements] == [pytest.approx(0.0), pytest.approx(0.0)]


# --------------------------------------------------------------------------- properties


_ALL_KEYS = {c.key for c in COLUMNS}


def _project(rows):
    """A project from rows held in memory (the reader's output, without a file)."""
    letters = {c.key: f"C{i}" for i, c in enumerate(COLUMNS)}
    table = IndexTable(Path("memory.xlsx"), "Index", 1, letters, {},
                       [IndexRow(row=i + 2, values={k: v for k, v in r.items() if k in _ALL_KEYS}) for i, r in enumerate(rows)])
    project, _ = build_project(table)
    return project


@st.composite
def split_rows(draw):
    """A controller and 2 to 4 elements with random segments, travel, actions and methods."""
    n = draw(st.integers(2, 4))
    method = draw(st.sampled_from(["positioner", "pneumatic", "dcs"]))
    rows = [dict(CTRL, control_action=draw(st.sampled_from(["direct", "reverse"])))]
    for k in range(n):
        a = draw(st.sampled_from([0, 20, 40, 50, 60]))
        b = draw(st.sampled_from([50, 60, 80, 100]).filter(lambda x: x > a))
        ta, tb = draw(st.sampled_from([(0, 100), (100, 0)]))
        low = draw(st.sampled_from([4, 8, 12]))
        rows.append(_valve(
            f"TV-101{'ABCD'[k]}", split_method=method, co_start_pct=a, co_end_pct=b, travel_start_pct=ta,
            travel_end_pct=tb, air_action=draw(st.sampled_from(["ATO", "ATC"])),
            fail_position=draw(st.sampled_from(["FC", "FO"])),
            positioner_action=draw(st.sampled_from(["direct", "reverse"])),
            effect=draw(st.sampled_from(["raises", "lowers"])), input_low=low, input_high=20,
            input_units="mA", cv=draw(st.sampled_from([4, 10, 25])),
            io_address=draw(st.sampled_from(["AO-1", f"AO-{k + 2}"])), device_volts=9.5, loop_volts=22,
        ))
    return rows


def _view(project):
    splits = [g.as_json() for g in build_groups(project)]
    findings = sorted((f.rule, f.severity.value, f.tags, f.message) for f in run_checks(project))
    return splits, findings


@hyp_settings(max_examples=60, deadline=None)
@given(split_rows(), st.randoms(use_true_random=False))
def test_groups_and_findings_do_not_depend_on_row_order(rows, rnd):
    shuffled = rows[:]
    rnd.shuffle(shuffled)
    assert _view(_project(rows)) == _view(_project(shuffled))



@hyp_settings(max_examples=60, deadline=None)
@given(split_rows())
def test_loop_check_notes_use_the_groups_exact_travel_error(rows):
    # The loop-check tables of a project take the split group's travel error (worked out at
    # the breakpoints of the two piecewise-linear curves, docs/design.md §4.4) instead of
    # searching a 0.1 % CO grid again (the grid search, a brute-force check, is the reference):
    # every table must come out as the grid search gives it,
    # the "settings do not realise this intent" note included (random settings, most wrong).
    from loopdocs.calc.tables import loop_check_table
    from loopdocs.calibration.project_tables import calibration_set

    project = _project(rows)
    elements = {e.tag: (g, e) for g in build_groups(project) for e in g.elements}
    checks = [t for t in calibration_set(project).tables if t.kind == "loop check"]
    for table in checks:
        group, element = elements[table.tag]
        scaling = element.required_dcs_scaling if element.method == "dcs" else None
        edges = [v for e in group.elements if e.intent is not None for v in (e.co_start_pct, e.co_end_pct)]
        searched = loop_check_table(element.tag, element.intent, element.settings, scaling,
                                    element.record.accuracy_pct, edges_pct=edges)
        assert table.notes[:len(searched.notes)] == searched.notes
        assert table.points == searched.points

def test_row_order_on_real_workbooks(index_files):
    rows = [CTRL, _valve("TV-101A", air_action="ATC", fail_position="FO", effect="lowers", co_end_pct=50,
                         travel_start_pct=100, travel_end_pct=0, input_low=4, input_high=12, split_method="positioner"),
            _valve("TV-101B", co_start_pct=55, travel_start_pct=0, travel_end_pct=100, input_low=12.8,
                   input_high=19, split_method="positioner"),
            {"tag": "TT-101", "signal": "4-20 mA"}]
    views = []
    for seed in range(3):
        order = rows[:]
        random.Random(seed).shuffle(order)
        checked = index_files.check(order)
        views.append(([g.as_json() for g in checked.splits],
                      sorted((f.rule, f.severity.value, f.tags, f.message) for f in checked.findings)))
    assert views[0] == views[1] == views[2]
    assert {f[0] for f in views[0][1]} >= {"split.gap", "split.settings"}


@st.composite
def realisable_intent(draw):
    """Segments and travels a clamped input range can realise (held at 0 or 100 % outside)."""
    a = draw(st.sampled_from([0.0, 10.0, 25.0, 50.0]))
    b = draw(st.sampled_from([50.0, 75.0, 90.0, 100.0]).filter(lambda x: x > a))
    ta, tb = draw(st.sampled_from([(0.0, 100.0), (100.0, 0.0)]))
    return a, b, ta, tb


@hyp_settings(max_examples=80, deadline=None)
@given(realisable_intent(), st.sampled_from([("positioner", "4-20 mA", "mA"), ("pneumatic", "3-15 psig", "psig"),
                                             ("pneumatic", "20-100 kPa", "kPa"), ("dcs", "4-20 mA", "mA")]),
       st.sampled_from(["ATO", "ATC"]), st.sampled_from(["direct", "reverse"]))
def test_recommended_settings_realise_the_intent(intent, case, air, positioner):
    a, b, ta, tb = intent
    method, signal, unit = case
    element = dict(tag="TV-101A", split_method=method, signal=signal, co_start_pct=a, co_end_pct=b,
                   travel_start_pct=ta, travel_end_pct=tb, air_action=air, positioner_action=positioner,
                   fail_position="FC" if air == "ATO" else "FO", input_units=unit, io_address="AO-1")
    partner = dict(tag="TV-101B", split_method=method, signal=signal, co_start_pct=0, co_end_pct=100,
                   travel_start_pct=0, travel_end_pct=100, input_units=unit, io_address="AO-2")
    first = build_groups(_project([CTRL, _valve(**element), _valve(**partner)]))
    needed = next(e for e in first[0].elements if e.tag == "TV-101A").required_input_range
    element.update(input_low=needed[0], input_high=needed[1])
    project = _project([CTRL, _valve(**element), _valve(**partner)])
    e = next(e for e in groups_for(project)[0].elements if e.tag == "TV-101A")
    assert e.travel_error[0] < 1e-6
    for co in (0.0, a, (a + b) / 2, b, 100.0):
        assert e.realised_travel_pct(co) == pytest.approx(e.intended_travel_pct(co), abs=1e-6)
    rules = {f.rule for f in run_checks(project) if "TV-101A" in f.tags}
    assert not rules & {"split.settings", "split.double-split", "split.segment"}


def test_human_output_has_a_split_summary_per_group():
    from typer.testing import CliRunner

    from loopdocs.cli import app

    result = CliRunner().invoke(app, ["check", str(EXAMPLE)], env={"COLUMNS": "200"})
    assert result.exit_code == 0, result.output
    out = result.output
    assert "Split ranges (5)" in out
    assert "TIC-3105 (loop T-3105): staged-opposed, split in the positioners" in out
    assert "PIC-4120 (loop P-4120): staged, pneumatic split on 3.00 to 15.00 psig via PY-4120" in out
    assert "nothing moves over CO 48 to 52 % (4 %)" in out
    assert "boundaries in proportion to Cv: 25 %" in out
    assert "output signal 0 % at controller output 45 %, 100 % at controller output 0 % (reversed" in " ".join(out.split())
