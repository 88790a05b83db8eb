"""Rules for differential-pressure flow transmitters and their square-root output.

A root-extracting DP flow transmitter (Transfer ``sqrt``) gives an output linear in flow
while the technician applies differential pressure, ``DP / DP_span = (flow / flow_span)^2``
(ISO 5167-1: flow through a DP device is proportional to sqrt(DP)). Its range is written
either as the DP range (pressure units) or as the flow range (flow units, with the DP
range in DP Low/DP High/DP Units). See ``loopdocs.calc.tables.sqrt_flow_table``.

- ``flow.sqrt-units`` (error): Transfer sqrt with Units that are neither a flow nor a
  pressure (``sqrt`` on a temperature or a level range): no table can be right.
- ``flow.sqrt-range`` (error): a square-root range, flow or DP, that does not run from
  0 up (zero flow is zero DP; a root of an offset range has no meaning).
- ``flow.dp-range`` (error): DP Low/DP High/DP Units incomplete, DP Units not a
  pressure, or a DP range that does not run from 0 up.
- ``flow.transfer-blank`` (error): a DP range with a flow range and Transfer blank: the
  transmitter may extract the root or not, and the tables differ (50 % flow is 12 mA
  with the root, 8 mA without), so none is printed.
- ``flow.dp-unused`` (warning): a DP range where it is not used: the range is already
  in pressure units (it is the DP range), or in units that are not a flow.
- ``flow.cutoff`` (error): Low Flow Cutoff % outside 0 to 100 %; (warning) a cut-off
  on a transmitter that does not extract the root.
"""

from __future__ import annotations

import math
from typing import Iterator

from loopdocs.calc.units import is_flow, is_pressure
from loopdocs.core.findings import Finding, Severity
from loopdocs.model.records import Project, Tag
from loopdocs.model.vocab import Transfer


def _finding(project: Project, tag: Tag, rule: str, severity: Severity, key: str, message: str) -> Finding:
    return Finding(rule, severity, f"{tag.tag}: {message}", loop=tag.loop, tags=(tag.tag,),
                   location=project.cell(tag, key))


def _runs_from_zero(low: float | None, high: float | None) -> bool:
    return low == 0.0 and high is not None and math.isfinite(high) and high > 0.0


def checks(project: Project) -> Iterator[Finding]:
    """Every ``flow.*`` finding of the project (module docstring)."""
    for tag in project.tags.values():
        yield from tag_findings(project, tag)


def tag_findings(project: Project, tag: Tag) -> Iterator[Finding]:
    """The ``flow.*`` findings of one row (units are looked at only on rows that need it:
    the unit registry is slow to build and most rows never need it)."""
    sqrt = tag.transfer is Transfer.SQRT
    if not (sqrt or tag.has_dp_range or tag.flow_cutoff_pct is not None):
        return
    units = tag.units or ""
    flow_range, dp_range_in_range = is_flow(units), is_pressure(units)
    if sqrt and units and not (flow_range or dp_range_in_range):
        yield _finding(project, tag, "flow.sqrt-units", Severity.ERROR, "transfer",
                       f"Transfer is sqrt but Units {units!r} is neither a flow nor a pressure; a square-root "
                       "output belongs to a DP flow transmitter ranged in flow units or in differential pressure")
    elif sqrt and tag.has_range and (flow_range or dp_range_in_range) and not _runs_from_zero(tag.range_low, tag.range_high):
        what = "flow" if flow_range else "differential-pressure"
        yield _finding(project, tag, "flow.sqrt-range", Severity.ERROR, "range_low",
                       f"square-root {what} range {tag.range_low:g} to {tag.range_high:g} {units} does not run "
                       "from 0 up; zero flow is zero differential pressure")
    if tag.has_dp_range:
        yield from _dp_findings(project, tag, sqrt, flow_range, dp_range_in_range)
    if tag.flow_cutoff_pct is not None:
        cutoff = tag.flow_cutoff_pct
        if not (math.isfinite(cutoff) and 0.0 <= cutoff < 100.0):
            yield _finding(project, tag, "flow.cutoff", Severity.ERROR, "flow_cutoff_pct",
                           f"Low Flow Cutoff {cutoff:g} % is outside 0 to 100 % of flow")
        elif not sqrt:
            yield _finding(project, tag, "flow.cutoff", Severity.WARNING, "flow_cutoff_pct",
                           f"Low Flow Cutoff {cutoff:g} % on a transmitter whose Transfer is not sqrt; "
                           "the cut-off is not used in its table")


def _dp_findings(project: Project, tag: Tag, sqrt: bool, flow_range: bool, dp_range_in_range: bool) -> Iterator[Finding]:
    if dp_range_in_range or (tag.units and not flow_range):
        yield _finding(project, tag, "flow.dp-unused", Severity.WARNING, "dp_low",
                       f"DP Low/DP High/DP Units given but the range is in {tag.units!r}, not a flow; "
                       "the DP range is not used" + (" (the range itself is the DP range)" if dp_range_in_range else ""))
        return
    missing = [name for name, value in (("DP Low", tag.dp_low), ("DP High", tag.dp_high), ("DP Units", tag.dp_units))
               if value is None or value == ""]
    if missing:
        key = {"DP Low": "dp_low", "DP High": "dp_high", "DP Units": "dp_units"}[missing[0]]
        yield _finding(project, tag, "flow.dp-range", Severity.ERROR, key,
                       f"DP range incomplete: {', '.join(missing)} blank; no DP can be given to apply")
        return
    if not is_pressure(tag.dp_units or ""):
        yield _finding(project, tag, "flow.dp-range", Severity.ERROR, "dp_units",
                       f"DP Units {tag.dp_units!r} is not a pressure unit")
    elif not _runs_from_zero(tag.dp_low, tag.dp_high):
        yield _finding(project, tag, "flow.dp-range", Severity.ERROR, "dp_low",
                       f"DP range {tag.dp_low:g} to {tag.dp_high:g} {tag.dp_units} does not run from 0 up; "
                       "zero flow is zero differential pressure")
    if flow_range and tag.transfer is None:
        yield _finding(project, tag, "flow.transfer-blank", Severity.ERROR, "transfer",
                       f"DP range {tag.dp_low:g} to {tag.dp_high:g} {tag.dp_units} with a flow range and Transfer "
                       "blank: write sqrt if the transmitter extracts the root, linear if the control system does; "
                       "50 % flow is 12 mA in the first case and 8 mA in the second, so no table is printed")
