"""The change report of ``loopdocs diff --out``: a workbook with the list of changes and the
rows of the tags concerned, the changed cells highlighted.

Sheets:
- ``Changes``: one line per added, removed or renamed tag and per changed cell (change,
  tag, loop, column, old, new, and the cell: in the later issue, in the earlier one for
  a removed tag), then the split-group values and the calibration tables
  that change as a consequence;
- ``Rows``: the index columns (headers as in the index) with one row per tag concerned:
  added tags (whole row filled green), renamed and changed tags as in the new issue
  (changed cells filled yellow, old value in the cell comment), removed tags as in the
  old issue (whole row filled red).
"""

from __future__ import annotations

from pathlib import Path

from loopdocs.model.changes import ProjectChanges, cell_of, plain
from loopdocs.model.records import Project, Tag

ADDED_FILL = "C6EFCE"
CHANGED_FILL = "FFEB9C"
REMOVED_FILL = "FFC7CE"


def _row_values(tag: Tag, keys: list[str], extra: list[str]) -> list[str]:
    values = [plain(tag.tag if key == "tag" else getattr(tag, key, None)) for key in keys]
    return values + [plain(tag.extra.get(header)) for header in extra]


def write_change_report(path: Path, changes: ProjectChanges, calibration: list[tuple[str, str]],
                        old: Project, new: Project) -> None:
    """Write the change report to ``path`` (atomically)."""
    from openpyxl import Workbook
    from openpyxl.comments import Comment
    from openpyxl.styles import Font, PatternFill

    from loopdocs.core.files import atomic_write
    from loopdocs.read.columns import COLUMNS
    from loopdocs.sheets.cells import keep_as_text

    bold = Font(bold=True)
    wb = Workbook()
    ws = wb.active
    ws.title = "Changes"
    ws.append([f"Changes from {Path(old.index_path).name} to {Path(new.index_path).name}"])
    ws["A1"].font = Font(bold=True, size=13)
    ws.append([])
    ws.append(["Change", "Tag", "Loop", "Column", "Old", "New", "Cell"])
    for cell in ws[ws.max_row]:
        cell.font = bold
    for t in changes.added:
        ws.append(["added", t.tag, t.loop, "", "", "", cell_of(new, t.tag)])
    for t in changes.removed:
        ws.append(["removed", t.tag, t.loop, "", "", "", f"{cell_of(old, t.tag)} (earlier issue)"])
    for r in changes.renamed:
        ws.append(["renamed", r.new, r.new_loop, "Tag", r.old, r.new, cell_of(new, r.new)])
    for c in changes.changed:
        for f in c.fields:
            ws.append(["changed", c.tag, c.loop, f.column, f.old, f.new, cell_of(new, c.tag, f.key)])
    if changes.splits:
        ws.append([])
        ws.append(["Split group", "Controller", "Loop", "What", "Old", "New"])
        for cell in ws[ws.max_row]:
            cell.font = bold
        for s in changes.splits:
            ws.append(["split group", s.controller, s.loop, s.what, s.old, s.new])
    if calibration:
        ws.append([])
        ws.append(["Calibration table", "Tag", "Kind"])
        for cell in ws[ws.max_row]:
            cell.font = bold
        for tag, kind in calibration:
            ws.append(["calibration", tag, kind])
    for letter, width in zip("ABCDEFG", (12, 14, 10, 34, 40, 40, 22)):
        ws.column_dimensions[letter].width = width

    rows = wb.create_sheet("Rows")
    keys = [c.key for c in COLUMNS]
    extra = sorted(set(old.extra_columns) | set(new.extra_columns))  # every unknown column of either issue
    rows.append([c.header for c in COLUMNS] + extra)
    for cell in rows[1]:
        cell.font = bold
    column_of = {key: i + 1 for i, key in enumerate(keys)}
    column_of.update({f"extra:{h}": len(keys) + i + 1 for i, h in enumerate(extra)})
    column_of["loop_given"] = column_of.get("loop", 0)

    def fill_row(colour: str) -> None:
        for cell in rows[rows.max_row]:
            cell.fill = PatternFill("solid", fgColor=colour)

    def mark(key: str, old_value: str) -> None:
        cell = rows.cell(rows.max_row, column_of[key])
        cell.fill = PatternFill("solid", fgColor=CHANGED_FILL)
        cell.comment = Comment(f"was: {old_value}" if old_value else "was blank", "loopdocs")

    for t in changes.added:
        rows.append(_row_values(t, keys, extra))
        fill_row(ADDED_FILL)
    for r in changes.renamed:
        rows.append(_row_values(new.tags[r.new], keys, extra))
        mark("tag", r.old)
    for c in changes.changed:
        rows.append(_row_values(new.tags[c.tag], keys, extra))
        for f in c.fields:
            if column_of.get(f.key):
                mark(f.key, f.old)
    for t in changes.removed:
        rows.append(_row_values(t, keys, extra))
        fill_row(REMOVED_FILL)
    rows.freeze_panes = "B2"
    keep_as_text(wb)
    atomic_write(Path(path), lambda tmp: wb.save(tmp))
