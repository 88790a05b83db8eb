"""Shared test helpers: write a real index workbook from rows and check it.

``index_files`` (session fixture) writes rows (dicts by column key, as in
``loopdocs.read.columns``) with ``loopdocs.sheets.index_template.write_index_workbook`` into a fresh
``.xlsx`` and returns its path (``write``) or the checked result of
``loopdocs.checks.check_project`` (``check``). Data rows start at spreadsheet row 2
(the header is row 1): the i-th row given (from 0) is on row ``i + 2``.
``IndexFiles.cell(key, i)`` is the ``(sheet, row, column letter)`` of column ``key`` on
the i-th row given, ``IndexFiles.where(finding)`` the same triple for a finding.
"""

from __future__ import annotations

import itertools
from pathlib import Path
from typing import Any, Iterable, Mapping

import pytest


class IndexFiles:
    """Writes indexes into one folder, each under a new name."""

    SHEET = "Index"

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self._numbers = itertools.count(1)

    def write(self, rows: Iterable[Mapping[str, Any]], name: str | None = None) -> Path:
        from loopdocs.sheets.index_template import write_index_workbook

        path = self.folder / (name or f"index_{next(self._numbers)}.xlsx")
        write_index_workbook(path, list(rows), spare_rows=0)
        return path

    def check(self, rows: Iterable[Mapping[str, Any]]):
        """``check_project`` of a new workbook holding ``rows``."""
        from loopdocs.checks import check_project

        return check_project(self.write(rows))

    @staticmethod
    def letter(key: str) -> str:
        """Column letter of a column key in the default template."""
        from openpyxl.utils import get_column_letter

        from loopdocs.read.columns import COLUMNS

        keys = [c.key for c in COLUMNS]
        return get_column_letter(keys.index(key) + 1)

    @classmethod
    def cell(cls, key: str, index: int) -> tuple[str, int, str]:
        """``(sheet, row, letter)`` of column ``key`` on the ``index``-th row given (from 0)."""
        return (cls.SHEET, index + 2, cls.letter(key))

    @staticmethod
    def where(finding) -> tuple[str, int, str] | None:
        """A finding's location as ``(sheet, row, letter)``, to compare with ``cell``."""
        loc = finding.location
        return None if loc is None else (loc.sheet, loc.row, loc.column)


@pytest.fixture(scope="session")
def index_files(tmp_path_factory) -> IndexFiles:
    return IndexFiles(tmp_path_factory.mktemp("indexes"))
