"""Loop-load and channel rules (docs/design.md §5.8), run with the split rules by ``checks/split_rules.py``:

- ``loop.load`` (error): the devices in series on one analog output drop
  ``sum(Device Volts)`` at 20 mA; that must not exceed the output's Loop Volts (compliance
  voltage). One output per positioner split group or single valve (its positioners in
  series), per element of a ``dcs`` split, or the I/P converter(s) of a pneumatic split.
  Loop Volts come from the loads' rows, else from the controller's row. A transmitter
  needs ``Loop Volts - 0.022 A * Load Ohm >= Device Volts`` (22 mA: the highest current a
  transmitter drives, above the NAMUR NE 43 failure level of 21 mA; common practice).
  The index has no cable resistance column, so cable is not included (the message says
  so). A loop whose volts are all blank is not tracked and not reported; one with some
  volts but not all gets a ``check.not-verified`` line.
- ``io.shared-channel`` (error): one IO Address used by two or more field devices
  (transmitters, final elements, relays), unless they are the elements of one positioner
  split. Fieldbus segments are shared by design and not checked.
"""

from __future__ import annotations

from typing import Iterator

from loopdocs.checks.context import Context, Unverified
from loopdocs.core.findings import Finding, Severity
from loopdocs.model.from_rows import natural_key
from loopdocs.model.groups import SplitGroup
from loopdocs.model.records import Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Signal

#: Highest loop current a transmitter drives, A (docs/design.md §6.8; common practice).
TRANSMITTER_MAX_CURRENT_A = 0.022
_FIELD_KINDS = (TagKind.TRANSMITTER, TagKind.FINAL_ELEMENT, TagKind.RELAY)


def _electrical(tag: Tag) -> bool:
    return tag.signal is None or tag.signal.is_analog_ma


def _outputs(group: SplitGroup) -> list[tuple[str, list[Tag]]]:
    """The analog outputs of a group: ``(subject, loads in series)``."""
    if group.method == "pneumatic":
        converters = list(group.converters)
        return [(group.controller, converters)] if converters else []
    if group.method == "positioner":
        loads = [e.record for e in group.elements if _electrical(e.record)]
        return [(group.controller, loads)] if loads else []
    return [(e.tag, [e.record]) for e in group.elements if _electrical(e.record)]


def _volts(v: float) -> str:
    return f"{v:.2f} V"


def loop_load(ctx: Context) -> Iterator[Finding | Unverified]:
    """``loop.load``: output compliance against the devices in series; transmitter supply."""
    yield from _output_loads(ctx)
    yield from _transmitter_loads(ctx)


def _output_loads(ctx: Context) -> Iterator[Finding | Unverified]:
    project = ctx.project
    for group in ctx.groups:
        ctrl = group.controller_record
        for subject, loads in _outputs(group):
            sources = [t for t in loads if t.loop_volts is not None]
            if not sources and ctrl is not None and ctrl.loop_volts is not None:
                sources = [ctrl]
            device = [t.device_volts for t in loads]
            if not sources and all(v is None for v in device):
                continue  # loop load not tracked for this output
            missing = [t.tag for t in loads if t.device_volts is None]
            if missing or not sources:
                what = []
                if missing:
                    what.append(f"Device Volts blank for {', '.join(missing)}")
                if not sources:
                    what.append(f"Loop Volts blank on {', '.join(t.tag for t in loads)} and {group.controller}")
                first = next((t for t in loads if t.device_volts is None), loads[0])
                yield Unverified(subject, f"the loop load ({'; '.join(what)})", group.loop,
                                 (group.controller, *(t.tag for t in loads)),
                                 project.cell(first, "device_volts" if missing else "loop_volts"))
                continue
            source = min(sources, key=lambda t: t.loop_volts)
            total = sum(device)
            if total <= source.loop_volts + 1e-9:
                continue
            if len(loads) == 1:
                drop = f"{loads[0].tag} drops {_volts(total)} at 20 mA"
            else:
                drop = (f"{' + '.join(f'{t.tag} {_volts(t.device_volts)}' for t in loads)} = {_volts(total)} "
                        "in series at 20 mA")
            message = (f"{drop} on {group.controller}'s output, more than its {_volts(source.loop_volts)} "
                       f"(Loop Volts of {source.tag}): the output cannot drive 20 mA through the loop "
                       "(cable resistance not included)")
            yield Finding("loop.load", Severity.ERROR, message, loop=group.loop,
                          tags=(group.controller, *(t.tag for t in loads)) if subject == group.controller
                          else (group.controller, subject),
                          location=project.cell(source, "loop_volts"))


def _transmitter_loads(ctx: Context) -> Iterator[Finding | Unverified]:
    project = ctx.project
    for tag in project.tags.values():
        if tag.kind is not TagKind.TRANSMITTER or not _electrical(tag):
            continue
        if tag.device_volts is None and tag.loop_volts is None:
            continue
        if tag.device_volts is None or tag.loop_volts is None:
            key = "device_volts" if tag.device_volts is None else "loop_volts"
            yield Unverified(tag.tag, f"the loop load ({'Device Volts' if key == 'device_volts' else 'Loop Volts'} blank)",
                             tag.loop, (tag.tag,), project.cell(tag, key))
            continue
        load = tag.load_ohm or 0.0
        left = tag.loop_volts - TRANSMITTER_MAX_CURRENT_A * load
        if left >= tag.device_volts - 1e-9:
            continue
        blank = " (Load Ohm blank, taken as 0 ohm)" if tag.load_ohm is None else ""
        message = (f"{tag.tag} needs {_volts(tag.device_volts)} at its terminals, but {_volts(tag.loop_volts)} supply "
                   f"less {TRANSMITTER_MAX_CURRENT_A:g} A x {load:g} ohm = {_volts(TRANSMITTER_MAX_CURRENT_A * load)} "
                   f"across the load leaves {_volts(left)}{blank} (cable resistance not included)")
        yield Finding("loop.load", Severity.ERROR, message, loop=tag.loop, tags=(tag.tag,),
                      location=project.cell(tag, "load_ohm" if tag.load_ohm is not None else "loop_volts"))


def shared_channel(ctx: Context) -> Iterator[Finding]:
    """``io.shared-channel``: one IO Address, one field device (or one positioner split)."""
    project = ctx.project
    users: dict[str, list[Tag]] = {}
    for tag in project.tags.values():
        if tag.io_address and tag.kind in _FIELD_KINDS and tag.signal is not Signal.FIELDBUS:
            users.setdefault(" ".join(tag.io_address.upper().split()), []).append(tag)
    group_of = ctx.group_of
    for address, tags in users.items():
        if len(tags) < 2:
            continue
        groups = {id(group_of.get(t.tag)) for t in tags}
        group = group_of.get(tags[0].tag)
        if len(groups) == 1 and group is not None and group.method == "positioner":
            continue
        named = sorted(tags, key=lambda t: natural_key(t.tag))
        if group is not None and len(groups) == 1 and group.method == "dcs":
            reason = "a dcs split needs one output per element"
        else:
            reason = "one channel serves one device (only the elements of one positioner split share an output)"
        last = max(tags, key=lambda t: t.row)
        yield Finding("io.shared-channel", Severity.ERROR,
                      f"IO Address {tags[0].io_address} is used by {', '.join(t.tag for t in named)}: {reason}",
                      loop=named[0].loop, tags=tuple(t.tag for t in named),
                      location=project.cell(last, "io_address"))

