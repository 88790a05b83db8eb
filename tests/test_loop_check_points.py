"""Loop check points of a split group land on every boundary and on the edges of every
gap and overlap, besides the 10 % CO steps, so a dead band or a double action shows up
during the loop check (common practice: stroke a split range at and either side of each
split point). Expected travel at each point is the intent, worked by hand here: linear
between CO start and end, held outside (0 or 100 % at the edges).
"""

from __future__ import annotations

import pytest

from loopdocs.calc.tables import CO_UNIT, loop_check_points_pct, loop_check_table, rising_falling
from loopdocs.calc.travel import Intent

TENS = [float(10 * k) for k in range(11)]


def test_points_are_the_tens_plus_every_edge_deduplicated_and_sorted():
    points = loop_check_points_pct([0, 48, 52, 100, 48.0, 33.333333, -5, 120])
    assert points == sorted(set(TENS) | {48.0, 52.0, 33.333333})
    assert loop_check_points_pct() == TENS


def test_table_reads_every_point_rising_then_falling():
    t = loop_check_table("TV-1", Intent(0, 48, 0, 100), edges_pct=[0, 48, 52, 100])
    up = [p.percent for p in t.points if p.direction == "up"]
    down = [p.percent for p in t.points if p.direction == "down"]
    assert up == sorted(set(TENS) | {48.0, 52.0}) and down == list(reversed(up))
    assert [(p.percent, p.direction) for p in t.points] == rising_falling(up)
    assert {p.input.unit for p in t.points} == {CO_UNIT}


def _staged_rows(segments, method="dcs") -> list[dict]:
    """LIC-301 filling a tank through valves opening one after the other (ATO/FC, dcs split)."""
    rows = [{"tag": "LIC-301", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}]
    for suffix, (a, b) in zip("ABC", segments):
        rows.append({"tag": f"LV-301{suffix}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                     "positioner_action": "direct", "driven_by": "LIC-301", "split_method": method,
                     "co_start_pct": a, "co_end_pct": b, "travel_start_pct": 0, "travel_end_pct": 100,
                     "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises",
                     "io_address": f"AO-{suffix}"})
    return rows


def _loop_checks(index_files, rows) -> dict[str, object]:
    from loopdocs.calibration.project_tables import calibration_set

    project = index_files.check(rows).project
    return {t.tag: t for t in calibration_set(project).tables if t.kind == "loop check"}


def _travel(table, co: float, direction: str = "up") -> float:
    return next(p.output.value for p in table.points if p.percent == pytest.approx(co) and p.direction == direction)


def test_staged_gap_48_to_52_is_on_the_loop_check(index_files):
    checks = _loop_checks(index_files, _staged_rows([(0, 48), (52, 100)]))
    a, b = checks["LV-301A"], checks["LV-301B"]
    for table in (a, b):
        up = [p.percent for p in table.points if p.direction == "up"]
        assert 48.0 in up and 52.0 in up and 50.0 in up
        assert up == sorted(set(TENS) | {48.0, 52.0})
    # by hand: A full open at its end (48) and held there; B shut at its start (52) and below
    for direction in ("up", "down"):
        assert _travel(a, 48.0, direction) == 100.0 and _travel(a, 52.0, direction) == 100.0
        assert _travel(b, 48.0, direction) == 0.0 and _travel(b, 52.0, direction) == 0.0
    # inside the gap nothing moves: both hold between 48 and 52
    assert _travel(a, 50.0) == 100.0 and _travel(b, 50.0) == 0.0
    assert _travel(a, 40.0) == pytest.approx(100.0 * 40 / 48)
    assert _travel(b, 60.0) == pytest.approx(100.0 * 8 / 48)


def test_every_boundary_and_overlap_edge_of_a_group_is_a_point(index_files):
    # A 0-40, B 30-70 (overlap 30-40), C 72.5-100 (gap 70-72.5): every element's table
    # carries all the edges of its neighbours, so the group's checks merge into one table.
    segments = [(0, 40), (30, 70), (72.5, 100)]
    checks = _loop_checks(index_files, _staged_rows(segments))
    edges = {v for seg in segments for v in seg}
    for table in checks.values():
        up = [p.percent for p in table.points if p.direction == "up"]
        assert edges <= set(up) and set(TENS) <= set(up)
        assert up == sorted(set(up))
    assert len({tuple(p.percent for p in t.points) for t in checks.values()}) == 1
    # expected travel at each element's own edges is the intent: 0 at its start, 100 at its end
    for (a, b), tag in zip(segments, ("LV-301A", "LV-301B", "LV-301C")):
        assert _travel(checks[tag], a) == 0.0 and _travel(checks[tag], b) == 100.0
    # at the overlap edges both A and B move: B at A's end (40) is (40-30)/40 open
    assert _travel(checks["LV-301B"], 40.0) == pytest.approx(25.0)
    assert _travel(checks["LV-301A"], 30.0) == pytest.approx(75.0)
