"""Tag grammar and the ISA-5.1 identification letters.

Default grammar (docs/design.md §2.4): optional area prefix, function letters, optional separator,
loop number, optional suffix letter(s): ``41-TIC-3105``, ``TIC3105``, ``TV-3105A``.
The first letter, plus a first-letter modifier where one follows (``D`` in ``PDT``), is
the measured variable; the loop id is the area prefix, the measured variable and the
number (``TT-3105``, ``TIC-3105`` and ``TV-3105A`` all belong to loop ``T-3105``).

Letter meanings follow the identification-letter table of ANSI/ISA-5.1-2009 (table 4.1,
from memory): first letters are the measured or initiating variable, succeeding letters
the readout, passive and output functions.

>>> parse_tag("41-TIC-3105")
TagParts(area='41', variable='T', functions='IC', number='3105', suffix='')
>>> parse_tag("PDT-207").loop_id
'PD-207'
>>> tag_kind(parse_tag("TV-3105A"))
<TagKind.FINAL_ELEMENT: 'final element'>
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from enum import Enum
from functools import lru_cache

DEFAULT_TAG_PATTERN = (
    r"(?:(?P<area>[0-9A-Z]*[0-9][0-9A-Z]*)[-_ ])?"
    r"(?P<letters>[A-Z]{1,6})[-_ ]?"
    r"(?P<number>[0-9]{1,6})"
    r"(?:[-_]?(?P<suffix>[A-Z]{1,3}))?"
)
"""The default tag grammar. A project may give its own with the same named groups
(``letters`` and ``number`` required; ``area`` and ``suffix`` optional)."""

FIRST_LETTERS: dict[str, str] = {
    "A": "analysis", "B": "burner, combustion", "C": "user's choice", "D": "user's choice",
    "E": "voltage", "F": "flow", "G": "user's choice", "H": "hand", "I": "current",
    "J": "power", "K": "time, schedule", "L": "level", "M": "user's choice",
    "N": "user's choice", "O": "user's choice", "P": "pressure", "Q": "quantity",
    "R": "radiation", "S": "speed, frequency", "T": "temperature", "U": "multivariable",
    "V": "vibration, machine analysis", "W": "weight, force", "X": "unclassified",
    "Y": "event, state, presence", "Z": "position, dimension",
}
"""ISA-5.1 first letters: the measured or initiating variable."""

VARIABLE_MODIFIERS: dict[str, str] = {
    "D": "differential", "F": "ratio", "J": "scan", "Q": "integral, total",
}
"""First-letter modifiers recognised after the first letter (``PD``, ``FF``, ``FQ``).
``K`` and ``S`` are also succeeding letters (control station, switch) and are read as
such, so ``PSV`` is a pressure safety valve of loop ``P-nnn``."""


class TagKind(str, Enum):
    """What a tag is, from its succeeding letters."""

    TRANSMITTER = "transmitter"
    CONTROLLER = "controller"
    FINAL_ELEMENT = "final element"
    RELAY = "relay/converter"
    SWITCH = "switch"
    ELEMENT = "element"
    INDICATOR = "indicator"
    ALARM = "alarm"
    OTHER = "other"


# Order matters: the first rule whose letter appears among the succeeding letters wins.
# A control valve TCV is a final element although it holds C; an indicating
# transmitter LIT is a transmitter although it holds I.
_KIND_BY_LETTER: tuple[tuple[str, TagKind], ...] = (
    ("V", TagKind.FINAL_ELEMENT),   # valve, damper, louver
    ("Z", TagKind.FINAL_ELEMENT),   # driver, actuator, unclassified final element
    ("Y", TagKind.RELAY),           # relay, compute, convert (I/P)
    ("C", TagKind.CONTROLLER),
    ("K", TagKind.CONTROLLER),      # control station
    ("T", TagKind.TRANSMITTER),
    ("S", TagKind.SWITCH),
    ("E", TagKind.ELEMENT),         # primary element, sensor
    ("W", TagKind.ELEMENT),         # well, probe
    ("O", TagKind.ELEMENT),         # orifice, restriction
    ("I", TagKind.INDICATOR),
    ("R", TagKind.INDICATOR),       # record
    ("G", TagKind.INDICATOR),       # glass, gauge, viewing device
    ("L", TagKind.INDICATOR),       # light
    ("A", TagKind.ALARM),
)


@dataclass(frozen=True, slots=True)
class TagParts:
    area: str
    variable: str
    functions: str
    number: str
    suffix: str

    @property
    def letters(self) -> str:
        return self.variable + self.functions

    @property
    def loop_id(self) -> str:
        """Area prefix, measured variable and number: the loop this tag belongs to."""
        core = f"{self.variable}-{self.number}"
        return f"{self.area}-{core}" if self.area else core

    @property
    def variable_name(self) -> str:
        """``'differential pressure'`` for ``PD``."""
        base = FIRST_LETTERS.get(self.variable[0], "unknown")
        modifier = VARIABLE_MODIFIERS.get(self.variable[1:], "")
        return f"{modifier} {base}".strip() if modifier else base


class TagPatternError(ValueError):
    """The configured tag pattern is not a usable regular expression."""


def compile_tag_pattern(pattern: str | None = None) -> re.Pattern[str]:
    """Compile a tag grammar; it must define the groups ``letters`` and ``number``."""
    text = pattern or DEFAULT_TAG_PATTERN
    try:
        compiled = re.compile(text)
    except re.error as exc:
        raise TagPatternError(f"tag pattern {text!r} is not a valid regular expression: {exc}") from None
    missing = {"letters", "number"} - set(compiled.groupindex)
    if missing:
        raise TagPatternError(f"tag pattern {text!r} lacks the named group(s) {', '.join(sorted(missing))}")
    if _NESTED_QUANTIFIER.search(text):
        raise TagPatternError(
            f"tag pattern {text!r} repeats a group that opens with a repeat (like (A+)+): matching it can take "
            "longer than any index allows; write the group without the inner or the outer repeat")
    return compiled


#: A repeated group that opens with a repeated atom, like ``(A+)+`` or ``([A-Z]+-?)*``: the
#: shape that backtracks catastrophically. ``(-[0-9]+)*`` is fine (each repeat starts with
#: its literal) and is not caught.
_NESTED_QUANTIFIER = re.compile(r"\((?:\?P<\w+>|\?:)?(?:\[[^\]]*\]|\\.|[^()\\])[*+{][^()]*\)(?:[*+]|\{\d*,)")


_DEFAULT = compile_tag_pattern()


def parse_tag(tag: str, pattern: re.Pattern[str] | None = None) -> TagParts:
    """Split a tag into its parts; ``ValueError`` says why a tag does not parse.

    Matching is case-insensitive on the text (tags are upper-cased first).

    >>> parse_tag("tic3105")
    TagParts(area='', variable='T', functions='IC', number='3105', suffix='')
    >>> parse_tag("FFIC-12").variable
    'FF'
    """
    text = str(tag).strip().upper()
    match = (pattern or _DEFAULT).fullmatch(text)
    if match is None:
        raise ValueError(f"tag {str(tag).strip()!r} does not follow the tag grammar (area-LETTERS-number-suffix, e.g. 41-TIC-3105)")
    groups = match.groupdict()
    letters = groups["letters"]
    if len(letters) > 1 and letters[1] in VARIABLE_MODIFIERS and len(letters) > 2:
        variable, functions = letters[:2], letters[2:]
    else:
        variable, functions = letters[:1], letters[1:]
    if not functions:
        raise ValueError(f"tag {str(tag).strip()!r} has no function letters after the measured variable {variable!r}")
    return TagParts(
        area=groups.get("area") or "",
        variable=variable,
        functions=functions,
        number=groups["number"],
        suffix=groups.get("suffix") or "",
    )


_SWITCH_LETTERS = re.compile(r"S[HLOC]*")


def tag_kind(parts: TagParts) -> TagKind:
    """What the tag is, from its succeeding letters (see ``_KIND_BY_LETTER``). A switch
    followed only by its modifiers (H high, L low; O open and C closed on a position
    switch, common practice) stays a switch: ``ZSC`` is a closed-position switch, not a
    controller.

    >>> tag_kind(parse_tag("ZSC-101")), tag_kind(parse_tag("PSHH-2")), tag_kind(parse_tag("TIC-3"))
    (<TagKind.SWITCH: 'switch'>, <TagKind.SWITCH: 'switch'>, <TagKind.CONTROLLER: 'controller'>)
    """
    return _kind_of_functions(parts.functions)


@lru_cache(maxsize=1024)
def _kind_of_functions(functions: str) -> TagKind:
    """:func:`tag_kind` by the succeeding letters alone (an index has a few dozen kinds of them)."""
    if _SWITCH_LETTERS.fullmatch(functions):
        return TagKind.SWITCH
    for letter, kind in _KIND_BY_LETTER:
        if letter in functions:
            return kind
    return TagKind.OTHER
