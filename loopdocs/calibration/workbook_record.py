"""The technicians' workbook as data: the rows loopdocs issues and the rows it reads back.

The workbook itself is written and read by ``loopdocs.sheets.technicians_workbook``;
``loopdocs.calibration.grading`` judges what came back. Each issued row carries a digest
of its expected values, so a row edited by hand is refused, not graded.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from typing import Any

#: The check named in the workbook for each kind of calibration table.
CHECK_NAMES = {
    "transmitter": "calibration",
    "sensor": "sensor",
    "converter": "converter",
    "final element": "stroke",
    "fail action": "fail action",
    "switch": "set point",
    "alarm": "alarm",
    "accessory": "accessory",
    "loop check": "loop check",
}


# --------------------------------------------------------------------------- digest


def canonical_text(value: Any) -> str:
    """Canonical text of a cell value for the digest: numbers to 9 significant digits."""
    if value is None or value == "":
        return ""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        value = float(value)
        if value == 0:
            value = 0.0
        return f"{value:.9g}"
    return str(value).strip()


def row_digest(ref: str, tag: str, check: str, percent: Any, direction: str, apply: Any,
               expected: Any, unit: str, low: Any, high: Any) -> str:
    """SHA-256 (first 16 hex digits) of the expected values of one visible row.

    >>> row_digest("TT-1/01", "TT-1", "calibration", 0.0, "up", 0.0, 4.0, "mA", 3.96, 4.04)
    '4c0b131f3c743ec5'
    """
    text = "|".join(canonical_text(v) for v in (ref, tag, check, percent, direction, apply, expected, unit, low, high))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]


# --------------------------------------------------------------------------- rows


@dataclass(frozen=True)
class IssuedRow:
    """One test row as issued (what the record sheet keeps)."""

    ref: str
    sheet: str
    tag: str
    check: str
    loop: str
    percent: float
    direction: str
    apply: float
    apply_unit: str
    expected: float
    unit: str
    low: float | None
    high: float | None
    output_span: float
    tolerance_pct: float | None
    digest: str

    def own_digest(self) -> str:
        return row_digest(self.ref, self.tag, self.check, self.percent, self.direction, self.apply,
                          self.expected, self.unit, self.low, self.high)


@dataclass(frozen=True)
class SeenRow:
    """One test row as found in the returned workbook (cells as read)."""

    ref: str
    sheet: str
    row: int
    tag: Any
    check: Any
    percent: Any
    direction: Any
    apply: Any
    expected: Any
    unit: Any
    low: Any
    high: Any
    as_found: Any
    as_left: Any
    remarks: Any

    def digest(self) -> str:
        return row_digest(self.ref, self.tag, self.check, self.percent, self.direction, self.apply,
                          self.expected, self.unit, self.low, self.high)


@dataclass(frozen=True)
class ReturnedWorkbook:
    """What ``read_workbook`` found: the issued record and the visible rows."""

    path: str
    project: str
    revision: str
    issued: tuple[IssuedRow, ...]
    seen: tuple[SeenRow, ...]
