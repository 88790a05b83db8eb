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
- ``status``: how the sheet was issued when not plainly: ``not for construction`` (error
  findings nobody accepted) or ``errors released`` (released in the project file);
- ``history``: every revision issued (rev, date, purpose, the changes in words, by,
  checked, approved), and a last entry marked ``withdrawn`` when the loop left the index;
- ``rows``: the cells of each of the loop's tags as issued (``loopdocs.model.changes.plain_cells``),
  the old values the description of the next revision needs.

Everything here is pure except :func:`read_state` and :func:`write_state`.
"""

from __future__ import annotations

import hashlib
import json
from json.encoder import encode_basestring as _encode_string
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict, Field, field_validator

from loopdocs.core.errors import InputError
from loopdocs.model.changes import cell_changes, plain_cells
from loopdocs.model.records import Project
from loopdocs.read.project_file import validated

STATE_NAME = "loopdocs-revisions.toml"
FIRST_ISSUE = "First issue"
WITHDRAWN = "Sheet withdrawn: loop removed from the index"

STATUS_NOT_FOR_CONSTRUCTION = "not for construction"
"""A sheet issued with error findings nobody accepted (marked NOT FOR CONSTRUCTION)."""
STATUS_RELEASED = "errors released"
"""A sheet issued with error findings released in the project file (``[sheet] release_with_errors``)."""
STATUSES = ("", STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED)

_STATUS_CHANGE = {
    ("", STATUS_NOT_FOR_CONSTRUCTION): "Marked NOT FOR CONSTRUCTION: unresolved errors",
    (STATUS_RELEASED, STATUS_NOT_FOR_CONSTRUCTION): "Marked NOT FOR CONSTRUCTION: errors no longer released",
    (STATUS_NOT_FOR_CONSTRUCTION, ""): "NOT FOR CONSTRUCTION mark removed",
    (STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED): "NOT FOR CONSTRUCTION mark removed: errors released",
    ("", STATUS_RELEASED): "Issued with errors released",
    (STATUS_RELEASED, ""): "Errors released earlier are resolved",
}

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
    return validated(RevisionScheme, table, config_file, "revisions")


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
    withdrawn: bool = False
    """The loop left the index at this issue: its sheet was withdrawn (``rev``: its last revision)."""

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
    status: str = ""
    """How the last revision was issued: '' or one of ``STATUSES``."""

    @property
    def withdrawn(self) -> bool:
        """The loop left the index and its sheet was withdrawn (its last history entry)."""
        return bool(self.history) and self.history[-1].withdrawn


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
    status: str = ""
    """'' or one of ``STATUSES``: the sheet is issued marked NOT FOR CONSTRUCTION or with errors released."""
    withdrawn: bool = False
    """The loop left the index: its sheet is withdrawn at ``revision``, its last revision issued."""


def _next_for(old: LoopState | None, purpose: str, scheme: RevisionScheme) -> str:
    construction = is_for_construction(purpose, scheme)
    if old is None:
        return scheme.for_construction if construction else scheme.before_construction
    issued_for_construction = any(is_for_construction(h.purpose, scheme) for h in old.history if not h.withdrawn)
    if construction and not issued_for_construction:
        return scheme.for_construction
    return next_revision(old.revision)


def issue(state: RevisionState, project: Project, purpose: str, date: str,
          scheme: RevisionScheme | None = None,
          status: Mapping[str, str] | None = None) -> tuple[RevisionState, list[IssuedSheet]]:
    """The state after issuing ``project`` for ``purpose`` on ``date`` (pure).

    Every loop whose rows or status changed since its last issue, never issued, or back in
    the index after its sheet was withdrawn, gets its next revision and a history entry
    describing the change; the others keep their state. A loop of the state no longer in
    the index gets a last entry ``withdrawn`` at its last revision (once). ``status``: loop
    -> '' or one of ``STATUSES`` as its sheet will be issued (``None``: every loop keeps the
    status it has). Returns the new state and the sheets issued, in loop order, then the
    sheets withdrawn, in loop order."""
    from loopdocs.model.from_rows import natural_key

    scheme = scheme or RevisionScheme()
    purpose = " ".join(purpose.split())
    if not purpose:
        raise InputError("--issue needs a purpose of issue, for example \"Issued for construction\"")
    tb = project.config.title_block
    signed = (tb.drawn, tb.checked, tb.approved)
    loops = dict(state.loops)
    issued = []
    for loop_id in project.loops:
        rows = loop_rows(project, loop_id)
        content = content_hash(rows)
        old = loops.get(loop_id)
        kept_status = old.status if old is not None else ""
        now = kept_status if status is None else status.get(loop_id, "")
        if old is not None and old.content == content and old.status == now and not old.withdrawn:
            continue
        rev = _next_for(old, purpose, scheme)
        if old is None:
            lines, items = [FIRST_ISSUE], []
        else:
            lines, items = loop_changes(old.rows, rows)
            if now != old.status:
                lines.insert(0, _STATUS_CHANGE.get((old.status, now), f"Issued {now or 'without errors'}"))
            if old.withdrawn:
                lines.insert(0, f"Back in the index (sheet withdrawn {old.history[-1].date})")
        entry = HistoryEntry(rev, date, purpose, capped(lines, scheme.changes_listed), *signed)
        history = (old.history if old else ()) + (entry,)
        loops[loop_id] = LoopState(rev, date, purpose, content, history, rows, tuple(items), now)
        issued.append(IssuedSheet(loop_id, rev, old.revision if old else "", now))
    for loop_id in sorted(set(state.loops) - set(project.loops), key=natural_key):
        old = state.loops[loop_id]
        if old.withdrawn:
            continue
        entry = HistoryEntry(old.revision, date, purpose, (WITHDRAWN,), *signed, withdrawn=True)
        loops[loop_id] = replace(old, history=old.history + (entry,), changed=())
        issued.append(IssuedSheet(loop_id, old.revision, old.revision, old.status, withdrawn=True))
    return RevisionState(loops), issued


@dataclass(frozen=True)
class IssueSummary:
    """One issue of the package as the loops' histories tell it."""

    date: str
    purpose: str
    revisions: tuple[str, ...]
    sheets: int
    withdrawn: int = 0
    """Sheets withdrawn at this issue (loops removed from the index)."""


def issue_summaries(state: RevisionState) -> list[IssueSummary]:
    """The issues recorded in the state (same date and purpose), oldest first: the
    revisions issued, the number of sheets issued and of sheets withdrawn."""
    seen: dict[tuple[str, str], list] = {}
    for loop in state.loops.values():
        for h in loop.history:
            revs, counts = seen.setdefault((h.date, h.purpose), [[], [0, 0]])
            if h.withdrawn:
                counts[1] += 1
                continue
            if h.rev not in revs:
                revs.append(h.rev)
            counts[0] += 1
    return [IssueSummary(d, p, tuple(sorted(revs)), n, w) for (d, p), (revs, (n, w)) in sorted(seen.items())]


# --------------------------------------------------------------------------- the file


def _quote(text: str) -> str:
    r"""A TOML basic string: the JSON string encoder (C-accelerated; its escapes are valid
    TOML escapes for these characters), DEL escaped as TOML requires.

    >>> print(_quote('say "hi" \\ bye'), _quote(chr(127)))
    "say \"hi\" \\ bye" "\u007f"
    """
    out = _encode_string(text)
    return out.replace("\x7f", "\\u007f") if "\x7f" in out else out


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
    q = _quote
    for loop_id in sorted(state.loops, key=natural_key):
        s = state.loops[loop_id]
        head = f"loop.{q(loop_id)}"
        lines += ["", f"[{head}]", f"revision = {q(s.revision)}", f"date = {q(s.date)}",
                  f"purpose = {q(s.purpose)}", f"content = {q(s.content)}"]
        if s.status:
            lines.append(f"status = {q(s.status)}")
        if s.changed:
            lines.append("changed = [")
            lines += [f"  {{tag = {q(c.tag)}, field = {q(c.field)}}}," for c in s.changed]
            lines.append("]")
        else:
            lines.append("changed = []")
        for h in s.history:
            lines += ["", f"[[{head}.history]]", f"rev = {q(h.rev)}", f"date = {q(h.date)}",
                      f"purpose = {q(h.purpose)}"]
            lines.append("changes = [")
            lines += [f"  {q(c)}," for c in h.changes]
            lines.append("]")
            for name in ("by", "checked", "approved"):
                if getattr(h, name):
                    lines.append(f"{name} = {q(getattr(h, name))}")
            if h.withdrawn:
                lines.append("withdrawn = true")
        for tag in sorted(s.rows, key=natural_key):
            lines += ["", f"[{head}.rows.{q(tag)}]"]
            lines += [f"{_key(k)} = {q(v)}" for k, v in sorted(s.rows[tag].items())]
    return "\n".join(lines) + "\n"


# Reading: ``tomllib`` is the reference parser, but it reads the 260,000 lines of a 3,000-loop
# state in about 1.2 s. :func:`_read_own_layout` reads the layout :func:`state_text` writes
# (also after a line-based merge) in a fraction of that, and gives up (``None``) on any line
# it does not know, leaving the file to ``tomllib``: a file edited by hand in another TOML
# style still reads, at tomllib's speed. Tests compare both on the same text.

_STRING = r'"(?:[^"\\\x00-\x1f\x7f]|\\["\\bfnrt]|\\u(?![dD][89A-Fa-f])[0-9A-Fa-f]{4})*"'
"""A basic string as :func:`_quote` writes it: the common ground of JSON and TOML (no raw
control character, no surrogate escape), so ``json.loads`` reads it as TOML would."""
_KEY = rf'(?:[A-Za-z0-9_-]+|{_STRING})'
_LOOP_HEAD = re.compile(rf'\[loop\.({_STRING})\]')
_HISTORY_HEAD = re.compile(rf'\[\[loop\.({_STRING})\.history\]\]')
_ROWS_HEAD = re.compile(rf'\[loop\.({_STRING})\.rows\.({_STRING})\]')
_PAIR = re.compile(rf'({_KEY}) = ({_STRING}|true|false|\[\])')
_LIST_ITEM = re.compile(rf'  ({_STRING}),')
_CHANGED_ITEM = re.compile(rf'  \{{tag = ({_STRING}), field = ({_STRING})\}},')


def _read_own_layout(text: str) -> dict[str, Any] | None:
    """The state file's data as ``tomllib.loads`` gives it, when ``text`` is in the layout
    of :func:`state_text` (comments and blank lines anywhere); ``None`` otherwise."""
    from json import loads as json_loads

    def loads(token: str) -> str:  # a string token already matched by _STRING
        return json_loads(token) if "\\" in token else token[1:-1]

    def name(token: str) -> str:
        return loads(token) if token.startswith('"') else token

    loops: dict[str, Any] = {}
    table: dict[str, Any] | None = None
    block: dict[str, Any] | None = None
    open_list: list | None = None
    list_of: str = ""
    try:
        for line in text.split("\n"):
            line = line[:-1] if line.endswith("\r") else line
            if open_list is not None:
                if line == "]":
                    open_list = None
                    continue
                item = (_LIST_ITEM if list_of == "changes" else _CHANGED_ITEM).fullmatch(line)
                if item is None:
                    return None
                if list_of == "changes":
                    open_list.append(loads(item.group(1)))
                else:
                    open_list.append({"tag": loads(item.group(1)), "field": loads(item.group(2))})
                continue
            if not line or line.startswith("#"):
                continue
            if line[0] == "[":
                head = _LOOP_HEAD.fullmatch(line)
                if head:
                    loop_id = loads(head.group(1))
                    if loop_id in loops:
                        return None
                    block = table = loops[loop_id] = {}
                    continue
                head = _HISTORY_HEAD.fullmatch(line)
                if head and block is not None and loads(head.group(1)) == loop_id:
                    table = {}
                    block.setdefault("history", []).append(table)
                    continue
                head = _ROWS_HEAD.fullmatch(line)
                if head and block is not None and loads(head.group(1)) == loop_id:
                    rows = block.setdefault("rows", {})
                    tag = loads(head.group(2))
                    if tag in rows:
                        return None
                    table = rows[tag] = {}
                    continue
                return None
            if table is None:
                return None
            if line.endswith(" = ["):
                key = line[:-4]
                if key not in ("changes", "changed") or key in table:
                    return None
                open_list, list_of = table.setdefault(key, []), key
                continue
            pair = _PAIR.fullmatch(line)
            if pair is None:
                return None
            key, raw = name(pair.group(1)), pair.group(2)
            if key in table:
                return None
            table[key] = loads(raw) if raw[0] == '"' else (raw == "true" if raw[0] != "[" else [])
    except (ValueError, TypeError, AttributeError):  # a value where a table is, or the reverse
        return None
    if open_list is not None:
        return None
    return {"loop": loops} if loops else {}


def _text(value: Any, where: str) -> str:
    if not isinstance(value, str):
        raise ValueError(f"{where} must be text")
    return value


def parse_state(text: str, path: Path | str = STATE_NAME) -> RevisionState:
    """Read the state file's text; ``InputError`` names the file and the loop."""
    data = _read_own_layout(text)
    if data is None:
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
                             *(_text(h.get(n, ""), n) for n in ("by", "checked", "approved")),
                             withdrawn=_flag(h.get("withdrawn", False), "withdrawn"))
                for h in block.get("history", []))
            rows = {tag: {k: _text(v, f"rows.{tag}.{k}") for k, v in cells.items()}
                    for tag, cells in block.get("rows", {}).items()}
            changed = tuple(ChangedItem(_text(c["tag"], "changed tag"), _text(c["field"], "changed field"))
                            for c in block.get("changed", []))
            status = _text(block.get("status", ""), "status")
            if status not in STATUSES:
                raise ValueError(f"status {status!r} is not one of {', '.join(repr(s) for s in STATUSES if s)}")
            loops[loop_id] = LoopState(_text(block["revision"], "revision"), _text(block.get("date", ""), "date"),
                                       _text(block.get("purpose", ""), "purpose"), _text(block["content"], "content"),
                                       history, rows, changed, status)
        except (KeyError, TypeError, AttributeError, ValueError) as exc:
            what = f"{exc.args[0]} is missing" if isinstance(exc, KeyError) else str(exc)
            raise InputError(f"{path}: loop {loop_id}: {what}") from None
    return RevisionState(loops)


def _flag(value: Any, where: str) -> bool:
    if not isinstance(value, bool):
        raise ValueError(f"{where} must be true or false")
    return value


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
