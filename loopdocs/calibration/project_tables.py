"""The calibration tables of a project: records in, tables out (docs/design.md §7.1).

Which table each tag gets:

- transmitter with a range and an analog or digital output: five points rising and
  falling (``calc.calibration.transmitter_table``); a Sensor adds the ohm or mV to
  simulate; a 4-20 mA output adds the NAMUR NE 43 levels;
- element with a Sensor and a range (``TE``): the sensor alone, temperature in,
  ohm or mV out (``sensor_table``);
- relay or converter (``Y``) with an input range in a signal unit and a signal output
  (an I/P): the converter table;
- final element in a split group of ``loopdocs.model.groups``: the stroke table from
  the settings the group gives (input range, or control-system scaling); for a group of
  two or more, also the loop check of each element (CO every 10 % against travel).

Every other tag is listed as skipped, with the reason, so nothing is left out silently.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any, Iterable

from loopdocs.calc.tables import (
    CalibrationTable,
    DpRange,
    converter_table,
    loop_check_table,
    sensor_table,
    sqrt_flow_table,
    stroke_table,
    transmitter_table,
)
from loopdocs.calc.signals import MA_4_20, SignalSpan, pneumatic_span
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Signal, Transfer


@dataclass(frozen=True)
class Skipped:
    """A tag that got no table, and why."""

    tag: str
    reason: str
    loop: str = ""

    def as_json(self) -> dict[str, Any]:
        return {"tag": self.tag, "loop": self.loop, "reason": self.reason}


@dataclass(frozen=True)
class CalibrationSet:
    """All tables of a project, in index order (loop checks after their group's elements)."""

    project: str
    index_path: str
    tables: tuple[CalibrationTable, ...]
    skipped: tuple[Skipped, ...] = ()
    reference_junction_c: float | None = None
    calibrator_unit: str | None = None
    revision: str = ""
    loop_services: dict[str, str] = field(default_factory=dict, compare=False)
    """Loop id -> service (for sheet titles)."""
    loop_areas: dict[str, str] = field(default_factory=dict, compare=False)
    """Loop id -> plant area prefix ('' when the tags have none)."""

    def select(self, names: Iterable[str]) -> "CalibrationSet":
        """Only the tables (and skipped tags) whose tag or loop is in ``names`` (case-insensitive)."""
        wanted = {n.strip().upper() for n in names if n.strip()}
        if not wanted:
            return self
        tables = tuple(t for t in self.tables if t.tag.upper() in wanted or t.loop.upper() in wanted)
        skipped = tuple(s for s in self.skipped if s.tag.upper() in wanted or s.loop.upper() in wanted)
        return replace(self, tables=tables, skipped=skipped)

    def as_json(self) -> dict[str, Any]:
        """docs/design.md §9.2: ``{instruments: [...]}``, plus the skipped tags and the options used."""
        return {
            "instruments": [t.as_json() for t in self.tables],
            "skipped": [s.as_json() for s in self.skipped],
            "reference_junction_c": self.reference_junction_c,
            "calibrator_unit": self.calibrator_unit,
        }


# --------------------------------------------------------------------------- per tag


def output_span(signal: Signal | None) -> tuple[SignalSpan | None, str | None]:
    """The output span for a Signal: (span, None), (None, None) for digital, or (None, reason)."""
    if signal is None:
        return None, "Signal blank: the output to expect is not known"
    if signal.is_analog_ma:
        return MA_4_20, None
    if signal.is_pneumatic:
        return pneumatic_span("psig" if signal is Signal.PSIG_3_15 else "kPa"), None
    if signal is Signal.FIELDBUS:
        return None, None
    return None, f"Signal {signal.value}: not a transmitter output loopdocs can tabulate"


def _accuracy_note(tag: Tag) -> list[str]:
    return [] if tag.accuracy_pct is not None else ["Accuracy % blank in the index: no tolerance, points cannot be judged"]


def _range_outside_sensor(tag: Tag) -> str | None:
    """Why the range cannot be tabulated for the tag's Sensor, in the index's own value and
    unit (the words of the ``sensor.range`` finding), or ``None``."""
    from loopdocs.checks.consistency import sensor_range_problems

    problems = sensor_range_problems(tag.sensor, tag.range_low, tag.range_high, tag.units)
    return "; ".join(p.text for p in problems) or None


def transmitter_for(
    tag: Tag, reference_junction_c: float | None = None, calibrator_unit: str | None = None
) -> CalibrationTable | Skipped:
    """The five-point table of a transmitter row, or why there is none."""
    if not tag.has_range:
        return Skipped(tag.tag, "Range Low/Range High blank", tag.loop)
    if not tag.units:
        return Skipped(tag.tag, "Units blank: the input unit is not known", tag.loop)
    span, reason = output_span(tag.signal)
    if reason:
        return Skipped(tag.tag, reason, tag.loop)
    notes = _accuracy_note(tag)
    transfer = tag.transfer.value if tag.transfer else "linear"
    if tag.transfer is None:
        notes.append("Transfer blank: linear taken")
    if span is None:
        notes.append("digital output: read the process value on the host or a handheld")
    flow = flow_transmitter_for(tag, span, calibrator_unit)
    if flow is not None:
        return flow if isinstance(flow, Skipped) else flow.with_context(loop=tag.loop, service=tag.service or "", notes=notes)
    from loopdocs.calc.units import is_length

    if is_length(tag.units):
        notes.append(
            f"range in {tag.units}: the pressure or level to apply depends on the liquid density and the "
            "mounting, which the index does not give"
        )
    sensor = tag.sensor.value if tag.sensor else None
    if sensor:
        from loopdocs.calc.units import is_temperature

        if not is_temperature(tag.units):
            return Skipped(tag.tag, f"Sensor {sensor} with Units {tag.units!r}: a temperature unit is needed", tag.loop)
        outside = _range_outside_sensor(tag)
        if outside:
            return Skipped(tag.tag, outside, tag.loop)
    try:
        table = transmitter_table(
            tag.tag, tag.range_low, tag.range_high, tag.units, span, transfer, tag.accuracy_pct,
            sensor=sensor, reference_junction_c=reference_junction_c, calibrator_unit=calibrator_unit,
        )
    except ValueError as exc:
        return Skipped(tag.tag, str(exc), tag.loop)
    return table.with_context(loop=tag.loop, service=tag.service or "", notes=notes)


def flow_transmitter_for(
    tag: Tag, span: SignalSpan | None, calibrator_unit: str | None = None
) -> CalibrationTable | Skipped | None:
    """The table of a DP flow transmitter ranged in flow units, or ``None`` for any other row.

    - Transfer sqrt, range in flow units: ``sqrt_flow_table`` (flow, DP to apply, output
      linear in flow), with the DP range when DP Low/High/Units are given;
    - Transfer sqrt, range neither flow nor pressure: refused (``flow.sqrt-units``);
    - a DP range with Transfer linear and a range in flow units: the transmitter is linear
      in DP (the root is taken in the control system): the table runs over the DP range;
    - a DP range with Transfer blank and a range in flow units: refused, the output law
      cannot be told.
    A range in pressure units with sqrt is the DP range: ``None`` (the ordinary table).
    """
    from loopdocs.calc.units import is_flow, is_pressure

    sqrt = tag.transfer is Transfer.SQRT
    if sqrt and is_pressure(tag.units or ""):
        return None
    if sqrt and not is_flow(tag.units or ""):
        return Skipped(tag.tag, f"Transfer sqrt with Units {tag.units!r}: square root needs a flow range "
                                "(flow units) or a differential-pressure range (pressure units)", tag.loop)
    if not (sqrt or (tag.has_dp_range and is_flow(tag.units or ""))):
        return None
    dp = None
    if tag.has_dp_range:
        if tag.dp_low is None or tag.dp_high is None or not tag.dp_units:
            return Skipped(tag.tag, "DP range incomplete: DP Low, DP High and DP Units are all needed", tag.loop)
        dp = DpRange(tag.dp_low, tag.dp_high, tag.dp_units)
    try:
        if sqrt:
            return sqrt_flow_table(
                tag.tag, tag.range_low, tag.range_high, tag.units, span, dp, tag.accuracy_pct,
                cutoff_pct=tag.flow_cutoff_pct, calibrator_unit=calibrator_unit,
            )
        if tag.transfer is None:
            return Skipped(tag.tag, f"DP range {tag.dp_low:g} to {tag.dp_high:g} {tag.dp_units} with a flow range "
                                    "and Transfer blank: write sqrt (the transmitter extracts the root) or linear "
                                    "(linear in DP, root taken in the control system)", tag.loop)
        assert dp is not None
        table = transmitter_table(tag.tag, dp.low, dp.high, dp.unit, span, "linear", tag.accuracy_pct,
                                  calibrator_unit=calibrator_unit)
    except ValueError as exc:
        return Skipped(tag.tag, str(exc), tag.loop)
    return table.with_context(notes=[
        f"output linear in DP over {dp.low:g} to {dp.high:g} {dp.unit}; the control system extracts the root: "
        f"flow = sqrt(DP fraction) x {tag.range_high:g} {tag.units} (50 % flow at 25 % DP)",
    ])


def sensor_for(tag: Tag) -> CalibrationTable | Skipped:
    """The sensor table of a temperature element, or why there is none."""
    if tag.sensor is None:
        return Skipped(tag.tag, "element without a Sensor: nothing to calibrate", tag.loop)
    if not tag.has_range or not tag.units:
        return Skipped(tag.tag, f"Sensor {tag.sensor.value} without Range Low/High and Units", tag.loop)
    outside = _range_outside_sensor(tag)
    if outside:
        return Skipped(tag.tag, outside, tag.loop)
    try:
        table = sensor_table(tag.tag, tag.sensor.value, tag.range_low, tag.range_high, tag.units, tag.accuracy_pct)
    except ValueError as exc:
        return Skipped(tag.tag, str(exc), tag.loop)
    return table.with_context(loop=tag.loop, service=tag.service or "", notes=_accuracy_note(tag))


def converter_for(tag: Tag) -> CalibrationTable | Skipped:
    """The table of a signal converter (I/P): 4-20 mA in, pneumatic out.

    The Range is read as written: in mA it is the input range (the output then follows
    the Signal); in pressure units it is the output range, with 4-20 mA in (an engineer
    often writes an I/P row with its input Signal and its output range). A reversed
    range is refused rather than turned round.
    """
    units = (tag.units or "").strip()
    span, reason = output_span(tag.signal)
    if tag.has_range and units.lower() != "ma":
        from loopdocs.calc.units import is_pressure

        if is_pressure(units) and tag.signal is not None and (tag.signal.is_analog_ma or tag.signal.is_pneumatic):
            if tag.range_low >= tag.range_high:
                return Skipped(tag.tag, f"converter output range {tag.range_low:g} to {tag.range_high:g} {units}: "
                                        "a reverse-acting converter is not tabulated", tag.loop)
            try:
                table = _converter_with_tolerance(tag, MA_4_20, SignalSpan(tag.range_low, tag.range_high, units))
            except ValueError as exc:
                return Skipped(tag.tag, str(exc), tag.loop)
            notes = [f"Range {tag.range_low:g} to {tag.range_high:g} {units} read as the output range; input 4-20 mA"]
            return table.with_context(loop=tag.loop, service=tag.service or "", notes=notes)
    if reason or span is None:
        return Skipped(tag.tag, reason or "relay with a digital output: nothing to calibrate", tag.loop)
    if span.unit == "mA":
        return Skipped(tag.tag, "converter with a 4-20 mA Signal and no output range in pressure units "
                                f"(Range Low/High, Units; Units is {units or 'blank'})", tag.loop)
    if not tag.has_range or units.lower() != "ma":
        return Skipped(tag.tag, "relay/converter without an input range in mA or an output range in pressure "
                                f"units (Range Low/High, Units; Units is {units or 'blank'})", tag.loop)
    if tag.range_low >= tag.range_high:
        return Skipped(tag.tag, f"converter input range {tag.range_low:g} to {tag.range_high:g} mA: a reverse-acting "
                                "converter is not tabulated", tag.loop)
    try:
        table = _converter_with_tolerance(tag, SignalSpan(tag.range_low, tag.range_high, "mA"), span)
    except ValueError as exc:
        return Skipped(tag.tag, str(exc), tag.loop)
    return table.with_context(loop=tag.loop, service=tag.service or "")


#: Tolerance of an I/P converter whose Accuracy % is blank, % of output span. From memory:
#: makers of general-purpose I/P converters commonly state an accuracy of 0.5 to 1 % of
#: span; the looser figure is taken, the same as the 1 % of travel valves take.
CONVERTER_TOLERANCE_PCT = 1.0
CONVERTER_TOLERANCE_BASIS = (
    f"Accuracy % blank: {CONVERTER_TOLERANCE_PCT:g} % of span taken "
    "(typical stated accuracy of an I/P converter, 0.5 to 1 % of span)"
)


def _converter_with_tolerance(tag: Tag, in_span: SignalSpan, out_span: SignalSpan) -> CalibrationTable:
    """The converter table with Accuracy % of span, or ``CONVERTER_TOLERANCE_PCT`` when it is blank."""
    if tag.accuracy_pct is not None:
        return converter_table(tag.tag, in_span, out_span, tag.accuracy_pct)
    table = converter_table(tag.tag, in_span, out_span, CONVERTER_TOLERANCE_PCT)
    assert table.tolerance is not None
    return replace(table, tolerance=replace(table.tolerance, basis=CONVERTER_TOLERANCE_BASIS))


def switch_for(tag: Tag) -> CalibrationTable | Skipped:
    """The set-point test of a switch (``calc.trip_tables.switch_table``); its Range, when
    given, is the adjustable range the tolerance is taken on."""
    from loopdocs.calc.trip_tables import switch_table
    from loopdocs.checks.alarms import switch_direction

    if not tag.units:
        return Skipped(tag.tag, f"Set Point {tag.set_point:g} without Units: the trip value is not known", tag.loop)
    range_lh = (tag.range_low, tag.range_high) if tag.has_range and tag.range_low != tag.range_high else None
    table = switch_table(tag.tag, tag.set_point, tag.reset, tag.units or "", switch_direction(tag), range_lh,
                         tag.accuracy_pct)
    notes = [] if table.tolerance is not None else ["Range or Accuracy % blank: no tolerance, the trip value cannot be judged"]
    return table.with_context(loop=tag.loop, service=tag.service or "", notes=notes)


def alarms_for(tag: Tag) -> CalibrationTable | Skipped | None:
    """The alarm test of a transmitter with alarm settings (``calc.trip_tables.alarm_table``);
    ``None`` without alarms; refused without a range to place them on."""
    from loopdocs.calc.trip_tables import alarm_table
    from loopdocs.checks.alarms import ALARMS

    given = [(header.split()[-1], getattr(tag, key)) for key, header in ALARMS if getattr(tag, key) is not None]
    if not given:
        return None
    if not tag.has_range or tag.range_low == tag.range_high or not tag.units:
        return Skipped(tag.tag, "alarm settings without a range and units to place them on", tag.loop)
    span, reason = output_span(tag.signal)
    table = alarm_table(tag.tag, given, tag.range_low, tag.range_high, tag.units, span if not reason else None,
                        tag.accuracy_pct)
    return table.with_context(loop=tag.loop, service=tag.service or "")


_NOT_CALIBRATED = {
    TagKind.CONTROLLER: "controller: configured in the control system, not calibrated in the field",
    TagKind.INDICATOR: "indicator: checked with its transmitter's loop",
    TagKind.SWITCH: "switch without a Set Point in the index: no set-point test",
    TagKind.ALARM: "alarm: configured in the control system",
    TagKind.OTHER: "function letters without a calibration kind",
}


# --------------------------------------------------------------------------- project


def calibration_set(
    project: Project,
    *,
    reference_junction_c: float | None = None,
    calibrator_unit: str | None = None,
) -> CalibrationSet:
    """Every table of ``project`` (module docstring), in index order."""
    tables: list[CalibrationTable] = []
    skipped: list[Skipped] = []
    group_tables, group_skipped = _split_group_tables(project)
    for tag in sorted(project.tags.values(), key=lambda t: t.row):
        if tag.tag in group_tables or tag.tag in group_skipped:
            tables += group_tables.get(tag.tag, [])
            if tag.tag in group_skipped:
                skipped.append(group_skipped[tag.tag])
            continue
        result: CalibrationTable | Skipped
        if tag.kind is TagKind.TRANSMITTER:
            result = transmitter_for(tag, reference_junction_c, calibrator_unit)
            alarms = alarms_for(tag)
            if alarms is not None:
                (skipped if isinstance(result, Skipped) else tables).append(result)  # type: ignore[arg-type]
                result = alarms
        elif tag.kind is TagKind.SWITCH and tag.set_point is not None:
            result = switch_for(tag)
        elif tag.kind is TagKind.ELEMENT:
            result = sensor_for(tag)
        elif tag.kind is TagKind.RELAY:
            result = converter_for(tag)
        elif tag.kind is TagKind.FINAL_ELEMENT:
            result = Skipped(tag.tag, "Driven By blank: no controller output, so no settings to tabulate", tag.loop)
        else:
            result = Skipped(tag.tag, _NOT_CALIBRATED.get(tag.kind, "not calibrated"), tag.loop)
        (skipped if isinstance(result, Skipped) else tables).append(result)  # type: ignore[arg-type]
    title = project.config.title_block
    return CalibrationSet(
        project=title.project, index_path=project.index_path, tables=tuple(tables), skipped=tuple(skipped),
        reference_junction_c=reference_junction_c, calibrator_unit=calibrator_unit, revision=title.revision,
        loop_services={lid: loop.service or "" for lid, loop in project.loops.items()},
        loop_areas={t.loop: t.parts.area for t in project.tags.values()},
    )


def _split_group_tables(project: Project) -> tuple[dict[str, list[CalibrationTable]], dict[str, Skipped]]:
    """From the split groups of ``loopdocs.model.groups``: tag -> its tables, and tag -> why
    it has none. Each element gets its stroke table; the loop checks of a group (two or
    more elements, or one over part of the CO) follow its last element in index order;
    a group's converters (I/P) get theirs."""
    from loopdocs.model.groups import groups_for

    tables: dict[str, list[CalibrationTable]] = {}
    skipped: dict[str, Skipped] = {}
    for group in groups_for(project):
        loop_checks: list[CalibrationTable] = []
        for element in group.elements:
            stroke = _stroke_for(element)
            if isinstance(stroke, Skipped):
                skipped[element.tag] = stroke
            else:
                tables[element.tag] = _with_fail_action(element.record, stroke, element.settings)
            if group.is_split and element.intent is not None:
                loop_checks.append(_loop_check_for(group, element))
        if loop_checks:
            last = max(group.elements, key=lambda e: e.record.row)
            tables.setdefault(last.tag, []).extend(loop_checks)
        for relay in group.converters:
            converter = _group_converter(relay)
            if isinstance(converter, Skipped):
                skipped[relay.tag] = converter
            else:
                tables[relay.tag] = [converter]
    return tables, skipped


def _assumption_notes(element: Any) -> list[str]:
    return [f"assumed: {text}" for text in element.assumptions.values()]


def _stroke_for(element: Any) -> CalibrationTable | Skipped:
    """The stroke table of one split element (``loopdocs.model.groups.SplitElement``)."""
    record: Tag = element.record
    if element.settings is None:
        return Skipped(element.tag, f"no stroke table: {element.settings_problem}", element.loop)
    scaling = element.required_dcs_scaling if element.method == "dcs" else None
    table = stroke_table(element.tag, element.settings, record.accuracy_pct, scaling)
    notes = _assumption_notes(element)
    if element.input_range is not None and element.input_units != element.settings.span.unit:
        lo, hi = element.input_range
        notes.append(f"input range as set: {lo:g} to {hi:g} {element.input_units} (shown in {element.settings.span.unit})")
    return table.with_context(loop=element.loop, service=record.service or "", notes=notes)


def _with_fail_action(record: Tag, stroke: CalibrationTable, settings: Any) -> list[CalibrationTable]:
    """The stroke table, the fail-action test row and the accessory tests
    (``loopdocs.calc.fail_action``); where there is no fail-action row (FAI, fail position
    unknown) the stroke table says why."""
    from loopdocs.calc.fail_action import accessory_table, fail_action_table, fail_position_of

    air = record.air_action.value if record.air_action else None
    position, taken = fail_position_of(record.fail_position.value if record.fail_position else None, air)
    test = fail_action_table(record.tag, position, settings, stroke.tolerance)
    accessories = accessory_table(record.tag, tuple(a.value for a in record.accessories), position, settings)
    extra = [accessories.with_context(loop=stroke.loop, service=stroke.service)] if accessories else []
    if isinstance(test, str):
        return [stroke.with_context(notes=[f"no fail-action test: {test}"]), *extra]
    return [stroke, test.with_context(loop=stroke.loop, service=stroke.service, notes=[taken] if taken else []), *extra]


def _loop_check_for(group: Any, element: Any) -> CalibrationTable:
    """CO every 10 % and at every element's CO start and end (the boundaries and the edges
    of gaps and overlaps, the same points for every element of the group) against the
    expected travel of one element of a split group."""
    record: Tag = element.record
    scaling = element.required_dcs_scaling if element.method == "dcs" else None
    edges = [v for e in group.elements if e.intent is not None for v in (e.co_start_pct, e.co_end_pct)]
    table = loop_check_table(element.tag, element.intent, element.settings, scaling, record.accuracy_pct,
                             edges_pct=edges, travel_error=element.travel_error)
    notes = [f"{group.mode} split driven by {group.controller} ({element.method})"]
    if element.intent_source == "settings":
        notes.append("travel not stated in the index: expected travel taken from the positioner settings")
    elif element.intent_source == "default":
        notes.append("travel not stated in the index: 0 to 100 % (opens as CO rises) taken")
    return table.with_context(loop=group.loop, service=record.service or "", notes=notes)


def _group_converter(relay: Tag) -> CalibrationTable | Skipped:
    """An I/P of a group: its own range when given, else the standard 4-20 mA input."""
    if relay.has_range:
        return converter_for(relay)
    span, reason = output_span(relay.signal)
    if reason or span is None:
        return Skipped(relay.tag, reason or "converter with a digital output", relay.loop)
    table = _converter_with_tolerance(relay, MA_4_20, span)
    notes = ["Range blank: 4-20 mA input taken"]
    return table.with_context(loop=relay.loop, service=relay.service or "", notes=notes)
