"""Cross-column contradictions of one index row: values that each read well on their
own but cannot all be true together.

- ``sensor.range`` (error, at Range Low or Range High): the calibrated range, converted
  from the row's Units to degC, reaches outside the range where the sensor's reference
  function holds, so no ohm or mV value exists for that end. Thermocouples: the ITS-90
  reference functions of NIST Monograph 175 / IEC 60584-1:2013 (type K -270 to 1372,
  J -210 to 1200, T -270 to 400, E -270 to 1000, N -270 to 1300, R and S -50 to 1768.1,
  B 0 to 1820 degC; ``calc.thermocouple.temperature_range_c``). Pt100 and Pt1000: the
  Callendar-Van Dusen function of IEC 60751, -200 to 850 degC (``calc.rtd``). IEC 60751
  also gives narrower ranges for its tolerance classes, narrower still for thin-film
  than for wire-wound elements; the index does not say which construction or class is
  fitted, so those are not checked.
- ``sensor.class-range`` (warning, at the Range cell): a thermocouple range inside the
  reference function but outside every tolerance class of IEC 60584-1:2013 (its
  tolerance table; type K class 2 ends at 1200 degC, ``TOLERANCE_CLASS_RANGES_C``): the
  table can be computed, but no tolerance is specified there.
- ``sensor.signal`` (error, at Sensor): a platinum RTD (Pt100, Pt1000) on a thermocouple
  signal (Signal TC), or a thermocouple (TC-x) on an RTD signal (Signal RTD, also when
  written ``4-wire RTD``): the input would be configured for the wrong sensor.
- ``sensor.variable`` (warning, at Sensor or Signal): a temperature sensor, or a TC or
  RTD signal, on a tag whose measured variable (ISA-5.1 first letter) is not T. It may be
  intended (a flow transmitter with a temperature input for compensation), or the tag
  letter or the Sensor is wrong.
- ``units.variable`` (at Units): the Units measure another quantity than the measured
  variable of the tag (ISA-5.1 first letter): a TT in bar, a PT in degC, an FT in degC.
  Accepted (common practice): T in temperature units; P in pressure units; F in volume
  or mass flow, velocity, pressure (differential-pressure flow) or %; L in length,
  pressure (hydrostatic or differential-pressure level), volume or %. An error, since
  the calibration would be made in the wrong quantity; a warning where the unit may be
  intended: % on a T or P tag (a range in % of span), a length on a P tag (a head).
  Units pint does not know, relays (their range is a signal) and final elements are
  not checked.
- ``switch.range`` (warning, at Tag): a switch (ISA-5.1 succeeding letter S) with a
  range and a 4-20 mA signal. A switch has a set point, not a range; the row reads as a
  transmitter, and gets no calibration table as a switch.
- ``element.signal`` (at Signal): a 4-20 mA signal on a primary element (E, O) or a well
  (W), which have no transmitter function. A warning for an element (the signal of a
  head-mounted or integral transmitter may have been written on its row); an error for
  a well (a thermowell or probe pocket carries no signal at all).

``sensor_range_problems`` is shared with ``loopdocs.calibration.project_tables``, so a tag skipped
for its range is skipped with the same words, quoting the index's own value and unit.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Iterator

from loopdocs.calc import rtd, thermocouple
from loopdocs.calc.units import convert, quantity_of
from loopdocs.core.findings import Finding, Severity
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Sensor, Signal

#: Slack on a range end converted to degC, so that a limit typed in another unit
#: (2501.6 degF for type K's 1372 degC) is not reported for a rounding error.
_SLACK_C = 1e-6

_END_LABEL = {"range_low": "Range Low", "range_high": "Range High"}


@dataclass(frozen=True)
class SensorLimits:
    """Where a sensor's reference function holds: degC, what it is, and the source."""

    low_c: float
    high_c: float
    function: str
    source: str


def sensor_limits(sensor: Sensor) -> SensorLimits:
    """Reference-function range of ``sensor``.

    >>> sensor_limits(Sensor.TC_K)
    SensorLimits(low_c=-270.0, high_c=1372.0, function='type K reference function', source='IEC 60584-1')
    >>> sensor_limits(Sensor.PT100).high_c  # IEC 60751
    850.0
    """
    if sensor.is_rtd:
        return SensorLimits(rtd.RTD_MIN_C, rtd.RTD_MAX_C, f"{sensor.value} Callendar-Van Dusen function", "IEC 60751")
    tc_type = sensor.thermocouple_type
    low_c, high_c = thermocouple.temperature_range_c(tc_type)
    return SensorLimits(low_c, high_c, f"type {tc_type} reference function", "IEC 60584-1")


@dataclass(frozen=True)
class RangeEndProblem:
    """One end of a range outside a sensor's limits: the column key and what to say."""

    key: str
    text: str


def _in_units(value_c: float, units: str) -> str:
    """``' (2501.6 degF)'``: a degC limit also in the index's unit, when that is not degC."""
    if units.strip().lower() in ("degc", "°c", "deg c"):
        return ""
    return f" ({convert(value_c, 'degC', units):.6g} {units})"


def _degc(value: float, units: str) -> float:
    """A temperature in degC (pint only for a unit other than degC)."""
    return float(value) if units.strip().lower() in ("degc", "°c", "deg c") else convert(value, units, "degC")


def _ends_outside(
    low: float | None, high: float | None, units: str, low_c: float, high_c: float
) -> Iterator[tuple[str, float, str]]:
    """``(key, value as written, 'above'|'below')`` for each range end outside low_c..high_c."""
    for key, value in (("range_low", low), ("range_high", high)):
        if value is None:
            continue
        value_c = _degc(value, units)
        if value_c > high_c + _SLACK_C:
            yield key, value, "above"
        elif value_c < low_c - _SLACK_C:
            yield key, value, "below"


def sensor_range_problems(
    sensor: Sensor | None, low: float | None, high: float | None, units: str | None
) -> list[RangeEndProblem]:
    """The ends of a calibrated range outside the reference function of ``sensor``.

    Values are compared in degC (converted from ``units``); the text quotes the value
    and unit as written. Empty when there is no sensor or the units are not a
    temperature (other rules report those).

    >>> [p.text for p in sensor_range_problems(Sensor.TC_K, 0.0, 1500.0, "degC")]
    ["Range High 1500 degC is above the type K reference function's 1372 degC (IEC 60584-1)"]
    """
    if sensor is None or not units or quantity_of(units) != "temperature":
        return []
    limits = sensor_limits(sensor)
    problems = []
    for key, value, side in _ends_outside(low, high, units, limits.low_c, limits.high_c):
        limit_c = limits.high_c if side == "above" else limits.low_c
        problems.append(RangeEndProblem(key, (
            f"{_END_LABEL[key]} {value:g} {units} is {side} the {limits.function}'s "
            f"{limit_c:g} degC{_in_units(limit_c, units)} ({limits.source})"
        )))
    return problems


def class_range_problems(
    sensor: Sensor | None, low: float | None, high: float | None, units: str | None
) -> list[RangeEndProblem]:
    """Thermocouple range ends inside the reference function but outside every IEC
    60584-1 tolerance class (``thermocouple.TOLERANCE_CLASS_RANGES_C``).

    >>> [p.key for p in class_range_problems(Sensor.TC_K, 0.0, 1300.0, "degC")]
    ['range_high']
    """
    if sensor is None or sensor.is_rtd or not units or quantity_of(units) != "temperature":
        return []
    outside_function = {p.key for p in sensor_range_problems(sensor, low, high, units)}
    tc_type = sensor.thermocouple_type
    low_c, high_c = thermocouple.tolerance_classes_range_c(tc_type)
    classes = thermocouple.TOLERANCE_CLASS_RANGES_C[tc_type]
    problems = []
    for key, value, side in _ends_outside(low, high, units, low_c, high_c):
        if key in outside_function:
            continue
        limit_c = high_c if side == "above" else low_c
        numbers = ", ".join(str(n) for n, r in classes.items() if limit_c in r)
        problems.append(RangeEndProblem(key, (
            f"{_END_LABEL[key]} {value:g} {units} is {side} {limit_c:g} degC{_in_units(limit_c, units)}, "
            f"the {'top' if side == 'above' else 'bottom'} of the type {tc_type} tolerance classes "
            f"(class {numbers}, IEC 60584-1): the reference function holds there, but no tolerance is specified"
        )))
    return problems


# --------------------------------------------------------------------------- units


_OK, _MAYBE = "ok", "maybe"

#: Measured variable (ISA-5.1 first letter, with modifier) -> quantity -> verdict;
#: a quantity not listed is a contradiction (common practice, see the module docstring).
UNITS_BY_VARIABLE: dict[str, dict[str, str]] = {
    "T": {"temperature": _OK, "ratio": _MAYBE},
    "TD": {"temperature": _OK, "ratio": _MAYBE},
    "P": {"pressure": _OK, "length": _MAYBE, "ratio": _MAYBE},
    "PD": {"pressure": _OK, "length": _MAYBE, "ratio": _MAYBE},
    "F": {"volume flow": _OK, "mass flow": _OK, "velocity": _OK, "pressure": _OK, "ratio": _OK},
    "L": {"length": _OK, "pressure": _OK, "volume": _OK, "ratio": _OK},
}

_MAYBE_WHY = {
    "ratio": "a range in % of span may be meant, but the technician applies the process value",
    "length": "a head of liquid may be meant; the pressure to apply depends on its density",
}


def _units_finding(project: Project, tag: Tag) -> Finding | None:
    if tag.kind in (TagKind.RELAY, TagKind.FINAL_ELEMENT) or not tag.units:
        return None
    allowed = UNITS_BY_VARIABLE.get(tag.parts.variable)
    quantity = quantity_of(tag.units)
    if allowed is None or quantity is None:
        return None
    verdict = allowed.get(quantity)
    if verdict == _OK:
        return None
    wanted = ", ".join(q for q, v in allowed.items() if v == _OK)
    unit_is = "a ratio (no dimension)" if quantity == "ratio" else f"a {quantity} unit"
    text = (f"{tag.tag}: Units {tag.units} is {unit_is}, but the tag's first letter "
            f"{tag.parts.variable} means {tag.parts.variable_name}")
    if verdict == _MAYBE:
        severity, text = Severity.WARNING, f"{text}: {_MAYBE_WHY[quantity]}; give it in {wanted} units"
    else:
        severity, text = Severity.ERROR, f"{text}: give the range in {wanted} units, or correct the tag"
    return Finding("units.variable", severity, text, loop=tag.loop, tags=(tag.tag,),
                   location=project.cell(tag, "units"))


# --------------------------------------------------------------------------- rules


def _sensor_findings(project: Project, tag: Tag) -> Iterator[Finding]:
    sensor, signal = tag.sensor, tag.signal
    where = project.cell
    for problem in sensor_range_problems(sensor, tag.range_low, tag.range_high, tag.units):
        yield Finding("sensor.range", Severity.ERROR,
                      f"{tag.tag}: {problem.text}; no calibration value exists beyond it",
                      loop=tag.loop, tags=(tag.tag,), location=where(tag, problem.key))
    for problem in class_range_problems(sensor, tag.range_low, tag.range_high, tag.units):
        yield Finding("sensor.class-range", Severity.WARNING, f"{tag.tag}: {problem.text}",
                      loop=tag.loop, tags=(tag.tag,), location=where(tag, problem.key))
    if sensor is not None and signal in (Signal.TC, Signal.RTD):
        wired_as = "a thermocouple" if signal is Signal.TC else "an RTD"
        if sensor.is_rtd == (signal is Signal.TC):
            what = "a platinum RTD" if sensor.is_rtd else f"a type {sensor.thermocouple_type} thermocouple"
            signal_cell = where(tag, "signal")
            yield Finding("sensor.signal", Severity.ERROR,
                          f"{tag.tag}: Sensor {sensor.value} is {what}, but Signal"
                          f"{f' ({signal_cell})' if signal_cell else ''} is {signal.value}, {wired_as} input: "
                          "the input would be set up for the wrong sensor",
                          loop=tag.loop, tags=(tag.tag,), location=where(tag, "sensor"))
    if tag.parts.variable[0] != "T":
        if sensor is not None:
            yield Finding("sensor.variable", Severity.WARNING,
                          f"{tag.tag}: Sensor {sensor.value} is a temperature sensor, but the tag's first letter "
                          f"{tag.parts.variable} means {tag.parts.variable_name}: correct the tag or the Sensor "
                          "(or accept it for a temperature input used for compensation)",
                          loop=tag.loop, tags=(tag.tag,), location=where(tag, "sensor"))
        elif signal in (Signal.TC, Signal.RTD):
            yield Finding("sensor.variable", Severity.WARNING,
                          f"{tag.tag}: Signal {signal.value} is a temperature sensor signal, but the tag's first "
                          f"letter {tag.parts.variable} means {tag.parts.variable_name}",
                          loop=tag.loop, tags=(tag.tag,), location=where(tag, "signal"))


def _kind_findings(project: Project, tag: Tag) -> Iterator[Finding]:
    analog = tag.signal is not None and tag.signal.is_analog_ma
    if not analog:
        return
    if tag.kind is TagKind.SWITCH and tag.has_range:
        yield Finding("switch.range", Severity.WARNING,
                      f"{tag.tag} is a switch (letter S) but has a range {tag.range_low:g} to {tag.range_high:g} "
                      f"{tag.units or ''} and a {tag.signal.value} signal, like a transmitter: a switch has a set "
                      "point, not a range. Correct the tag if it is a transmitter, else give Set Point and a "
                      "discrete signal",
                      loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "tag"))
    if tag.kind is TagKind.ELEMENT:
        well = "W" in tag.parts.functions
        what = "a well (letter W), which carries no signal" if well else \
            "a primary element, which has no transmitter function"
        advice = "" if well else (
            "; if a transmitter is fitted on it, give the transmitter its own row (TT, FT ...) with this signal")
        yield Finding("element.signal", Severity.ERROR if well else Severity.WARNING,
                      f"{tag.tag}: Signal {tag.signal.value} on {what}{advice}",
                      loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "signal"))


def checks(project: Project) -> Iterator[Finding]:
    """Every rule of the module docstring, row by row in index order."""
    temperature_signals = (Signal.TC, Signal.RTD)
    for tag in sorted(project.tags.values(), key=lambda t: t.row):
        if tag.sensor is not None or tag.signal in temperature_signals:  # else no sensor rule applies
            yield from _sensor_findings(project, tag)
        units = _units_finding(project, tag)
        if units is not None:
            yield units
        yield from _kind_findings(project, tag)
