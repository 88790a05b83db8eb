"""One loop sheet as HTML: a pure function of pieces made upstream.

:func:`sheet_html` takes what the other stages made for one loop (the loop diagram SVG
from ``loopdocs.draw``, the range chart SVG of each split group, the calibration tables
in the docs/design.md §9.2 ``calibrate`` JSON shape, the loop's findings) and the sheet's frame
(title block, sheet settings, sheet n of m) and returns the HTML that ``loopdocs.render.pdf``
turns into a PDF page. Nothing here computes engineering values.

Safety: the templates are rendered with jinja2 autoescaping, so every text that came from
the spreadsheet or the config is escaped. The only markup passed through unescaped is the
SVG made by our own draw code, and it is first checked by :func:`trusted_svg` (well-formed
XML, no script, no foreign objects, no links or references outside the document).

Drafting practice (docs/design.md §8.4; ISO 3098-1 lettering and ISO 128-2 line widths, from
memory): capital letters at least 2.5 mm high (1.8 mm in dense tables), line widths
0.25, 0.35, 0.5 and 0.7 mm. The CSS sizes are font sizes; DejaVu Sans has a capital
height of 1493/2048 = 0.729 em (its ``H`` glyph), so 3.5 mm type gives 2.55 mm capitals
and 2.5 mm type gives 1.82 mm capitals (``tests/test_render.py`` measures this on the PDF).
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

from loopdocs import __version__
from loopdocs.calc.tables import CalibrationTable
from loopdocs.core.findings import Finding, Severity
from loopdocs.core.wording import CAUTION
from loopdocs.model.records import Loop, Tag
from loopdocs.read.project_file import TitleBlock
from loopdocs.core.formatting import fmt_number
from loopdocs.render.caltables import DisplayTable, display_tables, share_notes
from loopdocs.render.packing import Box, Placed, pack_pages, used_height_mm
from loopdocs.render.settings import PAPERS, Paper, Revision, SheetSettings
from loopdocs.render.trip_settings import settings_table

TEMPLATES_DIR = Path(__file__).resolve().parent.parent / "templates"



@dataclass(frozen=True)
class SheetPieces:
    """Everything drawn or computed for one loop, ready to be laid out."""

    loop: Loop
    tags: Sequence[Tag]
    diagram_svg: str | None = None
    """The loop diagram, SVG made by ``loopdocs.draw``."""
    range_charts_svg: Sequence[str] = ()
    """One range chart per split group of the loop (SVG made by ``loopdocs.draw``)."""
    narrow_charts_svg: Sequence[str] = ()
    """The same charts drawn narrower (``range_chart.NARROW_CHART_MM``): printed instead
    where they keep the sheet to fewer pages."""
    calibrations: Sequence[CalibrationTable] = ()
    """Calibration tables of the loop's instruments and final elements (``loopdocs.calibration.project_tables``)."""
    findings: Sequence[Finding] = ()
    linked_tags: Sequence[Tag] = ()
    """Tags of other loops linked to this loop's tags by Driven By (``pieces.linked_tags``):
    their alarm and trip settings are printed with the loop's."""
    revision_marks: Any = None
    """The sheet's current revision and the tags changed in it
    (``loopdocs.draw.revision_marks.RevisionMarks``), or None: no revision marks."""


@dataclass(frozen=True)
class SheetFrame:
    """What every sheet of the package shares, and this sheet's place in it."""

    title_block: TitleBlock
    settings: SheetSettings
    sheet_no: int
    sheet_count: int
    extra_notes: Sequence[str] = field(default_factory=tuple)


def drawing_number(pattern: str, loop_id: str) -> str:
    """The drawing number of a loop: ``{loop}`` in the pattern replaced by the loop id.

    Plain replacement, not ``str.format``: other braces in the pattern stay as written.

    >>> drawing_number("KCB-LS-{loop}", "T-3105")
    'KCB-LS-T-3105'
    """
    return pattern.replace("{loop}", loop_id)


def revisions(title_block: TitleBlock, settings: SheetSettings) -> list[Revision]:
    """The revision table: the configured rows, or one row made from the title block."""
    if settings.revisions:
        return list(settings.revisions)
    return [Revision(rev=title_block.revision, date=title_block.date, by=title_block.drawn,
                     checked=title_block.checked, approved=title_block.approved)]


def current_revision(title_block: TitleBlock, settings: SheetSettings) -> str:
    return revisions(title_block, settings)[-1].rev


def document_author(title_block: TitleBlock, settings: SheetSettings) -> str:
    """PDF author: ``[sheet] author``, else the title block's ``drawn``, else ``loopdocs``."""
    return settings.author or title_block.drawn or "loopdocs"


# --- SVG from our own draw code ----------------------------------------------------------

class UntrustedSVG(ValueError):
    """SVG handed to the sheet holds something our draw code never makes."""


_FORBIDDEN_ELEMENTS = {"script", "foreignObject", "iframe", "object", "embed", "image", "a", "style"}
_SVG_NS = "http://www.w3.org/2000/svg"


def trusted_svg(svg: str) -> str:
    """Check that ``svg`` is a well-formed SVG fragment fit to embed inline, and return it
    without an XML declaration.

    Refused: DTDs and entities (``defusedxml``), script, style (it would restyle the whole
    sheet), foreignObject, images and links, event-handler attributes (``on...``), and any
    ``href`` or ``url(...)`` that points outside the SVG (only ``#fragment`` is allowed, so
    ``<use href="#symbol">`` is fine).

    >>> trusted_svg('<svg xmlns="http://www.w3.org/2000/svg"><text>&lt;b&gt;</text></svg>')[:4]
    '<svg'
    >>> trusted_svg('<svg xmlns="http://www.w3.org/2000/svg"><script>x</script></svg>')
    Traceback (most recent call last):
    ...
    loopdocs.render.sheet.UntrustedSVG: SVG holds a <script> element
    """
    import defusedxml.ElementTree as DET
    from defusedxml import DefusedXmlException

    try:
        root = DET.fromstring(svg)
    except (DefusedXmlException, Exception) as exc:  # ParseError or a refused DTD/entity
        raise UntrustedSVG(f"SVG is not well-formed or declares entities ({exc})") from None
    if _local(root.tag) != "svg":
        raise UntrustedSVG(f"SVG root is <{_local(root.tag)}>, not <svg>")
    for element in root.iter():
        name = _local(element.tag)
        if name in _FORBIDDEN_ELEMENTS:
            raise UntrustedSVG(f"SVG holds a <{name}> element")
        for attribute, value in element.attrib.items():
            attr = _local(attribute)
            if attr.lower().startswith("on"):
                raise UntrustedSVG(f"SVG attribute {attr} is an event handler")
            if attr == "href" and not value.startswith("#"):
                raise UntrustedSVG(f"SVG link {value[:40]!r} points outside the drawing")
            for target in re.findall(r"url\(\s*['\"]?([^)'\"]*)", value):
                if not target.startswith("#"):
                    raise UntrustedSVG(f"SVG attribute {attr} refers outside the drawing")
    return re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1] if isinstance(tag, str) else ""


# --- formatting --------------------------------------------------------------------------

def _range_text(tag: Tag) -> str:
    if not tag.has_range:
        return ""
    return f"{fmt_number(tag.range_low)} to {fmt_number(tag.range_high)} {tag.units or ''}".strip()


def _tag_row(tag: Tag) -> dict[str, str]:
    action = " ".join(v.value for v in (tag.air_action, tag.fail_position) if v is not None)
    if tag.control_action is not None:
        action = f"{tag.control_action.value} acting"
    return {
        "tag": tag.tag,
        "kind": tag.kind.value,
        "service": tag.service or "",
        "location": tag.location.value if tag.location else "",
        "signal": tag.signal.value if tag.signal else "",
        "range": _range_text(tag),
        "action": action,
        "io": tag.io_address or "",
        "pid": tag.pid or "",
    }


def tag_notes(tags: Sequence[Tag]) -> list[str]:
    """The Notes cells of the loop's tags, each text once with the tags that carry it.

    >>> from types import SimpleNamespace as T
    >>> tag_notes([T(tag="TT-1A", notes="rail mounted"), T(tag="TT-1B", notes="rail mounted"), T(tag="TE-1", notes=None)])
    ['TT-1A, TT-1B: rail mounted']
    """
    by_text: dict[str, list[str]] = {}
    for tag in tags:
        if tag.notes:
            by_text.setdefault(tag.notes.strip(), []).append(tag.tag)
    return [f"{', '.join(names)}: {text}" for text, names in by_text.items()]


def _finding_view(finding: Finding) -> dict[str, Any]:
    return {
        "severity": finding.severity.value,
        "rule": finding.rule,
        "tags": ", ".join(finding.tags),
        "message": finding.message,
        "accepted_by": finding.accepted.by if finding.accepted else "",
        "accepted_reason": finding.accepted.reason if finding.accepted else "",
    }


def has_blocking_error(findings: Sequence[Finding]) -> bool:
    """An error finding nobody accepted: the sheet is not for construction."""
    return any(f.counts_as_error for f in findings)


# --- templates ---------------------------------------------------------------------------

@lru_cache(maxsize=1)
def environment():
    """The jinja2 environment of the sheet templates (autoescape on for every template)."""
    import jinja2

    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(TEMPLATES_DIR)),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )


FRAME_INSET_MM = 0.7 + 3.0
"""Frame line (0.7 mm) and the padding inside it (``sheet.css`` ``@page``)."""
SIDE_WIDTH_MM = 100.0
"""Side column: status, tags, findings, notes, caution, revisions, title block."""
SIDE_GAP_MM = 4.0
BODY_TEXT_MM = 3.5
"""Body font size (2.55 mm capitals); notes and findings are set in it."""
BODY_LINE_MM = BODY_TEXT_MM * 1.2
STATUS_MM = 34.0
"""The not-for-construction or release box at the top of the side column."""
HEADER_MM = 1.0
"""Kept free at the foot of the drawing area (rounding of the packed heights); the loop
id heads the side column."""
LOOP_HEAD_MM = 18.0
"""Loop id (6.9 mm type) and service (one line of body type) at the top of the side
column, with its rule and space (``sheet.css`` ``.loop-head``; 17.4 mm rendered)."""
HALF_SIZE = {"A4": "A3"}
"""Papers that print the layout of a larger one at half size (A4 is A3 at 1:√2, ISO 216)."""


def layout_paper(settings: SheetSettings) -> Paper:
    """The paper the sheet is laid out on: A3 for an A4 print (half size), else its own."""
    return PAPERS[HALF_SIZE.get(settings.paper.name, settings.paper.name)]


def print_zoom(settings: SheetSettings) -> float:
    """Scale from the layout to the paper printed on: 297/420 = 0.707 for A4, else 1.

    >>> round(print_zoom(SheetSettings(size="A4")), 4), print_zoom(SheetSettings())
    (0.7071, 1.0)
    """
    return settings.paper.width_mm / layout_paper(settings).width_mm


def content_box_mm(settings: SheetSettings) -> tuple[float, float]:
    """Width and height available to the diagram, charts and tables of a page (inside the
    frame, beside the side column, below the loop id line)."""
    paper = layout_paper(settings)
    width = paper.width_mm - paper.binding_margin_mm - paper.margin_mm - 2 * FRAME_INSET_MM
    height = paper.height_mm - 2 * paper.margin_mm - 2 * FRAME_INSET_MM - HEADER_MM
    return width - SIDE_WIDTH_MM - SIDE_GAP_MM, height


_SVG_SIZE = re.compile(r'(<svg\b[^>]*?\bwidth=")([0-9.]+)mm("[^>]*?\bheight=")([0-9.]+)mm(")')


def svg_size_mm(svg: str) -> tuple[float, float]:
    """Width and height of an SVG drawn in mm (0, 0 when not stated in mm)."""
    match = _SVG_SIZE.search(svg)
    return (float(match.group(2)), float(match.group(4))) if match else (0.0, 0.0)


_FREE_CORNER = re.compile(r'<svg\b[^>]*?\bdata-free-corner="([0-9.]+) ([0-9.]+)"')


def svg_free_corner_mm(svg: str) -> tuple[float, float] | None:
    """The free lower-right corner an SVG of our draw code reports (``Drawing.free_corner_mm``).

    >>> svg_free_corner_mm('<svg width="200mm" height="50mm" data-free-corner="100 30"/>')
    (100.0, 30.0)
    """
    match = _FREE_CORNER.search(svg)
    return (float(match.group(1)), float(match.group(2))) if match else None


def fit_svg(svg: str, max_width_mm: float, max_height_mm: float) -> tuple[str, float]:
    """Scale an SVG drawn in mm (``width="Wmm" height="Hmm"`` with a viewBox) down to fit
    the box, never up; returns the SVG and the scale (1.0 when it fits).

    >>> fit_svg('<svg width="200mm" height="50mm" viewBox="0 0 200 50"/>', 100, 100)
    ('<svg width="100mm" height="25mm" viewBox="0 0 200 50"/>', 0.5)
    """
    match = _SVG_SIZE.search(svg)
    if match is None:
        return svg, 1.0
    width, height = float(match.group(2)), float(match.group(4))
    scale = min(1.0, max_width_mm / width, max_height_mm / height)
    if scale >= 1.0:
        return svg, 1.0
    def mm(value: float) -> str:
        return f"{value:.3f}".rstrip("0").rstrip(".")

    scaled = f"{match.group(1)}{mm(width * scale)}mm{match.group(3)}{mm(height * scale)}mm{match.group(5)}"
    return svg[:match.start()] + scaled + svg[match.end():], round(scale, 3)


def page_css(settings: SheetSettings, sheet_label: str = "") -> str:
    """The ``@page`` rule for the layout paper (landscape, binding margin left), the side
    column width, and ``sheet_label, page i of k`` under the frame (bottom right)."""
    paper = layout_paper(settings)
    css = (
        f"@page {{ size: {paper.width_mm}mm {paper.height_mm}mm; "
        f"margin: {paper.margin_mm}mm {paper.margin_mm}mm {paper.margin_mm}mm {paper.binding_margin_mm}mm; }}\n"
        f".side {{ width: {SIDE_WIDTH_MM}mm; }}\nmain {{ margin-right: {SIDE_WIDTH_MM + SIDE_GAP_MM}mm; }}\n"
        f".watermark {{ right: {SIDE_WIDTH_MM + SIDE_GAP_MM}mm; }}\n"
    )
    if sheet_label:
        label = re.sub(r'[\\"<>\n\r{}]', "", sheet_label)  # inside a CSS string in <style>
        css += (f'@page {{ @bottom-right {{ content: "{label}, page " counter(page) " of " counter(pages); '
                f"font-size: {BODY_TEXT_MM}mm; vertical-align: top; padding-top: 1mm; }} }}\n")
    return css


def _lines(text: str, width_mm: float, size_mm: float = BODY_TEXT_MM) -> int:
    from loopdocs.draw.text import wrap_text

    return max(1, len(wrap_text(text, width_mm, size_mm)))


TITLE_BLOCK_MM = 78.0
"""Height of the side column's title block with a one-line title (``sheet.html``; 77 mm
rendered with the example's two-line project name); each more line of the title adds
``BODY_LINE_MM``."""


def title_text(loop_id: str, service: str) -> str:
    """The title of a loop sheet as its title block prints it."""
    return f"Loop sheet, loop {loop_id}" + (f": {service}" if service else "")


REVISION_TEXT_MM = 2.5
"""Type size of the revision table (``table.revisions`` in ``sheet.css``)."""

REVISION_DESCRIPTION_MM = 32.5
"""Text width of the revision table's Description column: the 100 mm side column less
the Rev (8 mm), Date (18 mm) and three initials (9 mm) columns, each cell's 2 mm of
padding and the borders (32.75 mm measured on the laid-out sheet)."""


def revisions_table_mm(rows: Sequence[Revision]) -> float:
    """Height of the revision table: caption (5 mm) and borders (0.5 mm), the head row and
    one row of one line each (4.4 mm), and 3 mm for every further line a description wraps
    to (an issued revision's entry says what changed and can take several lines).
    Measured on the laid-out sheet: caption 5.0, head 4.38, a one-line row 4.25 mm, each
    further line 3.0 mm.

    >>> round(revisions_table_mm([Revision(rev="A", description="Issued for review")]), 1)
    14.3
    """
    line_mm = REVISION_TEXT_MM * 1.2
    extra_lines = sum(_lines(r.description or "", REVISION_DESCRIPTION_MM, REVISION_TEXT_MM) - 1 for r in rows)
    return 5.5 + 4.4 * (1 + len(rows)) + line_mm * extra_lines


def side_bottom_mm(revision_rows: Sequence[Revision], title: str = "") -> float:
    """Height of the foot of the side column: caution (its text wrapped to the column),
    the revision table (:func:`revisions_table_mm`) and the title block (its title
    wrapped to the column), 2 mm to spare."""
    caution = 3.0 + 2 * 1.5 + BODY_LINE_MM * (1 + _lines(CAUTION, SIDE_WIDTH_MM - 4.7)) + 3.0
    title_mm = BODY_LINE_MM * (_lines(title, SIDE_WIDTH_MM - 2.4) - 1) if title else 0.0
    return caution + revisions_table_mm(revision_rows) + TITLE_BLOCK_MM + title_mm + 2.0


def loop_head_mm(service: str) -> float:
    """Height of the loop id and the loop's service (wrapped to the side column) at its top."""
    return LOOP_HEAD_MM + BODY_LINE_MM * (_lines(service, SIDE_WIDTH_MM) - 1 if service else 0)


def side_room_mm(settings: SheetSettings, revision_rows: Sequence[Revision], status: bool, title: str = "",
                 service: str = "") -> float:
    """Height left in the side column for the tags, notes and findings, once the loop id,
    the status box and the foot (:func:`side_bottom_mm`) are in."""
    paper = layout_paper(settings)
    inner = paper.height_mm - 2 * paper.margin_mm - 2 * FRAME_INSET_MM
    return inner - loop_head_mm(service) - (STATUS_MM if status else 0.0) - side_bottom_mm(revision_rows, title)


SECTION_MM = 9.6
"""A side-column section's heading, its rule and the space after the section (6.55 mm
from heading to text and 3 mm after, rendered)."""
SECTION_AFTER_MM = 3.0
"""The space after a side-column section (``sheet.css`` ``section``), not counted after the
last one: tables placed under it keep the packer's gap from its text."""


NOTE_INDENT_MM = 6.0
"""Indent of the numbered notes (``sheet.css`` ``.notes ol``)."""


def side_text_mm(texts: Sequence[str], headings: int, width_mm: float, findings: Sequence[str] = ()) -> float:
    """Height of the notes (``texts``, numbered: wrapped at the width less the list
    indent) and findings (paragraphs across the width) set in the side column (body type,
    0.9 mm after each; within 1 mm of the rendered height on the example sheets)."""
    return headings * SECTION_MM + sum(BODY_LINE_MM * _lines(t, width_mm - NOTE_INDENT_MM) + 0.9 for t in texts) \
        + sum(BODY_LINE_MM * _lines(t, width_mm - 2.0) + 0.9 for t in findings)


def sheet_layout(diagram_mm: tuple[float, float] | None, charts_mm: Sequence[tuple[float, float]],
                 tables: Sequence[DisplayTable], settings: SheetSettings,
                 side_top_mm: float = 0.0, side_foot_mm: float = 0.0,
                 diagram_corner_mm: tuple[float, float] | None = None) -> list[list[Placed]]:
    """Where the diagram, the range charts and the tables go, page by page
    (``packing.pack_pages``): the diagram at the top left at its own size, the charts
    next, the tables in the room left beside and under them, and in the side column
    between its text at the top (``side_top_mm``) and its foot (``side_foot_mm``:
    caution, revisions, title block); tables may also go in the diagram's free lower
    right corner (``diagram_corner_mm``, ``Drawing.free_corner_mm``). Keys: ``("diagram", 0)``, ``("chart", i)``,
    ``("table", i)``; positions in mm from the top left of the drawing area."""
    box_w, box_h = content_box_mm(settings)
    side_x = box_w + SIDE_GAP_MM
    taken = [Placed(Box("side top", SIDE_WIDTH_MM, side_top_mm), side_x, 0.0),
             Placed(Box("side foot", SIDE_WIDTH_MM, side_foot_mm), side_x, box_h - side_foot_mm)]
    first = [Box(("diagram", 0), *diagram_mm, free_corner_mm=diagram_corner_mm)] if diagram_mm else []
    first += [Box(("chart", i), *size) for i, size in enumerate(charts_mm)]
    rest = [Box(("table", i), t.width_mm, t.height_mm, variants=tuple((v.width_mm, v.height_mm) for v in variants(t)))
            for i, t in enumerate(tables)]
    return pack_pages(first, rest, side_x + SIDE_WIDTH_MM, box_h, taken=taken)


WIDER_TABLES_MM = (70.0, 90.0, 110.0)
"""Widths a table may be set at where it fits nowhere at its own: wider and lower, it may
fit under a range chart or a wide table (``packing.place_any``)."""


WRAPPED_COLUMN_MM = 24.0
"""Widest a column of words (a direction, an interlock reference) is set where its table
fits nowhere on one line per row (:func:`variants`)."""


def variants(table: DisplayTable) -> list[DisplayTable]:
    """Other ways to print ``table``, tried in order where it fits nowhere at its own size:
    its columns of words wrapped at ``WRAPPED_COLUMN_MM`` when that makes it narrower
    (the alarm and trip table under a narrow chart), then :func:`wider`, last as narrow
    as its columns allow (``NARROW_TABLE_MM`` at least: taller)."""
    out = []
    narrow = table.wrapped(WRAPPED_COLUMN_MM)
    if table.text_columns and narrow.width_mm < table.width_mm - 1.0:
        out.append(narrow)
    out += wider(table)
    slim = table.narrowed(NARROW_TABLE_MM)
    if slim.width_mm < table.width_mm - 1.0:
        out.append(slim)
    return out


NARROW_TABLE_MM = 40.0
"""Narrowest a table is set, as a last resort (:func:`variants`): its notes wrap into a
tall column, for a narrow free corner of the diagram."""


def wider(table: DisplayTable) -> list[DisplayTable]:
    """The table set at each of ``WIDER_TABLES_MM`` that is wider than it is and lower
    (the box variants of :func:`sheet_layout`, in order)."""
    out: list[DisplayTable] = []
    for width in WIDER_TABLES_MM:
        variant = table.widened(width)
        last = out[-1] if out else table
        if variant.width_mm > last.width_mm and variant.height_mm < last.height_mm:
            out.append(variant)
    return out


def sheet_html(pieces: SheetPieces, frame: SheetFrame) -> str:
    """The HTML of one loop sheet (pure: same pieces and frame, same text).

    Under the frame of every page: drawing number, sheet n of m, page i of k (a sheet
    whose tables do not fit continues them on a second page with the same side column).
    """
    return environment().get_template("sheet.html").render(sheet_context(pieces, frame))


def sheet_plan(pieces: SheetPieces, frame: SheetFrame) -> list[list[Placed]]:
    """The pages of the sheet as laid out: each page's placed diagram, charts and tables."""
    return sheet_context(pieces, frame)["plan"]


def revision_mark_context(marks: Any) -> dict[str, Any]:
    """The tags the sheet marks as changed in its current revision and the mark set
    beside them in the Tags table and the table captions (``draw.revision_marks``, our
    own SVG, checked by :func:`trusted_svg`)."""
    from markupsafe import Markup

    from loopdocs.draw.revision_marks import mark_svg

    if not marks:
        return {"marked_tags": frozenset(), "revision_mark": ""}
    return {"marked_tags": frozenset(marks.tags), "revision_mark": Markup(trusted_svg(mark_svg(marks.revision)))}


def marked_rows_mm(tags: Sequence[Tag], marks: Any, row_mm: float) -> float:
    """What the rows of the marked tags add to the height of the Tags table (a mark is
    taller than a row; ``sheet.css`` ``.rev-mark``)."""
    from loopdocs.draw.revision_marks import html_mark_mm

    if not marks:
        return 0.0
    extra = max(0.0, html_mark_mm(marks.revision)[1] + 1.05 - row_mm)  # cell padding and rule
    return extra * sum(1 for t in tags if t.tag in marks.tags)


def marked_tables(tables: list[DisplayTable], marks: Any) -> list[DisplayTable]:
    """The tables with the size of the revision marks beside their caption's changed tags."""
    from dataclasses import replace

    from loopdocs.draw.revision_marks import html_mark_mm

    if not marks:
        return tables
    width, height = html_mark_mm(marks.revision)
    out = []
    for table in tables:
        count = sum(1 for part in table.tag_parts if part.rstrip(",") in marks.tags)
        out.append(replace(table, caption_mark_mm=(count * width, height)) if count else table)
    return out


def sheet_context(pieces: SheetPieces, frame: SheetFrame) -> dict[str, Any]:
    """What the sheet template shows (``plan``: the placed boxes, page by page)."""
    from markupsafe import Markup

    tb, settings = frame.title_block, frame.settings
    findings = list(pieces.findings)
    open_findings = [f for f in findings if f.accepted is None]
    open_findings.sort(key=lambda f: f.severity.rank)
    accepted = [f for f in findings if f.accepted is not None]
    blocked = has_blocking_error(findings)
    release_reason = settings.release_reason(pieces.loop.id) if blocked else None
    calibrations = display_tables(pieces.calibrations)
    trips = settings_table([*pieces.tags, *pieces.linked_tags])
    notes = [*settings.notes, *frame.extra_notes]
    if calibrations:
        notes.append("Calibration: read every point rising, then falling; the values are those expected, "
                     "within the tolerance stated with each table.")
    if print_zoom(settings) != 1.0:
        notes.append(f"Drawn on {layout_paper(settings).name}, printed at half size on {settings.paper.name}.")
    finding_views = [_finding_view(f) for f in open_findings]
    accepted_views = [_finding_view(f) for f in accepted]
    not_for_construction = blocked and release_reason is None
    finding_texts = [f"{v['severity']} {v['rule']} ({v['tags']}): {v['message']}" for v in finding_views]
    finding_texts += [f"{v['severity']}, accepted {v['rule']} ({v['tags']}): {v['message']} Accepted by "
                      f"{v['accepted_by']}: {v['accepted_reason']}" for v in accepted_views]
    tag_rows_mm = 3.9 * (1 + len(pieces.tags)) + marked_rows_mm(pieces.tags, pieces.revision_marks, 3.9)
    title = title_text(pieces.loop.id, pieces.loop.service or "")
    room = side_room_mm(settings, revisions(tb, settings), not_for_construction or release_reason is not None,
                        title, pieces.loop.service or "")
    # notes shared by several tables go to the sheet notes, unless the side column then
    # overflows (its tags, findings and notes would move under the drawing)
    own_notes = notes
    for share in (True, False):
        calibrations, shared_notes = (share_notes(calibrations, len(own_notes) + 1) if share
                                      else (display_tables(pieces.calibrations), []))
        notes = [*own_notes, *shared_notes, *tag_notes(pieces.tags)]
        headings = 2 + bool(notes) + bool(accepted_views)
        # the findings section says "No open findings on this loop." when there is none
        side_mm = side_text_mm(notes, headings, SIDE_WIDTH_MM, finding_texts or ["No open findings."]) + tag_rows_mm
        if side_mm <= room:
            break
    tables = marked_tables(([trips] if trips else []) + calibrations, pieces.revision_marks)
    diagram, scale = None, 1.0
    box_w, box_h = content_box_mm(settings)
    if pieces.diagram_svg:
        diagram, scale = fit_svg(trusted_svg(pieces.diagram_svg), box_w, box_h)
    side_notes = side_mm <= room
    status = not_for_construction or release_reason is not None
    # the space after the last section is left to the packer's gap (GAP_MM)
    side_top = loop_head_mm(pieces.loop.service or "") + (STATUS_MM if status else 0.0) \
        + (side_mm - SECTION_AFTER_MM if side_notes else 0.0)
    corner = svg_free_corner_mm(diagram) if diagram and scale == 1.0 else None
    foot = side_bottom_mm(revisions(tb, settings), title)
    # the charts at their own width, or narrower where that saves a page
    pages, charts = [], []
    for svgs in (pieces.range_charts_svg, pieces.narrow_charts_svg):
        if len(svgs) != len(pieces.range_charts_svg) or (pages and len(pages) == 1):
            continue
        drawn = [fit_svg(trusted_svg(svg), box_w, box_h)[0] for svg in svgs]
        plan = sheet_layout(svg_size_mm(diagram) if diagram else None, [svg_size_mm(c) for c in drawn], tables,
                            settings, side_top, foot, corner)
        if not pages or len(plan) < len(pages):
            pages, charts = plan, drawn
    content = {"diagram": [Markup(diagram) if diagram else None], "chart": [Markup(c) for c in charts], "table": tables}

    def item(p: Placed) -> Any:
        kind, index = p.box.key
        if kind == "table" and p.box.variant:
            return variants(tables[index])[p.box.variant - 1]  # set wrapped or wider where it fits so
        return content[kind][index]

    page_views = [{"height_mm": round(used_height_mm([p for p in page if p.x_mm < box_w]), 1),
                   "items": [{"kind": p.box.key[0], "item": item(p),
                              "x_mm": round(p.x_mm, 1), "y_mm": round(p.y_mm, 1),
                              "width_mm": round(p.box.width_mm, 1)} for p in page]}
                  for page in pages]
    sheet_label = f"{drawing_number(tb.drawing_number, pieces.loop.id)} sheet {frame.sheet_no} of {frame.sheet_count}"
    context = {
        "paper": layout_paper(settings),
        "page_css": Markup(page_css(settings, sheet_label)),  # ours; the label is cleaned
        "side_notes": side_notes,
        "reduced_pct": round(scale * 100) if scale < 1.0 else None,
        "loop": pieces.loop,
        "loop_id": pieces.loop.id,
        "service": pieces.loop.service or "",
        "tags": [_tag_row(t) for t in pieces.tags],
        "pages": page_views,
        "open_findings": finding_views,
        "accepted": accepted_views,
        "counts": {s.value: sum(1 for f in open_findings if f.severity is s) for s in Severity},
        "not_for_construction": not_for_construction,
        "release_reason": release_reason,
        "notes": notes,
        "cautions": CAUTION,
        "tb": tb,
        "drawing_number": drawing_number(tb.drawing_number, pieces.loop.id),
        "revisions": revisions(tb, settings),
        "revision": current_revision(tb, settings),
        "sheet_no": frame.sheet_no,
        "sheet_count": frame.sheet_count,
        "version": __version__,
        "author": document_author(tb, settings),
        "keywords": ", ".join(["loop sheet", pieces.loop.id, *(t.tag for t in pieces.tags)]),
        "plan": pages,
        **revision_mark_context(pieces.revision_marks),
    }
    return context
