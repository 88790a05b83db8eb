"""The transmittal list of one issue: the loop sheets issued this time (drawing number,
loop, service, revision, previous revision, purpose of issue, date), written beside the
package as ``transmittal.xlsx`` and ``transmittal.pdf`` by ``loopdocs build --issue``.

:func:`transmittal_rows` is pure; both files are written with ``atomic_write``.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from loopdocs.model.records import Project
from loopdocs.model.revisions import IssuedSheet, RevisionState

XLSX_NAME = "transmittal.xlsx"
PDF_NAME = "transmittal.pdf"
HEADERS = ("Drawing number", "Loop", "Service", "Revision", "Previous revision", "Purpose of issue", "Date")


@dataclass(frozen=True)
class TransmittalRow:
    drawing_number: str
    loop: str
    service: str
    revision: str
    previous: str
    purpose: str
    date: str

    def cells(self) -> list[str]:
        return [self.drawing_number, self.loop, self.service, self.revision, self.previous, self.purpose, self.date]


def transmittal_rows(project: Project, issued: Sequence[IssuedSheet], state: RevisionState) -> list[TransmittalRow]:
    """One row per sheet issued, in loop order (pure)."""
    from loopdocs.render.sheet import drawing_number

    pattern = project.config.title_block.drawing_number
    rows = []
    for sheet in issued:
        loop = state.loops[sheet.loop]
        service = project.loops[sheet.loop].service if sheet.loop in project.loops else ""
        rows.append(TransmittalRow(drawing_number(pattern, sheet.loop), sheet.loop, service or "", sheet.revision,
                                   sheet.previous, loop.purpose, loop.date))
    return rows


def _title(rows: Sequence[TransmittalRow]) -> str:
    first = rows[0] if rows else None
    return f"Transmittal: loop sheets {first.purpose.lower() if first else ''}, {first.date if first else ''}".rstrip(", ")


def write_transmittal_xlsx(path: Path, project: Project, rows: Sequence[TransmittalRow]) -> Path:
    """The transmittal list as a workbook (text cells stay text: ``keep_as_text``)."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    from loopdocs.core.files import atomic_write, shareable
    from loopdocs.sheets.cells import keep_as_text

    tb = project.config.title_block
    wb = Workbook()
    ws = wb.active
    ws.title = "Transmittal"
    ws.append([_title(rows)])
    ws["A1"].font = Font(bold=True, size=13)
    for label, value in (("Project", tb.project), ("Client", tb.client), ("Unit", tb.unit),
                         ("Sheets issued", len(rows))):
        if value != "":
            ws.append([label, value])
    ws.append([])
    ws.append(list(HEADERS))
    for cell in ws[ws.max_row]:
        cell.font = Font(bold=True)
    ws.freeze_panes = ws.cell(ws.max_row + 1, 1)
    for row in rows:
        ws.append(row.cells())
    for letter, width in zip("ABCDEFG", (24, 14, 40, 10, 12, 30, 12)):
        ws.column_dimensions[letter].width = width
    keep_as_text(wb)

    def write(tmp: Path) -> None:
        wb.save(tmp)
        shareable(tmp)

    atomic_write(path, write)
    return path


def transmittal_html(project: Project, settings: Any, rows: Sequence[TransmittalRow]) -> str:
    """The transmittal list as HTML for the PDF (pure; the package's templates and style)."""
    from markupsafe import Markup

    from loopdocs import __version__
    from loopdocs.render.sheet import document_author, environment, page_css

    tb = project.config.title_block
    first = rows[0] if rows else None
    context = {
        "paper": settings.paper,
        "page_css": Markup(page_css(settings)),
        "tb": tb,
        "title": _title(rows),
        "author": document_author(tb, settings),
        "purpose": first.purpose if first else "",
        "date": first.date if first else "",
        "rows": rows,
        "version": __version__,
    }
    return environment().get_template("transmittal.html").render(context)


def write_transmittal(out_dir: Path, project: Project, settings: Any, issued: Sequence[IssuedSheet],
                      state: RevisionState, *, pdfa: bool = False, project_dir: Path | None = None) -> list[Path]:
    """Write ``transmittal.xlsx`` and ``transmittal.pdf`` into ``out_dir``; their paths."""
    from loopdocs.core.files import atomic_write, shareable
    from loopdocs.render.pdf import html_to_pdf

    rows = transmittal_rows(project, issued, state)
    xlsx = write_transmittal_xlsx(Path(out_dir) / XLSX_NAME, project, rows)
    pdf = html_to_pdf(transmittal_html(project, settings, rows), allowed_dirs=[project_dir] if project_dir else [],
                      pdfa=pdfa)
    pdf_path = Path(out_dir) / PDF_NAME
    atomic_write(pdf_path, lambda tmp: (tmp.write_bytes(pdf), shareable(tmp)))
    return [xlsx, pdf_path]
