"""Revision state of the loop sheets: which revision of each loop was issued, when, for
what, and the rows it was issued with (docs/design.md §12).

The state lives in the project folder as ``loopdocs-revisions.toml``, plain TOML written
by :func:`state_text` in one fixed layout: one block per loop, sorted by loop id, no line
shared by two loops, so that two branches that issued different loops merge line by line
without a conflict. Per loop it keeps

- ``revision``, ``date``, ``purpose`` of the last issue and ``content``, the SHA-256 of the
  loop's rows (their cell values only, :func:`content_hash`), so a new loopdocs version or
  stylesheet never bumps a revision;
- ``changed``: the items (tag and column key) changed in the current revision, for the
  revision markers on the sheet;
- ``history``: every revision issued (rev, date, purpose, the changes in words, by,
  checked, approved);
- ``rows``: the cells of each of the loop's tags as issued (``loopdocs.model.changes.plain_cells``),
  the old values the description of the next revision needs.

Everything here is pure except :func:`read_state` and :func:`write_state`.
"""

from __future__ import annotations

import hashlib
import json
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator

from loopdocs.core.errors import InputError
from loopdocs.model.changes import cell_changes, plain_cells
from loopdocs.model.records import Project

STATE_NAME = "loopdocs-revisions.toml"
FIRST_ISSUE = "First issue"

Rows = dict[str, dict[str, str]]
"""Tag -> column key -> cell text (blank cells left out)."""


# --------------------------------------------------------------------------- the sequence


class RevisionScheme(BaseModel):
    """The ``[revisions]`` table of ``loopdocs.toml`` (every key optional)."""

    model_config = ConfigDict(extra="forbid")

    before_construction: str = "A"
    """First revision of a loop issued before construction; later ones count up (A, B, ... Z, AA)."""
    for_construction: str = "0"
    """Revision of a loop's first issue whose purpose is for construction; later ones count up (0, 1, 2...)."""
    construction_words: list[str] = Field(default_factory=lambda: ["construction"])
    """A purpose holding one of these words (any case) is an issue for construction."""
    changes_listed: int = Field(default=3, ge=1, le=20)
    """Changes written per revision entry; the rest are counted ("and 4 more changes")."""

    @field_validator("before_construction", "for_construction")
    @classmethod
    def _countable(cls, value: str) -> str:
        next_revision(value)  # raises ValueError when the value cannot count up
        return value


def revision_scheme(table: dict[str, Any], config_file: Path | str | None = None) -> RevisionScheme:
    """Validate the ``[revisions]`` table; ``InputError`` names the file and the key."""
    try:
        return RevisionScheme.model_validate(table)
    except ValidationError as exc:
        first = exc.errors()[0]
        where = ".".join(["revisions", *(str(part) for part in first["loc"])])
        raise InputError(f"{config_file or 'loopdocs.toml'}: [{where}] {first['msg']}") from None


def next_revision(rev: str) -> str:
    """The revision after ``rev``: its trailing number counts up keeping its width
    (``0`` -> ``1``, ``P09`` -> ``P10``), else its trailing letters count up like a
    spreadsheet column (``A`` -> ``B``, ``Z`` -> ``AA``), case kept. Common practice.

    >>> next_revision("A"), next_revision("Z"), next_revision("0"), next_revision("P09"), next_revision("b")
    ('B', 'AA', '1', 'P10', 'c')
    """
    digits = re.search(r"(\d+)$", rev)
    if digits:
        number = digits.group(1)
        return rev[: digits.start()] + str(int(number) + 1).zfill(len(number))
    letters = re.search(r"([A-Za-z]+)$", rev)
    if not letters:
        raise ValueError(f"revision {rev!r} must end in a number or a letter to count up")
    head, word = rev[: letters.start()], letters.group(1)
    upper = word.isupper()
    value = 0
    for ch in word.upper():
        value = value * 26 + (ord(ch) - 64)
    value += 1
    out = ""
    while value:
        value, rest = divmod(value - 1, 26)
        out = chr(65 + rest) + out
    return head + (out if upper else out.lower())


def is_for_construction(purpose: str, scheme: RevisionScheme) -> bool:
    """Whether a purpose of issue is for construction: one of the scheme's words in it as
    a word of its own ("pre-construction" does not count)."""
    return any(re.search(rf"(?<![\w-]){re.escape(w.strip())}(?![\w-])", purpose, re.IGNORECASE)
               for w in scheme.construction_words if w.strip())


# --------------------------------------------------------------------------- the state


@dataclass(frozen=True)
class HistoryEntry:
    """One revision of one loop."""

    rev: str
    date: str
    purpose: str
    changes: tuple[str, ...] = ()
    by: str = ""
    checked: str = ""
    approved: str = ""

    @property
    def description(self) -> str:
        """The revision-table text: purpose, then the changes (a first issue: the purpose)."""
        changes = [c for c in self.changes if c != FIRST_ISSUE]
        return "; ".join([self.purpose, *changes])


@dataclass(frozen=True)
class ChangedItem:
    """A tag and column changed in the current revision (column ``tag``: a new tag)."""

    tag: str
    field: str


@dataclass(frozen=True)
class LoopState:
    revision: str
    date: str
    purpose: str
    content: str
    history: tuple[HistoryEntry, ...]
    rows: Rows
    changed: tuple[ChangedItem, ...] = ()


@dataclass(frozen=True)
class RevisionState:
    loops: dict[str, LoopState] = field(default_factory=dict)


def loop_rows(project: Project, loop_id: str) -> Rows:
    """The cells of every tag of a loop as text (the rows' values only: no row number)."""
    return {name: plain_cells(project.tags[name]) for name in project.loops[loop_id].tags}


def content_hash(rows: Rows) -> str:
    """SHA-256 of a loop's rows in canonical JSON (sorted keys): equal rows, equal hash,
    whatever their order in the index."""
    text = json.dumps(rows, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


# --------------------------------------------------------------------------- describing a change

_SPANS = (
    (("range_low", "range_high", "units"), "Range"),
    (("dp_low", "dp_high", "dp_units"), "DP range"),
    (("input_low", "input_high", "input_units"), "Input range"),
    (("co_start_pct", "co_end_pct", None), "Controller output"),
    (("travel_start_pct", "travel_end_pct", None), "Valve travel"),
)
_LONGEST_VALUE = 32


def _short(text: str) -> str:
    text = " ".join(text.split())
    return text if len(text) <= _LONGEST_VALUE else text[: _LONGEST_VALUE - 3].rstrip() + "..."


def _span_text(cells: dict[str, str], keys: tuple[str, str, str | None]) -> str:
    """Both ends and the units of a range: ``0-150 degC``, or ``-30 to 150 degC`` when an
    end is negative."""
    low, high = cells.get(keys[0], "?"), cells.get(keys[1], "?")
    if (low, high) == ("?", "?"):
        return ""
    units = cells.get(keys[2], "") if keys[2] else "%"
    joint = " to " if low.startswith("-") or high.startswith("-") else "-"
    return f"{low}{joint}{high} {units}".strip()


def _value_change(what: str, tag: str, old: str, new: str) -> str:
    if not old:
        return f"{what} of {tag} set to {_short(new)}"
    if not new:
        return f"{what} of {tag} cleared (was {_short(old)})"
    if " to " in old + new:
        return f"{what} of {tag} was {_short(old)}, now {_short(new)}"
    return f"{what} of {tag} changed {_short(old)} to {_short(new)}"


def tag_change_lines(tag: str, old: dict[str, str], new: dict[str, str]) -> list[str]:
    """One short line per change of one tag; the ends and units of a range in one line.

    >>> tag_change_lines("TT-1203", {"range_low": "0", "range_high": "150", "units": "degC"},
    ...                  {"range_low": "0", "range_high": "200", "units": "degC", "alarm_h": "180"})
    ['Range of TT-1203 changed 0-150 degC to 0-200 degC', 'Alarm H of TT-1203 set to 180']
    """
    lines, done = [], set()
    for c in cell_changes(old, new):
        if c.key in done:
            continue
        span = next((s for s in _SPANS if c.key in s[0]), None)
        if span is None:
            done.add(c.key)
            lines.append(_value_change(c.column, tag, c.old, c.new))
            continue
        done.update(k for k in span[0] if k)
        lines.append(_value_change(span[1], tag, _span_text(old, span[0]), _span_text(new, span[0])))
    return lines


def _pair_renames(removed: dict[str, dict[str, str]], added: dict[str, dict[str, str]]) -> list[tuple[str, str]]:
    """Removed and added tags with every other cell equal, one to one in natural tag order."""
    from loopdocs.model.from_rows import natural_key

    waiting: dict[str, list[str]] = {}
    for name in sorted(added, key=natural_key):
        waiting.setdefault(json.dumps(added[name], sort_keys=True), []).append(name)
    pairs = []
    for name in sorted(removed, key=natural_key):
        candidates = waiting.get(json.dumps(removed[name], sort_keys=True))
        if candidates:
            pairs.append((name, candidates.pop(0)))
    return pairs


def loop_changes(old: Rows, new: Rows) -> tuple[list[str], list[ChangedItem]]:
    """Every change of one loop's rows in words (tags added, removed, renamed, then each
    changed tag's cells, in natural tag order) and the changed items for the markers."""
    from loopdocs.model.from_rows import natural_key

    gone = {t: old[t] for t in old if t not in new}
    came = {t: new[t] for t in new if t not in old}
    renames = _pair_renames(gone, came)
    for a, b in renames:
        gone.pop(a)
        came.pop(b)
    lines: list[str] = []
    items: list[ChangedItem] = []
    for name in sorted(came, key=natural_key):
        lines.append(f"{name} added")
        items.append(ChangedItem(name, "tag"))
    for name in sorted(gone, key=natural_key):
        lines.append(f"{name} removed")
    for a, b in renames:
        lines.append(f"{a} renamed {b}")
        items.append(ChangedItem(b, "tag"))
    for name in sorted((t for t in new if t in old), key=natural_key):
        lines.extend(tag_change_lines(name, old[name], new[name]))
        items.extend(ChangedItem(name, c.key) for c in cell_changes(old[name], new[name]))
    return lines, items


def capped(lines: list[str], limit: int) -> tuple[str, ...]:
    """At most ``limit`` lines: the first ``limit - 1`` and "and N more changes" when longer.

    >>> capped(["a", "b", "c", "d"], 3)
    ('a', 'b', 'and 2 more changes')
    """
    if len(lines) <= limit:
        return tuple(lines)
    rest = len(lines) - (limit - 1)
    return (*lines[: limit - 1], f"and {rest} more change{'s' if rest != 1 else ''}")


# --------------------------------------------------------------------------- issuing


@dataclass(frozen=True)
class IssuedSheet:
    loop: str
    revision: str
    previous: str
    """Revision before this issue ('' at the loop's first issue)."""


def _next_for(old: LoopState | None, purpose: str, scheme: RevisionScheme) -> str:
    construction = is_for_construction(purpose, scheme)
    if old is None:
        return scheme.for_construction if construction else scheme.before_construction
    issued_for_construction = any(is_for_construction(h.purpose, scheme) for h in old.history)
    if construction and not issued_for_construction:
        return scheme.for_construction
    return next_revision(old.revision)


def issue(state: RevisionState, project: Project, purpose: str, date: str,
          scheme: RevisionScheme | None = None) -> tuple[RevisionState, list[IssuedSheet]]:
    """The state after issuing ``project`` for ``purpose`` on ``date`` (pure): every loop
    whose rows changed since its last issue (or never issued) gets its next revision and a
    history entry describing the change; the others, and loops no longer in the index,
    keep their state. Returns the new state and the sheets issued, in loop order."""
    scheme = scheme or RevisionScheme()
    purpose = " ".join(purpose.split())
    if not purpose:
        raise InputError("--issue needs a purpose of issue, for example \"Issued for construction\"")
    tb = project.config.title_block
    loops = dict(state.loops)
    issued = []
    for loop_id in project.loops:
        rows = loop_rows(project, loop_id)
        content = content_hash(rows)
        old = loops.get(loop_id)
        if old is not None and old.content == content:
            continue
        rev = _next_for(old, purpose, scheme)
        if old is None:
            lines, items = [FIRST_ISSUE], []
        else:
            lines, items = loop_changes(old.rows, rows)
        entry = HistoryEntry(rev, date, purpose, capped(lines, scheme.changes_listed), tb.drawn, tb.checked, tb.approved)
        history = (old.history if old else ()) + (entry,)
        loops[loop_id] = LoopState(rev, date, purpose, content, history, rows, tuple(items))
        issued.append(IssuedSheet(loop_id, rev, old.revision if old else ""))
    return RevisionState(loops), issued


@dataclass(frozen=True)
class IssueSummary:
    """One issue of the package as the loops' histories tell it."""

    date: str
    purpose: str
    revisions: tuple[str, ...]
    sheets: int


def issue_summaries(state: RevisionState) -> list[IssueSummary]:
    """The issues recorded in the state (same date and purpose), oldest first: the
    revisions issued and the number of sheets."""
    seen: dict[tuple[str, str], tuple[list[str], int]] = {}
    for loop in state.loops.values():
        for h in loop.history:
            revs, count = seen.get((h.date, h.purpose), ([], 0))
            if h.rev not in revs:
                revs.append(h.rev)
            seen[(h.date, h.purpose)] = (revs, count + 1)
    return [IssueSummary(d, p, tuple(sorted(revs)), n) for (d, p), (revs, n) in sorted(seen.items())]


# --------------------------------------------------------------------------- the file


def _quote(text: str) -> str:
    """A TOML basic string (json escapes are valid TOML escapes for these characters)."""
    out = json.dumps(text, ensure_ascii=False)
    return out.replace("\x7f", "\\u007f")


_BARE = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(text: str) -> str:
    return text if _BARE.match(text) else _quote(text)


def state_text(state: RevisionState) -> str:
    """The state file's text: a comment, then one block per loop sorted by loop id (natural
    order), the same state always giving the same bytes."""
    from loopdocs.model.from_rows import natural_key

    lines = [
        "# Revision state of the loop sheets, written by 'loopdocs build --issue'.",
        "# One block per loop, sorted by loop id; keep it under version control with the index.",
    ]
    for loop_id in sorted(state.loops, key=natural_key):
        s = state.loops[loop_id]
        head = f"loop.{_quote(loop_id)}"
        lines += ["", f"[{head}]", f"revision = {_quote(s.revision)}", f"date = {_quote(s.date)}",
                  f"purpose = {_quote(s.purpose)}", f"content = {_quote(s.content)}"]
        if s.changed:
            lines.append("changed = [")
            lines += [f"  {{tag = {_quote(c.tag)}, field = {_quote(c.field)}}}," for c in s.changed]
            lines.append("]")
        else:
            lines.append("changed = []")
        for h in s.history:
            lines += ["", f"[[{head}.history]]", f"rev = {_quote(h.rev)}", f"date = {_quote(h.date)}",
                      f"purpose = {_quote(h.purpose)}"]
            lines.append("changes = [")
            lines += [f"  {_quote(c)}," for c in h.changes]
            lines.append("]")
            for name in ("by", "checked", "approved"):
                if getattr(h, name):
                    lines.append(f"{name} = {_quote(getattr(h, name))}")
        for tag in sorted(s.rows, key=natural_key):
            lines += ["", f"[{head}.rows.{_quote(tag)}]"]
            lines += [f"{_key(k)} = {_quote(v)}" for k, v in sorted(s.rows[tag].items())]
    return "\n".join(lines) + "\n"


def _text(value: Any, where: str) -> str:
    if not isinstance(value, str):
        raise ValueError(f"{where} must be text")
    return value


def parse_state(text: str, path: Path | str = STATE_NAME) -> RevisionState:
    """Read the state file's text; ``InputError`` names the file and the loop."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: not valid TOML ({exc}); resolve any merge conflict in it") from None
    loops: dict[str, LoopState] = {}
    for loop_id, block in (data.get("loop") or {}).items():
        try:
            history = tuple(
                HistoryEntry(_text(h.get("rev"), "rev"), _text(h.get("date", ""), "date"),
                             _text(h.get("purpose", ""), "purpose"),
                             tuple(_text(c, "changes") for c in h.get("changes", [])),
                             *(_text(h.get(n, ""), n) for n in ("by", "checked", "approved")))
                for h in block.get("history", []))
            rows = {tag: {k: _text(v, f"rows.{tag}.{k}") for k, v in cells.items()}
                    for tag, cells in block.get("rows", {}).items()}
            changed = tuple(ChangedItem(_text(c["tag"], "changed tag"), _text(c["field"], "changed field"))
                            for c in block.get("changed", []))
            loops[loop_id] = LoopState(_text(block["revision"], "revision"), _text(block.get("date", ""), "date"),
                                       _text(block.get("purpose", ""), "purpose"), _text(block["content"], "content"),
                                       history, rows, changed)
        except (KeyError, TypeError, AttributeError, ValueError) as exc:
            what = f"{exc.args[0]} is missing" if isinstance(exc, KeyError) else str(exc)
            raise InputError(f"{path}: loop {loop_id}: {what}") from None
    return RevisionState(loops)


def read_state(folder: Path) -> RevisionState | None:
    """The state of the project in ``folder``, or ``None`` when nothing was issued yet."""
    path = Path(folder) / STATE_NAME
    if not path.is_file():
        return None
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: cannot read the revision state ({exc})") from None
    return parse_state(text, path)


def write_state(folder: Path, state: RevisionState) -> Path:
    """Write the state file atomically (a complete file or the old one, never half)."""
    from loopdocs.core.files import atomic_write, shareable

    path = Path(folder) / STATE_NAME
    data = state_text(state).encode("utf-8")
    atomic_write(path, lambda tmp: (tmp.write_bytes(data), shareable(tmp)))
    return path
