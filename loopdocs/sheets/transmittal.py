"""The transmittal of one issue: the loop sheets issued this time (drawing number, loop,
service, revision, previous revision, purpose of issue, date, status) and the sheets
withdrawn (loops removed from the index since their last issue, at their last revision),
the caution of the sheets, the counts, and boxes to sign for issued by, checked and
received by, each with a date (common practice for a document transmittal). Written
beside the package as ``transmittal.xlsx`` and ``transmittal.pdf`` by ``loopdocs build
--issue``; both carry the same content (docs/design.md §12.7).

:func:`transmittal_rows` and :func:`transmittal_facts` are pure; both files are written
with ``atomic_write``.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from loopdocs.core.wording import CAUTION
from loopdocs.model.records import Project
from loopdocs.model.revisions import (STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED, IssuedSheet, LoopState,
                                      RevisionState)

XLSX_NAME = "transmittal.xlsx"
PDF_NAME = "transmittal.pdf"
HEADERS = ("Drawing number", "Loop", "Service", "Revision", "Previous revision", "Purpose of issue", "Date", "Status")
SIGNATURES = ("Issued by", "Checked", "Received by")
"""The signature boxes, each with a name, a signature and a date (common practice)."""
SIGNATURE_FIELDS = ("Name", "Signature", "Date")

STATUS_TEXT = {
    "": "",
    STATUS_NOT_FOR_CONSTRUCTION: "NOT FOR CONSTRUCTION",
    STATUS_RELEASED: "issued, errors released",
}
"""A sheet's status as the drawing list and the sheet words it."""


def withdrawn_text(revision: str) -> str:
    """The status of a withdrawn sheet: it is cancelled at its last revision issued."""
    return f"WITHDRAWN: loop removed from the index (last issued at revision {revision})"


@dataclass(frozen=True)
class TransmittalRow:
    drawing_number: str
    loop: str
    service: str
    revision: str
    previous: str
    purpose: str
    date: str
    status: str = ""
    withdrawn: bool = False

    def cells(self) -> list[str]:
        return [self.drawing_number, self.loop, self.service, self.revision, self.previous, self.purpose, self.date,
                self.status]


def _kept_service(loop: LoopState) -> str:
    """A withdrawn loop's service from its rows as last issued: the first tag, in natural
    order, that has one."""
    from loopdocs.model.from_rows import natural_key

    for tag in sorted(loop.rows, key=natural_key):
        if loop.rows[tag].get("service"):
            return loop.rows[tag]["service"]
    return ""


def transmittal_rows(project: Project, issued: Sequence[IssuedSheet], state: RevisionState) -> list[TransmittalRow]:
    """One row per sheet issued, in loop order, then one per sheet withdrawn (pure)."""
    from loopdocs.render.sheet import drawing_number

    pattern = project.config.title_block.drawing_number
    rows = []
    for sheet in issued:
        loop = state.loops[sheet.loop]
        entry = loop.history[-1]
        if sheet.withdrawn:
            rows.append(TransmittalRow(drawing_number(pattern, sheet.loop), sheet.loop, _kept_service(loop),
                                       sheet.revision, "", entry.purpose, entry.date, withdrawn_text(sheet.revision),
                                       withdrawn=True))
            continue
        service = project.loops[sheet.loop].service if sheet.loop in project.loops else ""
        rows.append(TransmittalRow(drawing_number(pattern, sheet.loop), sheet.loop, service or "", sheet.revision,
                                   sheet.previous, loop.purpose, loop.date, STATUS_TEXT.get(sheet.status, sheet.status)))
    return rows


def transmittal_facts(project: Project, rows: Sequence[TransmittalRow]) -> list[tuple[str, str]]:
    """The head of the transmittal, label and value (blank title-block values and zero
    counts of marked or withdrawn sheets left out)."""
    tb = project.config.title_block
    first = rows[0] if rows else None
    issued = [r for r in rows if not r.withdrawn]
    marked = sum(1 for r in issued if r.status == STATUS_TEXT[STATUS_NOT_FOR_CONSTRUCTION])
    released = sum(1 for r in issued if r.status == STATUS_TEXT[STATUS_RELEASED])
    facts = [("Project", tb.project), ("Client", tb.client), ("Unit", tb.unit),
             ("Purpose of issue", first.purpose if first else ""), ("Date of issue", first.date if first else ""),
             ("Sheets issued", str(len(issued))), ("Sheets withdrawn", str(len(rows) - len(issued)) if len(rows) > len(issued) else ""),
             ("Marked NOT FOR CONSTRUCTION", str(marked) if marked else ""),
             ("Issued with errors released in the project configuration", str(released) if released else "")]
    return [(label, value) for label, value in facts if value != ""]


def _title(rows: Sequence[TransmittalRow]) -> str:
    first = rows[0] if rows else None
    return f"Transmittal: loop sheets {first.purpose.lower() if first else ''}, {first.date if first else ''}".rstrip(", ")


def write_transmittal_xlsx(path: Path, project: Project, rows: Sequence[TransmittalRow]) -> Path:
    """The transmittal as a workbook: the same content as the PDF, every cell text
    (``keep_as_text``: a service or purpose starting with '=' stays text)."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Border, Font, Side

    from loopdocs.core.files import atomic_write, shareable
    from loopdocs.sheets.cells import keep_as_text

    wb = Workbook()
    ws = wb.active
    ws.title = "Transmittal"
    ws.append([_title(rows)])
    ws["A1"].font = Font(bold=True, size=13)
    for label, value in transmittal_facts(project, rows):
        ws.append([label, value])
        ws.cell(ws.max_row, 1).font = Font(bold=True)
    ws.append([])
    ws.append([f"Caution: {CAUTION}"])
    ws.cell(ws.max_row, 1).font = Font(bold=True)
    ws.append([])
    ws.append(list(HEADERS))
    for cell in ws[ws.max_row]:
        cell.font = Font(bold=True)
    ws.freeze_panes = f"A{ws.max_row + 1}"  # a coordinate: a Cell here would push the rows down one
    for row in rows:
        ws.append(row.cells())
        if row.status:
            ws.cell(ws.max_row, len(HEADERS)).font = Font(bold=True)
    ws.append([])
    ws.append(["Signatures", *SIGNATURE_FIELDS])
    for cell in ws[ws.max_row]:
        cell.font = Font(bold=True)
    thin = Side(style="thin")
    for who in SIGNATURES:
        ws.append([who, "", "", ""])
        ws.row_dimensions[ws.max_row].height = 30
        for cell in ws[ws.max_row][:4]:
            cell.border = Border(left=thin, right=thin, top=thin, bottom=thin)
            cell.alignment = Alignment(vertical="top")
    for letter, width in zip("ABCDEFGH", (24, 14, 40, 10, 12, 30, 12, 44)):
        ws.column_dimensions[letter].width = width
    keep_as_text(wb)

    def write(tmp: Path) -> None:
        wb.save(tmp)
        shareable(tmp)

    atomic_write(path, write)
    return path


def transmittal_html(project: Project, settings: Any, rows: Sequence[TransmittalRow]) -> str:
    """The transmittal as HTML for the PDF (pure; the package's templates and style)."""
    from markupsafe import Markup

    from loopdocs import __version__
    from loopdocs.render.sheet import document_author, environment, page_css

    tb = project.config.title_block
    context = {
        "paper": settings.paper,
        "page_css": Markup(page_css(settings)),
        "tb": tb,
        "title": _title(rows),
        "author": document_author(tb, settings),
        "facts": transmittal_facts(project, rows),
        "caution": CAUTION,
        "rows": rows,
        "signatures": SIGNATURES,
        "signature_fields": SIGNATURE_FIELDS,
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
