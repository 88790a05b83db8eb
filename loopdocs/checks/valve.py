"""Valve rules (docs/design.md §5.7), run with the split rules by ``checks/split_rules.py``:

- ``valve.air-fail`` (error): a spring-return actuator fails where its spring pushes it:
  ATO fails closed (FC), ATC fails open (FO). FL and FAI are not spring positions and are
  not checked. Applies to every final element with an Air Action or Fail Position (and
  says it could not verify a driven element that has neither).
- ``valve.signal-loss`` (warning): position on loss of the input signal differs from the
  declared FC or FO. Every valve, split or not. Judged from the signal the valve sees
  (:func:`signal_kind_of`): a two-wire, loop-powered 4-20 mA positioner loses its power
  with its signal and vents, so the spring takes the valve to its fail position whatever
  the positioner's action (never a finding); a pneumatic signal falls to zero, below the
  live zero (``u = 0``; ``u = 1`` for a reversed input range), and a reverse-acting
  pneumatic positioner drives the valve away from the spring position (the finding).
  Where the signal is not known (Signal blank or not analog) and the pneumatic picture
  would differ from the fail position, it is listed as not verified. Not reported where
  ``valve.air-fail`` already is.
- ``loop.control-sense`` (error): with controller action ``k`` (+1 direct, -1 reverse),
  travel slope ``d`` against CO and effect ``e`` (+1 when opening raises the measured
  variable), every element needs ``k*d*e < 0`` or the loop pushes the wrong way. When
  every element of a group is wrong, one finding points at the controller's Control
  Action; otherwise each wrong element's Effect.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Iterator

from loopdocs.calc.signals import SignalSpan, pneumatic_span
from loopdocs.calc.travel import spring_fail_travel_pct, travel_on_signal_loss_pct
from loopdocs.calc.units import canonical_unit
from loopdocs.checks.context import Context, Unverified, capped, defaults_used, group_tags, segment_text, travel_text
from loopdocs.core.findings import Finding, Severity
from loopdocs.core.formatting import fmt_pct, fmt_range
from loopdocs.model.groups import SplitElement, SplitGroup, span_of_signal
from loopdocs.model.records import Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import AirAction, ControlAction, FailPosition

_SPRING_POSITIONS = (FailPosition.FC, FailPosition.FO)


def _travel_word(travel_pct: float) -> str:
    return {0.0: "closed", 100.0: "open"}.get(travel_pct, f"{fmt_pct(travel_pct)} % open")


def _air_fail_agrees(air: AirAction, fail: FailPosition) -> bool:
    return fail not in _SPRING_POSITIONS or spring_fail_travel_pct(air.value) == (0.0 if fail is FailPosition.FC else 100.0)


def air_fail(ctx: Context) -> Iterator[Finding | Unverified]:
    """``valve.air-fail``: ATO fails closed, ATC fails open (spring-return actuators)."""
    project = ctx.project
    for tag in project.tags.values():
        if tag.kind is not TagKind.FINAL_ELEMENT:
            continue
        if tag.air_action is None and tag.fail_position is None:
            if tag.driven_by:  # a control valve (it has a controller) without its actuator data
                yield Unverified(tag.tag, "air action against fail position (Air Action and Fail Position blank)",
                                 tag.loop, (tag.tag,), project.cell(tag, "air_action"))
            continue
        if tag.air_action is None or tag.fail_position is None:
            missing = "air_action" if tag.air_action is None else "fail_position"
            yield Unverified(tag.tag, f"air action against fail position ({'Air Action' if missing == 'air_action' else 'Fail Position'} blank)",
                             tag.loop, (tag.tag,), project.cell(tag, missing))
            continue
        if _air_fail_agrees(tag.air_action, tag.fail_position):
            continue
        spring = spring_fail_travel_pct(tag.air_action.value)
        expected = "FC" if spring == 0.0 else "FO"
        yield Finding(
            "valve.air-fail", Severity.ERROR,
            f"{tag.tag} is {tag.air_action.value}: its spring {'closes' if spring == 0.0 else 'opens'} it, so it fails "
            f"{_travel_word(spring)} ({expected}) on loss of air, but Fail Position says {tag.fail_position.value}",
            loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "fail_position"),
        )


@dataclass(frozen=True)
class SignalKind:
    """What carries the signal to a valve: ``kind`` ``electronic``, ``pneumatic`` or ``None``
    (not known), the span it lives on (``None`` when not known) and the words saying why."""

    kind: str | None
    span: SignalSpan | None
    why: str


def signal_kind_of(tag: Tag, group: SplitGroup | None) -> SignalKind:
    """The signal a valve's positioner sees, from the index (docs/design.md §4.6).

    Pneumatic when the valve is in a pneumatic split (Split Method pneumatic, stated or
    taken from a pneumatic signal), when its group has a converter with a pneumatic
    Signal (an I/P between the controller output and the valve: the valve sees air even
    in a positioner split), when its own Signal is 3-15 psig or 20-100 kPa (0.2-1.0 bar),
    or when its Input Units are a pressure. Electronic when its Signal is 4-20 mA (with or
    without HART), or, with Signal blank, its Input Units are mA. Otherwise not known.
    """
    element = next((e for e in group.elements if e.tag == tag.tag), None) if group is not None else None
    relay = next((r for r in group.converters if r.signal is not None and r.signal.is_pneumatic), None) if group else None
    units = canonical_unit(tag.input_units) if tag.input_units else None
    if element is not None and element.method == "pneumatic" and element.span.unit != "mA":
        return SignalKind("pneumatic", element.span, f"pneumatic split on {fmt_range(element.span.low, element.span.high, element.span.unit)}")
    if relay is not None:
        span = span_of_signal(relay.signal)
        return SignalKind("pneumatic", span, f"pneumatic signal from {relay.tag}")
    if tag.signal is not None and tag.signal.is_pneumatic:
        return SignalKind("pneumatic", span_of_signal(tag.signal), f"pneumatic signal {tag.signal.value}")
    if units in ("psig", "kPa", "bar"):
        return SignalKind("pneumatic", pneumatic_span(units), f"input range in {tag.input_units}")
    if tag.signal is not None and tag.signal.is_analog_ma:
        return SignalKind("electronic", span_of_signal(tag.signal), f"{tag.signal.value} positioner")
    if tag.signal is None and units == "mA":
        return SignalKind("electronic", None, "input range in mA")
    why = "Signal blank" if tag.signal is None else f"Signal {tag.signal.value}"
    return SignalKind(None, None, why)


def signal_loss(ctx: Context) -> Iterator[Finding | Unverified]:
    """``valve.signal-loss``: where the valve goes when its input signal is lost."""
    project = ctx.project
    for tag in project.tags.values():
        if tag.kind is not TagKind.FINAL_ELEMENT or tag.air_action is None or tag.fail_position not in _SPRING_POSITIONS:
            continue
        if not _air_fail_agrees(tag.air_action, tag.fail_position):
            continue  # valve.air-fail reports this valve
        positioner = tag.positioner_action.value if tag.positioner_action is not None else "direct"
        declared = 0.0 if tag.fail_position is FailPosition.FC else 100.0
        # the pneumatic picture first: where it agrees with the spring, every signal does
        travel = travel_on_signal_loss_pct(tag.air_action.value, positioner, tag.input_low, tag.input_high, "pneumatic")
        if travel == declared:
            continue
        signal = signal_kind_of(tag, ctx.group_of.get(tag.tag))
        if signal.kind == "electronic":
            continue  # a loop-powered positioner vents with its signal: the spring decides
        reversed_range = tag.input_low is not None and tag.input_high is not None and tag.input_low > tag.input_high
        key = "input_low" if reversed_range else "positioner_action"
        if signal.kind is None:
            yield Unverified(tag.tag, f"where it goes on loss of signal ({signal.why}: a pneumatic signal falling to "
                                      f"zero would take it {_travel_word(travel)}, a loop-powered 4-20 mA positioner "
                                      f"would let its spring take it to {tag.fail_position.value})",
                             tag.loop, (tag.tag,), project.cell(tag, "signal"))
            continue
        span = signal.span
        below = f"below {span.low:g} {span.unit}" if span is not None else "below the live zero"
        cause = f"{tag.air_action.value}, {positioner} pneumatic positioner, {signal.why}"
        if reversed_range:
            units = tag.input_units or (span.unit if span is not None else "")
            cause += f", reversed input range {fmt_range(tag.input_low, tag.input_high, units)}"
        message = (f"{tag.tag} ({cause}) goes {_travel_word(travel)} when its pneumatic signal falls to zero "
                   f"({below}), but Fail Position says {tag.fail_position.value}: on loss of signal it does not "
                   "go where it goes on loss of air")
        notes = ["Positioner Action blank, taken as direct"] if tag.positioner_action is None else []
        severity, message = capped(Severity.WARNING, message, notes)
        yield Finding("valve.signal-loss", severity, message, loop=tag.loop, tags=(tag.tag,),
                      location=project.cell(tag, key))


def _moves(e: SplitElement) -> str:
    return "opens" if e.intent.direction > 0 else "closes"


def control_sense(ctx: Context) -> Iterator[Finding | Unverified]:
    """``loop.control-sense``: ``k*d*e < 0`` for every element of a group."""
    project = ctx.project
    for group in ctx.groups:
        ctrl = group.controller_record
        usable = [e for e in group.elements if e.intent is not None]
        if ctrl is None or not usable:
            continue  # split.driver / split.segment report these
        if ctrl.kind is TagKind.RELAY:
            yield Unverified(ctrl.tag, f"the control sense ({ctrl.tag} is a relay with no Driven By: its controller "
                                       "and action are not known)", group.loop, group_tags(group),
                             project.cell(ctrl, "driven_by"))
            continue
        if ctrl.kind is not TagKind.CONTROLLER:
            continue
        if ctrl.parts.variable == "H" and ctrl.control_action is None:
            continue  # a hand controller: the operator sets its output, it has no control action (ISA-5.1 H = hand)
        if ctrl.control_action is None:
            yield Unverified(ctrl.tag, "the control sense (Control Action blank)", group.loop, group_tags(group),
                             project.cell(ctrl, "control_action"))
            continue
        k = 1 if ctrl.control_action is ControlAction.DIRECT else -1
        known: list[tuple[SplitElement, int]] = []
        for e in usable:
            if e.record.effect is None:
                yield Unverified(e.tag, "the control sense (Effect blank)", e.loop, (e.tag,),
                                 project.cell(e.record, "effect"))
                continue
            known.append((e, k * e.intent.direction * e.record.effect.sign))
        wrong = [e for e, sign in known if sign > 0]
        if not wrong:
            continue
        acting = (f"{ctrl.tag} is {ctrl.control_action.value} acting (CO {'rises' if k > 0 else 'falls'} as the "
                  "measurement rises)")
        if len(wrong) == len(known) and len(known) > 1:
            parts = "; ".join(f"{e.tag} {_moves(e)} as CO rises and opening it {e.record.effect.value} the measurement"
                              for e in wrong)
            defaults = [d for e in wrong for d in defaults_used(e, ("travel",))]
            severity, message = capped(
                Severity.ERROR,
                f"{acting}, but every element then pushes the measurement further the same way ({parts}): "
                "check Control Action", defaults)
            yield Finding("loop.control-sense", severity, message, loop=group.loop, tags=group_tags(group),
                          location=project.cell(ctrl, "control_action"))
            continue
        for e in wrong:
            d = e.intent.direction
            message = (f"{acting} and {e.tag} {_moves(e)} as CO rises ({travel_text(e)} over {segment_text(e)}); opening it "
                       f"{e.record.effect.value} the measurement, so a rising measurement "
                       f"{'opens' if k * d > 0 else 'closes'} it and pushes the measurement further up: "
                       "the loop pushes the wrong way; one of Control Action, the travel or Effect is wrong")
            severity, message = capped(Severity.ERROR, message, defaults_used(e, ("travel",)))
            yield Finding("loop.control-sense", severity, message, loop=group.loop, tags=(ctrl.tag, e.tag),
                          location=project.cell(e.record, "effect"))
