"""Short texts a loop diagram writes beside its devices from the index (docs/design.md
§8.1): switch settings, alarm settings, interlock references, hazardous area, supplies,
cable cores and terminal polarity. Pure functions of one record; ``None`` when the index
says nothing, so a diagram without these columns is drawn as before.

ISA-5.1 supply abbreviations (from memory): ``AS`` air supply, ``IA`` instrument air,
``ES`` electric supply, ``HS`` hydraulic supply.
"""

from __future__ import annotations

import re

from loopdocs.checks.alarms import switch_direction
from loopdocs.draw.clusters import fmt_number
from loopdocs.model.records import Tag
from loopdocs.model.vocab import Wires

MINUS = "\u2212"


def _unit(tag: Tag) -> str:
    return f" {tag.units}" if tag.units else ""


def switch_setting_text(tag: Tag) -> str | None:
    """A switch's setting and the way it trips: ``trip 5 barg rising, reset 4.5``.

    The direction follows the letters after S (ISA-5.1: PSH high, so it trips on a rising
    value; LSLL low, falling); when they say neither, the Reset's side of the Set Point
    (a high trip resets below it); rising when neither tells.

    >>> from loopdocs.model.tagname import parse_tag, tag_kind
    >>> p = parse_tag("PSH-1")
    >>> switch_setting_text(Tag(tag="PSH-1", parts=p, kind=tag_kind(p), loop="P-1", row=2,
    ...                         set_point=5.0, reset=4.5, units="barg"))
    'trip 5 barg rising, reset 4.5'
    """
    if tag.set_point is None:
        return None
    direction = switch_direction(tag)
    if direction is None and tag.reset is not None and tag.reset != tag.set_point:
        direction = "high" if tag.reset < tag.set_point else "low"
    moving = "falling" if direction == "low" else "rising"
    text = f"trip {fmt_number(tag.set_point)}{_unit(tag)} {moving}"
    if tag.reset is not None:
        text += f", reset {fmt_number(tag.reset)}"
    return text


def alarm_text(tag: Tag) -> str | None:
    """The alarm settings, low to high: ``L 2 / H 8 / HH 9 barg``."""
    settings = [(name, value) for name, value in (("LL", tag.alarm_ll), ("L", tag.alarm_l), ("H", tag.alarm_h),
                                                  ("HH", tag.alarm_hh)) if value is not None]
    if not settings:
        return None
    return " / ".join(f"{name} {fmt_number(value)}" for name, value in settings) + _unit(tag)


def set_point_text(tag: Tag) -> str | None:
    """A controller's operating set point: ``SP 65 degC``."""
    return f"SP {fmt_number(tag.set_point)}{_unit(tag)}" if tag.set_point is not None else None


def interlock_text(tag: Tag) -> str | None:
    return f"interlock {tag.interlock}" if tag.interlock else None


def area_text(tag: Tag) -> str | None:
    """The hazardous-area classification at the field device, as the index writes it."""
    return f"area {tag.area_class}" if tag.area_class else None


def power_text(tag: Tag) -> str | None:
    """The electric supply of a 4-wire device (``ES`` and the Power Source), or None for a
    loop-powered one. A 4-wire device without a Power Source still gets ``ES`` (the
    check ``supply.power`` reports the blank)."""
    if tag.wires is not Wires.FOUR:
        return None
    return f"ES {tag.power_source}" if tag.power_source else "ES"


def air_supply_text(tag: Tag) -> str:
    """The instrument air supply: ``IA`` and the Air Supply text (as written when it
    already starts with IA or AS)."""
    if not tag.air_supply:
        return "IA"
    if tag.air_supply.upper().startswith(("IA ", "AS ", "IA-", "AS-")) or tag.air_supply.upper() in ("IA", "AS"):
        return tag.air_supply
    return f"IA {tag.air_supply}"


def cable_text(tag: Tag) -> str | None:
    """The cable label with its cores: ``C-101 (1+ 2- S)``."""
    if tag.cable and tag.cores:
        return f"{tag.cable} ({tag.cores})"
    return tag.cable or tag.cores


def has_polarity(tag: Tag) -> bool:
    """The Cores text marks a + and a - core (``1+ 2- S``)."""
    cores = tag.cores or ""
    return bool(re.search(r"\+", cores)) and bool(re.search(r"[-\u2212]", cores))


def polarity_pair(numbers: str) -> str:
    """Terminal numbers with their polarity: ``51-52`` -> ``51+ 52−`` (the first terminal of a
    pair takes the + core, as the Cores text lists them).

    >>> polarity_pair("51-52")
    '51+ 52−'
    """
    parts = [p.strip() for p in numbers.split("-")]
    if len(parts) != 2 or not all(parts):
        return numbers
    return f"{parts[0]}+ {parts[1]}{MINUS}"
