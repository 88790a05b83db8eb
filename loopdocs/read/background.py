"""Reading a project's index while the command imports the rest of loopdocs (the
model, the checks and their libraries).

``start_reading(path)`` starts parsing the workbook's first worksheet on a second thread
(python-calamine parses without the interpreter lock, so with a free processor core the
parse and the imports run side by side), then locates the project and reads its
``loopdocs.toml`` (an error there is raised at once). ``PendingRead.result()`` reads the
index, using the parsed sheet when it is the one the index is on, and returns what
:func:`read_project` returns, or raises what it raises. The rows are turned into the
table on the asking thread, so the two threads never take turns at Python work.
"""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Any

from loopdocs.core.errors import InputError

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")


def locate_project(path: Path) -> tuple[Any, Any]:
    """``(paths, config)``: the project at PATH (index file or folder) located, and its
    ``loopdocs.toml`` read (``ProjectPaths``, ``ProjectConfig``)."""
    from loopdocs.read.project_file import ProjectConfig, load_config, locate

    paths = locate(Path(path))
    config = load_config(paths.config_file) if paths.config_file else ProjectConfig()
    return paths, config


def _guarded(paths: Any, step: Any, *args: Any) -> Any:
    """``step(*args)`` with any failure but an ``InputError`` turned into one (one line)."""
    try:
        return step(*args)
    except InputError:
        raise
    except Exception as exc:  # last line of defence: one line, never a traceback
        raise InputError(f"{paths.index}: could not be read ({type(exc).__name__}: {exc})") from None


def read_table(paths: Any, config: Any, parsed: dict[str, Any] | None = None, scan_formulas: bool = True) -> Any:
    """The project's index read (an ``IndexTable``); ``parsed``: sheets of its workbook
    already parsed; ``scan_formulas``: as ``loopdocs.read.read_index``. ``InputError``
    when it cannot be read; any other failure of the reader is turned into one (one line,
    never a traceback)."""
    from loopdocs.read import read_index

    if parsed and paths.index.suffix.lower() in WORKBOOK_SUFFIXES:
        from loopdocs.read.xlsx import open_sheet, read_open_sheet

        opened = _guarded(paths, open_sheet, paths.index, config.index.sheet, config.columns, parsed)
        return _guarded(paths, read_open_sheet, opened, scan_formulas)
    return _guarded(paths, read_index, paths.index, config.index.sheet, config.columns, scan_formulas)


def read_project(path: Path) -> tuple[Any, Any, Any]:
    """``(paths, config, table)`` of the project at PATH, on this thread."""
    paths, config = locate_project(path)
    return paths, config, read_table(paths, config)


class _FirstSheet:
    """``read.xlsx.parse_first_sheet`` of a workbook file on a daemon thread."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.sheets: dict[str, Any] = {}
        self._thread = threading.Thread(target=self._run, name="loopdocs-parse", daemon=True)
        self._thread.start()

    def _run(self) -> None:
        try:
            from loopdocs.read.xlsx import parse_first_sheet

            self.sheets = parse_first_sheet(self.path)
        except Exception:  # the asking thread then reads the file itself and reports any trouble
            self.sheets = {}

    def result(self) -> dict[str, Any]:
        self._thread.join()
        sheets, self.sheets = self.sheets, {}
        return sheets


class PendingRead:
    """A read of a project's index whose workbook parse may have started (see the
    module docstring)."""

    def __init__(self, paths: Any, config: Any, ahead: _FirstSheet | None = None) -> None:
        self.paths, self.config, self._ahead = paths, config, ahead

    def result(self, scan_formulas: bool = True) -> tuple[Any, Any, Any]:
        """``(paths, config, table)``, or the reader's ``InputError``; ``scan_formulas``:
        as ``loopdocs.read.read_index``."""
        ahead, self._ahead = self._ahead, None
        parsed: dict[str, Any] = {}
        if ahead is not None:
            parsed = ahead.result()
            if not ahead.path.samefile(self.paths.index):
                parsed = {}
        return self.paths, self.config, read_table(self.paths, self.config, parsed, scan_formulas)


#: A parse started before the command line was parsed (:func:`parse_ahead`), not yet claimed.
_STARTED: list[_FirstSheet] = []


def parse_ahead(path: str) -> None:
    """Start parsing the workbook at ``path`` on a second thread before the command line
    library and the commands are imported (``loopdocs.cli`` for ``check`` and ``diff``:
    0.03 to 0.05 s sooner, and both of ``diff``'s workbooks at once); :func:`start_reading`
    of the same file takes it over. A path that is not a workbook file is left alone (the
    command reports it as usual)."""
    candidate = Path(path)
    if candidate.suffix.lower() in WORKBOOK_SUFFIXES and candidate.is_file():
        _STARTED.append(_FirstSheet(candidate))


def _started_for(path: Path) -> _FirstSheet | None:
    """The parse :func:`parse_ahead` started for the file at ``path``, if any (claimed
    once; those started for other files wait for their own claim)."""
    for ahead in list(_STARTED):
        try:
            if ahead.path.samefile(path):
                _STARTED.remove(ahead)
                return ahead
        except OSError:
            pass
    return None


def start_reading(path: Path) -> PendingRead:
    """Start parsing the index workbook at PATH on a second thread (a workbook file given
    directly: a project folder's index is known only from its ``loopdocs.toml``), or take
    over the parse :func:`parse_ahead` started, then locate the project and read its
    config here. ``InputError`` at once for a missing path or a bad ``loopdocs.toml``."""
    path = Path(path)
    ahead = None
    if path.suffix.lower() in WORKBOOK_SUFFIXES and path.is_file():
        ahead = _started_for(path) or _FirstSheet(path)
    paths, config = locate_project(path)
    return PendingRead(paths, config, ahead)
