"""Content-hash cache of the build: re-render only the loops whose inputs changed.

A loop's key is the SHA-256 of everything its sheet is made from:

- its records (the loop, its tags and the tags its tags are driven by or drive), without
  the spreadsheet row numbers, so inserting a row above a loop does not re-render it;
- its findings (without cell locations, for the same reason) and its split groups;
- the sheet frame: title block, sheet settings (only this loop's release reason), the
  sheet's number and the sheet count, the PDF/A choice;
- the environment: loopdocs version, the templates, the symbol library and the loopdocs
  source code (so a code change during development re-renders too).

The manifest ``OUT/.loopdocs-cache/manifest.json`` maps each loop to its key and to the
output file with the size and modification time it was written with; a loop is fresh
when the key matches and the file is still the one written. The manifest is written with
``atomic_write``; a missing or unreadable manifest means everything is rebuilt.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from loopdocs import __version__
from loopdocs.core.files import shareable
from loopdocs.core.files import atomic_write

CACHE_DIR_NAME = ".loopdocs-cache"
MANIFEST_NAME = "manifest.json"
MANIFEST_FORMAT = 1


def digest_json(data: Any) -> str:
    """SHA-256 of a JSON value in canonical form (sorted keys, no spaces).

    >>> digest_json({"b": 1, "a": [1, 2]}) == digest_json({"a": [1, 2], "b": 1})
    True
    """
    text = json.dumps(data, sort_keys=True, separators=(",", ":"), ensure_ascii=False, default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def digest_files(folders: Iterable[Path], patterns: Iterable[str] = ("*",)) -> str:
    """SHA-256 over the relative names and bytes of the files under ``folders`` that match
    ``patterns`` (recursively), in a stable order; ``__pycache__`` is skipped."""
    sha = hashlib.sha256()
    patterns = tuple(patterns)
    for folder in folders:
        folder = Path(folder)
        if not folder.is_dir():
            sha.update(f"missing:{folder.name}".encode())
            continue
        files = sorted({p for pattern in patterns for p in folder.rglob(pattern)
                        if p.is_file() and "__pycache__" not in p.parts})
        for path in files:
            sha.update(str(path.relative_to(folder)).encode("utf-8") + b"\0")
            sha.update(hashlib.sha256(path.read_bytes()).digest())
    return sha.hexdigest()


def environment_digest(templates_dir: Path, symbols_dir: Path | None, source_dir: Path) -> str:
    """The part of every key that does not depend on the loop: version, templates,
    symbols, source code."""
    parts = {
        "version": __version__,
        "templates": digest_files([templates_dir]),
        "symbols": digest_files([symbols_dir]) if symbols_dir is not None else "none",
        "code": digest_files([source_dir], ("*.py",)),
    }
    return digest_json(parts)


def loop_key(environment: str, record: Mapping[str, Any], frame: Mapping[str, Any]) -> str:
    """The key of one sheet: environment digest, the loop's record, its frame."""
    return digest_json({"environment": environment, "record": record, "frame": frame})


@dataclass(frozen=True)
class Entry:
    key: str
    file: str
    """Output path relative to the output folder."""
    size: int
    mtime_ns: int


class Manifest:
    """What the last build wrote, by loop id (plus named artefacts such as the package)."""

    def __init__(self, out_dir: Path) -> None:
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / CACHE_DIR_NAME / MANIFEST_NAME
        self.entries: dict[str, Entry] = {}
        self.artefacts: dict[str, Entry] = {}
        self._load()

    def _load(self) -> None:
        try:
            data = json.loads(self.path.read_text(encoding="utf-8"))
            if data.get("format") != MANIFEST_FORMAT:
                return
            self.entries = {k: Entry(**v) for k, v in data.get("loops", {}).items()}
            self.artefacts = {k: Entry(**v) for k, v in data.get("artefacts", {}).items()}
        except (OSError, ValueError, TypeError, AttributeError):
            self.entries, self.artefacts = {}, {}

    def _is_current(self, entry: Entry | None, key: str) -> bool:
        if entry is None or entry.key != key:
            return False
        try:
            stat = (self.out_dir / entry.file).stat()
        except OSError:
            return False
        return stat.st_size == entry.size and stat.st_mtime_ns == entry.mtime_ns

    def fresh(self, loop_id: str, key: str) -> bool:
        """The loop's output exists, unchanged since it was written with this key."""
        return self._is_current(self.entries.get(loop_id), key)

    def artefact_fresh(self, name: str, key: str) -> bool:
        return self._is_current(self.artefacts.get(name), key)

    def _entry(self, key: str, path: Path) -> Entry:
        stat = path.stat()
        return Entry(key, str(path.relative_to(self.out_dir)), stat.st_size, stat.st_mtime_ns)

    def record(self, loop_id: str, key: str, path: Path) -> None:
        self.entries[loop_id] = self._entry(key, path)

    def record_artefact(self, name: str, key: str, path: Path) -> None:
        self.artefacts[name] = self._entry(key, path)

    def forget(self, loop_id: str) -> Entry | None:
        return self.entries.pop(loop_id, None)

    def save(self) -> None:
        data = {
            "format": MANIFEST_FORMAT,
            "loops": {k: vars(e) for k, e in sorted(self.entries.items())},
            "artefacts": {k: vars(e) for k, e in sorted(self.artefacts.items())},
        }
        text = json.dumps(data, indent=1, sort_keys=True)

        def write(tmp: Path) -> None:
            tmp.write_text(text, encoding="utf-8")
            shareable(tmp)

        atomic_write(self.path, write)
