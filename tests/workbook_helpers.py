"""Filling a calibration workbook by Ref, as a technician (or a careless hand) would (openpyxl)."""

from __future__ import annotations

from pathlib import Path

import openpyxl

from loopdocs.sheets.technicians_workbook import HEADER_ROW


class Filler:
    """Edits a workbook by Ref, as a technician (or a careless hand) would."""

    def __init__(self, path: Path):
        self.path = path
        self.wb = openpyxl.load_workbook(path)
        self.where: dict[str, tuple] = {}
        for ws in self.wb.worksheets[1:-1]:
            col = {c.value: c.column for c in ws[HEADER_ROW] if c.value}
            for r in range(HEADER_ROW + 1, ws.max_row + 1):
                ref = ws.cell(r, 1).value
                if isinstance(ref, str) and "/" in ref and " " not in ref:
                    self.where[ref] = (ws, r, col)

    def expected(self, ref: str) -> float:
        ws, r, col = self.where[ref]
        return ws.cell(r, col["Expected"]).value

    def set(self, ref: str, column: str, value) -> None:
        ws, r, col = self.where[ref]
        ws.cell(r, col[column]).value = value

    def fill_all(self, tag: str, offset: float, column: str = "As-Found") -> None:
        for ref in self.where:
            if ref.startswith(tag + "/"):
                self.set(ref, column, self.expected(ref) + offset)

    def save(self, name: str = "filled.xlsx") -> Path:
        out = self.path.parent / name
        self.wb.save(out)
        return out


def by_ref(report):
    return {p.ref: p for t in report.tags for p in t.points}
