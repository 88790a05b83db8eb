"""Valve rules (DESIGN §3.3), run with the split rules by ``checks/split.py``:

- ``valve.air-fail`` (error): a spring-return actuator fails where its spring pushes it:
  ATO fails closed (FC), ATC fails open (FO). FL and FAI are not spring positions and are
  not checked. Applies to every final element with an Air Action or Fail Position (and
  says it could not verify a driven element that has neither).
- ``valve.signal-loss`` (warning): position on loss of the input signal (below the live
  zero, so ``u = 0``; ``u = 1`` for a reversed input range) differs from the declared FC
  or FO. Every valve, split or not. Not reported where ``valve.air-fail`` already is.
- ``loop.control-sense`` (error): with controller action ``k`` (+1 direct, -1 reverse),
  travel slope ``d`` against CO and effect ``e`` (+1 when opening raises the measured
  variable), every element needs ``k*d*e < 0`` or the loop pushes the wrong way. When
  every element of a group is wrong, one finding points at the controller's Control
  Action; otherwise each wrong element's Effect.
"""

from __future__ import annotations

from typing import Iterator

from loopdocs.calc.split import spring_fail_travel_pct, travel_on_signal_loss_pct
from loopdocs.checks.context import Context, Unverified, capped, defaults_used, group_tags, segment_text, travel_text
from loopdocs.findings import Finding, Severity
from loopdocs.model.groups import SplitElement, fmt_pct, fmt_range, span_of_signal
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


def signal_loss(ctx: Context) -> Iterator[Finding]:
    """``valve.signal-loss``: where the valve goes when its input signal is lost."""
    project = ctx.project
    for tag in project.tags.values():
        if tag.kind is not TagKind.FINAL_ELEMENT or tag.air_action is None or tag.fail_position not in _SPRING_POSITIONS:
            continue
        if not _air_fail_agrees(tag.air_action, tag.fail_position):
            continue  # valve.air-fail reports this valve
        positioner = tag.positioner_action.value if tag.positioner_action is not None else "direct"
        travel = travel_on_signal_loss_pct(tag.air_action.value, positioner, tag.input_low, tag.input_high)
        declared = 0.0 if tag.fail_position is FailPosition.FC else 100.0
        if travel == declared:
            continue
        group = ctx.group_of.get(tag.tag)
        span = next(e.span for e in group.elements if e.tag == tag.tag) if group else span_of_signal(tag.signal)
        below = f"below {span.low:g} {span.unit}" if span is not None else "below the live zero"
        reversed_range = tag.input_low is not None and tag.input_high is not None and tag.input_low > tag.input_high
        cause = f"{tag.air_action.value}, {positioner} positioner"
        if reversed_range:
            units = tag.input_units or (span.unit if span is not None else "")
            cause += f", reversed input range {fmt_range(tag.input_low, tag.input_high, units)}"
        message = (f"{tag.tag} ({cause}) goes {_travel_word(travel)} when its input signal is lost ({below}), "
                   f"but Fail Position says {tag.fail_position.value}: on loss of signal it does not go where it goes "
                   "on loss of air")
        notes = ["Positioner Action blank, taken as direct"] if tag.positioner_action is None else []
        severity, message = capped(Severity.WARNING, message, notes)
        key = "input_low" if reversed_range else "positioner_action"
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
                "k*d*e > 0 for all; check Control Action", defaults)
            yield Finding("loop.control-sense", severity, message, loop=group.loop, tags=group_tags(group),
                          location=project.cell(ctrl, "control_action"))
            continue
        for e in wrong:
            d, eff = e.intent.direction, e.record.effect.sign
            message = (f"{acting} and {e.tag} {_moves(e)} as CO rises ({travel_text(e)} over {segment_text(e)}); opening it "
                       f"{e.record.effect.value} the measurement, so a rising measurement "
                       f"{'opens' if k * d > 0 else 'closes'} it and pushes the measurement further up: "
                       f"the loop pushes the wrong way "
                       f"(k*d*e = {k:+d}*{d:+d}*{eff:+d} > 0); one of Control Action, the travel or Effect is wrong")
            severity, message = capped(Severity.ERROR, message, defaults_used(e, ("travel",)))
            yield Finding("loop.control-sense", severity, message, loop=group.loop, tags=(ctrl.tag, e.tag),
                          location=project.cell(e.record, "effect"))
