"""Sheet rendering speed (issue 14 items 3 and 4) without changing what is rendered: the
stylesheet and font configuration kept per worker, split groups indexed by loop once,
join fragments made in the workers, front-matter parts keyed on their own rows, the
checks of a build run without the cyclic garbage collector.

References: weasyprint's own rendering of the same HTML (a general-purpose library), pypdf
reading the PDFs, a build from scratch into an empty folder (no cache), and the CSS
specifications for which at-rules register something outside their stylesheet.
"""

from __future__ import annotations

import gc
import pickle
import sys
from pathlib import Path

import pytest
from pypdf import PdfReader

from loopdocs.model.tagname import parse_tag
from loopdocs.render.builder import FRAGMENTS_DIR, PACKAGE_NAME, build
from loopdocs.render.cache import CACHE_DIR_NAME

sys.path.insert(0, str(Path(__file__).resolve().parent))
from test_build import EXAMPLE, LOOPS3, small_project  # noqa: E402


def _pages(data: bytes) -> list[tuple[list[float], bytes, str]]:
    """Each page's media box, decompressed content stream and text (pypdf)."""
    import io

    reader = PdfReader(io.BytesIO(data))
    return [([float(v) for v in page.mediabox], page.get_contents().get_data(), page.extract_text())
            for page in reader.pages]


@pytest.fixture
def worker_process(monkeypatch):
    """This test process as a build worker (``pdf.start_worker``), undone afterwards."""
    import weasyprint.css

    from loopdocs.render import pdf

    monkeypatch.setattr(weasyprint.css, "CSS", weasyprint.css.CSS)
    monkeypatch.setattr(pdf, "_PROCESS", {})
    pdf.start_worker()
    return pdf


def test_kept_stylesheet_and_fonts_render_what_weasyprint_renders(worker_process):
    # reference: weasyprint itself rendering the same sheet HTML with its defaults (a new
    # font configuration and a fresh parse of sheet.css per document)
    import weasyprint

    from loopdocs.checks import check_project
    from loopdocs.read.project_file import locate
    from loopdocs.render.pieces import loop_findings, loop_pieces
    from loopdocs.render.settings import sheet_settings
    from loopdocs.render.sheet import TEMPLATES_DIR, SheetFrame, print_zoom, sheet_html

    pdf = worker_process
    checked = check_project(EXAMPLE)
    project = checked.project
    settings = sheet_settings(project.config.sheet, locate(EXAMPLE).config_file)
    found = loop_findings(checked.findings, project)
    loops = list(project.loops)[:2]
    htmls = []
    for number, loop_id in enumerate(loops, start=1):
        pieces, _ = loop_pieces(project, loop_id, found[loop_id], list(checked.splits or []), {})
        htmls.append(sheet_html(pieces, SheetFrame(project.config.title_block, settings, number, len(loops))))
    zoom = print_zoom(settings)
    kept = []
    for html in htmls:
        fetcher = pdf.ProjectFetcher([TEMPLATES_DIR])
        ours = pdf._write(pdf._document(html, fetcher, TEMPLATES_DIR), fetcher, False, (), zoom)
        kept.append(pdf._PROCESS["stylesheet"][1])
        theirs = weasyprint.HTML(string=html, base_url=str(TEMPLATES_DIR.resolve()) + "/").write_pdf(zoom=zoom)
        assert _pages(ours) == _pages(theirs)
    assert kept[0] is kept[1]  # sheet.css parsed once for both documents
    assert pdf._PROCESS["fonts"] is pdf._font_config()  # one font configuration


def test_stylesheet_kept_only_when_a_parse_registers_nothing_outside_it():
    # CSS Fonts Module Level 4 §4 (@font-face adds a font to the document's font set),
    # CSS Cascade Level 5 §2 (@import pulls in another stylesheet) and §6.4 (@layer orders
    # layers across stylesheets), CSS Counter Styles Level 3 §3 (@counter-style names a
    # style for the whole document): those are not kept; @page and @media rules belong to
    # the stylesheet itself (CSS Paged Media Level 3 §3, Media Queries Level 4 §2)
    from loopdocs.render.pdf import SHEET_CSS, plain_stylesheet

    assert plain_stylesheet("@page { size: A3 landscape } p { color: red } @media print { p { color: blue } }")
    assert not plain_stylesheet("@font-face { font-family: x; src: url(x.ttf) } p { font-family: x }")
    assert not plain_stylesheet('@import url("other.css"); p { color: red }')
    assert not plain_stylesheet("@layer base; p { color: red }")
    assert not plain_stylesheet("@counter-style thumbs { system: cyclic; symbols: x; }")
    assert not plain_stylesheet("@media print { @font-face { font-family: x; src: url(x.ttf) } }")
    assert plain_stylesheet(SHEET_CSS.read_text(encoding="utf-8"))  # the templates' own: kept


def test_split_groups_by_loop_are_the_groups_each_sheet_found_by_scanning():
    # reference: the scan of every group that each sheet made before (pieces.loop_groups)
    from loopdocs.checks import check_project
    from loopdocs.render.builder import splits_by_loop
    from loopdocs.render.pieces import loop_groups

    checked = check_project(EXAMPLE)
    splits = list(checked.splits or [])
    by_loop = splits_by_loop(splits)
    assert splits and sum(len(groups) for groups in by_loop.values()) == len(splits)
    for loop_id in checked.project.loops:
        assert by_loop.get(loop_id, []) == loop_groups(checked.project, loop_id, splits), loop_id


def test_workers_keep_each_sheets_join_fragment_and_checks_run_without_the_collector(tmp_path, monkeypatch):
    import loopdocs.checks

    real_check = loopdocs.checks.check_project
    collecting = []

    def check_project(*args, **kwargs):
        collecting.append(gc.isenabled())
        return real_check(*args, **kwargs)

    monkeypatch.setattr(loopdocs.checks, "check_project", check_project)
    project = small_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    was = gc.isenabled()
    result = build(project, out, workers=2)
    assert collecting == [False] and gc.isenabled() is was  # as `loopdocs check` does; state restored
    fragments = out / CACHE_DIR_NAME / FRAGMENTS_DIR
    for loop_id, path in result.loop_files.items():
        with open(fragments / (path.name + ".frag"), "rb") as handle:
            stamp, fragment = pickle.load(handle)
        stat = path.stat()
        assert stamp == (stat.st_size, stat.st_mtime_ns), loop_id  # made from the sheet as written
        assert len(fragment.pages) == len(PdfReader(path).pages), loop_id  # pypdf's page count


def test_editing_one_loop_renders_only_the_front_part_listing_it(tmp_path, monkeypatch):
    import loopdocs.render.package

    monkeypatch.setattr(loopdocs.render.package, "LIST_ROWS_PER_PART", 1)  # one drawing-list row a part
    project = small_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    first = build(project, out, workers=2)
    loops = list(first.loop_files)
    parts = [out / CACHE_DIR_NAME / f"front-{i}.pdf" for i in range(len(loops))]
    stamps = [p.stat().st_mtime_ns for p in parts]

    def rename(row):
        if parse_tag(row["tag"]).loop_id == "T-7401":
            row["service"] = "Renamed service"
        return row

    small_project(project, LOOPS3, edit=rename)
    changed = build(project, out, workers=2)
    assert changed.rendered == ["T-7401"] and changed.front_rendered
    listed = loops.index("T-7401")
    assert [p.stat().st_mtime_ns != s for p, s in zip(parts, stamps)] == [i == listed for i in range(len(loops))]
    assert "Renamed service" in "".join(page.extract_text() for page in PdfReader(parts[listed]).pages)

    # reference: the same project built from scratch into an empty folder (no cache)
    fresh = build(project, tmp_path / "fresh", workers=2)
    ours, theirs = PdfReader(out / PACKAGE_NAME), PdfReader(fresh.package)
    assert [p.extract_text() for p in ours.pages] == [p.extract_text() for p in theirs.pages]
    assert [(o.title, ours.get_destination_page_number(o)) for o in ours.outline] == \
        [(o.title, theirs.get_destination_page_number(o)) for o in theirs.outline]
