"""HTML to PDF with weasyprint, and nothing fetched from outside the project.

:class:`ProjectFetcher` is the only way weasyprint can load a resource while rendering a
sheet: ``data:`` URIs, and ``file:`` URLs that resolve (symbolic links followed) inside
the allowed folders (the project folder and the package's templates). Everything else
(``http:``, ``https:``, ``ftp:``, a file elsewhere on the disk) is refused and recorded in
:attr:`ProjectFetcher.refused`; weasyprint then renders without it and logs a warning.

weasyprint is imported when this module is imported: keep it out of ``loopdocs check``.
"""

from __future__ import annotations

import logging
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from urllib.parse import unquote, urlsplit

from weasyprint import HTML, Attachment
from weasyprint.urls import URLFetcher

from loopdocs.render.sheet import TEMPLATES_DIR, SheetFrame, SheetPieces, print_zoom, sheet_html

PDFA_VARIANT = "pdf/a-3b"


class ProjectFetcher(URLFetcher):
    """A weasyprint URL fetcher that serves ``data:`` URIs and files inside ``allowed_dirs``."""

    def __init__(self, allowed_dirs: Iterable[Path]) -> None:
        super().__init__(allowed_protocols=("data", "file"), allow_redirects=False, fail_on_errors=False)
        self.allowed_dirs = tuple(Path(d).resolve() for d in allowed_dirs)
        self.refused: list[str] = []

    def allows(self, url: str) -> bool:
        """Whether ``url`` may be fetched (pure: no I/O beyond resolving the path)."""
        parts = urlsplit(url)
        scheme = parts.scheme.lower()
        if scheme == "data":
            return True
        if scheme != "file" or parts.netloc not in ("", "localhost"):
            return False
        path = Path(unquote(parts.path)).resolve()
        return any(path.is_relative_to(folder) for folder in self.allowed_dirs)

    def fetch(self, url: str, headers=None):  # noqa: ANN001 (weasyprint's signature)
        if not self.allows(url):
            self.refused.append(url)
            raise ValueError(f"loopdocs refuses to fetch {url[:80]!r}: only data: URIs and project files")
        return super().fetch(url, headers)


@dataclass(frozen=True)
class JsonAttachment:
    """A JSON file to attach to the PDF (PDF/A-3 associated file, relationship ``Data``)."""

    name: str
    data: bytes
    description: str = ""


def _document(html: str, fetcher: ProjectFetcher, base_url: Path):
    return HTML(string=html, base_url=str(Path(base_url).resolve()) + "/", url_fetcher=fetcher).render()


def _write(document, fetcher: ProjectFetcher, pdfa: bool, attachments: Sequence[JsonAttachment],
           zoom: float = 1.0) -> bytes:
    files = [
        Attachment(string=a.data, name=a.name, description=a.description or None,
                   relationship="Data", url_fetcher=fetcher)
        for a in attachments
    ]
    options = {"attachments": files or None, "pdf_identifier": True if pdfa else None}
    if pdfa:
        options["pdf_variant"] = PDFA_VARIANT
    return document.write_pdf(zoom=zoom, **options)


def html_to_pdf(
    html: str,
    *,
    allowed_dirs: Sequence[Path] = (),
    base_url: Path = TEMPLATES_DIR,
    pdfa: bool = False,
    attachments: Sequence[JsonAttachment] = (),
    fetcher: ProjectFetcher | None = None,
) -> bytes:
    """Render ``html`` to PDF bytes.

    Relative links in ``html`` resolve against ``base_url`` (the templates, so
    ``sheet.css`` is found). ``pdfa`` writes PDF/A-3b (weasyprint's ``pdf/a-3b`` variant:
    sRGB output intent, XMP metadata, file identifier); attachments are embedded in
    either mode (weasyprint Attachment, relationship ``Data`` in PDF/A-3).
    """
    fetcher = fetcher or ProjectFetcher([TEMPLATES_DIR, *allowed_dirs])
    return _write(_document(html, fetcher, base_url), fetcher, pdfa, attachments)


def sheet_pdf(
    pieces: SheetPieces,
    frame: SheetFrame,
    *,
    allowed_dirs: Sequence[Path] = (),
    pdfa: bool = False,
    attachments: Sequence[JsonAttachment] = (),
) -> bytes:
    """One loop sheet as PDF (a sheet whose tables do not fit continues them on a second
    page); an A4 sheet is the A3 layout printed at half size (``sheet.print_zoom``)."""
    fetcher = ProjectFetcher([TEMPLATES_DIR, *allowed_dirs])
    return _write(_document(sheet_html(pieces, frame), fetcher, TEMPLATES_DIR), fetcher, pdfa, attachments,
                  print_zoom(frame.settings))


#: Fonts subset by fontTools instead of the HarfBuzz subsetting library: sheets take about
#: this many times as long (per-sheet profile of weasyprint's ``write_pdf``, docs/performance.md).
FONTTOOLS_SLOWDOWN = 1.7

SUBSETTING_NOTE = (
    "note: the HarfBuzz font subsetting library (libharfbuzz-subset) is not installed, so fonts are "
    f"subset with fontTools and sheets render about {FONTTOOLS_SLOWDOWN:g} times slower (same PDFs); "
    "install it to build faster (Debian, Ubuntu: apt install libharfbuzz-subset0)"
)


def harfbuzz_subsetting() -> bool:
    """Whether weasyprint subsets the fonts it embeds with the HarfBuzz subsetting
    library. The same test weasyprint makes before each subset (``weasyprint.pdf.fonts``):
    the library loaded (``weasyprint.text.ffi.harfbuzz_subset``, ``None`` when the
    system has none) and HarfBuzz 4.1.0 or newer; otherwise it falls back to fontTools."""
    from weasyprint.text.ffi import harfbuzz, harfbuzz_subset

    return harfbuzz_subset is not None and bool(harfbuzz.hb_version_atleast(4, 1, 0))


def subsetting_notes(sheets_rendered: Sequence[str]) -> list[str]:
    """The one line to print after a build that rendered sheets on the slow font path
    (:data:`SUBSETTING_NOTE`), else nothing."""
    return [SUBSETTING_NOTE] if sheets_rendered and not harfbuzz_subsetting() else []


def quiet_weasyprint() -> None:
    """Keep weasyprint's per-render chatter (font and CSS notices) off the terminal;
    errors still show."""
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
