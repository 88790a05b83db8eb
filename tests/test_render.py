"""The loop sheet: content, escaping, drafting sizes, paper, the URL fetcher, the
calibration tables as printed, and the streaming PDF join.

Sheets are rendered for a few loops only (module-scoped fixtures), to keep the suite quick.
"""

from __future__ import annotations

import io
import math
import re
from pathlib import Path

import pytest
from pypdf import PdfReader, PdfWriter

from loopdocs.checks import check_project
from loopdocs.core.errors import InputError
from loopdocs.core.findings import Acceptance, Finding, Severity
from loopdocs.calibration.presentation import distinct_points
from loopdocs.core.formatting import fmt_number
from loopdocs.render.caltables import display_tables
from loopdocs.render.pdf import JsonAttachment, ProjectFetcher, html_to_pdf, sheet_pdf
from loopdocs.render.pdfjoin import DocumentInfo, PdfJoin
from loopdocs.render.pieces import loop_pieces
from loopdocs.render.settings import PAPERS, sheet_settings
from loopdocs.draw.text import CAP_HEIGHT_EM  # DejaVu Sans, the sheet's typeface
from loopdocs.render.sheet import (
    SheetFrame,
    SheetPieces,
    UntrustedSVG,
    drawing_number,
    sheet_html,
    trusted_svg,
)
from loopdocs.sheets.index_template import write_index_workbook

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"
MM_PER_PT = 25.4 / 72  # PostScript point, 1/72 in (ISO 32000-1 8.3.2.3 default user space unit)


@pytest.fixture(scope="module")
def example():
    return check_project(EXAMPLE)


def pieces_of(checked, loop_id, findings=None):
    splits = list(getattr(checked, "splits", None) or [])
    found = [f for f in checked.findings if f.loop == loop_id] if findings is None else findings
    pieces, _ = loop_pieces(checked.project, loop_id, found, splits, {})
    return pieces


def frame_of(checked, settings=None, no=1, count=11):
    return SheetFrame(checked.project.config.title_block, settings or sheet_settings({}), no, count)


def pdf_text(pdf: bytes) -> str:
    """The text of every page, runs of white space made one space (lines wrap anywhere)."""
    return " ".join(" ".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf)).pages).split())


@pytest.fixture(scope="module")
def t3105_pdf(example):
    """The example's heating/cooling split loop, rendered once."""
    return html_to_pdf(sheet_html(pieces_of(example, "T-3105"), frame_of(example, no=6, count=11)))


# --- content -----------------------------------------------------------------------------

def test_sheet_shows_title_block_tags_and_calibration_values(t3105_pdf, example):
    text = pdf_text(t3105_pdf)
    tb = example.project.config.title_block
    assert drawing_number(tb.drawing_number, "T-3105") == "KCB-LS-T-3105"
    for expected in ("KCB-LS-T-3105", "6 of 11", tb.project.split(" - ")[0], tb.client, "TT-3105", "TV-3105A", "TV-3105B"):
        assert expected in text, expected
    # TT-3105, -5 to 40 degC on 4-20 mA: 25 % of span = 6.25 degC -> 4 + 16 * 0.25 = 8 mA
    # (docs/design.md §6.1, I = 4 + 16 p); Pt100 at 40 degC = 115.54 ohm (IEC 60751 table, from memory).
    # numbers anchored: 8.000 must not match inside 8.0001, 115.541 not inside 1115.5410
    assert re.search(r"(?<![\d.])6\.25\s+102\.440\s+8\.000(?!\d)", text)
    assert re.search(r"(?<![\d.])115\.541(?!\d)", text)
    # TV-3105A: ATC, direct positioner, input 4 to 11.68 mA: 50 % travel at u = 0.5,
    # I = 4 + 0.5 * 7.68 = 7.840 mA (docs/design.md §4.3).
    assert re.search(r"(?<![\d.])7\.840\s+50\.0(?!\d)", text)  # 50.0: travel to 0.1 %, not 50.00
    # the cautions (docs/design.md §8.3, README)
    assert "Isolate and verify" in text and "confirmed against the issued design" in text


def test_calibration_tables_print_each_point_once_and_merge_loop_checks(example):
    from loopdocs.calibration.project_tables import calibration_set

    tables = [t for t in calibration_set(example.project).tables if t.loop == "T-3105"]
    shown = display_tables(tables)
    tt = next(t for t in shown if t.tag == "TT-3105")
    # five points rising then falling (docs/design.md §7.2) are ten readings but five distinct rows
    source = next(t for t in tables if t.tag == "TT-3105")
    assert len(source.points) == 10 and len(tt.rows) == 5 == len(distinct_points(source.points))
    check = next(t for t in shown if t.title == "split-range loop check")
    assert check.tag == "TV-3105A, TV-3105B"
    # one positioner-split output (docs/design.md §4.3: I = 4 + 16 CO) feeds both: one signal column
    assert check.heads[:2] == ("% CO", "Signal mA")
    row_50 = next(r for r in check.rows if r[0] == "50.00")  # CO to 0.01 %: split edges such as 8.33 % are exact
    assert row_50[1] == "12.000"
    assert fmt_number(-5.0) == "\u22125"


def test_loop_calibrations_equal_the_project_calibration_set(example):
    # The sheet computes each loop's tables on the loop and its Driven By links only (so a
    # rebuild of one sheet does not compute the whole index); they must be the very tables
    # loopdocs.calibration.project_tables gives for the whole project.
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.render.pieces import loop_calibrations

    project = example.project
    whole: dict[str, list] = {}
    for table in calibration_set(project).tables:
        whole.setdefault(table.loop or project.tags[table.tag].loop, []).append(table.as_json())
    state: dict = {}
    key = lambda j: (j["tag"], j["kind"])  # noqa: E731
    for loop_id in project.loops:
        mine = [t.as_json() for t in loop_calibrations(project, loop_id, state)]
        assert sorted(mine, key=key) == sorted(whole.get(loop_id, []), key=key), loop_id


def test_loop_part_draws_the_same_diagram_and_charts(example):
    # Sheets draw from the loop's part of the project (pieces.loop_project); loopdocs draw
    # works on the whole project: the SVG must be byte for byte the same.
    from loopdocs.draw.export import loop_charts, loop_diagram_svg
    from loopdocs.render.pieces import loop_findings, loop_project

    project, state = example.project, {}
    findings = loop_findings(example.findings, project)
    for loop_id in project.loops:
        part = loop_project(project, loop_id, state)
        assert loop_diagram_svg(part, loop_id) == loop_diagram_svg(project, loop_id), loop_id
        assert loop_charts(part, loop_id, findings[loop_id]) == loop_charts(project, loop_id, findings[loop_id]), loop_id


def test_sheet_pieces_come_from_the_stages_upstream(example):
    pieces = pieces_of(example, "T-3105")
    assert [t.tag for t in pieces.tags] == list(example.project.loops["T-3105"].tags)
    assert {t.tag for t in pieces.calibrations} >= {"TT-3105", "TV-3105A", "TV-3105B"}


# --- not for construction ------------------------------------------------------------------

ERROR = Finding("split.gap", Severity.ERROR, "nothing moves between CO 48 and 52 %", "T-3110", ("TT-3110",))


def test_unaccepted_error_marks_the_sheet_not_for_construction(example):
    html = sheet_html(pieces_of(example, "T-3110", [ERROR]), frame_of(example))
    text = pdf_text(html_to_pdf(html))
    assert "NOT FOR CONSTRUCTION" in text
    assert "nothing moves between CO 48 and 52 %" in text


def test_release_reason_replaces_the_marking_and_is_printed(example):
    settings = sheet_settings({"release_with_errors": {"t-3110": "gap is the intended dead band, see memo KCB-M-12"}})
    html = sheet_html(pieces_of(example, "T-3110", [ERROR]), frame_of(example, settings))
    assert "NOT FOR CONSTRUCTION" not in html
    assert "gap is the intended dead band, see memo KCB-M-12" in html


def test_accepted_error_is_listed_as_a_deviation_not_a_stop(example):
    accepted = ERROR.accept(Acceptance("intended dead band", "A. Engineer"))
    html = sheet_html(pieces_of(example, "T-3110", [accepted]), frame_of(example))
    assert "NOT FOR CONSTRUCTION" not in html
    assert "Accepted deviations" in html and "A. Engineer" in html and "intended dead band" in html


# --- drafting practice ----------------------------------------------------------------------

def _mul(m, n):
    """Product of two PDF matrices [a b c d e f] (ISO 32000-1 8.3.4): m then n."""
    a, b, c, d, e, f = m
    A, B, C, D, E, F = n
    return (a * A + b * C, a * B + b * D, c * A + d * C, c * B + d * D, e * A + f * C + E, e * B + f * D + F)


def _scale(m) -> float:
    return math.sqrt(abs(m[0] * m[3] - m[1] * m[2]))


def page_marks(pdf: bytes, drawn: list[float] | None = None) -> tuple[list[float], list[float]]:
    """Capital heights (mm) of every text run and stroke widths (mm) of every ``w`` on
    the first page, with the transformation matrix followed through ``q``/``Q``/``cm``,
    ``Tm`` and form XObjects (their ``/Matrix``), as a PDF viewer applies them.
    ``drawn``, when given, receives the capital heights of the text inside form XObjects
    (weasyprint's SVG drawings: the loop diagram and the range charts)."""
    from pypdf.generic import ContentStream

    reader = PdfReader(io.BytesIO(pdf))
    page = reader.pages[0]
    caps: list[float] = []
    widths: list[float] = []

    def walk(content, resources, ctm, depth=0):
        stack, tm, size = [], (1, 0, 0, 1, 0, 0), 0.0
        for operands, op in ContentStream(content, reader).operations:
            if op == b"q":
                stack.append(ctm)
            elif op == b"Q":
                ctm = stack.pop()
            elif op == b"cm":
                ctm = _mul(tuple(float(v) for v in operands), ctm)
            elif op == b"w":
                widths.append(float(operands[0]) * _scale(ctm) * MM_PER_PT)
            elif op == b"BT":
                tm = (1, 0, 0, 1, 0, 0)
            elif op == b"Tf":
                size = float(operands[1])
            elif op == b"Tm":
                tm = tuple(float(v) for v in operands)
            elif op in (b"Tj", b"TJ", b"'", b'"'):
                # capital height: the size times the scale of the text's own upright axis (a
                # line squeezed to fit its width, SVG textLength, keeps its height)
                m = _mul(tm, ctm)
                caps.append(size * math.hypot(m[2], m[3]) * MM_PER_PT * CAP_HEIGHT_EM)
                if depth and drawn is not None:
                    drawn.append(caps[-1])
            elif op == b"Do":
                xobject = resources["/XObject"][operands[0]].get_object()
                if xobject.get("/Subtype") == "/Form":
                    matrix = tuple(float(v) for v in xobject.get("/Matrix", (1, 0, 0, 1, 0, 0)))
                    walk(xobject, xobject.get("/Resources", resources), _mul(matrix, ctm), depth + 1)

    walk(page.get_contents(), page["/Resources"], (1, 0, 0, 1, 0, 0))
    return caps, widths


def text_sizes_mm(pdf: bytes) -> list[tuple[str, float]]:
    """(text, capital height in mm) of the HTML text runs on the first page (pypdf's
    text visitor, which knows the text but not the matrices of embedded drawings)."""
    runs: list[tuple[str, float]] = []

    def visit(text, cm, tm, font, size):
        if text.strip():
            m = _mul(tuple(tm), tuple(cm))
            runs.append((text.strip(), size * _scale(m) * MM_PER_PT * CAP_HEIGHT_EM))

    PdfReader(io.BytesIO(pdf)).pages[0].extract_text(visitor_text=visit)
    return runs


def test_cap_height_of_the_sheet_font_is_read_from_the_font_file():
    # The capital height used to size the type is the font's own: the H glyph of DejaVu Sans.
    fontTools = pytest.importorskip("fontTools.ttLib")
    from fontTools.pens.boundsPen import BoundsPen
    import subprocess

    path = subprocess.run(["fc-match", "-f", "%{file}", "DejaVu Sans"], capture_output=True, text=True).stdout
    if not path.endswith("DejaVuSans.ttf"):
        pytest.skip("DejaVu Sans not installed")
    font = fontTools.TTFont(path)
    pen = BoundsPen(font.getGlyphSet())
    font.getGlyphSet()["H"].draw(pen)
    assert pen.bounds[3] / font["head"].unitsPerEm == pytest.approx(CAP_HEIGHT_EM)


def test_lettering_is_at_least_1_8_mm_and_body_text_2_5_mm(t3105_pdf):
    # ISO 3098-1 (from memory): h >= 2.5 mm on drawings, 1.8 mm the smallest, in dense tables.
    caps, _ = page_marks(t3105_pdf)
    assert len(caps) > 100
    assert min(caps) >= 1.8 - 0.02, sorted(caps)[:5]
    runs = text_sizes_mm(t3105_pdf)
    body = [h for t, h in runs if "Isolate and verify" in t or "KCB-LS-T-3105" in t or t.startswith("Loop T-3105")]
    assert len(body) >= 3 and min(body) >= 2.5 - 0.02


def test_tables_are_lettered_at_least_1_8_mm_and_the_drawings_measured(t3105_pdf):
    # ISO 3098-1 (from memory): 1.8 mm capitals the smallest, for dense tables (issue 11
    # item 5: tables at least 1.8 mm). The drawings (loop diagram, range chart) are form
    # XObjects; the rest of the page is the HTML: side column and tables.
    from collections import Counter

    drawn: list[float] = []
    caps, _ = page_marks(t3105_pdf, drawn)
    printed = list((Counter(round(c, 4) for c in caps) - Counter(round(c, 4) for c in drawn)).elements())
    assert len(drawn) > 100 and len(printed) > 100
    assert min(printed) >= 1.8 - 0.02, sorted(printed)[:5]
    # the dense tables are set at the smallest size, 2.5 mm type = 1.82 mm capitals
    assert Counter(round(c, 2) for c in printed).most_common(1)[0][0] == pytest.approx(1.82, abs=0.01)
    # diagram and chart labels: at least 1.8 mm today (docs/design.md §8.4, TEXT_MM)
    assert min(drawn) >= 1.8 - 0.02, sorted(drawn)[:5]


def test_diagram_lettering_is_2_5_mm_capitals(t3105_pdf):
    # ISO 3098-1 (from memory): 2.5 mm capitals for normal lettering on A3 drawings. Every
    # text of the loop diagram and of the range chart (the form XObjects of page 1).
    drawn: list[float] = []
    page_marks(t3105_pdf, drawn)
    assert len(drawn) > 100
    assert min(drawn) >= 2.5 - 0.02, sorted(drawn)[:5]


def test_sheet_uses_few_line_widths(t3105_pdf):
    # ISO 128-2 (from memory): a small set of widths; docs/design.md §8.4: about 0.25, 0.35, 0.5, 0.7 mm.
    _, widths = page_marks(t3105_pdf)
    assert {round(w, 2) for w in widths} <= {0.25, 0.35, 0.5, 0.7}, sorted({round(w, 3) for w in widths})


@pytest.mark.parametrize("size, width_mm, height_mm", [
    ("A3", 420, 297),        # ISO 216: A3 297 x 420 mm, landscape
    ("A4", 297, 210),        # ISO 216: A4 210 x 297 mm, landscape
    ("11x17", 431.8, 279.4),  # ANSI/ASME Y14.1 size B: 11 x 17 in, 25.4 mm/in
])
def test_paper_size_from_config(example, size, width_mm, height_mm):
    settings = sheet_settings({"size": size})
    assert (settings.paper.width_mm, settings.paper.height_mm) == pytest.approx((width_mm, height_mm))
    pdf = sheet_pdf(pieces_of(example, "T-3110"), frame_of(example, settings))
    box = PdfReader(io.BytesIO(pdf)).pages[0].mediabox
    assert float(box.width) * MM_PER_PT == pytest.approx(width_mm, abs=0.1)
    assert float(box.height) * MM_PER_PT == pytest.approx(height_mm, abs=0.1)


def test_sheet_settings_are_validated():
    with pytest.raises(InputError, match=r"\[sheet.size\]"):
        sheet_settings({"size": "A0"})
    with pytest.raises(InputError, match=r"reason is required"):
        sheet_settings({"release_with_errors": {"T-1": "  "}})
    with pytest.raises(InputError, match=r"\[sheet.colour\]"):
        sheet_settings({"colour": "red"})
    assert sheet_settings({"size": "tabloid"}).paper is PAPERS["11x17"]


def test_starter_config_documents_the_sheet_table():
    import tomllib

    from loopdocs.sheets.index_template import STARTER_CONFIG

    assert sheet_settings(tomllib.loads(STARTER_CONFIG)["sheet"]).size == "A3"
    for key in ("author", "notes", "[[sheet.revisions]]", "[sheet.release_with_errors]"):
        assert key in STARTER_CONFIG, key
    sheet_settings(tomllib.loads((EXAMPLE / "loopdocs.toml").read_text())["sheet"])


# --- safety ----------------------------------------------------------------------------------

HOSTILE_SERVICE = '<script>alert("x")</script> & <b>bold</b> ../../etc/passwd'


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    rows = [
        {"tag": "TT-901", "loop": "../../etc/passwd", "service": HOSTILE_SERVICE, "signal": "4-20 mA",
         "range_low": 0, "range_high": 100, "units": "degC", "accuracy_pct": 0.5, "notes": "<img src=x onerror=alert(1)>"},
        {"tag": "TIC-901", "loop": "../../etc/passwd", "service": "<b>controller</b>", "signal": "4-20 mA",
         "platform": "dcs", "location": "control room", "control_action": "reverse"},
    ]
    write_index_workbook(folder / "index.xlsx", rows)
    (folder / "loopdocs.toml").write_text(
        '[title_block]\nproject = "<i>Hostile</i> & co"\ndrawing_number = "D-{loop}"\n', encoding="utf-8")
    return folder, check_project(folder)


def test_spreadsheet_markup_is_escaped_in_the_html_and_plain_in_the_pdf(hostile):
    folder, checked = hostile
    loop_id = "../../etc/passwd"
    assert loop_id in checked.project.loops
    html = sheet_html(pieces_of(checked, loop_id), frame_of(checked))
    assert "<script>" not in html and "<b>bold</b>" not in html and "<img src=x" not in html
    assert "&lt;script&gt;" in html and "&lt;i&gt;Hostile&lt;/i&gt; &amp; co" in html
    text = pdf_text(html_to_pdf(html, allowed_dirs=[folder]))
    # the diagram wraps the service to its column (a word too long is cut between characters)
    assert '<script>alert("x")</script>' in "".join(text.split())
    assert "<b>bold</b>" in text and "<i>Hostile</i> & co" in text
    assert "D-../../etc/passwd" in text


@pytest.mark.parametrize("svg, reason", [
    ('<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>', "script"),
    ('<svg xmlns="http://www.w3.org/2000/svg"><foreignObject><p>x</p></foreignObject></svg>', "foreignObject"),
    ('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>', "event handler"),
    ('<svg xmlns="http://www.w3.org/2000/svg" xmlns:x="http://www.w3.org/1999/xlink"><use x:href="http://e.invalid/a#b"/></svg>', "outside"),
    ('<svg xmlns="http://www.w3.org/2000/svg"><rect fill="url(http://e.invalid/p)"/></svg>', "outside"),
    ('<!DOCTYPE svg [<!ENTITY x "y">]><svg xmlns="http://www.w3.org/2000/svg">&x;</svg>', "entities"),
    ('<svg xmlns="http://www.w3.org/2000/svg"><text>unclosed</svg>', "well-formed"),
])
def test_untrusted_svg_is_refused(svg, reason):
    # SVG injection vectors (scripts, foreign HTML, handlers, external references, XML
    # entities): common practice of sanitising SVG before embedding it inline.
    with pytest.raises(UntrustedSVG, match=reason):
        trusted_svg(svg)


def test_svg_text_escapes_survive_the_check():
    svg = '<svg xmlns="http://www.w3.org/2000/svg"><defs><g id="s"/></defs><use href="#s"/><text>&lt;b&gt;</text></svg>'
    assert "&lt;b&gt;" in trusted_svg(svg)


def test_fetcher_serves_only_data_uris_and_project_files(tmp_path):
    inside = tmp_path / "project"
    inside.mkdir()
    (inside / "logo.svg").write_text('<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>')
    fetcher = ProjectFetcher([inside])
    assert fetcher.allows("data:text/plain,hello")
    assert fetcher.allows((inside / "logo.svg").as_uri())
    assert not fetcher.allows("http://example.invalid/x.png")
    assert not fetcher.allows("https://example.invalid/x.png")
    assert not fetcher.allows("file:///etc/passwd")
    assert not fetcher.allows((inside / ".." / "elsewhere.png").as_uri())
    # and in a real render nothing outside is fetched (no network: the URL is refused first)
    html = ('<img src="http://example.invalid/x.png"><img src="file:///etc/passwd">'
            f'<img src="{(inside / "logo.svg").as_uri()}"><p>ok</p>')
    pdf = html_to_pdf(html, allowed_dirs=[inside], fetcher=fetcher)
    assert "ok" in pdf_text(pdf)
    assert fetcher.refused == ["http://example.invalid/x.png", "file:///etc/passwd"]


# --- the streaming join ---------------------------------------------------------------------

def blank_pdf(width=200, height=100, attachment: bytes | None = None, name: str = "rec.json") -> bytes:
    if attachment is None:
        writer = PdfWriter()
        writer.add_blank_page(width, height)
        out = io.BytesIO()
        writer.write(out)
        return out.getvalue()
    return html_to_pdf("<p>sheet</p>", pdfa=True, attachments=[JsonAttachment(name, attachment)])


def test_join_keeps_pages_bookmarks_metadata_and_attachments():
    out = io.BytesIO()
    join = PdfJoin(out, DocumentInfo(title="Package \u00e9", author="A. Engineer", subject="s", keywords=["k1", "k2"]), pdfa=True)
    assert join.add(blank_pdf(), bookmark="front") == 1
    assert join.add(blank_pdf(attachment=b'{"loop": "T-1"}', name="T-1.json"), bookmark="T-1: one") == 1
    assert join.add(blank_pdf(attachment=b'{"loop": "T-2"}', name="T-2.json"), bookmark="T-2: two") == 1
    join.close()
    reader = PdfReader(io.BytesIO(out.getvalue()), strict=True)
    assert len(reader.pages) == 3
    assert [(o.title, reader.get_destination_page_number(o)) for o in reader.outline] == [
        ("front", 0), ("T-1: one", 1), ("T-2: two", 2)]
    meta = reader.metadata
    assert (meta.title, meta.author, meta.subject, meta["/Keywords"]) == ("Package \u00e9", "A. Engineer", "s", "k1, k2")
    assert reader.attachments == {"T-1.json": [b'{"loop": "T-1"}'], "T-2.json": [b'{"loop": "T-2"}']}
    # each sheet carries its own file as an associated file of its page (PDF/A-3, ISO 19005-3 6.8)
    spec = reader.pages[1]["/AF"][0].get_object()
    assert spec["/EF"]["/F"].get_object().get_data() == b'{"loop": "T-1"}'
    assert "/OutputIntents" in reader.trailer["/Root"]
    assert b"<pdfaid:part>3</pdfaid:part>" in reader.trailer["/Root"]["/Metadata"].get_object().get_data()


def test_join_memory_does_not_hold_the_sources():
    # The writer keeps numbers and offsets only: the output grows, the joiner's state does not
    # hold page objects (checked by size of its bookkeeping against the pages written).
    out = io.BytesIO()
    join = PdfJoin(out, DocumentInfo(title="t"))
    page = blank_pdf()
    for i in range(200):
        join.add(page, bookmark=str(i))
    join.close()
    assert join.page_count == 200
    assert all(isinstance(n, int) for n in join._offsets)
    assert len(PdfReader(io.BytesIO(out.getvalue())).outline) == 200


def test_drawing_list_is_laid_out_in_parts(example):
    # A list of thousands of rows is rendered in parts (memory flat); the cover comes once.
    from loopdocs.render.package import ListRow, front_html

    rows = [ListRow(n, f"D-{n}", f"T-{n}", f"service {n}", "A") for n in range(1, 601)]
    settings = sheet_settings({})
    first = front_html(example.project.config.title_block, settings, rows, first=0, count=250)
    second = front_html(example.project.config.title_block, settings, rows, first=250, count=250)
    assert 'class="cover"' in first and 'class="cover"' not in second
    assert "(continued)" in second and ">T-251<" in second and ">T-250<" not in second and ">T-501<" not in second
    assert "<td>600</td>" in first  # the cover counts every sheet
