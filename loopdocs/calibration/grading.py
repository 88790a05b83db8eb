"""Judging a returned calibration workbook: pure functions on what ``read_workbook`` found.

Rules (each point is one issued test row):

- **refused**: the row's Ref is missing from the sheets, appears twice, is not in the
  issued record, or its visible expected values (tag, check, point, direction, apply,
  expected, unit, limits) no longer match the record's digest (or the record row its
  own digest). A refused row is reported, never judged.
- a reading cell (As-Found, As-Left) that is blank is **not tested**, never passed;
  one that is not a number is **invalid** (counts as a failure; a tag whose only
  problem is such cells is **invalid entries**, not fail: the readings are unknown);
- a 4-20 mA transmitter output read at or below 3.6 mA or at or above 21 mA is a
  **failure current** (NAMUR NE 43 failure signal: the transmitter reports a fault),
  not a point out of tolerance; it has no error in % of span;
- error, % of span = ``(reading - expected) / output span * 100``; **pass** when
  ``|error| <= tolerance`` (Accuracy % of span; 1e-9 slack for rounding), else **fail**;
  a row issued without a tolerance is **no tolerance** (shown, not passed);
- the point's result is its As-Left reading when there is one, else its As-Found
  (nothing adjusted: as found is as left, common practice); an As-Found failure that
  As-Left corrects is still reported;
- hysteresis at each point read in both directions: ``|up - down| / span * 100`` for
  the As-Found readings and for the judged readings (As-Left, or As-Found where
  nothing was adjusted); judged hysteresis above the tolerance is flagged (reported,
  not a failure: each reading is already judged on its own).

The largest as-found and the largest as-left error of each tag are both reported
(signed, the one of largest magnitude).

Exit code (``VerifyReport.exit_code``): 0 when every tested point passes; 1 when a point
fails, reads a failure current, is invalid, has no tolerance, a row is refused, or no
point at all was tested.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from loopdocs.calc.signals import NE43Levels, ne43_levels
from loopdocs.calibration.workbook_record import CHECK_NAMES, IssuedRow, ReturnedWorkbook, SeenRow, canonical_text

PASS, FAIL, NOT_TESTED, INVALID, NO_TOLERANCE, REFUSED = (
    "pass", "fail", "not tested", "invalid", "no tolerance", "refused",
)
FAILURE_CURRENT = "failure current"
#: Tag status when its only problem is unreadable reading cells.
INVALID_ENTRIES = "invalid entries"
STATUSES = (PASS, FAIL, FAILURE_CURRENT, INVALID, NO_TOLERANCE, NOT_TESTED, REFUSED)
_BAD = (FAIL, FAILURE_CURRENT, INVALID)
_SLACK_PCT = 1e-9


@dataclass(frozen=True)
class Reading:
    """One reading cell judged: value, error in % of span, status."""

    value: float | None
    error_pct: float | None
    status: str

    def as_json(self) -> dict[str, Any]:
        return {"value": self.value, "error_pct_of_span": self.error_pct, "status": self.status}


@dataclass(frozen=True)
class PointResult:
    ref: str
    tag: str
    check: str
    sheet: str
    row: int | None
    percent: float | None
    direction: str
    expected: float | None
    unit: str
    tolerance_pct: float | None
    as_found: Reading | None
    as_left: Reading | None
    status: str
    reason: str = ""

    def as_json(self) -> dict[str, Any]:
        return {
            "ref": self.ref, "tag": self.tag, "check": self.check, "sheet": self.sheet, "row": self.row,
            "percent": self.percent, "direction": self.direction, "expected": {"value": self.expected, "unit": self.unit},
            "tolerance_pct_of_span": self.tolerance_pct,
            "as_found": self.as_found.as_json() if self.as_found else None,
            "as_left": self.as_left.as_json() if self.as_left else None,
            "status": self.status, "reason": self.reason,
        }


@dataclass(frozen=True)
class Hysteresis:
    percent: float
    as_found_pct: float | None
    as_left_pct: float | None
    exceeds_tolerance: bool

    def as_json(self) -> dict[str, Any]:
        return {"percent": self.percent, "as_found_pct_of_span": self.as_found_pct,
                "as_left_pct_of_span": self.as_left_pct, "exceeds_tolerance": self.exceeds_tolerance}


@dataclass(frozen=True)
class TagResult:
    """All points of one tag and check (a valve has a stroke and a loop check)."""

    tag: str
    check: str
    loop: str
    points: tuple[PointResult, ...]
    hysteresis: tuple[Hysteresis, ...]

    @property
    def counts(self) -> dict[str, int]:
        result = {s: 0 for s in STATUSES}
        for p in self.points:
            result[p.status] += 1
        return result

    @property
    def as_found_failures(self) -> int:
        return sum(1 for p in self.points if p.as_found is not None and p.as_found.status in _BAD)

    @property
    def status(self) -> str:
        """refused, failure current, fail, invalid entries, no tolerance, not tested,
        incomplete (some points blank) or pass."""
        c = self.counts
        if c[REFUSED]:
            return REFUSED
        if c[FAILURE_CURRENT]:
            return FAILURE_CURRENT
        if c[FAIL]:
            return FAIL
        if c[INVALID]:
            return INVALID_ENTRIES
        if c[NO_TOLERANCE]:
            return NO_TOLERANCE
        if not c[PASS]:
            return NOT_TESTED
        return "incomplete" if c[NOT_TESTED] else PASS

    @property
    def max_error_pct(self) -> float | None:
        errors = [abs(r.error_pct) for p in self.points for r in (_final(p),) if r is not None and r.error_pct is not None]
        return max(errors) if errors else None

    @property
    def largest_as_found_error_pct(self) -> float | None:
        """The As-Found error of largest magnitude, signed, % of span."""
        return _largest(p.as_found for p in self.points)

    @property
    def largest_as_left_error_pct(self) -> float | None:
        """The As-Left error of largest magnitude, signed, % of span (None: nothing adjusted)."""
        return _largest(p.as_left for p in self.points)

    @property
    def max_hysteresis_pct(self) -> float | None:
        values = [v for h in self.hysteresis for v in (h.as_found_pct, h.as_left_pct) if v is not None]
        return max(values) if values else None

    def as_json(self) -> dict[str, Any]:
        return {
            "tag": self.tag, "check": self.check, "loop": self.loop, "status": self.status,
            "counts": self.counts, "as_found_failures": self.as_found_failures,
            "max_error_pct_of_span": self.max_error_pct,
            "largest_as_found_error_pct_of_span": self.largest_as_found_error_pct,
            "largest_as_left_error_pct_of_span": self.largest_as_left_error_pct,
            "max_hysteresis_pct_of_span": self.max_hysteresis_pct,
            "points": [p.as_json() for p in self.points],
            "hysteresis": [h.as_json() for h in self.hysteresis],
        }


@dataclass(frozen=True)
class VerifyReport:
    path: str
    project: str
    revision: str
    tags: tuple[TagResult, ...]
    unknown_rows: tuple[PointResult, ...] = field(default=())
    """Visible rows with a Ref the record does not know (refused)."""

    @property
    def counts(self) -> dict[str, int]:
        total = {s: 0 for s in STATUSES}
        for t in self.tags:
            for k, v in t.counts.items():
                total[k] += v
        total[REFUSED] += len(self.unknown_rows)
        return total

    @property
    def tested(self) -> int:
        c = self.counts
        return c[PASS] + c[FAIL] + c[FAILURE_CURRENT] + c[INVALID] + c[NO_TOLERANCE]

    @property
    def exit_code(self) -> int:
        c = self.counts
        bad = c[FAIL] + c[FAILURE_CURRENT] + c[INVALID] + c[NO_TOLERANCE] + c[REFUSED]
        return 1 if bad or self.tested == 0 else 0

    def as_json(self) -> dict[str, Any]:
        return {
            "workbook": self.path, "project": self.project, "revision": self.revision,
            "summary": {**self.counts, "tested": self.tested, "exit_code": self.exit_code},
            "tags": [t.as_json() for t in self.tags],
            "unknown_rows": [p.as_json() for p in self.unknown_rows],
        }


# --------------------------------------------------------------------------- judging


def _final(point: PointResult) -> Reading | None:
    if point.as_left is not None and point.as_left.status != NOT_TESTED:
        return point.as_left
    return point.as_found


def _largest(readings: Any) -> float | None:
    errors = [r.error_pct for r in readings if r is not None and r.error_pct is not None]
    return max(errors, key=abs) if errors else None


def judge_reading(
    value: Any, expected: float, span: float, tolerance_pct: float | None, ne43: NE43Levels | None = None
) -> Reading:
    """One reading cell against the expected value (module docstring); with ``ne43``
    (a 4-20 mA output) a reading at or beyond the NAMUR NE 43 failure limits is a
    failure current.

    >>> judge_reading(12.03, 12.0, 16.0, 0.25)
    Reading(value=12.03, error_pct=0.1875, status='pass')
    >>> judge_reading(None, 12.0, 16.0, 0.25).status, judge_reading("OK", 12.0, 16.0, 0.25).status
    ('not tested', 'invalid')
    >>> judge_reading(3.55, 4.0, 16.0, 0.25, ne43_levels()).status
    'failure current'
    """
    if value is None or (isinstance(value, str) and not value.strip()):
        return Reading(None, None, NOT_TESTED)
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        return Reading(None, None, INVALID)  # true/false, a date or time: not a reading
    if isinstance(value, str) and value.strip().startswith("="):
        return Reading(None, None, INVALID)  # a formula is not a reading
    try:
        number = float(str(value).replace(",", ".")) if isinstance(value, str) else float(value)
    except ValueError:
        return Reading(None, None, INVALID)
    if not math.isfinite(number):
        return Reading(None, None, INVALID)
    if ne43 is not None and (number <= ne43.failure_at_or_below_ma or number >= ne43.failure_at_or_above_ma):
        return Reading(number, None, FAILURE_CURRENT)
    error_pct = (number - expected) / span * 100.0 if span else None
    if tolerance_pct is None or error_pct is None:
        return Reading(number, error_pct, NO_TOLERANCE)
    return Reading(number, round(error_pct, 9), PASS if abs(error_pct) <= tolerance_pct + _SLACK_PCT else FAIL)


def _refusal(issued: IssuedRow, seen: list[SeenRow]) -> str:
    """Why a row is refused, or '' when it may be judged."""
    if not seen:
        return "row missing from the sheets"
    if len(seen) > 1:
        where = ", ".join(f"{s.sheet}!{s.row}" for s in seen)
        return f"Ref appears {len(seen)} times ({where})"
    if issued.own_digest() != issued.digest:
        return "the issued record of this row was edited"
    row = seen[0]
    if row.digest() != issued.digest:
        changed = [
            name for name, a, b in (
                ("tag", row.tag, issued.tag), ("check", row.check, issued.check),
                ("point", row.percent, issued.percent), ("direction", row.direction, issued.direction),
                ("apply", row.apply, issued.apply), ("expected", row.expected, issued.expected),
                ("unit", row.unit, issued.unit), ("low limit", row.low, issued.low), ("high limit", row.high, issued.high),
            ) if _differs(a, b)
        ]
        return "expected values edited: " + (", ".join(changed) if changed else "row changed")
    return ""


def _differs(a: Any, b: Any) -> bool:
    return canonical_text(a) != canonical_text(b)


def judge_point(issued: IssuedRow, seen: list[SeenRow]) -> PointResult:
    """One issued row against what came back."""
    reason = _refusal(issued, seen)
    row = seen[0] if len(seen) == 1 else None
    base = dict(
        ref=issued.ref, tag=issued.tag, check=issued.check, sheet=row.sheet if row else issued.sheet,
        row=row.row if row else None, percent=issued.percent, direction=issued.direction,
        expected=issued.expected, unit=issued.unit, tolerance_pct=issued.tolerance_pct,
    )
    if reason:
        return PointResult(**base, as_found=None, as_left=None, status=REFUSED, reason=reason)
    assert row is not None
    ne43 = _ne43_for(issued)
    found = judge_reading(row.as_found, issued.expected, issued.output_span, issued.tolerance_pct, ne43)
    left = judge_reading(row.as_left, issued.expected, issued.output_span, issued.tolerance_pct, ne43)
    final = left if left.status != NOT_TESTED else found
    notes = []
    for label, reading in (("as-found", found), ("as-left", left)):
        if reading.status == FAILURE_CURRENT:
            notes.append(f"{label} failure current {reading.value:g} mA: NE 43 failure signal (the transmitter "
                         "reports a fault; find the fault before calibrating)")
    if left.status == PASS and found.status in _BAD:
        notes.append("as-found " + ("failure current" if found.status == FAILURE_CURRENT else "out of tolerance")
                     + ", corrected")
    elif left.status == NOT_TESTED and found.status != NOT_TESTED:
        notes.append("no As-Left: As-Found stands")
    if final.status == FAIL and issued.check == CHECK_NAMES["fail action"]:
        notes.append(f"valve travel {final.value:g} %: the valve did not reach its fail position "
                     f"({issued.expected:g} % travel)")
    note = "; ".join(notes)
    if final.status == NO_TOLERANCE:
        note = "no tolerance in the index: reading recorded, not judged"
    return PointResult(**base, as_found=found, as_left=left, status=final.status, reason=note)


def _ne43_for(issued: IssuedRow) -> NE43Levels | None:
    """NE 43 levels for a transmitter row whose output signal is 4-20 mA, else None."""
    if issued.check == CHECK_NAMES["transmitter"] and issued.unit == "mA":
        return ne43_levels()
    return None


def _measured(reading: Reading | None) -> bool:
    """A reading with a value that measures the process (not a NE 43 failure current)."""
    return reading is not None and reading.value is not None and reading.status != FAILURE_CURRENT


def hysteresis_of(points: list[PointResult], span: float) -> list[Hysteresis]:
    """``|up - down| / span * 100`` at each percent read in both directions.

    ``as_found_pct`` from the As-Found readings; ``as_left_pct`` from the readings each
    point is judged on (As-Left, or As-Found where nothing was adjusted), which is also
    the one compared with the tolerance. A failure current measures nothing: left out.
    """
    by_pct: dict[float, dict[str, PointResult]] = {}
    for p in points:
        by_pct.setdefault(p.percent, {})[p.direction] = p
    result = []
    for pct, pair in by_pct.items():
        up, down = pair.get("up"), pair.get("down")
        if up is None or down is None or span == 0:
            continue
        values = []
        for a, b in ((up.as_found, down.as_found), (_final(up), _final(down))):
            if _measured(a) and _measured(b):
                values.append(abs(a.value - b.value) / span * 100.0)
            else:
                values.append(None)
        if values == [None, None]:
            continue
        tol = up.tolerance_pct
        exceeds = tol is not None and values[1] is not None and values[1] > tol + _SLACK_PCT
        result.append(Hysteresis(pct, values[0], values[1], exceeds))
    return result


def verify(workbook: ReturnedWorkbook) -> VerifyReport:
    """Judge every issued row of a returned workbook (module docstring)."""
    seen_by_ref: dict[str, list[SeenRow]] = {}
    for row in workbook.seen:
        seen_by_ref.setdefault(row.ref, []).append(row)
    groups: dict[tuple[str, str], list[tuple[IssuedRow, PointResult]]] = {}
    for issued in workbook.issued:
        result = judge_point(issued, seen_by_ref.get(issued.ref, []))
        groups.setdefault((issued.tag, issued.check), []).append((issued, result))
    tags = []
    for (tag, check), items in groups.items():
        points = [r for _, r in items]
        span = items[0][0].output_span
        tags.append(TagResult(tag, check, items[0][0].loop, tuple(points), tuple(hysteresis_of(points, span))))
    known = {i.ref for i in workbook.issued}
    unknown = tuple(
        PointResult(ref=row.ref, tag=str(row.tag or ""), check=str(row.check or ""), sheet=row.sheet, row=row.row,
                    percent=None, direction=str(row.direction or ""), expected=None, unit=str(row.unit or ""),
                    tolerance_pct=None, as_found=None, as_left=None, status=REFUSED,
                    reason="Ref not in the issued record (row added or Ref edited)")
        for row in workbook.seen if row.ref not in known
    )
    return VerifyReport(workbook.path, workbook.project, workbook.revision, tuple(tags), unknown)
