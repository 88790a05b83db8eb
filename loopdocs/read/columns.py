"""The columns of the instrument index: canonical keys, printed headers and aliases.

Headers are matched case-, space- and punctuation-insensitively (``"Range  low"``,
``"RANGE_LOW"`` and ``"range-low"`` are the same header). A project can map further
headers in ``loopdocs.toml`` (``[columns]`` table: ``"Their Header" = "range_low"``).
The default template is described in ``docs/index-format.md``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass


@dataclass(frozen=True)
class Column:
    """One column of the default index template.

    ``key`` is the name used everywhere in the code, ``header`` the text printed in the
    template, ``numeric`` whether the cell must hold a number, ``aliases`` other headers
    that mean the same thing.
    """

    key: str
    header: str
    meaning: str
    numeric: bool = False
    aliases: tuple[str, ...] = ()


COLUMNS: tuple[Column, ...] = (
    Column("tag", "Tag", "ISA-5.1 style tag", aliases=("Tag No", "Tag No.", "Tag Number", "Instrument Tag", "Tag Name", "Instrument Tag No")),
    Column("loop", "Loop", "loop id; derived from Tag when blank", aliases=("Loop No", "Loop Number", "Loop Tag", "Loop ID")),
    Column("service", "Service", "what it does", aliases=("Description", "Service Description", "Duty")),
    Column("pid", "P&ID", "drawing reference", aliases=("PID", "P&ID No", "P&ID Number", "P and ID", "Drawing")),
    Column("location", "Location", "where it is mounted", aliases=("Mounting", "Mounting Location")),
    Column("platform", "Platform", "what hosts the function", aliases=("System", "Host", "Control System")),
    Column("signal", "Signal", "signal type", aliases=("Signal Type", "IO Type", "I/O Type")),
    Column("range_low", "Range Low", "calibrated range, lower value (LRV)", numeric=True, aliases=("LRV", "Lower Range Value", "Cal Low", "Range Min", "Range From")),
    Column("range_high", "Range High", "calibrated range, upper value (URV)", numeric=True, aliases=("URV", "Upper Range Value", "Cal High", "Range Max", "Range To")),
    Column("units", "Units", "engineering units of the range", aliases=("Unit", "Range Units", "Eng Units", "EU")),
    Column("transfer", "Transfer", "output law", aliases=("Transfer Function", "Output Law")),
    Column("dp_low", "DP Low", "root-extracting flow transmitter ranged in flow units: calibrated differential-pressure range, lower value (0)", numeric=True, aliases=("DP LRV", "DP Range Low", "Diff Press Low")),
    Column("dp_high", "DP High", "root-extracting flow transmitter ranged in flow units: calibrated differential-pressure range, upper value", numeric=True, aliases=("DP URV", "DP Range High", "Diff Press High")),
    Column("dp_units", "DP Units", "units of DP Low and DP High (a pressure unit)", aliases=("DP Unit", "DP Range Units")),
    Column("flow_cutoff_pct", "Low Flow Cutoff %", "root-extracting flow transmitter: flow, % of range, below which it reports zero flow", numeric=True, aliases=("Low Flow Cutoff", "Cutoff %", "Low Flow Cut-off")),
    Column("sensor", "Sensor", "primary element type", aliases=("Sensor Type", "Element", "Element Type")),
    Column("accuracy_pct", "Accuracy %", "calibration tolerance, % of span", numeric=True, aliases=("Accuracy", "Tolerance", "Tolerance %", "Cal Tolerance %")),
    Column("control_action", "Control Action", "controllers only: direct or reverse", aliases=("Controller Action", "Action")),
    Column("air_action", "Air Action", "valves: ATO or ATC", aliases=("Actuator Action", "Air Failure Action")),
    Column("fail_position", "Fail Position", "valves: FC, FO, FL, FAI", aliases=("Fail Action", "Failure Position", "Fail Safe", "Fail Safe Position")),
    Column("positioner_action", "Positioner Action", "valves: direct (default) or reverse", aliases=("Positioner",)),
    Column("driven_by", "Driven By", "tag of the controller whose output moves this element", aliases=("Controller", "Driven From", "Controlled By")),
    Column("split_method", "Split Method", "where the split is made: dcs, positioner, pneumatic", aliases=("Split Type", "Split")),
    Column("co_start_pct", "CO Start %", "controller output where this element starts to stroke", numeric=True, aliases=("CO Start", "Output Start %", "Split Start %")),
    Column("co_end_pct", "CO End %", "controller output where this element ends its stroke", numeric=True, aliases=("CO End", "Output End %", "Split End %")),
    Column("travel_start_pct", "Travel at Start %", "intended travel at CO Start", numeric=True, aliases=("Travel Start %", "Travel at Start", "Travel Start")),
    Column("travel_end_pct", "Travel at End %", "intended travel at CO End", numeric=True, aliases=("Travel End %", "Travel at End", "Travel End")),
    Column("input_low", "Input Low", "configured input range of the positioner (or spring range), low end", numeric=True, aliases=("Positioner Input Low", "Spring Range Low", "Input Range Low")),
    Column("input_high", "Input High", "configured input range of the positioner (or spring range), high end", numeric=True, aliases=("Positioner Input High", "Spring Range High", "Input Range High")),
    Column("input_units", "Input Units", "units of Input Low and Input High", aliases=("Input Unit", "Positioner Input Units")),
    Column("effect", "Effect", "what opening this element does to the controlled variable: raises, lowers", aliases=("Process Effect", "Opening Effect")),
    Column("cv", "Cv", "rated flow coefficient", numeric=True, aliases=("Rated Cv", "Valve Cv")),
    Column("characteristic", "Characteristic", "inherent characteristic", aliases=("Trim", "Trim Characteristic", "Valve Characteristic")),
    Column("rangeability", "Rangeability", "inherent rangeability (equal-percentage)", numeric=True, aliases=("Rangeability R",)),
    Column("device_volts", "Device Volts", "volts the device drops at 20 mA or needs at its terminals", numeric=True, aliases=("Device Voltage", "Min Volts", "Lift-off Volts")),
    Column("loop_volts", "Loop Volts", "output compliance volts (AO) or supply volts (AI)", numeric=True, aliases=("Supply Volts", "Loop Voltage", "Compliance Volts")),
    Column("load_ohm", "Load Ohm", "receiver resistance in the loop", numeric=True, aliases=("Load", "Load Ohms", "Loop Resistance", "Receiver Ohm")),
    Column("io_address", "IO Address", "control-system channel", aliases=("I/O Address", "Channel", "IO Channel", "I/O Channel")),
    Column("jb", "JB", "junction box", aliases=("Junction Box", "JB No")),
    Column("jb_terminals", "JB Terminals", "terminals in the junction box", aliases=("JB Terminal", "JB Term")),
    Column("cable", "Cable", "cable (and pair) id", aliases=("Cable No", "Cable Number", "Cable ID")),
    Column("cabinet", "Cabinet", "marshalling or system cabinet", aliases=("Panel", "Marshalling Cabinet")),
    Column("cabinet_terminals", "Cabinet Terminals", "terminals in the cabinet", aliases=("Cabinet Terminal", "Panel Terminals")),
    Column("device_type", "Device Type", "measuring principle or device (for its symbol)", aliases=("Measuring Principle", "Meter Type", "Instrument Type", "Principle")),
    Column("valve_body", "Valve Body", "valve body type", aliases=("Body", "Body Type", "Valve Type")),
    Column("actuator", "Actuator", "valve actuator type", aliases=("Actuator Type",)),
    Column("valve_size", "Valve Size", "valve size as the project writes it", aliases=("Size", "Line Size", "Body Size")),
    Column("accessories", "Accessories", "valve accessories, a list", aliases=("Valve Accessories", "Accessory")),
    Column("wires", "Wires", "2-wire, 3-wire or 4-wire", aliases=("Wiring", "Wire Type", "Loop Type")),
    Column("power_source", "Power Source", "where the loop or device power comes from", aliases=("Power Supply", "Power", "Supply")),
    Column("air_supply", "Air Supply", "instrument air source (header, regulator tag)", aliases=("Instrument Air", "IA Supply", "Air")),
    Column("barrier", "Barrier", "intrinsic-safety barrier or isolator tag and type, or the protection concept", aliases=("IS Barrier", "Isolator", "Protection")),
    Column("area_class", "Area Class", "hazardous-area classification of the device's location", aliases=("Hazardous Area", "Area Classification", "Zone", "Ex Zone")),
    Column("cores", "Cores", "cores or pair numbers and polarity per terminal pair", aliases=("Core", "Pair", "Cores Used")),
    Column("shield", "Shield", "where the cable screen is earthed", aliases=("Screen", "Screen Earth", "Shield Earth")),
    Column("set_point", "Set Point", "switches: trip value; controllers: operating set point", numeric=True, aliases=("Setpoint", "SP", "Trip Point", "Trip Setting")),
    Column("reset", "Reset", "switches: the value at which the switch resets", numeric=True, aliases=("Reset Point", "Reset Value")),
    Column("alarm_ll", "Alarm LL", "low-low alarm setting, engineering units", numeric=True, aliases=("LL", "LALL", "Low Low Alarm")),
    Column("alarm_l", "Alarm L", "low alarm setting, engineering units", numeric=True, aliases=("L Alarm", "LAL", "Low Alarm")),
    Column("alarm_h", "Alarm H", "high alarm setting, engineering units", numeric=True, aliases=("H Alarm", "LAH", "High Alarm")),
    Column("alarm_hh", "Alarm HH", "high-high alarm setting, engineering units", numeric=True, aliases=("HH", "LAHH", "High High Alarm")),
    Column("interlock", "Interlock", "cause-and-effect or interlock reference", aliases=("Interlocks", "C&E", "Cause and Effect", "Trip")),
    Column("data_sheet", "Data Sheet", "data sheet reference", aliases=("Datasheet", "DS", "Data Sheet No")),
    Column("hookup", "Hook-up", "hook-up drawing reference", aliases=("Hookup", "Hook-up Drawing", "Installation Detail")),
    Column("notes", "Notes", "free text", aliases=("Note", "Remarks", "Comments", "Comment")),
)

BY_KEY: dict[str, Column] = {column.key: column for column in COLUMNS}
NUMERIC_KEYS: frozenset[str] = frozenset(c.key for c in COLUMNS if c.numeric)


def normalise_header(text: str) -> str:
    """Fold a header for matching: lower case, only letters, digits, ``%`` and ``&``.

    >>> normalise_header("  Range_Low ")
    'rangelow'
    >>> normalise_header("CO Start %")
    'costart%'
    """
    return re.sub(r"[^a-z0-9%&]", "", str(text).lower())


def _default_lookup() -> dict[str, str]:
    lookup: dict[str, str] = {}
    for column in COLUMNS:
        for text in (column.header, column.key, *column.aliases):
            lookup.setdefault(normalise_header(text), column.key)
    return lookup


DEFAULT_LOOKUP: dict[str, str] = _default_lookup()


def header_lookup(column_map: dict[str, str] | None = None) -> dict[str, str]:
    """Folded header text -> column key, defaults plus the project's own map.

    ``column_map`` maps a header as written in the project's index to a column key or
    to a default header (``{"Ctrl Out From": "co_start_pct"}`` or ``"CO Start %"``).
    Raises ``ValueError`` naming the entry when the target is not a known column.
    """
    lookup = dict(DEFAULT_LOOKUP)
    for their_header, target in (column_map or {}).items():
        key = DEFAULT_LOOKUP.get(normalise_header(target))
        if key is None:
            raise ValueError(
                f"column map entry {their_header!r} = {target!r}: {target!r} is not a loopdocs column"
            )
        lookup[normalise_header(their_header)] = key
    return lookup
