"""Read a project (an index file, or a folder with ``loopdocs.toml``) into records: the
read and model stages in one call, shared by every command."""

from __future__ import annotations

from pathlib import Path

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Finding
from loopdocs.model.records import Project
from loopdocs.model.tagname import TagPatternError
from loopdocs.read.project_file import load_config, locate
from loopdocs.read.project_file import ProjectConfig


def load_project(path: Path) -> tuple[Project, list[Finding]]:
    """Read the index at PATH (file or project folder) into records.

    Returns the project and the findings met while reading and converting it.
    Raises ``InputError`` when the input cannot be read at all.
    """
    from loopdocs.model.from_rows import build_project
    from loopdocs.read import read_index

    paths = locate(Path(path))
    config = load_config(paths.config_file) if paths.config_file else ProjectConfig()
    try:
        table = read_index(paths.index, sheet=config.index.sheet, column_map=config.columns)
    except InputError:
        raise
    except Exception as exc:  # last line of defence: one line, never a traceback
        raise InputError(f"{paths.index}: could not be read ({type(exc).__name__}: {exc})") from None
    try:
        return build_project(table, config)
    except TagPatternError as exc:
        raise InputError(f"{paths.config_file}: [index] {exc}") from None
