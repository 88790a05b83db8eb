"""Range charts (``loopdocs.draw.range_chart``): the drawn lines are the split engine's
realised travel, the second axis is the shared signal, gaps/overlaps/boundaries are
marked, findings are flagged, nothing overlaps, and the SVG is valid and deterministic."""

from __future__ import annotations

import math
import sys
from itertools import combinations
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from loopdocs.calc.signals import MA_4_20
from loopdocs.calc.travel import Settings, realised_travel_pct
from loopdocs.draw.range_chart import (
    CHART_HEIGHT_MM,
    CHART_WIDTH_MM,
    PLOT_HEIGHT_MM,
    RangeChart,
    chart_layout,
    range_chart_svg,
    split_groups_to_chart,
)
from loopdocs.checks import check_project
from loopdocs.model.groups import build_groups

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import (  # noqa: E402
    PEN_WIDTHS,
    chart_overlap_problems,
    check_svg11,
    parse_svg,
    write_csv,
    write_xlsx,
)
from loopdocs.draw.range_chart import spread_centres  # noqa: E402
from loopdocs.core.formatting import fmt_pct  # noqa: E402

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"


@pytest.fixture(scope="module")
def checked():
    return check_project(EXAMPLE)


@pytest.fixture(scope="module")
def charts(checked) -> dict[str, tuple[object, RangeChart]]:
    groups = split_groups_to_chart(build_groups(checked.project))
    return {g.controller: (g, chart_layout(g, checked.findings)) for g in groups}


def interpolate(points: list[tuple[float, float]], co: float) -> float:
    for (x0, y0), (x1, y1) in zip(points, points[1:]):
        if x0 <= co <= x1:
            return y0 if x1 == x0 else y0 + (y1 - y0) * (co - x0) / (x1 - x0)
    raise AssertionError(f"CO {co} outside the curve")


SAMPLE_CO = [k * 2.5 for k in range(41)] + [8.33, 8.34, 33.32, 33.34, 47.9, 48.1, 51.9, 52.1, 44.9, 55.1, 24.9, 25.1]


def test_example_charts_are_the_split_groups(charts, checked):
    # one chart per real split group; ordinary single valves get none
    assert sorted(charts) == ["LIC-2101", "PIC-4120", "PIC-6201", "TIC-3105", "TIC-5310"]


def test_curves_are_the_realised_travel_of_the_settings(charts):
    # docs/design.md §4.3, evaluated by loopdocs.calc.travel.realised_travel_pct directly from
    # each element's settings (and, for dcs, the control-system scaling).
    for controller, (group, chart) in charts.items():
        for element in group.elements:
            assert chart.curve_source[element.tag] == "settings"
            curve = chart.curves[element.tag]
            assert curve[0][0] == 0.0 and curve[-1][0] == 100.0
            for co in SAMPLE_CO:
                expected = realised_travel_pct(element.settings, co, element.required_dcs_scaling)
                assert math.isclose(interpolate(curve, co), expected, abs_tol=1e-6), (controller, element.tag, co)


def test_drawn_path_is_the_curve_in_plot_coordinates(charts):
    for _, (group, chart) in charts.items():
        for element in group.elements:
            path = next(p for p in chart.paths if p.role == f"curve:{element.tag}")
            data = [((x - chart.plot.x) / chart.plot.width * 100.0, (chart.plot.bottom - y) / chart.plot.height * 100.0)
                    for x, y in path.points]
            assert len(data) == len(chart.curves[element.tag])
            for (co, t), (co2, t2) in zip(data, chart.curves[element.tag]):
                assert math.isclose(co, co2, abs_tol=1e-9) and math.isclose(t, t2, abs_tol=1e-9)


def test_hand_worked_positioner_split_point():
    # docs/design.md §4.3 worked by hand: CO 24 % on 4-20 mA gives I = 4 + 16 * 0.24 = 7.84 mA;
    # a positioner set 4 to 11.68 mA has u = (7.84 - 4) / 7.68 = 0.5; ATC, direct:
    # travel = 1 - 0.5 = 50 %.
    s = Settings("positioner", "ATC", "direct", 4.0, 11.68, MA_4_20)
    assert math.isclose(realised_travel_pct(s, 24.0), 50.0)


def test_chart_of_t3105_shows_the_point_worked_by_hand(charts):
    _, chart = charts["TIC-3105"]
    assert math.isclose(interpolate(chart.curves["TV-3105A"], 24.0), 50.0, abs_tol=1e-9)


def test_second_axis_in_the_shared_signal(charts):
    # positioner and pneumatic splits share one signal: I = 4 + 16 CO (mA), P = 3 + 12 CO
    # (psig) (docs/design.md §4.3); a dcs split has one output per element, so no shared axis.
    assert charts["TIC-3105"][1].signal_axis == ("mA", 4.0, 20.0)
    assert charts["PIC-4120"][1].signal_axis == ("psig", 3.0, 15.0)
    assert charts["PIC-6201"][1].signal_axis is None
    assert charts["LIC-2101"][1].signal_axis is None
    chart = charts["TIC-3105"][1]
    bold = {t.text: t for t in chart.texts if t.role == "tick-signal-boundary"}
    # the boundaries at CO 48 and 52 % are 4 + 16 * 0.48 = 11.68 and 12.32 mA
    assert set(bold) == {"11.68", "12.32"}
    assert label_points_to(chart, bold["11.68"], chart.x_of(48.0))
    assert label_points_to(chart, bold["12.32"], chart.x_of(52.0))
    psig = {t.text for t in charts["PIC-4120"][1].texts if t.role == "tick-signal-boundary"}
    assert psig == {"4.00", "7.00"}  # 3 + 12 * 0.0833 and 3 + 12 * 0.3333 psig


def test_boundaries_gaps_and_overlaps_are_marked(charts, tmp_path):
    chart = charts["TIC-3105"][1]
    boundary_labels = {t.text for t in chart.texts if t.role == "boundary"}
    assert {"48 %", "52 %"} <= boundary_labels
    shade = [p for p in chart.paths if p.role == "shade-gap"]
    assert len(shade) == 1
    xs = sorted({x for x, _ in shade[0].points})
    assert math.isclose(xs[0], chart.x_of(48.0)) and math.isclose(xs[1], chart.x_of(52.0))
    assert "dead band 4 %" in {t.text for t in chart.texts}
    assert "dead band 10 %" in {t.text for t in charts["PIC-6201"][1].texts}
    # an opposed pair sharing the whole CO overlaps by design: not shaded
    assert not [p for p in charts["TIC-5310"][1].paths if p.role.startswith("shade")]

    # staged-opposed neighbours overlapping by 10 % CO: shaded and labelled
    rows = [
        {"tag": "PIC-900", "location": "control room", "platform": "dcs", "signal": "4-20 mA"},
        {"tag": "PV-900A", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "driven_by": "PIC-900",
         "split_method": "dcs", "co_start_pct": 0, "co_end_pct": 55, "travel_start_pct": 100, "travel_end_pct": 0,
         "io_address": "A1", "cv": 4},
        {"tag": "PV-900B", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "driven_by": "PIC-900",
         "split_method": "dcs", "co_start_pct": 45, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
         "io_address": "A2", "cv": 4},
    ]
    result = check_project(write_csv(tmp_path / "index.csv", rows))
    group = next(g for g in build_groups(result.project) if g.controller == "PIC-900")
    overlap = chart_layout(group, result.findings)
    assert [p.role for p in overlap.paths].count("shade-overlap") == 1
    assert "overlap 10 %" in {t.text for t in overlap.texts}


def test_combined_capacity_curve(charts):
    # Valves on one stream pass the sum of their flow coefficients when fully open
    # (common practice): L-2101, Cv 10 + 30 = 40 at CO 100 %; linear trims staged at
    # 25 % give 20 at CO 50 % (10 + 30 * (50 - 25) / 75).
    group, chart = charts["LIC-2101"]
    curve = dict(chart.capacity)
    assert math.isclose(curve[100.0], 40.0) and math.isclose(curve[50.0], 20.0)
    assert chart.capacity == group.capacity_curve(1.0)
    assert any(t.text == "total Cv" for t in chart.texts)
    assert any(t.text == "Total Cv" for t in chart.texts)


def test_capacity_split_is_reported(charts):
    # Cv 10 and 30 staged on one stream: boundary in proportion to Cv at 25 % (docs/design.md §6.9)
    sub = next(t.text for t in charts["LIC-2101"][1].texts if t.role == "subtitle")
    assert "25 % CO (as set)" in sub and "gain ratio across the boundary 1.00" in sub
    assert not any(ch.isdigit() for ch in sub.split("boundary 1.00", 1)[1][:1])  # 1.00, not 1.005


def test_findings_on_the_group_are_marked(tmp_path):
    # TV-A should stroke over CO 0-48 % (needs 4 to 11.68 mA) but is set 4 to 14 mA:
    # split.settings error (docs/design.md §5.6), marked on the chart beside TV-A's label.
    rows = [
        {"tag": "TIC-800", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
         "control_action": "reverse", "io_address": "AO-1"},
        {"tag": "TV-800A", "signal": "4-20 mA", "air_action": "ATC", "fail_position": "FO", "driven_by": "TIC-800",
         "split_method": "positioner", "co_start_pct": 0, "co_end_pct": 48, "travel_start_pct": 100,
         "travel_end_pct": 0, "input_low": 4, "input_high": 14, "input_units": "mA", "effect": "lowers"},
        {"tag": "TV-800B", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "driven_by": "TIC-800",
         "split_method": "positioner", "co_start_pct": 52, "co_end_pct": 100, "travel_start_pct": 0,
         "travel_end_pct": 100, "input_low": 12.32, "input_high": 20, "input_units": "mA", "effect": "raises"},
    ]
    result = check_project(write_csv(tmp_path / "index.csv", rows))
    assert any(f.rule == "split.settings" and "TV-800A" in f.tags for f in result.findings)
    group = next(g for g in build_groups(result.project) if g.controller == "TIC-800")
    chart = chart_layout(group, result.findings)
    assert ("split.settings", ("TV-800A",)) in [(r, tuple(t)) for r, t in chart.markers]
    assert "split.settings" in {t.text for t in chart.texts if t.role == "finding"}
    assert any(p.role == "finding-marker" for p in chart.paths)
    # the intent is drawn beside the (wrong) settings when they differ by more than 1 %
    assert any(p.role == "intent:TV-800A" for p in chart.paths)
    assert no_overlaps(chart) == []


def no_overlaps(chart: RangeChart) -> list[str]:
    problems = [f"{a.text!r} / {b.text!r}" for a, b in combinations(chart.texts, 2) if a.box.overlaps(b.box)]
    canvas = chart.content_box()
    problems += [f"{t.text!r} outside" for t in chart.texts
                 if t.box.x < -1e-6 or t.box.right > chart.width_mm + 1e-6 or t.box.bottom > chart.height_mm + 1e-6]
    del canvas
    return problems


def test_texts_do_not_overlap_and_stay_on_the_canvas(charts):
    for controller, (_, chart) in charts.items():
        assert no_overlaps(chart) == [], controller
        assert chart_overlap_problems(chart) == [], controller


def label_points_to(chart: RangeChart, label, x_mm: float) -> bool:
    """Whether a boundary label stands over its mark at ``x_mm`` or has a leader to it."""
    if abs(label.x - x_mm) <= 0.3:
        return True
    box = label.box
    for path in chart.paths:
        if path.role != "leader":
            continue
        (x0, y0), (x1, _) = path.points[0], path.points[-1]
        if math.isclose(x0, label.x) and box.y - 0.5 <= y0 <= box.bottom + 0.5 and math.isclose(x1, x_mm):
            return True
    return False


def split_rows(method: str, bounds: list[tuple[float, float]]) -> list[dict]:
    """A controller and one valve per (CO start, CO end) pair, split in the control system
    (own outputs) or in the positioners (input ranges from the CO bounds, 4-20 mA)."""
    rows = [{"tag": "TIC-900", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
             "control_action": "reverse", "io_address": "AO-1"}]
    for i, (a, b) in enumerate(bounds):
        row = {"tag": f"TV-900{'ABCD'[i]}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
               "driven_by": "TIC-900", "split_method": method, "co_start_pct": a, "co_end_pct": b,
               "travel_start_pct": 0, "travel_end_pct": 100}
        if method == "positioner":
            row.update(input_low=round(4 + 16 * a / 100, 3), input_high=round(4 + 16 * b / 100, 3), input_units="mA")
        else:
            row["io_address"] = f"AO-{i + 2}"
        rows.append(row)
    return rows


def assert_boundaries_readable(group, chart: RangeChart) -> None:
    # every CO boundary strictly inside 0..100 % has its value once, over its line or
    # with a leader to it; the same for the shared signal at the boundary; no text
    # overlaps another text, leaves the canvas or crosses a dark line
    assert chart_overlap_problems(chart) == []
    boundaries = sorted({round(v, 6) for e in group.elements for v in (e.co_start_pct, e.co_end_pct)
                         if 0.0 < v < 100.0})
    labels = [t for t in chart.texts if t.role == "boundary"]
    assert len(labels) == len(boundaries)
    for co in boundaries:
        label = next(t for t in labels if t.text == f"{fmt_pct(co)} %")
        assert label_points_to(chart, label, chart.x_of(co)), co
    if chart.signal_axis is not None:
        assert len([t for t in chart.texts if t.role == "tick-signal-boundary"]) == len(boundaries)


@pytest.mark.parametrize("method", ["positioner", "dcs"])
@pytest.mark.parametrize("bounds", [[(0, 33), (35, 100)], [(0, 33), (33.5, 34.5), (35, 100)]])
def test_close_boundaries_keep_their_own_labels(tmp_path, method, bounds):
    # Boundaries at 33 and 35 % CO are 2.8 mm apart on a 140 mm axis, closer than the
    # width of "33 %" (about 6 mm): drawn side by side the labels would overlap, and with
    # four boundaries within 2 % CO there is no room for them over their lines at all.
    # Drafting practice (ISO 128 / ISO 3098 legibility, from memory; common practice):
    # lettering never overlaps or crosses a line, a label moved off its feature gets a
    # leader line to it, and no value is left out.
    result = check_project(write_xlsx(tmp_path / "index.xlsx", split_rows(method, bounds)))
    group = next(g for g in build_groups(result.project) if g.controller == "TIC-900")
    chart = chart_layout(group, result.findings)
    assert_boundaries_readable(group, chart)
    assert {"33 %", "35 %"} <= {t.text for t in chart.texts if t.role == "boundary"}
    if method == "positioner":
        # 4 + 16 * 0.33 = 9.28 mA and 4 + 16 * 0.35 = 9.6 mA (docs/design.md §4.3), both shown
        assert {"9.28", "9.60"} <= {t.text for t in chart.texts if t.role == "tick-signal-boundary"}


def test_spread_centres_keeps_order_gap_and_bounds():
    # Two 6 mm labels wanted 2.8 mm apart, 1 mm gap: pushed apart symmetrically about
    # their mean (51.4 mm), 7 mm centre to centre (hand worked).
    assert spread_centres([50.0, 52.8], [6.0, 6.0], 1.0, 0.0, 180.0) == [47.9, 54.9]
    # pushed against the right bound, the row moves left as a whole
    assert spread_centres([178.0, 179.0], [6.0, 6.0], 1.0, 0.0, 180.0) == [170.0, 177.0]


@st.composite
def close_splits(draw):
    """2 to 4 elements whose neighbouring CO ranges meet, leave a gap, or overlap by up to
    4 % CO, boundaries anywhere between 3 and 97 %."""
    n = draw(st.integers(2, 4))
    cuts = sorted(draw(st.lists(st.floats(3.0, 97.0), min_size=n - 1, max_size=n - 1, unique=True)))
    bounds, start = [], 0.0
    for cut in cuts:
        end = round(max(cut, start + 1.0), 1)
        bounds.append((start, end))
        start = round(min(99.0, max(0.0, end + draw(st.sampled_from([0.0, 0.5, 1.0, 2.0, 4.0, -2.0])))), 1)
    bounds.append((start, 100.0))
    return draw(st.sampled_from(["positioner", "dcs"])), bounds


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(split=close_splits())
def test_random_close_boundaries_never_overlap(tmp_path_factory, split):
    method, bounds = split
    path = write_csv(tmp_path_factory.mktemp("chart") / "index.csv", split_rows(method, bounds))
    result = check_project(path)
    for group in split_groups_to_chart(build_groups(result.project)):
        assert_boundaries_readable(group, chart_layout(group, result.findings))


def test_natural_size_and_svg(charts, checked):
    for controller, (group, chart) in charts.items():
        assert chart.width_mm == CHART_WIDTH_MM and chart.height_mm <= CHART_HEIGHT_MM
        # the plot as tall as PLOT_HEIGHT_MM, or the chart at its largest
        assert chart.plot.height == pytest.approx(PLOT_HEIGHT_MM) or chart.height_mm == CHART_HEIGHT_MM
        svg = range_chart_svg(group, checked.findings)
        root = check_svg11(svg)
        for element in root.iter():
            if element.get("font-size"):
                assert float(element.get("font-size")) >= 2.5  # docs/design.md §8.4
            if element.get("stroke-width"):
                assert float(element.get("stroke-width")) in PEN_WIDTHS
        assert svg == range_chart_svg(group, checked.findings)  # deterministic bytes
        assert parse_svg(svg).find("{http://www.w3.org/2000/svg}title").text == f"Range chart {controller}"


def test_narrow_chart_keeps_curves_lettering_and_height(charts, checked):
    # The chart a short sheet prints (NARROW_CHART_MM wide): the same curves (docs/design.md
    # §4.3, the travel of the settings), lettering at 2.5 mm capitals (ISO 3098, from
    # memory: 3.43 mm DejaVu Sans type), no taller than at its own width, its plot at least
    # NARROW_PLOT_MM tall, nothing overlapping and nothing past its edges.
    from loopdocs.draw.range_chart import NARROW_CHART_MM, NARROW_PLOT_MM, TEXT_MM

    for controller, (group, wide) in charts.items():
        narrow = chart_layout(group, checked.findings, NARROW_CHART_MM)
        assert narrow.width_mm == NARROW_CHART_MM and narrow.height_mm <= wide.height_mm, controller
        assert narrow.plot.height >= NARROW_PLOT_MM - 1e-6 and narrow.plot.right < NARROW_CHART_MM, controller
        assert narrow.curves == wide.curves, controller
        assert min(t.size_mm for t in narrow.texts) >= TEXT_MM - 1e-9, controller
        assert no_overlaps(narrow) == [], controller
        assert chart_overlap_problems(narrow) == [], controller
        # a title longer than the chart wraps to it, every word kept
        titles = [t for t in narrow.texts if t.role == "title"]
        assert " ".join(t.text for t in titles).split() == narrow.description.split()
        # the drawn path read back through the narrower plot gives the same curve
        for element in group.elements:
            path = next((q for q in narrow.paths if q.role == f"curve:{element.tag}"), None)
            if path is None:
                continue
            data = [((x - narrow.plot.x) / narrow.plot.width * 100.0, (narrow.plot.bottom - y) / narrow.plot.height * 100.0)
                    for x, y in path.points]
            assert all(math.isclose(a, c, abs_tol=1e-9) and math.isclose(b, d, abs_tol=1e-9)
                       for (a, b), (c, d) in zip(data, narrow.curves[element.tag])), element.tag
