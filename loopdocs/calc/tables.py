"""Calibration tables: the values to apply and to expect at each test point (docs/design.md §7).

Pure functions on numbers; the tables of a whole project are built from its records in
``loopdocs.calibration.project_tables``. Percentages run 0 to 100.

Transmitters (and converters such as an I/P), five points rising then falling::

    x = LRV + p * (URV - LRV)                 input at p % of span (LRV > URV: reverse range)
    q = p (linear) or sqrt(p) (square root)   output fraction
    S = low + q * (high - low)                output signal (4-20 mA, 3-15 psig, 20-100 kPa)

Square-root (root-extracting DP flow transmitter): the output is linear in flow,
``S = low + q * (high - low)`` with ``q`` the fraction of the flow range, while the
differential pressure across the element is ``DP = q**2 * DP_span`` (flow through a
differential-pressure device is proportional to the square root of DP, ISO 5167-1), so
50 % flow = 25 % DP = 12 mA. A range in pressure units is the DP range: points at 0,
1, 25, 50, 75 and 100 % of DP (1 % DP = 10 % flow, where the root's gain is steepest).
A range in flow units is the flow range (``sqrt_flow_table``): points at 0, 10, 25, 50,
75 and 100 % of flow, each with the DP to apply (or the % of DP span when the index
gives no DP range). Tolerance = Accuracy % of span, in input units
(``acc * |URV - LRV|``) and output units (``acc * (high - low)``).

Final elements: the input signal at 0, 25, 50, 75, 100 % travel from the positioner
input range (or the spring range) of ``loopdocs.calc.travel``; the loop check of a split
group gives the expected travel at every 10 % of controller output.

>>> t = transmitter_table("TT-1", 0.0, 150.0, "degC", MA_4_20)
>>> [(p.percent, p.input.value, p.output.value) for p in t.points[:3]]
[(0.0, 0.0, 4.0), (25.0, 37.5, 8.0), (50.0, 75.0, 12.0)]
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any, Iterable, Sequence

from loopdocs.calc.rtd import rtd_resistance_ohm
from loopdocs.calc.signals import (
    MA_4_20,
    NE43Levels,
    SignalSpan,
    fraction_of_range,
    ne43_levels,
    signal_at_fraction,
    sqrt_transfer,
)
from loopdocs.calc.travel import (
    TRAVEL_TOLERANCE_PCT,
    DcsScaling,
    Intent,
    Settings,
    intended_travel_pct,
    max_travel_error,
    realised_travel_pct,
)
from loopdocs.calc.thermocouple import emf_to_simulate_mv

#: Test points, % of span (docs/design.md §7.2).
FIVE_POINTS_PCT = (0.0, 25.0, 50.0, 75.0, 100.0)
#: Test points of a square-root transmitter ranged in DP, % of DP span: the five points
#: and 1 % DP (= 10 % flow), where root extraction matters most (common practice).
SQRT_DP_POINTS_PCT = (0.0, 1.0, 25.0, 50.0, 75.0, 100.0)
#: Test points of a square-root transmitter ranged in flow, % of flow: the five points
#: and 10 % flow (= 1 % DP) (common practice).
SQRT_FLOW_POINTS_PCT = (0.0, 10.0, 25.0, 50.0, 75.0, 100.0)
#: ``Simulated.basis`` of the differential pressure to apply at a flow point.
DP_BASIS = "differential pressure to apply: DP = (flow fraction)^2 x DP span"
#: Unit of the DP to apply when the index gives no DP range.
DP_PCT_UNIT = "% DP span"
#: Controller-output step of a split group's loop check, %.
LOOP_CHECK_STEP_PCT = 10.0
DIRECTIONS = ("up", "down")

#: Units written in tables for controller output and valve travel.
CO_UNIT = "% CO"
TRAVEL_UNIT = "% travel"

#: R0 of the platinum RTDs, ohm (IEC 60751).
RTD_R0_OHM = {"Pt100": 100.0, "Pt1000": 1000.0}


# --------------------------------------------------------------------------- data types


def _num(value: float) -> float:
    """A float for JSON and display: -0.0 becomes 0.0."""
    value = float(value)
    return 0.0 if value == 0 else value


@dataclass(frozen=True)
class Quantity:
    """A value and its unit as written (``"mA"``, ``"degC"``, ``"% travel"``)."""

    value: float
    unit: str

    def as_json(self) -> dict[str, Any]:
        return {"value": _num(self.value), "unit": self.unit}


@dataclass(frozen=True)
class Simulated:
    """What a calibrator sources in place of the process input, and on what basis.

    ``basis`` says how it was obtained (``"IEC 60751 Pt100"``, ``"ITS-90 type K"``,
    ``"calibrator unit"``, ``"signal at the element"``); ``reference_junction_c`` is set
    for thermocouple EMF.
    """

    value: float
    unit: str
    basis: str
    reference_junction_c: float | None = None

    def as_json(self) -> dict[str, Any]:
        data: dict[str, Any] = {"value": _num(self.value), "unit": self.unit, "basis": self.basis}
        if self.reference_junction_c is not None:
            data["reference_junction_c"] = _num(self.reference_junction_c)
        return data


@dataclass(frozen=True)
class Point:
    """One test point: apply ``input`` (or the ``simulate`` values), expect ``output``.

    ``percent`` is % of span (transmitters, sensors, converters), % travel (final
    elements) or % CO (loop check). ``direction`` is the direction the applied input
    moves to reach the point: ``up`` or ``down``.
    """

    percent: float
    input: Quantity
    output: Quantity
    direction: str = "up"
    simulate: tuple[Simulated, ...] = ()

    def as_json(self) -> dict[str, Any]:
        return {
            "percent": _num(self.percent),
            "input": self.input.as_json(),
            "output": self.output.as_json(),
            "direction": self.direction,
            "simulate": [s.as_json() for s in self.simulate],
        }


@dataclass(frozen=True)
class Tolerance:
    """Allowed error: ``percent_of_span`` of the span, as +/- ``input`` and +/- ``output``."""

    percent_of_span: float
    input: Quantity | None
    output: Quantity
    basis: str

    def as_json(self) -> dict[str, Any]:
        return {
            "percent_of_span": _num(self.percent_of_span),
            "input": self.input.as_json() if self.input else None,
            "output": self.output.as_json(),
            "basis": self.basis,
        }


@dataclass(frozen=True)
class CalibrationTable:
    """The test points of one tag (or one element in a loop check).

    ``input_range`` and ``output_range`` are the values at 0 % and 100 % (a reverse
    range has ``input_range[0] > input_range[1]``); the output span used for
    ``% of span`` errors is ``|output_range[1] - output_range[0]|``.
    """

    tag: str
    kind: str
    points: tuple[Point, ...]
    tolerance: Tolerance | None
    input_range: tuple[Quantity, Quantity]
    output_range: tuple[Quantity, Quantity]
    notes: tuple[str, ...] = ()
    loop: str = ""
    service: str = ""
    ne43: NE43Levels | None = None
    dcs_scaling: DcsScaling | None = None

    @property
    def output_span(self) -> float:
        """``|output at 100 % - output at 0 %|`` in the output unit."""
        return abs(self.output_range[1].value - self.output_range[0].value)

    def with_context(self, *, loop: str = "", service: str = "", notes: Iterable[str] = ()) -> "CalibrationTable":
        """A copy with the loop, service and extra notes set."""
        return replace(self, loop=loop or self.loop, service=service or self.service, notes=self.notes + tuple(notes))

    def as_json(self) -> dict[str, Any]:
        """docs/design.md §9.2: ``{tag, kind, points: [{percent, input, output}], tolerance}`` plus extra keys."""
        data: dict[str, Any] = {
            "tag": self.tag,
            "kind": self.kind,
            "loop": self.loop,
            "service": self.service,
            "points": [p.as_json() for p in self.points],
            "tolerance": self.tolerance.as_json() if self.tolerance else None,
            "input_range": [q.as_json() for q in self.input_range],
            "output_range": [q.as_json() for q in self.output_range],
            "notes": list(self.notes),
        }
        if self.ne43 is not None:
            data["ne43"] = {
                "measuring_low_ma": self.ne43.measuring_low_ma,
                "measuring_high_ma": self.ne43.measuring_high_ma,
                "failure_at_or_below_ma": self.ne43.failure_at_or_below_ma,
                "failure_at_or_above_ma": self.ne43.failure_at_or_above_ma,
            }
        if self.dcs_scaling is not None:
            data["dcs_scaling"] = {
                "co_at_0_pct": _num(self.dcs_scaling.co_at_0_pct),
                "co_at_100_pct": _num(self.dcs_scaling.co_at_100_pct),
                "reversed": self.dcs_scaling.reversed,
            }
        return data


# --------------------------------------------------------------------------- helpers


def ne43_note(levels: NE43Levels) -> str:
    """The NAMUR NE 43 levels in one line.

    >>> ne43_note(ne43_levels())
    'NAMUR NE 43: measuring 3.8 to 20.5 mA; failure at or below 3.6 mA or at or above 21 mA'
    """
    return (
        f"NAMUR NE 43: measuring {levels.measuring_low_ma:g} to {levels.measuring_high_ma:g} mA; failure at or "
        f"below {levels.failure_at_or_below_ma:g} mA or at or above {levels.failure_at_or_above_ma:g} mA"
    )


def rising_falling(percents: Sequence[float] = FIVE_POINTS_PCT) -> list[tuple[float, str]]:
    """The points rising, then the same points falling: ``[(0, 'up'), ..., (0, 'down')]``.

    Every point is read in both directions (the 100 % point too, approached from
    above), so hysteresis can be computed at each one.

    >>> rising_falling((0, 50, 100))
    [(0.0, 'up'), (50.0, 'up'), (100.0, 'up'), (100.0, 'down'), (50.0, 'down'), (0.0, 'down')]
    """
    ordered = sorted(float(p) for p in percents)
    return [(p, "up") for p in ordered] + [(p, "down") for p in reversed(ordered)]


def tolerance_of(
    accuracy_pct: float | None,
    input_span: float | None,
    input_unit: str,
    output_span: float,
    output_unit: str,
    basis: str = "Accuracy % in the index",
) -> Tolerance | None:
    """Accuracy % of span as +/- input and +/- output units; ``None`` when no accuracy is given.

    >>> tolerance_of(0.25, 45.0, "degC", 16.0, "mA").output
    Quantity(value=0.04, unit='mA')
    """
    if accuracy_pct is None:
        return None
    if not (math.isfinite(accuracy_pct) and accuracy_pct > 0):
        raise ValueError(f"accuracy must be a positive % of span, got {accuracy_pct}")
    fraction = accuracy_pct / 100.0
    tol_in = Quantity(fraction * abs(input_span), input_unit) if input_span is not None else None
    return Tolerance(float(accuracy_pct), tol_in, Quantity(fraction * abs(output_span), output_unit), basis)


def zero_note(lrv: float, urv: float, unit: str) -> str | None:
    """Name an elevated or suppressed zero (ISA-51.1 terms, from memory).

    Elevated zero: the zero of the measured variable is above the lower-range value
    (``-2500 to 500 mmH2O``, a wet-leg DP level); suppressed zero: it is below it
    (``2 to 10 barg``). Works on the lower end of a reverse range too.

    >>> zero_note(-3000, -500, "mmH2O")
    'elevated zero: range -3000 to -500 mmH2O lies below zero at its lower end'
    >>> zero_note(2, 10, "barg")
    'suppressed zero: range 2 to 10 barg starts above zero'
    >>> zero_note(0, 10, "barg") is None
    True
    """
    low = min(lrv, urv)
    if low < 0:
        return f"elevated zero: range {lrv:g} to {urv:g} {unit} lies below zero at its lower end"
    if low > 0:
        return f"suppressed zero: range {lrv:g} to {urv:g} {unit} starts above zero"
    return None


# --------------------------------------------------------------------------- temperature


def temperature_simulation(
    sensor: str, temp_c: float, reference_junction_c: float | None = None
) -> tuple[Simulated, ...]:
    """What to source to make a ``sensor`` input read ``temp_c`` (degC).

    ``Pt100``/``Pt1000``: the IEC 60751 resistance (``rtd.rtd_resistance_ohm``), ohm.
    Thermocouple (``TC-K`` ...): the ITS-90 EMF with the reference junction at 0 degC
    and, when ``reference_junction_c`` is given (and not 0), also ``E(t) - E(t_rj)``
    (``thermocouple.emf_to_simulate_mv``), mV. Raises ValueError outside the sensor's
    range.

    >>> [round(s.value, 2) for s in temperature_simulation("Pt100", 100.0)]  # IEC 60751: 138.51
    [138.51]
    >>> [round(s.value, 3) for s in temperature_simulation("TC-K", 100.0, 25.0)]  # NIST MN 175
    [4.096, 3.096]
    """
    if sensor in RTD_R0_OHM:
        ohm = rtd_resistance_ohm(temp_c, r0_ohm=RTD_R0_OHM[sensor])
        return (Simulated(ohm, "ohm", f"IEC 60751 {sensor}"),)
    tc_type = str(sensor).upper().removeprefix("TC-")
    result = [Simulated(emf_to_simulate_mv(tc_type, temp_c, 0.0), "mV", f"ITS-90 type {tc_type}", 0.0)]
    if reference_junction_c is not None and reference_junction_c != 0.0:
        result.append(
            Simulated(
                emf_to_simulate_mv(tc_type, temp_c, reference_junction_c), "mV",
                f"ITS-90 type {tc_type}", float(reference_junction_c),
            )
        )
    return tuple(result)


def _temperature_c(value: float, unit: str) -> float:
    if unit == "degC":
        return float(value)
    from loopdocs.calc.units import convert

    return convert(value, unit, "degC")


# --------------------------------------------------------------------------- transmitters


def _calibrator_conversion(pressure_unit: str, calibrator_unit: str | None) -> Any:
    """``x -> x`` in the calibrator's pressure unit, or ``None`` when there is nothing to
    convert (no calibrator unit, the same unit, or either not a pressure)."""
    if not calibrator_unit or calibrator_unit == pressure_unit:
        return None
    from loopdocs.calc.units import convert, is_pressure

    if not (is_pressure(pressure_unit) and is_pressure(calibrator_unit)):
        return None
    return lambda x: convert(x, pressure_unit, calibrator_unit)


def transmitter_table(
    tag: str,
    lrv: float,
    urv: float,
    input_unit: str,
    output: SignalSpan | None,
    transfer: str = "linear",
    accuracy_pct: float | None = None,
    *,
    kind: str = "transmitter",
    sensor: str | None = None,
    reference_junction_c: float | None = None,
    calibrator_unit: str | None = None,
) -> CalibrationTable:
    """Five points rising and falling for a transmitter or converter (module docstring).

    ``output`` is the analog output span (``MA_4_20``, ``PSIG_3_15``, ``KPA_20_100``), or
    ``None`` for a digital output (fieldbus): the reading then is the value in input
    units (linear) or % of flow (square root). ``sensor`` (``Pt100``, ``TC-K`` ...) adds
    the resistance or EMF to simulate at each point (``input_unit`` must be a
    temperature). ``calibrator_unit`` (a pressure unit) adds the input converted to it.
    Raises ValueError for a zero span, an unknown transfer or units pint cannot convert.

    >>> t = transmitter_table("FT-1", 0.0, 250.0, "mbar", MA_4_20, "sqrt")
    >>> t.points[2].input.value, t.points[2].output.value  # 25 % DP = 50 % flow = 12 mA
    (62.5, 12.0)
    >>> t = transmitter_table("PT-1", 100.0, 0.0, "kPa", MA_4_20)  # reverse range
    >>> t.points[1].input.value, t.points[1].output.value
    (75.0, 8.0)
    """
    transfer = str(transfer or "linear").lower()
    if transfer not in ("linear", "sqrt"):
        raise ValueError(f"transfer must be linear or sqrt, got {transfer!r}")
    lrv, urv = float(lrv), float(urv)
    fraction_of_range(lrv, lrv, urv)  # raises on a zero span
    if output is None:
        out_unit = "% flow" if transfer == "sqrt" else input_unit
        out_low, out_high = (0.0, 100.0) if transfer == "sqrt" else (lrv, urv)
    else:
        out_unit, out_low, out_high = output.unit, output.low, output.high
    convert_to = _calibrator_conversion(input_unit, calibrator_unit)
    if transfer == "sqrt":
        from loopdocs.calc.units import is_pressure

        if not is_pressure(input_unit):
            raise ValueError(
                f"square root on a range in {input_unit}: a root-extracting transmitter's range is its "
                "differential-pressure range (pressure units) or its flow range (flow units)"
            )
        if lrv != 0.0 or urv <= 0.0:
            raise ValueError(
                f"square root on a DP range of {lrv:g} to {urv:g} {input_unit}: the DP range of a "
                "root-extracting flow transmitter runs from 0 (zero flow) up"
            )
    points = []
    for pct, direction in rising_falling(SQRT_DP_POINTS_PCT if transfer == "sqrt" else FIVE_POINTS_PCT):
        p = pct / 100.0
        x = lrv + p * (urv - lrv)
        q = sqrt_transfer(p) if transfer == "sqrt" else p
        y = out_low + q * (out_high - out_low)
        simulate: tuple[Simulated, ...] = ()
        if sensor:
            simulate = temperature_simulation(sensor, _temperature_c(x, input_unit), reference_junction_c)
        elif convert_to is not None:
            simulate = (Simulated(convert_to(x), calibrator_unit, "calibrator unit"),)
        points.append(Point(pct, Quantity(x, input_unit), Quantity(y, out_unit), direction, simulate))
    notes = []
    if transfer == "sqrt":
        notes.append(
            "square root: range is the differential pressure; output linear in flow, "
            "flow fraction = sqrt(DP fraction) (25 % DP = 50 % flow, 1 % DP = 10 % flow)"
        )
    if lrv > urv:
        notes.append(f"reverse range: output rises as the input falls from {lrv:g} to {urv:g} {input_unit}")
    from_unit_note = _zero_note_for(lrv, urv, input_unit)
    if from_unit_note:
        notes.append(from_unit_note)
    if sensor and reference_junction_c not in (None, 0.0) and not sensor.startswith("Pt"):
        notes.append(
            f"thermocouple EMF given with the reference junction at 0 degC and at {reference_junction_c:g} degC "
            "(transmitter terminals); a calibrator with its own reference-junction compensation sources degC directly"
        )
    return CalibrationTable(
        tag=tag,
        kind=kind,
        points=tuple(points),
        tolerance=tolerance_of(accuracy_pct, abs(urv - lrv), input_unit, out_high - out_low, out_unit),
        input_range=(Quantity(lrv, input_unit), Quantity(urv, input_unit)),
        output_range=(Quantity(out_low, out_unit), Quantity(out_high, out_unit)),
        notes=tuple(notes),
        ne43=ne43_levels() if output is not None and output.unit == "mA" and kind == "transmitter" else None,
    )


@dataclass(frozen=True)
class DpRange:
    """The calibrated differential-pressure range of a root-extracting flow transmitter."""

    low: float
    high: float
    unit: str


def dp_at_flow_fraction(flow_fraction: float, dp: DpRange | None) -> Simulated:
    """The differential pressure to apply for a flow fraction ``q`` (0 to 1).

    ``DP = DP_low + q**2 * (DP_high - DP_low)`` in the DP unit, or ``100 * q**2`` in % of
    the DP span without a DP range (ISO 5167-1: flow is proportional to sqrt(DP)).

    >>> dp_at_flow_fraction(0.5, DpRange(0.0, 25.0, "kPa")).value
    6.25
    >>> s = dp_at_flow_fraction(0.1, None); (round(s.value, 9), s.unit)
    (1.0, '% DP span')
    """
    fraction = float(flow_fraction) ** 2
    if dp is None:
        return Simulated(100.0 * fraction, DP_PCT_UNIT, DP_BASIS)
    return Simulated(dp.low + fraction * (dp.high - dp.low), dp.unit, DP_BASIS)


def sqrt_flow_table(
    tag: str,
    flow_low: float,
    flow_high: float,
    flow_unit: str,
    output: SignalSpan | None,
    dp: DpRange | None = None,
    accuracy_pct: float | None = None,
    *,
    cutoff_pct: float | None = None,
    calibrator_unit: str | None = None,
) -> CalibrationTable:
    """A root-extracting DP flow transmitter ranged in flow units (module docstring).

    At each point ``q`` (0, 10, 25, 50, 75, 100 % of the flow range, rising then falling)
    the table gives the flow, the DP to apply (``dp_at_flow_fraction``; with a DP range
    in its unit, and in ``calibrator_unit`` when that is another pressure unit) and the
    output, linear in flow: ``S = low + q * (high - low)``. ``output`` ``None`` (digital)
    expects the flow itself. Below a low-flow cut-off (``cutoff_pct``, % of flow) the
    transmitter reports zero flow, so a point there expects the output at 0 %.
    ValueError unless the flow and DP ranges run from 0 up and the DP unit is a pressure.

    >>> t = sqrt_flow_table("FT-1", 0.0, 120.0, "m3/h", MA_4_20, DpRange(0.0, 25.0, "kPa"))
    >>> [(p.input.value, round(p.simulate[0].value, 4), p.output.value) for p in t.points[2:4]]
    [(30.0, 1.5625, 8.0), (60.0, 6.25, 12.0)]
    """
    from loopdocs.calc.units import is_pressure

    flow_low, flow_high = float(flow_low), float(flow_high)
    if flow_low != 0.0 or not flow_high > 0.0 or not math.isfinite(flow_high):
        raise ValueError(
            f"square root on a flow range of {flow_low:g} to {flow_high:g} {flow_unit}: a root-extracting "
            "DP flow range runs from 0 (zero flow) up"
        )
    if dp is not None:
        if not is_pressure(dp.unit):
            raise ValueError(f"DP Units {dp.unit!r} is not a pressure unit")
        if dp.low != 0.0 or not dp.high > 0.0 or not math.isfinite(dp.high):
            raise ValueError(
                f"DP range {dp.low:g} to {dp.high:g} {dp.unit}: the DP range of a root-extracting flow "
                "transmitter runs from 0 (zero flow) up"
            )
    if cutoff_pct is not None and not (math.isfinite(cutoff_pct) and 0.0 <= cutoff_pct < 100.0):
        raise ValueError(f"low-flow cut-off must be 0 to 100 % of flow, got {cutoff_pct:g}")
    if output is None:
        out_unit, out_low, out_high = flow_unit, flow_low, flow_high
    else:
        out_unit, out_low, out_high = output.unit, output.low, output.high
    convert_to = _calibrator_conversion(dp.unit, calibrator_unit) if dp is not None else None
    points = []
    for pct, direction in rising_falling(SQRT_FLOW_POINTS_PCT):
        q = pct / 100.0
        below_cutoff = cutoff_pct is not None and 0.0 < pct < cutoff_pct
        y = out_low if below_cutoff else out_low + q * (out_high - out_low)
        applied = dp_at_flow_fraction(q, dp)
        simulate: tuple[Simulated, ...] = (applied,)
        if convert_to is not None:
            simulate += (Simulated(convert_to(applied.value), calibrator_unit, "calibrator unit"),)
        points.append(Point(pct, Quantity(flow_high * q, flow_unit), Quantity(y, out_unit), direction, simulate))
    dp_text = f"{dp.low:g} to {dp.high:g} {dp.unit}" if dp is not None else "not given in the index"
    notes = [
        f"square root: the transmitter extracts the root; output linear in flow, DP = (flow fraction)^2 x DP span "
        f"(50 % flow = 25 % DP); DP range {dp_text}",
    ]
    if dp is None:
        notes.append("apply the % of the transmitter's DP span shown (DP Low/DP High/DP Units blank in the index)")
    if cutoff_pct is not None:
        notes.append(
            f"low-flow cut-off {cutoff_pct:g} % flow ({cutoff_pct ** 2 / 100.0:.4g} % DP): below it the transmitter "
            f"reports zero flow ({out_low:g} {out_unit}); check the transmitter's cut-off setting"
        )
    return CalibrationTable(
        tag=tag,
        kind="transmitter",
        points=tuple(points),
        tolerance=tolerance_of(accuracy_pct, flow_high - flow_low, flow_unit, out_high - out_low, out_unit),
        input_range=(Quantity(flow_low, flow_unit), Quantity(flow_high, flow_unit)),
        output_range=(Quantity(out_low, out_unit), Quantity(out_high, out_unit)),
        notes=tuple(notes),
        ne43=ne43_levels() if output is not None and output.unit == "mA" else None,
    )


def _zero_note_for(lrv: float, urv: float, unit: str) -> str | None:
    """Elevated/suppressed zero is pressure and level language: said only of pressure and length units."""
    from loopdocs.calc.units import is_length, is_pressure

    if unit in ("degC", "degF", "K", "mA") or not (is_pressure(unit) or is_length(unit)):
        return None
    return zero_note(lrv, urv, unit)


def sensor_table(
    tag: str,
    sensor: str,
    lrv: float,
    urv: float,
    unit: str,
    accuracy_pct: float | None = None,
) -> CalibrationTable:
    """A temperature element checked on its own: apply the temperature, expect ohm or mV.

    Output: IEC 60751 resistance (Pt100, Pt1000) or ITS-90 EMF with the reference
    junction at 0 degC (thermocouples), at 0, 25, 50, 75, 100 % of the range, rising
    then falling. Tolerance: Accuracy % of the range span, in degC-span and in the
    output span (an approximation for a non-linear sensor; the IEC 60751 and
    IEC 60584-1 class tolerances are not in the index).

    >>> t = sensor_table("TE-1", "Pt100", -100.0, 100.0, "degC")
    >>> round(t.points[0].output.value, 2), round(t.points[4].output.value, 2)  # IEC 60751 table
    (60.26, 138.51)
    """
    lrv, urv = float(lrv), float(urv)
    fraction_of_range(lrv, lrv, urv)
    points = []
    for pct, direction in rising_falling():
        x = lrv + pct / 100.0 * (urv - lrv)
        sim = temperature_simulation(sensor, _temperature_c(x, unit))[0]
        points.append(Point(pct, Quantity(x, unit), Quantity(sim.value, sim.unit), direction))
    out_low, out_high = points[0].output, points[4].output
    notes = [
        f"{sensor}: " + ("IEC 60751 Callendar-Van Dusen resistance" if sensor in RTD_R0_OHM
                         else "ITS-90 reference function EMF, reference junction at 0 degC (ice point)"),
    ]
    return CalibrationTable(
        tag=tag,
        kind="sensor",
        points=tuple(points),
        tolerance=tolerance_of(accuracy_pct, abs(urv - lrv), unit, out_high.value - out_low.value, out_low.unit),
        input_range=(Quantity(lrv, unit), Quantity(urv, unit)),
        output_range=(out_low, out_high),
        notes=tuple(notes),
    )


# --------------------------------------------------------------------------- final elements


def _positioner_view(settings: Settings) -> Settings:
    """The same element seen at its positioner input (no control-system scaling)."""
    return settings if settings.method != "dcs" else replace(settings, method="positioner")


def travel_at_signal_pct(settings: Settings, signal: float) -> float:
    """Travel, %, for a signal at the positioner input, in ``settings.span.unit``.

    The element alone, whatever the split method: ``u``, ``s`` and travel of docs/design.md
    §4.3 (``split.realised_travel_pct`` with the signal as its CO).

    >>> travel_at_signal_pct(Settings("positioner", "ATC", "direct", 4.0, 11.68, MA_4_20), 7.84)
    50.0
    """
    co_pct = 100.0 * (signal - settings.span.low) / settings.span.width
    return realised_travel_pct(_positioner_view(settings), co_pct)


def signal_for_travel(settings: Settings, travel_pct: float) -> float:
    """Signal at the positioner input (``settings.span.unit``) that gives ``travel_pct``.

    Travel is linear in the signal between the two ends of the input range, so this
    interpolates between the travel there (0 or 100 %). ValueError outside 0 to 100 %.

    >>> signal_for_travel(Settings("positioner", "ATO", "direct", 12.32, 20.0, MA_4_20), 50.0)
    16.16
    """
    if not 0.0 <= travel_pct <= 100.0:
        raise ValueError(f"travel must be 0 to 100 %, got {travel_pct}")
    lo, hi = settings.input_low, settings.input_high
    t_lo, t_hi = travel_at_signal_pct(settings, lo), travel_at_signal_pct(settings, hi)
    return lo + (travel_pct - t_lo) / (t_hi - t_lo) * (hi - lo)


def _travel_tolerance(accuracy_pct: float | None, input_width: float | None, input_unit: str) -> Tolerance:
    if accuracy_pct is not None:
        return tolerance_of(accuracy_pct, input_width, input_unit, 100.0, TRAVEL_UNIT)  # type: ignore[return-value]
    return tolerance_of(
        TRAVEL_TOLERANCE_PCT, input_width, input_unit, 100.0, TRAVEL_UNIT,
        basis=f"Accuracy % blank: {TRAVEL_TOLERANCE_PCT:g} % of travel taken (common practice for a valve stroke check)",
    )  # type: ignore[return-value]


def stroke_table(
    tag: str,
    settings: Settings,
    accuracy_pct: float | None = None,
    dcs_scaling: DcsScaling | None = None,
) -> CalibrationTable:
    """Input signal at 0, 25, 50, 75, 100 % travel, signal rising then falling.

    For ``positioner`` and ``pneumatic`` splits the input range is the positioner's
    (or the actuator spring range); for ``dcs`` splits the positioner takes the full
    span and ``dcs_scaling`` (the control-system output scaling) is carried with the
    table. Tolerance: Accuracy % of travel, or 1 % of travel (docs/design.md §6.7) when blank.

    >>> t = stroke_table("TV-1", Settings("positioner", "ATC", "direct", 4.0, 11.68, MA_4_20))
    >>> [(p.input.value, p.output.value) for p in t.points[:3]]
    [(4.0, 100.0), (5.92, 75.0), (7.84, 50.0)]
    """
    unit = settings.span.unit
    lo, hi = sorted((settings.input_low, settings.input_high))
    t_at_lo = travel_at_signal_pct(settings, lo)
    points = []
    for frac_pct, direction in rising_falling():
        signal = lo + frac_pct / 100.0 * (hi - lo)
        travel = t_at_lo + (travel_at_signal_pct(settings, hi) - t_at_lo) * frac_pct / 100.0
        points.append(Point(travel, Quantity(signal, unit), Quantity(travel, TRAVEL_UNIT), direction))
    rising = travel_at_signal_pct(settings, hi) > t_at_lo
    notes = [
        f"{settings.air_action}, {settings.positioner_action} positioner: travel "
        + ("opens" if rising else "closes") + f" as the signal rises from {lo:g} to {hi:g} {unit}",
    ]
    if settings.method == "pneumatic":
        notes.append("pneumatic split: the range is the positioner input range, or the actuator spring range without positioner")
    return CalibrationTable(
        tag=tag,
        kind="final element",
        points=tuple(points),
        tolerance=_travel_tolerance(accuracy_pct, hi - lo, unit),
        input_range=(Quantity(lo, unit), Quantity(hi, unit)),
        output_range=(Quantity(t_at_lo, TRAVEL_UNIT), Quantity(travel_at_signal_pct(settings, hi), TRAVEL_UNIT)),
        notes=tuple(notes),
        dcs_scaling=dcs_scaling if settings.method == "dcs" else None,
    )


def element_signal_at_co(settings: Settings, co_pct: float, dcs_scaling: DcsScaling | None = None) -> float:
    """Signal at the element's input for a CO, %: the shared output ``low + width * CO``, or
    for ``dcs`` the element's own output after the control-system scaling.

    >>> element_signal_at_co(Settings("dcs", "ATO", "direct", 4, 20, MA_4_20), 75.0, DcsScaling(50, 100))
    12.0
    """
    if settings.method == "dcs":
        out_pct = (dcs_scaling or DcsScaling(0.0, 100.0)).output_pct(co_pct)
        return signal_at_fraction(settings.span, out_pct / 100.0)
    return signal_at_fraction(settings.span, co_pct / 100.0)


def loop_check_points_pct(edges_pct: Sequence[float] = (), step_pct: float = LOOP_CHECK_STEP_PCT) -> list[float]:
    """CO points, %, of a split loop check: every ``step_pct`` of CO from 0 to 100, plus
    every edge given (each element's CO start and end: the boundaries, and the edges of
    every gap and overlap, where a dead band or a double action shows), those within 0 to
    100 %, deduplicated (to 1e-6 % CO) and sorted (docs/design.md §7.2).

    >>> loop_check_points_pct([0, 48, 52, 100], 25)
    [0.0, 25.0, 48.0, 50.0, 52.0, 75.0, 100.0]
    """
    n = int(round(100.0 / step_pct))
    points = {round(100.0 * k / n, 6): 100.0 * k / n for k in range(n + 1)}
    for edge in edges_pct:
        value = float(edge)
        if math.isfinite(value) and 0.0 <= value <= 100.0:
            points.setdefault(round(value, 6), value)
    return [points[key] for key in sorted(points)]


def loop_check_table(
    tag: str,
    intent: Intent,
    settings: Settings | None = None,
    dcs_scaling: DcsScaling | None = None,
    accuracy_pct: float | None = None,
    step_pct: float = LOOP_CHECK_STEP_PCT,
    edges_pct: Sequence[float] = (),
    travel_error: tuple[float, float] | None = None,
) -> CalibrationTable:
    """Expected travel of one element of a split group at every ``step_pct`` of CO and at
    every edge in ``edges_pct`` (:func:`loop_check_points_pct`), rising then falling.

    Expected travel is the intent (``split.intended_travel_pct``); with ``settings`` the
    signal at the element is shown at each point, and a note is added when the settings
    do not realise the intent within 1 % of travel (``split.max_travel_error``, or
    ``travel_error`` when it is already known: the split group's ``(travel %, CO %)``).
    Give every element of a group the same ``edges_pct`` (the CO starts and ends of all
    of them), so its loop check lands on its neighbours' edges too.

    >>> t = loop_check_table("TV-1", Intent(52, 100, 0, 100))
    >>> [round(p.output.value, 2) for p in t.points[5:8]]  # CO 50, 60, 70 %
    [0.0, 16.67, 37.5]
    >>> t = loop_check_table("TV-1", Intent(52, 100, 0, 100), edges_pct=[0, 48, 52, 100])
    >>> [(p.percent, round(p.output.value, 2)) for p in t.points[5:8]]  # CO 48, 50, 52 %
    [(48.0, 0.0), (50.0, 0.0), (52.0, 0.0)]
    """
    cos = loop_check_points_pct(edges_pct, step_pct)
    points = []
    for co, direction in rising_falling(cos):
        simulate: tuple[Simulated, ...] = ()
        if settings is not None:
            simulate = (
                Simulated(element_signal_at_co(settings, co, dcs_scaling), settings.span.unit, "signal at the element"),
            )
        points.append(
            Point(co, Quantity(co, CO_UNIT), Quantity(intended_travel_pct(intent, co), TRAVEL_UNIT), direction, simulate)
        )
    notes = [
        f"intent: travel {intent.travel_start_pct:g} % at CO {intent.co_start_pct:g} %, "
        f"{intent.travel_end_pct:g} % at CO {intent.co_end_pct:g} %, held outside",
        "set the controller output in manual; the signal is what the element should receive",
    ]
    if settings is not None:
        err, at_co = travel_error if travel_error is not None else max_travel_error(intent, settings, dcs_scaling)
        if err > TRAVEL_TOLERANCE_PCT:
            notes.append(
                f"the settings do not realise this intent: {err:.1f} % travel off at CO {at_co:g} % "
                "(see loopdocs check)"
            )
    tol = _travel_tolerance(accuracy_pct, None, CO_UNIT)
    return CalibrationTable(
        tag=tag,
        kind="loop check",
        points=tuple(points),
        tolerance=tol,
        input_range=(Quantity(0.0, CO_UNIT), Quantity(100.0, CO_UNIT)),
        output_range=(Quantity(0.0, TRAVEL_UNIT), Quantity(100.0, TRAVEL_UNIT)),
        notes=tuple(notes),
        dcs_scaling=dcs_scaling if settings is not None and settings.method == "dcs" else None,
    )


def converter_table(
    tag: str,
    input_span: SignalSpan = MA_4_20,
    output_span: SignalSpan | None = None,
    accuracy_pct: float | None = None,
) -> CalibrationTable:
    """I/P (or any signal converter) table: input signal in, output signal out, linear.

    >>> from loopdocs.calc.signals import PSIG_3_15
    >>> t = converter_table("PY-1", MA_4_20, PSIG_3_15)
    >>> [(p.input.value, p.output.value) for p in t.points[:5]]
    [(4.0, 3.0), (8.0, 6.0), (12.0, 9.0), (16.0, 12.0), (20.0, 15.0)]
    """
    from loopdocs.calc.signals import PSIG_3_15

    return transmitter_table(
        tag, input_span.low, input_span.high, input_span.unit, output_span or PSIG_3_15,
        "linear", accuracy_pct, kind="converter",
    )
