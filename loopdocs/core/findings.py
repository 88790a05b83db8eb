"""Findings: what a check reports, where, and how serious it is.

A finding names its rule (short dotted name of ours, such as ``split.gap``), a severity,
the loop and tags it concerns, a message that states the numbers, and the spreadsheet
cell to fix. The JSON form is the contract of docs/design.md §9.1.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from enum import Enum
from typing import Any, Iterable


class Severity(str, Enum):
    ERROR = "error"
    WARNING = "warning"
    INFO = "info"

    @property
    def rank(self) -> int:
        """0 for error, 1 for warning, 2 for info: sort key, most serious first."""
        return ("error", "warning", "info").index(self.value)


@dataclass(frozen=True)
class Location:
    """A cell of the index: sheet name, 1-based row number, column letter (``"F"``)."""

    sheet: str
    row: int
    column: str

    def __str__(self) -> str:
        return f"{self.sheet}!{self.column}{self.row}"

    def as_json(self) -> dict[str, Any]:
        return {"sheet": self.sheet, "row": self.row, "column": self.column}


@dataclass(frozen=True)
class Acceptance:
    """An engineering decision to accept a finding on purpose (from the project config)."""

    reason: str
    by: str


@dataclass(frozen=True)
class Finding:
    rule: str
    severity: Severity
    message: str
    loop: str | None = None
    tags: tuple[str, ...] = ()
    location: Location | None = None
    accepted: Acceptance | None = None

    @property
    def counts_as_error(self) -> bool:
        """An error that nobody accepted: sets exit code 1."""
        return self.severity is Severity.ERROR and self.accepted is None

    def accept(self, acceptance: Acceptance) -> "Finding":
        return replace(self, accepted=acceptance)

    def sort_key(self) -> tuple:
        loc = self.location
        return (
            self.loop or "",
            self.severity.rank,
            loc.row if loc else 0,
            loc.column if loc else "",
            self.rule,
            self.tags,
        )

    def as_json(self) -> dict[str, Any]:
        data: dict[str, Any] = {
            "rule": self.rule,
            "severity": self.severity.value,
            "loop": self.loop,
            "tags": list(self.tags),
            "message": self.message,
            "location": self.location.as_json() if self.location else None,
        }
        if self.accepted is not None:
            data["accepted"] = {"reason": self.accepted.reason, "by": self.accepted.by}
        return data


@dataclass
class FindingCounts:
    error: int = 0
    warning: int = 0
    info: int = 0
    accepted: int = 0

    @classmethod
    def of(cls, findings: Iterable[Finding]) -> "FindingCounts":
        counts = cls()
        for finding in findings:
            if finding.accepted is not None:
                counts.accepted += 1
            else:
                setattr(counts, finding.severity.value, getattr(counts, finding.severity.value) + 1)
        return counts

    def as_json(self) -> dict[str, int]:
        return {"error": self.error, "warning": self.warning, "info": self.info, "accepted": self.accepted}


def sorted_findings(findings: Iterable[Finding]) -> list[Finding]:
    return sorted(findings, key=Finding.sort_key)
