"""Read a project (an index file, or a folder with ``loopdocs.toml``) into records: the
read and model stages in one call, shared by every command."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Finding
from loopdocs.model.records import Project
from loopdocs.model.tagname import TagPatternError
from loopdocs.read.background import PendingRead, read_project, start_reading


def load_project(path: Path, pending: PendingRead | None = None) -> tuple[Project, list[Finding]]:
    """Read the index at PATH (file or project folder) into records.

    ``pending``: the same read already started on a second thread
    (``loopdocs.read.background.start_reading``), waited for here.
    Returns the project and the findings met while reading and converting it.
    Raises ``InputError`` when the input cannot be read at all.
    """
    paths, config, table = pending.result() if pending is not None else read_project(Path(path))
    return _built(paths, config, table)


def load_pair(old: Path, new: Path) -> tuple[Project, Project]:
    """Two issues of the index (files or project folders) read for comparing them: only the
    rows their comparison needs become records (``loopdocs.model.changed_rows``; every row
    when their ``loopdocs.toml`` give different tag grammars: the only setting records are
    built with; a title block or sheet setting changed between issues cuts as usual). Each
    workbook parses
    on a thread of its own (``loopdocs.read.background``).
    Raises ``InputError`` when either cannot be read at all (the earlier one named first)."""
    from loopdocs.model.changed_rows import rows_to_compare
    from loopdocs.model.tagname import compile_tag_pattern

    earlier, later = start_reading(Path(old)), start_reading(Path(new))
    old_paths, old_config, old_table = earlier.result(scan_formulas=False)  # notices are findings: not compared
    new_paths, new_config, new_table = later.result(scan_formulas=False)
    if old_config.index.tag_pattern == new_config.index.tag_pattern:
        try:
            pattern = compile_tag_pattern(old_config.index.tag_pattern)
        except TagPatternError as exc:
            raise InputError(f"{old_paths.config_file}: [index] {exc}") from None
        old_table, new_table = rows_to_compare(old_table, new_table, pattern)
    return _built(old_paths, old_config, old_table)[0], _built(new_paths, new_config, new_table)[0]


def _built(paths: Any, config: Any, table: Any) -> tuple[Project, list[Finding]]:
    from loopdocs.model.from_rows import build_project

    try:
        return build_project(table, config, release_rows=True)
    except TagPatternError as exc:
        raise InputError(f"{paths.config_file}: [index] {exc}") from None
