"""File names from loop ids and tags that are safe on any file system.

A safe name uses only ``A-Z a-z 0-9 . _ -`` (the POSIX portable filename character set,
IEEE Std 1003.1, 3.282), does not start with a dot or a hyphen, does not end with a dot,
is not a name Windows reserves for a device (``CON``, ``PRN``, ``AUX``, ``NUL``,
``COM0``-``COM9``, ``LPT0``-``LPT9``, with or without an extension; Microsoft, "Naming
Files, Paths, and Namespaces") and is at most ``MAX_NAME_CHARS`` long.

A name that had to be changed gets ``-`` and the first 8 hex digits of the SHA-256 of the
original text appended, so two different texts never map to the same name merely because
both were cleaned (``a/b`` and ``a\\b``). :func:`unique_filenames` also separates names
that differ only in letter case, which collide on the case-insensitive file systems of
Windows and macOS.

>>> safe_filename("T-3105")
'T-3105'
>>> safe_filename("../x")
'_x-d6b96a97'
>>> safe_filename("CON")
'_CON-a3dbc4b6'
"""

from __future__ import annotations

import hashlib
import re
import unicodedata
from collections.abc import Iterable

MAX_NAME_CHARS = 64
HASH_CHARS = 8
#: Invisible characters that change the order text is shown in without showing themselves
#: (Unicode Standard Annex #9, Bidirectional Algorithm: the embeddings and overrides
#: U+202A-U+202E and isolates U+2066-U+2069 of its section 2, the implicit marks LRM U+200E,
#: RLM U+200F and ALM U+061C of section 2.6). ``T-1<RLO>fdp.exe`` shows as ``T-1exe.pdf``.
#: They never reach a file name or a workbook sheet name.
BIDI_CONTROLS = "\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069"
_BIDI = re.compile(f"[{BIDI_CONTROLS}]")
_ALLOWED = re.compile(r"[^A-Za-z0-9._-]+")
_WINDOWS_RESERVED = frozenset(
    {"CON", "PRN", "AUX", "NUL", "CONIN$", "CONOUT$"}
    | {f"COM{i}" for i in range(10)}
    | {f"LPT{i}" for i in range(10)}
    | {f"COM{c}" for c in "¹²³"}
    | {f"LPT{c}" for c in "¹²³"}
)


def _digest(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:HASH_CHARS]


def without_bidi_controls(text: str) -> str:
    """``text`` without the direction controls of ``BIDI_CONTROLS`` (dropped, not replaced).

    >>> without_bidi_controls("T-1\u202efdp.exe")
    'T-1fdp.exe'
    """
    return _BIDI.sub("", text)


def _clean(text: str) -> str:
    # Direction controls dropped; letters with accents keep their base letter (Ü -> U);
    # anything else not allowed -> _.
    decomposed = unicodedata.normalize("NFKD", without_bidi_controls(text))
    ascii_text = "".join(ch for ch in decomposed if not unicodedata.combining(ch))
    name = _ALLOWED.sub("_", ascii_text)
    name = name.lstrip(".-").rstrip(".")
    if not name:
        name = "unnamed"
    if name.split(".", 1)[0].upper() in _WINDOWS_RESERVED:
        name = "_" + name
    return name


def safe_filename(text: str, max_chars: int = MAX_NAME_CHARS) -> str:
    """A file name (without a directory) for ``text``, safe on any file system.

    Unchanged when ``text`` is already safe and short enough; otherwise the cleaned text,
    cut so that ``-`` and an 8-digit hash of the original still fit in ``max_chars``.

    >>> safe_filename("a/b") != safe_filename("a\\\\b")
    True
    >>> len(safe_filename("L" * 300))
    64
    """
    if max_chars < HASH_CHARS + 2:
        raise ValueError(f"max_chars must be at least {HASH_CHARS + 2}, got {max_chars}")
    text = str(text)
    name = _clean(text)
    if name == text and len(name) <= max_chars:
        return name
    keep = max_chars - HASH_CHARS - 1
    stem = name[:keep].rstrip(".")
    return f"{stem}-{_digest(text)}"


def unique_filenames(texts: Iterable[str], max_chars: int = MAX_NAME_CHARS) -> dict[str, str]:
    """Safe names for several texts, distinct even on case-insensitive file systems.

    Texts whose safe names are equal ignoring case all get the hash of their own text
    appended. The result maps each distinct text to its name and does not depend on the
    order of ``texts``.

    >>> unique_filenames(["ab", "AB", "T-1"])
    {'AB': 'AB-38164fbd', 'T-1': 'T-1', 'ab': 'ab-fb8e20fc'}
    """
    distinct = sorted(set(str(t) for t in texts))
    first = {text: safe_filename(text, max_chars) for text in distinct}
    by_folded: dict[str, list[str]] = {}
    for text, name in first.items():
        by_folded.setdefault(name.casefold(), []).append(text)
    result: dict[str, str] = {}
    for text, name in first.items():
        if len(by_folded[name.casefold()]) == 1:
            result[text] = name
        else:
            keep = max_chars - HASH_CHARS - 1
            result[text] = f"{name[:keep].rstrip('.')}-{_digest(text)}"
    # Hash suffixes are distinct for distinct texts (up to a 32-bit hash collision); check.
    if len({n.casefold() for n in result.values()}) != len(result):
        raise ValueError("file names still collide after hashing; rename the loops concerned")
    return result
