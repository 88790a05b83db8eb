"""Split-range checks (docs/design.md §5.6): each rule a small function over the split groups of
``loopdocs.model.groups``; valve and loop-load rules are in ``checks/valve.py`` and
``checks/loopload.py``. The registry (``loopdocs.checks``) runs them all and merges what
could not be verified into one ``check.not-verified`` info per tag or group.

Rules of this module:

- ``split.driver`` (error): Driven By names a tag that is not in the index, or one that
  is not a controller, hand controller or relay.
- ``split.orphan`` (warning): the only element driven by its controller strokes over part
  of the CO: a split that lost its partner.
- ``split.segment`` (error): an intent that cannot be used (CO Start not below CO End, CO
  or travel outside 0 to 100 %, an element that never moves).
- ``split.method`` (warning): the elements of one group are split in different places, or
  a positioner split (one shared output) is wired to different IO Addresses.
- ``split.gap`` (warning; info for the dead band between opposed neighbours): part of
  the CO where nothing moves.
- ``split.overlap`` (warning between opposed staged neighbours, which then act at once;
  info between same-direction neighbours): CO where two neighbours both move.
- ``split.settings`` (error): a positioner or pneumatic element whose input range does not
  realise its intent within 1 % travel (docs/design.md §4.4), or whose Input Units are not of
  the signal's kind; the message gives the range it needs.
- ``split.double-split`` (error): a ``dcs`` element whose positioner is not set to the full
  span, so the split is made twice.
- ``split.capacity`` (warning): gain ratio across a boundary of a ``staged`` group outside
  0.5 to 2 (common practice), with the boundaries recommended by the same gain model
  (only where they score better than the settings) and, where no boundaries keep the
  gain within the band, what does (linear trims or a deliberate overlap).

A finding resting on a default (docs/design.md §3.4) says so and is at most a warning.
"""

from __future__ import annotations

import math
from collections import Counter
from typing import Iterator

from loopdocs.calc.capacity import CapacityAdvice

from loopdocs.calc.travel import (
    SHARED_TOLERANCE_PCT,
    TRAVEL_TOLERANCE_PCT,
    Settings,
    max_travel_error,
    required_input_range,
)
from loopdocs.checks.context import (
    Context,
    Rule,
    Unverified,
    capped,
    collect,
    defaults_used,
    group_tags,
    segment_text,
    travel_text,
)
from loopdocs.core.findings import Finding, Severity
from loopdocs.core.formatting import fmt_pct, fmt_range
from loopdocs.model.groups import INTENT_FROM_SETTINGS, SplitElement
from loopdocs.model.tagname import TagKind

#: Gaps and overlaps narrower than this, % CO, are rounding, not design.
MIN_WIDTH_PCT = 0.01
#: Gain ratio band across a boundary (docs/design.md §6.9; common practice).
GAIN_RATIO_BAND = (0.5, 2.0)
#: Defaults a settings cross-check can rest on.
SETTINGS_DEFAULTS = ("co", "travel", "method", "span", "input_units", "positioner_action")

_DRIVERS = (TagKind.CONTROLLER, TagKind.RELAY)


def _names(elements) -> str:
    names = [e.tag for e in elements]
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]



# --------------------------------------------------------------------------- driver, orphan


def driver(ctx: Context) -> Iterator[Finding]:
    """``split.driver``: the Driven By tag exists and is a controller or a relay."""
    project = ctx.project
    for group in ctx.groups:
        ctrl = group.controller_record
        if ctrl is not None and ctrl.kind in _DRIVERS:
            continue
        referrers = [e.record for e in group.elements] + list(group.converters)
        referrer = min((t for t in referrers if t.driven_by == group.controller), key=lambda t: t.row,
                       default=group.elements[0].record)
        subject = f"{_names(group.elements)} {'is' if len(group.elements) == 1 else 'are'} driven by {group.controller}"
        if ctrl is None:
            loop = project.loops.get(referrer.loop)
            hints = [n for n in (loop.tags if loop else ()) if project.tags[n].kind is TagKind.CONTROLLER]
            message = f"{subject}, which is not in the index"
            if hints:
                message += f"; the controller of loop {referrer.loop} is {', '.join(hints)}"
        else:
            message = f"{subject}, which is a {ctrl.kind.value}, not a controller, hand controller or relay"
        yield Finding("split.driver", Severity.ERROR, message, loop=group.loop, tags=group.tags,
                      location=project.cell(referrer, "driven_by"))


def orphan(ctx: Context) -> Iterator[Finding]:
    """``split.orphan``: one element alone on a controller, over part of the CO only."""
    for group in ctx.groups:
        ctrl = group.controller_record
        if len(group.elements) != 1 or ctrl is None or ctrl.kind not in _DRIVERS or not group.is_split:
            continue
        e = group.elements[0]
        if e.intent is None:
            continue
        idle = ", ".join(f"CO {fmt_pct(a)} to {fmt_pct(b)} %" for a, b in group.uncovered_co)
        message = (f"{e.tag} is the only element driven by {group.controller} but strokes over {segment_text(e)} only: "
                   f"a split range that lost its partner (nothing moves over {idle})")
        if e.intent_source == INTENT_FROM_SETTINGS and e.input_range:
            message += f"; segment taken from its input range {fmt_range(*e.input_range, e.input_units)}"
        key = "co_start_pct" if e.co_start_pct > SHARED_TOLERANCE_PCT else "co_end_pct"
        if e.intent_source == INTENT_FROM_SETTINGS:
            key = "input_low" if key == "co_start_pct" else "input_high"
        severity, message = capped(Severity.WARNING, message, defaults_used(e, ("co",)))
        yield Finding("split.orphan", severity, message, loop=group.loop, tags=group_tags(group),
                      location=ctx.project.cell(e.record, key))


def segment(ctx: Context) -> Iterator[Finding]:
    """``split.segment``: an intent that cannot be used."""
    for group, e in ctx.elements():
        if e.intent_problem is None:
            continue
        if e.intent_source == INTENT_FROM_SETTINGS:
            key = "input_low"
        elif not (0 <= e.co_start_pct < e.co_end_pct <= 100):
            key = "co_start_pct" if not 0 <= e.co_start_pct <= 100 else "co_end_pct"
        else:
            key = "travel_end_pct"
        severity, message = capped(Severity.ERROR, f"{e.tag}: {e.intent_problem}", defaults_used(e, ("co", "travel")))
        yield Finding("split.segment", severity, message, loop=group.loop, tags=(e.tag,),
                      location=ctx.project.cell(e.record, key))


def method(ctx: Context) -> Iterator[Finding]:
    """``split.method``: one group, one place where the split is made (and one output for a
    positioner split)."""
    for group in ctx.groups:
        if len(group.elements) < 2:
            continue
        counts = Counter(e.method for e in group.elements)
        if len(counts) > 1:
            usual = min(counts, key=lambda m: (-counts[m], m))
            for e in group.elements:
                if e.method == usual:
                    continue
                severity, message = capped(
                    Severity.WARNING,
                    f"{e.tag} is split by {e.method} but the rest of {group.controller}'s group by {usual}: "
                    "one controller output is split in one place",
                    defaults_used(e, ("method",)),
                )
                yield Finding("split.method", severity, message, loop=group.loop, tags=(group.controller, e.tag),
                              location=ctx.project.cell(e.record, "split_method"))
        elif group.method == "positioner":
            wired = [e for e in group.elements if e.record.io_address]
            addresses = list(dict.fromkeys(e.record.io_address for e in wired))
            if len(addresses) > 1:
                odd = next(e for e in wired if e.record.io_address != wired[0].record.io_address)
                listed = ", ".join(f"{e.tag} on {e.record.io_address}" for e in wired)
                severity, message = capped(
                    Severity.WARNING,
                    f"{group.controller}'s positioner split shares one output, but its elements are wired to "
                    f"different IO Addresses ({listed}); either one address, or a dcs split",
                    defaults_used(odd, ("method",)),
                )
                yield Finding("split.method", severity, message, loop=group.loop, tags=group_tags(group),
                              location=ctx.project.cell(odd.record, "io_address"))


# --------------------------------------------------------------------------- coverage


def gap(ctx: Context) -> Iterator[Finding]:
    """``split.gap``: CO where no element of a group of two or more moves."""
    for group in ctx.groups:
        usable = [e for e in group.elements if e.intent is not None]
        if len(usable) < 2:
            continue
        for low, high in group.uncovered_co:
            width = high - low
            if width <= MIN_WIDTH_PCT:
                continue
            before = [e for e in usable if abs(e.co_end_pct - low) < 1e-9]
            after = [e for e in usable if abs(e.co_start_pct - high) < 1e-9]
            opposed = bool(before and after) and before[-1].intent.direction != after[0].intent.direction
            where = f"CO {fmt_pct(low)} to {fmt_pct(high)} %"
            if opposed and 0 < low and high < 100:
                severity = Severity.INFO
                message = (f"dead band of {fmt_pct(width)} % CO between {before[-1].tag} (ends at CO {fmt_pct(low)} %) "
                           f"and {after[0].tag} (starts at CO {fmt_pct(high)} %): neither moves over {where}")
            else:
                severity = Severity.WARNING
                message = (f"no element of {group.controller}'s {group.mode} split moves over {where} "
                           f"({fmt_pct(width)} % of CO): a dead zone where the output changes and nothing happens")
            near = before[-1:] + after[:1]
            defaults = [d for e in near for d in defaults_used(e, ("co",))]
            severity, message = capped(severity, message, defaults)
            anchor, key = (after[0], "co_start_pct") if after else (before[-1], "co_end_pct")
            yield Finding("split.gap", severity, message, loop=group.loop,
                          tags=tuple(e.tag for e in near) or group.tags,
                          location=ctx.project.cell(anchor.record, key))


def overlap(ctx: Context) -> Iterator[Finding]:
    """``split.overlap``: neighbours on consecutive ranges that both move over some CO."""
    for group in ctx.groups:
        for first, second, relation in group.pairs:
            if relation.overlap_pct <= MIN_WIDTH_PCT or relation.ranges == "shared":
                continue
            low = second.co_start_pct
            high = min(first.co_end_pct, second.co_end_pct)
            where = f"CO {fmt_pct(low)} to {fmt_pct(high)} % ({fmt_pct(relation.overlap_pct)} % of CO)"
            if relation.direction == "opposed":
                severity = Severity.WARNING
                message = (f"{first.tag} and {second.tag} move in opposite directions and overlap over {where}: "
                           "both act at once there, against each other")
            else:
                severity = Severity.INFO
                message = f"{first.tag} and {second.tag} both move over {where}"
            defaults = defaults_used(first, ("co",)) + defaults_used(second, ("co",))
            severity, message = capped(severity, message, defaults)
            yield Finding("split.overlap", severity, message, loop=group.loop, tags=(first.tag, second.tag),
                          location=ctx.project.cell(second.record, "co_start_pct"))


# --------------------------------------------------------------------------- settings


def _worse_end(e: SplitElement) -> str:
    """``input_low`` or ``input_high``: the end of the set range furthest from the needed one."""
    if e.input_range is None or e.required_input_range is None:
        return "input_low"
    low_off = abs(e.input_range[0] - e.required_input_range[0])
    high_off = abs(e.input_range[1] - e.required_input_range[1])
    return "input_low" if low_off >= high_off else "input_high"


def _realisable(e: SplitElement) -> bool:
    """Whether the input range loopdocs recommends realises the intent (a travel held
    outside the segment at neither 0 nor 100 % cannot be set by a clamped range)."""
    if e.intent is None or e.settings is None or e.method == "dcs":
        return True
    span = e.settings.span
    low, high = required_input_range(e.intent, e.method, e.settings.air_action, e.positioner_action, span)
    ideal = Settings(e.method, e.settings.air_action, e.positioner_action, low, high, span)
    return max_travel_error(e.intent, ideal, None, grid_step_pct=100.0)[0] <= TRAVEL_TOLERANCE_PCT


def settings(ctx: Context) -> Iterator[Finding | Unverified]:
    """``split.settings``: the input range realises the intent within 1 % travel (docs/design.md §4.4)."""
    project = ctx.project
    for group, e in ctx.elements():
        if e.intent is None:
            continue
        if e.settings is None:
            where = project.cell(e.record, e.settings_problem_key or "input_low")
            if e.settings_problem_is_error:
                severity, message = capped(Severity.ERROR, f"{e.tag}: {e.settings_problem}",
                                           defaults_used(e, ("method", "span")))
                yield Finding("split.settings", severity, message, loop=group.loop, tags=(e.tag,), location=where)
            else:
                yield Unverified(e.tag, f"its settings against its intent ({e.settings_problem})",
                                 e.loop, (e.tag,), where)
            continue
        if e.method == "dcs" or e.input_range is None:
            continue  # dcs: split.double-split; no range stated (a single valve): nothing claimed to check
        if e.intent_source == INTENT_FROM_SETTINGS:
            yield Unverified(e.tag, "its settings against its intent (travel blank: the intent is taken from the "
                                    "settings, so not cross-checked)", e.loop, (e.tag,),
                             project.cell(e.record, "travel_start_pct"))
            continue
        error_pct, at_co = e.travel_error or (0.0, 0.0)
        if error_pct <= TRAVEL_TOLERANCE_PCT:
            continue
        what = "positioner" if e.method == "positioner" else "positioner (or spring range)"
        acting = f"{e.air_action}, {e.positioner_action} positioner"
        message = (f"{e.tag} {what} is set {fmt_range(*e.input_range, e.input_units)}; its CO segment "
                   f"{fmt_pct(e.co_start_pct)} to {fmt_pct(e.co_end_pct)} % ({travel_text(e)}, {acting}) ")
        key = _worse_end(e)
        if not _realisable(e):
            message += ("cannot be realised by any input range: a clamped range holds travel at 0 or 100 % outside "
                        "the segment; state the segment over which the travel changes")
            key = "travel_start_pct"
        elif e.required_input_range is not None:
            message += f"needs {fmt_range(*e.required_input_range, e.input_units)}"
        else:
            message += "is not realised"
        message += f" (travel off by {error_pct:.1f} % at CO {fmt_pct(at_co)} %)"
        severity, message = capped(Severity.ERROR, message, defaults_used(e, SETTINGS_DEFAULTS))
        yield Finding("split.settings", severity, message, loop=group.loop, tags=(e.tag,),
                      location=project.cell(e.record, key))


def double_split(ctx: Context) -> Iterator[Finding | Unverified]:
    """``split.double-split``: a ``dcs`` element whose positioner does not take the full span."""
    project = ctx.project
    for group, e in ctx.elements():
        if e.method != "dcs" or e.intent is None or e.settings is None:
            continue
        if "input_range" in e.assumptions:
            yield Unverified(e.tag, "that its positioner takes the full span (Input Low/High blank)",
                             e.loop, (e.tag,), project.cell(e.record, "input_low"))
            continue
        error_pct, at_co = e.travel_error or (0.0, 0.0)
        if error_pct <= TRAVEL_TOLERANCE_PCT:
            continue
        span = e.span
        full = e.required_input_range or (span.low, span.high)
        units = e.input_units if e.required_input_range else span.unit
        scaling = e.required_dcs_scaling
        scaled = scaling.text() if scaling else "its segment"
        message = (f"{e.tag} is split in the control system ({segment_text(e)}, {travel_text(e)}), but its positioner is set "
                   f"{fmt_range(*e.input_range, e.input_units)} instead of the full {fmt_range(*full, units)}: the split "
                   f"is made twice (with the scaling {scaled}, travel is off by {error_pct:.1f} % at CO {fmt_pct(at_co)} %)")
        severity, message = capped(Severity.ERROR, message, defaults_used(e, SETTINGS_DEFAULTS))
        yield Finding("split.double-split", severity, message, loop=group.loop, tags=(e.tag,),
                      location=project.cell(e.record, _worse_end(e)))


# --------------------------------------------------------------------------- capacity


def capacity(ctx: Context) -> Iterator[Finding | Unverified]:
    """``split.capacity``: even loop gain across the boundaries of a staged group on one stream."""
    project = ctx.project
    low_band, high_band = GAIN_RATIO_BAND
    for group in ctx.groups:
        if group.mode != "staged":
            continue
        ordered = [e for e in group.elements if e.intent is not None]
        effects = {e.record.effect for e in ordered if e.record.effect is not None}
        if len(effects) > 1:
            continue  # not one stream
        if group.gain_ratios is None:
            missing = [e.tag for e in ordered if e.record.cv is None]
            yield Unverified(group.controller, f"the capacity split (Cv blank for {', '.join(missing) or 'an element'})",
                             group.loop, group_tags(group),
                             project.cell(next((e.record for e in ordered if e.record.cv is None), ordered[0].record), "cv"))
            continue
        advice_text = capacity_advice_text(group.capacity_advice, high_band)
        for k, ratio in enumerate(group.gain_ratios):
            if low_band <= ratio <= high_band:
                continue
            p, q = ordered[k], ordered[k + 1]
            described = []
            for e in (p, q):
                char = e.record.characteristic.value if e.record.characteristic else "linear"
                described.append(f"{e.tag} (Cv {e.record.cv:g}, {char}, {segment_text(e)})")
            message = (f"gain ratio across the boundary from {described[0]} to {described[1]} is {_ratio(ratio)}, "
                       f"outside {low_band:g} to {high_band:g} (common practice): the loop gain jumps there; "
                       f"{advice_text}")
            notes = [v for k2, v in group.capacity_assumptions.items() if k2.split(".")[0] in (p.tag, q.tag)]
            if notes:
                message += f" ({'; '.join(notes)})"
            yield Finding("split.capacity", Severity.WARNING, message, loop=group.loop, tags=(p.tag, q.tag),
                          location=project.cell(p.record, "co_end_pct"))


def _ratio(value: float) -> str:
    return f"{value:.2f}" if math.isfinite(value) else "unbounded"


def _pcts(values) -> str:
    return ", ".join(fmt_pct(v) for v in values) + " %"


def capacity_advice_text(advice: CapacityAdvice | None, high_band: float = GAIN_RATIO_BAND[1]) -> str:
    """What to do about the boundaries of a staged group, in words, with the figures: the
    recommended boundaries where they score better than the settings (by the same gain
    model, ``loopdocs.calc.capacity.capacity_advice``); where no boundaries bring every
    ratio within the band, what does (linear trims on the staged valves, or a deliberate
    overlap). The jump is ``max(r, 1/r)`` over the boundaries."""
    if advice is None:
        return ""
    parts = []
    now, best = _ratio(advice.jump_now), _ratio(advice.jump_best)
    if advice.improves and advice.is_proportional:
        parts.append(f"boundaries in proportion to cumulative Cv: {_pcts(advice.recommended_pct)} (largest gain change "
                     f"across a boundary: factor {best} there, {now} now)")
    elif advice.improves:
        parts.append(f"recommended boundaries {_pcts(advice.recommended_pct)} (largest gain change across a boundary: "
                     f"factor {best} there, {now} now; boundaries in proportion to cumulative Cv, "
                     f"{_pcts(advice.proportional_pct)}, do worse with these trims)")
    if advice.jump_best <= high_band and advice.improves:
        return "; ".join(parts)
    if not math.isfinite(advice.jump_best):
        parts.append("no boundary setting evens the gain out: it is unbounded whatever the boundaries")
    elif advice.improves:
        parts.append(f"no boundary setting keeps every ratio within the band (a factor {best} at best)")
    else:
        parts.append(f"no boundary setting does better than the one set (largest gain change across a boundary: "
                     f"factor {now} now, {best} at best with boundaries {_pcts(advice.best_pct)})")
    parts.append(f"what helps is linear trims on the staged valves (factor {_ratio(advice.linear_jump)} with "
                 f"boundaries in proportion to cumulative Cv, {_pcts(advice.proportional_pct)}) or a deliberate "
                 "overlap of the segments")
    return "; ".join(parts)


# --------------------------------------------------------------------------- registry


#: The split rules of this module, in report order (``loopdocs.checks`` runs them with the
#: valve and loop-load rules).
RULES: tuple[Rule, ...] = (driver, orphan, segment, method, gap, overlap, settings, double_split, capacity)
