"""Loop sheet layout: the alarm and trip table, pages per loop, the packing of the page.

Sources, named beside each check: ISA-5.1 (succeeding letters H and L of a switch),
ISO 216 (A-series sizes), ISO 3098-1 (lettering, from memory), and common practice for
the dead band of a switch (the difference between its trip and its reset).
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest
from openpyxl import load_workbook
from pypdf import PdfReader

from loopdocs.checks import check_project
from loopdocs.core.formatting import fmt_number
from loopdocs.render.caltables import display_tables
from loopdocs.render.packing import Box, pack, pack_pages
from loopdocs.render.pdf import sheet_pdf
from loopdocs.render.pieces import loop_pieces
from loopdocs.render.settings import sheet_settings
from loopdocs.render.sheet import SheetFrame, content_box_mm, sheet_layout, sheet_plan, svg_size_mm
from loopdocs.render.trip_settings import TITLE, settings_table

EXAMPLE = Path(__file__).resolve().parents[1] / "project_example"

ROWS = [
    {"tag": "LT-601", "service": "Wort tank level", "signal": "4-20 mA", "range_low": 0, "range_high": 3000,
     "units": "mm", "alarm_l": 500, "alarm_h": 2500, "alarm_hh": 2800, "interlock": "IL-601 overfill"},
    {"tag": "LIC-601", "signal": "4-20 mA", "range_low": 0, "range_high": 3000, "units": "mm", "set_point": 1500},
    {"tag": "LSHH-601", "signal": "discrete", "units": "mm", "set_point": 2900, "reset": 2850,
     "interlock": "IL-601 overfill"},
    {"tag": "LSL-601", "signal": "discrete", "units": "mm", "set_point": 300, "reset": 350},
    {"tag": "LV-601", "signal": "4-20 mA", "driven_by": "LIC-601"},
]


def pieces(checked, loop_id):
    splits = list(getattr(checked, "splits", None) or [])
    found = [f for f in checked.findings if f.loop == loop_id]
    return loop_pieces(checked.project, loop_id, found, splits, {})[0]


def pages_of(pdf: bytes) -> list[str]:
    return [" ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(pdf)).pages]


# --- alarm and trip settings -------------------------------------------------------------

@pytest.fixture(scope="module")
def level_loop(index_files):
    path = index_files.write(ROWS)
    return path, check_project(path)


def test_alarm_and_trip_table_holds_the_index_values_with_units(level_loop, index_files):
    path, checked = level_loop
    sheet = load_workbook(path)[index_files.SHEET]

    def cell(key: str, i: int):
        _, row, letter = index_files.cell(key, i)
        return sheet[f"{letter}{row}"].value

    table = settings_table([*pieces(checked, "L-601").tags])
    assert table is not None and table.tag == TITLE
    rows = {r[0]: dict(zip(table.heads, r)) for r in table.rows}
    assert set(rows) == {"LT-601", "LIC-601", "LSHH-601", "LSL-601"}  # LV-601 has no setting
    lt, sw = rows["LT-601"], rows["LSHH-601"]
    for head, key in (("Alarm L", "alarm_l"), ("Alarm H", "alarm_h"), ("Alarm HH", "alarm_hh")):
        assert lt[head] == fmt_number(cell(key, 0))
    assert "Alarm LL" not in table.heads  # no tag has one: the column is left out
    assert lt["Units"] == cell("units", 0) == "mm" and lt["Interlock"] == cell("interlock", 0)
    assert (sw["Set Point"], sw["Reset"]) == (fmt_number(cell("set_point", 2)), fmt_number(cell("reset", 2)))
    # ISA-5.1: H after the S is a high switch, tripping as the value rises; L a low one
    assert sw["Direction"] == "high, trips rising" and rows["LSL-601"]["Direction"] == "low, trips falling"
    # dead band = trip minus reset, as a distance (common practice): 2900 - 2850 = 50 mm
    assert sw["Dead band"] == "50" and rows["LSL-601"]["Dead band"] == "50"
    assert rows["LIC-601"]["Set Point"] == "1500" and rows["LIC-601"]["Direction"] == "operating set point"


def test_alarm_and_trip_table_is_printed_on_the_sheet(level_loop):
    _, checked = level_loop
    frame = SheetFrame(checked.project.config.title_block, sheet_settings({}), 1, 1)
    text = " ".join(pages_of(sheet_pdf(pieces(checked, "L-601"), frame)))
    assert TITLE in text and "IL-601 overfill" in text
    assert "high, trips rising" in text and "2900" in text and "2850" in text


def test_no_alarm_table_without_settings(level_loop):
    _, checked = level_loop
    assert settings_table([checked.project.tags["LV-601"]]) is None


# --- pages per loop ------------------------------------------------------------------------

@pytest.fixture(scope="module")
def example_frame():
    checked = check_project(EXAMPLE)
    return SheetFrame(checked.project.config.title_block, sheet_settings({}), 1, len(checked.project.loops))


@pytest.fixture(scope="module")
def example_pdfs(example_frame):
    checked = check_project(EXAMPLE)
    frame = example_frame
    return {loop_id: (pieces(checked, loop_id), sheet_pdf(pieces(checked, loop_id), frame))
            for loop_id in checked.project.loops}


def test_loops_without_a_range_chart_are_one_page(example_pdfs):
    # issue 11 item 5: one A3 page per loop, holding the diagram and every calibration table
    single = {lid: pdf for lid, (p, pdf) in example_pdfs.items() if not p.range_charts_svg}
    assert len(single) >= 4
    assert {lid: len(pages_of(pdf)) for lid, pdf in single.items()} == {lid: 1 for lid in single}


def test_every_example_loop_is_one_page(example_pdfs):
    # issue 11 item 5: one A3 page per loop with up to three final elements (the example's
    # split loops have two and three), diagram, range chart and every table on it
    assert {lid: len(pages_of(pdf)) for lid, (_, pdf) in example_pdfs.items()} == {lid: 1 for lid in example_pdfs}


def test_diagram_and_chart_on_the_first_page_and_a_second_page_only_continues(example_pdfs, example_frame):
    frame = example_frame
    _, box_h = content_box_mm(sheet_settings({}))
    for loop_id, (p, pdf) in example_pdfs.items():
        pages = pages_of(pdf)
        layout = sheet_plan(p, frame)
        # the PDF has the pages the packer planned (no box ran over its page), the
        # diagram on the first
        assert len(pages) == len(layout), loop_id
        assert ("diagram", 0) in [q.box.key for q in layout[0]], loop_id
        assert all(q.box.key[0] == "table" or q.box.key[0] == "chart" for page in layout[1:] for q in page)
        charts_fit = p.range_charts_svg and (svg_size_mm(p.diagram_svg)[1] + 4
                                             + sum(svg_size_mm(c)[1] + 4 for c in p.range_charts_svg) <= box_h)
        if charts_fit:
            assert "Split range" in pages[0], loop_id  # the range chart's title
        for page in pages[1:]:
            assert "tolerance" in page, loop_id  # calibration tables continue
        # every table is printed once, on some page
        text = " ".join(pages)
        for table in display_tables(p.calibrations):
            assert table.tag in text


def test_diagram_is_placed_at_full_size(example_pdfs):
    # issue 11 item 5: the diagram at full size, never scaled down to make room
    for loop_id, (p, _) in example_pdfs.items():
        width, height = svg_size_mm(p.diagram_svg)
        box_w, box_h = content_box_mm(sheet_settings({}))
        assert width <= box_w and height <= box_h, loop_id
        first = sheet_layout((width, height), [svg_size_mm(c) for c in p.range_charts_svg],
                             display_tables(p.calibrations), sheet_settings({}))[0]
        assert first[0].box.key == ("diagram", 0) and (first[0].x_mm, first[0].y_mm) == (0.0, 0.0)
        assert (first[0].box.width_mm, first[0].box.height_mm) == (width, height)


def test_a4_is_the_a3_layout_at_half_size(example_pdfs):
    # ISO 216: A4 is A3 halved, a linear scale of 1/sqrt(2) = 297/420
    checked = check_project(EXAMPLE)
    p, a3 = example_pdfs["T-3110"]
    a4 = sheet_pdf(p, SheetFrame(checked.project.config.title_block, sheet_settings({"size": "A4"}), 1, 11))
    box3, box4 = (PdfReader(io.BytesIO(pdf)).pages[0].mediabox for pdf in (a3, a4))
    assert float(box4.width) / float(box3.width) == pytest.approx(297 / 420, abs=1e-3)
    assert float(box4.height) / float(box3.height) == pytest.approx(210 / 297, abs=1e-3)


# --- the packer ------------------------------------------------------------------------------

def test_packed_boxes_stay_inside_and_never_overlap():
    boxes = [Box(i, w, h) for i, (w, h) in enumerate(
        [(250, 150), (180, 110), (72, 98), (56, 58), (56, 58), (56, 55), (56, 42), (56, 42), (60, 50)])]
    placed, rest = pack(boxes, 380, 270)
    assert [p.box.key for p in placed] == [0, 1, 2, 3, 4, 5, 6, 7, 8][:len(placed)] or rest
    for a in placed:
        assert a.x_mm >= 0 and a.y_mm >= 0 and a.right_mm <= 380 and a.bottom_mm <= 270
        for b in placed:
            if a is not b:
                assert (a.right_mm + 4 <= b.x_mm + 1e-9 or b.right_mm + 4 <= a.x_mm + 1e-9
                        or a.bottom_mm + 4 <= b.y_mm + 1e-9 or b.bottom_mm + 4 <= a.y_mm + 1e-9)


def test_what_does_not_fit_continues_on_a_second_page_and_a_huge_box_gets_its_own():
    pages = pack_pages([Box("d", 100, 80)], [Box("t1", 100, 15), Box("t2", 100, 15), Box("big", 300, 300)], 100, 100)
    assert [[p.box.key for p in page] for page in pages] == [["d", "t1"], ["t2"], ["big"]]


def test_tables_go_in_the_free_corner_of_the_diagram_but_the_chart_does_not():
    # A diagram 200 x 150 mm, empty right of x = 100 below y = 60: a 60 x 40 table goes in
    # that corner, 4 mm from what is drawn; the 150 x 80 chart, placed before the tables,
    # goes under the diagram. No box overlaps another's drawn part (common practice: a
    # table never covers a line of the diagram).
    diagram = Box("d", 200, 150, free_corner_mm=(100, 60))
    pages = pack_pages([diagram, Box("chart", 150, 80)], [Box("t", 60, 40)], 260, 260)
    where = {p.box.key: (p.x_mm, p.y_mm) for p in pages[0]}
    assert len(pages) == 1 and where["chart"] == (0.0, 154.0)
    assert where["t"] == (104.0, 64.0)
    # without the corner the table goes beside the chart instead
    plain = pack_pages([Box("d", 200, 150), Box("chart", 150, 80)], [Box("t", 60, 40)], 260, 260)
    assert {p.box.key: (p.x_mm, p.y_mm) for p in plain[0]}["t"] == (154.0, 154.0)


def test_the_diagrams_free_corner_holds_nothing_and_the_band_lines_stop_above_it():
    from loopdocs.draw.layout import layout_loop

    checked = check_project(EXAMPLE)
    found = 0
    for loop_id in checked.project.loops:
        layout = layout_loop(checked.project, loop_id)
        drawing = getattr(layout, "drawing", layout)
        corner = drawing.free_corner_mm
        if corner is None:
            continue
        found += 1
        x, y = corner
        boxes = [s.box for s in drawing.symbols] + [t.box for t in drawing.texts] + [d.box for d in drawing.dots]
        boxes += [f.rect for f in drawing.frames]
        for item in (*drawing.lines, *drawing.paths):
            if getattr(item, "role", "") == "band-boundary" and abs(item.points[0][0] - x) < 0.01:
                continue  # the field band's edge runs down beside the corner
            boxes += item.segment_boxes()
        # nothing drawn both right of the field band's edge and below the corner
        assert all(b.bottom <= y + 1e-6 or b.right <= x + 1e-6 for b in boxes), loop_id
        assert y < drawing.height_mm and x < drawing.width_mm
    assert found >= 3  # the split loops' diagrams have an empty lower right


def test_every_table_column_holds_the_longest_word_of_its_head(example_pdfs):
    # The sheet breaks a head at its spaces only (CSS white-space: normal; a tag such as
    # PV-6201A was printed across its column's rule when its width counted a break after
    # the hyphen): each column holds its head's longest word in bold, padding included.
    from loopdocs.draw.text import text_width_mm
    from loopdocs.render.caltables import CELL_PAD_MM, TABLE_TEXT_MM

    checked = 0
    for loop_id, (p, _) in example_pdfs.items():
        for table in display_tables(p.calibrations):
            for head, width in zip(table.heads, table.column_widths_mm):
                for word in head.split():
                    assert text_width_mm(word, TABLE_TEXT_MM, bold=True) + CELL_PAD_MM <= width + 0.05, (loop_id, head)
                    checked += 1
    assert checked > 100


def test_trip_table_of_interlocks_only_has_no_units_column():
    # a loop whose only setting is an interlock reference (FV-1201 in the example) gets no
    # empty Units column (seen on the F-1201 sheet)
    from loopdocs.model.records import Tag
    from loopdocs.model.tagname import parse_tag, tag_kind
    from loopdocs.render.trip_settings import settings_table

    parts = parse_tag("FV-1201")
    valve = Tag(tag="FV-1201", parts=parts, kind=tag_kind(parts), loop="F-1201", row=2, interlock="CE-012")
    assert settings_table([valve]).heads == ("Tag", "Interlock")


# --- tables merged on the sheet, table variants ---------------------------------------------

SPLIT_ROWS = [
    {"tag": "TIC-900", "location": "control room", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse",
     "io_address": "AO-1"},
    {"tag": "TV-900A", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "driven_by": "TIC-900",
     "split_method": "positioner", "co_start_pct": 0, "co_end_pct": 50, "travel_start_pct": 0, "travel_end_pct": 100,
     "input_low": 4, "input_high": 12, "input_units": "mA"},
    {"tag": "TV-900B", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC", "driven_by": "TIC-900",
     "split_method": "positioner", "co_start_pct": 50, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
     "input_low": 12, "input_high": 20, "input_units": "mA"},
]


def test_stroke_tests_of_a_split_pair_print_as_one_table_with_a_column_per_valve(index_files):
    # A positioner split at 50 % CO, the numbers worked by hand from the positioner's
    # input range, I = Ilo + (Ihi - Ilo) x travel (docs/design.md §4.3): TV-900A on
    # 4-12 mA strokes 0/25/50/75/100 % at 4, 6, 8, 10, 12 mA; TV-900B on 12-20 mA at 12,
    # 14, 16, 18, 20 mA. The sheet prints both in one table (a column per valve, the travel
    # once); the tolerance, 1 % of each span (8 mA x 1 % = 0.08 mA), is the same for both.
    checked = check_project(index_files.write(SPLIT_ROWS))
    p = pieces(checked, "T-900")
    strokes = [t for t in display_tables(p.calibrations) if t.title == "valve stroke"]
    assert len(strokes) == 1
    (table,) = strokes
    assert table.tag == "TV-900A, TV-900B"
    assert table.heads == ("Apply mA TV-900A", "Apply mA TV-900B", "Expect % travel")
    assert [tuple(float(v) for v in r) for r in table.rows] == [
        (4.0, 12.0, 0.0), (6.0, 14.0, 25.0), (8.0, 16.0, 50.0), (10.0, 18.0, 75.0), (12.0, 20.0, 100.0)]
    assert "±0.08 mA" in table.tolerance and "(TV-900A)" not in table.tolerance
    # the sheet prints it on its one page, the valves' rows side by side
    frame = SheetFrame(checked.project.config.title_block, sheet_settings({}), 1, 1)
    pages = pages_of(sheet_pdf(p, frame))
    assert len(pages) == 1 and re.search(r"6\.000\s+14\.000\s+25\.0(?!\d)", pages[0])


def test_a_table_is_never_printed_taller_than_its_estimate(example_frame):
    # The packer places every table by its estimated height: a table printed taller than
    # its estimate would run into the box under it (common practice: nothing overlaps on a
    # drawing). Measured on the laid-out sheets (weasyprint's boxes): every placed table and
    # the side column's text of each example sheet, each estimate at least the rendered
    # height and at most 7 mm over.
    from weasyprint import HTML

    from loopdocs.render.sheet import TEMPLATES_DIR, sheet_context, sheet_html

    px = 25.4 / 96
    checked = check_project(EXAMPLE)
    settings = sheet_settings(dict(checked.project.config.sheet))
    frame = SheetFrame(checked.project.config.title_block, settings, 1, len(checked.project.loops))
    measured = 0
    for loop_id in ("L-2101", "P-4120", "P-6201", "T-3105", "P-7410"):
        p = pieces(checked, loop_id)
        context = sheet_context(p, frame)
        doc = HTML(string=sheet_html(p, frame), base_url=str(TEMPLATES_DIR) + "/").render()

        def walk(box):
            yield box
            for child in getattr(box, "children", None) or []:
                yield from walk(child)

        rendered = [b.margin_height() * px for page in doc.pages for b in walk(page._page_box)
                    if getattr(b, "element_tag", None) == "table" and "cal" in (b.element.get("class") or "")
                    and type(b).__name__ == "BlockBox"]
        estimated = [item["item"].height_mm for page in context["pages"] for item in page["items"] if item["kind"] == "table"]
        assert len(rendered) == len(estimated), loop_id
        for est, got in zip(estimated, rendered):
            assert got <= est + 1e-6 and est - got <= 7.0, (loop_id, est, got)
            measured += 1
    assert measured >= 30


def test_alarm_table_wrapped_to_fit_keeps_every_word_whole():
    # Where the alarm and trip table fits nowhere at its own width it is printed with its
    # columns of words (direction, interlock) wrapped: narrower, a line more where a cell
    # wraps, never a word broken inside (common practice: a tag or an interlock reference
    # is never split), and every value still in its own column.
    from loopdocs.draw.text import text_width_mm
    from loopdocs.render.caltables import CELL_PAD_MM, TABLE_TEXT_MM
    from loopdocs.render.sheet import WRAPPED_COLUMN_MM, variants

    checked = check_project(EXAMPLE)
    p = pieces(checked, "L-2101")
    table = settings_table([*p.tags, *p.linked_tags])
    wrapped = variants(table)[0]
    assert wrapped.width_mm < table.width_mm and wrapped.rows == table.rows
    widths = wrapped.column_widths_mm
    for i in wrapped.text_columns:
        for row in wrapped.rows:
            for word in row[i].split():
                assert text_width_mm(word, TABLE_TEXT_MM) + CELL_PAD_MM <= widths[i] + 1e-6, word
        assert widths[i] <= max(WRAPPED_COLUMN_MM, max(text_width_mm(w, TABLE_TEXT_MM) + CELL_PAD_MM + 0.5
                                                       for row in wrapped.rows for w in row[i].split() or [""]))
    # the switch's interlock "CE-021 closes LV-2101A/B" wraps: its row takes two lines, the
    # transmitter's (no words) one
    lines = {row[0]: wrapped.row_lines(row) for row in wrapped.rows}
    assert lines == {"LT-2101": 1, "LSHH-2101": 2}
    assert wrapped.height_mm > table.height_mm


def test_revision_table_estimate_holds_wrapped_descriptions():
    # A re-issued sheet's revision entry says what changed and wraps to several lines; the
    # side column above it is packed by the estimate, so a table printed taller than its
    # estimate would push the notes into the caution box (common practice: nothing
    # overlaps on a drawing). Measured on the laid-out sheet (weasyprint's boxes): the
    # estimate is at least the rendered height and at most 4 mm over, for one short row
    # and for three rows with the descriptions an issue writes.
    from weasyprint import HTML

    from loopdocs.render.sheet import TEMPLATES_DIR, revisions_table_mm, sheet_html

    px = 25.4 / 96
    checked = check_project(EXAMPLE)
    long_rows = [
        {"rev": "A", "date": "2026-11-02", "description": "issued for review", "by": "AE"},
        {"rev": "0", "date": "2026-11-16", "by": "AE",
         "description": "issued for construction; Range of PT-4120 changed 0-4 bar to 0-5 bar; "
                        "Alarm H of PT-4120 changed 3.5 to 4.2; Cv of PV-4120B changed 15 to 18; and 2 more changes"},
        {"rev": "1", "date": "2026-11-30", "by": "AE",
         "description": "issued for construction; Service of PY-4120 changed LP steam letdown I/P converter "
                        "to LP steam letdown I/P converter, relocated"},
    ]
    for rows in ([{"rev": "A", "date": "2026-11-02", "description": "issued for review", "by": "AE"}], long_rows):
        settings = sheet_settings({"revisions": rows})
        frame = SheetFrame(checked.project.config.title_block, settings, 1, len(checked.project.loops))
        doc = HTML(string=sheet_html(pieces(checked, "P-4120"), frame), base_url=str(TEMPLATES_DIR) + "/").render()

        def walk(box):
            yield box
            for child in getattr(box, "children", None) or []:
                yield from walk(child)

        tables = [b for page in doc.pages for b in walk(page._page_box)
                  if getattr(b, "element_tag", None) == "table" and "revisions" in (b.element.get("class") or "")
                  and type(b).__name__ in ("BlockBox", "TableWrapperBox")]
        assert len(tables) == 1
        rendered_mm = tables[0].margin_height() * px
        estimated_mm = revisions_table_mm(settings.revisions)
        assert rendered_mm <= estimated_mm + 1e-6 and estimated_mm - rendered_mm <= 4.0, (len(rows), estimated_mm, rendered_mm)
