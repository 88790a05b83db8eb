"""Rows of the index -> validated records, and a finding for every cell that could not
be converted (the cell is then treated as blank, so later checks say they could not
verify rather than guess).

Rules raised here (all name the cell):

- ``index.no-tag`` (warning): a row with values but no tag; skipped.
- ``index.bad-tag`` (error): the tag does not follow the tag grammar; row skipped.
- ``index.duplicate-tag`` (error): the tag appears on an earlier row; this row skipped.
- ``index.vocabulary`` (error): a value outside its column's vocabulary.
- ``index.not-a-number`` (error): text in a numeric column, or a number that is not finite,
  beyond 1e12 or closer to zero than 1e-9 (a typing or export error, never a setting), or
  an Accuracy % of 0 or less (no reading can meet a tolerance of nothing).
- ``index.unprintable`` (warning): control or direction-override characters, removed
  from the cell (no sheet, drawing or workbook can carry them).
- ``index.long-text`` (warning): a text cell past 10,000 characters, cut with a mark.
- ``index.read`` (warning): something the reader noticed (a formula with no cached value).
"""

from __future__ import annotations

import math
import re
from collections import defaultdict
from functools import lru_cache
from typing import Any, Iterable

from loopdocs.core.findings import Finding, Location, Severity
from loopdocs.core.names import BIDI_CONTROLS
from loopdocs.model.records import TAG_FIELDS, Loop, Project, Tag, loop_from_converted, tag_from_converted
from loopdocs.model.tagname import TagKind, TagParts, compile_tag_pattern, parse_tag, tag_kind
from loopdocs.model.vocab import LIST_VOCAB_COLUMNS, VOCAB_COLUMNS
from loopdocs.read import IndexTable
from loopdocs.read.columns import COLUMNS, NUMERIC_KEYS
from loopdocs.read.project_file import ProjectConfig

_NUMBER_TEXT = re.compile(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?")


#: Characters no sheet, drawing or workbook can carry: control characters (XML 1.0 forbids
#: them) and the bidirectional overrides that make text read other than it is stored.
_UNPRINTABLE = re.compile(f"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f{BIDI_CONTROLS}]")


#: Longest text kept from one cell (a Service or Notes cell runs to a few hundred characters;
#: a longer one is a paste gone wrong and would only slow every drawing that wraps it).
MAX_TEXT_CHARS = 10_000
TRUNCATED_MARK = " [...]"


def _printable_row(row: Any, findings: list[Finding], at: Any) -> Any:
    """The row with unprintable characters taken out of its text cells (an
    ``index.unprintable`` warning per cell that had any) and texts longer than
    ``MAX_TEXT_CHARS`` cut with a visible mark (``index.long-text``)."""
    from dataclasses import replace

    values = dict(row.values)
    for key, value in row.values.items():
        if isinstance(value, str) and len(value) > MAX_TEXT_CHARS:
            values[key] = value = value[:MAX_TEXT_CHARS] + TRUNCATED_MARK
            findings.append(Finding(
                "index.long-text", Severity.WARNING,
                f"row {row.row}: text of {len(row.values[key])} characters cut to {MAX_TEXT_CHARS}",
                location=at(row.row, key),
            ))
        if isinstance(value, str) and _UNPRINTABLE.search(value):
            values[key] = _UNPRINTABLE.sub("", value)
            findings.append(Finding(
                "index.unprintable", Severity.WARNING,
                f"row {row.row}: {len(_UNPRINTABLE.findall(value))} control or direction-override character(s) "
                "removed from the cell", location=at(row.row, key),
            ))
    return replace(row, values=values)


#: Largest magnitude taken as a number, and the smallest non-zero one: beyond them a value
#: is a typing or export error, not a setting (a 1e999 is infinite, a 5e-324 has no digits).
NUMBER_LIMIT = 1e12
NUMBER_FLOOR = 1e-9


def to_number(value: Any) -> float:
    """A numeric cell as a float; numbers stored as text are accepted (``" 12.5 "``,
    ``"48 %"``). ``ValueError`` for anything else.

    >>> to_number("48 %")
    48.0
    >>> to_number(7)
    7.0
    """
    if isinstance(value, bool):
        raise ValueError(f"{value!r} is a true/false value, not a number")
    if isinstance(value, (int, float)):
        number = float(value)
    else:
        text = str(value).strip().rstrip("%").strip().replace("\u2212", "-")
        if not _NUMBER_TEXT.fullmatch(text):
            raise ValueError(f"{str(value).strip()!r} is not a number")
        number = float(text)
    if not math.isfinite(number) or abs(number) > NUMBER_LIMIT:
        raise ValueError(f"{str(value).strip()!r} is not a usable number (beyond {NUMBER_LIMIT:g})")
    if 0.0 < abs(number) < NUMBER_FLOOR:
        raise ValueError(f"{str(value).strip()!r} is too close to zero to be a setting (write 0 if zero is meant)")
    return number


def _text(value: Any) -> str:
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    return str(value).strip()


def tag_of_cell(value: Any, upper: bool = True) -> str:
    """A Tag (or Driven By, ``upper``; or Loop) cell as its record holds it: unprintable
    characters taken out, stripped, upper-cased (so ``" tv-3105a"`` names ``TV-3105A``).

    >>> tag_of_cell(" tv-3105a "), tag_of_cell(3105.0)
    ('TV-3105A', '3105')
    """
    if isinstance(value, str) and _UNPRINTABLE.search(value):
        value = _UNPRINTABLE.sub("", value)
    text = _text(value)
    return text.upper() if upper else text


def _convert_uncached(key: str, value: Any) -> Any:
    if key in VOCAB_COLUMNS:
        return VOCAB_COLUMNS[key].parse(_text(value))
    if key in LIST_VOCAB_COLUMNS:
        return LIST_VOCAB_COLUMNS[key].parse_list(_text(value))
    if key in NUMERIC_KEYS:
        number = to_number(value)
        if key in _POSITIVE_KEYS and number <= 0:
            raise ValueError(f"{_text(value)!r} is not a tolerance: {_POSITIVE_KEYS[key]} must be more than 0")
        return number
    return _text(value)


#: Numeric columns that only take a value above zero, by header: a calibration tolerance
#: of 0 % (or less) of span cannot be met by any reading (common practice: tolerances are
#: stated as a positive +/- % of span).
_POSITIVE_KEYS = {"accuracy_pct": "Accuracy % (tolerance, % of span)"}


#: Columns of free text: a text cell is kept as read (stripped), nothing to look up.
_PLAIN_TEXT_KEYS = frozenset(
    column.key for column in COLUMNS
    if column.key not in VOCAB_COLUMNS and column.key not in LIST_VOCAB_COLUMNS and column.key not in NUMERIC_KEYS
)


@lru_cache(maxsize=65536)
def _convert_cached(key: str, value: Any, kind: type) -> Any:
    return _convert_uncached(key, value)


def convert(key: str, value: Any) -> Any:
    """A cell of column ``key`` as the record holds it: a vocabulary member, a float or
    stripped text. ``ValueError`` says why a cell cannot be converted.

    Cached on the cell's value and type (an index repeats the same few spellings,
    ranges and units thousands of times; ``1`` and ``True`` are kept apart).

    >>> convert("air_action", "air to open"), convert("cv", "12.5"), convert("jb", 31)
    (<AirAction.ATO: 'ATO'>, 12.5, '31')
    """
    return _convert_cached(key, value, type(value))


def loop_id_for(given: str | None, parts: TagParts) -> tuple[str, bool]:
    """The loop id of a tag and whether the Loop cell agrees with the tag.

    A Loop cell agrees when its number is the tag's loop number and its letters (if
    any) begin with the tag's first letter, and its area prefix (if any) is the tag's:
    ``T-3105``, ``T3105``, ``3105`` and ``TIC-3105`` all agree with ``TV-3105A``, and
    the canonical id ``T-3105`` is used. A Loop cell that disagrees is kept as written
    (the engineer's grouping), and ``loop.mismatch`` reports it.

    >>> loop_id_for("TIC-3105", parse_tag("TV-3105A"))
    ('T-3105', True)
    >>> loop_id_for("T-3106", parse_tag("TV-3105A"))
    ('T-3106', False)
    """
    derived = parts.loop_id
    if not given:
        return derived, True
    folded = _LOOP_SEPARATORS.sub("-", given.strip().upper())
    match = _LOOP_CELL.fullmatch(folded)
    if match:
        area, letters, number = match.group(1) or "", match.group(2), match.group(3)
        agrees = (
            number == parts.number.lstrip("0") or (number == "0" and not parts.number.strip("0"))
        ) and (not letters or letters[0] == parts.variable[0]) and (not area or area == parts.area)
        if agrees:
            return derived, True
    return given.strip(), False


_LOOP_SEPARATORS = re.compile(r"[\s_]+")
_LOOP_CELL = re.compile(r"(?:([0-9A-Z]*[0-9][0-9A-Z]*)-)?([A-Z]*)-?0*([0-9]+)[A-Z]?")

READ_NOTICES_SHOWN_PER_COLUMN = 3


def read_findings(table: IndexTable) -> list[Finding]:
    """One ``index.read`` warning per reader notice; a column with many notices of the
    same kind (a whole formula column without cached values) gives one finding that
    counts them, located at the first cell."""
    by_column: dict[tuple[str, str], list] = defaultdict(list)
    for notice in table.notices:
        by_column[(notice.location.column, notice.message)].append(notice)
    findings: list[Finding] = []
    for (column, message), notices in by_column.items():
        if len(notices) <= READ_NOTICES_SHOWN_PER_COLUMN:
            findings += [Finding("index.read", Severity.WARNING, n.message, location=n.location) for n in notices]
        else:
            rows = sorted(n.location.row for n in notices)
            findings.append(Finding(
                "index.read", Severity.WARNING,
                f"{len(notices)} cells in column {column} (rows {rows[0]} to {rows[-1]}): {message}",
                location=notices[0].location,
            ))
    return findings


def _fields_reporting(row: Any, tag_text: str, parts: TagParts, findings: list[Finding], at: Any) -> dict[str, Any]:
    """The converted cells of a row that has a cell that does not convert: that cell left
    out (treated as blank) and reported (``index.vocabulary`` or ``index.not-a-number``)."""
    fields: dict[str, Any] = {}
    for key, value in row.values.items():
        if key == "tag":
            continue
        try:
            fields[key] = convert(key, value)
        except ValueError as exc:
            rule = "index.vocabulary" if key in VOCAB_COLUMNS or key in LIST_VOCAB_COLUMNS else "index.not-a-number"
            findings.append(Finding(
                rule, Severity.ERROR, f"{tag_text}: {exc}",
                loop=parts.loop_id, tags=(tag_text,), location=at(row.row, key),
            ))
    return fields


def _rows_of(table: IndexTable, release: bool) -> Iterable[Any]:
    """The table's rows in order; with ``release`` each is dropped from the table once
    handed out (the caller owns the table: a large index's rows and records are then
    never all held at once)."""
    if not release:
        yield from table.rows
        return
    rows, table.rows = table.rows, []
    rows.reverse()
    while rows:
        yield rows.pop()


def build_project(
    table: IndexTable, config: ProjectConfig | None = None, release_rows: bool = False
) -> tuple[Project, list[Finding]]:
    """Convert the rows of an index into a ``Project`` and the findings met on the way.
    ``release_rows``: empty ``table.rows`` while converting (for a caller that reads the
    table only to build the project; it halves the peak memory of a large index)."""
    config = config or ProjectConfig()
    pattern = compile_tag_pattern(config.index.tag_pattern)
    findings = read_findings(table)
    tags: dict[str, Tag] = {}
    first_row: dict[str, int] = {}

    def at(row: int, key: str) -> Location | None:
        return table.location(row, key)

    # Tags that hold values in the same columns share one set of the names given (a
    # pydantic record keeps one per record: 2 kB, the largest part of a record).
    shared_names: dict[tuple[str, ...], set[str]] = {}
    fit: dict[tuple[str, ...], bool] = {}  # whether every name of the shape is a field of Tag
    converted, plain = _convert_cached, _PLAIN_TEXT_KEYS
    for row in _rows_of(table, release_rows):
        # one search over the row's texts joined by a newline (a character the search does
        # not look for); a row longer than the longest cell holds is looked at cell by cell
        texts = "\n".join([v for v in row.values.values() if isinstance(v, str)])
        if _UNPRINTABLE.search(texts) or (
                len(texts) > MAX_TEXT_CHARS and any(isinstance(v, str) and len(v) > MAX_TEXT_CHARS for v in row.values.values())):
            row = _printable_row(row, findings, at)
        raw_tag = row.values.get("tag")
        if raw_tag is None:
            findings.append(Finding(
                "index.no-tag", Severity.WARNING,
                f"row {row.row} has values but no tag; it was skipped",
                location=at(row.row, "tag"),
            ))
            continue
        tag_text = tag_of_cell(raw_tag)
        try:
            parts = parse_tag(tag_text, pattern)
        except ValueError as exc:
            findings.append(Finding("index.bad-tag", Severity.ERROR, str(exc), tags=(tag_text,), location=at(row.row, "tag")))
            continue
        if tag_text in first_row:
            findings.append(Finding(
                "index.duplicate-tag", Severity.ERROR,
                f"{tag_text} is already on row {first_row[tag_text]}; this row was skipped",
                loop=parts.loop_id, tags=(tag_text,), location=at(row.row, "tag"),
            ))
            continue
        first_row[tag_text] = row.row

        try:  # every cell converts: one comprehension (text of a plain text column is kept as read)
            fields: dict[str, Any] = {
                key: value.strip() if type(value) is str and key in plain else converted(key, value, type(value))
                for key, value in row.values.items() if key != "tag"
            }
        except ValueError:
            fields = _fields_reporting(row, tag_text, parts, findings, at)
        if "driven_by" in fields:
            fields["driven_by"] = fields["driven_by"].upper()
        loop_given = fields.pop("loop", None)
        loop, _ = loop_id_for(loop_given, parts)
        values = {
            "tag": tag_text, "parts": parts, "kind": tag_kind(parts), "loop": loop,
            "loop_given": loop_given, "row": row.row, "extra": dict(row.extra), **fields,
        }
        shape = tuple(fields)
        names = shared_names.get(shape)
        if names is None:
            names = shared_names[shape] = set(values)
            fit[shape] = names <= TAG_FIELDS
        # every value converted above has the type the record holds: no second validation
        tags[tag_text] = tag_from_converted(values, names) if fit[shape] else Tag(**values)

    project = Project(
        index_path=str(table.path), sheet=table.sheet,
        columns=dict(table.columns), extra_columns=dict(table.extra_columns),
        tags=tags, loops=group_loops(tags.values()), config=config,
    )
    return project, findings


def natural_key(text: str) -> tuple:
    """Sort key that orders ``T-9`` before ``T-10``.

    >>> sorted(["T-10", "T-9", "F-100"], key=natural_key)
    ['F-100', 'T-9', 'T-10']
    """
    return tuple((0, int(piece), "") if piece.isascii() and piece.isdigit() else (1, 0, piece)
                 for piece in _DIGIT_RUNS.split(text) if piece)  # ASCII digits only: "¹" is a digit to isdigit


_DIGIT_RUNS = re.compile(r"([0-9]+)")


def group_loops(tags: Iterable[Tag]) -> dict[str, Loop]:
    """Loops in natural order of their ids, each with its tags in index order."""
    members: dict[str, list[Tag]] = defaultdict(list)
    for tag in tags:
        members[tag.loop].append(tag)
    loops: dict[str, Loop] = {}
    for loop_id in sorted(members, key=natural_key):
        loop_tags = members[loop_id]
        controller = next((t for t in loop_tags if t.kind is TagKind.CONTROLLER and t.service), None)
        first = controller or next((t for t in loop_tags if t.service), None)
        loops[loop_id] = loop_from_converted(loop_id, tuple(t.tag for t in loop_tags), first.service if first else None)
    return loops
