"""The loop's structure: which tags a loop diagram shows, sorted into rows of typed
stations (docs/design.md §8.1).

Each device of the loop gets a horizontal :class:`Row`: its signal runs straight along
the row through its junction-box terminal, its cabinet terminal and its I/O channel to
the controller. A row is a list of stations (one per column it occupies) and the
:class:`Segment` of line between each pair. The station kinds are types, not strings:

- :class:`ElementStation` -- a primary element (its :class:`~loopdocs.draw.devices.MeasuringKind`
  chosen from the record), or the untagged sensor of a transmitter;
- :class:`InstrumentStation` -- a transmitter, switch or indicator on an input row;
- :class:`RelayStation` -- an I/P converter (or other relay) moving valves;
- :class:`FunctionStation` -- the controller or indicator the loop's lines meet at;
- :class:`ValveStation` -- a final element;
- :class:`TerminalStation` -- a junction-box or cabinet terminal;
- :class:`BarrierStation` -- an intrinsic-safety barrier or isolator in the cabinet;
- :class:`IoStation` -- an I/O channel of the control system.

Rows are built from records only (:func:`build_rows`); what each station draws is a
:class:`~loopdocs.draw.clusters.Cluster` set by ``loopdocs.draw.placement``, which also
places the rows. Columns, left to right: ``F0`` field process side (elements, valves),
``F1`` field instruments, ``L`` local panel, ``J`` junction-box terminals, ``C0``
cabinet terminals, ``C1`` rack-mounted devices, ``S0`` I/O channels, ``S1`` control
functions; each column belongs to one band.
"""

from __future__ import annotations

from dataclasses import dataclass

from loopdocs.draw.annotations import cable_text, has_polarity
from loopdocs.draw.clusters import Cluster
from loopdocs.draw.devices import (
    MEASURING,
    AccessoryKind,
    MeasuringKind,
    accessory_kinds,
    device_kind,
    measuring_kind,
    sensor_kind,
)
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Location, Platform, Shield, Signal, SplitMethod

WIRE_OFFSET_MM = 1.2
"""Half the distance between the + and - wires of a series loop (terminal units are 4 mm tall)."""

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



# --------------------------------------------------------------------------- stations


@dataclass(kw_only=True)
class Station:
    """One item of a row, in ``column``; the concrete kinds below say what it shows."""

    column: str
    key: object = None
    """Identity for sharing: equal keys in one column of neighbouring output rows merge."""
    enclosure: str | None = None
    """Name of the junction box or cabinet the station is in."""
    cluster: Cluster | None = None
    """What it draws, set by the placement."""

    @property
    def drawn(self) -> Cluster:
        """The cluster; only asked for after the placement has drawn every station."""
        if self.cluster is None:
            raise RuntimeError(f"station in column {self.column} has not been drawn yet")
        return self.cluster


@dataclass(kw_only=True)
class ElementStation(Station):
    """A primary element drawn as ``measuring``; ``tagged`` False: the untagged sensor of
    transmitter ``tag``."""

    tag: Tag
    measuring: MeasuringKind
    tagged: bool = True

    @property
    def impulse_taps(self) -> bool:
        return MEASURING[self.measuring].impulse_taps


@dataclass(kw_only=True)
class InstrumentStation(Station):
    """A transmitter, switch or indicator on an input row."""

    tag: Tag


@dataclass(kw_only=True)
class RelayStation(Station):
    """An I/P converter (or other relay) between the control system and its valves."""

    tag: Tag


@dataclass(kw_only=True)
class FunctionStation(Station):
    """A controller or indicator the loop's lines meet at."""

    tag: Tag


@dataclass(kw_only=True)
class ValveStation(Station):
    """A final element; ``accessory_tags``: the loop's own rows for its accessories."""

    tag: Tag
    accessory_tags: dict[AccessoryKind, tuple[str, ...]] | None = None


@dataclass(kw_only=True)
class BarrierStation(Station):
    """An intrinsic-safety barrier or isolator (the Barrier column) in the cabinet, between
    the field cable and the I/O."""

    text: str


@dataclass(kw_only=True)
class TerminalStation(Station):
    """A junction-box (column ``J``) or cabinet (``C0``) terminal, ``X3:51-52``."""

    terminals: str | None
    polarity: bool = False
    """Mark the pair + and - (the Cores text gives the polarity)."""
    earth: bool = False
    """The cable screen is earthed here (Shield cabinet or both, at the cabinet terminal)."""

    def pair(self) -> tuple[str, str] | None:
        """The two terminal numbers (``X3:51-52`` -> ``('51', '52')``)."""
        if not self.terminals:
            return None
        numbers = self.terminals.rsplit(":", 1)[-1]
        parts = [p.strip() for p in numbers.split("-")]
        return (parts[0], parts[1]) if len(parts) == 2 and all(parts) else None

    def strip(self) -> str | None:
        """The strip of ``X3:51-52`` (``X3``), or None."""
        return self.terminals.rsplit(":", 1)[0] if self.terminals and ":" in self.terminals else None


@dataclass(kw_only=True)
class IoStation(Station):
    """An I/O channel: host and channel type, address, notes under the block."""

    heading: str
    address: str
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class IoChannel:
    heading: str
    address: str


@dataclass
class Segment:
    """The row line from one station to the next, its style and its labels."""

    kind: str
    above: str | None = None
    below: str | None = None
    label_x: float | None = None
    offset_mm: float = 0.0
    """Drawn as two wires this far above and below the row line (a series loop): labels keep clear."""
    wrap: bool = False
    """The labels are set on two lines each (``placement.label_lines``), where one line does not fit."""


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

    @property
    def merge_row(self) -> int | None:
        """The row this one joins at a connector, or None."""
        return self.merge[0] if self.merge is not None else None

    @property
    def merge_column(self) -> str | None:
        """The column before which this row joins the row above, or None."""
        return self.merge[1] if self.merge is not None else None

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


_ACCESSORY_LETTERS: dict[AccessoryKind, tuple[str, ...]] = {
    AccessoryKind.LIMIT_SWITCH: ("ZSO", "ZSC", "ZSH", "ZSL"),
    AccessoryKind.POSITION_TRANSMITTER: ("ZT",),
    AccessoryKind.SOLENOID: ("XY",),
}
"""Letters of the index rows that are a valve's accessories (ISA-5.1: Z position, S switch,
T transmit; X unclassified with Y relay for a solenoid valve, common practice; ZSO/ZSC for
open and closed limit switches, common practice beside ISA-5.1's ZSH/ZSL)."""


def accessory_tags(valve: Tag, loop_tags: list[Tag]) -> dict[AccessoryKind, tuple[str, ...]]:
    """The loop's rows that are this valve's accessories: the letters above with the
    valve's suffix (``XY-4120`` for ``FV-4120``; ``ZSO-4120A`` for ``FV-4120A``), for the
    accessories the valve's Accessories cell lists."""
    found: dict[AccessoryKind, tuple[str, ...]] = {}
    for kind in accessory_kinds(valve):
        letters = _ACCESSORY_LETTERS.get(kind, ())
        names = tuple(t.tag for t in loop_tags
                      if t.parts.letters in letters and t.parts.suffix == valve.parts.suffix and t is not valve)
        if names:
            found[kind] = names
    return found


def _wiring(tag: Tag, io: IoChannel | None, rack_device: bool) -> list[Station]:
    """Junction-box terminal, cabinet terminal, barrier and I/O stations on the way of one
    signal."""
    stations: list[Station] = []
    polarity = has_polarity(tag) and line_kind(tag.signal) == "electrical"
    if tag.jb:
        stations.append(TerminalStation(column="J", terminals=tag.jb_terminals, polarity=polarity,
                                        key=("J", tag.jb, tag.jb_terminals or tag.tag), enclosure=tag.jb))
    if tag.cabinet_terminals or (tag.cabinet and not rack_device):
        stations.append(TerminalStation(column="C0", terminals=tag.cabinet_terminals, polarity=polarity,
                                        earth=tag.shield in (Shield.CABINET, Shield.BOTH),
                                        key=("C0", tag.cabinet or "", tag.cabinet_terminals or tag.tag),
                                        enclosure=tag.cabinet))
    if tag.barrier and not rack_device:
        stations.append(BarrierStation(column="C1", text=tag.barrier, key=("barrier", tag.tag), enclosure=tag.cabinet))
    if io is not None:
        stations.append(IoStation(column="S0", heading=io.heading, address=io.address, key=("S0", io.address)))
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
    sensor_label = None
    if tag.sensor is not None:
        sensor_label = "RTD" if tag.sensor.is_rtd else "TC"
    own_part = device_kind(tag)
    if element is not None:
        station = ElementStation(column="F0", tag=element,
                                 measuring=measuring_kind(element, feeds_transmitter=True, transmitter=tag),
                                 key=("element", element.tag))
        flow = station.impulse_taps  # impulse lines: a connection to the process, no signal label
        head.append(station)
        element_kind = "connection" if flow or element.signal in (None, Signal.NONE) else line_kind(element.signal)
        head_segment = Segment(element_kind, below=None if flow else (_signal_text(element.signal) or sensor_label))
    elif tag.sensor is not None and column != "F0":
        head.append(ElementStation(column="F0", tag=tag, measuring=sensor_kind(tag.sensor), tagged=False,
                                   key=("sensor", tag.tag)))
        # the sensor's own cable runs to a transmitter mounted away from the field
        head_segment = Segment("electrical", above=None if column in ("F1", "L") else tag.cable, below=sensor_label)
    elif own_part is not None and column != "F0":
        # the sensing part of a device with an integral element (radar antenna, meter body)
        head.append(ElementStation(column="F0", tag=tag, measuring=own_part, tagged=False, key=("sensor", tag.tag)))
        head_segment = Segment("connection")
    io = None
    if tag.io_address:
        host = _host(fn.platform if linked and fn is not None else tag.platform)
        io = IoChannel(f"{host} {_channel(tag, tag.kind is TagKind.RELAY)}".strip(), tag.io_address)
    device = InstrumentStation(column=column, tag=tag, key=("device", tag.tag),
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
            segments[at].above = cable_text(tag)
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
    stations: list[Station] = [ValveStation(column="F0", tag=valve, key=("valve", valve.tag),
                                            accessory_tags=accessory_tags(valve, parts.tags))]
    segments: list[Segment] = []
    if relay is not None:
        stations.append(RelayStation(column=_column_of_device(relay), tag=relay, key=("device", relay.tag)))
        segments.append(Segment(line_kind(valve.signal), below=_signal_text(valve.signal)))
        feed = fn.signal if fn is not None and fn.signal is not None and not fn.signal.is_pneumatic else Signal.MA_4_20
    else:
        feed = valve.signal
    io_address = driver.io_address or (fn.io_address if linked and fn is not None else None)
    io = None
    if io_address:
        host = _host(fn.platform if linked and fn is not None else driver.platform)
        io = IoChannel(f"{host} {_channel(driver if relay is None else fn or driver, True)}".strip(), io_address)
    wiring = _wiring(driver, io, rack_device=False)
    kind = line_kind(feed)
    for st in wiring:
        stations.append(st)
        segments.append(Segment(kind))
    first = 1 if relay is not None else 0
    if first < len(segments):
        segments[first].above = cable_text(driver)
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
    fn_column = COLUMNS.index(_column_of_device(fn)) if fn is not None else len(COLUMNS)
    for tag in parts.inputs:
        row = _input_row(tag, parts, linked_input(tag))
        if row.linked and row.stations and COLUMNS.index(row.stations[-1].column) >= fn_column:
            # its wiring reaches past the function (an I/O channel beyond a local-panel
            # controller): drawn below the linked rows, so the bus into the function never crosses it
            row.linked = False
        (rows if row.linked else unlinked).append(row)
    output_start = len(rows)
    for relay, valves in parts.relays:
        lead = len(rows)
        rows.append(_output_row(valves[0], relay, parts))
        for valve in valves[1:]:
            kind = line_kind(valve.signal)
            rows.append(Row([ValveStation(column="F0", tag=valve, key=("valve", valve.tag),
                                          accessory_tags=accessory_tags(valve, parts.tags))], [], "branch",
                            linked=False, tail_kind=kind, branch_of=lead, tags=(valve.tag,)))
    for valve in parts.direct_outputs:
        rows.append(_output_row(valve, None, parts))
    _merge_outputs(rows, output_start)

    fn_row: int | None = None
    if fn is not None:
        station = FunctionStation(column=_column_of_device(fn), tag=fn, key=("function", fn.tag))
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
        if fn_row is not None and _bus_crossed(rows, fn_row, COLUMNS.index(station.column)):
            # another output's wiring runs past the function between the rows the bus joins
            # (its own I/O beyond a local-panel controller): drawn below the linked rows
            fn_row = _move_crossing_rows_down(rows, fn_row, COLUMNS.index(station.column))
        if fn_row is None:
            fn_row = len(rows)
            rows.append(Row([], [], "other"))
        host = rows[fn_row]
        if host.stations:
            host.segments.append(Segment(host.tail_kind))
        host.stations.append(station)
        host.tags = host.tags + (fn.tag,)
    for extra in parts.other_functions:
        station = FunctionStation(column=_column_of_device(extra), tag=extra, key=("function", extra.tag))
        if _attach_to_driven_row(rows, output_start, extra, station):
            continue
        unlinked.append(Row([station], [], "other", tags=(extra.tag,)))
    for element in parts.loose_elements:
        loose = ElementStation(column="F0", tag=element, measuring=measuring_kind(element, feeds_transmitter=False),
                               key=("element", element.tag))
        unlinked.append(Row([loose], [], "other",
                            tags=(element.tag,)))
    rows += unlinked
    return rows, parts, fn_row


def _bus_crossed(rows: list[Row], fn_row: int, fn_column: int) -> bool:
    """Whether a row between the function's row and a linked row it joins runs its line
    past the function's column (the bus would cross it)."""
    joining = [i for i, r in enumerate(rows) if i != fn_row and r.linked and not r.ends_at_connector()]
    if not joining:
        return False
    lo, hi = min(joining + [fn_row]), max(joining + [fn_row])
    return any(COLUMNS.index(rows[k].stations[-1].column) >= fn_column
               for k in range(lo + 1, hi) if k != fn_row and k not in joining and rows[k].stations)


def _move_crossing_rows_down(rows: list[Row], fn_row: int, fn_column: int) -> int:
    """Move each row that the function's bus would cross, and that no other row joins, to
    the bottom of the rows; returns the function's row index after the moves."""
    while _bus_crossed(rows, fn_row, fn_column):
        joining = [i for i, r in enumerate(rows) if i != fn_row and r.linked and not r.ends_at_connector()]
        lo, hi = min(joining + [fn_row]), max(joining + [fn_row])
        movable = [k for k in range(lo + 1, hi) if k != fn_row and k not in joining and rows[k].stations
                   and COLUMNS.index(rows[k].stations[-1].column) >= fn_column
                   and rows[k].merge is None and rows[k].branch_of is None
                   and not any(r.merge_row == k or r.branch_of == k for r in rows)]
        if not movable:
            break
        k = movable[0]
        row = rows.pop(k)
        rows.append(row)
        for r in rows:
            if r.merge is not None and r.merge[0] > k:
                r.merge = (r.merge[0] - 1, r.merge[1])
            if r.branch_of is not None and r.branch_of > k:
                r.branch_of -= 1
        fn_row = fn_row - 1 if fn_row > k else fn_row
    return fn_row


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
    merge = rows[index].merge
    while merge is not None:
        index = merge[0]
        merge = rows[index].merge
    return index


def series_groups(rows: list[Row], tags: dict[str, Tag]) -> None:
    """Mark positioners in series on one output: a positioner split (docs/design.md §4.3, one
    analog output for the group) whose rows all join the first row before the same
    shared item. Their rows get ``series``/``series_of`` and are drawn as wired."""
    for r, row in enumerate(rows):
        if row.merge is not None or row.role != "output":
            continue
        members: list[int] = []
        k = r + 1
        while k < len(rows) and rows[k].merge_row == k - 1:
            members.append(k)
            k += 1
        columns = {rows[m].merge_column for m in members}
        column = columns.pop() if len(columns) == 1 else None
        if not members or column is None:
            continue
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


def series_notes(rows: list[Row], tags: dict[str, Tag]) -> None:
    """A note under a shared I/O channel naming the valves on it (in series for a
    positioner split)."""
    for r, row in enumerate(rows):
        members = [k for k in range(len(rows)) if rows[k].merge is not None and _merge_root(rows, k) == r]
        io = next((s for s in row.stations if isinstance(s, IoStation)), None)
        if not members or io is None:
            continue
        valves = [row.tags[0]] + [rows[k].tags[0] for k in members]
        if {tags[v].split_method for v in valves if v in tags} == {SplitMethod.POSITIONER}:
            io.notes = io.notes + (f"{len(valves)} positioners in series",)
        else:
            io.notes = io.notes + (f"shared by {len(valves)} valves",)

