"""A split group with an invalid element (a reversed CO range: CO Start 40, CO End 0) is
still a group: the rest is classified, the invalid element is shown as invalid in the
summary and the JSON, and the range chart does not draw it as a valid segment.

Source of the arrangement names: docs/design.md §4.2 (staged, staged-opposed, ...); the CO
segment of an element runs from CO Start up to CO End, an element that closes as CO
rises keeps CO Start < CO End and has Travel at Start above Travel at End (common
practice of split-range tables).
"""

from __future__ import annotations

import io
import json

from loopdocs.commands.check_report import check_json, print_splits
from loopdocs.draw.range_chart import chart_layout

CTRL = {"tag": "TIC-101", "service": "Test tank temperature", "platform": "dcs", "signal": "4-20 mA",
        "control_action": "reverse"}


def _valve(tag: str, co: tuple[float, float], travel: tuple[float, float], air: str, mA: tuple[float, float],
           effect: str) -> dict:
    return {"tag": tag, "signal": "4-20 mA", "air_action": air, "fail_position": "FC" if air == "ATO" else "FO",
            "positioner_action": "direct", "driven_by": "TIC-101", "split_method": "positioner",
            "co_start_pct": co[0], "co_end_pct": co[1], "travel_start_pct": travel[0], "travel_end_pct": travel[1],
            "input_low": mA[0], "input_high": mA[1], "input_units": "mA", "effect": effect}


def cool(co=(0, 50)) -> dict:
    # ATC glycol valve closing over CO 0-50 %: 4-12 mA (I = 4 + 16*CO, IEC 60381-1).
    return _valve("TV-101A", co, (100, 0), "ATC", (4, 12), "lowers")


def heat() -> dict:
    return _valve("TV-101B", (50, 100), (0, 100), "ATO", (12, 20), "raises")


def test_reversed_co_range_keeps_the_group_a_group(index_files):
    result = index_files.check([CTRL, cool(co=(40, 0)), heat()])
    group = result.splits[0]
    assert len(group.elements) == 2 and group.is_split
    assert group.mode == "incomplete"  # not "single": two elements, one of them invalid
    assert [e.tag for e in group.invalid] == ["TV-101A"]
    segment = [f for f in result.findings if f.rule == "split.segment"]
    assert [(f.tags, index_files.where(f)) for f in segment] == [(("TV-101A",), index_files.cell("co_end_pct", 1))]
    data = json.loads(json.dumps(check_json(result)))
    elements = {e["tag"]: e for e in data["splits"][0]["elements"]}
    assert data["splits"][0]["mode"] == "incomplete"
    assert elements["TV-101A"]["valid"] is False and "CO Start 40 % is not below CO End 0 %" in elements["TV-101A"]["problem"]
    assert elements["TV-101B"]["valid"] is True and elements["TV-101B"]["problem"] is None


def test_the_rest_of_a_larger_group_is_classified(index_files):
    # Cool 0-50 closing, heat 50-100 opening (staged-opposed), plus a third element with a
    # reversed CO range: the two valid ones are still staged-opposed.
    third = _valve("TV-101C", (100, 60), (0, 100), "ATO", (12, 20), "raises")
    group = index_files.check([CTRL, cool(), heat(), third]).splits[0]
    assert group.mode == "staged-opposed"
    assert [e.tag for e in group.invalid] == ["TV-101C"]


def test_summary_marks_the_invalid_element(index_files):
    from rich.console import Console

    result = index_files.check([CTRL, cool(co=(40, 0)), heat()])
    out = io.StringIO()
    print_splits(Console(file=out, width=200), result)
    text = " ".join(out.getvalue().split())  # the caption wraps at the table width
    assert "TIC-101 (loop T-101): incomplete" in text
    assert "40 to 0 (invalid)" in text
    assert "TV-101A is invalid and not placed in the split: CO Start 40 % is not below CO End 0 %" in text


def test_range_chart_does_not_draw_the_invalid_element(index_files):
    result = index_files.check([CTRL, cool(co=(40, 0)), heat()])
    group = result.splits[0]
    chart = chart_layout(group, result.findings)
    roles = [p.role for p in chart.paths]
    assert "curve:TV-101B" in roles and "curve:TV-101A" not in roles
    assert "TV-101A" not in chart.curves
    # the only boundary drawn is the valid element's start at CO 50 %, not the invalid 40 %
    xs = sorted(round(p.points[0][0], 3) for p in chart.paths if p.role == "boundary")
    assert xs == [round(chart.x_of(50.0), 3)]
    # the band where nothing valid moves (CO 0-50 %) is no longer crossed by a drawn valve
    for co, _travel in chart.curves["TV-101B"]:
        assert co >= 50.0 or _travel == 0.0
