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
import os
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


_PROCESS: dict[str, object] = {}
"""What this process keeps between documents once :func:`start_worker` ran (its id, the
font configuration, whether it was warmed up)."""


def start_worker() -> None:
    """Keep one weasyprint font configuration (``FontConfiguration``: the Pango font map
    and fontconfig setup) for every document this process renders from now on, instead
    of one per document. Documents keep their own fonts (weasyprint's ``Document.fonts``),
    so each PDF embeds only its own glyphs; the sheets have no ``@font-face`` rules that
    the configuration would collect. The templates' ``sheet.css`` is parsed once too
    (:func:`_keep_stylesheet`). A process forked after this makes its own at its first
    document."""
    _PROCESS["pid"] = os.getpid()
    _PROCESS.pop("fonts", None)
    _PROCESS.pop("stylesheet", None)
    _keep_stylesheet()


SHEET_CSS = TEMPLATES_DIR / "sheet.css"


def plain_stylesheet(text: str) -> bool:
    """Whether a stylesheet holds only style rules, ``@page`` and ``@media`` (no
    ``@font-face``, ``@import``, ``@layer``, ``@counter-style``...: nothing that a parse
    registers outside the stylesheet itself), so that one parse can serve every document."""
    import tinycss2

    def plain(rules) -> bool:  # noqa: ANN001
        for rule in rules:
            if rule.type == "error":
                return False
            if rule.type != "at-rule":
                continue
            if rule.lower_at_keyword not in ("page", "media"):
                return False
            if rule.lower_at_keyword == "media" and rule.content is not None and not plain(
                    tinycss2.parse_rule_list(rule.content, skip_comments=True, skip_whitespace=True)):
                return False
        return True

    return plain(tinycss2.parse_stylesheet(text, skip_comments=True, skip_whitespace=True))


def _keep_stylesheet() -> None:
    """Parse the templates' ``sheet.css`` once per process (:func:`start_worker`) instead of
    once per document. weasyprint makes a ``CSS`` object for each ``<link>`` of a document
    (``weasyprint.css.find_stylesheets``, author origin); this wraps the ``CSS`` that
    function calls: for ``sheet.css`` (unchanged on disk, :func:`plain_stylesheet`) it
    returns a copy of the stylesheet parsed first, its selector matcher shared, its
    ``@page`` rules added to the document's list exactly as a parse adds them. Any other
    stylesheet, another process, or a document not rendered by :func:`html_to_pdf` or
    :func:`sheet_pdf`, gets weasyprint's own ``CSS``."""
    import weasyprint.css as css_module

    real = getattr(css_module.CSS, "loopdocs_real", css_module.CSS)
    if not isinstance(real, type):
        return

    def kept_css(*args, url=None, page_rules=None, layers=None, **options):  # noqa: ANN001, ANN002, ANN003, ANN202
        path = _sheet_css_path(url) if not args and _PROCESS.get("rendering") == os.getpid() else None
        if path is None:
            return real(*args, url=url, page_rules=page_rules, layers=layers, **options)
        stat = path.stat()
        stamp = (str(url), options.get("media_type"), stat.st_size, stat.st_mtime_ns)
        kept = _PROCESS.get("stylesheet")
        if kept is None or kept[0] != stamp:
            if not plain_stylesheet(path.read_text(encoding="utf-8")):
                return real(*args, url=url, page_rules=page_rules, layers=layers, **options)
            own_rules: list = []
            parsed = real(url=url, page_rules=own_rules, layers=[], **options)
            kept = _PROCESS["stylesheet"] = (stamp, parsed, tuple(own_rules))
        _, parsed, rules = kept
        sheet = object.__new__(real)
        sheet.__dict__.update(parsed.__dict__)
        sheet.page_rules = [] if page_rules is None else page_rules
        sheet.page_rules.extend(rules)
        sheet.layers = [] if layers is None else layers
        return sheet

    kept_css.loopdocs_real = real
    css_module.CSS = kept_css


def _sheet_css_path(url) -> Path | None:  # noqa: ANN001
    """The path of ``url`` when it is the templates' ``sheet.css`` (a ``file:`` URL), else ``None``."""
    if not isinstance(url, str) or not url.startswith("file:"):
        return None
    parts = urlsplit(url)
    if parts.netloc not in ("", "localhost") or parts.query or parts.fragment:
        return None
    path = Path(unquote(parts.path))
    return path if path == SHEET_CSS or path.resolve() == SHEET_CSS.resolve() else None


def _font_config():
    """The font configuration kept by :func:`start_worker` in this very process, else
    ``None`` (weasyprint then makes one for the document)."""
    if _PROCESS.get("pid") != os.getpid():
        if "pid" in _PROCESS:  # forked from a process that kept one: keep our own
            start_worker()
        else:
            return None
    fonts = _PROCESS.get("fonts")
    if fonts is None:
        from weasyprint.text.fonts import FontConfiguration

        fonts = _PROCESS["fonts"] = FontConfiguration()
    return fonts


WARM_UP_HTML = '<html><head><link rel="stylesheet" href="sheet.css"></head><body><p>loopdocs 0-9</p></body></html>'


def warm_up() -> None:
    """Lay out and write one line with the sheets' stylesheet, once per process: fonts
    found, the font subsetter imported, before the first sheet (or before forking workers,
    which then start warm)."""
    if _PROCESS.get("warm") == os.getpid():
        return
    quiet_weasyprint()
    html_to_pdf(WARM_UP_HTML)
    _PROCESS["warm"] = os.getpid()


def _document(html: str, fetcher: ProjectFetcher, base_url: Path):
    fonts = _font_config()
    document = HTML(string=html, base_url=str(Path(base_url).resolve()) + "/", url_fetcher=fetcher)
    if fonts is None:
        return document.render()
    _PROCESS["rendering"] = os.getpid()  # the kept sheet.css serves our own documents only
    try:
        return document.render(font_config=fonts)
    finally:
        _PROCESS.pop("rendering", None)


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
