"""Split groups: the final elements one controller output moves, each with its intent
and its settings (docs/design.md §3.3), built from the records of a :class:`Project`.

Every final element with a Driven By joins the group of that controller. A relay or
converter (tag kind RELAY, e.g. the I/P ``PY-4120``) driven by the controller is not a
final element: it is kept on the group as a *converter*, and when its Signal is
pneumatic (3-15 psig, 20-100 kPa) it sets the pneumatic span of a ``pneumatic`` split.
An element whose Driven By names such a relay belongs to the relay's own driver.

Defaults (docs/design.md §3.4, ``docs/index-format.md``), each recorded in
``SplitElement.assumptions`` so a finding resting on one can say so:

- blank CO Start/End: 0 to 100 %;
- blank travel: for ``positioner`` and ``pneumatic`` splits taken from the settings
  (``intent_source == "settings"``: not cross-checked); for ``dcs`` splits and single
  valves 0 to 100 % (opens as CO rises);
- blank Split Method: ``pneumatic`` with a pneumatic converter or signal, else the method
  the other elements state, else ``dcs`` when every element has its own IO Address,
  else ``positioner``;
- blank Input Units: the unit of the element's signal span (mA, psig, kPa or bar);
- blank Positioner Action: direct; blank input range of a ``dcs`` element or of a single
  valve: the full span.

Public API
----------
``build_groups(project) -> list[SplitGroup]``
    Every group, in natural order of the controller tag (deterministic; does not depend
    on row order). ``groups_for(project)`` returns the same list, computed once per
    ``Project`` object (the pipeline and the checks share it).

``SplitGroup``
    ``controller`` (tag as written in Driven By), ``loop``, ``controller_record`` (the
    controller's ``Tag`` or ``None`` if not in the index), ``converters`` (relay ``Tag``s),
    ``elements`` (``SplitElement``s in CO order; elements without a usable intent last),
    ``arrangement`` (``loopdocs.calc.travel.Arrangement`` of the usable elements or
    ``None``), ``mode`` (``opposed``, ``staged``, ``staged-opposed``, ``parallel``,
    ``mixed``, or ``single`` for one element; ``incomplete`` when fewer than two elements of a
    larger group are usable), ``invalid`` (elements without a usable intent), ``method`` (common split method or
    ``mixed``), ``pairs`` (``(first, second, PairRelation)`` for neighbours in CO order,
    with ``gap_pct``/``overlap_pct``), ``uncovered_co`` (CO intervals where nothing
    moves), ``capacity_advice`` (``loopdocs.calc.capacity.CapacityAdvice`` for a ``staged``
    group with every Cv known, else ``None``), ``recommended_boundaries_pct`` (its
    recommendation: the boundaries with the smallest gain jump, cumulative-Cv ones for
    linear trims, given only where they score no worse than the settings; else ``None``),
    ``gain_ratios`` (gain ratio across each boundary as set, same condition as the
    advice), ``capacity_assumptions``, ``is_split`` (more
    than one element, or one over part of the CO), ``capacity_curve(step_pct)`` (total Cv
    against CO for the range chart, ``None`` without Cv) and ``as_json()`` (docs/design.md §9.1).

``SplitElement``
    ``record`` (the element's ``Tag``), ``tag``, ``loop``, ``method``, ``span`` (the
    signal on its input: 4-20 mA, or the pneumatic span), the resolved intent values
    ``co_start_pct``, ``co_end_pct``, ``travel_start_pct``, ``travel_end_pct`` and the
    ``intent`` (``Intent`` or ``None`` when unusable, see ``intent_problem``),
    ``intent_source`` (``stated``, ``default`` or ``settings``), ``air_action``,
    ``positioner_action``, ``input_units``, ``input_range`` (as set, in
    ``input_units``; ``None`` when blank), ``settings`` (``Settings`` in span units, or
    ``None``; ``settings_problem`` says why, ``settings_problem_key`` names its column and
    ``settings_problem_is_error`` tells a contradiction from a blank), ``required_input_range`` (the input range
    that realises the intent, in ``input_units``; for ``dcs`` the full span),
    ``required_dcs_scaling`` (``DcsScaling``: CO at 0 % and 100 % output, ``reversed``;
    ``dcs`` only), ``travel_error`` (largest ``|realised - intended|`` travel, %, and the
    CO where it occurs, or ``None``), ``assumptions`` (key -> sentence), and the curves
    ``intended_travel_pct(co)``, ``realised_travel_pct(co)``, ``signal_at_co(co)``.
    For ``dcs`` elements the realised travel uses the scaling loopdocs recommends (the
    index has no column for the control-system scaling).

``convert_signal(value, from_unit, to_unit)``
    Converts an input-range value between signal units (mA; psi = psig, kPa = kPag,
    bar = barg, mbar, any pressure unit pint knows). Same units never import pint.

``span_of_signal(signal)`` (index Signal -> span). Units are read with
``loopdocs.calc.units.canonical_unit``; numbers in messages are written with
``loopdocs.core.formatting`` (``fmt_pct``, ``fmt_signal``, ``fmt_range``).
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Collection, Iterable
from dataclasses import dataclass, field
from functools import cached_property, lru_cache
from typing import Any

from loopdocs.calc.capacity import (
    DEFAULT_RANGEABILITY,
    CapacityAdvice,
    capacity_advice,
    combined_capacity_curve,
)
from loopdocs.calc.signals import KPA_20_100, MA_4_20, PSIG_3_15, SignalSpan, pneumatic_span
from loopdocs.calc.travel import (
    SHARED_TOLERANCE_PCT,
    Arrangement,
    DcsScaling,
    Intent,
    PairRelation,
    Settings,
    classify,
    intended_travel_pct,
    max_travel_error,
    realised_travel_pct,
    required_dcs_scaling,
    required_input_range,
    uncovered_co,
)
from loopdocs.calc.units import canonical_unit
from loopdocs.core.formatting import fmt_pct, fmt_range, fmt_signal
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Characteristic, Signal

# --------------------------------------------------------------------------- units


class UnknownUnit(ValueError):
    """A unit that pint (with the trade units of ``loopdocs.calc.units``) does not know."""


def convert_signal(value: float, from_unit: str, to_unit: str) -> float:
    """``value`` in ``from_unit`` expressed in ``to_unit``.

    Units that mean the same signal (``psi``/``psig``, ``kPa``/``kPag``, ``bar``/``barg``,
    any case) need no conversion and do not import pint; others are converted with the
    one registry of :mod:`loopdocs.calc.units` (1 psi = 6.894757 kPa). Raises
    :class:`UnknownUnit` for a unit pint does not know and ``ValueError`` for units of
    another kind (mA against psig).

    >>> convert_signal(12, "mA", "MA")
    12.0
    >>> round(convert_signal(15, "psig", "kPa"), 2)
    103.42
    """
    if from_unit == to_unit:
        return float(value)
    a, b = canonical_unit(from_unit), canonical_unit(to_unit)
    if a == b:
        return float(value)
    from loopdocs.calc import units

    for unit in (a, b):
        try:
            units.parse_unit(unit)
        except ValueError:
            raise UnknownUnit(f"unit {unit!r} is not known") from None
    try:
        return units.convert(value, a, b)
    except ValueError:
        raise ValueError(f"{from_unit} cannot be converted to {to_unit}") from None


def span_of_signal(signal: Signal | None) -> SignalSpan | None:
    """The analog span of an index Signal (4-20 mA, 3-15 psig, 20-100 kPa), else ``None``."""
    if signal is None:
        return None
    if signal.is_analog_ma:
        return MA_4_20
    if signal is Signal.PSIG_3_15:
        return PSIG_3_15
    if signal is Signal.KPA_20_100:
        return KPA_20_100
    return None


# --------------------------------------------------------------------------- records

INTENT_STATED, INTENT_DEFAULT, INTENT_FROM_SETTINGS = "stated", "default", "settings"
_TOL = 1e-6


@dataclass(frozen=True, eq=False)
class SplitElement:
    """One final element of a group: its intent and its settings (see module docstring)."""

    record: Tag
    method: str
    span: SignalSpan
    co_start_pct: float
    co_end_pct: float
    travel_start_pct: float
    travel_end_pct: float
    intent: Intent | None
    intent_source: str
    intent_problem: str | None
    air_action: str | None
    positioner_action: str
    input_units: str
    input_range: tuple[float, float] | None
    settings: Settings | None
    settings_problem: str | None
    settings_problem_key: str | None
    """Column key of the cell behind ``settings_problem``."""
    settings_problem_is_error: bool
    """True when the settings contradict the signal (units of another kind), not just missing."""
    required_input_range: tuple[float, float] | None
    required_dcs_scaling: DcsScaling | None
    travel_error: tuple[float, float] | None
    assumptions: dict[str, str] = field(default_factory=dict)

    @property
    def tag(self) -> str:
        return self.record.tag

    @property
    def loop(self) -> str:
        return self.record.loop

    def intended_travel_pct(self, co_pct: float) -> float:
        """Intended travel, %, at a CO, % (``ValueError`` without a usable intent)."""
        if self.intent is None:
            raise ValueError(f"{self.tag} has no usable intent: {self.intent_problem}")
        return intended_travel_pct(self.intent, co_pct)

    def realised_travel_pct(self, co_pct: float) -> float:
        """Travel, %, the settings give at a CO, % (``ValueError`` without settings).
        ``dcs`` elements use the control-system scaling loopdocs recommends."""
        if self.settings is None:
            raise ValueError(f"{self.tag} has no usable settings: {self.settings_problem}")
        return realised_travel_pct(self.settings, co_pct, self.required_dcs_scaling)

    def signal_at_co(self, co_pct: float) -> float:
        """Signal on this element's input, in ``span.unit``, at a CO, %."""
        if self.method == "dcs":
            scaling = self.required_dcs_scaling or DcsScaling(0.0, 100.0)
            fraction = scaling.output_pct(co_pct) / 100.0
        else:
            fraction = co_pct / 100.0
        return self.span.low + self.span.width * fraction

    def as_json(self) -> dict[str, Any]:
        return {
            "tag": self.tag,
            "co_start": _num(self.co_start_pct),
            "co_end": _num(self.co_end_pct),
            "travel_start": _num(self.travel_start_pct),
            "travel_end": _num(self.travel_end_pct),
            "method": self.method,
            "valid": self.intent is not None,
            "problem": self.intent_problem,
        }


@dataclass(frozen=True, eq=False)
class SplitGroup:
    """The final elements one controller output moves (see module docstring)."""

    controller: str
    loop: str
    controller_record: Tag | None
    converters: tuple[Tag, ...]
    elements: tuple[SplitElement, ...]
    arrangement: Arrangement | None
    method: str
    pairs: tuple[tuple[SplitElement, SplitElement, PairRelation], ...]
    recommended_boundaries_pct: tuple[float, ...] | None
    gain_ratios: tuple[float, ...] | None
    capacity_assumptions: dict[str, str] = field(default_factory=dict)
    capacity_advice: CapacityAdvice | None = None
    """Scores of the boundaries as set and of the best ones (``staged`` group with every Cv)."""

    @cached_property
    def uncovered_co(self) -> tuple[tuple[float, float], ...]:
        """CO intervals, %, within 0 to 100 where no element moves."""
        usable = [e.intent for e in self.elements if e.intent is not None]
        return tuple(uncovered_co(usable)) if usable else ((0.0, 100.0),)

    @property
    def mode(self) -> str:
        """The arrangement of the usable elements (docs/design.md §4.2); ``single`` only for a group of
        one; ``incomplete`` for a group of two or more with fewer than two usable elements
        (an invalid element is still part of its group, so the group is not a single valve)."""
        if self.arrangement is not None and (self.arrangement.mode != "single" or len(self.elements) == 1):
            return self.arrangement.mode
        return "single" if len(self.elements) == 1 else "incomplete"

    @property
    def invalid(self) -> tuple["SplitElement", ...]:
        """The elements whose intent cannot be used (``intent_problem`` says why)."""
        return tuple(e for e in self.elements if e.intent is None)

    @property
    def tags(self) -> tuple[str, ...]:
        return tuple(e.tag for e in self.elements)

    @property
    def is_split(self) -> bool:
        """More than one element, or one element over part of the CO only."""
        if len(self.elements) != 1:
            return True
        e = self.elements[0]
        return e.co_start_pct > SHARED_TOLERANCE_PCT or e.co_end_pct < 100.0 - SHARED_TOLERANCE_PCT

    def capacity_curve(self, step_pct: float = 1.0) -> list[tuple[float, float]] | None:
        """Total Cv against CO ``[(co_pct, cv)]`` with the intended travel, for the range
        chart; ``None`` unless every element has a Cv and a usable intent.

        Only where the elements pass one stream or two streams that add up (``staged``,
        ``parallel``, ``opposed`` blending): in a ``staged-opposed`` group one element
        takes away what the other brings (cooling against heating, vent against
        supply), so a summed Cv means nothing and is not drawn."""
        if self.mode not in ("staged", "parallel", "opposed"):
            return None
        if not self.elements or any(e.record.cv is None or e.intent is None for e in self.elements):
            return None
        chars, ranges = _characteristics(self.elements)[:2]
        return combined_capacity_curve(
            [e.record.cv for e in self.elements], [e.intent for e in self.elements], chars, ranges, step_pct
        )

    def as_json(self) -> dict[str, Any]:
        """docs/design.md §9.1: ``{controller, loop, mode, elements, recommended_boundaries}``."""
        return {
            "controller": self.controller,
            "loop": self.loop,
            "mode": self.mode,
            "elements": [e.as_json() for e in self.elements],
            "recommended_boundaries": (
                [_num(b) for b in self.recommended_boundaries_pct]
                if self.recommended_boundaries_pct is not None else None
            ),
        }


def _num(value: float) -> float:
    return round(float(value), 6) + 0.0


# --------------------------------------------------------------------------- building


def build_groups(project: Project, controllers: Collection[str] | None = None) -> list[SplitGroup]:
    """Every split group of the project, in natural order of the controller tag; with
    ``controllers``, only the groups of those controllers (see :func:`controllers_of`)."""
    from loopdocs.model.from_rows import natural_key

    tags = project.tags
    members: dict[str, list[Tag]] = defaultdict(list)
    converters: dict[str, dict[str, Tag]] = defaultdict(dict)
    for record in tags.values():
        if record.driven_by is None or record.kind not in (TagKind.FINAL_ELEMENT, TagKind.RELAY):
            continue
        controller, relays = _resolve_driver(tags, record.driven_by)
        for relay in relays:
            converters[controller][relay.tag] = relay
        if record.kind is TagKind.FINAL_ELEMENT:
            members[controller].append(record)
        else:
            converters[controller][record.tag] = record
    groups = []
    made: dict[tuple, list[Any]] = {}
    for controller in sorted(members, key=natural_key):
        if controllers is not None and controller not in controllers:
            continue
        records = members[controller]
        if len(records) > 1:
            records = sorted(records, key=lambda t: natural_key(t.tag))
        relays = tuple(sorted(converters[controller].values(), key=lambda t: natural_key(t.tag))) if controller in converters else ()
        groups.append(_build_group(project, controller, records, relays, made))
    return groups


def controllers_of(project: Project, names: Iterable[str]) -> set[str]:
    """The controllers whose split groups the tags ``names`` can take part in: a tag's own
    name (it may be a controller, or be named as one by a Driven By cell), and the
    controller its Driven By chain leads to through relays. The groups of other
    controllers do not depend on these tags (``build_groups(project, controllers)``)."""
    tags = project.tags
    found = set()
    for name in names:
        found.add(name)
        record = tags.get(name)
        if record is not None and record.driven_by:
            found.add(_resolve_driver(tags, record.driven_by)[0])
    return found


_CACHE: list[Any] = [None, None]


def groups_for(project: Project) -> list[SplitGroup]:
    """``build_groups(project)``, computed once per ``Project`` object (the last one asked)."""
    if _CACHE[0] is not project:
        _CACHE[1] = build_groups(project)
        _CACHE[0] = project
    return _CACHE[1]


def _resolve_driver(tags: dict[str, Tag], name: str) -> tuple[str, list[Tag]]:
    """Follow Driven By through relays to the controller: ``(controller, relays passed)``."""
    relays: list[Tag] = []
    seen = set()
    while name in tags and tags[name].kind is TagKind.RELAY and tags[name].driven_by and name not in seen:
        seen.add(name)
        relays.append(tags[name])
        name = tags[name].driven_by
    return name, relays


def _method_for(
    record: Tag, single: bool, pneumatic_relay: Tag | None, stated: set[str], own_outputs: bool
) -> tuple[str, str | None]:
    """The element's split method and, when it was not stated, the sentence saying why."""
    if record.split_method is not None:
        return record.split_method.value, None
    pneumatic = pneumatic_relay is not None or (record.signal is not None and record.signal.is_pneumatic)
    if single:
        return ("pneumatic" if pneumatic else "positioner"), None
    if pneumatic:
        return "pneumatic", "Split Method blank, taken as pneumatic (pneumatic signal)"
    if len(stated) == 1:
        method = next(iter(stated))
        return method, f"Split Method blank, taken as {method} like the rest of the group"
    if own_outputs:
        return "dcs", "Split Method blank, taken as dcs (each element has its own IO Address)"
    return "positioner", "Split Method blank, taken as positioner (the elements share one output)"


def _build_group(
    project: Project, controller: str, records: list[Tag], relays: tuple[Tag, ...], made: dict[tuple, list[Any]] | None = None
) -> SplitGroup:
    made = {} if made is None else made
    ctrl = project.tags.get(controller)
    loop = ctrl.loop if ctrl is not None else records[0].loop
    pneumatic_relay = next((r for r in relays if r.signal is not None and r.signal.is_pneumatic), None) if relays else None
    if len(records) == 1:  # an ordinary valve (or a split that lost its partner)
        element, known = _element_for(records[0], *_method_for(records[0], True, pneumatic_relay, set(), True),
                                      True, ctrl, pneumatic_relay, made)
        if len(known) == 1:  # the arrangement of a single valve depends on its intent only
            known.append(classify([element.intent]) if element.intent is not None else None)
        arrangement = known[1]
        return SplitGroup(controller, loop, ctrl, relays, (element,), arrangement, element.method, (), None, None)

    stated = {r.split_method.value for r in records if r.split_method is not None}
    addresses = [r.io_address for r in records]
    own_outputs = all(addresses) and len(set(addresses)) == len(addresses)
    elements = [
        _element_for(r, *_method_for(r, False, pneumatic_relay, stated, own_outputs), False, ctrl, pneumatic_relay, made)[0]
        for r in records
    ]
    usable = [e for e in elements if e.intent is not None]
    unusable = [e for e in elements if e.intent is None]
    arrangement = classify([e.intent for e in usable]) if usable else None
    if arrangement is not None:
        ordered = [usable[i] for i in arrangement.order]
        pairs = tuple((usable[p.first], usable[p.second], p) for p in arrangement.pairs)
    else:
        ordered, pairs = [], ()
    methods = {e.method for e in elements}
    advice, capacity_notes = _capacity(ordered, arrangement)
    return SplitGroup(
        controller=controller,
        loop=loop,
        controller_record=ctrl,
        converters=relays,
        elements=tuple(ordered + unusable),
        arrangement=arrangement,
        method=methods.pop() if len(methods) == 1 else "mixed",
        pairs=pairs,
        recommended_boundaries_pct=advice.recommended_pct if advice is not None else None,
        gain_ratios=advice.ratios_now if advice is not None else None,
        capacity_assumptions=capacity_notes,
        capacity_advice=advice,
    )


def _span_for(record: Tag, method: str, ctrl: Tag | None, relay: Tag | None) -> tuple[SignalSpan, str | None]:
    if method == "positioner":
        return MA_4_20, None
    if method == "pneumatic":
        for source in (relay, record, ctrl):
            span = span_of_signal(source.signal) if source is not None else None
            if span is not None and span.unit != "mA":
                return span, None
        if record.input_units:
            try:
                return pneumatic_span(canonical_unit(record.input_units)), None
            except ValueError:
                pass
        return PSIG_3_15, "pneumatic signal not stated, taken as 3 to 15 psig"
    return span_of_signal(record.signal) or MA_4_20, None


def _element_for(
    record: Tag, method: str, method_note: str | None, single: bool, ctrl: Tag | None, relay: Tag | None,
    made: dict[tuple, list[Any]],
) -> tuple[SplitElement, list[Any]]:
    """``_build_element(...)`` worked out once per distinct set of the values it reads
    (an index repeats the same few valve set-ups thousands of times), and for each further
    valve of that set-up a copy with its own record and its own assumptions; with the
    list ``made`` keeps for that set-up (the first element, then what the caller adds).
    The values read: the method and its note, single or not, Signal, Input Low/High/Units,
    Air and Positioner Action, CO and travel columns, and the signal of the relay and of
    the controller (a pneumatic span). A ``-0`` in a numeric cell is never shared: it
    equals 0 as a key but is kept as written."""
    numbers = (record.input_low, record.input_high, record.co_start_pct, record.co_end_pct,
               record.travel_start_pct, record.travel_end_pct)
    if any(x == 0.0 and math.copysign(1.0, x) < 0.0 for x in numbers if x is not None):
        return _build_element(record, method, method_note, single, ctrl, relay), [None]
    key = (method, method_note, single, record.signal, record.input_units, record.air_action, record.positioner_action,
           numbers, relay.signal if relay is not None else None, ctrl.signal if ctrl is not None else None)
    known = made.get(key)
    if known is None:
        element = _build_element(record, method, method_note, single, ctrl, relay)
        made[key] = known = [element]
        return element, known
    element = object.__new__(SplitElement)
    fields = element.__dict__
    fields.update(known[0].__dict__)
    fields["record"] = record
    fields["assumptions"] = dict(known[0].assumptions)
    return element, known


def _build_element(
    record: Tag, method: str, method_note: str | None, single: bool, ctrl: Tag | None, relay: Tag | None
) -> SplitElement:
    notes: dict[str, str] = {}
    if method_note:
        notes["method"] = method_note
    span, span_note = _span_for(record, method, ctrl, relay)
    if span_note:
        notes["span"] = span_note
    air = record.air_action.value if record.air_action is not None else None
    positioner = record.positioner_action.value if record.positioner_action is not None else "direct"
    if record.positioner_action is None:
        notes["positioner_action"] = "Positioner Action blank, taken as direct"

    # settings: input range in span units
    input_units = record.input_units or span.unit
    input_range: tuple[float, float] | None = None
    settings_problem: str | None = None
    problem_key: str | None = None
    problem_is_error = False
    span_range: tuple[float, float] | None = None
    if record.input_low is not None and record.input_high is not None:
        input_range = (record.input_low, record.input_high)
        if not record.input_units:
            notes["input_units"] = f"Input Units blank, read as {span.unit}"
        try:
            span_range = (convert_signal(input_range[0], input_units, span.unit),
                          convert_signal(input_range[1], input_units, span.unit))
        except ValueError as exc:
            problem_key = "input_units"
            problem_is_error = not isinstance(exc, UnknownUnit)
            settings_problem = (
                f"Input Units {input_units!r} do not fit the {fmt_range(span.low, span.high, span.unit)} signal "
                f"of a {method} split" if problem_is_error else f"Input Units {input_units!r} not known ({exc})"
            )
    elif method == "dcs" or (single and (record.input_low, record.input_high) == (None, None)):
        span_range = (span.low, span.high)
        notes["input_range"] = _full_span_note(span)
    else:
        problem_key = "input_low" if record.input_low is None else "input_high"
        settings_problem = (
            "Input Low/High blank" if (record.input_low, record.input_high) == (None, None)
            else f"{'Input Low' if record.input_low is None else 'Input High'} blank"
        )
    if span_range is not None and span_range[0] == span_range[1]:
        settings_problem, span_range = f"Input Low equals Input High ({fmt_signal(input_range[0], input_units)} {input_units})", None  # type: ignore[index]
        problem_key, problem_is_error = "input_high", True
    if air is None and settings_problem is None:
        settings_problem, problem_key = "Air Action blank", "air_action"
    settings = Settings(method, air, positioner, *span_range, span) if settings_problem is None and span_range else None

    # intent
    co_given = (record.co_start_pct, record.co_end_pct)
    a = 0.0 if co_given[0] is None else co_given[0]
    b = 100.0 if co_given[1] is None else co_given[1]
    if None in co_given:
        notes["co"] = (
            "CO Start %/CO End % blank, taken as 0 to 100 %" if co_given == (None, None)
            else f"{'CO Start %' if co_given[0] is None else 'CO End %'} blank, taken as {fmt_pct(a if co_given[0] is None else b)} %"
        )
    travel_given = (record.travel_start_pct, record.travel_end_pct)
    source = INTENT_STATED
    if None not in travel_given:
        ta, tb = travel_given
    elif single or method == "dcs" or settings is None:
        ta, tb = 0.0, 100.0
        source = INTENT_DEFAULT
        notes["travel"] = (
            "travel blank, taken as 0 to 100 % (opens as CO rises)" if travel_given == (None, None)
            else f"{'Travel at Start %' if travel_given[0] is None else 'Travel at End %'} blank, "
                 "travel taken as 0 to 100 % (opens as CO rises)"
        )
    else:
        source = INTENT_FROM_SETTINGS
        if co_given == (None, None):
            a, b = _segment_of_settings(settings)
            notes.pop("co", None)
        ta, tb = realised_travel_pct(settings, a), realised_travel_pct(settings, b)
    intent, problem = _make_intent(a, b, ta, tb, source, settings)

    # what the settings should be, and how far they are off
    required_range: tuple[float, float] | None = None
    scaling: DcsScaling | None = None
    error: tuple[float, float] | None = None
    if intent is not None and air is not None:
        if method == "dcs":
            reversed_range = span_range is not None and span_range[0] > span_range[1]
            effective = positioner if not reversed_range else ("reverse" if positioner == "direct" else "direct")
            scaling = required_dcs_scaling(intent, air, effective)
            needed = (span.high, span.low) if reversed_range else (span.low, span.high)
        else:
            needed = required_input_range(intent, method, air, positioner, span)
        required_range = _to_units(needed, span.unit, input_units)
        if settings is not None:
            error = _travel_error(intent, settings, scaling, needed)
    return SplitElement(
        record=record, method=method, span=span,
        co_start_pct=float(a), co_end_pct=float(b), travel_start_pct=float(ta), travel_end_pct=float(tb),
        intent=intent, intent_source=source, intent_problem=problem,
        air_action=air, positioner_action=positioner, input_units=input_units, input_range=input_range,
        settings=settings, settings_problem=settings_problem,
        settings_problem_key=problem_key, settings_problem_is_error=problem_is_error,
        required_input_range=required_range, required_dcs_scaling=scaling, travel_error=error,
        assumptions=notes,
    )


def _travel_error(
    intent: Intent, settings: Settings, scaling: DcsScaling | None, needed: tuple[float, float]
) -> tuple[float, float]:
    """Largest ``|realised - intended|`` travel, % (and its CO, %).

    Both curves are piecewise linear, so ``max_travel_error`` evaluated at its breakpoints
    only (no grid) is exact. Fast path: an input range equal to the ``needed`` one (span
    units) realises a realisable intent exactly (travel held at 0 or 100 % outside a
    segment that does not reach the CO ends), so the error is 0 without evaluating curves.
    """
    realisable = (intent.co_start_pct <= 0.0 or intent.travel_start_pct in (0.0, 100.0)) and (
        intent.co_end_pct >= 100.0 or intent.travel_end_pct in (0.0, 100.0)
    )
    eps = 1e-9 * settings.span.width
    if realisable and abs(settings.input_low - needed[0]) <= eps and abs(settings.input_high - needed[1]) <= eps:
        return 0.0, intent.co_start_pct
    return max_travel_error(intent, settings, scaling, grid_step_pct=100.0)


@lru_cache(maxsize=16)
def _full_span_note(span: SignalSpan) -> str:
    return f"Input Low/High blank, taken as the full {fmt_range(span.low, span.high, span.unit)}"


def _to_units(pair: tuple[float, float], from_unit: str, to_unit: str) -> tuple[float, float] | None:
    try:
        return (convert_signal(pair[0], from_unit, to_unit), convert_signal(pair[1], from_unit, to_unit))
    except ValueError:
        return None


def _segment_of_settings(settings: Settings) -> tuple[float, float]:
    """CO segment, %, over which the shared signal crosses the input range (clamped)."""
    span = settings.span
    ends = sorted(100.0 * (v - span.low) / span.width for v in (settings.input_low, settings.input_high))
    return min(100.0, max(0.0, ends[0])), min(100.0, max(0.0, ends[1]))


def _make_intent(a: float, b: float, ta: float, tb: float, source: str, settings: Settings | None) -> tuple[Intent | None, str | None]:
    if source == INTENT_FROM_SETTINGS and not a < b:
        assert settings is not None
        return None, (
            f"its input range {fmt_range(settings.input_low, settings.input_high, settings.span.unit)} lies outside "
            f"the {fmt_range(settings.span.low, settings.span.high, settings.span.unit)} signal: it never moves"
        )
    if not (-_TOL <= a <= 100 + _TOL and -_TOL <= b <= 100 + _TOL):
        return None, f"CO segment {fmt_pct(a)} to {fmt_pct(b)} % is outside 0 to 100 %"
    if not a < b:
        return None, (
            f"CO Start {fmt_pct(a)} % is not below CO End {fmt_pct(b)} % (an element that closes as CO rises "
            "keeps CO Start < CO End and has Travel at Start above Travel at End)"
        )
    if not (-_TOL <= ta <= 100 + _TOL and -_TOL <= tb <= 100 + _TOL):
        return None, f"travel {fmt_pct(ta)} to {fmt_pct(tb)} % is outside 0 to 100 %"
    if abs(tb - ta) < _TOL:
        what = "its settings give" if source == INTENT_FROM_SETTINGS else "travel is"
        return None, f"{what} {fmt_pct(ta)} % at both CO {fmt_pct(a)} % and CO {fmt_pct(b)} %: it never moves"
    return Intent(a, b, ta, tb), None


def _characteristics(elements: list[SplitElement] | tuple[SplitElement, ...]) -> tuple[list[str], list[float], dict[str, str]]:
    chars, ranges, notes = [], [], {}
    for e in elements:
        c = e.record.characteristic
        if c is None:
            notes[f"{e.tag}.characteristic"] = f"{e.tag} Characteristic blank, taken as linear"
            c = Characteristic.LINEAR
        r = e.record.rangeability
        if c is Characteristic.EQUAL_PERCENTAGE and (r is None or not r > 1.0):
            notes[f"{e.tag}.rangeability"] = f"{e.tag} Rangeability blank, taken as {DEFAULT_RANGEABILITY:g}"
            r = DEFAULT_RANGEABILITY
        chars.append(c.value)
        ranges.append(r if r is not None and r > 1.0 else DEFAULT_RANGEABILITY)
    return chars, ranges, notes


def _capacity(ordered: list[SplitElement], arrangement: Arrangement | None) -> tuple[CapacityAdvice | None, dict[str, str]]:
    """The capacity advice of a ``staged`` group with every Cv (``calc.capacity.capacity_advice``):
    gain ratios as set, and boundaries recommended only where they score no worse."""
    if arrangement is None or arrangement.mode != "staged":
        return None, {}
    cvs = [e.record.cv for e in ordered]
    if any(cv is None or not (math.isfinite(cv) and cv > 0) for cv in cvs):
        return None, {}
    chars, ranges, notes = _characteristics(ordered)
    return capacity_advice(cvs, [e.intent for e in ordered], chars, ranges), notes
