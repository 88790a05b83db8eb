"""Placement of a loop diagram: draws each station (:mod:`loopdocs.draw.devices`,
:mod:`loopdocs.draw.clusters`), then sizes the rows, spaces the columns, puts the line
labels and routes every line (docs/design.md §8.1).

- rows are as tall as their stations and line labels need, columns as wide as their
  widest station, gaps widened until every line label fits its run;
- outputs that share a terminal or an I/O channel join the row above with a vertical
  connector just before the shared item; positioners in series on one output are drawn
  as wired (:func:`_series_wires`); valves moved by one I/P hang on a pneumatic header;
- input rows join the function from above through its top, further outputs from below
  (:func:`_function_buses`); junction boxes and cabinets get dashed outlines; band titles
  and dashed separators go along the top (:func:`_bands`).

Nothing here is random or dated: the same rows give the same drawing.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from loopdocs.draw.annotations import (
    alarm_text,
    area_text,
    interlock_text,
    power_text,
    set_point_text,
    switch_setting_text,
)
from loopdocs.draw.clusters import (
    ENCLOSURE_PAD_MM,
    LINE_PITCH_MM,
    Cluster,
    TEXT_MM,
    TITLE_MM,
    barrier_cluster,
    instrument_cluster,
    io_cluster,
    label,
    label_height,
    range_text,
    service_lines,
    terminal_cluster,
    wrapped,
)
from loopdocs.draw.devices import element_cluster, valve_cluster
from loopdocs.draw.geometry import LINE_HALF_WIDTH_MM, THIN_MM, Dot, Drawing, Frame, Path, PlacedText, Point, Rect, SignalLine
from loopdocs.draw.stations import (
    BAND_OF_COLUMN,
    BAND_TITLES,
    COLUMNS,
    WIRE_OFFSET_MM,
    BarrierStation,
    ElementStation,
    FunctionStation,
    InstrumentStation,
    IoStation,
    LoopParts,
    RelayStation,
    Row,
    Segment,
    Station,
    TerminalStation,
    ValveStation,
    band_of,
)
from loopdocs.draw.text import ASCENT_EM, DESCENT_EM, text_width_mm
from loopdocs.model.records import Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Shield

MARGIN_MM = 3.0
HEADER_MM = 8.0
ROW_GAP_MM = 3.0
COLUMN_GAP_MM = 6.0
LABEL_MARGIN_MM = 1.5
CONNECTOR_INSET_MM = 3.5
"""Distance of a merge connector or pneumatic header from the item it joins."""
BOUNDARY_INSET_MM = 2 * CONNECTOR_INSET_MM + 0.5
"""Largest distance of a band boundary from the first column of its band (clear of a
merge connector, ``CONNECTOR_INSET_MM`` before that column)."""


@dataclass(frozen=True)
class Band:
    """One vertical area of the diagram, ``x0`` to ``x1`` mm."""

    key: str
    title: str
    x0: float
    x1: float


# --------------------------------------------------------------------------- clusters per station


def _enclosure_titles(rows: list[Row]) -> dict[tuple[int, str], str]:
    """(row index, column) -> enclosure name, for the first station of each run of
    neighbouring rows in the same junction box or cabinet."""
    titles: dict[tuple[int, str], str] = {}
    for columns in (("J",), ("C0", "C1")):
        current = None
        for r, row in enumerate(rows):
            inside = [s for s in row.stations if s.column in columns and s.enclosure]
            name = inside[0].enclosure if inside else None
            if name is not None and name != current:
                titles[(r, inside[0].column)] = name
            current = name
    return titles


def _draw_station(st: Station, r: int, title: str | None, show_strip: bool, has_taps: bool,
                  service: str | None, in_series: bool = False) -> Cluster:
    """The cluster of one station of row ``r``; ``title`` names the enclosure it opens.
    The shared cabinet terminal of positioners in series carries no polarity marks of its
    own: the series wiring marks the output + and - (:func:`_series_wires`)."""
    match st:
        case TerminalStation():
            kind = "terminal-jb" if st.column == "J" else "terminal-cabinet"
            return terminal_cluster(kind, st.terminals, [title] if title else [],
                                    name=f"terminal:{st.column}:{r}", show_strip=show_strip,
                                    polarity=st.polarity and not (in_series and st.column != "J"), earth=st.earth)
        case BarrierStation():
            return barrier_cluster(st.text, name=f"barrier:{r}")
        case IoStation():
            return io_cluster(st.heading, st.address, list(st.notes), name=f"io:{r}")
        case ElementStation():
            return element_cluster(st.tag, st.measuring, tagged=st.tagged)
        case ValveStation():
            return valve_cluster(st.tag, service, accessory_tags=st.accessory_tags)
        case RelayStation():
            tag = st.tag
            return instrument_cluster(
                tag, band_of(tag), right_above="I/P" if tag.signal is not None and tag.signal.is_pneumatic else None,
                above=[title] if title else [], below=service_lines(tag, service))
        case FunctionStation():
            tag = st.tag
            right = [f"{tag.control_action.value} acting"] if tag.control_action is not None else []
            rng = range_text(tag)
            settings = [t for t in (set_point_text(tag), alarm_text(tag)) if t] + wrapped([interlock_text(tag)])
            return instrument_cluster(tag, band_of(tag), right=right + ([rng] if rng else []) + settings)
        case InstrumentStation():
            tag = st.tag
            above: list[str | None] = [range_text(tag), *_device_settings(tag)]
            lines = service_lines(tag, service)
            pad = ENCLOSURE_PAD_MM if st.enclosure else 0.0
            field_earth = tag.shield in (Shield.FIELD, Shield.BOTH) and not has_taps
            if has_taps:  # the transmitter's bottom takes the low-pressure impulse line
                above, lines = [*lines, *above], []
            return instrument_cluster(tag, band_of(tag), above=above, below=lines, enclosure_title=title, pad_mm=pad,
                                      supply=power_text(tag), earth=field_earth)
    raise TypeError(f"no drawing for station {type(st).__name__}")


def _device_settings(tag: Tag) -> list[str]:
    """What a transmitter, switch or indicator shows above its bubble besides its range:
    a switch's trip and reset, alarm settings, interlock, the hazardous area (field)."""
    setting = switch_setting_text(tag) if tag.kind is TagKind.SWITCH else set_point_text(tag)
    area = area_text(tag) if band_of(tag) == "field" else None
    return [t for t in (setting, alarm_text(tag)) if t] + wrapped([interlock_text(tag), area])


def _build_clusters(rows: list[Row], parts: LoopParts) -> None:
    titles = _enclosure_titles(rows)
    last_strip: dict[str, tuple[str | None, str | None]] = {}
    for r, row in enumerate(rows):
        has_taps = any(isinstance(s, ElementStation) and s.impulse_taps for s in row.stations)
        for st in row.stations:
            title = titles.get((r, st.column))
            show_strip = False
            if isinstance(st, TerminalStation):
                strip = (st.enclosure, st.strip())
                show_strip = title is not None or last_strip.get(st.column) != strip
                last_strip[st.column] = strip
            st.cluster = _draw_station(st, r, title, show_strip, has_taps, parts.loop_service,
                                       in_series=bool(row.series) or row.series_of is not None)


# --------------------------------------------------------------------------- placing


@dataclass
class _Columns:
    used: list[str]
    left: dict[str, float]
    ref: dict[str, float]
    right: dict[str, float]
    boundaries: list[tuple[str, float]]
    width: float


def _place_columns(used: list[str], left_ext: dict[str, float], right_ext: dict[str, float],
                   gaps: dict[str, float]) -> _Columns:
    left: dict[str, float] = {}
    ref: dict[str, float] = {}
    right: dict[str, float] = {}
    x = MARGIN_MM
    for c in used:
        x += gaps.get(c, 0.0)
        left[c] = x
        ref[c] = x + left_ext[c]
        right[c] = ref[c] + right_ext[c]
        x = right[c]
    # a band boundary keeps BOUNDARY_INSET_MM from the column it opens, so that a gap
    # widened for line labels leaves them one run left of it (not two halves)
    boundaries = [(BAND_OF_COLUMN[b], max((right[a] + left[b]) / 2, left[b] - BOUNDARY_INSET_MM))
                  for a, b in zip(used, used[1:]) if BAND_OF_COLUMN[a] != BAND_OF_COLUMN[b]]
    return _Columns(used, left, ref, right, boundaries, x + MARGIN_MM)


def _connector_x(row: Row, rows: list[Row], cols: _Columns) -> float | None:
    if row.merge is not None:
        return cols.left[row.merge[1]] - CONNECTOR_INSET_MM
    if row.branch_of is not None:
        relay = rows[row.branch_of].stations[1]
        return cols.left[relay.column] - CONNECTOR_INSET_MM
    return None


def _function_x(rows: list[Row], cols: _Columns, fn_row: int | None) -> float | None:
    return None if fn_row is None else cols.ref[rows[fn_row].stations[-1].column]


def _tail_end(index: int, rows: list[Row], cols: _Columns, fn_row: int | None) -> float | None:
    """x where a row's line ends beyond its last station: a connector, the function's
    bus, or None when the row ends at its last station."""
    row = rows[index]
    if row.series_of is not None:
        return min(_series_xs(rows, row.series_of, cols)[0])
    connector = _connector_x(row, rows, cols)
    if connector is not None:
        return connector
    if row.linked and fn_row is not None and index != fn_row:
        return _function_x(rows, cols, fn_row)
    return None


def _cuts_on_row(index: int, rows: list[Row], cols: _Columns) -> list[float]:
    """x of the vertical connector that joins this row's line from the row below (for
    positioners in series: of the links and the return wire)."""
    root = index if rows[index].series else rows[index].series_of
    if root is not None:
        links, ret = _series_xs(rows, root, cols)
        return links + [ret]
    if index + 1 < len(rows) and rows[index + 1].ends_at_connector():
        x = _connector_x(rows[index + 1], rows, cols)
        return [x] if x is not None else []
    return []


def _free_intervals(x0: float, x1: float, cuts: Iterable[float], margin: float) -> list[tuple[float, float]]:
    """Parts of ``[x0, x1]`` at least ``margin`` away from its ends and from every cut.

    >>> _free_intervals(0, 20, [10], 1)
    [(1, 9), (11, 19)]
    """
    spans = [(x0 + margin, x1 - margin)]
    for cut in sorted(cuts):
        nxt = []
        for a, b in spans:
            if cut + margin <= a or cut - margin >= b:
                nxt.append((a, b))
                continue
            if cut - margin > a:
                nxt.append((a, cut - margin))
            if cut + margin < b:
                nxt.append((cut + margin, b))
        spans = nxt
    return [s for s in spans if s[1] > s[0]]


def two_lines(text: str) -> list[str]:
    """``text`` broken in two at the space that leaves the narrower of the two lines, never
    inside brackets nor between a number and its unit (one line when there is no such space).

    >>> two_lines("C-3105-1 (1+ 2- S)"), two_lines("4-20 mA HART"), two_lines("3-15 psig")
    (['C-3105-1', '(1+ 2- S)'], ['4-20 mA', 'HART'], ['3-15 psig'])
    """
    words = text.split()
    breaks, depth = [], 0
    for i, word in enumerate(words[:-1], start=1):
        depth += word.count("(") - word.count(")")
        nxt = words[i]
        if depth == 0 and (nxt.startswith("(") or not word[-1].isdigit()):
            breaks.append(i)
    if not breaks:
        return [text]
    splits = [(" ".join(words[:i]), " ".join(words[i:])) for i in breaks]
    return list(min(splits, key=lambda pair: max(text_width_mm(pair[0], TEXT_MM), text_width_mm(pair[1], TEXT_MM))))


def label_lines(seg: Segment) -> tuple[list[str], list[str]]:
    """The lines of a segment's label above and below its line (two each when wrapped)."""
    def lines(text: str | None) -> list[str]:
        if not text:
            return []
        return two_lines(text) if seg.wrap else [text]
    return lines(seg.above), lines(seg.below)


def _label_width(seg: Segment) -> float:
    above, below = label_lines(seg)
    return max((text_width_mm(t, TEXT_MM) for t in above + below), default=0.0)


def _place_labels(rows: list[Row], cols: _Columns, fn_row: int | None) -> dict[str, float]:
    """Put each segment's labels in the widest free stretch of its run; return how much
    to widen the gap before which column where they do not fit."""
    widen: dict[str, float] = {}
    bounds = [x for _, x in cols.boundaries]
    for index, row in enumerate(rows):
        cuts = _cuts_on_row(index, rows, cols)
        for k, seg in enumerate(row.segments):
            if not (seg.above or seg.below):
                continue
            a = row.stations[k]
            b = row.stations[k + 1] if k + 1 < len(row.stations) else None
            end = _tail_end(index, rows, cols, fn_row) if b is None else None
            if b is None and end is None:
                continue
            column = b.column if b is not None else (row.merge[1] if row.merge else cols.used[-1])
            # keep clear of a connector of this row's kind too (a pneumatic line is 3.2 mm wide)
            margin = max(LABEL_MARGIN_MM, LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + 0.5)

            def free_spans(lines: int) -> list[tuple[float, float]]:
                near = LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + 0.4 + label_height() + (lines - 1) * LINE_PITCH_MM + 1.0
                # inside a junction box or cabinet the outline (at the column's edge) is the limit
                xa = cols.right[a.column] if a.enclosure else cols.ref[a.column] + a.drawn.reach_near_line(near)[1]
                if b is not None:
                    xb = cols.left[b.column] if b.enclosure else cols.ref[b.column] + b.drawn.reach_near_line(near)[0]
                else:
                    xb = end
                return _free_intervals(xa, xb, [c for c in cuts + bounds if xa < c < xb], margin)

            # on one line where it fits, else on two lines (cable / cores, 4-20 mA / HART)
            # before the gap is widened for it
            seg.wrap = False
            spans = free_spans(1)
            best = max((s[1] - s[0] for s in spans), default=0.0)
            if best + 1e-6 < _label_width(seg) and any(len(two_lines(t)) > 1 for t in (seg.above, seg.below) if t):
                seg.wrap = True
                spans = free_spans(2)
                best = max((s[1] - s[0] for s in spans), default=0.0)
            need = _label_width(seg)
            if best + 1e-6 < need:
                widen[column] = max(widen.get(column, 0.0), need - best + 1.0)
                seg.label_x = None
            else:
                lo, hi = max(spans, key=lambda s: (round(s[1] - s[0], 6), -s[0]))
                seg.label_x = (lo + hi) / 2
    return widen



def place(layout: Drawing, rows: list[Row], parts: LoopParts, fn_row: int | None) -> list[Band]:
    """Draw every station of ``rows``, place rows and columns, route the lines into
    ``layout`` and set its size; return the bands, left to right."""
    _build_clusters(rows, parts)

    used = [c for c in COLUMNS if any(s.column == c for r in rows for s in r.stations)]
    boxes = {c: [s.drawn.box for r in rows for s in r.stations if s.column == c] for c in used}
    left_ext = {c: max(-b.x for b in boxes[c]) for c in used}
    right_ext = {c: max(b.right for b in boxes[c]) for c in used}

    # Horizontal first (it does not depend on the rows' heights): base gaps, widened until
    # every line label fits its run. A gap holding a merge connector and a band boundary is
    # wide enough to keep the two apart.
    gaps = {c: COLUMN_GAP_MM for c in used[1:]}
    for row in rows:
        if row.merge is not None:
            c = row.merge[1]
            k = used.index(c)
            if k and BAND_OF_COLUMN[used[k - 1]] != BAND_OF_COLUMN[c]:
                gaps[c] = max(gaps[c], 2 * (CONNECTOR_INSET_MM + 4.0))
            if row.series_of is not None:
                gaps[c] = max(gaps[c], 2 * (CONNECTOR_INSET_MM + 4.0))
    cols = _place_columns(used, left_ext, right_ext, gaps)
    for _attempt in range(16):
        widen = _place_labels(rows, cols, fn_row)
        if not widen:
            break
        for column, extra in sorted(widen.items()):
            gaps[column] = gaps.get(column, 0.0) + extra
        cols = _place_columns(used, left_ext, right_ext, gaps)

    # Vertical: each row as tall as its stations and its line labels (as placed) need, and
    # as high as the rows above let it (:func:`_row_y`)
    label_h = label_height()
    above_rows: list[Rect] = []
    y = MARGIN_MM + HEADER_MM
    for row in rows:
        row_boxes = [s.drawn.box for s in row.stations]
        half = max(LINE_HALF_WIDTH_MM.get(k, 0.4) for k in [s.kind for s in row.segments] + [row.tail_kind])
        top = max([-b.y for b in row_boxes] + [3.0])
        bottom = max([b.bottom for b in row_boxes] + [3.0])
        shapes = _row_shapes(row, cols, half)
        for seg in row.segments:
            if seg.label_x is None:
                continue
            above, below = label_lines(seg)
            width = _label_width(seg)
            if above:
                rise = half + 0.4 + label_h + (len(above) - 1) * LINE_PITCH_MM + seg.offset_mm
                top = max(top, rise)
                shapes.append(Rect(seg.label_x - width / 2, -rise, width, rise))
            if below:
                drop = half + 0.4 + label_h + (len(below) - 1) * LINE_PITCH_MM + seg.offset_mm
                bottom = max(bottom, drop)
                shapes.append(Rect(seg.label_x - width / 2, 0.0, width, drop))
        row.top_mm, row.bottom_mm = top, bottom
        row.y = _row_y(shapes, above_rows, MARGIN_MM + HEADER_MM + top, y + top)
        above_rows += [Rect(b.x, b.y + row.y, b.width, b.height) for b in shapes]
        y = max(y, row.y + bottom + ROW_GAP_MM)
    height = y - ROW_GAP_MM + MARGIN_MM

    layout.width_mm = round(cols.width, 3)
    layout.height_mm = round(height, 3)
    _assemble(layout, rows, cols, fn_row)
    box = layout.content_box()
    layout.width_mm = round(max(layout.width_mm, box.right + MARGIN_MM), 3)
    layout.height_mm = round(max(layout.height_mm, box.bottom + MARGIN_MM), 3)
    return _bands(layout, cols)


def _row_shapes(row: Row, cols: _Columns, half_mm: float) -> list[Rect]:
    """What a row draws, relative to its line (y = 0): each station's box (a station in
    a junction box or cabinet across its column, where the outline runs) and the line
    from its first station to the diagram's right edge (its end or a connector: taken
    long, so no row below ever rises across it)."""
    shapes = []
    for st in row.stations:
        box = st.drawn.box
        x0, x1 = cols.ref[st.column] + box.x, cols.ref[st.column] + box.right
        if st.enclosure:
            # the outline of a cabinet runs across both cabinet columns when a row of the
            # same cabinet uses the second one (:func:`_enclosures`)
            spans = [c for c in _ENCLOSURE_COLUMNS.get(st.column, (st.column,)) if c in cols.left]
            x0 = min(x0, *(cols.left[c] for c in spans))
            x1 = max(x1, *(cols.right[c] for c in spans))
        shapes.append(Rect(x0, box.y, x1 - x0, box.height))
    shapes += _impulse_shapes(row, cols)
    if shapes:
        start = min(r.x for r in shapes)
        shapes.append(Rect(start, -half_mm, cols.width - start, 2 * half_mm))
    return shapes


_ENCLOSURE_COLUMNS = {"C0": ("C0", "C1"), "C1": ("C0", "C1")}
"""The columns one enclosure's outline can span (the cabinet's terminals and its
barriers or cards), by the column of a station in it."""

ROW_CLEAR_MM = 1.5
"""Least horizontal space between what a row draws and what a row above draws beside it."""


def _row_y(shapes: list[Rect], above: list[Rect], highest_mm: float, stacked_mm: float) -> float:
    """y of a row's line: as high as it goes with ``ROW_GAP_MM`` under everything the rows
    above draw (``above``, in diagram mm) that stands over its own ``shapes`` (relative to
    the line), ``ROW_CLEAR_MM`` being enough beside it; never above ``highest_mm`` (its
    top under the header), never lower than ``stacked_mm`` (stacked under the whole
    rows above). A valve's body hanging below its row no longer pushes down
    the next row's texts that stand right of it (skyline stacking, common practice in
    drafting: what is drawn keeps clear, not the rows' bounding boxes).

    >>> _row_y([Rect(50, -10, 10, 12)], [Rect(0, 20, 20, 30), Rect(0, 19.5, 100, 1)], 10, 63)
    33.5
    """
    y = highest_mm
    for a in above:
        for b in shapes:
            if a.x < b.right + ROW_CLEAR_MM and b.x < a.right + ROW_CLEAR_MM:
                y = max(y, a.bottom + ROW_GAP_MM - b.y)
    return min(y, stacked_mm)


def _assemble(layout: Drawing, rows: list[Row], cols: _Columns, fn_row: int | None) -> None:
    for index, row in enumerate(rows):
        y = row.y
        for st in row.stations:
            layout.extend(st.drawn.drawing, cols.ref[st.column], y)
        for k in range(len(row.stations)):
            a = row.stations[k]
            cluster = a.drawn
            if cluster.attach_out is None:
                continue
            start = [(cols.ref[a.column] + px, y + py) for px, py in (cluster.out_path or (cluster.attach_out,))]
            if k + 1 < len(row.stations):
                seg = row.segments[k]
                b = row.stations[k + 1]
                bx, by = b.drawn.joint_in
                if not (row.series and seg.offset_mm):  # the series wires are drawn by _series_wires
                    layout.lines.append(SignalLine(seg.kind, tuple(start + [(cols.ref[b.column] + bx, y + by)]),
                                                   "signal"))
                _labels(layout, seg, y)
                continue
            end = _tail_end(index, rows, cols, fn_row)
            if end is None:
                continue
            seg = row.segments[k] if k < len(row.segments) else Segment(row.tail_kind)
            if row.series_of is not None:
                _labels(layout, seg, y)
                continue
            if row.ends_at_connector():
                target = rows[index - 1]
                layout.lines.append(SignalLine(seg.kind, tuple(start + [(end, y), (end, target.y)]), "connector"))
                layout.dots.append(Dot(end, target.y))
            else:
                layout.lines.append(SignalLine(seg.kind, tuple(start + [(end, y)]), "to-function"))
            _labels(layout, seg, y)
    _impulse_lines(layout, rows, cols)
    _function_buses(layout, rows, cols, fn_row)
    _enclosures(layout, rows, cols)
    for index, row in enumerate(rows):
        if row.series:
            _series_wires(layout, rows, index, cols)


def _labels(layout: Drawing, seg: Segment, y: float) -> None:
    if seg.label_x is None:
        return
    half = LINE_HALF_WIDTH_MM.get(seg.kind, 0.4) + seg.offset_mm
    above, below = label_lines(seg)
    for i, text in enumerate(reversed(above)):
        layout.texts.append(label(text, seg.label_x, y - half - 0.4 - DESCENT_EM * TEXT_MM - i * LINE_PITCH_MM,
                                  "middle", "cable"))
    for i, text in enumerate(below):
        layout.texts.append(label(text, seg.label_x, y + half + 0.4 + ASCENT_EM * TEXT_MM + i * LINE_PITCH_MM,
                                  "middle", "signal"))


def _series_ends(rows: list[Row], root: int, cols: _Columns) -> tuple[list[tuple[float, Station]], float, int]:
    """For positioners in series: (x where each row's own wiring ends and its last own
    station, first row first), x of the shared item's input, its index in the first row."""
    head = rows[root]
    column = _series_column(rows, root)
    m = next(i for i, s in enumerate(head.stations) if s.column == column)
    ends = []
    for r, last in [(root, head.stations[m - 1])] + [(i, rows[i].stations[-1]) for i in head.series]:
        ends.append((cols.ref[last.column] + last.drawn.joint_out[0], last))
    shared = head.stations[m]
    x_in = cols.ref[shared.column] + shared.drawn.joint_in[0]
    return ends, x_in, m


def _series_xs(rows: list[Row], root: int, cols: _Columns) -> tuple[list[float], float]:
    """x of the link between each pair of neighbouring positioners (inside the junction
    box or cabinet whose terminals they land on) and of the return wire to output -."""
    head = rows[root]
    column = _series_column(rows, root)
    ret = cols.left[column] - CONNECTOR_INSET_MM
    m = next(i for i, s in enumerate(head.stations) if s.column == column)
    lasts = [head.stations[m - 1]] + [rows[i].stations[-1] for i in head.series]
    if all(isinstance(s, TerminalStation) and s.enclosure for s in lasts):
        # the link is made in the box the terminals are in: just right of the terminals
        # and of a screen's earth label hung below one of them (the link runs down past it)
        rights = [cols.ref[s.column] + s.drawn.joint_out[0] for s in lasts]
        rights += [cols.ref[s.column] + t.box.right for s in lasts for t in s.drawn.drawing.texts if t.role == "screen"]
        base = max(rights) + 0.9
    else:
        base = ret - 3.0
    return [base + (k % 2) * 1.5 for k in range(len(head.series))], ret


def _terminal_pair(station: Station) -> tuple[str, str] | None:
    """The two terminal numbers of a terminal station (``X3:51-52`` -> ``('51', '52')``)."""
    return station.pair() if isinstance(station, TerminalStation) else None


def _series_column(rows: list[Row], root: int) -> str:
    """The column of the item the positioners in series on ``root``'s output share."""
    column = rows[rows[root].series[0]].merge_column
    if column is None:
        raise ValueError(f"row {root} has no positioners in series")
    return column


def _series_wires(layout: Drawing, rows: list[Row], root: int, cols: _Columns) -> None:
    """Positioners in series on one output, as wired (ISA-5.4 loop diagram; current
    flows through each positioner in turn, common practice): output + to the first
    positioner's + terminal, each positioner's - terminal linked to the next one's +,
    the last one's - back to output -. The + wire runs above the row line, the links
    and the return below; no junction dot, nothing is connected in parallel."""
    ends, x_in, m = _series_ends(rows, root, cols)
    links, ret = _series_xs(rows, root, cols)
    d = WIRE_OFFSET_MM
    ys = [rows[root].y] + [rows[i].y for i in rows[root].series]
    kind = rows[root].segments[m - 1].kind
    # output + to the first positioner
    layout.lines.append(SignalLine(kind, ((x_in, ys[0] - d), (ends[0][0], ys[0] - d)), "series-plus"))
    for k in range(len(ys) - 1):
        (xa, sta), (xb, stb) = ends[k], ends[k + 1]
        x = links[k]
        # a wire link between two terminals of one box: thin solid, unlike the cable cores
        layout.lines.append(SignalLine("connection", ((xa, ys[k] + d), (x, ys[k] + d), (x, ys[k + 1] - d),
                                                      (xb, ys[k + 1] - d)), "series-link"))
        pa, pb = _terminal_pair(sta), _terminal_pair(stb)
        text = f"link {pa[1]}-{pb[0]}" if pa and pb else "link"
        _free_text(layout, text, x - 0.8, ys[k] + d, ys[k + 1] - d, "end", [bx for _, bx in cols.boundaries])
    # the last positioner back to output -
    layout.lines.append(SignalLine(kind, ((ends[-1][0], ys[-1] + d), (ret, ys[-1] + d), (ret, ys[0] + d),
                                          (x_in, ys[0] + d)), "series-return"))
    # polarity of the output, between the return wire and the shared item's enclosure
    half = LINE_HALF_WIDTH_MM.get(kind, 0.4)
    column = _series_column(rows, root)
    x = (ret + cols.left[column]) / 2
    layout.texts.append(label("+", x, ys[0] - d - half - 0.3 - DESCENT_EM * TEXT_MM, "middle", "polarity"))
    layout.texts.append(label("\u2212", x, ys[0] + d + half + 0.3 + ASCENT_EM * TEXT_MM, "middle", "polarity"))


def _free_text(layout: Drawing, text: str, x: float, y0: float, y1: float, anchor: str,
               band_edges: list[float]) -> None:
    """Put ``text`` at ``x`` between heights ``y0`` and ``y1``, middle first, where it
    overlaps no text, symbol or line placed so far nor a band boundary at ``band_edges``;
    left out when nowhere is free."""
    height = label_height()
    boxes = [t.box for t in layout.texts] + [b for _, b in layout.solid_boxes()] + layout.line_boxes()
    boxes += [Rect(e - THIN_MM / 2, y0, THIN_MM, y1 - y0) for e in band_edges]
    for f in (0.5, 0.35, 0.65, 0.2, 0.8):
        top = y0 + f * (y1 - y0) - height / 2
        placed = label(text, x, top + ASCENT_EM * TEXT_MM, anchor, "series-link")
        if top > y0 + 0.5 and top + height < y1 - 0.5 and not any(placed.box.overlaps(b) for b in boxes):
            layout.texts.append(placed)
            return


def _impulse_path(row: Row, cols: _Columns) -> list[tuple[Point, ...]]:
    """The low-pressure impulse line of each orifice of a row, from its tap to the bottom
    of its transmitter, relative to the row line (y = 0): down the tap, across at half
    height, up into the transmitter."""
    paths = []
    for k, st in enumerate(row.stations[:-1]):
        low = st.drawn.points.get("tap-low")
        bottom = row.stations[k + 1].drawn.points.get("bottom")
        if low is None or bottom is None:
            continue
        lx, ly = cols.ref[st.column] + low[0], low[1]
        bx, by = cols.ref[row.stations[k + 1].column] + bottom[0], bottom[1]
        mid = (ly + by) / 2
        paths.append(((lx, ly), (lx, mid), (bx, mid), (bx, by)))
    return paths


def _impulse_shapes(row: Row, cols: _Columns) -> list[Rect]:
    """The boxes of a row's impulse lines (:func:`_impulse_path`), so that no row below
    rises across them."""
    shapes = []
    for path in _impulse_path(row, cols):
        xs, ys = [x for x, _ in path], [y for _, y in path]
        shapes.append(Rect(min(xs), min(ys), max(xs) - min(xs), max(ys) - min(ys)))
    return shapes


def _impulse_lines(layout: Drawing, rows: list[Row], cols: _Columns) -> None:
    """The low-pressure impulse line of an orifice, to the bottom of its transmitter."""
    for row in rows:
        for path in _impulse_path(row, cols):
            layout.lines.append(SignalLine("connection", tuple((x, row.y + y) for x, y in path), "impulse"))


def _function_buses(layout: Drawing, rows: list[Row], cols: _Columns, fn_row: int | None) -> None:
    """Links into the function: rows above join a line into its top, rows below one into
    its bottom, each with a junction dot."""
    fn_x = _function_x(rows, cols, fn_row)
    if fn_row is None or fn_x is None:
        return
    host = rows[fn_row]
    cluster = host.stations[-1].drawn
    top = (fn_x + cluster.points["top"][0], host.y + cluster.points["top"][1])
    bottom = (fn_x + cluster.points["bottom"][0], host.y + cluster.points["bottom"][1])
    joining = [i for i, r in enumerate(rows) if i != fn_row and r.linked and not r.ends_at_connector()]
    above = [rows[i] for i in joining if i < fn_row]
    below = [rows[i] for i in joining if i > fn_row]
    if above:
        layout.lines.append(SignalLine(above[0].tail_kind, ((fn_x, above[0].y), top), "bus"))
        layout.dots += [Dot(fn_x, r.y) for r in above[1:]]
    if below:
        layout.lines.append(SignalLine(below[-1].tail_kind, (bottom, (fn_x, below[-1].y)), "bus"))
        layout.dots += [Dot(fn_x, r.y) for r in below[:-1]]


def _enclosures(layout: Drawing, rows: list[Row], cols: _Columns) -> None:
    """Dashed outlines around each junction box's and cabinet's stations, one per run of
    neighbouring rows in the same box."""
    for columns, kind in ((("J",), "jb"), (("C0", "C1"), "cabinet")):
        run: list[tuple[Row, list[Station]]] = []
        current: str | None = None

        def close() -> None:
            if not run or current is None:
                return
            in_use = sorted({s.column for _, sts in run for s in sts}, key=COLUMNS.index)
            x0, x1 = cols.left[in_use[0]], cols.right[in_use[-1]]
            tops = [r.y + s.drawn.box.y for r, sts in run for s in sts]
            bottoms = [r.y + s.drawn.box.bottom for r, sts in run for s in sts]
            rect = Rect(x0, min(tops), x1 - x0, max(bottoms) - min(tops))
            layout.frames.append(Frame(rect, stroke_mm=THIN_MM, dash_mm=(1.5, 1.0), role=f"enclosure-{kind}",
                                       name=f"{kind}:{current}"))

        for row in rows:
            inside = [s for s in row.stations if s.column in columns and s.enclosure]
            name = inside[0].enclosure if inside else None
            if name != current:
                close()
                run, current = [], name
            if name is not None:
                run.append((row, inside))
        close()


def _bands(layout: Drawing, cols: _Columns) -> list[Band]:
    """Band titles along the top, a rule under them, dashed separators between bands."""
    bands: list[Band] = []
    order: list[str] = []
    for c in cols.used:
        if not order or order[-1] != BAND_OF_COLUMN[c]:
            order.append(BAND_OF_COLUMN[c])
    edges = [0.0] + [x for _, x in cols.boundaries] + [layout.width_mm]
    top = MARGIN_MM
    rule_y = top + TITLE_MM + 1.5
    for i, band in enumerate(order):
        x0, x1 = edges[i], edges[i + 1]
        bands.append(Band(band, BAND_TITLES[band], x0, x1))
        layout.texts.append(PlacedText(BAND_TITLES[band], (x0 + x1) / 2, top + ASCENT_EM * TITLE_MM, TITLE_MM,
                                       "middle", True, "band-title", "", fit_width_mm=max(x1 - x0 - 2.0, 1.0)))
    layout.paths.append(Path(((0.0, rule_y), (layout.width_mm, rule_y)), stroke_mm=THIN_MM, role="band-rule"))
    corner = _free_corner(layout, [x for _, x in cols.boundaries])
    layout.free_corner_mm = corner
    for i, (_, x) in enumerate(cols.boundaries):
        # thin chain line (ISO 128-2 type 04.1, from memory), unlike any signal line; those
        # right of the free corner's left edge end above it (the field band's edge runs
        # down beside a corner that starts there)
        bottom = corner[1] - FREE_CORNER_PAD_MM if corner and x > corner[0] + 1e-6 else layout.height_mm - MARGIN_MM
        layout.paths.append(Path(((x, top), (x, bottom)), stroke_mm=THIN_MM,
                                 dash_mm=(8.0, 1.5, 1.0, 1.5), role="band-boundary"))
    return bands


FREE_CORNER_PAD_MM = 2.0
"""Space between the lowest item right of the field band and the free corner below it."""
FREE_CORNER_MIN_MM = (40.0, 15.0)
"""Smallest free corner worth reporting (width, height): room for one narrow table (the
sheet's drawing area may add what lies right of the diagram)."""


def _free_corner(layout: Drawing, boundaries: list[float]) -> tuple[float, float] | None:
    """The top left of the largest empty lower right of the diagram: its left edge at the
    field band's edge (the first band boundary) or, where that leaves more room, at the
    right of something drawn (the valves' air header of a pneumatic split, the I/O cards
    under the controller), its top below everything drawn right of it; ``None`` when
    smaller than ``FREE_CORNER_MIN_MM``."""
    if not boundaries:
        return None
    boxes = [s.box for s in layout.symbols] + [t.box for t in layout.texts] + [d.box for d in layout.dots]
    boxes += [f.rect.grown((f.stroke_mm or 0) / 2) for f in layout.frames]
    for item in (*layout.lines, *layout.paths):
        boxes += item.segment_boxes()
    best = None
    for x in sorted({boundaries[0], *(round(b.right + FREE_CORNER_PAD_MM, 3) for b in boxes)}):
        y = max((b.bottom for b in boxes if b.right > x + 1e-6), default=0.0) + FREE_CORNER_PAD_MM
        if layout.width_mm - x < FREE_CORNER_MIN_MM[0] or layout.height_mm - y < FREE_CORNER_MIN_MM[1]:
            continue
        area = (layout.width_mm - x) * (layout.height_mm - y)
        if best is None or area > best[0] + 1e-6 or (abs(area - best[0]) <= 1e-6 and x == boundaries[0]):
            best = (area, round(x, 3), round(y, 3))
    return None if best is None else best[1:]
