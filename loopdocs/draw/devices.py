"""The drawing vocabulary: which symbol each kind of field device is drawn with, the ports
the drawing uses, and the builder that places it (docs/design.md §8.1).

Device kinds come in four families, each an enum with a registry entry per member:

- :class:`MeasuringKind` -- the sensing part of a primary element (orifice plate, generic
  in-line element, thermowell, RTD or thermocouple in a thermowell); entry
  :class:`MeasuringEntry`, registry :data:`MEASURING`;
- :class:`BodyKind` -- the valve body (globe); :class:`BodyEntry`, :data:`BODIES`;
- :class:`ActuatorKind` -- the actuator stacked on the body's stem (diaphragm, piston);
  :class:`ActuatorEntry`, :data:`ACTUATORS`;
- :class:`AccessoryKind` -- what sits in the valve's signal path before the actuator
  (positioner, I/P converter); :class:`AccessoryEntry`, :data:`ACCESSORIES`.

Each entry names its symbol files and the ports it uses (:class:`SymbolUse`); a test
checks that every file exists with those ports and that every symbol file in
``loopdocs/symbols`` is used by an entry or listed as a building block
(``loopdocs.draw.symbols.BUILDING_BLOCK_PORTS``). The *choosers* (:func:`measuring_kind`,
:func:`sensor_kind`, :func:`body_kind`, :func:`actuator_kind`, :func:`accessory_kinds`)
pick the kinds from the index record; the builders (:func:`element_cluster`,
:func:`valve_cluster`) place what the entries say. Nothing here dispatches on strings.

How to add a device kind (for example a butterfly body, a Coriolis meter, a solenoid):

1. Draw ``loopdocs/symbols/<file>.svg`` following ``loopdocs/symbols/README.md`` (ports as
   ``<circle class="port" id="port-NAME" r="0"/>``), then regenerate the library's README
   and contact sheet: ``.venv/bin/python docs/make_contact_sheet.py``.
2. Add a member to the family's enum and one entry to its registry below, naming the file
   and the ports the builder uses. An in-line measuring element with the same ports as
   ``element-generic`` uses :func:`_in_line`; an element in a thermowell uses
   :func:`_in_thermowell`; a valve body needs ``inlet``, ``outlet`` and the stem port, an
   actuator the stem port, ``signal`` and ``side-right``; an accessory in the signal path
   ``signal-in`` and ``air-out`` (:func:`_signal_path_accessory`). A kind drawn another
   way gets a builder of its own here, with the same signature as its family's.
3. Let the family's chooser return the new kind for the index values that mean it.
4. Add a test in ``tests/test_draw_devices.py`` that builds a record of that kind and
   checks the symbol is placed, with the source of the drawing convention in a comment.
   ``tests/test_symbols.py`` then checks the file and its ports.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from enum import Enum
from functools import lru_cache
from types import MappingProxyType

from loopdocs.draw.clusters import (
    LINE_PITCH_MM,
    PIPE_STUB_MM,
    TEXT_MM,
    Cluster,
    bubble,
    fmt_number,
    label,
    service_lines,
    stack_lines,
)
from loopdocs.draw.geometry import Drawing, PlacedSymbol, PlacedText, Point, SignalLine
from loopdocs.draw.symbols import BUILDING_BLOCK_PORTS, Symbol, load_symbol, stack
from loopdocs.draw.text import ASCENT_EM
from loopdocs.model.records import Tag
from loopdocs.model.vocab import Sensor, Signal, SplitMethod

AIR_GAP_MM = 3.0
"""Length of the air line from an accessory to the actuator (or to the next accessory)."""
TAP_DROP_MM = 13.0
"""How far below the row line an orifice plate's high-pressure tap sits."""
ELEMENT_DROP_MM = 2.5
"""Gap between a primary element's bubble and its sensing part below it."""


@dataclass(frozen=True)
class SymbolUse:
    """One symbol file (``loopdocs/symbols/<file>.svg``) and the ports a builder uses."""

    file: str
    ports: tuple[str, ...]

    def load(self) -> Symbol:
        return load_symbol(self.file)


def _symbols_of(*uses: SymbolUse | None) -> tuple[SymbolUse, ...]:
    return tuple(u for u in uses if u is not None)


# --------------------------------------------------------------------------- measuring elements


class MeasuringKind(Enum):
    """The sensing part a primary element is drawn with."""

    ORIFICE = "orifice plate"
    """Differential-pressure element with two impulse taps (the transmitter takes the
    low-pressure line at its bottom)."""
    GENERIC = "in-line element"
    THERMOWELL = "thermowell"
    RTD = "RTD in a thermowell"
    THERMOCOUPLE = "thermocouple in a thermowell"


ElementBuilder = Callable[["MeasuringEntry", Tag, bool], Cluster]
"""``(entry, tag, tagged) -> Cluster``: ``tagged`` draws the element's own bubble on the
row line; otherwise ``tag`` is the transmitter whose untagged sensor is drawn, its line
leaving from the sensing part on the row line."""


@dataclass(frozen=True)
class MeasuringEntry:
    kind: MeasuringKind
    part: SymbolUse
    """The symbol the process line runs through (thermowell, orifice, in-line element)."""
    build: ElementBuilder
    inner: SymbolUse | None = None
    """The sensing element drawn inside the part (RTD, thermocouple), stacked on ``inner_port``."""
    impulse_taps: bool = False
    """The element joins its transmitter by impulse lines (a connection, no signal label)."""

    @property
    def symbols(self) -> tuple[SymbolUse, ...]:
        return _symbols_of(self.part, self.inner)


# --------------------------------------------------------------------------- valves


class BodyKind(Enum):
    """The valve body."""

    GLOBE = "globe"


class ActuatorKind(Enum):
    """The actuator stacked on the valve's stem."""

    DIAPHRAGM = "diaphragm"
    PISTON = "piston"


class AccessoryKind(Enum):
    """A device in the valve's signal path, between the row line and the actuator."""

    POSITIONER = "positioner"
    IP_CONVERTER = "I/P converter"


@dataclass(frozen=True)
class BodyEntry:
    kind: BodyKind
    symbol: SymbolUse
    """Needs ``inlet``, ``outlet`` and ``stem_port``."""
    stem_port: str = "stem-top"


@dataclass(frozen=True)
class ActuatorEntry:
    kind: ActuatorKind
    symbol: SymbolUse
    """Needs ``stem_port``, ``signal`` (the stem's top, where the tag bubble stands) and
    ``side-right`` (where the air line or the row line arrives)."""
    stem_port: str = "stem-bottom"


AccessoryBuilder = Callable[["AccessoryEntry", Tag, Point], PlacedSymbol]
"""``(entry, valve tag, where the signal arrives) -> the placed accessory``, its
``signal-in`` port on that point and its ``air-out`` port facing left, towards the actuator."""


@dataclass(frozen=True)
class AccessoryEntry:
    kind: AccessoryKind
    symbol: SymbolUse
    build: AccessoryBuilder
    rotate_deg: float = 0.0
    """Turn of the symbol so its signal input faces the control system on the right."""


# --------------------------------------------------------------------------- builders


def _sensor_text(tag: Tag, x: float, top: float) -> list[PlacedText]:
    return [label(tag.sensor.value, x, top + ASCENT_EM * TEXT_MM, "start", "sensor")] if tag.sensor else []


def _placed_part(entry: MeasuringEntry, x: float, y: float, anchor: str, tag: Tag, tagged: bool,
                 symbol: Symbol | None = None) -> PlacedSymbol:
    prefix = entry.kind.name.lower() if tagged else "sensor"
    return PlacedSymbol(symbol or entry.part.load(), x, y, anchor=anchor, role="sensing",
                        tag=tag.tag if tagged else None,
                        ports_used=entry.part.ports + (entry.inner.ports if entry.inner else ()),
                        name=f"{prefix}:{tag.tag}")


def _element_bubble(tag: Tag, drawing: Drawing) -> PlacedSymbol:
    placed, texts = bubble(tag, "field", "element")
    drawing.symbols.append(placed)
    drawing.texts += texts
    return placed


def _in_thermowell(entry: MeasuringEntry, tag: Tag, tagged: bool) -> Cluster:
    """A thermowell hanging from the vessel wall, with the sensing element in it when the
    entry has one; the sensor type is written beside it. Tagged: the element's bubble on
    the row line and the well below it on a leader. Untagged: the well head on the row line."""
    drawing = Drawing()
    symbol = thermowell_symbol(entry.part, entry.inner)
    if tagged:
        placed = _element_bubble(tag, drawing)
        bottom = placed.port("bottom")
        part = _placed_part(entry, bottom[0], bottom[1] + ELEMENT_DROP_MM, "head", tag, tagged, symbol)
    else:
        part = _placed_part(entry, 0.0, 0.0, "head", tag, tagged, symbol)
    drawing.symbols.append(part)
    left, right = part.port("flange-left"), part.port("flange-right")
    drawing.lines.append(SignalLine("process", ((left[0] - 3.0, left[1]), (right[0] + 3.0, right[1])), "vessel"))
    if tagged:
        drawing.lines.append(SignalLine("connection", (bottom, part.port("head")), "element-leader"))
    drawing.texts += _sensor_text(tag, part.box.right + 1.0, right[1] + 1.0)
    return Cluster(drawing, attach_out=placed.port("right") if tagged else part.port("head"))


def _in_line(entry: MeasuringEntry, tag: Tag, tagged: bool) -> Cluster:
    """An in-line element on a stub of pipe below the element's bubble, joined to it at
    port ``out``; the sensor type beside it."""
    drawing = Drawing()
    if tagged:
        placed = _element_bubble(tag, drawing)
        bottom = placed.port("bottom")
        part = _placed_part(entry, bottom[0], bottom[1] + ELEMENT_DROP_MM, "out", tag, tagged)
    else:
        part = _placed_part(entry, 0.0, 0.0, "out", tag, tagged)
    up, down = part.port("upstream"), part.port("downstream")
    drawing.lines.append(SignalLine("process", ((up[0] - 3.0, up[1]), up), "pipe"))
    drawing.lines.append(SignalLine("process", (down, (down[0] + 3.0, down[1])), "pipe"))
    drawing.symbols.append(part)
    if tagged:
        drawing.lines.append(SignalLine("connection", (bottom, part.port("out")), "element-leader"))
    drawing.texts += _sensor_text(tag, part.box.right + 1.0, part.box.y)
    return Cluster(drawing, attach_out=placed.port("right") if tagged else part.port("out"))


def _orifice(entry: MeasuringEntry, tag: Tag, tagged: bool) -> Cluster:
    """Orifice plate with its tag bubble upstream; impulse lines leave both taps upward.

    The high-pressure tap is at x = 0, :data:`TAP_DROP_MM` below the row line; its impulse
    line rises to the row line and runs right to the transmitter. The low-pressure tap's
    line is routed by the placement to the transmitter's bottom (``points['tap-low']``)."""
    drawing = Drawing()
    orifice = _placed_part(entry, 0.0, TAP_DROP_MM, "tap-high", tag, True)
    drawing.symbols.append(orifice)
    up, down = orifice.port("upstream"), orifice.port("downstream")
    placed, texts = bubble(tag, "field", "element")
    bubble_x = up[0] - 3.0 - placed.symbol.width_mm / 2
    placed = PlacedSymbol(placed.symbol, bubble_x, up[1] - 2.0, anchor="bottom", role="element", tag=tag.tag,
                          ports_used=placed.ports_used, name=placed.name)
    drawing.symbols.append(placed)
    for t in texts:
        x, y = placed.port(t.role)
        drawing.texts.append(label(t.text, x, y, "middle", t.role, placed.name, fit=t.fit_width_mm))
    pipe_left = placed.box.x - 1.0
    drawing.lines.append(SignalLine("process", ((pipe_left, up[1]), up), "pipe"))
    drawing.lines.append(SignalLine("process", (down, (down[0] + PIPE_STUB_MM, down[1])), "pipe"))
    drawing.lines.append(SignalLine("connection", (placed.port("bottom"), (placed.port("bottom")[0], up[1])),
                                    "element-leader"))
    high = orifice.port("tap-high")
    return Cluster(drawing, attach_out=(high[0], 0.0), out_path=(high, (high[0], 0.0)),
                   points={"tap-low": orifice.port("tap-low")})


def _signal_path_accessory(entry: AccessoryEntry, valve: Tag, at: Point) -> PlacedSymbol:
    """An accessory with its ``signal-in`` on ``at`` and ``air-out`` to the left."""
    return PlacedSymbol(entry.symbol.load(), at[0], at[1], anchor="signal-in", rotate_deg=entry.rotate_deg,
                        role=entry.kind.name.lower().replace("_", "-"), tag=valve.tag, ports_used=entry.symbol.ports,
                        name=f"{entry.kind.name.lower().replace('_', '-')}:{valve.tag}")


# --------------------------------------------------------------------------- registries


_WELL = SymbolUse("element-thermowell", ("head", "flange-left", "flange-right", "tip"))

MEASURING: Mapping[MeasuringKind, MeasuringEntry] = MappingProxyType({
    MeasuringKind.ORIFICE: MeasuringEntry(
        MeasuringKind.ORIFICE, SymbolUse("element-orifice", ("tap-high", "tap-low", "upstream", "downstream")),
        _orifice, impulse_taps=True),
    MeasuringKind.GENERIC: MeasuringEntry(
        MeasuringKind.GENERIC, SymbolUse("element-generic", ("out", "upstream", "downstream")), _in_line),
    MeasuringKind.THERMOWELL: MeasuringEntry(MeasuringKind.THERMOWELL, _WELL, _in_thermowell),
    MeasuringKind.RTD: MeasuringEntry(
        MeasuringKind.RTD, _WELL, _in_thermowell, inner=SymbolUse("element-rtd", ("head", "wire-a", "wire-b", "wire-c"))),
    MeasuringKind.THERMOCOUPLE: MeasuringEntry(
        MeasuringKind.THERMOCOUPLE, _WELL, _in_thermowell,
        inner=SymbolUse("element-thermocouple", ("head", "plus", "minus"))),
})

BODIES: Mapping[BodyKind, BodyEntry] = MappingProxyType({
    BodyKind.GLOBE: BodyEntry(BodyKind.GLOBE, SymbolUse("valve-globe", ("inlet", "outlet", "stem-top"))),
})

_ACTUATOR_PORTS = ("stem-bottom", "signal", "side-right")
ACTUATORS: Mapping[ActuatorKind, ActuatorEntry] = MappingProxyType({
    ActuatorKind.DIAPHRAGM: ActuatorEntry(ActuatorKind.DIAPHRAGM, SymbolUse("actuator-diaphragm", _ACTUATOR_PORTS)),
    ActuatorKind.PISTON: ActuatorEntry(ActuatorKind.PISTON, SymbolUse("actuator-piston", _ACTUATOR_PORTS)),
})

ACCESSORIES: Mapping[AccessoryKind, AccessoryEntry] = MappingProxyType({
    # drawn with its signal input on the left, so turned half a turn to face the control system
    AccessoryKind.POSITIONER: AccessoryEntry(AccessoryKind.POSITIONER, SymbolUse("positioner", ("signal-in", "air-out")),
                                             _signal_path_accessory, rotate_deg=180.0),
    # drawn with its signal input on the right (the letters stay upright)
    AccessoryKind.IP_CONVERTER: AccessoryEntry(AccessoryKind.IP_CONVERTER,
                                               SymbolUse("ip-converter", ("signal-in", "air-out")),
                                               _signal_path_accessory),
})


def symbol_uses() -> Iterator[SymbolUse]:
    """Every symbol file the registries draw, with the ports used (may repeat a file)."""
    for m in MEASURING.values():
        yield from m.symbols
    for b in BODIES.values():
        yield b.symbol
    for a in ACTUATORS.values():
        yield a.symbol
    for c in ACCESSORIES.values():
        yield c.symbol


def required_ports() -> dict[str, frozenset[str]]:
    """Every symbol file the drawing uses -- building blocks and device symbols -- with
    the ports it relies on."""
    ports: dict[str, set[str]] = {name: set(p) for name, p in BUILDING_BLOCK_PORTS.items()}
    for use in symbol_uses():
        ports.setdefault(use.file, set()).update(use.ports)
    return {name: frozenset(p) for name, p in sorted(ports.items())}


# --------------------------------------------------------------------------- stacked symbols


@lru_cache(maxsize=None)
def thermowell_symbol(well: SymbolUse, inner: SymbolUse | None) -> Symbol:
    """The thermowell with the sensing element in it: the element's ``head`` port on the
    well's ``head`` port (the element enters the well through its mouth)."""
    if inner is None:
        return well.load()
    return stack(well.load(), "head", inner.load(), "head")


@lru_cache(maxsize=None)
def valve_symbol(body: BodyKind = BodyKind.GLOBE, actuator: ActuatorKind = ActuatorKind.DIAPHRAGM) -> Symbol:
    """The valve body with the actuator stacked on its stem.

    >>> v = valve_symbol(BodyKind.GLOBE, ActuatorKind.DIAPHRAGM)
    >>> v.name, v.ports["stem-top"] == v.ports["stem-bottom"]
    ('valve-globe+actuator-diaphragm', True)
    """
    b, a = BODIES[body], ACTUATORS[actuator]
    return stack(b.symbol.load(), b.stem_port, a.symbol.load(), a.stem_port)


# --------------------------------------------------------------------------- choosers


def sensor_kind(sensor: Sensor) -> MeasuringKind:
    """An RTD or a thermocouple, drawn in a thermowell (common practice: a process
    temperature sensor is inserted in a well)."""
    return MeasuringKind.RTD if sensor.is_rtd else MeasuringKind.THERMOCOUPLE


def measuring_kind(element: Tag, feeds_transmitter: bool) -> MeasuringKind:
    """The sensing part of a primary element: a flow element feeding a transmitter is an
    orifice plate (the DP transmitter takes its impulse lines); a temperature element is
    its sensor in a thermowell (the bare well when the Sensor is blank); anything else
    the generic in-line element."""
    variable = element.parts.variable
    if variable.startswith("F") and feeds_transmitter:
        return MeasuringKind.ORIFICE
    if variable.startswith("T"):
        return sensor_kind(element.sensor) if element.sensor is not None else MeasuringKind.THERMOWELL
    return MeasuringKind.GENERIC


def body_kind(valve: Tag) -> BodyKind:
    """Globe: the index has no valve body column yet."""
    return BodyKind.GLOBE


def actuator_kind(valve: Tag) -> ActuatorKind:
    """Diaphragm: the index has no actuator column yet."""
    return ActuatorKind.DIAPHRAGM


def accessory_kinds(valve: Tag) -> tuple[AccessoryKind, ...]:
    """A positioner when the valve has a positioner action, is in a positioner split, or
    takes an electric signal (an electro-pneumatic positioner, common practice); nothing
    for a valve moved by a pneumatic signal straight to its actuator."""
    signal = valve.signal
    if valve.positioner_action is not None or valve.split_method is SplitMethod.POSITIONER:
        return (AccessoryKind.POSITIONER,)
    if signal is not None and not signal.is_pneumatic and signal is not Signal.NONE:
        return (AccessoryKind.POSITIONER,)
    return ()


# --------------------------------------------------------------------------- device drawings


def element_cluster(tag: Tag, kind: MeasuringKind, tagged: bool = True) -> Cluster:
    """A primary element of kind ``kind`` (tagged: with its bubble), or the untagged
    sensor of transmitter ``tag``."""
    entry = MEASURING[kind]
    return entry.build(entry, tag, tagged)


def _split_setting_text(tag: Tag) -> str | None:
    """What the element's split setting is, for the label under its positioner."""
    if tag.split_method in (SplitMethod.POSITIONER, SplitMethod.PNEUMATIC):
        if tag.input_low is not None and tag.input_high is not None:
            unit = f" {tag.input_units}" if tag.input_units else ""
            return f"in {fmt_number(tag.input_low)}-{fmt_number(tag.input_high)}{unit}"
    if tag.split_method is SplitMethod.DCS and tag.co_start_pct is not None and tag.co_end_pct is not None:
        return f"CO {fmt_number(tag.co_start_pct)}-{fmt_number(tag.co_end_pct)} %"
    return None


def valve_cluster(tag: Tag, loop_service: str | None, body: BodyKind | None = None,
                  actuator: ActuatorKind | None = None,
                  accessories: tuple[AccessoryKind, ...] | None = None) -> Cluster:
    """Control valve: body with actuator (kinds chosen from the record unless given), the
    accessories in its signal path, the tag bubble above the actuator, fail position below
    the body (ISA-5.1 FC/FO/FL), air action beside the actuator, split setting under the
    first accessory, service below.

    The row line joins the first accessory's signal input (or the actuator), here at (0, 0)."""
    body = body_kind(tag) if body is None else body
    actuator = actuator_kind(tag) if actuator is None else actuator
    accessories = accessory_kinds(tag) if accessories is None else accessories
    drawing = Drawing()
    placed_accessories: list[PlacedSymbol] = []
    at: Point = (0.0, 0.0)
    for kind in accessories:
        entry = ACCESSORIES[kind]
        placed = entry.build(entry, tag, at)
        if placed_accessories:
            drawing.lines.append(SignalLine("pneumatic", (placed_accessories[-1].port("air-out"),
                                                          placed.port("signal-in")), "accessory-air"))
        drawing.symbols.append(placed)
        placed_accessories.append(placed)
        air_out = placed.port("air-out")
        at = (air_out[0] - AIR_GAP_MM, air_out[1])
    actuator_at = at
    valve = PlacedSymbol(valve_symbol(body, actuator), actuator_at[0], actuator_at[1], anchor="side-right",
                         role="valve", tag=tag.tag,
                         ports_used=("side-right", "signal", "inlet", "outlet", "stem-top"),
                         name=f"valve:{tag.tag}")
    drawing.symbols.append(valve)
    if placed_accessories:
        drawing.lines.append(SignalLine("pneumatic", (placed_accessories[-1].port("air-out"),
                                                      valve.port("side-right")), "positioner-air"))
    inlet, outlet = valve.port("inlet"), valve.port("outlet")
    drawing.lines.append(SignalLine("process", ((inlet[0] - PIPE_STUB_MM, inlet[1]), inlet), "pipe"))
    drawing.lines.append(SignalLine("process", (outlet, (outlet[0] + PIPE_STUB_MM, outlet[1])), "pipe"))

    stem_x, signal_y = valve.port("signal")
    placed_bubble, texts = bubble(tag, "field", "instrument")
    placed_bubble = PlacedSymbol(placed_bubble.symbol, stem_x, signal_y - 1.5, anchor="bottom", role="instrument",
                                 tag=tag.tag, ports_used=placed_bubble.ports_used, name=placed_bubble.name)
    drawing.symbols.append(placed_bubble)
    for t in texts:
        x, y = placed_bubble.port(t.role)
        drawing.texts.append(label(t.text, x, y, "middle", t.role, placed_bubble.name, fit=t.fit_width_mm))

    box = valve.box
    y = box.bottom + 0.8
    if tag.fail_position is not None:
        drawing.texts += stack_lines([tag.fail_position.value], stem_x, y, "middle", "fail-position")
        y += LINE_PITCH_MM
    if tag.air_action is not None:
        drawing.texts.append(label(tag.air_action.value, box.x - 1.0, actuator_at[1] - 0.5, "end", "air-action"))
    service = service_lines(tag, loop_service)
    if service:
        drawing.texts += stack_lines(service, stem_x, y + 0.5, "middle", "service")
    setting = _split_setting_text(tag)
    if setting:
        first = placed_accessories[0] if placed_accessories else None
        anchor_x = first.box.x if first is not None else valve.box.right + 0.5
        top = (first.box.bottom if first is not None else 1.5) + 0.8
        drawing.texts.append(label(setting, anchor_x, top + ASCENT_EM * TEXT_MM, "start", "split-setting"))
    return Cluster(drawing, attach_out=(0.0, 0.0), points={"attach": (0.0, 0.0)})
