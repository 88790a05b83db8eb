"""One presentation of each calibration table, shown alike by the loop sheet (HTML), the
terminal (rich) and the technicians' workbook (openpyxl, read back): the same heads with
units, the same numbers as text, the same tolerance and notes; and a change made in the
presentation shows in all three.

Reference values: docs/design.md §4 (I = 4 + 16 p; square root: 50 % flow = 25 % DP =
12 mA, DP = q^2 x DP span, ISO 5167-1: flow through a differential-pressure device is
proportional to the square root of DP); IEC 60751 Pt100 table (from memory).
"""

from __future__ import annotations

import dataclasses
import re
from html.parser import HTMLParser
from pathlib import Path

import openpyxl
import pytest

from loopdocs.calc.signals import MA_4_20
from loopdocs.calc.tables import CO_UNIT, TRAVEL_UNIT, DpRange, sqrt_flow_table
from loopdocs.calibration import presentation
from loopdocs.calibration.presentation import EXPECT, MOVING, Note, present_table, present_tables
from loopdocs.calibration.project_tables import CalibrationSet, calibration_set
from loopdocs.checks import check_project
from loopdocs.commands.calibration_text import rich_table
from loopdocs.core.formatting import UNIT_DECIMALS, column_decimals, display_decimals, fmt_number
from loopdocs.render.caltables import SET_SIGNAL, SET_SIGNAL_ROWS
from loopdocs.render.pieces import loop_pieces
from loopdocs.render.settings import sheet_settings
from loopdocs.render.sheet import SheetFrame, sheet_html
from loopdocs.sheets import technicians_workbook
from loopdocs.sheets.technicians_workbook import HEADER_ROW, write_workbook

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"
MINUS = "\u2212"


@pytest.fixture(scope="module")
def example():
    return check_project(EXAMPLE)


@pytest.fixture(scope="module")
def cset(example):
    return calibration_set(example.project)


def flow_table():
    """FT-6: 0 to 120 m3/h on 4-20 mA, DP range 0 to 25 kPa, root extracted in the transmitter."""
    return sqrt_flow_table("FT-6", 0.0, 120.0, "m3/h", MA_4_20, DpRange(0.0, 25.0, "kPa"), accuracy_pct=0.5)


# --------------------------------------------------------------------------- reading the three outputs back


class _CalTables(HTMLParser):
    """The ``table.cal`` elements of a sheet: caption, heads, rows, notes (each as text)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tables: list[dict] = []
        self._in: str | None = None
        self._text: list[str] = []

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "table" and "cal" in (attrs.get("class") or "").split():
            self.tables.append({"caption": "", "heads": [], "rows": [], "notes": []})
        elif not self.tables:
            return
        elif tag in ("caption", "th", "td"):
            self._in, self._text = tag, []
            if tag == "td" and "cal-notes" in (attrs.get("class") or ""):
                self._in = "notes"
        elif tag == "tr" and self._in is None:
            self._row: list[str] = []
        elif tag == "br":
            self._text.append("\n")

    def handle_data(self, data):
        if self._in:
            self._text.append(data)

    def handle_endtag(self, tag):
        if not self.tables or self._in is None:
            if tag == "tr" and self.tables and getattr(self, "_row", None):
                self.tables[-1]["rows"].append(tuple(self._row))
                self._row = []
            return
        text = "".join(self._text).strip()
        current = self.tables[-1]
        if tag == "caption" and self._in == "caption":
            current["caption"] = text
        elif tag == "th":
            current["heads"].append(text)
        elif tag == "td" and self._in == "notes":
            current["notes"] = [line.strip() for line in text.split("\n")]
        elif tag == "td":
            self._row.append(text)
        if tag in ("caption", "th", "td"):
            self._in = None


def sheet_tables(html: str) -> dict[str, dict]:
    """The sheet's calibration tables keyed by their caption's first line (tag and kind words)."""
    parser = _CalTables()
    parser.feed(html)
    return {t["caption"].split("\n")[0]: t for t in parser.tables}


def sheet_notes(html: str) -> list[str]:
    """The numbered notes of the sheet's side column, in order (note 1 first)."""
    import html as html_lib

    section = re.search(r'<section class="notes">(.*?)</section>', html, re.S)
    return [html_lib.unescape(n).strip() for n in re.findall(r"<li>(.*?)</li>", section.group(1), re.S)] if section else []


def _plain(note: str) -> str:
    """A note as compared: first letter small, no final stop (a sheet note is a sentence)."""
    return (note[:1].lower() + note[1:]).rstrip(".")


def resolve_sheet_notes(shown: dict, notes: list[str]) -> dict:
    """A sheet table with its references to the sheet notes replaced by what they refer
    to: ``(note n)`` after the tolerance by the basis in brackets, ``see notes n, m``
    under the table by those notes."""
    caption = shown["caption"]
    ref = re.search(r" \(note (\d+)\)$", caption)
    if ref:
        basis = notes[int(ref.group(1)) - 1]
        assert basis.startswith("Tolerance: "), basis
        caption = caption[:ref.start()] + f" ({basis.removeprefix('Tolerance: ').rstrip('.')})"
    own = list(shown["notes"])
    # "see note 5" alone, or after the table's last note in brackets: "... (see note 5)"
    ref = re.search(r"(?:^| \()see notes? ([\d, ]+)\)?$", own[-1]) if own else None
    if ref:
        numbers = [int(n) for n in re.findall(r"\d+", ref.group(1))]
        own[-1] = own[-1][:ref.start()]
        own = [n for n in own if n] + [notes[n - 1] for n in numbers]
    return {**shown, "caption": caption, "notes": own}


def loop_html(example, loop_id: str, extra=()) -> str:
    found = [f for f in example.findings if f.loop == loop_id]
    pieces, _ = loop_pieces(example.project, loop_id, found, list(example.splits or []), {})
    if extra:
        pieces = dataclasses.replace(pieces, calibrations=tuple(pieces.calibrations) + tuple(extra))
    return sheet_html(pieces, SheetFrame(example.project.config.title_block, sheet_settings({}), 1, 1))


def terminal_cells(view) -> dict:
    """Heads, rows (without the limits column) and caption lines of the rich table of a view."""
    table = rich_table(view)
    heads = [str(c.header) for c in table.columns]
    cells = [list(map(str, c.cells)) for c in table.columns]
    rows = [tuple(row) for row in zip(*cells)]
    n = len(view.columns)
    from rich.text import Text

    caption = Text.from_markup(table.caption).plain.split("\n")
    return {"title": Text.from_markup(str(table.title)).plain, "heads": heads[:n], "rows": [r[:n] for r in rows],
            "limits": [r[n] for r in rows] if len(heads) > n else [], "caption": caption}


def _decimals_of(number_format: str) -> int:
    body = number_format.split('"')[0]
    return len(body.split(".")[1]) if "." in body else 0


def workbook_tables(path: Path) -> dict[str, dict]:
    """Per table of the workbook: title, note lines, the heads row, and the test rows as text
    (each number with the decimals of its cell's number format), keyed by tag and kind words."""
    wb = openpyxl.load_workbook(path)
    found: dict[str, dict] = {}
    for ws in wb.worksheets[1:-1]:
        header = {ws.cell(HEADER_ROW, c).value: c for c in range(1, ws.max_column + 1)}
        current = None
        for r in range(HEADER_ROW + 1, ws.max_row + 1):
            first, second = ws.cell(r, 1).value, ws.cell(r, 2).value
            if isinstance(first, str) and "  |  " in first:
                current = {"title": first, "notes": [], "heads": {}, "rows": []}
                found[first.split("  |  ")[0]] = current
            elif current is None:
                continue
            elif first is None and isinstance(second, str):
                current["notes"].append(second)
            elif first is None and ws.cell(r, header["Apply"]).value is not None:
                current["heads"] = {name: ws.cell(r, c).value for name, c in header.items()
                                    if ws.cell(r, c).value is not None}
            elif isinstance(first, str) and "/" in first:
                cells = {}
                for name, c in header.items():
                    cell = ws.cell(r, c)
                    if isinstance(cell.value, (int, float)) and name not in ("Ref",):
                        cells[name] = fmt_number(cell.value, _decimals_of(cell.number_format))
                current["rows"].append(cells)
    return found


def workbook_row_texts(view, book: dict) -> set[tuple[str, ...]]:
    """The workbook's test rows as tuples in the view's column order (by head, as the workbook placed them)."""
    by_head = {head: name for name, head in book["heads"].items()}
    names = [by_head[c.label] for c in view.columns if c.role != MOVING]  # the workbook's Dir column says it
    return {tuple(row[name] for name in names) for row in book["rows"]}


def view_rows_without_moving(view) -> set[tuple[str, ...]]:
    keep = [i for i, c in enumerate(view.columns) if c.role != MOVING]
    return {tuple(row[i] for i in keep) for row in view.rows}


# --------------------------------------------------------------------------- the three agree


def test_sheet_terminal_and_workbook_show_the_same_tables(example, cset, tmp_path):
    path = tmp_path / "cal.xlsx"
    write_workbook(cset, path)
    books = workbook_tables(path)
    loops = sorted({t.loop for t in cset.tables if t.loop})
    checked = referring = 0
    for loop_id in loops:
        tables = [t for t in cset.tables if t.loop == loop_id]
        html = loop_html(example, loop_id)
        on_sheet, notes = sheet_tables(html), sheet_notes(html)
        for view in present_tables(tables):
            # the sheet: caption (tag, kind words, tolerance), heads, rows, notes
            merged = view.kind == "fail action" and f"{view.tag} {view.words}" not in on_sheet
            strokes = view.kind == "final element" and f"{view.tag} {view.words}" not in on_sheet
            key = next(k for k in on_sheet if k.endswith(f" {view.words}")
                       and view.tag in k[:-len(view.words) - 1].split(", ")) if merged or strokes \
                else f"{view.tag} {view.words}"
            raw = on_sheet[key]
            shown = resolve_sheet_notes(raw, notes)
            referring += shown != raw
            if strokes:
                # the stroke tests of a loop's valves in one table: a signal column per valve,
                # the expected travel once; the valve's own signal tolerance named by its tag
                # where the valves' differ (render.caltables.merge_strokes)
                head, tolerance = shown["caption"].split("\ntolerance ")
                assert head == key
                sign = re.search(r"= (±\S+ \S+) =", view.tolerance).group(1)
                assert tolerance == view.tolerance or (f"{sign} ({view.tag})" in tolerance and
                                                       tolerance.endswith(view.tolerance.split(sign)[1]))
                col = list(shown["heads"]).index(f"{view.heads[0]} {view.tag}")
                assert shown["heads"][-1] == view.heads[1]
                assert tuple((r[col], r[-1]) for r in shown["rows"]) == view.rows
                printed = set(map(_plain, shown["notes"]))
                for n in view.note_texts:
                    assert _plain(n) in printed or _plain(f"{view.tag}: {n}") in printed, n
            else:
                assert shown["caption"] == f"{key}\ntolerance {view.tolerance}"
            if strokes:
                pass
            elif merged:
                # the fail-action tests of a loop's valves in one table: a Tag column, the
                # valve's own row, its instruction worded for every row (render.caltables)
                assert tuple(shown["heads"]) == ("Tag", *view.heads)
                assert tuple(r[1:] for r in shown["rows"] if r[0] == view.tag) == view.rows
                own = [_plain(SET_SIGNAL.sub(SET_SIGNAL_ROWS, n)) for n in view.note_texts]
                assert set(own) <= set(map(_plain, shown["notes"]))
            else:
                assert tuple(shown["heads"]) == view.heads
                assert tuple(shown["rows"]) == view.rows
                assert sorted(map(_plain, shown["notes"])) == sorted(map(_plain, view.note_texts))
            # the terminal: the same heads, cells, tolerance and notes
            term = terminal_cells(view)
            assert tuple(term["heads"]) == view.heads
            assert tuple(term["rows"]) == view.rows
            assert term["caption"] == [f"tolerance {view.tolerance}", *view.note_texts]
            assert term["title"].startswith(view.title)
            checked += 1
        # the workbook: one table per element (its loop check too), both directions
        for table in tables:
            view = present_table(table)
            book = books[f"{view.tag}  {view.words}"]
            assert f"tolerance {view.tolerance}" in book["title"] and view.range_text in book["title"]
            assert tuple(book["notes"]) == view.note_texts
            assert workbook_row_texts(view, book) == view_rows_without_moving(view), view.tag
            assert len(book["rows"]) == len(table.points)
            checked += 1
    assert checked > 40
    # notes printed with several tables of a sheet are printed once, as numbered sheet
    # notes the tables refer to (the split loops' valve tables share a tolerance basis)
    assert referring >= 10


def test_a_pt100_transmitter_row_reads_the_same_everywhere(example, cset, tmp_path):
    # TT-3105: -5 to 40 degC Pt100 on 4-20 mA; 25 % of span = 6.25 degC -> I = 4 + 16 x 0.25 = 8 mA
    # (docs/design.md §4); R(6.25 degC) = 102.440 ohm (IEC 60751 Callendar-Van Dusen, from memory).
    row = ("25", "6.25", "102.440", "8.000")
    heads = ("% span", "Apply degC", "Simulate ohm", "Expect mA")
    view = present_table(next(t for t in cset.tables if t.tag == "TT-3105"))
    assert view.heads == heads and row in view.rows
    shown = sheet_tables(loop_html(example, "T-3105"))["TT-3105 transmitter"]
    assert tuple(shown["heads"]) == heads and row in shown["rows"]
    term = terminal_cells(view)
    assert tuple(term["heads"]) == heads and row in term["rows"]
    path = tmp_path / "cal.xlsx"
    write_workbook(cset.select(["T-3105"]), path)
    book = workbook_tables(path)["TT-3105  transmitter"]
    assert row in workbook_row_texts(view, book)
    assert tuple(book["heads"][k] for k in ("Point", "Apply", technicians_workbook.SIMULATE, "Expected")) == heads


def test_square_root_flow_table_heads_and_numbers_agree(example, tmp_path):
    # 0-120 m3/h, DP 0-25 kPa: 50 % flow = 60 m3/h -> DP = 0.5^2 x 25 = 6.25 kPa -> 12 mA;
    # 10 % flow -> 1 % DP = 0.25 kPa -> 5.6 mA (docs/design.md §4, ISO 5167-1 square-root law).
    table = dataclasses.replace(flow_table(), loop="F-1201")
    view = present_table(table)
    heads = ("% span", "Flow m3/h", "Apply DP kPa", "Expect mA")
    assert view.heads == heads
    assert ("50", "60.0", "6.25", "12.000") in view.rows and ("10", "12.0", "0.25", "5.600") in view.rows
    assert any(n.startswith("square root") for n in view.note_texts)
    assert any(n.startswith("NAMUR NE 43: measuring 3.8 to 20.5 mA") for n in view.note_texts)
    html = loop_html(example, "F-1201", extra=[table])
    shown = resolve_sheet_notes(sheet_tables(html)["FT-6 transmitter"], sheet_notes(html))
    assert tuple(shown["heads"]) == heads and tuple(shown["rows"]) == view.rows
    assert sorted(map(_plain, shown["notes"])) == sorted(map(_plain, view.note_texts))
    term = terminal_cells(view)
    assert tuple(term["heads"]) == heads and tuple(term["rows"]) == view.rows
    assert term["caption"][1:] == list(view.note_texts)
    path = tmp_path / "flow.xlsx"
    write_workbook(CalibrationSet("P", "index.xlsx", (table,)), path)
    book = workbook_tables(path)["FT-6  transmitter"]
    assert workbook_row_texts(view, book) == set(view.rows)
    assert tuple(book["notes"]) == view.note_texts


def test_a_change_in_the_presentation_shows_in_all_three(example, cset, tmp_path, monkeypatch):
    # The writers take heads, numbers and notes from the view: alter the view, not the writers.
    original = presentation.present_table

    def altered(table):
        view = original(table)
        columns = tuple(dataclasses.replace(c, head="Read") if c.role == EXPECT and c.head == "Expect" else c
                        for c in view.columns)
        rows = tuple(row[:-1] + ("42.000",) for row in view.rows)
        return dataclasses.replace(view, columns=columns, rows=rows,
                                   notes=view.notes + (Note("note made in the presentation"),),
                                   tolerance="tolerance made in the presentation")

    monkeypatch.setattr(presentation, "present_table", altered)
    monkeypatch.setattr(technicians_workbook, "present_table", altered)
    tables = [t for t in cset.tables if t.tag == "TT-3105"]
    view = present_tables(tables)[0]
    assert view.heads[-1] == "Read mA"
    html = loop_html(example, "T-3105")
    shown = resolve_sheet_notes(sheet_tables(html)["TT-3105 transmitter"], sheet_notes(html))
    assert shown["heads"][-1] == "Read mA" and shown["rows"][0][-1] == "42.000"
    # every table of the sheet has it: printed once as a sheet note the table refers to
    assert "note made in the presentation" in map(_plain, shown["notes"])
    assert "tolerance made in the presentation" in shown["caption"]
    term = terminal_cells(view)
    assert term["heads"][-1] == "Read mA" and term["rows"][0][-1] == "42.000"
    assert term["caption"][-1] == "note made in the presentation"
    path = tmp_path / "cal.xlsx"
    write_workbook(cset.select(["T-3105"]), path)
    book = workbook_tables(path)["TT-3105  transmitter"]
    assert book["heads"]["Expected"] == "Read mA"
    assert book["notes"][-1] == "note made in the presentation"
    assert "tolerance made in the presentation" in book["title"]


# --------------------------------------------------------------------------- the rules in the view


def test_decimals_rule():
    # common practice (process calibrator resolution): mA and mV to 0.001, kPa to 0.01, travel to 0.1 %,
    # controller output to 0.01 %; other units resolve 1/10 000 of the span.
    assert UNIT_DECIMALS[TRAVEL_UNIT] == 1 and UNIT_DECIMALS[CO_UNIT] == 2
    assert (display_decimals(16, "mA"), display_decimals(80, "kPa"), display_decimals(100, "% travel")) == (3, 2, 1)
    assert display_decimals(45.0, "degC") == 2  # 3 - floor(log10 45) = 2: 0.01 degC on a 45 degC span
    assert display_decimals(3200.0, "mm") == 0 and display_decimals(250.0, "mbar") == 1
    # expected values resolve the tolerance to two significant digits: 0.0025 barg -> 4 decimals
    assert column_decimals([0.0, 2.5], "barg", resolve=0.0025) == 4
    assert fmt_number(-0.0004, 3) == "0.000" and fmt_number(-2.5, 2) == f"{MINUS}2.50"


def test_tolerance_text_and_derived_notes(cset):
    # TT-3105: 0.25 % of a 45 degC span = 0.1125 degC; of 16 mA = 0.04 mA (docs/design.md §4)
    view = present_table(next(t for t in cset.tables if t.tag == "TT-3105"))
    assert view.tolerance == "\u00b10.25 % of span = \u00b10.1125 degC = \u00b10.04 mA"
    assert view.note_texts[-2:] == (
        "simulated ohm: IEC 60751 Pt100",
        # NAMUR NE 43 (2003): measuring 3.8 to 20.5 mA; failure <= 3.6 mA or >= 21 mA
        "NAMUR NE 43: measuring 3.8 to 20.5 mA; failure at or below 3.6 mA or at or above 21 mA",
    )
    assert re.fullmatch(r"\u22125 to 40 degC -> 4 to 20 mA", view.range_text)
    # a valve whose Accuracy % is blank: 1 % of travel taken (common practice), and said so
    stroke = present_table(next(t for t in cset.tables if t.kind == "final element"))
    assert stroke.tolerance.startswith("\u00b11 % of span") and "Accuracy % blank: 1 % of travel taken" in stroke.tolerance
    # a dcs split element: the control-system scaling to enter, as an action
    dcs = [present_table(t) for t in cset.tables if t.kind == "final element" and t.dcs_scaling is not None]
    assert dcs and all(v.notes[-1].emphasis == "action" and v.notes[-1].text.startswith("Enter in the control system")
                       for v in dcs)


# --------------------------------------------------------------------------- one table of unit spellings


def test_signal_unit_spellings_are_read_in_one_place():
    # IEC 60382 / ANSI/ISA-50.00.01 pneumatic ranges: 3-15 psig, 20-100 kPa, 0.2-1.0 bar; a gauge
    # and a plain spelling are the same signal (common practice).
    from loopdocs.calc.signals import pneumatic_span
    from loopdocs.calc.units import canonical_unit

    assert (canonical_unit(" PSI "), canonical_unit("kPa g"), canonical_unit("BARG")) == ("psig", "kPa", "bar")
    assert [pneumatic_span(u).high for u in ("psi", "kPag", "barg")] == [15.0, 100.0, 1.0]
    with pytest.raises(ValueError, match="no standard pneumatic span"):
        pneumatic_span("mbar")
    # no other module keeps its own table of signal-unit spellings
    spelled = [p.relative_to(REPO).as_posix() for p in (REPO / "loopdocs").rglob("*.py")
               if re.search(r"""["']kpag["']\s*:""", p.read_text(encoding="utf-8"))]
    assert spelled == ["loopdocs/calc/units.py"]


def test_a_switch_shows_its_set_point_and_reset_without_a_span_column():
    # A switch is checked at its trip and reset values, not at places on a span (common practice):
    # PSH-1 trips rising at 6 barg and resets at 5.5 barg.
    from loopdocs.calc.trip_tables import switch_table

    view = present_table(switch_table("PSH-1", 6.0, 5.5, "barg", "high", (0.0, 10.0), 1.0))
    assert view.words == "switch set-point test"
    assert view.heads == ("Moving", "Apply barg", "Expect barg")
    # decimals of the switch's 0-10 barg range (display_decimals(10, "barg") == 2), not of the 0.5 barg
    # between its two points; the trip is approached rising, the reset falling
    assert [row[:2] for row in view.rows] == [("rising", "6.00"), ("falling", "5.50")]
