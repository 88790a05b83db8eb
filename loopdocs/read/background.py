"""Reading a project's index on a second thread while the command imports the rest of
loopdocs (the model, the checks and their libraries).

``start_reading(path)`` locates the project and reads its ``loopdocs.toml`` at once (so
an error there is raised by the caller), then starts reading the index on a daemon
thread; ``PendingRead.result()`` waits for it and returns what :func:`read_project`
returns, or raises what it raised. The workbook parse (python-calamine) and the unzip of
the sheet release the interpreter lock, so with a free processor core they run beside
the imports. The thread imports only the reader's own modules, none of which imports
another in a circle, so the two threads never wait on each other's imports.
"""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Any

from loopdocs.core.errors import InputError
from loopdocs.read.project_file import ProjectConfig, ProjectPaths, load_config, locate


def locate_project(path: Path) -> tuple[ProjectPaths, ProjectConfig]:
    """The project at PATH (index file or folder) located, and its ``loopdocs.toml`` read."""
    paths = locate(Path(path))
    config = load_config(paths.config_file) if paths.config_file else ProjectConfig()
    return paths, config


def read_table(paths: ProjectPaths, config: ProjectConfig) -> Any:
    """The project's index read (an ``IndexTable``). ``InputError`` when it cannot be read;
    any other failure of the reader is turned into one (one line, never a traceback)."""
    from loopdocs.read import read_index

    try:
        return read_index(paths.index, sheet=config.index.sheet, column_map=config.columns)
    except InputError:
        raise
    except Exception as exc:  # last line of defence: one line, never a traceback
        raise InputError(f"{paths.index}: could not be read ({type(exc).__name__}: {exc})") from None


def read_project(path: Path) -> tuple[ProjectPaths, ProjectConfig, Any]:
    """``(paths, config, table)`` of the project at PATH, on this thread."""
    paths, config = locate_project(path)
    return paths, config, read_table(paths, config)


class PendingRead:
    """:func:`read_table` running on a daemon thread (see the module docstring)."""

    def __init__(self, paths: ProjectPaths, config: ProjectConfig) -> None:
        self.paths, self.config = paths, config
        self._table: Any = None
        self._error: BaseException | None = None
        self._thread = threading.Thread(target=self._run, name="loopdocs-read", daemon=True)
        self._thread.start()

    def _run(self) -> None:
        try:
            self._table = read_table(self.paths, self.config)
        except BaseException as exc:  # handed to the caller by result()
            self._error = exc

    def result(self) -> tuple[ProjectPaths, ProjectConfig, Any]:
        """Wait for the read; ``(paths, config, table)``, or raise the reader's error."""
        self._thread.join()
        if self._error is not None:
            error, self._error = self._error, None
            raise error
        table, self._table = self._table, None  # handed over, not kept alive with the records
        return self.paths, self.config, table


def start_reading(path: Path) -> PendingRead:
    """Locate the project at PATH and read its config here, then read its index on a
    second thread. ``InputError`` at once for a missing path or a bad ``loopdocs.toml``."""
    return PendingRead(*locate_project(path))
