"""Calibration tables marked with the index errors of their tags.

A table computed from a row the checks find wrong may carry wrong values: each error
finding (not accepted) that names the table's tag adds the note
``index has errors for this tag: <rule>: <message> (cell <sheet>!<col><row>)`` to it,
so the mark travels into the text, the JSON and the workbook. Skipped tags are marked
the same way in their reason.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Iterable

from loopdocs.calibration.project_tables import CalibrationSet
from loopdocs.core.findings import Finding

MARK = "index has errors for this tag"


def error_notes(findings: Iterable[Finding]) -> dict[str, list[str]]:
    """Tag (upper case) -> one note per error finding that names it."""
    notes: dict[str, list[str]] = {}
    for f in findings:
        if not f.counts_as_error:
            continue
        where = f" (cell {f.location})" if f.location else ""
        for tag in f.tags:
            note = f"{MARK}: {f.rule}: {f.message}{where}"
            bucket = notes.setdefault(tag.upper(), [])
            if note not in bucket:
                bucket.append(note)
    return notes


def mark_index_errors(cset: CalibrationSet, findings: Iterable[Finding]) -> tuple[CalibrationSet, set[str]]:
    """``cset`` with the error notes added to the tables and skipped tags of the tags
    involved, and the set of tags marked."""
    notes = error_notes(findings)
    marked: set[str] = set()
    tables = []
    for t in cset.tables:
        extra = notes.get(t.tag.upper(), [])
        if extra:
            marked.add(t.tag)
            t = replace(t, notes=tuple(extra) + t.notes)
        tables.append(t)
    skipped = []
    for s in cset.skipped:
        extra = notes.get(s.tag.upper(), [])
        if extra:
            marked.add(s.tag)
            s = replace(s, reason="; ".join([s.reason, *extra]))
        skipped.append(s)
    return replace(cset, tables=tuple(tables), skipped=tuple(skipped)), marked
