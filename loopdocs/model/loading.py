"""Read a project (an index file, or a folder with ``loopdocs.toml``) into records: the
read and model stages in one call, shared by every command."""

from __future__ import annotations

from pathlib import Path

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Finding
from loopdocs.model.records import Project
from loopdocs.model.tagname import TagPatternError
from loopdocs.read.background import PendingRead, read_project


def load_project(path: Path, pending: PendingRead | None = None) -> tuple[Project, list[Finding]]:
    """Read the index at PATH (file or project folder) into records.

    ``pending``: the same read already started on a second thread
    (``loopdocs.read.background.start_reading``), waited for here.
    Returns the project and the findings met while reading and converting it.
    Raises ``InputError`` when the input cannot be read at all.
    """
    from loopdocs.model.from_rows import build_project

    paths, config, table = pending.result() if pending is not None else read_project(Path(path))
    try:
        return build_project(table, config, release_rows=True)
    except TagPatternError as exc:
        raise InputError(f"{paths.config_file}: [index] {exc}") from None
