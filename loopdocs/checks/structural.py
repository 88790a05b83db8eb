"""Structural checks of single records.

- ``range.zero-span`` (error): Range Low equals Range High.
- ``range.incomplete`` (error): only one end of the range is given.
- ``range.no-units`` (error): a range without units cannot be calibrated.
- ``loop.mismatch`` (warning): the Loop cell contradicts the loop the tag belongs to.
"""

from __future__ import annotations

from typing import Iterator

from loopdocs.core.findings import Finding, Severity
from loopdocs.model.records import Project


def checks(project: Project) -> Iterator[Finding]:
    for tag in project.tags.values():
        low, high = tag.range_low, tag.range_high
        if (low is None) != (high is None):
            missing = "range_high" if high is None else "range_low"
            yield Finding(
                "range.incomplete", Severity.ERROR,
                f"{tag.tag}: range has only one end ({'Range Low' if low is not None else 'Range High'} = {low if low is not None else high:g})",
                loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, missing),
            )
        elif low is not None and low == high:
            yield Finding(
                "range.zero-span", Severity.ERROR,
                f"{tag.tag}: Range Low and Range High are both {low:g}; the span is zero",
                loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "range_high"),
            )
        if (low is not None or high is not None) and not tag.units:
            yield Finding(
                "range.no-units", Severity.ERROR,
                f"{tag.tag}: range {low if low is not None else ''} to {high if high is not None else ''} has no units",
                loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "units"),
            )
        if tag.loop_given and tag.loop != tag.parts.loop_id:
            yield Finding(
                "loop.mismatch", Severity.WARNING,
                f"{tag.tag}: Loop says {tag.loop_given!r} but the tag belongs to loop {tag.parts.loop_id}",
                loop=tag.loop, tags=(tag.tag,), location=project.cell(tag, "loop"),
            )
