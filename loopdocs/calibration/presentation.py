"""Calibration tables as people read them: one presentation per table, built once and
rendered alike by the loop sheet (``render.caltables``), the terminal
(``commands.calibration_text``) and the technicians' workbook
(``sheets.technicians_workbook``), so the three cannot drift apart.

A ``TableView`` holds everything a writer shows and nothing it has to work out:

- ``title``: the tag, what is checked in words (``KIND_WORDS``), the service and the
  range (``0 to 150 degC -> 4 to 20 mA``);
- ``columns``: each with a head and a unit (``Apply degC``, ``Simulate ohm``,
  ``Flow m3/h``, ``Apply DP kPa``, ``Signal mA``, ``Expect mA``) and its decimals;
- ``rows``: the distinct test points as text (a point read rising and again falling
  has the same values: shown once), with the limits of the expected value;
- ``tolerance``: one wording (``±0.25 % of span = ±0.1125 degC = ±0.04 mA``), with its
  basis in brackets when the index gave no Accuracy % (``tolerance_basis`` holds that
  basis alone, so that a loop sheet can print a basis shared by several tables once);
- ``notes``: the table's own notes, then the derived ones: the basis of every simulated
  value, the NAMUR NE 43 levels, the control-system scaling to enter;
- ``readings``: every test point in both directions with its low and high limit, the
  rows of the workbook.

The loop checks of one split group (same controller-output points) are shown side by
side by :func:`present_tables`: CO, the signal at the elements (one column when they
share it) and the expected travel of each element.

Decimals follow one rule (``loopdocs.core.formatting.display_decimals``): fixed for signal
and sensor units, else 1/10 000 of the span (the table's input or output range; for
simulated values, and a range of zero width, the column's own); the expected values (and their
limits, which readings are judged against) also resolve the tolerance to two significant
digits. Pure code: no terminal, workbook or PDF library.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from loopdocs.calc.tables import (
    DP_BASIS,
    DP_PCT_UNIT,
    LOOP_CHECK_STEP_PCT,
    CalibrationTable,
    Point,
    ne43_note,
)
from loopdocs.core.formatting import column_decimals, display_decimals, fmt_number, fmt_short, percent_decimals

LOOP_CHECK = "loop check"
SIGNAL_BASIS = "signal at the element"
CALIBRATOR_BASIS = "calibrator unit"
#: ``Tolerance.basis`` of a table whose Accuracy % is in the index (``calc.tables.tolerance_of``).
INDEX_BASIS = "Accuracy % in the index"

#: What each kind of table checks, in words.
KIND_WORDS = {
    "transmitter": "transmitter",
    "sensor": "sensor on its own",
    "converter": "signal converter",
    "final element": "valve stroke",
    "fail action": "fail action (remove the air supply)",
    "loop check": "split-range loop check",
    "switch": "switch set-point test",
    "alarm": "alarm settings",
    "accessory": "valve accessories (solenoid trip, limit switches)",
}

#: Kinds whose points are not places on a span (a switch trips at its set point): no % column.
NO_PERCENT_KINDS = ("switch",)

#: Head of the percentage column by kind (``% span`` otherwise).
PERCENT_HEADS = {"final element": "% travel", "fail action": "% travel held", "loop check": "% CO", "accessory": "% travel"}

#: Column roles: what a writer may need to place a column (the workbook maps them on its own columns).
PERCENT, APPLY, SIMULATE, EXPECT = "percent", "apply", "simulate", "expect"
#: A text column: which way the input moves to reach the point (trip and alarm tests).
MOVING = "moving"

#: Kinds whose points are reached moving one way on purpose (a switch trips rising, resets
#: falling; a high alarm comes in rising): the direction is a column of their table.
MOVING_KINDS = ("switch", "alarm")
_MOVING_WORDS = {"up": "rising", "down": "falling"}


@dataclass(frozen=True)
class Column:
    """One column: ``head`` words and ``unit`` (``label`` joins them), the decimals of its
    cells, its role, and for simulated values the basis and reference junction."""

    head: str
    unit: str
    decimals: int
    role: str
    basis: str = ""
    reference_junction_c: float | None = None
    tag: str = ""

    @property
    def label(self) -> str:
        """``'Apply degC'``, ``'Simulate mV (ref. junction 0 degC)'``; the percentage
        column's head alone (``'% span'``)."""
        if self.role == PERCENT:
            return self.head
        junction = (f" (ref. junction {fmt_number(self.reference_junction_c)} degC)"
                    if self.reference_junction_c is not None else "")
        return f"{self.head} {self.unit}".strip() + junction


@dataclass(frozen=True)
class Note:
    """A note line; ``emphasis`` is ``action`` (something to enter or set) or ``error``."""

    text: str
    emphasis: str = ""


@dataclass(frozen=True)
class Reading:
    """One test point in one direction (a workbook row): ``values`` aligned with the
    view's columns (``None`` where the point has no value), limits in the expected unit."""

    point: Point
    values: tuple[float | None, ...]
    low: float | None
    high: float | None


@dataclass(frozen=True)
class TableView:
    """One calibration table as shown (see the module docstring)."""

    tag: str
    kind: str
    words: str
    service: str
    range_text: str
    percent_head: str
    percent_decimals: int
    columns: tuple[Column, ...]
    rows: tuple[tuple[str, ...], ...]
    limits: tuple[tuple[str, str], ...]
    limits_unit: str
    tolerance: str
    notes: tuple[Note, ...]
    readings: tuple[Reading, ...]
    tolerance_basis: str = ""
    """The basis in brackets at the end of ``tolerance`` (``''`` when there is none)."""

    @property
    def tolerance_amount(self) -> str:
        """``tolerance`` without its basis: ``'±1 % of span = ±1 % travel'``."""
        suffix = f" ({self.tolerance_basis})"
        return self.tolerance[:-len(suffix)] if self.tolerance_basis and self.tolerance.endswith(suffix) else self.tolerance

    @property
    def heads(self) -> tuple[str, ...]:
        return tuple(c.label for c in self.columns)

    @property
    def title(self) -> str:
        """``'TT-3105 transmitter: Wort cooler outlet'``."""
        return f"{self.tag} {self.words}" + (f": {self.service}" if self.service else "")

    @property
    def note_texts(self) -> tuple[str, ...]:
        return tuple(n.text for n in self.notes)

    def column(self, role: str) -> Column | None:
        """The first column of a role, or ``None``."""
        return next((c for c in self.columns if c.role == role), None)


# --------------------------------------------------------------------------- wording


def tolerance_text(table: CalibrationTable) -> str:
    """``±0.25 % of span = ±0.1125 degC = ±0.04 mA``, with the basis in brackets when it
    is not the index's Accuracy %; ``none in the index`` without a tolerance."""
    tol = table.tolerance
    if tol is None:
        return "none in the index"
    parts = [f"\u00b1{fmt_number(tol.percent_of_span)} % of span"]
    parts += [f"\u00b1{fmt_number(q.value)} {q.unit}" for q in (tol.input, tol.output) if q is not None]
    return " = ".join(parts) + (f" ({tol.basis})" if tolerance_basis(table) else "")


def tolerance_basis(table: CalibrationTable) -> str:
    """How the tolerance was obtained when the index has no Accuracy % for the tag
    (``''`` when it has, or when there is no tolerance)."""
    tol = table.tolerance
    return tol.basis if tol is not None and tol.basis != INDEX_BASIS else ""


def range_text(table: CalibrationTable, in_decimals: int = 3, out_decimals: int = 3) -> str:
    """What the table spans, in words: ``0 to 150 degC -> 4 to 20 mA`` (each end with the
    decimals of its column, trailing zeros dropped)."""
    if table.kind == LOOP_CHECK:
        return (f"expected valve travel at every {fmt_number(LOOP_CHECK_STEP_PCT)} % of controller output "
                "and at each element's start and end")
    if table.kind == "fail action":
        return (f"hold {fmt_short(table.input_range[0].value, in_decimals)} {table.input_range[0].unit}, remove the "
                f"air: expected valve travel {fmt_short(table.points[0].output.value, out_decimals)} %")
    (lo, hi), (olo, ohi) = table.input_range, table.output_range
    return (f"{fmt_short(lo.value, in_decimals)} to {fmt_short(hi.value, in_decimals)} {lo.unit} -> "
            f"{fmt_short(olo.value, out_decimals)} to {fmt_short(ohi.value, out_decimals)} {olo.unit}")


def derived_notes(table: CalibrationTable) -> list[Note]:
    """The notes every writer adds to a table's own: the basis of each simulated value,
    the NAMUR NE 43 levels, the control-system scaling of a ``dcs`` split element."""
    notes = []
    bases: list[tuple[str, str]] = []
    for point in table.points:
        for sim in point.simulate:
            if sim.basis not in (SIGNAL_BASIS, DP_BASIS, CALIBRATOR_BASIS) and (sim.unit, sim.basis) not in bases:
                bases.append((sim.unit, sim.basis))
    notes += [Note(f"simulated {unit}: {basis}") for unit, basis in bases]
    if table.ne43 is not None:
        notes.append(Note(ne43_note(table.ne43)))
    if table.dcs_scaling is not None and table.kind == "final element":
        lo, hi = table.input_range
        notes.append(Note(
            f"Enter in the control system for {table.tag}: {table.dcs_scaling.text()}; positioner on the full "
            f"{fmt_number(lo.value)} to {fmt_number(hi.value)} {lo.unit}", "action"))
    return notes


def notes_of(table: CalibrationTable) -> list[Note]:
    """The table's own notes (an ``index has errors`` note as an error), then the derived ones."""
    own = [Note(n, "error" if n.startswith("index has errors") else "") for n in table.notes]
    return own + derived_notes(table)


# --------------------------------------------------------------------------- one table


def distinct_points(points: Sequence[Point]) -> list[Point]:
    """The test points in first-seen order, each (percent, input, output, simulated) once."""
    seen: set[tuple] = set()
    rows = []
    for point in points:
        key = (point.percent, point.input.value, point.output.value,
               tuple((s.unit, s.value, s.reference_junction_c) for s in point.simulate))
        if key not in seen:
            seen.add(key)
            rows.append(point)
    return rows


def _sim_key(sim) -> tuple[str, str, float | None]:
    return (sim.basis, sim.unit, sim.reference_junction_c)


def _simulated_head(basis: str, unit: str, dp_table: bool) -> str:
    """``Signal`` (at the element), ``Apply DP`` (square-root flow, or its DP in the
    calibrator's unit), ``Apply`` (the input in the calibrator's unit), ``Simulate``."""
    if basis == SIGNAL_BASIS:
        return "Signal"
    if basis == DP_BASIS:
        return "Apply DP" if unit != DP_PCT_UNIT else "Apply"
    if basis == CALIBRATOR_BASIS:
        return "Apply DP" if dp_table else "Apply"
    return "Simulate"


def _value_of(point: Point, column: Column) -> float | None:
    if column.role == MOVING:
        return None
    if column.role == PERCENT:
        return point.percent
    if column.role == APPLY:
        return point.input.value
    if column.role == EXPECT:
        return point.output.value
    key = (column.basis, column.unit, column.reference_junction_c)
    return next((s.value for s in point.simulate if _sim_key(s) == key), None)


def present_table(table: CalibrationTable) -> TableView:
    """The view of one table: %, apply (or flow), simulated values, expect."""
    points = distinct_points(table.points)
    in_unit, out_unit = table.input_range[0].unit, table.output_range[0].unit
    percents = [p.percent for p in table.points]
    pct_dec = percent_decimals(percents)
    redundant = table.kind in NO_PERCENT_KINDS or (in_unit.startswith("%") and percents == [p.input.value for p in table.points]) or (
        out_unit.startswith("%") and percents == [p.output.value for p in table.points])
    percent_head = PERCENT_HEADS.get(table.kind, "% span")
    tol = table.tolerance
    columns: list[Column] = []
    if table.kind in MOVING_KINDS:
        columns.append(Column("Moving", "", 0, MOVING))
    if not redundant:
        columns.append(Column(percent_head, "", pct_dec, PERCENT))
    sim_keys: list[tuple[str, str, float | None]] = []
    for p in table.points:
        for s in p.simulate:
            if _sim_key(s) not in sim_keys:
                sim_keys.append(_sim_key(s))
    dp_table = any(k[0] == DP_BASIS for k in sim_keys)
    # a square-root flow table: the input column is the flow, the DP column is applied
    apply_head = "" if table.kind == LOOP_CHECK else "Flow" if dp_table else "Apply"
    in_span = abs(table.input_range[1].value - table.input_range[0].value)
    apply_column = Column(apply_head, in_unit, display_decimals(in_span, in_unit) if in_span else
                          column_decimals([p.input.value for p in table.points], in_unit), APPLY)
    columns.append(apply_column)
    for basis, unit, junction in sim_keys:
        values = [next((s.value for s in p.simulate if _sim_key(s) == (basis, unit, junction)), None) for p in table.points]
        columns.append(Column(_simulated_head(basis, unit, dp_table), unit, column_decimals(values, unit), SIMULATE,
                              basis, junction, table.tag))
    resolve = tol.output.value if tol else None
    out_dec = (display_decimals(table.output_span, out_unit, resolve) if table.output_span else
               column_decimals([p.output.value for p in table.points], out_unit, resolve))
    columns.append(Column("Expect", out_unit, out_dec, EXPECT, tag=table.tag))
    rows = tuple(tuple(_MOVING_WORDS.get(p.direction, p.direction) if c.role == MOVING else
                       fmt_number(_value_of(p, c), c.decimals) for c in columns) for p in points)
    readings = []
    for p in table.points:
        low = p.output.value - tol.output.value if tol else None
        high = p.output.value + tol.output.value if tol else None
        readings.append(Reading(p, tuple(_value_of(p, c) for c in columns), low, high))
    limits = tuple(
        (fmt_number(p.output.value - tol.output.value, out_dec), fmt_number(p.output.value + tol.output.value, out_dec))
        if tol else ("", "") for p in points
    )
    return TableView(
        tag=table.tag, kind=table.kind, words=KIND_WORDS.get(table.kind, table.kind), service=table.service,
        range_text=range_text(table, apply_column.decimals, out_dec), percent_head=percent_head,
        percent_decimals=pct_dec, columns=tuple(columns),
        rows=rows, limits=limits, limits_unit=out_unit if tol else "", tolerance=tolerance_text(table),
        notes=tuple(notes_of(table)), readings=tuple(readings), tolerance_basis=tolerance_basis(table),
    )


# --------------------------------------------------------------------------- loop checks side by side


def merged_loop_check(tables: Sequence[CalibrationTable]) -> TableView:
    """Loop checks of one split group side by side: CO, signal(s), travel of each element."""
    views = [present_table(t) for t in tables]
    point_lists = [distinct_points(t.points) for t in tables]
    tags = [t.tag for t in tables]
    first = views[0]
    co = first.column(APPLY)
    assert co is not None
    columns = [co]
    values: list[list[float | None]] = [[p.input.value for p in point_lists[0]]]
    signals = [[p.simulate[0].value if p.simulate else None for p in points] for points in point_lists]
    sig_cols = [v.column(SIMULATE) for v in views]
    if all(s == signals[0] for s in signals):
        if sig_cols[0] is not None and any(v is not None for v in signals[0]):
            columns.append(Column("Signal", sig_cols[0].unit, sig_cols[0].decimals, SIMULATE, SIGNAL_BASIS))
            values.append(signals[0])
    else:
        for tag, sig, col in zip(tags, signals, sig_cols):
            if col is not None:
                columns.append(Column(tag, col.unit, col.decimals, SIMULATE, SIGNAL_BASIS, tag=tag))
                values.append(sig)
    for tag, points, view in zip(tags, point_lists, views):
        expect = view.column(EXPECT)
        assert expect is not None
        columns.append(Column(tag, expect.unit, expect.decimals, EXPECT, tag=tag))
        values.append([p.output.value for p in points])
    notes: list[Note] = []
    for tag, view in zip(tags, views):
        for note in view.notes:
            text = f"{tag}: {note.text}" if note.text.startswith("intent") else note.text
            if text not in [n.text for n in notes]:
                notes.append(Note(text, note.emphasis))
    rows = tuple(tuple(fmt_number(v, c.decimals) for v, c in zip(row, columns)) for row in zip(*values))
    return TableView(
        tag=", ".join(tags), kind=LOOP_CHECK, words=first.words, service=first.service, range_text=first.range_text,
        percent_head=first.percent_head, percent_decimals=first.percent_decimals, columns=tuple(columns), rows=rows,
        limits=tuple(("", "") for _ in rows), limits_unit="", tolerance=first.tolerance, notes=tuple(notes),
        readings=tuple(r for v in views for r in v.readings), tolerance_basis=first.tolerance_basis,
    )


def present_tables(tables: Sequence[CalibrationTable]) -> list[TableView]:
    """The views of a set of tables in the order given; the loop checks of one loop with
    the same CO points are merged into one view at the place of the first."""
    result: list[TableView | list[CalibrationTable]] = []
    groups: dict[tuple, list[CalibrationTable]] = {}
    for table in tables:
        if table.kind == LOOP_CHECK:
            key = (table.loop, tuple(p.input.value for p in distinct_points(table.points)))
            if key not in groups:
                groups[key] = []
                result.append(groups[key])
            groups[key].append(table)
        else:
            result.append(present_table(table))
    return [merged_loop_check(item) if isinstance(item, list) else item for item in result]
