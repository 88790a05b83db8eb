"""The drawing vocabulary: which symbol each kind of field device is drawn with, the ports
the drawing uses, and the builder that places it (docs/design.md §8.1).

Device kinds come in four families, each an enum with a registry entry per member:

- :class:`MeasuringKind` -- the sensing part of a primary element (orifice plate, generic
  in-line element, thermowell, RTD or thermocouple in a thermowell, in-line meters that
  share one body told apart by letter codes, variable-area meter, level probes and
  antennas, seal, pressure tapping, analyser probes); entry :class:`MeasuringEntry`,
  registry :data:`MEASURING`; chosen from the Device Type (:func:`device_kind`), else
  from the letters and the Sensor;
- :class:`BodyKind` -- the valve body (every Valve Body); :class:`BodyEntry`, :data:`BODIES`;
- :class:`ActuatorKind` -- the actuator stacked on the body's stem (every Actuator);
  :class:`ActuatorEntry`, :data:`ACTUATORS`;
- :class:`AccessoryKind` -- what is mounted on the valve, each with its :class:`Mount`:
  the signal path (positioner, I/P converter), the air line to the actuator (lock-up,
  solenoid valve, booster), the yoke (limit switch box, position transmitter) or the
  supply line (air filter regulator); :class:`AccessoryEntry`, :data:`ACCESSORIES`.

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

from loopdocs.draw.annotations import air_supply_text, area_text, interlock_text
from loopdocs.draw.clusters import (
    LINE_PITCH_MM,
    PIPE_STUB_MM,
    TEXT_MM,
    Cluster,
    bubble,
    fmt_number,
    label,
    label_height,
    service_lines,
    stack_height,
    stack_lines,
    wrapped,
)
from loopdocs.draw.geometry import LINE_HALF_WIDTH_MM, Drawing, PlacedSymbol, PlacedText, Point, Rect, SignalLine
from loopdocs.draw.symbols import BUILDING_BLOCK_PORTS, Symbol, load_symbol, stack
from loopdocs.draw.text import ASCENT_EM, wrap_text
from loopdocs.model.records import Tag
from loopdocs.model.vocab import Accessory, Actuator, DeviceType, Sensor, Signal, SplitMethod, ValveBody

AIR_GAP_MM = 3.0
"""Length of the air line from an accessory to the actuator (or to the next accessory)."""
TAP_DROP_MM = 13.0
"""How far below the row line an orifice plate's high-pressure tap sits."""
ELEMENT_DROP_MM = 2.5
"""Gap between a primary element's bubble and its sensing part below it."""
SUPPLY_DROP_MM = 3.0
"""Length of each run of the instrument air supply line below a valve's first accessory."""
ROW_LINE_CLEAR_MM = LINE_HALF_WIDTH_MM["pneumatic"] + 0.4
"""Space kept above the row line (y = 0) by a text beside a valve's bubble."""
AIR_TEXT_WRAP_MM = 26.0
"""Width at which the air supply text under its line wraps (``IA ring main`` / ``brewhouse``)."""
SUPPLY_JOG_MM = 1.5
"""Drop of the air supply line before it steps right, clear of the valve's pipe."""
COIL_DROP_MM = 2.0
"""How far below the row line an on/off valve's solenoid coil sits (the row line drops to it)."""
COIL_LEAD_MM = 2.5
"""Lead from a solenoid coil up to the label naming its own signal."""
YOKE_GAP_MM = 2.5
"""Gap between a valve body and the limit switch box on its left."""


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
    MAGNETIC = "magnetic flow meter"
    VORTEX = "vortex flow meter"
    CORIOLIS = "Coriolis flow meter"
    ULTRASONIC = "ultrasonic flow meter"
    THERMAL_MASS = "thermal mass flow meter"
    TURBINE = "turbine flow meter"
    POSITIVE_DISPLACEMENT = "positive displacement flow meter"
    VARIABLE_AREA = "variable-area meter"
    RADAR = "radar antenna"
    GUIDED_WAVE_RADAR = "guided-wave radar probe"
    DISPLACER = "displacer"
    FLOAT = "float"
    CAPACITANCE = "capacitance probe"
    HYDROSTATIC = "diaphragm seal"
    PRESSURE = "pressure tapping"
    PH = "pH probe"
    CONDUCTIVITY = "conductivity probe"
    OXYGEN = "oxygen probe"
    ANALYSER = "analyser probe"


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
    code: str | None = None
    """Letters that tell apart kinds sharing one symbol: written in the symbol's ``code``
    text area when it has one (in-line meters), else beside the part (analyser probes)."""

    @property
    def symbols(self) -> tuple[SymbolUse, ...]:
        return _symbols_of(self.part, self.inner)


# --------------------------------------------------------------------------- valves


#: The valve body: the index's own Valve Body vocabulary, one symbol per member.
BodyKind = ValveBody


class ActuatorKind(Enum):
    """The actuator stacked on the valve's stem."""

    DIAPHRAGM = "diaphragm"
    PISTON = "double-acting piston"
    SPRING_PISTON = "spring-return piston"
    ELECTRIC = "electric"
    HYDRAULIC = "hydraulic"


class Mount(Enum):
    """Where on the valve an accessory goes."""

    SIGNAL_PATH = "signal path"
    """Between the row line and the actuator, taking the signal (positioner, I/P)."""
    AIR_LINE = "air line"
    """In the air line to the actuator (solenoid valve, lock-up, booster)."""
    YOKE = "yoke"
    """On the yoke, joined to the stem (limit switches, position transmitter)."""
    SUPPLY = "supply"
    """In the instrument air supply line (air filter regulator)."""


class AccessoryKind(Enum):
    """A device mounted on the valve (its :class:`Mount` in the registry entry)."""

    POSITIONER = "positioner"
    IP_CONVERTER = "I/P converter"
    LOCK_UP = "lock-up"
    SOLENOID = "solenoid valve"
    BOOSTER = "volume booster"
    LIMIT_SWITCH = "limit switch"
    POSITION_TRANSMITTER = "position transmitter"
    FILTER_REGULATOR = "air filter regulator"


@dataclass(frozen=True)
class BodyEntry:
    kind: BodyKind
    symbol: SymbolUse
    """Needs ``inlet``, ``outlet`` and ``stem_port`` (and ``branch`` for a three-way body)."""
    stem_port: str = "stem-top"
    branch: bool = False
    """A third process port (``branch``) below the centre."""


@dataclass(frozen=True)
class ActuatorEntry:
    kind: ActuatorKind
    symbol: SymbolUse
    """Needs ``stem_port``, ``signal`` (the stem's top, where the tag bubble stands) and
    ``side-right`` (where the air line or the row line arrives)."""
    stem_port: str = "stem-bottom"
    pneumatic: bool = True
    """Moved by instrument air: takes a positioner and an air supply."""


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
    mount: Mount = Mount.SIGNAL_PATH
    """Signal path and air line: ports ``signal-in`` (right) and ``air-out`` (left),
    chained towards the actuator; yoke: ``stem`` and ``wires``; supply: ``in`` and ``out``."""
    letters: str = ""
    """ISA-5.1 letters of the accessory, for its label when the index has no tag for it."""


# --------------------------------------------------------------------------- builders


def _sensor_text(tag: Tag, x: float, top: float, code: str | None = None) -> list[PlacedText]:
    """The sensor type (Pt100, TC-K) or the kind's code (pH) beside the sensing part."""
    text = tag.sensor.value if tag.sensor else code
    return [label(text, x, top + ASCENT_EM * TEXT_MM, "start", "sensor")] if text else []


def _code_text(entry: MeasuringEntry, part: PlacedSymbol) -> list[PlacedText]:
    """The kind's letter code in the part's ``code`` text area (in-line meters)."""
    if not entry.code or "code" not in part.symbol.ports:
        return []
    x, y = part.port("code")
    return [label(entry.code, x, y, "middle", "device-code", part.name, fit=part.symbol.text_areas["code"][2])]


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
    """A part hanging from (or standing on) the vessel or pipe wall -- a thermowell with
    the sensing element in it when the entry has one, a level probe, an analyser probe,
    a seal or a tapping; the sensor type or the kind's code is written beside it. Tagged:
    the element's bubble on the row line and the part below it on a leader. Untagged: the
    part's head on the row line."""
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
    code = entry.code if "code" not in part.symbol.ports else None
    drawing.texts += _sensor_text(tag, part.box.right + 1.0, right[1] + 1.0, code)
    return Cluster(drawing, attach_out=placed.port("right") if tagged else part.port("head"))


def _in_line(entry: MeasuringEntry, tag: Tag, tagged: bool) -> Cluster:
    """An in-line element on a stub of pipe below the element's bubble, joined to it at
    port ``out``; its letter code in it (meters), the sensor type beside it."""
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
    drawing.texts += _code_text(entry, part)
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
_METER = SymbolUse("element-meter", ("out", "upstream", "downstream", "code"))
_PROBE = SymbolUse("element-probe", ("head", "flange-left", "flange-right", "tip"))


def _wall(file: str) -> SymbolUse:
    """A part hung from (or set on) a wall line: the ports :func:`_in_thermowell` uses."""
    return SymbolUse(file, ("head", "flange-left", "flange-right", "tip"))


# Meters sharing one in-line symbol carry letter codes, written in the box. Common
# practice on loop diagrams and P&IDs (from memory; ISA-5.1 lets a primary element's type
# be told by letters beside or in its symbol): M magnetic, V vortex, CM Coriolis mass,
# US ultrasonic, TM thermal mass, TB turbine, PD positive displacement.
_METER_CODES = {MeasuringKind.MAGNETIC: "M", MeasuringKind.VORTEX: "V", MeasuringKind.CORIOLIS: "CM",
                MeasuringKind.ULTRASONIC: "US", MeasuringKind.THERMAL_MASS: "TM", MeasuringKind.TURBINE: "TB",
                MeasuringKind.POSITIVE_DISPLACEMENT: "PD"}
# Analyser probes share one symbol; the analysis is written beside it.
_PROBE_CODES = {MeasuringKind.PH: "pH", MeasuringKind.CONDUCTIVITY: "conductivity", MeasuringKind.OXYGEN: "O2",
                MeasuringKind.ANALYSER: "analyser"}

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
    **{kind: MeasuringEntry(kind, _METER, _in_line, code=code) for kind, code in _METER_CODES.items()},
    MeasuringKind.VARIABLE_AREA: MeasuringEntry(
        MeasuringKind.VARIABLE_AREA, SymbolUse("element-variable-area", ("out", "upstream", "downstream")), _in_line),
    MeasuringKind.RADAR: MeasuringEntry(MeasuringKind.RADAR, _wall("element-radar"), _in_thermowell),
    MeasuringKind.GUIDED_WAVE_RADAR: MeasuringEntry(
        MeasuringKind.GUIDED_WAVE_RADAR, _wall("element-guided-wave-radar"), _in_thermowell),
    MeasuringKind.DISPLACER: MeasuringEntry(MeasuringKind.DISPLACER, _wall("element-displacer"), _in_thermowell),
    MeasuringKind.FLOAT: MeasuringEntry(MeasuringKind.FLOAT, _wall("element-float"), _in_thermowell),
    MeasuringKind.CAPACITANCE: MeasuringEntry(MeasuringKind.CAPACITANCE, _wall("element-capacitance"), _in_thermowell),
    MeasuringKind.HYDROSTATIC: MeasuringEntry(MeasuringKind.HYDROSTATIC, _wall("element-seal"), _in_thermowell),
    MeasuringKind.PRESSURE: MeasuringEntry(MeasuringKind.PRESSURE, _wall("element-pressure-tap"), _in_thermowell),
    **{kind: MeasuringEntry(kind, _PROBE, _in_thermowell, code=code) for kind, code in _PROBE_CODES.items()},
})

_BODY_PORTS = ("inlet", "outlet", "stem-top")
BODIES: Mapping[BodyKind, BodyEntry] = MappingProxyType({
    BodyKind.GLOBE: BodyEntry(BodyKind.GLOBE, SymbolUse("valve-globe", _BODY_PORTS)),
    BodyKind.ANGLE: BodyEntry(BodyKind.ANGLE, SymbolUse("valve-angle", _BODY_PORTS)),
    BodyKind.BUTTERFLY: BodyEntry(BodyKind.BUTTERFLY, SymbolUse("valve-butterfly", _BODY_PORTS)),
    BodyKind.BALL: BodyEntry(BodyKind.BALL, SymbolUse("valve-ball", _BODY_PORTS)),
    BodyKind.SEGMENTED_BALL: BodyEntry(BodyKind.SEGMENTED_BALL, SymbolUse("valve-segmented-ball", _BODY_PORTS)),
    BodyKind.ECCENTRIC_PLUG: BodyEntry(BodyKind.ECCENTRIC_PLUG, SymbolUse("valve-eccentric-plug", _BODY_PORTS)),
    BodyKind.DIAPHRAGM: BodyEntry(BodyKind.DIAPHRAGM, SymbolUse("valve-diaphragm", _BODY_PORTS)),
    BodyKind.THREE_WAY: BodyEntry(BodyKind.THREE_WAY, SymbolUse("valve-three-way", _BODY_PORTS + ("branch",)),
                                  branch=True),
})

_ACTUATOR_PORTS = ("stem-bottom", "signal", "side-right")
ACTUATORS: Mapping[ActuatorKind, ActuatorEntry] = MappingProxyType({
    ActuatorKind.DIAPHRAGM: ActuatorEntry(ActuatorKind.DIAPHRAGM, SymbolUse("actuator-diaphragm", _ACTUATOR_PORTS)),
    ActuatorKind.PISTON: ActuatorEntry(ActuatorKind.PISTON, SymbolUse("actuator-piston", _ACTUATOR_PORTS)),
    ActuatorKind.SPRING_PISTON: ActuatorEntry(ActuatorKind.SPRING_PISTON,
                                              SymbolUse("actuator-piston-spring", _ACTUATOR_PORTS)),
    ActuatorKind.ELECTRIC: ActuatorEntry(ActuatorKind.ELECTRIC, SymbolUse("actuator-electric", _ACTUATOR_PORTS),
                                         pneumatic=False),
    ActuatorKind.HYDRAULIC: ActuatorEntry(ActuatorKind.HYDRAULIC, SymbolUse("actuator-hydraulic", _ACTUATOR_PORTS),
                                          pneumatic=False),
})

_CHAINED = ("signal-in", "air-out")
ACCESSORIES: Mapping[AccessoryKind, AccessoryEntry] = MappingProxyType({
    # drawn with its signal input on the left, so turned half a turn to face the control system
    AccessoryKind.POSITIONER: AccessoryEntry(AccessoryKind.POSITIONER,
                                             SymbolUse("positioner", _CHAINED + ("top", "bottom")),
                                             _signal_path_accessory, rotate_deg=180.0),
    # drawn with its signal input on the right (the letters stay upright)
    AccessoryKind.IP_CONVERTER: AccessoryEntry(AccessoryKind.IP_CONVERTER,
                                               SymbolUse("ip-converter", _CHAINED + ("bottom",)),
                                               _signal_path_accessory),
    AccessoryKind.LOCK_UP: AccessoryEntry(AccessoryKind.LOCK_UP, SymbolUse("lock-up", _CHAINED),
                                          _signal_path_accessory, mount=Mount.AIR_LINE),
    AccessoryKind.SOLENOID: AccessoryEntry(AccessoryKind.SOLENOID, SymbolUse("solenoid-valve", _CHAINED + ("coil",)),
                                           _signal_path_accessory, mount=Mount.AIR_LINE, letters="XY"),
    AccessoryKind.BOOSTER: AccessoryEntry(AccessoryKind.BOOSTER, SymbolUse("volume-booster", _CHAINED),
                                          _signal_path_accessory, mount=Mount.AIR_LINE),
    AccessoryKind.LIMIT_SWITCH: AccessoryEntry(AccessoryKind.LIMIT_SWITCH, SymbolUse("limit-switch", ("stem", "bottom")),
                                               _signal_path_accessory, mount=Mount.YOKE, letters="ZS"),
    AccessoryKind.POSITION_TRANSMITTER: AccessoryEntry(
        AccessoryKind.POSITION_TRANSMITTER, SymbolUse("position-transmitter", ("stem", "top")),
        _signal_path_accessory, mount=Mount.YOKE, letters="ZT"),
    AccessoryKind.FILTER_REGULATOR: AccessoryEntry(
        AccessoryKind.FILTER_REGULATOR, SymbolUse("air-filter-regulator", ("in", "out")), _signal_path_accessory,
        mount=Mount.SUPPLY),
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


_BY_DEVICE_TYPE: Mapping[DeviceType, MeasuringKind] = MappingProxyType({
    DeviceType.MAGNETIC: MeasuringKind.MAGNETIC, DeviceType.VORTEX: MeasuringKind.VORTEX,
    DeviceType.CORIOLIS: MeasuringKind.CORIOLIS, DeviceType.ULTRASONIC: MeasuringKind.ULTRASONIC,
    DeviceType.THERMAL_MASS: MeasuringKind.THERMAL_MASS, DeviceType.TURBINE: MeasuringKind.TURBINE,
    DeviceType.POSITIVE_DISPLACEMENT: MeasuringKind.POSITIVE_DISPLACEMENT,
    DeviceType.VARIABLE_AREA: MeasuringKind.VARIABLE_AREA, DeviceType.RADAR: MeasuringKind.RADAR,
    DeviceType.GUIDED_WAVE_RADAR: MeasuringKind.GUIDED_WAVE_RADAR, DeviceType.DISPLACER: MeasuringKind.DISPLACER,
    DeviceType.HYDROSTATIC: MeasuringKind.HYDROSTATIC, DeviceType.CAPACITANCE: MeasuringKind.CAPACITANCE,
    DeviceType.FLOAT: MeasuringKind.FLOAT, DeviceType.PRESSURE: MeasuringKind.PRESSURE,
    DeviceType.PH: MeasuringKind.PH, DeviceType.CONDUCTIVITY: MeasuringKind.CONDUCTIVITY,
    DeviceType.OXYGEN: MeasuringKind.OXYGEN, DeviceType.ANALYSER: MeasuringKind.ANALYSER,
})
"""Device Type -> the sensing part drawn (DP is chosen by :func:`measuring_kind` from the
letters, as without a Device Type; thermowell by :func:`device_kind` with the Sensor)."""


def device_kind(tag: Tag) -> MeasuringKind | None:
    """The sensing part the tag's Device Type names (a thermowell with the Sensor in it),
    or None (blank, or DP: the orifice is drawn only for a flow element row)."""
    if tag.device_type is DeviceType.THERMOWELL:
        return sensor_kind(tag.sensor) if tag.sensor is not None else MeasuringKind.THERMOWELL
    return _BY_DEVICE_TYPE.get(tag.device_type) if tag.device_type is not None else None


def measuring_kind(element: Tag, feeds_transmitter: bool, transmitter: Tag | None = None) -> MeasuringKind:
    """The sensing part of a primary element: the element's Device Type (else its
    transmitter's) when it names one; else a flow element feeding a transmitter is an
    orifice plate (the DP transmitter takes its impulse lines); a temperature element is
    its sensor in a thermowell (the bare well when the Sensor is blank); anything else
    the generic in-line element."""
    source = transmitter if element.device_type is None and transmitter is not None else element
    named = device_kind(source)
    if named is not None:
        return named
    variable = element.parts.variable
    if variable.startswith("F") and feeds_transmitter:
        return MeasuringKind.ORIFICE
    if variable.startswith("T"):
        return sensor_kind(element.sensor) if element.sensor is not None else MeasuringKind.THERMOWELL
    return MeasuringKind.GENERIC


_ACTUATOR_BY_INDEX: Mapping[Actuator, ActuatorKind] = MappingProxyType({
    Actuator.SPRING_DIAPHRAGM: ActuatorKind.DIAPHRAGM, Actuator.SPRING_PISTON: ActuatorKind.SPRING_PISTON,
    Actuator.DOUBLE_ACTING_PISTON: ActuatorKind.PISTON, Actuator.ELECTRIC: ActuatorKind.ELECTRIC,
    Actuator.HYDRAULIC: ActuatorKind.HYDRAULIC,
})


def body_kind(valve: Tag) -> BodyKind:
    """The Valve Body column; globe (the general two-way body) when blank."""
    return valve.valve_body if valve.valve_body is not None else BodyKind.GLOBE


def actuator_kind(valve: Tag) -> ActuatorKind:
    """The Actuator column; a spring-diaphragm actuator when blank."""
    return _ACTUATOR_BY_INDEX[valve.actuator] if valve.actuator is not None else ActuatorKind.DIAPHRAGM


_AIR_LINE_ORDER: tuple[tuple[Accessory, AccessoryKind], ...] = (
    (Accessory.LOCK_UP, AccessoryKind.LOCK_UP), (Accessory.SOLENOID, AccessoryKind.SOLENOID),
    (Accessory.BOOSTER, AccessoryKind.BOOSTER))
"""Order along the air line from the positioner to the actuator (common practice: the
lock-up holds the positioner's output, the solenoid valve vents the actuator, a booster
sits next to the actuator it fills)."""


def accessory_kinds(valve: Tag) -> tuple[AccessoryKind, ...]:
    """What is drawn on the valve, signal path first, then the air line, the yoke and
    the supply.

    Signal path: a positioner when the valve has a positioner action, is in a positioner
    split, or takes an electric signal (an electro-pneumatic positioner, common
    practice); nothing for a valve moved by a pneumatic signal straight to its actuator,
    for an electric or hydraulic actuator, or for an on/off valve (discrete signal)
    whose solenoid valve takes the signal. Then the Accessories column."""
    listed = set(valve.accessories)
    pneumatic = ACTUATORS[actuator_kind(valve)].pneumatic
    signal = valve.signal
    kinds: list[AccessoryKind] = []
    on_off = signal is Signal.DISCRETE and Accessory.SOLENOID in listed
    if pneumatic and not on_off:
        if valve.positioner_action is not None or valve.split_method is SplitMethod.POSITIONER:
            kinds.append(AccessoryKind.POSITIONER)
        elif signal is not None and not signal.is_pneumatic and signal is not Signal.NONE:
            kinds.append(AccessoryKind.POSITIONER)
    if pneumatic:
        kinds += [kind for item, kind in _AIR_LINE_ORDER if item in listed]
    if listed & {Accessory.LIMIT_OPEN, Accessory.LIMIT_CLOSED}:
        kinds.append(AccessoryKind.LIMIT_SWITCH)
    if Accessory.POSITION_TRANSMITTER in listed:
        kinds.append(AccessoryKind.POSITION_TRANSMITTER)
    if pneumatic and Accessory.FILTER_REGULATOR in listed:
        kinds.append(AccessoryKind.FILTER_REGULATOR)
    return tuple(kinds)


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


def _stub(port: Point, centre: Point) -> tuple[Point, Point]:
    """A pipe stub leaving a body port away from the body's centre (left, right or down)."""
    dx, dy = port[0] - centre[0], port[1] - centre[1]
    if abs(dy) > abs(dx):
        return (port, (port[0], port[1] + PIPE_STUB_MM * (1 if dy > 0 else -1)))
    if dx < 0:  # drawn left to right, towards the body
        return ((port[0] - PIPE_STUB_MM, port[1]), port)
    return (port, (port[0] + PIPE_STUB_MM, port[1]))


def _accessory_label(kind: AccessoryKind, valve: Tag, accessory_tags: Mapping[AccessoryKind, tuple[str, ...]]) -> list[str]:
    """The tags the index gives the accessory (its own rows), else its letters."""
    tags = accessory_tags.get(kind, ())
    if tags:
        return list(tags)
    if kind is AccessoryKind.LIMIT_SWITCH:
        return [name for item, name in ((Accessory.LIMIT_OPEN, "ZSO"), (Accessory.LIMIT_CLOSED, "ZSC"))
                if item in valve.accessories]
    return [ACCESSORIES[kind].letters] if ACCESSORIES[kind].letters else []


def _supply_line(drawing: Drawing, tag: Tag, entry_port: Point, horizontal_first: bool,
                 regulator: bool, clear_x: float, min_end_y: float,
                 beside_top: float | None = None) -> tuple[float, float]:
    """The instrument air supply to the first pneumatic device, leaving ``entry_port``
    downwards (or first to the right), stepping right to ``clear_x`` when it starts left
    of it (clear of the valve's pipe), then down through the air filter regulator when
    there is one, ending in its ``IA`` label at ``min_end_y`` or lower (below the pipe).
    With ``beside_top`` (and no regulator) the label stands right of the line's vertical
    run from that height instead (the valve is then no taller than its symbols).
    Returns (lowest y drawn, x of the line's vertical run)."""
    x, y = entry_port
    points: list[Point] = [entry_port]
    if horizontal_first:
        x = max(x + AIR_GAP_MM + 1.0, clear_x)
        points.append((x, y))
    elif x < clear_x:
        y += SUPPLY_JOG_MM
        points += [(x, y), (clear_x, y)]
        x = clear_x
    y_afr = y + SUPPLY_DROP_MM
    if regulator:
        afr = PlacedSymbol(ACCESSORIES[AccessoryKind.FILTER_REGULATOR].symbol.load(), x, y_afr, anchor="out",
                           role="air-filter-regulator", tag=tag.tag, ports_used=("in", "out"),
                           name=f"air-filter-regulator:{tag.tag}")
        drawing.symbols.append(afr)
        drawing.lines.append(SignalLine("pneumatic", tuple(points + [afr.port("out")]), "air-supply"))
        start = afr.port("in")
        end = (start[0], max(start[1] + SUPPLY_DROP_MM, min_end_y))
        drawing.lines.append(SignalLine("pneumatic", (start, end), "air-supply"))
    else:
        end = (x, max(y + 2 * SUPPLY_DROP_MM, min_end_y))
        drawing.lines.append(SignalLine("pneumatic", tuple(points + [end]), "air-supply"))
    gap = LINE_HALF_WIDTH_MM["pneumatic"] + 0.4
    lines = wrap_text(air_supply_text(tag), AIR_TEXT_WRAP_MM, TEXT_MM, balanced=True)
    texts = stack_lines(lines, end[0] - 1.0, end[1] + gap, "start", "air-supply")
    if beside_top is not None and not regulator:
        right = stack_lines(lines, end[0] + gap + 0.2, beside_top, "start", "air-supply")
        if _free_in(drawing, right, side_mm=0.5):
            texts = right
    drawing.texts.extend(texts)
    return texts[-1].box.bottom, x


def _yoke_devices(drawing: Drawing, valve: PlacedSymbol, tag: Tag, kinds: list[AccessoryKind],
                  accessory_tags: Mapping[AccessoryKind, tuple[str, ...]]) -> tuple[float, float]:
    """Limit switch box and position transmitter left of the body, the first joined to the
    stem by a thin line at the stem's joint with the actuator, the second hung below the
    first; their tags (or letters) above them. Returns (left edge, top) of what is drawn."""
    stem = valve.port("stem-top")
    x_right = valve.box.x - YOKE_GAP_MM
    above: Point | None = None
    labels: list[str] = []
    left, top = x_right, stem[1]
    for kind in kinds:
        entry = ACCESSORIES[kind]
        if above is None:
            placed = PlacedSymbol(entry.symbol.load(), x_right, stem[1], anchor="stem", role=kind.name.lower(),
                                  tag=tag.tag, ports_used=entry.symbol.ports, name=f"{kind.name.lower()}:{tag.tag}")
            drawing.lines.append(SignalLine("connection", (placed.port("stem"), stem), "yoke-link"))
        else:
            symbol = entry.symbol.load()
            dy = symbol.port("stem")[1] - symbol.port("top")[1] if "top" in symbol.ports else 0.0
            placed = PlacedSymbol(symbol, above[0], above[1] + 1.5, anchor="top", role=kind.name.lower(),
                                  tag=tag.tag, ports_used=entry.symbol.ports, name=f"{kind.name.lower()}:{tag.tag}")
            drawing.lines.append(SignalLine("connection", (above, placed.port("top")), "yoke-link"))
            del dy
        drawing.symbols.append(placed)
        if above is None:
            top = placed.box.y
        if "bottom" in placed.symbol.ports:
            above = placed.port("bottom")
        labels += _accessory_label(kind, tag, accessory_tags)
        left = min(left, placed.box.x)
    if labels:
        first = drawing.symbols[-len(kinds)]
        bottom = first.box.y - 0.6
        texts = stack_lines(labels, first.box.right, bottom - stack_height(len(labels)), "end", "accessory")
        drawing.texts += texts
        top = bottom - stack_height(len(labels))
        left = min([left] + [t.box.x for t in texts])
    return left, top


def valve_text_lines(tag: Tag) -> list[str]:
    """Size and Cv, hazardous area and interlock under the valve (when the index gives them)."""
    lines: list[str] = []
    if tag.valve_size:
        lines.append(f"{tag.valve_size}, Cv {fmt_number(tag.cv)}" if tag.cv is not None else tag.valve_size)
    return wrapped([*lines, area_text(tag), interlock_text(tag)])


def _free_in(drawing: Drawing, texts: list[PlacedText], side_mm: float = 1.0, above_mm: float = 0.2) -> bool:
    """No text of ``texts`` comes within ``side_mm`` (left and right) or ``above_mm`` (above
    and below) of a symbol, text or line of ``drawing``."""
    boxes = [s.box for s in drawing.symbols] + [t.box for t in drawing.texts]
    for line in drawing.lines:
        boxes += line.segment_boxes()
    grown = [Rect(t.box.x - side_mm, t.box.y - above_mm, t.box.width + 2 * side_mm, t.box.height + 2 * above_mm)
             for t in texts]
    return not any(g.overlaps(b) for g in grown for b in boxes)


def valve_cluster(tag: Tag, loop_service: str | None, body: BodyKind | None = None,
                  actuator: ActuatorKind | None = None,
                  accessories: tuple[AccessoryKind, ...] | None = None,
                  accessory_tags: Mapping[AccessoryKind, tuple[str, ...]] | None = None) -> Cluster:
    """Control valve: body with actuator (kinds chosen from the record unless given), the
    accessories in its signal path and air line, those on its yoke, the instrument air
    supply, the tag bubble above the actuator, fail position below the body (ISA-5.1
    FC/FO/FL), size and Cv, air action beside the actuator, split setting under the first
    accessory, service below. ``accessory_tags`` names the index rows of accessories that
    have their own tag (a solenoid valve XY, limit switches ZSO/ZSC), written beside them.

    The row line joins the first accessory's signal input (or the actuator) at (0, 0); an
    on/off valve's solenoid valve takes it at its coil, below the row line."""
    body = body_kind(tag) if body is None else body
    actuator = actuator_kind(tag) if actuator is None else actuator
    accessories = accessory_kinds(tag) if accessories is None else accessories
    accessory_tags = accessory_tags or {}
    chained = [k for k in accessories if ACCESSORIES[k].mount in (Mount.SIGNAL_PATH, Mount.AIR_LINE)]
    yoke = [k for k in accessories if ACCESSORIES[k].mount is Mount.YOKE]
    drawing = Drawing()
    placed_accessories: list[PlacedSymbol] = []
    at: Point = (0.0, 0.0)
    out_path: tuple[Point, ...] = ()
    # an on/off valve: the row's signal goes to the solenoid valve's coil, the air line below
    coil_first = bool(chained) and chained[0] is AccessoryKind.SOLENOID and not (
        tag.signal is not None and tag.signal.is_pneumatic)
    if coil_first:
        symbol = ACCESSORIES[AccessoryKind.SOLENOID].symbol.load()
        dx, dy = (symbol.port("coil")[k] - symbol.port("signal-in")[k] for k in (0, 1))
        at = (0.0, COIL_DROP_MM - dy)
    for kind in chained:
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
                         ports_used=("side-right", "signal", "inlet", "outlet", "stem-top")
                         + (("branch",) if BODIES[body].branch else ()),
                         name=f"valve:{tag.tag}")
    drawing.symbols.append(valve)
    if placed_accessories:
        drawing.lines.append(SignalLine("pneumatic", (placed_accessories[-1].port("air-out"),
                                                      valve.port("side-right")), "positioner-air"))
    centre = valve.port("centre")
    for port in ("inlet", "outlet") + (("branch",) if BODIES[body].branch else ()):
        drawing.lines.append(SignalLine("process", _stub(valve.port(port), centre), "pipe"))

    stem_x, signal_y = valve.port("signal")
    placed_bubble, texts = bubble(tag, "field", "instrument")
    placed_bubble = PlacedSymbol(placed_bubble.symbol, stem_x, signal_y - 1.5, anchor="bottom", role="instrument",
                                 tag=tag.tag, ports_used=placed_bubble.ports_used, name=placed_bubble.name)
    drawing.symbols.append(placed_bubble)
    for t in texts:
        x, y = placed_bubble.port(t.role)
        drawing.texts.append(label(t.text, x, y, "middle", t.role, placed_bubble.name, fit=t.fit_width_mm))

    # solenoid valve coils: the row line (on/off valve) or a short lead to the label of its own signal
    for placed, kind in zip(placed_accessories, chained):
        if kind is not AccessoryKind.SOLENOID:
            continue
        coil = placed.port("coil")
        if coil_first and placed is placed_accessories[0]:
            out_path = (coil, (coil[0], 0.0))
            continue
        lead_top = (coil[0], coil[1] - COIL_LEAD_MM)
        drawing.lines.append(SignalLine("electrical", (coil, lead_top), "coil-lead"))
        names = _accessory_label(kind, tag, accessory_tags)
        drawing.texts += stack_lines(names, coil[0] - 1.5, lead_top[1] - 0.6 - stack_height(len(names)), "start",
                                     "accessory")

    if yoke:
        _yoke_devices(drawing, valve, tag, yoke, accessory_tags)

    box = valve.box
    # below the body and any pipe leaving it downwards (angle inlet, three-way branch)
    lowest = max([box.bottom] + [p[1] + 0.4 for line in drawing.lines if line.role == "pipe" for p in line.points])
    y = lowest + 0.8
    if tag.fail_position is not None:
        drawing.texts += stack_lines([tag.fail_position.value], stem_x, y, "middle", "fail-position")
        y += LINE_PITCH_MM
    if tag.air_action is not None and yoke:
        # the yoke's tags stand left of the actuator: the air action goes under the fail
        # position instead, so it is not read as one of them
        drawing.texts += stack_lines([tag.air_action.value], stem_x, y, "middle", "air-action")
        y += LINE_PITCH_MM
    elif tag.air_action is not None:
        drawing.texts.append(label(tag.air_action.value, box.x - 1.0, actuator_at[1] - 0.5, "end", "air-action"))
    # instrument air to the first pneumatic device (ISA-5.1 supply IA), with its regulator
    supply_x: float | None = None
    pneumatic = ACTUATORS[actuator].pneumatic
    regulator = AccessoryKind.FILTER_REGULATOR in accessories
    # supply air goes to a positioner or I/P, or to an on/off valve's solenoid valve; a valve
    # moved by a pneumatic signal takes its air from that signal
    takes_supply = bool(chained) and (ACCESSORIES[chained[0]].mount is Mount.SIGNAL_PATH or coil_first)
    if pneumatic and takes_supply and (tag.air_supply or regulator):
        first = placed_accessories[0]
        if coil_first:
            entry_port, across = first.port("signal-in"), True
        else:
            # the lower of its top and bottom ports once placed (the positioner is turned half a turn)
            ends = [first.port(p) for p in ("top", "bottom") if p in first.symbol.ports]
            entry_port, across = max(ends, key=lambda p: p[1]), False
        pipe_points = [p for line in drawing.lines if line.role == "pipe" for p in line.points]
        clear_x = max(p[0] for p in pipe_points) + LINE_HALF_WIDTH_MM["pneumatic"] + 1.0
        # right of the line: under the split setting that stands there (below)
        beside_top = first.box.bottom + 0.8 + (label_height() + 1.2 if _split_setting_text(tag) else 0.0)
        supply_bottom, supply_x = _supply_line(drawing, tag, entry_port, across, regulator, clear_x,
                                               max(p[1] for p in pipe_points) + 0.5, None if coil_first else beside_top)
    else:
        supply_bottom = y
    # the service beside the bubble, right of it, where nothing else is drawn (the
    # valve is as tall as its symbols); else under the valve data
    service = service_lines(tag, loop_service)
    extra = valve_text_lines(tag)

    def beside_bubble(lines: list[str], role: str, top: float) -> list[PlacedText]:
        # above the row line, which leaves the cluster at y = 0 to the right
        texts = stack_lines(lines, placed_bubble.box.right + 1.0, top, "start", role)
        fits = bool(lines) and _free_in(drawing, texts) and max(t.box.bottom for t in texts) <= -ROW_LINE_CLEAR_MM
        return texts if fits else []

    beside = beside_bubble(service, "service", placed_bubble.box.y)
    if beside:
        drawing.texts += beside
        service = []
        # size and Cv under the service, where they fit above the row line too
        data = beside_bubble(extra, "valve-data", beside[-1].box.bottom + LINE_PITCH_MM - label_height())
        if data:
            drawing.texts += data
            extra = []
    # size and Cv, area, interlock: under the fail position (below the air supply when
    # they would run into it)
    if extra:
        # centred under the stem, or up to 3 mm to the left, clear of the air supply text
        lines = next((t for t in (stack_lines(extra, stem_x - dx, y, "middle", "valve-data") for dx in range(4))
                      if _free_in(drawing, t)), None)
        if lines is None:
            y = max(y, supply_bottom + 0.8)
            lines = stack_lines(extra, stem_x, y, "middle", "valve-data")
        drawing.texts += lines
        y += LINE_PITCH_MM * len(extra)
    if service:
        lines = stack_lines(service, stem_x, y + 0.5, "middle", "service")
        if not _free_in(drawing, lines):
            y = max(y, supply_bottom + 0.8)
            lines = stack_lines(service, stem_x, y + 0.5, "middle", "service")
        drawing.texts += lines
    setting = _split_setting_text(tag)
    if setting:
        first = placed_accessories[0] if placed_accessories else None
        anchor_x = first.box.x if first is not None else valve.box.right + 0.5
        if supply_x is not None:
            # right of the supply line and of its regulator (5 mm wide)
            half = max(LINE_HALF_WIDTH_MM["pneumatic"], 2.5 + 0.35 if regulator else 0.0)
            anchor_x = max(anchor_x, supply_x + half + 0.6)
        top = (first.box.bottom if first is not None else 1.5) + 0.8
        drawing.texts.append(label(setting, anchor_x, top + ASCENT_EM * TEXT_MM, "start", "split-setting"))
    attach = out_path[-1] if out_path else (0.0, 0.0)
    return Cluster(drawing, attach_out=attach, out_path=out_path, points={"attach": attach})
