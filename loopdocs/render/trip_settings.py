"""The loop's alarm and trip settings as one printed table: each tag of the loop (and the
tags linked to it by Driven By) with its alarm settings, its switch set point, direction,
reset and dead band, a controller's operating set point, and its interlock reference,
in the tag's units. Only the columns some tag fills are printed; no table when no tag
has any of these settings.

Values are the index cells as given (``Alarm LL``, ``Alarm L``, ``Alarm H``,
``Alarm HH``, ``Set Point``, ``Reset``, ``Interlock``, ``Units``); the direction of a
switch comes from its letters (``checks.alarms.switch_direction``, ISA-5.1 succeeding
letters ``H``/``L``) and its dead band is ``|Set Point - Reset|`` (the same as the
switch set-point test, ``calc.trip_tables``).
"""

from __future__ import annotations

from collections.abc import Sequence

from loopdocs.checks.alarms import switch_direction
from loopdocs.core.formatting import fmt_number
from loopdocs.model.records import Tag
from loopdocs.model.tagname import TagKind
from loopdocs.render.caltables import DisplayTable

TITLE = "Alarm and trip settings"

#: Columns of words (left aligned); the others hold numbers.
_TEXT_HEADS = ("Tag", "Units", "Direction", "Interlock")


def direction_words(tag: Tag) -> str:
    """What the Set Point of ``tag`` is: a switch's trip (high: trips on a rising value,
    low: on a falling one) or a controller's operating set point."""
    if tag.set_point is None:
        return ""
    if tag.kind is TagKind.SWITCH:
        side = switch_direction(tag)
        return {"high": "high, trips rising", "low": "low, trips falling"}.get(side or "", "not in the letters")
    if tag.kind is TagKind.CONTROLLER:
        return "operating set point"
    return ""


def dead_band(tag: Tag) -> float | None:
    """``|Set Point - Reset|`` of a switch, in its units (``None`` unless both are given)."""
    if tag.set_point is None or tag.reset is None:
        return None
    return abs(tag.set_point - tag.reset)


def _cells(tag: Tag) -> dict[str, str]:
    return {
        "Tag": tag.tag,
        "Alarm LL": fmt_number(tag.alarm_ll),
        "Alarm L": fmt_number(tag.alarm_l),
        "Alarm H": fmt_number(tag.alarm_h),
        "Alarm HH": fmt_number(tag.alarm_hh),
        "Set Point": fmt_number(tag.set_point),
        "Direction": direction_words(tag),
        "Reset": fmt_number(tag.reset),
        "Dead band": fmt_number(dead_band(tag)),
        "Units": tag.units or "",
        "Interlock": tag.interlock or "",
    }


_HEADS = ("Tag", "Alarm LL", "Alarm L", "Alarm H", "Alarm HH", "Set Point", "Direction", "Reset",
          "Dead band", "Units", "Interlock")
_SETTINGS = _HEADS[1:9] + ("Interlock",)


def settings_table(tags: Sequence[Tag]) -> DisplayTable | None:
    """The alarm and trip table of the tags given (in their order), or ``None`` when none
    has a setting or an interlock reference."""
    rows = [_cells(t) for t in tags]
    rows = [r for r in rows if any(r[h] for h in _SETTINGS)]
    if not rows:
        return None
    valued = ("Alarm LL", "Alarm L", "Alarm H", "Alarm HH", "Set Point", "Reset", "Dead band")
    with_values = any(r[h] for r in rows for h in valued)
    heads = tuple(h for h in _HEADS if h == "Tag" or (h == "Units" and with_values)
                  or (h != "Units" and any(r[h] for r in rows)))
    return DisplayTable(
        tag=TITLE,
        title="",
        heads=heads,
        rows=tuple(tuple(r[h] for h in heads) for r in rows),
        text_columns=tuple(i for i, h in enumerate(heads) if h in _TEXT_HEADS),
    )
