"""Loop diagram layout: where every symbol, line and text of one loop goes, in mm.

The diagram reads left to right through the places a signal passes (docs/design.md §8.1): field,
local panel, junction box, cabinet (marshalling and rack-mounted devices) and control
system, each a vertical band; bands with nothing in them are left out. Each device of
the loop gets a horizontal *row*: its signal line runs straight along the row through
its junction-box terminal, its cabinet terminal and its I/O channel to the controller,
so lines are orthogonal and never cross:

- a primary element (TE, FE) sits left of the transmitter it feeds, in the same row;
- the controller (or indicator) sits in the row of its first output (or last input);
  input rows join it from above through its top, further outputs from below;
- outputs that share a terminal or an I/O channel join the row above with a vertical
  connector just before the shared item; positioners in series on one output (a
  positioner split) are drawn as wired instead: output +, each positioner + and - in
  turn (a link between their terminals), back to output - (:func:`_series_wires`);
- valves moved by one I/P converter hang on a pneumatic header left of the converter.

Every text is placed from a measured box (``loopdocs.draw.text``) and the layout is
returned as data (:class:`LoopLayout`, a :class:`~loopdocs.draw.geometry.Drawing`), so
tests check overlaps from the data; ``loopdocs.draw.svg`` writes it. Nothing here is
random or dated: the same project gives the same layout.

Symbols and their ports come from ``symbols/`` (``loopdocs.draw.symbols``); instrument
bubbles follow ISA-5.1 (display class by platform, location line by location: control
room = primary location, rack room = behind the panel, local panel = auxiliary location).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable

from loopdocs.draw.geometry import (
    LINE_HALF_WIDTH_MM,
    THIN_MM,
    Dot,
    Drawing,
    Frame,
    Path,
    PlacedSymbol,
    PlacedText,
    Point,
    Rect,
    SignalLine,
)
from loopdocs.draw.symbols import control_valve, instrument_bubble, load_symbol
from loopdocs.draw.text import ASCENT_EM, DESCENT_EM, text_width_mm, wrap_text
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Location, Platform, Signal, SplitMethod, Transfer

# --------------------------------------------------------------------------- sizes, mm

TEXT_MM = 2.5
"""Font size of every label (the bubble text areas of the symbol library are drawn for it)."""
TITLE_MM = 3.5
LINE_PITCH_MM = 3.3
"""Baseline to baseline of wrapped lines."""
MARGIN_MM = 3.0
HEADER_MM = 8.0
ROW_GAP_MM = 5.0
COLUMN_GAP_MM = 10.0
LABEL_MARGIN_MM = 1.5
CONNECTOR_INSET_MM = 3.5
"""Distance of a merge connector or pneumatic header from the item it joins."""
ENCLOSURE_PAD_MM = 2.0
SERVICE_WRAP_MM = 36.0
WIRE_OFFSET_MM = 1.2
"""Half the distance between the + and - wires of a series loop (terminal units are 4 mm tall)."""
AIR_GAP_MM = 3.0
PIPE_STUB_MM = 5.0

COLUMNS = ("F0", "F1", "L", "J", "C0", "C1", "S0", "S1")
"""Columns left to right: field process side (elements, valves), field instruments, local
panel, junction-box terminals, cabinet terminals, rack-mounted devices, I/O channels,
control functions."""
BAND_OF_COLUMN = {"F0": "field", "F1": "field", "L": "local", "J": "jb", "C0": "cabinet",
                  "C1": "cabinet", "S0": "control", "S1": "control"}
BANDS = ("field", "local", "jb", "cabinet", "control")
BAND_TITLES = {"field": "Field", "local": "Local panel", "jb": "Junction box",
               "cabinet": "Cabinet", "control": "Control system"}
MERGE_COLUMNS = ("J", "C0", "S0")

_DISPLAY_BY_PLATFORM = {Platform.DCS: "shared", Platform.PLC: "plc", Platform.SIS: "plc",
                        Platform.COMPUTER: "computer", Platform.DEVICE: "discrete"}
_OVERLAY_BY_LOCATION = {Location.FIELD: "field", Location.CONTROL_ROOM: "main-panel",
                        Location.RACK_ROOM: "behind-panel", Location.LOCAL_PANEL: "aux-panel"}
_DEFAULT_OVERLAY_BY_BAND = {"field": "field", "local": "aux-panel", "jb": "field",
                            "cabinet": "behind-panel", "control": "main-panel"}


# --------------------------------------------------------------------------- public data


@dataclass(frozen=True)
class Band:
    """One vertical area of the diagram, ``x0`` to ``x1`` mm."""

    key: str
    title: str
    x0: float
    x1: float


@dataclass
class LoopLayout(Drawing):
    """The placed diagram of one loop (a :class:`Drawing`) and what it shows."""

    loop_id: str = ""
    bands: list[Band] = field(default_factory=list)
    tags: list[str] = field(default_factory=list)
    """Every tag of the loop, in index order; each has a bubble in the drawing."""


# --------------------------------------------------------------------------- helpers


def fmt_number(value: float) -> str:
    """A number for a label: at most 2 decimals, no trailing zeros.

    >>> fmt_number(11.68), fmt_number(4.0), fmt_number(-5), fmt_number(8.333)
    ('11.68', '4', '-5', '8.33')
    """
    text = f"{round(float(value), 2) + 0.0:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def line_kind(signal: Signal | None) -> str:
    """Line style for a signal (docs/design.md §8.1; ISA-5.1 line symbols).

    >>> line_kind(Signal.PSIG_3_15), line_kind(Signal.FIELDBUS), line_kind(Signal.MA_4_20_HART)
    ('pneumatic', 'data', 'electrical')
    """
    if signal is None:
        return "electrical"
    if signal.is_pneumatic:
        return "pneumatic"
    if signal is Signal.FIELDBUS:
        return "data"
    if signal is Signal.NONE:
        return "connection"
    return "electrical"


def band_of(tag: Tag) -> str:
    """The band a device is drawn in, from its Location and Platform."""
    location, platform = tag.location, tag.platform
    hosted = platform in (Platform.DCS, Platform.PLC, Platform.SIS, Platform.COMPUTER)
    if location is Location.FIELD:
        return "field"
    if location is Location.LOCAL_PANEL:
        return "local"
    if location is Location.RACK_ROOM:
        return "control" if hosted else "cabinet"
    if location is Location.CONTROL_ROOM:
        return "control"
    # Location blank: a hosted function lives in the control system, anything else in the field.
    return "control" if hosted else "field"


def bubble_style(tag: Tag, band: str) -> tuple[str, str]:
    """(display class, location overlay) of the tag's ISA-5.1 bubble."""
    if band == "field":
        return "discrete", "field"
    display = _DISPLAY_BY_PLATFORM.get(tag.platform, "discrete") if tag.platform else (
        "shared" if band == "control" else "discrete")
    overlay = _OVERLAY_BY_LOCATION.get(tag.location) if tag.location else None
    return display, overlay or _DEFAULT_OVERLAY_BY_BAND[band]


def loop_text(tag: Tag) -> str:
    """The lower line of a tag bubble: area, number and suffix (``3105A``, ``41-3105``)."""
    parts = tag.parts
    number = f"{parts.number}{parts.suffix}"
    return f"{parts.area}-{number}" if parts.area else number


def _label_height() -> float:
    return (ASCENT_EM + DESCENT_EM) * TEXT_MM


def _text(text: str, x: float, y: float, anchor: str = "start", role: str = "label", owner: str = "",
          size: float = TEXT_MM, bold: bool = False, fit: float | None = None) -> PlacedText:
    return PlacedText(text, x, y, size, anchor, bold, role, owner, fit)


def _stack_lines(lines: list[str], x: float, top: float, anchor: str, role: str) -> list[PlacedText]:
    """Text lines whose first box top is at ``top``."""
    first = top + ASCENT_EM * TEXT_MM
    return [_text(line, x, first + i * LINE_PITCH_MM, anchor, role) for i, line in enumerate(lines)]


def _stack_height(count: int) -> float:
    return 0.0 if count == 0 else (count - 1) * LINE_PITCH_MM + _label_height()


# --------------------------------------------------------------------------- clusters


@dataclass
class Cluster:
    """What one station of a row draws, in row coordinates (row line at y = 0, the
    column's alignment line at x = 0), and where lines join it."""

    drawing: Drawing
    attach_in: Point | None = None
    attach_out: Point | None = None
    out_path: tuple[Point, ...] = ()
    """Points a line to the right starts with, before reaching the row line (FE taps)."""
    points: dict[str, Point] = field(default_factory=dict)
    pad_mm: float = 0.0

    @property
    def box(self) -> Rect:
        return self.drawing.content_box().grown(self.pad_mm) if self.pad_mm else self.drawing.content_box()

    def reach_near_line(self, half_height_mm: float) -> tuple[float, float]:
        """Leftmost and rightmost x of what the cluster draws within ``half_height_mm``
        of the row line (where line labels go), padding included."""
        d = self.drawing
        boxes = [s.box for s in d.symbols] + [t.box for t in d.texts] + [f.rect for f in d.frames]
        for line in d.lines:
            boxes += line.segment_boxes()
        near = [b for b in boxes if b.y < half_height_mm and b.bottom > -half_height_mm]
        if not near:
            return (0.0, 0.0)
        return (min(b.x for b in near) - self.pad_mm, max(b.right for b in near) + self.pad_mm)


def _bubble(tag: Tag, band: str, role: str) -> tuple[PlacedSymbol, list[PlacedText]]:
    display, overlay = bubble_style(tag, band)
    symbol = instrument_bubble(display, overlay)
    placed = PlacedSymbol(symbol, 0.0, 0.0, anchor="centre", role=role, tag=tag.tag,
                          ports_used=("centre", "left", "right", "top", "bottom", "tag-func", "tag-loop"),
                          name=f"bubble:{tag.tag}")
    texts = []
    for port, text in (("tag-func", tag.parts.letters), ("tag-loop", loop_text(tag))):
        x, y = placed.port(port)
        area = symbol.text_areas[port]
        texts.append(_text(text, x, y, "middle", role=port, owner=placed.name, fit=area[2]))
    return placed, texts


def _range_text(tag: Tag) -> str | None:
    if not tag.has_range:
        return None
    text = f"{fmt_number(tag.range_low)} to {fmt_number(tag.range_high)}"
    if tag.units:
        text += f" {tag.units}"
    if tag.transfer is Transfer.SQRT:
        text += ", sqrt"
    return text


def _service_lines(tag: Tag, loop_service: str | None) -> list[str]:
    """The tag's service, wrapped; left out when it only repeats the loop's service
    (the sheet's title gives that), except for final elements, which it tells apart."""
    if not tag.service or (tag.service == loop_service and tag.kind is not TagKind.FINAL_ELEMENT):
        return []
    return wrap_text(tag.service, SERVICE_WRAP_MM, TEXT_MM, max_lines=4, balanced=True)


def instrument_cluster(tag: Tag, band: str, above: Iterable[str] = (), below: Iterable[str] = (),
                       right: Iterable[str] = (), right_above: str | None = None,
                       enclosure_title: str | None = None, pad_mm: float = 0.0) -> Cluster:
    """A tag bubble centred on the row line with texts above, below and to its right;
    ``enclosure_title`` (the cabinet a rack-mounted device is in) goes top left."""
    drawing = Drawing()
    placed, texts = _bubble(tag, band, "instrument")
    drawing.symbols.append(placed)
    drawing.texts += texts
    box = placed.box
    above_lines = [line for line in above if line]
    if above_lines:
        top = box.y - 1.0 - _stack_height(len(above_lines))
        drawing.texts += _stack_lines(above_lines, 0.0, top, "middle", "annotation")
    below_lines = [line for line in below if line]
    if below_lines:
        drawing.texts += _stack_lines(below_lines, 0.0, box.bottom + 1.0, "middle", "annotation")
    right_lines = [line for line in right if line]
    if right_lines:
        top = -_stack_height(len(right_lines)) / 2
        drawing.texts += _stack_lines(right_lines, box.right + 1.5, top, "start", "annotation")
    if right_above:
        # ISA-5.1: a function designation (I/P) stands outside the bubble, upper right.
        drawing.texts.append(_text(right_above, box.right + 1.0, box.y + ASCENT_EM * TEXT_MM, "start", "function"))
    if enclosure_title:
        content = drawing.content_box()
        drawing.texts.append(_text(enclosure_title, content.x, content.y - 0.8 - DESCENT_EM * TEXT_MM,
                                   "start", "enclosure-title"))
    return Cluster(drawing, attach_in=placed.port("left"), attach_out=placed.port("right"),
                   points={"top": placed.port("top"), "bottom": placed.port("bottom")}, pad_mm=pad_mm)


def _has_positioner(tag: Tag) -> bool:
    if tag.positioner_action is not None or tag.split_method is SplitMethod.POSITIONER:
        return True
    return tag.signal is not None and not tag.signal.is_pneumatic and tag.signal is not Signal.NONE


def _split_setting_text(tag: Tag) -> str | None:
    """What the element's split setting is, for the label under its positioner."""
    if tag.split_method in (SplitMethod.POSITIONER, SplitMethod.PNEUMATIC):
        if tag.input_low is not None and tag.input_high is not None:
            unit = f" {tag.input_units}" if tag.input_units else ""
            return f"in {fmt_number(tag.input_low)}-{fmt_number(tag.input_high)}{unit}"
    if tag.split_method is SplitMethod.DCS and tag.co_start_pct is not None and tag.co_end_pct is not None:
        return f"CO {fmt_number(tag.co_start_pct)}-{fmt_number(tag.co_end_pct)} %"
    return None


def valve_cluster(tag: Tag, loop_service: str | None) -> Cluster:
    """Control valve (globe body, diaphragm actuator), positioner when it has one, the tag
    bubble above the actuator, fail position below the body (ISA-5.1 FC/FO/FL), air
    action beside the actuator, split setting under the positioner, service below.

    The row line joins the positioner's signal input, here at (0, 0); the positioner is
    turned half a turn so its signal input faces the control system on the right."""
    drawing = Drawing()
    if _has_positioner(tag):
        positioner = PlacedSymbol(load_symbol("positioner"), 0.0, 0.0, anchor="signal-in", rotate_deg=180.0,
                                  role="positioner", tag=tag.tag, ports_used=("signal-in", "air-out"),
                                  name=f"positioner:{tag.tag}")
        drawing.symbols.append(positioner)
        air_out = positioner.port("air-out")
        actuator_at = (air_out[0] - AIR_GAP_MM, air_out[1])
    else:
        positioner = None
        actuator_at = (0.0, 0.0)
    valve = PlacedSymbol(control_valve("diaphragm"), actuator_at[0], actuator_at[1], anchor="side-right",
                         role="valve", tag=tag.tag,
                         ports_used=("side-right", "signal", "inlet", "outlet", "stem-top"),
                         name=f"valve:{tag.tag}")
    drawing.symbols.append(valve)
    if positioner is not None:
        drawing.lines.append(SignalLine("pneumatic", (air_out, valve.port("side-right")), "positioner-air"))
    inlet, outlet = valve.port("inlet"), valve.port("outlet")
    drawing.lines.append(SignalLine("process", ((inlet[0] - PIPE_STUB_MM, inlet[1]), inlet), "pipe"))
    drawing.lines.append(SignalLine("process", (outlet, (outlet[0] + PIPE_STUB_MM, outlet[1])), "pipe"))

    stem_x, signal_y = valve.port("signal")
    bubble, texts = _bubble(tag, "field", "instrument")
    bubble = PlacedSymbol(bubble.symbol, stem_x, signal_y - 1.5, anchor="bottom", role="instrument", tag=tag.tag,
                          ports_used=bubble.ports_used, name=bubble.name)
    drawing.symbols.append(bubble)
    for t in texts:
        x, y = bubble.port(t.role)
        drawing.texts.append(_text(t.text, x, y, "middle", t.role, bubble.name, fit=t.fit_width_mm))

    body = valve.box
    y = body.bottom + 0.8
    if tag.fail_position is not None:
        drawing.texts += _stack_lines([tag.fail_position.value], stem_x, y, "middle", "fail-position")
        y += LINE_PITCH_MM
    if tag.air_action is not None:
        drawing.texts.append(_text(tag.air_action.value, body.x - 1.0, actuator_at[1] - 0.5, "end", "air-action"))
    service = _service_lines(tag, loop_service)
    if service:
        drawing.texts += _stack_lines(service, stem_x, y + 0.5, "middle", "service")
    setting = _split_setting_text(tag)
    if setting:
        anchor_x = positioner.box.x if positioner is not None else valve.box.right + 0.5
        top = (positioner.box.bottom if positioner is not None else 1.5) + 0.8
        drawing.texts.append(_text(setting, anchor_x, top + ASCENT_EM * TEXT_MM, "start", "split-setting"))
    return Cluster(drawing, attach_out=(0.0, 0.0), points={"attach": (0.0, 0.0)})


def element_cluster(tag: Tag) -> Cluster:
    """A primary element: its bubble on the row line and the sensing part below it
    (thermowell for temperature, generic in-line element otherwise). Flow elements use
    :func:`orifice_cluster`."""
    drawing = Drawing()
    placed, texts = _bubble(tag, "field", "element")
    drawing.symbols.append(placed)
    drawing.texts += texts
    bottom = placed.port("bottom")
    if tag.parts.variable.startswith("T"):
        part = PlacedSymbol(load_symbol("element-thermowell"), bottom[0], bottom[1] + 2.5, anchor="head",
                            role="sensing", tag=tag.tag, ports_used=("head", "flange-left", "flange-right", "tip"),
                            name=f"thermowell:{tag.tag}")
        left, right = part.port("flange-left"), part.port("flange-right")
        drawing.lines.append(SignalLine("process", ((left[0] - 3.0, left[1]), (right[0] + 3.0, right[1])), "vessel"))
        joint = part.port("head")
        text_x = part.box.right + 1.0
        text_top = right[1] + 1.0
    else:
        part = PlacedSymbol(load_symbol("element-generic"), bottom[0], bottom[1] + 2.5, anchor="out",
                            role="sensing", tag=tag.tag, ports_used=("out", "upstream", "downstream"),
                            name=f"element:{tag.tag}")
        up, down = part.port("upstream"), part.port("downstream")
        drawing.lines.append(SignalLine("process", ((up[0] - 3.0, up[1]), up), "pipe"))
        drawing.lines.append(SignalLine("process", (down, (down[0] + 3.0, down[1])), "pipe"))
        joint = part.port("out")
        text_x = part.box.right + 1.0
        text_top = part.box.y
    drawing.symbols.append(part)
    drawing.lines.append(SignalLine("connection", (bottom, joint), "element-leader"))
    sensor = tag.sensor.value if tag.sensor else None
    if sensor:
        drawing.texts.append(_text(sensor, text_x, text_top + ASCENT_EM * TEXT_MM, "start", "sensor"))
    return Cluster(drawing, attach_out=placed.port("right"))


def sensor_cluster(sensor_text: str, owner_tag: str) -> Cluster:
    """An untagged sensor in a thermowell (the sensor of a rack-mounted transmitter):
    the line leaves from the well head on the row line."""
    drawing = Drawing()
    part = PlacedSymbol(load_symbol("element-thermowell"), 0.0, 0.0, anchor="head", role="sensing",
                        tag=None, ports_used=("head", "flange-left", "flange-right"), name=f"sensor:{owner_tag}")
    drawing.symbols.append(part)
    left, right = part.port("flange-left"), part.port("flange-right")
    drawing.lines.append(SignalLine("process", ((left[0] - 3.0, left[1]), (right[0] + 3.0, right[1])), "vessel"))
    drawing.texts.append(_text(sensor_text, part.box.right + 1.0, right[1] + 1.0 + ASCENT_EM * TEXT_MM,
                               "start", "sensor"))
    return Cluster(drawing, attach_out=part.port("head"))


def orifice_cluster(tag: Tag, tap_drop_mm: float) -> Cluster:
    """Orifice plate with its tag bubble; impulse lines leave both taps upward.

    The high-pressure tap is at x = 0, ``tap_drop_mm`` below the row line; its impulse line
    rises to the row line and runs right to the transmitter. The low-pressure tap's line
    is routed by the layout to the transmitter's bottom (``points['tap-low']``)."""
    drawing = Drawing()
    orifice = PlacedSymbol(load_symbol("element-orifice"), 0.0, tap_drop_mm, anchor="tap-high", role="sensing",
                           tag=tag.tag, ports_used=("tap-high", "tap-low", "upstream", "downstream"),
                           name=f"orifice:{tag.tag}")
    drawing.symbols.append(orifice)
    up, down = orifice.port("upstream"), orifice.port("downstream")
    bubble, texts = _bubble(tag, "field", "element")
    bubble_x = up[0] - 3.0 - bubble.symbol.width_mm / 2
    bubble = PlacedSymbol(bubble.symbol, bubble_x, up[1] - 2.0, anchor="bottom", role="element", tag=tag.tag,
                          ports_used=bubble.ports_used, name=bubble.name)
    drawing.symbols.append(bubble)
    for t in texts:
        x, y = bubble.port(t.role)
        drawing.texts.append(_text(t.text, x, y, "middle", t.role, bubble.name, fit=t.fit_width_mm))
    pipe_left = bubble.box.x - 1.0
    drawing.lines.append(SignalLine("process", ((pipe_left, up[1]), up), "pipe"))
    drawing.lines.append(SignalLine("process", (down, (down[0] + PIPE_STUB_MM, down[1])), "pipe"))
    drawing.lines.append(SignalLine("connection", (bubble.port("bottom"), (bubble.port("bottom")[0], up[1])),
                                    "element-leader"))
    high = orifice.port("tap-high")
    return Cluster(drawing, attach_out=(high[0], 0.0), out_path=(high, (high[0], 0.0)),
                   points={"tap-low": orifice.port("tap-low")})


def terminal_cluster(kind: str, terminals: str | None, titles: list[str], name: str,
                     show_strip: bool = True) -> Cluster:
    """One terminal unit (``terminal-jb`` or ``terminal-cabinet``) on the row line, its
    numbers in the unit, the strip (``X1`` of ``X1:11-12``, when ``show_strip``) and the
    enclosure name above."""
    drawing = Drawing()
    symbol = load_symbol(kind)
    placed = PlacedSymbol(symbol, 0.0, 0.0, anchor="wire-left", role="terminal", tag=None,
                          ports_used=("wire-left", "wire-right", "label"), name=name)
    drawing.symbols.append(placed)
    strip, numbers = None, terminals
    if terminals and ":" in terminals:
        strip, numbers = terminals.rsplit(":", 1)
    if numbers:
        x, y = placed.port("label")
        area = symbol.text_areas["label"]
        drawing.texts.append(_text(numbers, x, y, "middle", "terminal", owner=name, fit=area[2]))
    above = [t for t in titles if t] + ([f"strip {strip}"] if strip and show_strip else [])
    if above:
        box = placed.box
        drawing.texts += _stack_lines(above, box.x, box.y - 0.8 - _stack_height(len(above)), "start", "terminal-title")
    return Cluster(drawing, attach_in=placed.port("wire-left"), attach_out=placed.port("wire-right"),
                   pad_mm=ENCLOSURE_PAD_MM)


def io_cluster(heading: str, address: str, notes: list[str], name: str) -> Cluster:
    """An I/O channel block: a box with the host and channel type and the address."""
    drawing = Drawing()
    width = max(text_width_mm(heading, TEXT_MM, bold=True), text_width_mm(address, TEXT_MM)) + 3.0
    height = 2 * LINE_PITCH_MM + 2.2
    rect = Rect(0.0, -height / 2, width, height)
    drawing.frames.append(Frame(rect, stroke_mm=0.35, role="io", name=name, solid=True))
    first = rect.y + 1.1 + ASCENT_EM * TEXT_MM
    drawing.texts.append(_text(heading, width / 2, first, "middle", "io-heading", owner=name, bold=True))
    drawing.texts.append(_text(address, width / 2, first + LINE_PITCH_MM, "middle", "io-address", owner=name))
    if notes:
        drawing.texts += _stack_lines(notes, 0.0, rect.bottom + 1.0, "start", "io-note")
    return Cluster(drawing, attach_in=(0.0, 0.0), attach_out=(width, 0.0))


# --------------------------------------------------------------------------- rows


@dataclass
class Station:
    """One item of a row: what it shows (``meta``) in which column.

    ``meta`` is ``(what, payload)``: ``("instrument" | "relay" | "function" | "element" |
    "orifice" | "valve" | "sensor", Tag)``, ``("terminal", terminals text)`` or
    ``("io", (heading, address, notes))``."""

    column: str
    meta: tuple[str, object]
    key: object = None
    """Identity for sharing: equal keys in one column of neighbouring output rows merge."""
    enclosure: str | None = None
    """Name of the junction box or cabinet the station is in."""
    cluster: Cluster | None = None


@dataclass
class Segment:
    """The row line from one station to the next, its style and its labels."""

    kind: str
    above: str | None = None
    below: str | None = None
    label_x: float | None = None
    offset_mm: float = 0.0
    """Drawn as two wires this far above and below the row line (a series loop): labels keep clear."""


@dataclass
class Row:
    stations: list[Station]
    segments: list[Segment]
    """``segments[i]`` joins ``stations[i]`` to ``stations[i + 1]``; a last extra segment
    (``len(segments) == len(stations)``) runs on to a connector."""
    role: str
    """``input``, ``output``, ``branch`` (a valve on an I/P's header) or ``other``."""
    linked: bool = False
    """Joins the loop's controller or indicator."""
    tail_kind: str = "data"
    """Kind of the line from the last station to the function's bus or a connector."""
    merge: tuple[int, str] | None = None
    """(row index, column): this row ends at a connector into that row, before that column."""
    branch_of: int | None = None
    """For a valve on an I/P's header: the row of the I/P."""
    driven_by: str | None = None
    """Output rows: the tag of the loop function that drives them (Driven By)."""
    series: tuple[int, ...] = ()
    """On the first row of positioners in series on one output: the rows of the others, in order."""
    series_of: int | None = None
    """On the other rows of positioners in series: the first row."""
    tags: tuple[str, ...] = ()
    y: float = 0.0
    top_mm: float = 0.0
    bottom_mm: float = 0.0

    def ends_at_connector(self) -> bool:
        return self.merge is not None or self.branch_of is not None


def _signal_text(signal: Signal | None) -> str | None:
    return signal.value if signal is not None and signal is not Signal.NONE else None


def _channel(tag: Tag, output: bool) -> str:
    if tag.signal is Signal.FIELDBUS:
        return "fieldbus"
    if tag.signal is Signal.DISCRETE:
        return "DO" if output else "DI"
    if tag.signal is Signal.TC and not output:
        return "TC in"
    if tag.signal is Signal.RTD and not output:
        return "RTD in"
    return "AO" if output else "AI"


def _host(platform: Platform | None) -> str:
    if platform is None or platform is Platform.DEVICE:
        return ""
    return "Computer" if platform is Platform.COMPUTER else platform.value.upper()


@dataclass
class LoopParts:
    """The loop's tags sorted into what the diagram draws."""

    tags: list[Tag]
    function: Tag | None
    """The controller (or, without one, the indicator) the loop's lines meet at."""
    other_functions: list[Tag]
    inputs: list[Tag]
    elements_of: dict[str, Tag]
    """Transmitter tag -> the primary element feeding it."""
    loose_elements: list[Tag]
    relays: list[tuple[Tag, list[Tag]]]
    """I/P converters (or other relays) and the valves on their output."""
    direct_outputs: list[Tag]
    loop_service: str | None


def loop_parts(project: Project, loop_id: str) -> LoopParts:
    """Sort the tags of a loop into function, inputs (with their elements) and outputs."""
    tags = project.tags_of(loop_id)
    controllers = [t for t in tags if t.kind is TagKind.CONTROLLER]
    displays = [t for t in tags if t.kind in (TagKind.INDICATOR, TagKind.ALARM) and band_of(t) != "field"]
    functions = controllers + displays
    function = functions[0] if functions else None
    elements = [t for t in tags if t.kind is TagKind.ELEMENT]
    finals = [t for t in tags if t.kind is TagKind.FINAL_ELEMENT]
    relays = [t for t in tags if t.kind is TagKind.RELAY]

    # A relay moves a valve driven by it, or a pneumatic valve driven by the controller
    # that drives the relay when the relay is the only pneumatic-output one.
    fed: dict[str, list[Tag]] = {r.tag: [] for r in relays}
    direct: list[Tag] = []
    for valve in finals:
        driver = (valve.driven_by or "").upper()
        by_relay = [r for r in relays if driver and driver == r.tag]
        if not by_relay and driver and valve.signal is not None and valve.signal.is_pneumatic:
            candidates = [r for r in relays if (r.driven_by or "").upper() == driver
                          and r.signal is not None and r.signal.is_pneumatic]
            by_relay = candidates if len(candidates) == 1 else []
        if by_relay:
            fed[by_relay[0].tag].append(valve)
        else:
            direct.append(valve)
    inputs = [t for t in tags if t.kind in (TagKind.TRANSMITTER, TagKind.SWITCH)
              or (t.kind in (TagKind.INDICATOR, TagKind.ALARM, TagKind.OTHER) and t not in functions)
              or (t.kind is TagKind.RELAY and not fed[t.tag])]

    transmitters = [t for t in inputs if t.kind is TagKind.TRANSMITTER]
    elements_of: dict[str, Tag] = {}
    loose: list[Tag] = []
    for element in elements:
        free = [t for t in transmitters if t.tag not in elements_of and t.parts.variable == element.parts.variable]
        same_suffix = [t for t in free if t.parts.suffix == element.parts.suffix]
        match = (same_suffix or free or [None])[0]
        if match is None:
            loose.append(element)
        else:
            elements_of[match.tag] = element
    return LoopParts(tags, function, functions[1:], inputs, elements_of, loose,
                     [(r, fed[r.tag]) for r in relays if fed[r.tag]], direct, project.loops[loop_id].service)


def _wiring(tag: Tag, io: tuple[str, str, list[str]] | None, rack_device: bool) -> list[Station]:
    """Junction-box terminal, cabinet terminal and I/O stations on the way of one signal."""
    stations: list[Station] = []
    if tag.jb:
        stations.append(Station("J", ("terminal", tag.jb_terminals), key=("J", tag.jb, tag.jb_terminals or tag.tag),
                                enclosure=tag.jb))
    if tag.cabinet_terminals or (tag.cabinet and not rack_device):
        stations.append(Station("C0", ("terminal", tag.cabinet_terminals),
                                key=("C0", tag.cabinet or "", tag.cabinet_terminals or tag.tag), enclosure=tag.cabinet))
    if io is not None:
        stations.append(Station("S0", ("io", io), key=("S0", io[1])))
    return stations


def _column_of_device(tag: Tag) -> str:
    return {"field": "F1", "local": "L", "jb": "J", "cabinet": "C1", "control": "S1"}[band_of(tag)]


def _order(stations: list[Station]) -> list[Station]:
    return sorted(stations, key=lambda s: COLUMNS.index(s.column))


def _input_row(tag: Tag, parts: LoopParts, linked: bool) -> Row:
    fn = parts.function
    column = _column_of_device(tag)
    kind = line_kind(tag.signal)
    element = parts.elements_of.get(tag.tag)
    head: list[Station] = []
    head_segment: Segment | None = None
    sensor_kind = None
    if tag.sensor is not None:
        sensor_kind = "RTD" if tag.sensor.is_rtd else "TC"
    if element is not None:
        flow = element.parts.variable.startswith("F")
        head.append(Station("F0", ("orifice" if flow else "element", element), key=("element", element.tag)))
        element_kind = "connection" if flow or element.signal in (None, Signal.NONE) else line_kind(element.signal)
        head_segment = Segment(element_kind, below=None if flow else (_signal_text(element.signal) or sensor_kind))
    elif tag.sensor is not None and column != "F0":
        head.append(Station("F0", ("sensor", tag), key=("sensor", tag.tag)))
        # the sensor's own cable runs to a transmitter mounted away from the field
        head_segment = Segment("electrical", above=None if column in ("F1", "L") else tag.cable, below=sensor_kind)
    io = None
    if tag.io_address:
        host = _host(fn.platform if linked and fn is not None else tag.platform)
        io = (f"{host} {_channel(tag, False)}".strip(), tag.io_address, [])
    device = Station(column, ("instrument", tag), key=("device", tag.tag),
                     enclosure=tag.cabinet if column == "C1" else None)
    stations = head + _order([device] + _wiring(tag, io, rack_device=(column == "C1")))
    segments: list[Segment] = []
    at = stations.index(device)
    for i in range(len(stations) - 1):
        if i == 0 and head_segment is not None:
            segments.append(head_segment)
        elif i < at:
            segments.append(Segment("electrical"))  # sensor wiring on to a rack-mounted transmitter
        else:
            segments.append(Segment(kind))
    if at < len(segments):
        if not (head and head_segment is not None and head_segment.above):
            segments[at].above = tag.cable
        segments[at].below = _signal_text(tag.signal)
    element_tags = (element.tag,) if element is not None else ()
    return Row(stations, segments, "input", linked=linked,
               tail_kind="data" if fn is not None and band_of(fn) == "control" else kind, tags=element_tags + (tag.tag,))


def _driving_function(driver: Tag, parts: LoopParts) -> Tag | None:
    """The loop's function (main or other, e.g. a hand controller) named in the driver's
    Driven By, or None."""
    name = (driver.driven_by or "").upper()
    functions = ([parts.function] if parts.function is not None else []) + parts.other_functions
    return next((f for f in functions if name and f.tag.upper() == name), None)


def _output_row(valve: Tag, relay: Tag | None, parts: LoopParts) -> Row:
    driver = relay or valve
    fn = _driving_function(driver, parts)
    linked = fn is not None
    stations = [Station("F0", ("valve", valve), key=("valve", valve.tag))]
    segments: list[Segment] = []
    if relay is not None:
        stations.append(Station(_column_of_device(relay), ("relay", relay), key=("device", relay.tag)))
        segments.append(Segment(line_kind(valve.signal), below=_signal_text(valve.signal)))
        feed = fn.signal if fn is not None and fn.signal is not None and not fn.signal.is_pneumatic else Signal.MA_4_20
    else:
        feed = valve.signal
    io_address = driver.io_address or (fn.io_address if linked and fn is not None else None)
    io = None
    if io_address:
        host = _host(fn.platform if linked and fn is not None else driver.platform)
        io = (f"{host} {_channel(driver if relay is None else fn or driver, True)}".strip(), io_address, [])
    wiring = _wiring(driver, io, rack_device=False)
    kind = line_kind(feed)
    for st in wiring:
        stations.append(st)
        segments.append(Segment(kind))
    first = 1 if relay is not None else 0
    if first < len(segments):
        segments[first].above = driver.cable
        segments[first].below = _signal_text(feed)
    fn_in_control = fn is not None and band_of(fn) == "control"
    tail = "data" if fn_in_control and io is not None else kind
    tags = (valve.tag,) + ((relay.tag,) if relay is not None else ())
    return Row(stations, segments, "output", linked=linked and fn is parts.function, tail_kind=tail, tags=tags,
               driven_by=fn.tag if fn is not None else None)


def build_rows(project: Project, loop_id: str) -> tuple[list[Row], LoopParts, int | None]:
    """The rows of a loop diagram, top to bottom, and the index of the function's row."""
    parts = loop_parts(project, loop_id)
    fn = parts.function

    def linked_input(tag: Tag) -> bool:
        if fn is None or band_of(tag) == "control":
            return False
        # a switch (discrete signal) is wired to an input of its own, never into the
        # controller's analogue input link (ISA-5.4: each device its own circuit, common practice)
        if tag.kind is TagKind.SWITCH or tag.signal is Signal.DISCRETE:
            return False
        return tag.platform in (None, Platform.DEVICE) or tag.platform is fn.platform

    rows: list[Row] = []
    unlinked: list[Row] = []
    for tag in parts.inputs:
        row = _input_row(tag, parts, linked_input(tag))
        (rows if row.linked else unlinked).append(row)
    output_start = len(rows)
    for relay, valves in parts.relays:
        lead = len(rows)
        rows.append(_output_row(valves[0], relay, parts))
        for valve in valves[1:]:
            kind = line_kind(valve.signal)
            rows.append(Row([Station("F0", ("valve", valve), key=("valve", valve.tag))], [], "branch",
                            linked=False, tail_kind=kind, branch_of=lead, tags=(valve.tag,)))
    for valve in parts.direct_outputs:
        rows.append(_output_row(valve, None, parts))
    _merge_outputs(rows, output_start)

    fn_row: int | None = None
    if fn is not None:
        station = Station(_column_of_device(fn), ("function", fn), key=("function", fn.tag))
        # a row whose wiring already reaches past the function's column cannot run on to it
        for row in rows:
            if row.linked and row.stations and COLUMNS.index(row.stations[-1].column) >= COLUMNS.index(station.column):
                row.linked = False
        outs = [i for i in range(output_start, len(rows)) if rows[i].role == "output" and rows[i].linked]
        ins = [i for i in range(output_start) if rows[i].linked]
        candidates = outs[:1] or ins[-1:]
        fn_row = candidates[0] if candidates else None
        if fn_row is not None:
            host = rows[fn_row]
            last = host.stations[-1]
            if host.merge is not None or COLUMNS.index(last.column) >= COLUMNS.index(station.column):
                fn_row = None
        if fn_row is None:
            fn_row = len(rows)
            rows.append(Row([], [], "other"))
        host = rows[fn_row]
        if host.stations:
            host.segments.append(Segment(host.tail_kind))
        host.stations.append(station)
        host.tags = host.tags + (fn.tag,)
    for extra in parts.other_functions:
        station = Station(_column_of_device(extra), ("function", extra), key=("function", extra.tag))
        if _attach_to_driven_row(rows, output_start, extra, station):
            continue
        unlinked.append(Row([station], [], "other", tags=(extra.tag,)))
    for element in parts.loose_elements:
        unlinked.append(Row([Station("F0", ("element", element), key=("element", element.tag))], [], "other",
                            tags=(element.tag,)))
    rows += unlinked
    return rows, parts, fn_row


def _attach_to_driven_row(rows: list[Row], start: int, function: Tag, station: Station) -> bool:
    """Put a further function of the loop (a hand controller beside the controller) at the
    end of the first output row it drives, so its bubble is joined to its valve; False
    when no such row can take it."""
    for row in rows[start:]:
        if row.role != "output" or row.driven_by != function.tag or row.merge is not None:
            continue
        if row.stations and COLUMNS.index(row.stations[-1].column) >= COLUMNS.index(station.column):
            continue
        has_io = any(s.column == "S0" for s in row.stations)
        kind = "data" if has_io and band_of(function) == "control" else row.tail_kind
        row.segments.append(Segment(kind))
        row.stations.append(station)
        row.tags = row.tags + (function.tag,)
        return True
    return False


def _merge_outputs(rows: list[Row], start: int) -> None:
    """Let an output row join the output row above it where both share everything from a
    junction-box terminal, a cabinet terminal or the I/O channel onward (positioners in
    series on one output; docs/design.md §5.8)."""
    for i in range(start + 1, len(rows)):
        row, prev = rows[i], rows[i - 1]
        if row.role != "output" or prev.role != "output" or row.linked != prev.linked:
            continue
        keys = {s.column: s.key for s in row.stations if s.column in MERGE_COLUMNS}
        prev_keys = {s.column: s.key for s in prev.stations if s.column in MERGE_COLUMNS}
        prev_end = prev.merge[1] if prev.merge else None
        if prev_end is not None:
            # the row above joined its own row above before prev_end: it shares that row's
            # items from there on (a third positioner on the same output)
            root = rows[_merge_root(rows, i - 1)]
            start_at = MERGE_COLUMNS.index(prev_end)
            prev_keys.update({s.column: s.key for s in root.stations
                              if s.column in MERGE_COLUMNS[start_at:]})
        for column in MERGE_COLUMNS:
            if keys.get(column) is None:
                continue
            if any(keys.get(c) != prev_keys.get(c) for c in MERGE_COLUMNS[MERGE_COLUMNS.index(column):]):
                continue
            if prev_end is not None and MERGE_COLUMNS.index(column) > MERGE_COLUMNS.index(prev_end):
                continue
            cut = next(k for k, s in enumerate(row.stations) if s.column == column)
            row.stations = row.stations[:cut]
            row.segments = row.segments[:cut]
            row.tail_kind = row.segments[-1].kind
            row.merge = (i - 1, column)
            break


def _merge_root(rows: list[Row], index: int) -> int:
    while rows[index].merge is not None:
        index = rows[index].merge[0]  # type: ignore[index]
    return index


def _series_groups(rows: list[Row], tags: dict[str, Tag]) -> None:
    """Mark positioners in series on one output: a positioner split (docs/design.md §4.3, one
    analog output for the group) whose rows all join the first row before the same
    shared item. Their rows get ``series``/``series_of`` and are drawn as wired."""
    for r, row in enumerate(rows):
        if row.merge is not None or row.role != "output":
            continue
        members: list[int] = []
        k = r + 1
        while k < len(rows) and rows[k].merge is not None and rows[k].merge[0] == k - 1:
            members.append(k)
            k += 1
        if not members or len({rows[m].merge[1] for m in members}) != 1:  # type: ignore[index]
            continue
        column = rows[members[0]].merge[1]  # type: ignore[index]
        if not any(s.column == column for s in row.stations):
            continue
        valves = [rows[i].tags[0] for i in [r] + members]
        if {tags[v].split_method for v in valves if v in tags} != {SplitMethod.POSITIONER} or len(valves) != len(
                [v for v in valves if v in tags]):
            continue
        row.series = tuple(members)
        m = next(i for i, s in enumerate(row.stations) if s.column == column)
        row.segments[m - 1].offset_mm = WIRE_OFFSET_MM
        for i in members:
            rows[i].series_of = r
            rows[i].segments[-1].offset_mm = WIRE_OFFSET_MM


def _series_notes(rows: list[Row], tags: dict[str, Tag]) -> None:
    """A note under a shared I/O channel naming the valves on it (in series for a
    positioner split)."""
    for r, row in enumerate(rows):
        members = [k for k in range(len(rows)) if rows[k].merge is not None and _merge_root(rows, k) == r]
        io = next((s for s in row.stations if s.column == "S0"), None)
        if not members or io is None:
            continue
        valves = [row.tags[0]] + [rows[k].tags[0] for k in members]
        heading, address, notes = io.meta[1]  # type: ignore[misc]
        if {tags[v].split_method for v in valves if v in tags} == {SplitMethod.POSITIONER}:
            notes = notes + [f"{len(valves)} positioners in series"]
        else:
            notes = notes + [f"shared by {len(valves)} valves"]
        io.meta = ("io", (heading, address, notes))


# --------------------------------------------------------------------------- clusters per station


def _enclosure_titles(rows: list[Row]) -> dict[tuple[int, str], str]:
    """(row index, column) -> enclosure name, for the first station of each run of
    neighbouring rows in the same junction box or cabinet."""
    titles: dict[tuple[int, str], str] = {}
    for columns in (("J",), ("C0", "C1")):
        current = None
        for r, row in enumerate(rows):
            inside = [s for s in row.stations if s.column in columns and s.enclosure]
            name = inside[0].enclosure if inside else None
            if name is not None and name != current:
                titles[(r, inside[0].column)] = name
            current = name
    return titles


def _strip(terminals: object) -> str | None:
    return terminals.rsplit(":", 1)[0] if isinstance(terminals, str) and ":" in terminals else None


def _build_clusters(rows: list[Row], parts: LoopParts) -> None:
    titles = _enclosure_titles(rows)
    service = parts.loop_service
    last_strip: dict[str, tuple[str | None, str | None]] = {}
    for r, row in enumerate(rows):
        has_orifice = any(s.meta[0] == "orifice" for s in row.stations)
        for st in row.stations:
            what, payload = st.meta
            title = titles.get((r, st.column))
            if what == "terminal":
                kind = "terminal-jb" if st.column == "J" else "terminal-cabinet"
                strip = (st.enclosure, _strip(payload))
                show = title is not None or last_strip.get(st.column) != strip
                last_strip[st.column] = strip
                st.cluster = terminal_cluster(kind, payload, [title] if title else [],  # type: ignore[arg-type]
                                              name=f"terminal:{st.column}:{r}", show_strip=show)
            elif what == "io":
                heading, address, notes = payload  # type: ignore[misc]
                st.cluster = io_cluster(heading, address, notes, name=f"io:{r}")
            elif what == "element":
                st.cluster = element_cluster(payload)  # type: ignore[arg-type]
            elif what == "orifice":
                st.cluster = orifice_cluster(payload, tap_drop_mm=13.0)  # type: ignore[arg-type]
            elif what == "sensor":
                tag = payload
                st.cluster = sensor_cluster(tag.sensor.value, tag.tag)  # type: ignore[union-attr]
            elif what == "valve":
                st.cluster = valve_cluster(payload, service)  # type: ignore[arg-type]
            elif what == "relay":
                tag = payload
                st.cluster = instrument_cluster(
                    tag, band_of(tag),  # type: ignore[arg-type]
                    right_above="I/P" if tag.signal is not None and tag.signal.is_pneumatic else None,  # type: ignore[union-attr]
                    above=[title] if title else [], below=_service_lines(tag, service))  # type: ignore[arg-type]
            elif what == "function":
                tag = payload
                right = [f"{tag.control_action.value} acting"] if tag.control_action is not None else []  # type: ignore[union-attr]
                rng = _range_text(tag)  # type: ignore[arg-type]
                st.cluster = instrument_cluster(tag, band_of(tag), right=right + ([rng] if rng else []))  # type: ignore[arg-type]
            else:
                tag = payload
                above = [_range_text(tag)]  # type: ignore[arg-type]
                lines = _service_lines(tag, service)  # type: ignore[arg-type]
                pad = ENCLOSURE_PAD_MM if st.enclosure else 0.0
                if has_orifice:  # the transmitter's bottom takes the low-pressure impulse line
                    above, lines = lines + above, []
                st.cluster = instrument_cluster(tag, band_of(tag), above=above, below=lines,  # type: ignore[arg-type]
                                                enclosure_title=title, pad_mm=pad)


# --------------------------------------------------------------------------- placing


@dataclass
class _Columns:
    used: list[str]
    left: dict[str, float]
    ref: dict[str, float]
    right: dict[str, float]
    boundaries: list[tuple[str, float]]
    width: float


def _place_columns(used: list[str], left_ext: dict[str, float], right_ext: dict[str, float],
                   gaps: dict[str, float]) -> _Columns:
    left: dict[str, float] = {}
    ref: dict[str, float] = {}
    right: dict[str, float] = {}
    x = MARGIN_MM
    for c in used:
        x += gaps.get(c, 0.0)
        left[c] = x
        ref[c] = x + left_ext[c]
        right[c] = ref[c] + right_ext[c]
        x = right[c]
    boundaries = [(BAND_OF_COLUMN[b], (right[a] + left[b]) / 2)
                  for a, b in zip(used, used[1:]) if BAND_OF_COLUMN[a] != BAND_OF_COLUMN[b]]
    return _Columns(used, left, ref, right, boundaries, x + MARGIN_MM)


def _connector_x(row: Row, rows: list[Row], cols: _Columns) -> float | None:
    if row.merge is not None:
        return cols.left[row.merge[1]] - CONNECTOR_INSET_MM
    if row.branch_of is not None:
        relay = rows[row.branch_of].stations[1]
        return cols.left[relay.column] - CONNECTOR_INSET_MM
    return None


def _function_x(rows: list[Row], cols: _Columns, fn_row: int | None) -> float | None:
    return None if fn_row is None else cols.ref[rows[fn_row].stations[-1].column]


def _tail_end(index: int, rows: list[Row], cols: _Columns, fn_row: int | None) -> float | None:
    """x where a row's line ends beyond its last station: a connector, the function's
    bus, or None when the row ends at its last station."""
    row = rows[index]
    if row.series_of is not None:
        return min(_series_xs(rows, row.series_of, cols)[0])
    connector = _connector_x(row, rows, cols)
    if connector is not None:
        return connector
    if row.linked and fn_row is not None and index != fn_row:
        return _function_x(rows, cols, fn_row)
    return None


def _cuts_on_row(index: int, rows: list[Row], cols: _Columns) -> list[float]:
    """x of the vertical connector that joins this row's line from the row below (for
    positioners in series: of the links and the return wire)."""
    root = index if rows[index].series else rows[index].series_of
    if root is not None:
        links, ret = _series_xs(rows, root, cols)
        return links + [ret]
    if index + 1 < len(rows) and rows[index + 1].ends_at_connector():
        x = _connector_x(rows[index + 1], rows, cols)
        return [x] if x is not None else []
    return []


def _free_intervals(x0: float, x1: float, cuts: Iterable[float], margin: float) -> list[tuple[float, float]]:
    """Parts of ``[x0, x1]`` at least ``margin`` away from its ends and from every cut.

    >>> _free_intervals(0, 20, [10], 1)
    [(1, 9), (11, 19)]
    """
    spans = [(x0 + margin, x1 - margin)]
    for cut in sorted(cuts):
        nxt = []
        for a, b in spans:
            if cut + margin <= a or cut - margin >= b:
                nxt.append((a, b))
                continue
            if cut - margin > a:
                nxt.append((a, cut - margin))
            if cut + margin < b:
                nxt.append((cut + margin, b))
        spans = nxt
    return [s for s in spans if s[1] > s[0]]


def _place_labels(rows: list[Row], cols: _Columns, fn_row: int | None) -> dict[str, float]:
    """Put each segment's labels in the widest free stretch of its run; return how much
    to widen the gap before which column where they do not fit."""
    widen: dict[str, float] = {}
    bounds = [x for _, x in cols.boundaries]
    for index, row in enumerate(rows):
        cuts = _cuts_on_row(index, rows, cols)
        for k, seg in enumerate(row.segments):
            if not (seg.above or seg.below):
                continue
            a = row.stations[k]
            near = LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + 0.4 + _label_height() + 1.0
            # inside a junction box or cabinet the outline (at the column's edge) is the limit
            xa = cols.right[a.column] if a.enclosure else cols.ref[a.column] + a.cluster.reach_near_line(near)[1]  # type: ignore[union-attr]
            if k + 1 < len(row.stations):
                b = row.stations[k + 1]
                xb = cols.left[b.column] if b.enclosure else cols.ref[b.column] + b.cluster.reach_near_line(near)[0]  # type: ignore[union-attr]
                column = b.column
            else:
                end = _tail_end(index, rows, cols, fn_row)
                if end is None:
                    continue
                xb = end
                column = row.merge[1] if row.merge else cols.used[-1]
            need = max(text_width_mm(seg.above or "", TEXT_MM), text_width_mm(seg.below or "", TEXT_MM))
            # keep clear of a connector of this row's kind too (a pneumatic line is 3.2 mm wide)
            margin = max(LABEL_MARGIN_MM, LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + 0.5)
            spans = _free_intervals(xa, xb, [c for c in cuts + bounds if xa < c < xb], margin)
            best = max((s[1] - s[0] for s in spans), default=0.0)
            if best + 1e-6 < need:
                widen[column] = max(widen.get(column, 0.0), 2 * (need - best) + 1.0)
                seg.label_x = None
            else:
                lo, hi = max(spans, key=lambda s: (round(s[1] - s[0], 6), -s[0]))
                seg.label_x = (lo + hi) / 2
    return widen


def layout_loop(project: Project, loop_id: str) -> LoopLayout:
    """Place the diagram of loop ``loop_id``: sizes in mm, origin top left.

    Raises KeyError for an unknown loop.
    """
    if loop_id not in project.loops:
        raise KeyError(f"no loop {loop_id!r} in the project")
    rows, parts, fn_row = build_rows(project, loop_id)
    _series_notes(rows, project.tags)
    _series_groups(rows, project.tags)
    _build_clusters(rows, parts)

    used = [c for c in COLUMNS if any(s.column == c for r in rows for s in r.stations)]
    boxes = {c: [s.cluster.box for r in rows for s in r.stations if s.column == c] for c in used}  # type: ignore[union-attr]
    left_ext = {c: max(-b.x for b in boxes[c]) for c in used}
    right_ext = {c: max(b.right for b in boxes[c]) for c in used}

    # Vertical: each row as tall as its stations and its line labels need.
    label_h = _label_height()
    y = MARGIN_MM + HEADER_MM
    for row in rows:
        row_boxes = [s.cluster.box for s in row.stations]  # type: ignore[union-attr]
        half = max(LINE_HALF_WIDTH_MM.get(k, 0.4) for k in [s.kind for s in row.segments] + [row.tail_kind])
        top = max([-b.y for b in row_boxes] + [3.0])
        bottom = max([b.bottom for b in row_boxes] + [3.0])
        if any(s.above for s in row.segments):
            top = max(top, max(half + 0.4 + label_h + s.offset_mm for s in row.segments if s.above))
        if any(s.below for s in row.segments):
            bottom = max(bottom, max(half + 0.4 + label_h + s.offset_mm for s in row.segments if s.below))
        row.top_mm, row.bottom_mm = top, bottom
        row.y = y + top
        y = row.y + bottom + ROW_GAP_MM
    height = y - ROW_GAP_MM + MARGIN_MM

    # Horizontal: base gaps, widened until every line label fits its run. A gap holding a
    # merge connector and a band boundary is wide enough to keep the two apart.
    gaps = {c: COLUMN_GAP_MM for c in used[1:]}
    for row in rows:
        if row.merge is not None:
            c = row.merge[1]
            k = used.index(c)
            if k and BAND_OF_COLUMN[used[k - 1]] != BAND_OF_COLUMN[c]:
                gaps[c] = max(gaps[c], 2 * (CONNECTOR_INSET_MM + 4.0))
            if row.series_of is not None:
                gaps[c] = max(gaps[c], 2 * (CONNECTOR_INSET_MM + 4.0))
    cols = _place_columns(used, left_ext, right_ext, gaps)
    for _attempt in range(16):
        widen = _place_labels(rows, cols, fn_row)
        if not widen:
            break
        for column, extra in sorted(widen.items()):
            gaps[column] = gaps.get(column, 0.0) + extra
        cols = _place_columns(used, left_ext, right_ext, gaps)

    layout = LoopLayout(loop_id=loop_id, tags=[t.tag for t in parts.tags])
    layout.title = f"Loop {loop_id}"
    layout.description = f"Loop diagram of {loop_id}" + (f": {parts.loop_service}" if parts.loop_service else "")
    layout.width_mm = round(cols.width, 3)
    layout.height_mm = round(height, 3)
    _assemble(layout, rows, cols, fn_row)
    box = layout.content_box()
    layout.width_mm = round(max(layout.width_mm, box.right + MARGIN_MM), 3)
    layout.height_mm = round(max(layout.height_mm, box.bottom + MARGIN_MM), 3)
    _bands(layout, cols)
    return layout


def _assemble(layout: LoopLayout, rows: list[Row], cols: _Columns, fn_row: int | None) -> None:
    for index, row in enumerate(rows):
        y = row.y
        for st in row.stations:
            layout.extend(st.cluster.drawing, cols.ref[st.column], y)  # type: ignore[union-attr]
        for k in range(len(row.stations)):
            a = row.stations[k]
            cluster = a.cluster
            assert cluster is not None
            if cluster.attach_out is None:
                continue
            start = [(cols.ref[a.column] + px, y + py) for px, py in (cluster.out_path or (cluster.attach_out,))]
            if k + 1 < len(row.stations):
                seg = row.segments[k]
                b = row.stations[k + 1]
                bx, by = b.cluster.attach_in  # type: ignore[union-attr, misc]
                if not (row.series and seg.offset_mm):  # the series wires are drawn by _series_wires
                    layout.lines.append(SignalLine(seg.kind, tuple(start + [(cols.ref[b.column] + bx, y + by)]),
                                                   "signal"))
                _labels(layout, seg, y)
                continue
            end = _tail_end(index, rows, cols, fn_row)
            if end is None:
                continue
            seg = row.segments[k] if k < len(row.segments) else Segment(row.tail_kind)
            if row.series_of is not None:
                _labels(layout, seg, y)
                continue
            if row.ends_at_connector():
                target = rows[index - 1]
                layout.lines.append(SignalLine(seg.kind, tuple(start + [(end, y), (end, target.y)]), "connector"))
                layout.dots.append(Dot(end, target.y))
            else:
                layout.lines.append(SignalLine(seg.kind, tuple(start + [(end, y)]), "to-function"))
            _labels(layout, seg, y)
    _impulse_lines(layout, rows, cols)
    _function_buses(layout, rows, cols, fn_row)
    _enclosures(layout, rows, cols)
    for index, row in enumerate(rows):
        if row.series:
            _series_wires(layout, rows, index, cols)


def _labels(layout: LoopLayout, seg: Segment, y: float) -> None:
    if seg.label_x is None:
        return
    half = LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + seg.offset_mm
    if seg.above:
        layout.texts.append(_text(seg.above, seg.label_x, y - half - 0.4 - DESCENT_EM * TEXT_MM, "middle", "cable"))
    if seg.below:
        layout.texts.append(_text(seg.below, seg.label_x, y + half + 0.4 + ASCENT_EM * TEXT_MM, "middle", "signal"))


def _series_ends(rows: list[Row], root: int, cols: _Columns) -> tuple[list[tuple[float, Station]], float, int]:
    """For positioners in series: (x where each row's own wiring ends and its last own
    station, first row first), x of the shared item's input, its index in the first row."""
    head = rows[root]
    column = rows[head.series[0]].merge[1]  # type: ignore[index]
    m = next(i for i, s in enumerate(head.stations) if s.column == column)
    ends = []
    for r, last in [(root, head.stations[m - 1])] + [(i, rows[i].stations[-1]) for i in head.series]:
        ends.append((cols.ref[last.column] + last.cluster.attach_out[0], last))  # type: ignore[union-attr, index]
    shared = head.stations[m]
    x_in = cols.ref[shared.column] + shared.cluster.attach_in[0]  # type: ignore[union-attr, index]
    return ends, x_in, m


def _series_xs(rows: list[Row], root: int, cols: _Columns) -> tuple[list[float], float]:
    """x of the link between each pair of neighbouring positioners (inside the junction
    box or cabinet whose terminals they land on) and of the return wire to output -."""
    head = rows[root]
    column = rows[head.series[0]].merge[1]  # type: ignore[index]
    ret = cols.left[column] - CONNECTOR_INSET_MM
    m = next(i for i, s in enumerate(head.stations) if s.column == column)
    lasts = [head.stations[m - 1]] + [rows[i].stations[-1] for i in head.series]
    if all(s.meta[0] == "terminal" and s.enclosure for s in lasts):
        # the link is made in the box the terminals are in: just right of the terminals
        base = max(cols.ref[s.column] + s.cluster.attach_out[0] for s in lasts) + 0.9  # type: ignore[union-attr, index]
    else:
        base = ret - 3.0
    return [base + (k % 2) * 1.5 for k in range(len(head.series))], ret


def _terminal_pair(station: Station) -> tuple[str, str] | None:
    """The two terminal numbers of a terminal station (``X3:51-52`` -> ``('51', '52')``)."""
    what, payload = station.meta
    if what != "terminal" or not isinstance(payload, str):
        return None
    numbers = payload.rsplit(":", 1)[-1]
    parts = [p.strip() for p in numbers.split("-")]
    return (parts[0], parts[1]) if len(parts) == 2 and all(parts) else None


def _series_wires(layout: LoopLayout, rows: list[Row], root: int, cols: _Columns) -> None:
    """Positioners in series on one output, as wired (ISA-5.4 loop diagram; current
    flows through each positioner in turn, common practice): output + to the first
    positioner's + terminal, each positioner's - terminal linked to the next one's +,
    the last one's - back to output -. The + wire runs above the row line, the links
    and the return below; no junction dot, nothing is connected in parallel."""
    ends, x_in, m = _series_ends(rows, root, cols)
    links, ret = _series_xs(rows, root, cols)
    d = WIRE_OFFSET_MM
    ys = [rows[root].y] + [rows[i].y for i in rows[root].series]
    kind = rows[root].segments[m - 1].kind
    # output + to the first positioner
    layout.lines.append(SignalLine(kind, ((x_in, ys[0] - d), (ends[0][0], ys[0] - d)), "series-plus"))
    for k in range(len(ys) - 1):
        (xa, sta), (xb, stb) = ends[k], ends[k + 1]
        x = links[k]
        # a wire link between two terminals of one box: thin solid, unlike the cable cores
        layout.lines.append(SignalLine("connection", ((xa, ys[k] + d), (x, ys[k] + d), (x, ys[k + 1] - d),
                                                      (xb, ys[k + 1] - d)), "series-link"))
        pa, pb = _terminal_pair(sta), _terminal_pair(stb)
        text = f"link {pa[1]}-{pb[0]}" if pa and pb else "link"
        _free_text(layout, text, x - 0.8, ys[k] + d, ys[k + 1] - d, "end", [bx for _, bx in cols.boundaries])
    # the last positioner back to output -
    layout.lines.append(SignalLine(kind, ((ends[-1][0], ys[-1] + d), (ret, ys[-1] + d), (ret, ys[0] + d),
                                          (x_in, ys[0] + d)), "series-return"))
    # polarity of the output, between the return wire and the shared item's enclosure
    half = LINE_HALF_WIDTH_MM.get(kind, 0.4)
    column = rows[rows[root].series[0]].merge[1]  # type: ignore[index]
    x = (ret + cols.left[column]) / 2
    layout.texts.append(_text("+", x, ys[0] - d - half - 0.3 - DESCENT_EM * TEXT_MM, "middle", "polarity"))
    layout.texts.append(_text("\u2212", x, ys[0] + d + half + 0.3 + ASCENT_EM * TEXT_MM, "middle", "polarity"))


def _free_text(layout: LoopLayout, text: str, x: float, y0: float, y1: float, anchor: str,
               band_edges: list[float]) -> None:
    """Put ``text`` at ``x`` between heights ``y0`` and ``y1``, middle first, where it
    overlaps no text, symbol or line placed so far nor a band boundary at ``band_edges``;
    left out when nowhere is free."""
    height = _label_height()
    boxes = [t.box for t in layout.texts] + [b for _, b in layout.solid_boxes()] + layout.line_boxes()
    boxes += [Rect(e - THIN_MM / 2, y0, THIN_MM, y1 - y0) for e in band_edges]
    for f in (0.5, 0.35, 0.65, 0.2, 0.8):
        top = y0 + f * (y1 - y0) - height / 2
        placed = _text(text, x, top + ASCENT_EM * TEXT_MM, anchor, "series-link")
        if top > y0 + 0.5 and top + height < y1 - 0.5 and not any(placed.box.overlaps(b) for b in boxes):
            layout.texts.append(placed)
            return


def _impulse_lines(layout: LoopLayout, rows: list[Row], cols: _Columns) -> None:
    """The low-pressure impulse line of an orifice, to the bottom of its transmitter."""
    for row in rows:
        for k, st in enumerate(row.stations[:-1]):
            low = st.cluster.points.get("tap-low")  # type: ignore[union-attr]
            bottom = row.stations[k + 1].cluster.points.get("bottom")  # type: ignore[union-attr]
            if low is None or bottom is None:
                continue
            lx, ly = cols.ref[st.column] + low[0], row.y + low[1]
            bx, by = cols.ref[row.stations[k + 1].column] + bottom[0], row.y + bottom[1]
            mid = (ly + by) / 2
            layout.lines.append(SignalLine("connection", ((lx, ly), (lx, mid), (bx, mid), (bx, by)), "impulse"))


def _function_buses(layout: LoopLayout, rows: list[Row], cols: _Columns, fn_row: int | None) -> None:
    """Links into the function: rows above join a line into its top, rows below one into
    its bottom, each with a junction dot."""
    fn_x = _function_x(rows, cols, fn_row)
    if fn_row is None or fn_x is None:
        return
    host = rows[fn_row]
    cluster = host.stations[-1].cluster
    assert cluster is not None
    top = (fn_x + cluster.points["top"][0], host.y + cluster.points["top"][1])
    bottom = (fn_x + cluster.points["bottom"][0], host.y + cluster.points["bottom"][1])
    joining = [i for i, r in enumerate(rows) if i != fn_row and r.linked and not r.ends_at_connector()]
    above = [rows[i] for i in joining if i < fn_row]
    below = [rows[i] for i in joining if i > fn_row]
    if above:
        layout.lines.append(SignalLine(above[0].tail_kind, ((fn_x, above[0].y), top), "bus"))
        layout.dots += [Dot(fn_x, r.y) for r in above[1:]]
    if below:
        layout.lines.append(SignalLine(below[-1].tail_kind, (bottom, (fn_x, below[-1].y)), "bus"))
        layout.dots += [Dot(fn_x, r.y) for r in below[:-1]]


def _enclosures(layout: LoopLayout, rows: list[Row], cols: _Columns) -> None:
    """Dashed outlines around each junction box's and cabinet's stations, one per run of
    neighbouring rows in the same box."""
    for columns, kind in ((("J",), "jb"), (("C0", "C1"), "cabinet")):
        run: list[tuple[Row, list[Station]]] = []
        current: str | None = None

        def close() -> None:
            if not run or current is None:
                return
            in_use = sorted({s.column for _, sts in run for s in sts}, key=COLUMNS.index)
            x0, x1 = cols.left[in_use[0]], cols.right[in_use[-1]]
            tops = [r.y + s.cluster.box.y for r, sts in run for s in sts]  # type: ignore[union-attr]
            bottoms = [r.y + s.cluster.box.bottom for r, sts in run for s in sts]  # type: ignore[union-attr]
            rect = Rect(x0, min(tops), x1 - x0, max(bottoms) - min(tops))
            layout.frames.append(Frame(rect, stroke_mm=THIN_MM, dash_mm=(1.5, 1.0), role=f"enclosure-{kind}",
                                       name=f"{kind}:{current}"))

        for row in rows:
            inside = [s for s in row.stations if s.column in columns and s.enclosure]
            name = inside[0].enclosure if inside else None
            if name != current:
                close()
                run, current = [], name
            if name is not None:
                run.append((row, inside))
        close()


def _bands(layout: LoopLayout, cols: _Columns) -> None:
    """Band titles along the top, a rule under them, dashed separators between bands."""
    order: list[str] = []
    for c in cols.used:
        if not order or order[-1] != BAND_OF_COLUMN[c]:
            order.append(BAND_OF_COLUMN[c])
    edges = [0.0] + [x for _, x in cols.boundaries] + [layout.width_mm]
    top = MARGIN_MM
    rule_y = top + TITLE_MM + 1.5
    for i, band in enumerate(order):
        x0, x1 = edges[i], edges[i + 1]
        layout.bands.append(Band(band, BAND_TITLES[band], x0, x1))
        layout.texts.append(PlacedText(BAND_TITLES[band], (x0 + x1) / 2, top + ASCENT_EM * TITLE_MM, TITLE_MM,
                                       "middle", True, "band-title", "", fit_width_mm=max(x1 - x0 - 2.0, 1.0)))
    layout.paths.append(Path(((0.0, rule_y), (layout.width_mm, rule_y)), stroke_mm=THIN_MM, role="band-rule"))
    for _, x in cols.boundaries:
        # thin chain line (ISO 128-2 type 04.1, from memory), unlike any signal line
        layout.paths.append(Path(((x, top), (x, layout.height_mm - MARGIN_MM)), stroke_mm=THIN_MM,
                                 dash_mm=(8.0, 1.5, 1.0, 1.5), role="band-boundary"))
