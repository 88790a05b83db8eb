"""Alarm and switch settings: what the control system and the switches are set to trip at.

- ``alarm.order`` (error): the alarm settings given are not in order, LL < L < H < HH.
  An alarm out of order never annunciates in its turn (a high alarm below the low
  alarm is active in normal operation).
- ``alarm.range`` (warning): an alarm setting outside the calibrated range: the
  measurement saturates at the range end (NAMUR NE 43: 3.8 to 20.5 mA, a few % beyond
  the range), so an alarm beyond it never trips or trips only on a failed signal.
- ``switch.reset`` (error): a switch's Reset on the wrong side of its Set Point. A
  high switch (ISA-5.1 succeeding letters ``SH``) trips as the value rises through the
  set point and resets below it; a low switch (``SL``) the other way round. A reset on
  the wrong side means the switch never resets, or resets at once. (warning) a Reset
  equal to the Set Point: no dead band, the switch chatters (common practice).
- ``switch.set-point`` (warning): a switch with a Reset but no Set Point.

A switch whose letters say neither high nor low (``PS``, ``FSHL``) is not checked for
the side of its reset.
"""

from __future__ import annotations

from typing import Iterator

from loopdocs.core.findings import Finding, Severity
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind

#: Alarm columns, lowest first, with the header the user knows.
ALARMS = (("alarm_ll", "Alarm LL"), ("alarm_l", "Alarm L"), ("alarm_h", "Alarm H"), ("alarm_hh", "Alarm HH"))


def switch_direction(tag: Tag) -> str | None:
    """``'high'`` or ``'low'`` from the succeeding letters after ``S`` (ISA-5.1: ``PSH``
    high, ``LSLL`` low-low), ``None`` when they say neither or both.

    >>> from loopdocs.model.tagname import parse_tag, tag_kind
    >>> def t(name):
    ...     parts = parse_tag(name)
    ...     return Tag(tag=name, parts=parts, kind=tag_kind(parts), loop="", row=1)
    >>> switch_direction(t("PSH-1")), switch_direction(t("LSLL-2")), switch_direction(t("FSHL-3"))
    ('high', 'low', None)
    """
    after = tag.parts.functions.split("S", 1)[1] if "S" in tag.parts.functions else ""
    high, low = "H" in after, "L" in after
    if high == low:
        return None
    return "high" if high else "low"


def _finding(project: Project, tag: Tag, rule: str, severity: Severity, key: str, message: str) -> Finding:
    return Finding(rule, severity, f"{tag.tag}: {message}", loop=tag.loop, tags=(tag.tag,),
                   location=project.cell(tag, key))


def checks(project: Project) -> Iterator[Finding]:
    """Every ``alarm.*`` and ``switch.*`` finding (module docstring)."""
    for tag in project.tags.values():
        yield from _alarm_findings(project, tag)
        if tag.kind is TagKind.SWITCH:
            yield from _switch_findings(project, tag)


def _alarm_findings(project: Project, tag: Tag) -> Iterator[Finding]:
    given = [(key, header, getattr(tag, key)) for key, header in ALARMS if getattr(tag, key) is not None]
    if not given:
        return
    for (_, low_header, low), (key, header, value) in zip(given, given[1:]):
        if not value > low:
            yield _finding(project, tag, "alarm.order", Severity.ERROR, key,
                           f"{header} {value:g} is not above {low_header} {low:g}; alarms run LL < L < H < HH")
    if tag.has_range:
        lo, hi = sorted((tag.range_low, tag.range_high))
        units = f" {tag.units}" if tag.units else ""
        for key, header, value in given:
            if not lo <= value <= hi:
                yield _finding(project, tag, "alarm.range", Severity.WARNING, key,
                               f"{header} {value:g}{units} is outside the calibrated range {tag.range_low:g} to "
                               f"{tag.range_high:g}{units}: the measurement saturates near the range end, so the "
                               "alarm trips late or never")


def _switch_findings(project: Project, tag: Tag) -> Iterator[Finding]:
    if tag.reset is None:
        return
    if tag.set_point is None:
        yield _finding(project, tag, "switch.set-point", Severity.WARNING, "set_point",
                       f"Reset {tag.reset:g} given but Set Point blank: the trip value is not known")
        return
    if tag.reset == tag.set_point:
        yield _finding(project, tag, "switch.reset", Severity.WARNING, "reset",
                       f"Reset equals Set Point ({tag.set_point:g}): no dead band, the switch chatters about its "
                       "set point")
        return
    direction = switch_direction(tag)
    if direction is None:
        return
    wrong = tag.reset > tag.set_point if direction == "high" else tag.reset < tag.set_point
    if wrong:
        side = "below" if direction == "high" else "above"
        yield _finding(project, tag, "switch.reset", Severity.ERROR, "reset",
                       f"a {direction} switch trips as the value {'rises' if direction == 'high' else 'falls'} "
                       f"through its Set Point {tag.set_point:g} and resets {side} it, but Reset is {tag.reset:g}")
