"""What it takes to power, pipe and protect a device: supplies, barriers, screens.

The supply and barrier rules run only where the index uses the column they need (some
row has a value in it): an index that does not track air supplies is not told, row by
row, that every valve lacks one, while a blank among filled cells is reported.

- ``supply.power`` (warning): a 4-wire device (its own supply, the signal pair carries no
  power) with Power Source blank: the sheet cannot show where it is powered from.
- ``supply.air`` (warning): a pneumatic valve (pneumatic Actuator, or an Air Action with
  the Actuator blank) or an I/P converter with Air Supply blank.
- ``area.protection`` (warning): an electrical device in a classified area (Area Class
  given and not a safe area) with Barrier blank: no intrinsic-safety barrier, isolator
  or other protection concept is stated (IEC 60079-14 asks for the protection of every
  device in a hazardous area to be documented; from memory).
- ``shield.both-ends`` (warning): a screen earthed at both ends makes a loop for
  earth currents between the cabinet and the field (common practice: earth it at one
  end, normally the cabinet, unless both ends sit on one equipotential bonding system).
"""

from __future__ import annotations

import re
from typing import Iterator

from loopdocs.core.findings import Finding, Severity
from loopdocs.model.records import Project, Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Shield, Signal, Wires

#: Area Class texts that mean a safe (non-hazardous) area.
SAFE_AREA = re.compile(r"^\s*(safe|safe area|non[- ]?hazardous|unclassified|none|n/?a|general purpose|-)\s*$", re.I)


def _finding(project: Project, tag: Tag, rule: str, key: str, message: str) -> Finding:
    return Finding(rule, Severity.WARNING, f"{tag.tag}: {message}", loop=tag.loop, tags=(tag.tag,),
                   location=project.cell(tag, key))


def is_pneumatic_device(tag: Tag) -> bool:
    """A valve moved by air, or a converter whose output is air."""
    if tag.kind is TagKind.FINAL_ELEMENT:
        if tag.actuator is not None:
            return tag.actuator.is_pneumatic
        return tag.air_action is not None
    if tag.kind is TagKind.RELAY:
        return tag.signal is not None and tag.signal.is_pneumatic
    return False


def is_electrical(tag: Tag) -> bool:
    """A device with an electrical signal (or a 4-wire supply)."""
    if tag.wires is not None:
        return True
    return tag.signal is not None and not tag.signal.is_pneumatic and tag.signal is not Signal.NONE


def columns_in_use(project: Project, keys: tuple[str, ...]) -> set[str]:
    """The columns of ``keys`` that hold a value on at least one row."""
    return {key for key in keys if any(getattr(tag, key) for tag in project.tags.values())}


def checks(project: Project) -> Iterator[Finding]:
    """Every installation finding (module docstring), for the columns the index has."""
    has = columns_in_use(project, ("power_source", "air_supply", "barrier"))
    for tag in project.tags.values():
        if "power_source" in has and tag.wires is Wires.FOUR and not tag.power_source:
            yield _finding(project, tag, "supply.power", "power_source",
                           "a 4-wire device with Power Source blank: the sheet cannot show where it is powered from")
        if "air_supply" in has and is_pneumatic_device(tag) and not tag.air_supply:
            what = "an I/P converter" if tag.kind is TagKind.RELAY else "a pneumatic valve"
            yield _finding(project, tag, "supply.air", "air_supply", f"{what} with Air Supply blank")
        if ("barrier" in has and tag.area_class and not SAFE_AREA.match(tag.area_class)
                and is_electrical(tag) and not tag.barrier):
            yield _finding(project, tag, "area.protection", "barrier",
                           f"in a classified area ({tag.area_class}) with Barrier blank: state the barrier, "
                           "isolator or protection concept (Ex d, Ex e ...)")
        if tag.shield is Shield.BOTH:
            yield _finding(project, tag, "shield.both-ends", "shield",
                           "screen earthed at both ends: earth currents can flow in it; earth it at one end "
                           "(normally the cabinet) unless both ends are on one bonding system")
