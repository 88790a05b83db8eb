"""Loop diagram layout: where every symbol, line and text of one loop goes, in mm.

The diagram reads left to right through the places a signal passes (docs/design.md
§8.1): field, local panel, junction box, cabinet (marshalling and rack-mounted devices)
and control system, each a vertical band; bands with nothing in them are left out. Each
device of the loop gets a horizontal row whose signal line runs straight through its
junction-box terminal, cabinet terminal and I/O channel to the controller, so lines are
orthogonal and never cross.

The work is split by concern:

- ``loopdocs.draw.stations`` -- the loop's structure from the records: rows of typed
  stations (element, instrument, relay, function, valve, terminal, I/O channel);
- ``loopdocs.draw.devices`` -- the drawing vocabulary: device kind to symbol file, ports
  and builder (measuring elements, valve bodies, actuators, accessories);
- ``loopdocs.draw.clusters`` -- the building blocks (tag bubbles, instruments, terminal
  units, I/O blocks, label helpers);
- ``loopdocs.draw.placement`` -- rows, columns, line labels and routing.

The layout is returned as data (:class:`LoopLayout`, a
:class:`~loopdocs.draw.geometry.Drawing`), so tests check overlaps from the data;
``loopdocs.draw.svg`` writes it. Nothing here is random or dated: the same project gives
the same layout.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from loopdocs.draw.clusters import SERVICE_WRAP_MM, TEXT_MM, fmt_number, loop_text
from loopdocs.draw.geometry import Drawing
from loopdocs.draw.placement import Band, place
from loopdocs.draw.stations import band_of, build_rows, line_kind, series_groups, series_notes
from loopdocs.model.records import Project

__all__ = ["SERVICE_WRAP_MM", "TEXT_MM", "Band", "LoopLayout", "band_of", "fmt_number", "layout_loop",
           "line_kind", "loop_text"]


@dataclass
class LoopLayout(Drawing):
    """The placed diagram of one loop (a :class:`Drawing`) and what it shows."""

    loop_id: str = ""
    bands: list[Band] = field(default_factory=list)
    tags: list[str] = field(default_factory=list)
    """Every tag of the loop, in index order; each has a bubble in the drawing."""


def layout_loop(project: Project, loop_id: str) -> LoopLayout:
    """Place the diagram of loop ``loop_id``: sizes in mm, origin top left.

    Raises KeyError for an unknown loop.
    """
    if loop_id not in project.loops:
        raise KeyError(f"no loop {loop_id!r} in the project")
    rows, parts, fn_row = build_rows(project, loop_id)
    series_notes(rows, project.tags)
    series_groups(rows, project.tags)
    layout = LoopLayout(loop_id=loop_id, tags=[t.tag for t in parts.tags])
    layout.title = f"Loop {loop_id}"
    layout.description = f"Loop diagram of {loop_id}" + (f": {parts.loop_service}" if parts.loop_service else "")
    layout.bands = place(layout, rows, parts, fn_row)
    return layout
