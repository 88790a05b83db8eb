"""The issue package: cover sheet and drawing list, then the loop sheets in loop order,
joined into one PDF with a bookmark per loop and the document metadata.

:func:`front_html` is pure (rows in, HTML out); :func:`write_package` joins the front
matter and the per-loop PDFs with :class:`loopdocs.render.pdfjoin.PdfJoin`, streaming, and
writes the result with ``atomic_write`` (never a half-written package).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from loopdocs import __version__
from loopdocs.core.files import atomic_write
from loopdocs.core.wording import CAUTION
from loopdocs.read.project_file import TitleBlock
from loopdocs.render.settings import Revision, SheetSettings
from loopdocs.render.sheet import current_revision, document_author, environment, page_css, revisions


@dataclass(frozen=True)
class ListRow:
    """One line of the drawing list."""

    sheet_no: int
    drawing_number: str
    loop: str
    service: str
    revision: str
    not_for_construction: bool = False
    released_with_errors: bool = False


def document_title(title_block: TitleBlock) -> str:
    return f"{title_block.project}: loop sheets"


def document_subject(title_block: TitleBlock, revision: str, sheet_count: int) -> str:
    unit = f", {title_block.unit}" if title_block.unit else ""
    return f"Instrument loop sheets{unit}, revision {revision}, {sheet_count} sheets"


def document_keywords(title_block: TitleBlock) -> list[str]:
    words = ["loop sheets", "instrumentation", "calibration", "split range"]
    return words + [w for w in (title_block.client, title_block.unit) if w]


def issue_rows(state) -> list[Revision]:  # noqa: ANN001
    """The cover's revision table from a revision state (``loopdocs.model.revisions``): one
    row per issue (same date and purpose), the revisions it issued and how many sheets.

    An issue of loops at different revisions shows them all ("B, 0"); sheets withdrawn
    at an issue (loops removed from the index) are counted apart ("3 sheets, 1 withdrawn");
    an issue that only withdrew sheets shows the revision ``-``.
    """
    from loopdocs.model.revisions import issue_summaries

    rows = []
    for i in issue_summaries(state):
        counts = [f"{i.sheets} sheet{'s' if i.sheets != 1 else ''}"] if i.sheets else []
        if i.withdrawn:
            counts.append(f"{i.withdrawn} withdrawn")
        rows.append(Revision(rev=", ".join(i.revisions) or "-", date=i.date,
                             description=f"{i.purpose} ({', '.join(counts)})"))
    return rows


LIST_ROWS_PER_PART = 250
"""Drawing-list rows laid out per document: a list of thousands of rows is rendered in
parts (the first with the cover sheet), so that memory does not grow with the number of
loops."""


def front_html(title_block: TitleBlock, settings: SheetSettings, rows: Sequence[ListRow], *,
               open_errors: int = 0, open_warnings: int = 0, accepted: int = 0,
               first: int = 0, count: int | None = None, issues: Sequence[Revision] | None = None) -> str:
    """Cover sheet and drawing list of the package (pure). ``first`` and ``count`` select
    the part of the list to lay out; the cover sheet comes with the part that starts at 0.
    ``issues`` (:func:`issue_rows`, when the project has a revision state) replace the
    configured revision table on the cover; each row of the list has its sheet's revision."""
    from markupsafe import Markup

    table = list(issues) if issues else revisions(title_block, settings)
    revision = table[-1].rev
    context = {
        "paper": settings.paper,
        "page_css": Markup(page_css(settings)),
        "tb": title_block,
        "title": document_title(title_block),
        "author": document_author(title_block, settings),
        "subject": document_subject(title_block, revision, len(rows)),
        "keywords": ", ".join(document_keywords(title_block)),
        "revision": revision,
        "revisions": table,
        "issued": bool(issues),
        "rows": rows[first:None if count is None else first + count],
        "cover": first == 0,
        "continued": first > 0,
        "sheet_count": len(rows),
        "not_for_construction": sum(1 for r in rows if r.not_for_construction),
        "released": sum(1 for r in rows if r.released_with_errors),
        "open_errors": open_errors,
        "open_warnings": open_warnings,
        "accepted": accepted,
        "cautions": CAUTION,
        "version": __version__,
    }
    return environment().get_template("front.html").render(context)


FRAGMENT_SUFFIX = ".frag"


def cached_fragment(pdf: Path, fragment_dir: Path | None):
    """The :class:`~loopdocs.render.pdfjoin.Fragment` of ``pdf``, from ``fragment_dir``
    when it was made from this very file (same size and modification time), else made
    now and kept there (pickle, written with ``atomic_write``)."""
    import pickle

    from loopdocs.render.pdfjoin import make_fragment

    stat = pdf.stat()
    stamp = (stat.st_size, stat.st_mtime_ns)
    if fragment_dir is None:
        return make_fragment(pdf.read_bytes())
    cache = fragment_dir / (pdf.name + FRAGMENT_SUFFIX)
    try:
        with open(cache, "rb") as handle:
            kept_stamp, fragment = pickle.load(handle)
        if kept_stamp == stamp:
            return fragment
    except (OSError, EOFError, pickle.UnpicklingError, ValueError, TypeError, AttributeError):
        pass
    fragment = make_fragment(pdf.read_bytes())
    data = pickle.dumps((stamp, fragment), protocol=pickle.HIGHEST_PROTOCOL)
    atomic_write(cache, lambda tmp: tmp.write_bytes(data))
    return fragment


def write_package(path: Path, front_pdfs: Sequence[Path], sheets: Sequence[tuple[Path, str]], *,
                  title_block: TitleBlock, settings: SheetSettings, pdfa: bool = False,
                  fragment_dir: Path | None = None, revision: str | None = None) -> int:
    """Join the front matter (its parts in order) and the sheets (``(pdf path, bookmark
    title)`` in loop order) into ``path``; returns the page count. With ``fragment_dir`` each source is parsed
    once and kept there as a fragment for the next join."""
    from loopdocs.core.files import shareable
    from loopdocs.render.pdfjoin import DocumentInfo, PdfJoin

    revision = revision or current_revision(title_block, settings)
    info = DocumentInfo(
        title=document_title(title_block),
        author=document_author(title_block, settings),
        subject=document_subject(title_block, revision, len(sheets)),
        keywords=document_keywords(title_block),
        creator=f"loopdocs {__version__}",
    )
    pages = 0

    def write(tmp: Path) -> None:
        nonlocal pages
        with open(tmp, "wb") as out:
            join = PdfJoin(out, info, pdfa=pdfa)
            for index, front_pdf in enumerate(front_pdfs):
                join.add(cached_fragment(Path(front_pdf), fragment_dir),
                         bookmark="Cover sheet and drawing list" if index == 0 else None)
            for sheet_path, title in sheets:
                join.add(cached_fragment(Path(sheet_path), fragment_dir), bookmark=title)
            join.close()
            pages = join.page_count
        shareable(tmp)

    atomic_write(Path(path), write)
    return pages
