"""Loop diagrams (``loopdocs.draw.layout``, ``loopdocs.draw.svg``), safe file names and the
``loopdocs draw`` command.

Overlaps and crossings are checked from the layout data (every text, symbol and line is
placed with its box), not from the picture. Sources are given beside each check.
"""

from __future__ import annotations

import math
import os
import subprocess
import sys
from itertools import combinations
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from loopdocs.cli import app
from loopdocs.core.names import MAX_NAME_CHARS, safe_filename, unique_filenames
from loopdocs.draw import devices
from loopdocs.draw import symbols as lib
from loopdocs.draw.layout import SERVICE_WRAP_MM, TEXT_MM, LoopLayout, layout_loop, loop_text
from loopdocs.draw.range_chart import chart_layout, split_groups_to_chart
from loopdocs.draw.svg import svg_document
from loopdocs.draw.text import WIDTHS_BOLD, WIDTHS_BOOK, text_width_mm, wrap_text
from loopdocs.model.groups import build_groups
from loopdocs.model.loading import load_project
from loopdocs.model.tagname import TagKind

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import (  # noqa: E402
    PEN_WIDTHS,
    SVG_NS,
    chart_overlap_problems,
    check_svg11,
    crossing_problems,
    overlap_problems,
    parse_svg,
    write_csv,
)

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"


@pytest.fixture(scope="module")
def example():
    project, _ = load_project(EXAMPLE)
    return project


@pytest.fixture(scope="module")
def layouts(example) -> dict[str, LoopLayout]:
    return {loop_id: layout_loop(example, loop_id) for loop_id in example.loops}


# --- the example project: structure, text, overlaps ------------------------------------------

def test_every_loop_svg_is_valid_svg11(example, layouts):
    for loop_id, layout in layouts.items():
        root = check_svg11(svg_document(layout))
        # sizes in mm, positive (a border-free canvas the sheet renderer places)
        assert layout.width_mm > 50 and layout.height_mm > 20, loop_id
        assert root.find(f"{SVG_NS}title").text == f"Loop {loop_id}"


def test_every_tag_has_a_bubble_with_letters_above_and_number_below(example, layouts):
    # ANSI/ISA-5.1-2009: the tag bubble shows the identification letters in the upper half
    # and the loop number in the lower half (from memory).
    for loop_id, layout in layouts.items():
        svg_texts = {t.text for t in layout.texts}
        for name in example.loops[loop_id].tags:
            tag = example.tags[name]
            bubbles = [s for s in layout.symbols if s.tag == name and s.name.startswith("bubble:")]
            assert len(bubbles) == 1, (loop_id, name)
            owned = {t.role: t for t in layout.texts if t.owner == bubbles[0].name}
            assert owned["tag-func"].text == tag.parts.letters
            assert owned["tag-loop"].text == loop_text(tag)
            assert owned["tag-func"].y < bubbles[0].port("centre")[1] < owned["tag-loop"].y
            assert tag.parts.letters in svg_texts and loop_text(tag) in svg_texts


def test_tag_texts_are_in_the_svg(layouts):
    for layout in layouts.values():
        root = parse_svg(svg_document(layout))
        strings = {e.text for e in root.iter(f"{SVG_NS}text")}
        for t in layout.texts:
            assert t.text in strings


def test_no_text_overlaps_text_symbol_or_line(layouts):
    for loop_id, layout in layouts.items():
        assert overlap_problems(layout) == [], loop_id


def test_lines_are_orthogonal_and_never_cross(layouts):
    for loop_id, layout in layouts.items():
        assert crossing_problems(layout) == [], loop_id


def test_symbols_never_overlap_each_other(layouts):
    for loop_id, layout in layouts.items():
        placed = layout.symbols
        for a, b in combinations(placed, 2):
            # a stacked pair (valve body + actuator) is one symbol; the location overlay too
            assert not a.box.overlaps(b.box, -0.4), (loop_id, a.name, b.name)


def test_ports_used_exist_and_lines_join_symbols_only_at_ports(layouts):
    # Every symbol the layout places names the ports it uses; each exists in the symbol
    # and every file behind it has the ports the library requires.
    for loop_id, layout in layouts.items():
        for s in layout.symbols:
            assert set(s.ports_used) <= set(s.symbol.ports), (loop_id, s.name)
            for part in s.symbol.name.split("+"):
                assert devices.required_ports()[part] <= set(lib.load_symbol(part).ports)
        # a line end inside a symbol's box must be one of its ports (never an offset)
        for line in layout.lines:
            for end in (line.points[0], line.points[-1]):
                for s in layout.symbols:
                    box = s.box.grown(-0.4)
                    if box.x < end[0] < box.right and box.y < end[1] < box.bottom:
                        ports = [s.port(p) for p in s.symbol.ports]
                        assert any(math.dist(end, p) < 1e-6 for p in ports), (loop_id, line.role, s.name, end)


def test_text_sizes_and_pens(layouts):
    # docs/design.md §8.4: text at least 2.5 mm; pens 0.25, 0.35, 0.5, 0.7 mm.
    for layout in layouts.values():
        root = parse_svg(svg_document(layout))
        for element in root.iter():
            if element.get("font-size"):
                assert float(element.get("font-size")) >= 2.5
            if element.get("stroke-width"):
                assert float(element.get("stroke-width")) in PEN_WIDTHS, element.get("stroke-width")


def test_bands_follow_location_and_platform(example, layouts):
    # docs/design.md §8.1: field, junction box, cabinet and control-system bands; empty bands dropped.
    assert [b.key for b in layouts["L-2105"].bands] == ["field", "local"]
    assert [b.key for b in layouts["T-3105"].bands] == ["field", "jb", "cabinet", "control"]
    where = {"TIC-3105": "control", "TT-3105": "field", "TV-3105A": "field", "TT-7401A": "cabinet",
             "LIC-2105": "local", "LV-2105": "field", "PY-4120": "field"}
    for tag, band_key in where.items():
        layout = layouts[example.tags[tag].loop]
        bubble = next(s for s in layout.symbols if s.name == f"bubble:{tag}")
        x = bubble.port("centre")[0]
        band = next(b for b in layout.bands if b.x0 <= x <= b.x1)
        assert band.key == band_key, tag
        # bands do not overlap and run left to right
        assert all(a.x1 <= b.x0 + 1e-6 for a, b in zip(layout.bands, layout.bands[1:]))


def test_location_lines_of_bubbles(layouts):
    # ANSI/ISA-5.1-2009 general instrument symbols (from memory): no line = field mounted;
    # one solid line = primary location, operator accessible (control room); one dashed
    # line = behind the panel (rack room); two lines = auxiliary location (local panel).
    # Display class: circle in a square = shared display/control (DCS).
    expect = {
        "TIC-3105": "bubble-shared+location-main-panel",
        "TT-7401A": "bubble-discrete+location-behind-panel",
        "LIC-2105": "bubble-discrete+location-aux-panel",
        "TT-3105": "bubble-discrete",
        "LSHH-2101": "bubble-discrete",
    }
    all_symbols = {s.name: s for layout in layouts.values() for s in layout.symbols}
    for tag, symbol_name in expect.items():
        assert all_symbols[f"bubble:{tag}"].symbol.name == symbol_name


def test_line_styles_follow_the_signal(layouts):
    # ANSI/ISA-5.1-2009 line symbols (from memory): electric signal dashed, pneumatic with
    # cross hatches, data link for fieldbus, heavy process lines.
    def kinds(layout):
        return {line.kind for line in layout.lines}

    assert {"pneumatic", "electrical", "process", "data"} <= kinds(layouts["P-4120"])
    p6201 = layouts["P-6201"]
    first_row_y = next(s for s in p6201.symbols if s.name == "bubble:PT-6201").port("centre")[1]
    fieldbus = [line for line in p6201.lines if line.role == "signal" and line.points[0][1] == first_row_y]
    assert fieldbus and all(line.kind == "data" for line in fieldbus)
    l2105 = layouts["L-2105"]
    assert [line.kind for line in l2105.lines if line.role == "signal"] == ["pneumatic"]


def test_valves_show_fail_position_air_action_and_wiring(example, layouts):
    # ISA-5.1 fail action letters FC/FO/FL beside the valve (from memory); terminals,
    # cables and I/O addresses as in the index.
    for loop_id, layout in layouts.items():
        texts = [t for t in layout.texts]
        strings = {t.text for t in texts}
        for name in example.loops[loop_id].tags:
            tag = example.tags[name]
            if tag.kind is TagKind.FINAL_ELEMENT:
                valve = next(s for s in layout.symbols if s.name == f"valve:{name}")
                near = [t for t in texts if math.dist(t.box.centre, valve.box.centre) < 20]
                assert tag.fail_position.value in {t.text for t in near if t.role == "fail-position"}
                assert tag.air_action.value in {t.text for t in near if t.role == "air-action"}
            if tag.cable and (tag.jb or tag.cabinet):
                assert any(s == tag.cable or s.startswith(tag.cable + " (") for s in strings), (loop_id, name)  # cores follow in brackets
            if tag.jb_terminals:
                assert tag.jb_terminals in strings
            if tag.cabinet_terminals:
                assert tag.cabinet_terminals.rsplit(":", 1)[-1] in strings
            if tag.io_address:
                assert tag.io_address in strings


def test_positioners_on_one_output_are_drawn_in_series(layouts):
    # T-5310: both positioners land on cabinet terminals X3:51-52 and one AO (a
    # positioner split shares one output, docs/design.md §4.3). ISA-5.4 loop diagram, common
    # practice: the loop current flows through each positioner in turn, so the drawing
    # shows output + to TV-5310A, a link from TV-5310A's - terminal (JB 6) to
    # TV-5310B's + terminal (JB 7), and TV-5310B back to output -; no tee, no junction dot.
    layout = layouts["T-5310"]
    cabinet_cells = [s for s in layout.symbols if s.symbol.name == "terminal-cabinet"]
    assert len(cabinet_cells) == 2  # TT-5310's and the shared one
    assert sum(1 for f in layout.frames if f.role == "io") == 2
    assert not any(line.role == "connector" for line in layout.lines)
    assert not layout.dots  # a junction dot would mean the positioners are in parallel
    roles = [line.role for line in layout.lines]
    assert roles.count("series-plus") == 1 and roles.count("series-link") == 1 and roles.count("series-return") == 1
    texts = {t.text for t in layout.texts}
    assert {"link 6-7", "+", "\u2212", "2 positioners in series"} <= texts


def test_valves_on_one_ip_hang_on_a_pneumatic_header(layouts):
    layout = layouts["P-4120"]
    connectors = [line for line in layout.lines if line.role == "connector"]
    assert len(connectors) == 2 and all(line.kind == "pneumatic" for line in connectors)
    xs = {line.points[-1][0] for line in connectors}
    assert len(xs) == 1  # one header


def test_long_service_wraps(tmp_path):
    long = "Brew kettle number two wort outlet to whirlpool transfer line isolation and flow trim valve"
    rows = [
        {"tag": "FIC-501", "location": "control room", "platform": "dcs", "signal": "4-20 mA", "service": "Wort transfer"},
        {"tag": "FV-501", "service": long, "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
         "driven_by": "FIC-501", "location": "field", "platform": "device"},
    ]
    project, _ = load_project(write_csv(tmp_path / "index.csv", rows))
    layout = layout_loop(project, "F-501")
    service = [t for t in layout.texts if t.role == "service"]
    assert len(service) >= 2
    assert all(t.box.width <= SERVICE_WRAP_MM + 1e-6 for t in service)
    assert " ".join(t.text for t in service) == long  # every word kept, in order
    assert overlap_problems(layout) == []


def test_deterministic_bytes_also_across_processes(example, tmp_path):
    # Same input, same bytes (diffs and caches rely on it): twice in this process, and in
    # a fresh interpreter with another hash seed (set and dict order must not leak in).
    first = svg_document(layout_loop(example, "T-3105"))
    assert svg_document(layout_loop(example, "T-3105")) == first
    code = ("import sys; from pathlib import Path; from loopdocs.model.loading import load_project; "
            "from loopdocs.draw.layout import layout_loop; from loopdocs.draw.svg import svg_document; "
            "p, _ = load_project(Path(sys.argv[1])); sys.stdout.write(svg_document(layout_loop(p, 'T-3105')))")
    env = dict(os.environ, PYTHONHASHSEED="12345")
    out = subprocess.run([sys.executable, "-c", code, str(EXAMPLE)], capture_output=True, text=True, env=env,
                         check=True, cwd=REPO)
    assert out.stdout == first


def test_svg_renders_with_cairosvg(layouts):
    cairosvg = pytest.importorskip("cairosvg")
    for layout in layouts.values():
        png = cairosvg.svg2png(bytestring=svg_document(layout).encode("utf-8"))
        assert png[:8] == b"\x89PNG\r\n\x1a\n"


# --- shapes beyond the example: random loops -------------------------------------------------

DEVICE_TYPES = {"T": [None, "thermowell"], "F": [None, "magnetic", "vortex", "Coriolis", "ultrasonic", "thermal mass",
                                                "variable area", "turbine", "positive displacement", "DP"],
                "P": [None, "pressure"], "L": [None, "radar", "guided-wave radar", "displacer", "hydrostatic",
                                               "capacitance", "float"]}
ANALYSERS = ["pH", "conductivity", "oxygen", "analyser"]


@st.composite
def installation(draw) -> dict:
    """Random installation columns of one device (issue 11): cores, screen, supply,
    barrier, area class, interlock."""
    out: dict = {}
    if draw(st.booleans()):
        out["cores"] = draw(st.sampled_from(["1+ 2- S", "3+ 4-", "pair 2"]))
        out["shield"] = draw(st.sampled_from(["cabinet", "field", "both", "none"]))
    if draw(st.booleans()):
        out["wires"] = draw(st.sampled_from(["2-wire", "4-wire"]))
        out["power_source"] = draw(st.sampled_from([None, "24 V DC PSU-1 F3", "230 V AC DB-2 way 14"]))
    if draw(st.booleans()):
        out["barrier"] = draw(st.sampled_from(["BR-7 zener", "IS isolator KFD-1 two channel"]))
        out["area_class"] = draw(st.sampled_from(["Zone 1 IIC T4", "Class I Div 2"]))
    if draw(st.booleans()):
        out["interlock"] = draw(st.sampled_from(["C&E 12", "I-710 pump trip"]))
    return out


@st.composite
def loop_rows(draw):
    """A loop of 0 to 2 transmitters (with or without a primary element, a random Device
    Type, alarms), an optional switch with its set point, an optional controller, 0 to 4
    valves (electrical or on an I/P; random body, actuator and accessories, some with
    rows of their own), random wiring, installation columns and services."""
    variable = draw(st.sampled_from(["T", "F", "P", "L"]))
    number = "710"
    words = st.lists(st.sampled_from(["mash", "tun", "wort", "kettle", "glycol", "return", "header",
                                      "pressure", "valve", "supply", "number", "three"]), min_size=1, max_size=9)
    rows: list[dict] = []
    wiring_index = [0]

    def wiring(tag_rows: dict) -> dict:
        wiring_index[0] += 1
        k = wiring_index[0]
        out = {}
        if draw(st.booleans()):
            out["jb"] = draw(st.sampled_from(["JB-7", "JB-8"]))
            if draw(st.booleans()):
                out["jb_terminals"] = f"{2 * k - 1}-{2 * k}"
        if draw(st.booleans()):
            out["cabinet"] = "CAB9"
            if draw(st.booleans()):
                out["cabinet_terminals"] = draw(st.sampled_from([f"X1:{k}1-{k}2", "X2:01-02"]))
        if draw(st.booleans()):
            out["io_address"] = draw(st.sampled_from([f"CAB9-R1-S0{k}-CH01", "CAB9-R2-S01-CH01"]))
        if draw(st.booleans()):
            out["cable"] = f"C-{number}-{k}"
        return out

    n_tx = draw(st.integers(0, 2))
    for i in range(n_tx):
        suffix = "AB"[i] if n_tx > 1 else ""
        location = draw(st.sampled_from(["field", "field", "rack room"]))
        sensor = draw(st.sampled_from([None, "Pt100", "TC-K"])) if variable == "T" else None
        device_type = draw(st.sampled_from(DEVICE_TYPES[variable]))
        alarms = {k: v for k, v in (("alarm_l", 10), ("alarm_h", 80), ("alarm_hh", 90)) if draw(st.booleans())}
        rows.append({"tag": f"{variable}T-{number}{suffix}", "location": location, "platform": "device",
                     "signal": draw(st.sampled_from(["4-20 mA", "4-20 mA HART", "fieldbus"])),
                     "sensor": sensor, "range_low": 0, "range_high": 100, "units": "%", "device_type": device_type,
                     "service": " ".join(draw(words)), **alarms, **wiring({}), **draw(installation())})
        if variable in ("T", "F") and draw(st.booleans()):
            rows.append({"tag": f"{variable}E-{number}{suffix}", "location": "field", "platform": "device",
                         "signal": "RTD" if variable == "T" else "none", "service": " ".join(draw(words)),
                         "device_type": draw(st.sampled_from(DEVICE_TYPES[variable]))})
    if draw(st.booleans()):
        high = draw(st.booleans())
        rows.append({"tag": f"{variable}S{'H' if high else 'L'}-{number}", "location": "field", "platform": "device",
                     "signal": "discrete", "set_point": 50.0, "reset": 45.0 if high else 55.0, "units": "%",
                     "device_type": draw(st.sampled_from(DEVICE_TYPES[variable] + ANALYSERS)), **wiring({}),
                     **draw(installation())})
    controller = None
    if draw(st.booleans()):
        local = draw(st.booleans())
        controller = f"{variable}IC-{number}"
        rows.append({"tag": controller, "location": "local panel" if local else "control room",
                     "platform": "device" if local else "dcs", "signal": "3-15 psig" if local else "4-20 mA",
                     "control_action": "reverse", "io_address": None if local else f"CAB9-R3-S01-CH0{len(rows)}"})
    n_valves = draw(st.integers(0, 4))
    relay = n_valves > 0 and controller is not None and draw(st.booleans())
    if relay:
        rows.append({"tag": f"{variable}Y-{number}", "location": "field", "platform": "device", "signal": "3-15 psig",
                     "driven_by": controller, "service": "I/P converter", **wiring({})})
    method = draw(st.sampled_from(["dcs", "positioner"]))
    for i in range(n_valves):
        suffix = "ABCD"[i] if n_valves > 1 else ""
        accessories = draw(st.lists(st.sampled_from(["SOV", "open limit switch", "closed limit switch", "booster",
                                                     "lock-up", "AFR", "position transmitter"]),
                                    max_size=4, unique=True))
        valve = {"tag": f"{variable}V-{number}{suffix}", "location": "field", "platform": "device",
                 "air_action": draw(st.sampled_from(["ATO", "ATC"])), "fail_position": draw(st.sampled_from(["FC", "FO"])),
                 "driven_by": controller, "service": " ".join(draw(words)),
                 "co_start_pct": 100 * i / n_valves, "co_end_pct": 100 * (i + 1) / n_valves,
                 "valve_body": draw(st.sampled_from([None, "globe", "angle", "butterfly", "ball", "segmented ball",
                                                     "eccentric plug", "diaphragm", "three-way"])),
                 "actuator": draw(st.sampled_from([None, "spring-diaphragm", "spring-return piston",
                                                   "double-acting piston", "electric", "hydraulic"])),
                 "accessories": ", ".join(accessories) or None,
                 "air_supply": draw(st.sampled_from([None, "header H-2"])),
                 "valve_size": draw(st.sampled_from([None, "DN50", '3"'])), "cv": draw(st.sampled_from([None, 46]))}
        for letters, item in (("XY", "SOV"), ("ZSO", "open limit switch")):
            if item in accessories and draw(st.booleans()):
                rows.append({"tag": f"{letters}-{number}{suffix}", "loop": f"{variable}-{number}",
                             "location": "field", "platform": "device", "signal": "discrete", **wiring({})})
        if relay:
            valve.update({"signal": "3-15 psig", "split_method": "pneumatic", "input_low": 3 + 12 * i / n_valves,
                          "input_high": 3 + 12 * (i + 1) / n_valves, "input_units": "psig"})
        else:
            valve.update({"signal": "4-20 mA", "split_method": method, **wiring({}), **draw(installation())})
        rows.append(valve)
    if not rows:
        rows.append({"tag": f"{variable}I-{number}", "location": "field", "platform": "device"})
    return rows


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(rows=loop_rows())
def test_random_loops_have_no_overlaps_or_crossings(tmp_path_factory, rows):
    path = write_csv(tmp_path_factory.mktemp("loop") / "index.csv", rows)
    project, _ = load_project(path)
    for loop_id in project.loops:
        layout = layout_loop(project, loop_id)
        assert overlap_problems(layout) == [], rows
        assert crossing_problems(layout) == [], rows
        for name in project.loops[loop_id].tags:
            assert any(s.name == f"bubble:{name}" for s in layout.symbols), name
        check_svg11(svg_document(layout))
    # the range chart of each split in these loops: no text overlaps a text, leaves the
    # canvas or crosses a dark line (the same legibility rule as the diagrams)
    for group in split_groups_to_chart(build_groups(project)):
        assert chart_overlap_problems(chart_layout(group)) == [], rows


# --- text measuring ---------------------------------------------------------------------------

def test_width_table_matches_the_font_file():
    # The advance widths are DejaVu Sans's own (hmtx table); compare with the installed font.
    ttlib = pytest.importorskip("fontTools.ttLib")
    folder = Path("/usr/share/fonts/truetype/dejavu")
    for file, table in (("DejaVuSans.ttf", WIDTHS_BOOK), ("DejaVuSans-Bold.ttf", WIDTHS_BOLD)):
        if not (folder / file).is_file():
            pytest.skip("DejaVu Sans not installed")
        font = ttlib.TTFont(folder / file)
        cmap, hmtx = font.getBestCmap(), font["hmtx"]
        assert font["head"].unitsPerEm == 2048
        for ch, width in table.items():
            assert hmtx[cmap[ord(ch)]][0] == width, (file, ch)


def test_text_width_and_wrap():
    # 10 digits of DejaVu Sans at 2.5 mm: 10 * 1303/2048 * 2.5 mm (hmtx advance widths)
    assert math.isclose(text_width_mm("0123456789", 2.5), 10 * 1303 / 2048 * 2.5)
    lines = wrap_text("one two three four five six seven eight nine ten", 20.0, TEXT_MM)
    assert all(text_width_mm(line, TEXT_MM) <= 20.0 for line in lines)
    assert " ".join(lines) == "one two three four five six seven eight nine ten"
    assert wrap_text("a b c d e f g h i j k l m n o p", 6.0, TEXT_MM, max_lines=2)[-1].endswith("...")


# --- safe file names ----------------------------------------------------------------------------

@pytest.mark.parametrize("text", ["../x", "..", ".hidden", "CON", "con.svg", "Lpt1", "a/b\\c", "T-3105",
                                  "L" * 300, "Füllstand Ü-100", "日本語", "", " ", "a:b*c?d", "x.", "-rf"])
def test_safe_filename_on_nasty_inputs(text):
    # Portable file name characters (POSIX.1-2017, 3.282); Windows reserved device names
    # and trailing dots (Microsoft "Naming Files, Paths, and Namespaces").
    name = safe_filename(text)
    assert name and all(c.isascii() and (c.isalnum() or c in "._-") for c in name)
    assert not name.startswith((".", "-")) and not name.endswith(".")
    assert name.split(".")[0].upper() not in {"CON", "PRN", "AUX", "NUL", *(f"COM{i}" for i in range(10)),
                                              *(f"LPT{i}" for i in range(10))}
    assert len(name) <= MAX_NAME_CHARS
    assert "/" not in name and "\\" not in name


def test_safe_filename_keeps_good_names_and_separates_others():
    assert safe_filename("T-3105") == "T-3105"
    assert safe_filename("41-TIC-3105.A") == "41-TIC-3105.A"
    assert safe_filename("a/b") != safe_filename("a\\b") != safe_filename("a_b")
    assert safe_filename("L" * 300) != safe_filename("L" * 301)
    names = unique_filenames(["t-1", "T-1", "T_1", "T/1"])
    assert len({n.casefold() for n in names.values()}) == 4


# --- the command ----------------------------------------------------------------------------------

def test_draw_command_writes_every_loop_and_chart(tmp_path, example):
    runner = CliRunner()
    out = tmp_path / "out"
    result = runner.invoke(app, ["draw", str(EXAMPLE), "--out", str(out)])
    assert result.exit_code == 0, result.output
    files = sorted(p.name for p in out.iterdir())
    assert [f for f in files if f.endswith(".loop.svg")] == sorted(f"{loop}.loop.svg" for loop in example.loops)
    split_loops = sorted(g.loop for g in build_groups(example) if g.is_split)
    assert [f for f in files if f.endswith(".range.svg")] == [f"{loop}.range.svg" for loop in split_loops]
    for f in out.iterdir():
        check_svg11(f.read_text(encoding="utf-8"))
    assert not [p for p in out.iterdir() if p.name.startswith(".")]  # no temporary files left
    again = runner.invoke(app, ["draw", str(EXAMPLE), "--out", str(out)])
    assert again.exit_code == 0 and f"({len(files)} unchanged)" in again.output
    missing = runner.invoke(app, ["draw", str(tmp_path / "nothing-here"), "--out", str(out)])
    assert missing.exit_code == 2


def test_check_does_not_import_drawing_libraries():
    code = ("import sys; from pathlib import Path; from loopdocs.cli import app; "
            "from loopdocs.checks import check_project; check_project(Path(sys.argv[1])); "
            "print(sorted(m for m in sys.modules if m.startswith(('svgwrite', 'cairosvg', 'loopdocs.draw'))))")
    out = subprocess.run([sys.executable, "-c", code, str(EXAMPLE)], capture_output=True, text=True, check=True,
                         cwd=REPO)
    assert out.stdout.strip() == "[]"


def test_rows_nest_beside_what_hangs_below_the_row_above(example):
    # Skyline stacking (common practice in drafting: what is drawn keeps clear, not the
    # rows' bounding boxes): a row rises beside a valve body hanging below the row above,
    # never across that row's line (no text on a line), and nothing overlaps or crosses. L-2101's switch row
    # (its trip and interlock texts above its bubble) rises beside LV-2101B's body.
    from loopdocs.draw.layout import LoopLayout
    from loopdocs.draw.placement import MARGIN_MM, HEADER_MM, ROW_GAP_MM, place
    from loopdocs.draw.stations import build_rows, series_groups, series_notes

    saved = {}
    for loop_id in example.loops:
        rows, parts, fn_row = build_rows(example, loop_id)
        series_notes(rows, example.tags)
        series_groups(rows, example.tags)
        layout = LoopLayout(loop_id=loop_id)
        place(layout, rows, parts, fn_row)
        stacked = MARGIN_MM + HEADER_MM + sum(r.top_mm + r.bottom_mm for r in rows) + ROW_GAP_MM * (len(rows) - 1) + MARGIN_MM
        assert layout.height_mm <= stacked + 1e-6, loop_id
        saved[loop_id] = stacked - layout.height_mm
        # rows keep their order, each line at least a row gap plus its own top below the line above
        for above, row in zip(rows, rows[1:]):
            assert row.y >= above.y + ROW_GAP_MM + min(row.top_mm, 3.0) - 1e-6, loop_id
        assert overlap_problems(layout) == [], loop_id
        assert crossing_problems(layout) == [], loop_id
    # on the example, the split loop whose switch row nests is more than 10 mm shorter
    assert saved["L-2101"] > 10.0


def test_series_link_runs_clear_of_a_screen_earth_label(tmp_path):
    # Found by test_random_loops_have_no_overlaps_or_crossings: two positioners in series
    # on one output (ISA-5.4 loop diagram: each wired as built), the first cable's screen
    # earthed in the cabinet (Shield = cabinet). The link between the two cabinet
    # terminals ran down through the "screen" label hung below the first terminal; nothing
    # on a drawing may cross a text (common practice).
    valve = {"location": "field", "platform": "device", "air_action": "ATO", "fail_position": "FC",
             "driven_by": "TIC-710", "service": "mash", "signal": "4-20 mA", "split_method": "positioner",
             "cabinet": "CAB9"}
    rows = [
        {"tag": "TIC-710", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
         "control_action": "reverse", "io_address": "CAB9-R3-S01-CH03"},
        {"tag": "TV-710A", **valve, "co_start_pct": 0.0, "co_end_pct": 50.0, "cores": "1+ 2- S", "shield": "cabinet"},
        {"tag": "TV-710B", **valve, "co_start_pct": 50.0, "co_end_pct": 100.0},
    ]
    project, _ = load_project(write_csv(tmp_path / "index.csv", rows))
    layout = layout_loop(project, "T-710")
    assert any(t.role == "screen" for t in layout.texts)
    link = next(line for line in layout.lines if line.role == "series-link")
    screen = next(t.box for t in layout.texts if t.role == "screen")
    assert min(x for x, _ in link.points[1:3]) > screen.right  # the link's vertical run is right of the label
    assert overlap_problems(layout) == []
    assert crossing_problems(layout) == []


def test_a_row_below_stays_clear_of_an_orifice_impulse_line(tmp_path):
    # Found by test_random_loops_have_no_overlaps_or_crossings: a DP flow transmitter
    # over an orifice (ISA-5.1 flow element with impulse lines to the transmitter) and a
    # second transmitter in the row below. The row below rose beside the orifice and its
    # range text sat on the low-pressure impulse line; nothing on a drawing may cross a
    # text (common practice).
    ft = {"location": "field", "platform": "device", "signal": "4-20 mA", "range_low": 0, "range_high": 100,
          "units": "%", "service": "mash"}
    rows = [{"tag": "FT-710A", **ft},
            {"tag": "FE-710A", "location": "field", "platform": "device", "signal": "none", "service": "mash"},
            {"tag": "FT-710B", **ft}]
    project, _ = load_project(write_csv(tmp_path / "index.csv", rows))
    layout = layout_loop(project, "F-710")
    impulse = [line for line in layout.lines if line.role == "impulse"]
    assert impulse
    assert overlap_problems(layout) == []
    assert crossing_problems(layout) == []


def test_a_row_below_a_cabinet_stays_under_its_whole_outline(tmp_path):
    # Found by test_random_loops_have_no_overlaps_or_crossings: a cabinet whose outline
    # runs across its barrier column because one row has an IS barrier (ISA-5.4 loop
    # diagram: the cabinet drawn as one enclosure) and a rack-room transmitter in the row
    # below, in the barrier column. The transmitter's row rose beside the second row's
    # terminals and its range text sat on the outline's bottom edge; nothing on a drawing
    # may cross a text (common practice).
    valve = {"location": "field", "platform": "device", "air_action": "ATO", "fail_position": "FC",
             "service": "mash", "signal": "4-20 mA", "split_method": "dcs", "cabinet": "CAB9"}
    pt = {"platform": "device", "signal": "4-20 mA", "range_low": 0, "range_high": 100, "units": "%", "service": "mash"}
    rows = [{"tag": "PT-710A", "location": "rack room", **pt},
            {"tag": "PT-710B", "location": "field", **pt},
            {"tag": "PV-710A", **valve, "co_start_pct": 0.0, "co_end_pct": 50.0, "barrier": "BR-7 zener",
             "area_class": "Zone 1 IIC T4"},
            {"tag": "PV-710B", **valve, "co_start_pct": 50.0, "co_end_pct": 100.0}]
    project, _ = load_project(write_csv(tmp_path / "index.csv", rows))
    layout = layout_loop(project, "P-710")
    assert any(f.role == "enclosure-cabinet" for f in layout.frames)
    assert overlap_problems(layout) == []
    assert crossing_problems(layout) == []
