"""Tests of the symbol library (symbols/*.svg, symbols/lines.json) and its loader."""

from __future__ import annotations

import importlib.util
import math
import re
from collections.abc import Iterator
from pathlib import Path

import defusedxml.ElementTree as DET
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loopdocs.draw import devices
from loopdocs.draw import symbols as lib
from loopdocs.draw.symbols import SVG_NS, SymbolError

SYMBOLS_DIR = lib.symbols_dir()
ALL_SVG_FILES = sorted(SYMBOLS_DIR.glob("*.svg"))
SYMBOL_NAMES = lib.symbol_names()
REQUIRED_PORTS = devices.required_ports()
DRAWN = {"line", "circle", "rect", "polygon", "polyline", "path", "ellipse"}
BUBBLE_CELLS = [(d, loc) for d in lib.BUBBLE_DISPLAYS for loc in lib.LOCATION_OVERLAYS]
TOL_MM = 0.002


# --- helpers -------------------------------------------------------------------------

def _markup_tree(symbol: lib.Symbol):
    return DET.fromstring(f"<g>{symbol.markup}</g>", forbid_dtd=True)


def _translate(transform: str | None) -> tuple[float, float]:
    """Offset of a transform made only of translate() (all the library ever writes)."""
    dx = dy = 0.0
    if not transform:
        return dx, dy
    for func, args in re.findall(r"(\w+)\(([^)]*)\)", transform):
        assert func == "translate", f"unexpected transform {transform!r} in symbol markup"
        values = [float(v) for v in re.split(r"[\s,]+", args.strip())]
        dx, dy = dx + values[0], dy + (values[1] if len(values) > 1 else 0.0)
    return dx, dy


def _drawn(symbol: lib.Symbol) -> Iterator[tuple[str, dict[str, str], float, float]]:
    """Each drawn element: (tag, effective attributes with inherited paint, offset x, offset y)."""
    inherited_keys = ("stroke", "fill", "stroke-width", "stroke-dasharray")

    def walk(element, inherited: dict[str, str], ox: float, oy: float):
        attrs = {**inherited, **{k: v for k, v in element.attrib.items() if k in inherited_keys}}
        dx, dy = _translate(element.get("transform"))
        ox, oy = ox + dx, oy + dy
        if element.tag in DRAWN:
            yield element.tag, {**element.attrib, **attrs}, ox, oy
        for child in element:
            yield from walk(child, attrs, ox, oy)

    yield from walk(_markup_tree(symbol), {}, 0.0, 0.0)


def _points(text: str) -> list[tuple[float, float]]:
    values = [float(v) for v in re.split(r"[\s,]+", text.strip())]
    return list(zip(values[0::2], values[1::2]))


def _shapes(symbol: lib.Symbol, tag: str) -> list[dict[str, str]]:
    return [a for t, a, _, _ in _drawn(symbol) if t == tag]


def _load_script():
    spec = importlib.util.spec_from_file_location("make_contact_sheet", Path(__file__).resolve().parents[1] / "docs" / "make_contact_sheet.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


# --- files -------------------------------------------------------------------------

@pytest.mark.parametrize("path", ALL_SVG_FILES, ids=lambda p: p.name)
def test_file_is_svg_with_mm_viewbox(path: Path) -> None:
    # W3C SVG 1.1 (Second Edition) 5.1.2 (svg element, namespace) and 7.7 (viewBox).
    root = DET.parse(path, forbid_dtd=True).getroot()
    assert root.tag == f"{{{SVG_NS}}}svg"
    assert root.get("version") == "1.1"
    min_x, min_y, width, height = (float(v) for v in root.get("viewBox").split())
    assert (min_x, min_y) == (0, 0) and width > 0 and height > 0
    # 1 user unit = 1 mm: the physical size equals the viewBox size in mm.
    assert root.get("width") == f"{lib.fmt_mm(width)}mm"
    assert root.get("height") == f"{lib.fmt_mm(height)}mm"


def test_every_symbol_file_is_drawn_by_the_registry_or_is_a_building_block() -> None:
    # No dead symbols: each file is a device symbol of some registry entry
    # (loopdocs.draw.devices) or a listed building block (bubbles, overlays, terminals, marks).
    used = {u.file for u in devices.symbol_uses()}
    assert not used & set(lib.BUILDING_BLOCK_PORTS)
    assert set(SYMBOL_NAMES) == used | set(lib.BUILDING_BLOCK_PORTS)
    assert set(lib.REQUIRED_TEXT_AREAS) <= set(SYMBOL_NAMES)


@pytest.mark.parametrize("name", sorted(REQUIRED_PORTS))
def test_required_ports_and_text_areas_present(name: str) -> None:
    # every registry entry's symbol file exists with the ports its builder uses
    symbol = lib.load_symbol(name)
    assert REQUIRED_PORTS[name] <= set(symbol.ports), name
    assert set(lib.REQUIRED_TEXT_AREAS.get(name, ())) <= set(symbol.text_areas), name
    assert symbol.title == name
    assert len(symbol.description) > 20


@pytest.mark.parametrize("name", SYMBOL_NAMES)
def test_ports_and_text_areas_lie_inside_or_on_the_viewbox(name: str) -> None:
    symbol = lib.load_symbol(name)
    for port, (x, y) in symbol.ports.items():
        assert 0 <= x <= symbol.width_mm and 0 <= y <= symbol.height_mm, (name, port)
    for area, (x, y, w, h) in symbol.text_areas.items():
        assert w > 0 and h > 0
        assert 0 <= x and x + w <= symbol.width_mm and 0 <= y and y + h <= symbol.height_mm, (name, area)


@pytest.mark.parametrize("name", SYMBOL_NAMES)
def test_ports_are_invisible_and_not_in_the_embedded_markup(name: str) -> None:
    root = DET.parse(SYMBOLS_DIR / f"{name}.svg", forbid_dtd=True).getroot()
    ports = [e for e in root.iter(f"{{{SVG_NS}}}circle") if "port" in e.get("class", "").split()]
    assert len(ports) == len(lib.load_symbol(name).ports) > 0
    # SVG 1.1, 9.3: "A value of zero disables rendering of the element."
    assert all(float(p.get("r")) == 0 for p in ports)
    markup = lib.load_symbol(name).markup
    # Embeddable many times in one document: no ids, no namespace prefixes, no helpers.
    assert " id=" not in markup and "xmlns" not in markup and "ns0:" not in markup
    assert 'class="port"' not in markup and "text-area" not in markup


@pytest.mark.parametrize("name", SYMBOL_NAMES)
def test_pens_black_strokes_white_or_no_fill(name: str) -> None:
    # Pen widths: docs/design.md §8.4 (from memory, ISO 128 series line widths 0.25/0.35/0.5/0.7 mm).
    drawn = list(_drawn(lib.load_symbol(name)))
    assert drawn, name
    for tag, attrs, _, _ in drawn:
        assert "style" not in attrs, (name, tag)
        assert attrs.get("stroke") == "#000000", (name, tag)
        assert attrs.get("fill") in ("none", "#ffffff"), (name, tag)
        assert float(attrs["stroke-width"]) in (0.25, 0.35, 0.5, 0.7), (name, tag)


# --- instrument symbols ------------------------------------------------------------------
# Shapes: ISA-5.1-2009 table 6.3 / general instrument symbols (table number from memory):
# circle = discrete, circle in square = shared display/control, hexagon = computer function,
# diamond in square = programmable logic control.

def test_discrete_is_one_circle_about_11_mm() -> None:
    # ISA-5.1-2009 table 6.3 / general instrument symbols (from memory); bubble about
    # 7/16 in = 11.1 mm across (from memory).
    symbol = lib.load_symbol("bubble-discrete")
    circles = _shapes(symbol, "circle")
    assert len(circles) == 1 and not _shapes(symbol, "rect") and not _shapes(symbol, "polygon")
    assert 2 * float(circles[0]["r"]) == pytest.approx(11.0, abs=0.5)


def test_shared_is_a_circle_inscribed_in_a_square() -> None:
    # ISA-5.1-2009 table 6.3 / general instrument symbols (from memory).
    symbol = lib.load_symbol("bubble-shared")
    (rect,), (circle,) = _shapes(symbol, "rect"), _shapes(symbol, "circle")
    w, h = float(rect["width"]), float(rect["height"])
    assert w == h == 2 * float(circle["r"])
    assert float(circle["cx"]) == float(rect["x"]) + w / 2 and float(circle["cy"]) == float(rect["y"]) + h / 2


def test_computer_is_a_regular_hexagon_with_flat_top() -> None:
    # ISA-5.1-2009 table 6.3 / general instrument symbols (from memory): hexagon,
    # corners left and right, flat top and bottom.
    symbol = lib.load_symbol("bubble-computer")
    (polygon,) = _shapes(symbol, "polygon")
    points = _points(polygon["points"])
    assert len(points) == 6 and not _shapes(symbol, "circle") and not _shapes(symbol, "rect")
    cx, cy = symbol.ports["centre"]
    assert all(math.dist(p, (cx, cy)) == pytest.approx(5.5, abs=TOL_MM) for p in points)
    assert (0.0, cy) in points and (symbol.width_mm, cy) in points
    tops = sorted(y for _, y in points)
    assert tops[0] == tops[1] and tops[-1] == tops[-2]  # flat top and bottom


def test_plc_is_a_diamond_inscribed_in_a_square() -> None:
    # ISA-5.1-2009 table 6.3 / general instrument symbols (from memory).
    symbol = lib.load_symbol("bubble-plc")
    (rect,), (polygon,) = _shapes(symbol, "rect"), _shapes(symbol, "polygon")
    x, y, w, h = (float(rect[k]) for k in ("x", "y", "width", "height"))
    points = _points(polygon["points"])
    assert len(points) == 4 and w == h
    assert set(points) == {(x + w / 2, y), (x + w, y + h / 2), (x + w / 2, y + h), (x, y + h / 2)}


def _location_lines(symbol: lib.Symbol) -> list[dict[str, float | bool]]:
    lines = []
    for tag, attrs, ox, oy in _drawn(symbol):
        if tag == "line":
            lines.append({
                "x1": ox + float(attrs["x1"]), "x2": ox + float(attrs["x2"]),
                "y1": oy + float(attrs["y1"]), "y2": oy + float(attrs["y2"]),
                "dashed": "stroke-dasharray" in attrs, "width": float(attrs["stroke-width"]),
            })
    return lines


@pytest.mark.parametrize(("display", "location"), BUBBLE_CELLS)
def test_location_line_count_and_style(display: str, location: str) -> None:
    # ISA-5.1-2009 table 6.3 / general instrument symbols (from memory): no line = field
    # mounted; one solid line = primary location normally accessible to the operator; one
    # dashed line = auxiliary location normally inaccessible (behind the panel); double
    # line = auxiliary location normally accessible to the operator.
    lines = _location_lines(lib.instrument_bubble(display, location))
    expected = {"field": (0, False), "main-panel": (1, False), "behind-panel": (1, True), "aux-panel": (2, False)}
    count, dashed = expected[location]
    assert len(lines) == count
    assert all(line["dashed"] == dashed for line in lines)


@pytest.mark.parametrize(("display", "location"), [c for c in BUBBLE_CELLS if c[1] != "field"])
def test_location_lines_run_across_the_middle_between_letters_and_number(display: str, location: str) -> None:
    # ISA-5.1 (from memory): the location line runs horizontally through the middle of the
    # symbol; function letters sit above it, the loop number below.
    symbol = lib.instrument_bubble(display, location)
    cx, cy = symbol.ports["centre"]
    lines = _location_lines(symbol)
    assert all(line["y1"] == pytest.approx(line["y2"]) for line in lines)
    mean_y = sum(line["y1"] for line in lines) / len(lines)
    assert mean_y == pytest.approx(cy, abs=TOL_MM)
    for line in lines:
        assert line["x1"] >= 0 and line["x2"] <= symbol.width_mm
        assert line["x2"] - line["x1"] >= 0.95 * symbol.width_mm  # across the whole symbol
    fx, fy, fw, fh = symbol.text_areas["tag-func"]
    lx, ly, lw, lh = symbol.text_areas["tag-loop"]
    top_edge = min(line["y1"] - line["width"] / 2 for line in lines)
    bottom_edge = max(line["y1"] + line["width"] / 2 for line in lines)
    assert fy + fh <= top_edge and ly >= bottom_edge
    assert symbol.ports["tag-func"][1] < top_edge and symbol.ports["tag-loop"][1] > bottom_edge


@pytest.mark.parametrize("display", lib.BUBBLE_DISPLAYS)
def test_tag_text_areas_hold_2_5_mm_text(display: str) -> None:
    # docs/design.md §8.4 (from memory, ISO 3098): printed text at least 2.5 mm high; capital
    # height of a 2.5 mm font is about 0.7 x 2.5 = 1.75 mm (ISO 3098, from memory).
    symbol = lib.load_symbol(f"bubble-{display}")
    for area in ("tag-func", "tag-loop"):
        x, y, w, h = symbol.text_areas[area]
        px, py = symbol.ports[area]
        assert h >= 0.7 * 2.5
        assert px == pytest.approx(x + w / 2) and y + 0.7 * 2.5 <= py <= y + h  # baseline inside the box


# --- valves, actuators, elements, terminals ---------------------------------------------

def test_valve_body_is_a_bow_tie_meeting_at_the_stem() -> None:
    # ISA-5.1 (from memory): a two-way valve body is two triangles point to point.
    symbol = lib.load_symbol("valve-globe")
    triangles = [_points(p["points"]) for p in _shapes(symbol, "polygon")]
    assert len(triangles) == 2 and all(len(t) == 3 for t in triangles)
    centre = symbol.ports["centre"]
    assert all(centre in t for t in triangles)
    assert symbol.ports["inlet"][1] == symbol.ports["outlet"][1] == centre[1]
    assert symbol.ports["stem-top"][0] == centre[0]


@pytest.mark.parametrize("actuator", list(devices.ActuatorKind))
def test_actuator_stacks_on_the_valve_stem(actuator: devices.ActuatorKind) -> None:
    # Common practice: the actuator sits on the body's stem, above the body, stem vertical.
    valve = devices.valve_symbol(devices.BodyKind.GLOBE, actuator)
    assert valve.ports["stem-top"] == valve.ports["stem-bottom"]
    assert valve.ports["signal"][1] < valve.ports["stem-bottom"][1] < valve.ports["inlet"][1]
    assert valve.ports["signal"][0] == valve.ports["centre"][0]
    body, top = lib.load_symbol("valve-globe"), devices.ACTUATORS[actuator].symbol.load()
    assert valve.height_mm == pytest.approx(body.height_mm + top.height_mm)
    assert valve.markup.count("<polygon") == 2


def test_thermocouple_negative_leg_is_drawn_heavier() -> None:
    # IEC 60617 thermocouple symbol (from memory): the negative leg is the thicker line.
    symbol = lib.load_symbol("element-thermocouple")
    legs = {}
    for tag, attrs, _, _ in _drawn(symbol):
        if tag == "polyline":
            points = _points(attrs["points"])
            legs[points[0]] = float(attrs["stroke-width"])
            assert points[-1] == symbol.ports["tip"]
    assert legs[symbol.ports["minus"]] > legs[symbol.ports["plus"]]


def test_rtd_has_three_wires_two_from_one_end() -> None:
    # IEC 60751 three-wire connection (from memory): one lead to one end of the resistor,
    # two leads to the other end.
    symbol = lib.load_symbol("element-rtd")
    tops = [symbol.ports[w] for w in ("wire-a", "wire-b", "wire-c")]
    assert len(set(tops)) == 3 and all(y == 0 for _, y in tops)


@pytest.mark.parametrize("name", ["element-orifice", "element-generic"])
def test_inline_elements_draw_the_pipe_in_the_process_line_width(name: str) -> None:
    # One source for the process line width: symbols/lines.json.
    symbol = lib.load_symbol(name)
    up, down = symbol.ports["upstream"], symbol.ports["downstream"]
    pipes = [a for t, a, _, _ in _drawn(symbol) if t == "line"
             and (float(a["x1"]), float(a["y1"]), float(a["x2"]), float(a["y2"])) == (*up, *down)]
    assert len(pipes) == 1
    assert float(pipes[0]["stroke-width"]) == lib.line_style("process").stroke_width_mm


@pytest.mark.parametrize("name", ["terminal-jb", "terminal-cabinet"])
def test_terminal_units_stack_at_their_height(name: str) -> None:
    # Common practice: terminals of a strip are drawn as equal cells sharing edges, wires
    # entering on both sides at the same height.
    unit = lib.load_symbol(name)
    (cell,) = [a for a in _shapes(unit, "rect")]
    assert (float(cell["x"]), float(cell["y"]), float(cell["width"]), float(cell["height"])) == (
        0, 0, unit.width_mm, unit.height_mm)
    assert unit.ports["wire-left"] == (0, unit.height_mm / 2)
    assert unit.ports["wire-right"] == (unit.width_mm, unit.height_mm / 2)
    assert unit.text_areas["label"][3] >= 0.7 * 2.5  # 2.5 mm text, docs/design.md §8.4


# --- device kinds of issue 11: bodies, actuators, elements, accessories ----------------

def _polygons(symbol: lib.Symbol) -> list[list[tuple[float, float]]]:
    return [_points(a["points"]) for a in _shapes(symbol, "polygon")]


@pytest.mark.parametrize("body", list(devices.BodyKind))
def test_every_body_has_its_ports_where_the_pipe_and_stem_meet(body: devices.BodyKind) -> None:
    # ISA-5.1 valve body symbols (from memory): the body sits in the line, the stem rises
    # from its centre to the actuator; inlet and outlet on the line through the centre,
    # an angle body's inlet below it, a three-way body's branch below it.
    symbol = devices.BODIES[body].symbol.load()
    cx, cy = symbol.ports["centre"]
    assert symbol.ports["stem-top"] == (cx, 0.0)
    assert symbol.ports["outlet"] == (symbol.width_mm, cy)
    if body is devices.BodyKind.ANGLE:
        assert symbol.ports["inlet"] == (cx, symbol.height_mm)
    else:
        assert symbol.ports["inlet"] == (0.0, cy)
    if devices.BODIES[body].branch:
        assert symbol.ports["branch"] == (cx, symbol.height_mm)


@pytest.mark.parametrize(("name", "triangles"), [("valve-globe", 2), ("valve-ball", 2), ("valve-segmented-ball", 2),
                                                 ("valve-eccentric-plug", 2), ("valve-diaphragm", 2),
                                                 ("valve-angle", 2), ("valve-three-way", 3), ("valve-butterfly", 0)])
def test_bodies_are_triangles_meeting_at_the_centre(name: str, triangles: int) -> None:
    # ISA-5.1 (from memory): a two-way body is two triangles point to point, a three-way
    # body three, an angle body two at right angles; the butterfly is drawn with its disc
    # between two flanges instead (no triangles).
    symbol = lib.load_symbol(name)
    found = [t for t in _polygons(symbol) if len(t) == 3]
    assert len(found) == triangles
    assert all(symbol.ports["centre"] in t for t in found)


@pytest.mark.parametrize("name", ["valve-ball", "valve-segmented-ball"])
def test_ball_bodies_draw_the_ball_as_a_white_circle_at_the_centre(name: str) -> None:
    # ISA-5.1 ball valve (from memory): the bow-tie with a circle at its centre; white
    # filled so the triangles' points do not show through.
    symbol = lib.load_symbol(name)
    (circle,) = [(t, a) for t, a, _, _ in _drawn(symbol) if t == "circle"]
    attrs = circle[1]
    assert (float(attrs["cx"]), float(attrs["cy"])) == symbol.ports["centre"]
    assert attrs["fill"] == "#ffffff"


def test_butterfly_disc_is_slanted_between_two_flanges() -> None:
    # Common practice (ISA-5.1 butterfly valve, from memory): two flange lines across the
    # pipe with the disc drawn slanted between them.
    symbol = lib.load_symbol("valve-butterfly")
    lines = [(float(a["x1"]), float(a["y1"]), float(a["x2"]), float(a["y2"])) for a in _shapes(symbol, "line")]
    verticals = [ln for ln in lines if ln[0] == ln[2] and ln[0] not in (symbol.ports["centre"][0],)]
    slanted = [ln for ln in lines if ln[0] != ln[2] and ln[1] != ln[3]]
    assert len(verticals) == 2 and len(slanted) == 1
    x_left, x_right = sorted(v[0] for v in verticals)
    assert x_left < min(slanted[0][0], slanted[0][2]) and max(slanted[0][0], slanted[0][2]) < x_right


@pytest.mark.parametrize("body", list(devices.BodyKind))
@pytest.mark.parametrize("actuator", list(devices.ActuatorKind))
def test_every_actuator_stacks_on_every_body(body: devices.BodyKind, actuator: devices.ActuatorKind) -> None:
    # Common practice: the actuator sits on the body's stem, stem vertical, the signal
    # entering at the actuator's top.
    valve = devices.valve_symbol(body, actuator)
    assert valve.ports["stem-top"] == valve.ports["stem-bottom"]
    assert valve.ports["signal"][0] == valve.ports["centre"][0] == valve.ports["stem-top"][0]
    assert valve.ports["signal"][1] < valve.ports["side-right"][1] < valve.ports["centre"][1]


@pytest.mark.parametrize("name", ["actuator-piston-spring", "actuator-hydraulic", "actuator-piston"])
def test_piston_actuators_admit_air_below_the_piston(name: str) -> None:
    # Common practice: a spring-return piston takes its air under the piston, the spring
    # above it; the air connection (side-right) is on the cylinder wall below the piston line.
    symbol = lib.load_symbol(name)
    pistons = [float(a["y1"]) for a in _shapes(symbol, "line") if a["y1"] == a["y2"] and float(a["x1"]) <= 1.0]
    assert len(pistons) == 1
    assert symbol.ports["side-right"][1] >= pistons[0]


def test_electric_actuator_is_a_circle_with_m() -> None:
    # ISA-5.1 electric motor actuator (from memory): a circle marked M on the stem.
    symbol = lib.load_symbol("actuator-electric")
    (circle,) = _shapes(symbol, "circle")
    strokes = _shapes(symbol, "polyline")
    assert len(strokes) == 1 and len(_points(strokes[0]["points"])) == 5  # the M, four strokes
    assert float(circle["cx"]) == symbol.ports["stem-bottom"][0]


METERS = [k for k, e in devices.MEASURING.items() if e.part.file == "element-meter"]


@pytest.mark.parametrize("kind", METERS)
def test_meter_codes_fit_the_meter_box_at_2_5_mm(kind: devices.MeasuringKind) -> None:
    # docs/design.md §8.4: labels at 2.5 mm; the code must fit the box unsqueezed
    # (DejaVu Sans advance widths, the font the drawings are measured with).
    from loopdocs.draw.text import text_width_mm

    symbol = lib.load_symbol("element-meter")
    x, y, w, h = symbol.text_areas["code"]
    code = devices.MEASURING[kind].code
    assert code and text_width_mm(code, 2.5) <= w
    (box,) = [a for a in _shapes(symbol, "rect") if a.get("fill") == "#ffffff"]
    assert float(box["x"]) <= x and x + w <= float(box["x"]) + float(box["width"])
    assert h >= 0.7 * 2.5


def test_meter_codes_are_distinct() -> None:
    codes = [devices.MEASURING[k].code for k in METERS]
    assert len(codes) == len(set(codes)) == 7


WALL_PARTS = sorted({e.part.file for e in devices.MEASURING.values() if "flange-left" in e.part.ports})


@pytest.mark.parametrize("name", WALL_PARTS)
def test_wall_mounted_parts_hang_from_their_connection(name: str) -> None:
    # Common practice: a probe, antenna, well or seal is drawn on its process connection,
    # the instrument's line leaving from the head at the top middle.
    symbol = lib.load_symbol(name)
    left, right, head, tip = (symbol.ports[p] for p in ("flange-left", "flange-right", "head", "tip"))
    assert left[1] == right[1] and left[0] < head[0] < right[0]
    assert head == (symbol.width_mm / 2, 0.0)
    assert tip[1] >= left[1]  # the sensing end is at or beyond the wall line


def test_earth_bars_get_shorter_downwards() -> None:
    # IEC 60617 S00200 earth, general (from memory): three parallel bars, each shorter.
    symbol = lib.load_symbol("earth")
    bars = sorted((float(a["y1"]), float(a["x2"]) - float(a["x1"])) for a in _shapes(symbol, "line")
                  if a["y1"] == a["y2"])
    assert len(bars) == 3
    assert bars[0][1] > bars[1][1] > bars[2][1] > 0


def test_solenoid_operator_sits_above_the_valve_body() -> None:
    # ISA-5.1 solenoid actuator (from memory): a box marked S on the stem of the valve it
    # moves; here the coil's wires leave the top, the air passes right to left.
    symbol = lib.load_symbol("solenoid-valve")
    coil, air_in, air_out = (symbol.ports[p] for p in ("coil", "signal-in", "air-out"))
    assert coil[1] == 0.0 and air_in[1] == air_out[1] > coil[1]
    assert air_out[0] < coil[0] < air_in[0]
    assert len([t for t in _polygons(symbol) if len(t) == 3]) == 2


def test_air_filter_regulator_passes_air_upwards() -> None:
    # ISO 1219-1 filter (diamond) and pressure regulator (from memory), drawn in a
    # vertical supply line: in at the bottom, out at the top on one vertical.
    symbol = lib.load_symbol("air-filter-regulator")
    assert symbol.ports["in"][0] == symbol.ports["out"][0]
    assert symbol.ports["in"][1] > symbol.ports["out"][1]
    assert any(len(t) == 4 for t in _polygons(symbol))  # the filter diamond


def test_barrier_has_its_field_side_left() -> None:
    # Common practice on loop diagrams: field cable in from the left (hazardous side), the
    # I/O on the right (safe side); the IS mark goes on the field side.
    symbol = lib.load_symbol("barrier")
    x, _, w, _ = symbol.text_areas["label"]
    assert symbol.ports["wire-left"][0] == 0 and symbol.ports["wire-right"][0] == symbol.width_mm
    assert x + w <= symbol.width_mm / 2 + 1.0


# --- line styles ----------------------------------------------------------------------
# ISA-5.1-2009 line symbols (table number not recalled; from memory): electric signal =
# dashed line; pneumatic signal = line with double cross-hatch at intervals; data link =
# line with small circles; process lines heavier than signal lines (common practice).

def test_line_kinds_are_the_four_we_draw() -> None:
    assert set(lib.line_kinds()) == {"electrical", "pneumatic", "data", "process"}


def test_electrical_is_long_dash_without_marks() -> None:
    style = lib.line_style("electrical")
    dash, gap = style.dasharray_mm
    assert dash > gap > 0 and dash >= 2 * style.stroke_width_mm * 4  # long dash
    assert style.mark is None


def test_pneumatic_is_solid_with_double_cross_hatch() -> None:
    style = lib.line_style("pneumatic")
    assert style.dasharray_mm is None and style.mark_spacing_mm > 0
    slashes = _shapes(lib.load_symbol(style.mark), "line")
    assert len(slashes) == 2
    directions = [(float(s["x2"]) - float(s["x1"]), float(s["y2"]) - float(s["y1"])) for s in slashes]
    (ax, ay), (bx, by) = directions
    assert ax * by - ay * bx == pytest.approx(0, abs=1e-9)  # parallel
    assert all(abs(dy) > abs(dx) * 0.5 for dx, dy in directions)  # across the line, not along it


def test_data_link_is_solid_with_small_circles() -> None:
    style = lib.line_style("data")
    assert style.dasharray_mm is None
    (circle,) = _shapes(lib.load_symbol(style.mark), "circle")
    assert 0 < 2 * float(circle["r"]) < style.mark_spacing_mm


def test_process_line_is_heavy_solid() -> None:
    process = lib.line_style("process")
    assert process.dasharray_mm is None and process.mark is None
    signals = [lib.line_style(k) for k in lib.line_kinds() if k != "process"]
    assert all(process.stroke_width_mm > s.stroke_width_mm for s in signals)


@pytest.mark.parametrize("kind", ["electrical", "pneumatic", "data", "process"])
def test_line_svg_is_well_formed_and_uses_the_style(kind: str) -> None:
    style = lib.line_style(kind)
    path = [(0.0, 0.0), (40.0, 0.0), (40.0, 25.0)]
    tree = DET.fromstring(f"<g>{style.svg(path)}</g>", forbid_dtd=True)
    polyline = tree.find("polyline")
    assert float(polyline.get("stroke-width")) == style.stroke_width_mm
    assert _points(polyline.get("points")) == path
    marks = tree.findall("g")
    if style.mark:
        # each straight run carries at least one mark (ISA-5.1: marks at intervals)
        assert len(marks) >= 2
    else:
        assert not marks


@settings(max_examples=200, deadline=None)
@given(
    st.lists(st.tuples(st.integers(-200, 200), st.integers(-200, 200)), min_size=2, max_size=6),
    st.sampled_from([3.0, 10.0, 12.5]),
)
def test_marks_sit_on_runs_at_even_intervals_clear_of_corners(points, spacing_mm) -> None:
    # Common practice: marks repeat at roughly regular intervals along each straight run and
    # are not drawn on corners.
    points = [(float(x), float(y)) for x, y in points]
    marks = lib.mark_positions(points, spacing_mm)
    remaining = list(marks)  # marks come run by run, in path order
    for a, b in zip(points, points[1:]):
        run_mm = math.dist(a, b)
        if run_mm < spacing_mm / 2:
            continue
        count = max(1, math.floor(run_mm / spacing_mm))
        on_run, remaining = remaining[:count], remaining[count:]
        assert len(on_run) == count
        direction_deg = math.degrees(math.atan2(b[1] - a[1], b[0] - a[0]))
        for x, y, angle_deg in on_run:
            assert math.dist(a, (x, y)) + math.dist((x, y), b) == pytest.approx(run_mm, abs=0.01)  # on the run
            assert angle_deg == pytest.approx(direction_deg, abs=0.01)  # turned with the run
        step = run_mm / count
        assert step < 2 * spacing_mm if run_mm >= spacing_mm else step < spacing_mm
        # clear of both ends of the run by half a step
        assert all(min(math.dist(a, m[:2]), math.dist(b, m[:2])) >= step / 2 - 0.01 for m in on_run)
    assert remaining == []


# --- loader -----------------------------------------------------------------------------

def test_each_file_is_read_once() -> None:
    first = lib.load_symbol("bubble-plc")
    before = lib.load_symbol.cache_info()
    assert lib.load_symbol("bubble-plc") is first
    assert lib.load_symbol.cache_info().hits == before.hits + 1
    assert lib.instrument_bubble("plc", "main-panel") is lib.instrument_bubble("plc", "main-panel")


def test_field_location_is_the_bare_bubble() -> None:
    assert lib.instrument_bubble("computer", "field") is lib.load_symbol("bubble-computer")


def test_unknown_names_are_refused_with_the_choices() -> None:
    with pytest.raises(SymbolError, match="no symbol 'valve-gate'"):
        lib.load_symbol("valve-gate")
    with pytest.raises(ValueError, match="main-panel"):
        lib.instrument_bubble("discrete", "roof")
    with pytest.raises(ValueError, match="pneumatic"):
        lib.line_style("hydraulic")
    with pytest.raises(KeyError, match="stem-top"):
        lib.load_symbol("valve-globe").port("tap-high")


def test_entities_and_dtds_are_refused() -> None:
    # defusedxml documentation: entity expansion ("billion laughs") and DTDs are forbidden.
    bomb = (
        '<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;">]>'
        '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 1 1"><title>&b;</title></svg>'
    )
    with pytest.raises(SymbolError, match="not safe"):
        lib.parse_symbol(bomb, "bomb")
    with pytest.raises(SymbolError, match="not safe"):
        lib.parse_symbol('<!DOCTYPE svg><svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 1 1"/>', "dtd")


def test_convention_breaks_are_reported() -> None:
    head = '<svg xmlns="http://www.w3.org/2000/svg" version="1.1" '
    with pytest.raises(SymbolError, match="viewBox"):
        lib.parse_symbol(head + 'viewBox="-1 0 2 2"/>', "offset")
    with pytest.raises(SymbolError, match="port-NAME"):
        lib.parse_symbol(head + 'viewBox="0 0 2 2"><circle class="port" id="left" cx="0" cy="1" r="0"/></svg>', "p")
    with pytest.raises(SymbolError, match="root element"):
        lib.parse_symbol('<svg viewBox="0 0 2 2"/>', "no-namespace")


def test_symbols_dir_can_be_overridden(tmp_path, monkeypatch) -> None:
    monkeypatch.setenv(lib.SYMBOLS_DIR_ENV, str(tmp_path))
    assert lib.symbols_dir() == tmp_path
    monkeypatch.setenv(lib.SYMBOLS_DIR_ENV, str(tmp_path / "missing"))
    with pytest.raises(SymbolError, match="LOOPDOCS_SYMBOLS_DIR"):
        lib.symbols_dir()


def test_symbol_def_and_placement_embed_in_a_document() -> None:
    symbol = devices.valve_symbol()
    document = (
        f'<svg xmlns="{SVG_NS}" viewBox="0 0 100 100"><defs>{symbol.symbol_def("cv")}</defs>'
        f'{symbol.svg_at(50, 50, port="inlet")}{symbol.svg_at(70, 50, port="inlet", rotate_deg=90)}</svg>'
    )
    root = DET.fromstring(document, forbid_dtd=True)
    assert root.find(f"{{{SVG_NS}}}defs/{{{SVG_NS}}}symbol").get("id") == "cv"
    placed = root.findall(f"{{{SVG_NS}}}g")
    x, y = symbol.ports["inlet"]
    assert placed[0].get("transform") == f"translate(50 50) translate({lib.fmt_mm(-x)} {lib.fmt_mm(-y)})"
    assert "rotate(90)" in placed[1].get("transform")


# --- generated outputs ---------------------------------------------------------------------

def test_contact_sheet_and_readme_are_up_to_date(tmp_path) -> None:
    written = _load_script().write_outputs(tmp_path)
    assert [p.name for p in written] == ["contact_sheet.svg", "README.md"]
    for path in written:
        assert path.read_bytes() == (SYMBOLS_DIR / path.name).read_bytes(), (
            f"symbols/{path.name} is stale: run .venv/bin/python symbols/make_contact_sheet.py")


def test_contact_sheet_and_readme_name_every_symbol() -> None:
    sheet = (SYMBOLS_DIR / "contact_sheet.svg").read_text(encoding="utf-8")
    readme = (SYMBOLS_DIR / "README.md").read_text(encoding="utf-8")
    for name in SYMBOL_NAMES:
        assert f">{name}</text>" in sheet
        assert f"`{name}`" in readme
    assert "](contact_sheet.svg)" in readme
    for port in lib.load_symbol("bubble-discrete").ports:  # port names are marked
        assert f">{port}</text>" in sheet
