"""Loop diagrams drawn as the loop is wired (``loopdocs.draw.layout``): positioners in
series on one output, a switch on an input of its own, a hand controller joined to the
valve it drives. Each index is written as a workbook in the test; the checks read the
layout data (where every line, symbol and text is placed)."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest

from loopdocs.draw.layout import layout_loop
from loopdocs.model.loading import load_project

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import crossing_problems, overlap_problems, write_xlsx  # noqa: E402


def _load(tmp_path: Path, rows: list[dict]):
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    return project


def _terminal(layout, numbers: str):
    """The terminal unit whose label reads ``numbers``."""
    owner = next(t.owner for t in layout.texts if t.role == "terminal" and t.text == numbers)
    return next(s for s in layout.symbols if s.name == owner)


def _on_side(point, symbol, side: str) -> bool:
    """Whether ``point`` lies on the left or right side of a terminal unit (the edge
    through its wire-left or wire-right port), between its top and bottom."""
    x = symbol.port(f"wire-{side}")[0]
    return math.isclose(point[0], x, abs_tol=1e-6) and symbol.box.y < point[1] < symbol.box.bottom


def _series_rows(n: int) -> list[dict]:
    """A controller whose one AO drives ``n`` positioners split over its output (Split
    Method positioner), each on its own JB terminals, all on cabinet terminals X3:51-52."""
    rows = [{"tag": "TIC-610", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
             "control_action": "reverse", "io_address": "CAB2-R2-S04-CH05"}]
    for i in range(n):
        a, b = 100 * i / n, 100 * (i + 1) / n
        rows.append({"tag": f"TV-610{'ABC'[i]}", "location": "field", "platform": "device", "signal": "4-20 mA",
                     "air_action": "ATO", "fail_position": "FC", "driven_by": "TIC-610", "split_method": "positioner",
                     "co_start_pct": a, "co_end_pct": b, "input_low": 4 + 16 * a / 100, "input_high": 4 + 16 * b / 100,
                     "input_units": "mA", "io_address": "CAB2-R2-S04-CH05", "jb": "JB-6",
                     "jb_terminals": f"{5 + 2 * i}-{6 + 2 * i}", "cable": f"C-610-{i + 2}", "cabinet": "CAB2",
                     "cabinet_terminals": "X3:51-52"})
    return rows


@pytest.mark.parametrize("n", [2, 3])
def test_positioners_on_one_output_are_wired_in_series(tmp_path, n):
    # Series loop: ISA-5.4 loop diagram content (terminals and polarity as wired) and
    # common practice for a positioner split on one analog output (docs/design.md §4.3, §3.3 loop
    # load: the positioners are in series, their voltage drops add): the current leaves
    # output + (cabinet terminal 51), flows through each positioner in turn (in at its
    # first JB terminal, out at its second, a link to the next one's first) and returns
    # from the last one to output - (cabinet terminal 52). A tee with a junction dot would
    # mean the positioners are in parallel on the output: wrong.
    layout = layout_loop(_load(tmp_path, _series_rows(n)), "T-610")
    assert overlap_problems(layout) == []
    assert crossing_problems(layout) == []
    assert not layout.dots and not [line for line in layout.lines if line.role == "connector"]

    cabinet = _terminal(layout, "51-52")
    jbs = [_terminal(layout, f"{5 + 2 * i}-{6 + 2 * i}") for i in range(n)]
    plus = [line for line in layout.lines if line.role == "series-plus"]
    links = [line for line in layout.lines if line.role == "series-link"]
    ret = [line for line in layout.lines if line.role == "series-return"]
    assert len(plus) == 1 and len(links) == n - 1 and len(ret) == 1

    # output + (the shared cabinet terminal's field side, upper wire) to the first positioner's JB terminals
    (start, end) = plus[0].points[0], plus[0].points[-1]
    assert _on_side(start, cabinet, "left") and _on_side(end, jbs[0], "right")
    # each positioner's - to the next one's +, in the order of the index
    for i, link in enumerate(sorted(links, key=lambda line: line.points[0][1])):
        assert _on_side(link.points[0], jbs[i], "right") and _on_side(link.points[-1], jbs[i + 1], "right")
        # the second terminal of one unit is the lower wire end, the first of the next the upper one
        assert link.points[0][1] > jbs[i].box.centre[1] and link.points[-1][1] < jbs[i + 1].box.centre[1]
    # the last positioner back to output - (the cabinet terminal's lower wire)
    assert _on_side(ret[0].points[0], jbs[-1], "right") and _on_side(ret[0].points[-1], cabinet, "left")
    assert ret[0].points[-1][1] > start[1]
    # every JB unit carries exactly two wire ends on its cabinet side: in and out
    ends = [p for line in plus + links + ret for p in (line.points[0], line.points[-1])]
    for jb in jbs:
        assert sum(_on_side(p, jb, "right") for p in ends) == 2

    texts = {t.text for t in layout.texts}
    # the links named with the terminals the index gives (JB Terminals)
    assert {f"link {6 + 2 * i}-{7 + 2 * i}" for i in range(n - 1)} <= texts
    assert {"+", "\u2212", f"{n} positioners in series"} <= texts


def test_a_dcs_split_with_its_own_outputs_is_not_drawn_in_series(tmp_path):
    # A dcs split gives each valve its own output (docs/design.md §4.3): separate circuits, so no
    # series wiring (and no tee) is drawn (common practice).
    rows = _series_rows(2)
    for k, row in enumerate(rows[1:]):
        row.update(split_method="dcs", input_low=4, input_high=20, io_address=f"CAB2-R2-S04-CH0{5 + k}",
                   cabinet_terminals=f"X3:{51 + 2 * k}-{52 + 2 * k}")
    layout = layout_loop(_load(tmp_path, rows), "T-610")
    assert not [line for line in layout.lines if line.role.startswith("series")]
    assert sum(1 for f in layout.frames if f.role == "io") == 2  # one output block per valve
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []


def _pressure_loop_with_switch() -> list[dict]:
    return [
        {"tag": "PIC-410", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
         "control_action": "reverse", "io_address": "CAB1-R1-S01-CH01"},
        {"tag": "PT-410", "location": "field", "platform": "device", "signal": "4-20 mA", "range_low": 0,
         "range_high": 10, "units": "bar", "io_address": "CAB1-R1-S02-CH01", "jb": "JB-4", "jb_terminals": "1-2",
         "cabinet": "CAB1", "cabinet_terminals": "X1:1-2"},
        {"tag": "PSH-410", "location": "field", "platform": "device", "signal": "discrete",
         "io_address": "SIS1-R1-S03-CH01", "jb": "JB-4", "jb_terminals": "3-4", "cabinet": "SIS1",
         "cabinet_terminals": "X9:1-2"},
        {"tag": "PV-410", "location": "field", "platform": "device", "signal": "4-20 mA", "air_action": "ATO",
         "fail_position": "FC", "driven_by": "PIC-410", "io_address": "CAB1-R1-S04-CH01"},
    ]


def test_a_switch_goes_to_its_own_input(tmp_path):
    # A pressure switch (ISA-5.1: PSH, a switch) with a discrete signal is wired to a
    # discrete input of its own (here the safety system's, its own IO Address): its line
    # ends at that input and never joins the controller's analogue input link (ISA-5.4
    # loop diagram: every circuit drawn as wired; common practice).
    layout = layout_loop(_load(tmp_path, _pressure_loop_with_switch()), "P-410")
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []
    switch_y = next(s for s in layout.symbols if s.name == "bubble:PSH-410").port("centre")[1]
    io = next(t for t in layout.texts if t.text == "SIS1-R1-S03-CH01")
    frame = next(f for f in layout.frames if f.name == io.owner)
    assert frame.rect.y < switch_y < frame.rect.bottom  # its own input block, on its own row
    heading = next(t.text for t in layout.texts if t.owner == io.owner and t.role == "io-heading")
    assert heading.endswith("DI")
    # nothing leaves the switch's input block towards the controller, and no junction
    # dot or bus line lies on the switch's row
    assert not [d for d in layout.dots if math.isclose(d.y, switch_y)]
    right = frame.rect.right
    for line in layout.lines:
        for a, b in zip(line.points, line.points[1:]):
            on_row = math.isclose(a[1], switch_y) and math.isclose(b[1], switch_y)
            assert not (on_row and max(a[0], b[0]) > right + 1e-6), line.role
            vertical = math.isclose(a[0], b[0])
            assert not (vertical and line.role == "bus" and min(a[1], b[1]) - 1e-6 <= switch_y <= max(a[1], b[1]) + 1e-6)
    # the transmitter still joins the controller
    assert any(line.role == "bus" for line in layout.lines)


def _bubble_is_connected(layout, tag: str) -> bool:
    bubble = next(s for s in layout.symbols if s.name == f"bubble:{tag}")
    ports = [bubble.port(p) for p in ("left", "right", "top", "bottom")]
    ends = [p for line in layout.lines for p in (line.points[0], line.points[-1])]
    return any(math.dist(p, e) < 1e-6 for p in ports for e in ends)


@pytest.mark.parametrize("platform,location", [("dcs", "control room"), ("device", "control room")])
def test_a_hand_controller_is_joined_to_the_valve_it_drives(tmp_path, platform, location):
    # A hand controller (ISA-5.1: HIC, a controller) beside the loop's controller drives
    # HV-540 (Driven By): its bubble is joined by a line to that valve's output row, like
    # any controller to its final element (ISA-5.4: every function connected to what it
    # drives; common practice), not left floating under the diagram.
    rows = [
        {"tag": "FT-540", "location": "field", "platform": "device", "signal": "4-20 mA", "range_low": 0,
         "range_high": 10, "units": "m3/h", "io_address": "CAB1-R1-S01-CH02"},
        {"tag": "FIC-540", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
         "control_action": "reverse", "io_address": "CAB1-R1-S05-CH02"},
        {"tag": "FV-540", "location": "field", "platform": "device", "signal": "4-20 mA", "air_action": "ATO",
         "fail_position": "FC", "driven_by": "FIC-540"},
        {"tag": "HIC-540", "loop": "F-540", "location": location, "platform": platform, "signal": "4-20 mA",
         "io_address": "CAB1-R1-S05-CH03" if platform == "dcs" else None},
        {"tag": "HV-540", "loop": "F-540", "location": "field", "platform": "device", "signal": "4-20 mA",
         "air_action": "ATC", "fail_position": "FO", "driven_by": "HIC-540", "jb": "JB-5", "jb_terminals": "3-4"},
    ]
    layout = layout_loop(_load(tmp_path, rows), "F-540")
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []
    for tag in ("FIC-540", "HIC-540", "FT-540"):
        assert _bubble_is_connected(layout, tag), tag
    hic = next(s for s in layout.symbols if s.name == "bubble:HIC-540").port("centre")
    hv = next(s for s in layout.symbols if s.name == "positioner:HV-540").port("signal-in")
    assert math.isclose(hic[1], hv[1])  # on the valve's row, joined along it
    if platform == "dcs":
        # the output block of the hand controller carries its own IO Address
        io = next(t for t in layout.texts if t.text == "CAB1-R1-S05-CH03")
        frame = next(f for f in layout.frames if f.name == io.owner)
        assert frame.rect.y < hic[1] < frame.rect.bottom


def test_a_lone_hand_controller_loop_is_joined(tmp_path):
    # The plain case (the hand controller is the loop's only controller) stays joined.
    rows = [
        {"tag": "HIC-520", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
         "io_address": "CAB1-R1-S05-CH01"},
        {"tag": "HV-520", "location": "field", "platform": "device", "signal": "4-20 mA", "air_action": "ATO",
         "fail_position": "FC", "driven_by": "HIC-520", "jb": "JB-5", "jb_terminals": "1-2"},
    ]
    layout = layout_loop(_load(tmp_path, rows), "H-520")
    assert _bubble_is_connected(layout, "HIC-520")
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []


def test_series_loop_with_cores_marks_its_output_once_and_clear_of_the_wires(tmp_path):
    # found by the random loops: a positioner series loop whose cable gives its cores drew the
    # cabinet terminal's own + and - beside the series output marks, one crossing the return
    # wire; the output of a series loop is marked once (common practice: one + and one - per pair)
    valve = {"location": "field", "platform": "device", "air_action": "ATO", "fail_position": "FC",
             "signal": "4-20 mA", "split_method": "positioner", "cabinet": "CAB9", "cabinet_terminals": "X2:01-02"}
    rows = [
        {"tag": "TIC-710", "platform": "dcs", "location": "control room", "control_action": "reverse"},
        {"tag": "TV-710A", **valve, "driven_by": "TIC-710", "co_start_pct": 0, "co_end_pct": 50,
         "cores": "1+ 2- S", "shield": "cabinet"},
        {"tag": "TV-710B", **valve, "driven_by": "TIC-710", "co_start_pct": 50, "co_end_pct": 100},
    ]
    layout = layout_loop(_load(tmp_path, rows), "T-710")
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []
    marks = [t.text for t in layout.texts if t.role == "polarity"]
    assert marks.count("+") == 1 and marks.count("\u2212") == 1
