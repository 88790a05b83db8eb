"""Range chart of a split group: travel against controller output, as drawing data.

One chart per split group (``loopdocs.model.groups``), drawn to be read at its natural
size, ``CHART_WIDTH_MM`` wide and at most ``CHART_HEIGHT_MM`` tall (a ``PLOT_HEIGHT_MM``
plot with its title and axes; about the space an A3 loop sheet gives it):

- travel %, 0 to 100, against CO %, 0 to 100, one line per element, labelled with its
  tag. The line is the travel the element's *settings* give (docs/design.md §4.3,
  ``loopdocs.calc.travel.realised_travel_pct``); where that differs from the intent by
  more than the 1 % tolerance the intent is drawn too, thin and dashed. Without usable
  settings the intent is drawn and the label says so;
- a second x-axis in the shared signal's units (mA, psig, kPa) for ``positioner`` and
  ``pneumatic`` splits, where every element sees the same signal;
- the CO boundaries of the elements, labelled with their values; gaps (CO where nothing
  moves) and overlaps between staged neighbours shaded and labelled with their width;
- the capacity-proportional boundaries of a ``staged`` group when every Cv is known;
- the combined capacity (total Cv against CO, right axis) when every Cv is known;
- a warning marker with the rule name for each error or warning finding on the group,
  next to the element it names (or in a line under the chart when there is no room).

Curves are piecewise linear, so each is drawn through its exact breakpoints (segment
ends, clamp points of the input range and of the control-system scaling). The chart data
(``RangeChart.curves``, in CO %/travel %) is kept beside the drawing for tests.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

from loopdocs.draw.geometry import (
    MEDIUM_MM,
    THIN_MM,
    WIDE_MM,
    Drawing,
    Path,
    PlacedText,
    Point,
    Rect,
    polyline_boxes,
)
from loopdocs.core.findings import Finding, Severity
from loopdocs.draw.text import ASCENT_EM, CAP_HEIGHT_EM, DESCENT_EM, text_width_mm, wrap_text
from loopdocs.core.formatting import fmt_pct, fmt_signal
from loopdocs.model.groups import SplitElement, SplitGroup

CHART_WIDTH_MM = 160.0
CHART_HEIGHT_MM = 95.0
NARROW_CHART_MM = 130.0
"""Width of the chart where a loop sheet is short of room (``render.sheet`` uses it when
it saves a page): the plot 92 mm wide instead of 122, the same lettering, the title
wrapped when longer and the plot lower by the lines that adds (at least
``NARROW_PLOT_MM``), so that the chart is no taller than at its own width."""
NARROW_PLOT_MM = 40.0
TEXT_MM = 3.43
"""Font size of the chart's labels: 2.5 mm capitals (DejaVu Sans capitals are 0.729 em),
the lettering of the loop diagram beside it (docs/design.md §8.4)."""
TITLE_MM = 3.5
CO_TITLE_MM = 2.0 + TEXT_MM + 0.8
"""Top of the CO axis title below the plot (under the CO tick labels)."""
SIGNAL_AXIS_MM = CO_TITLE_MM + TEXT_MM + 2.5
"""The shared signal's axis below the plot (under the CO axis title)."""
AXIS_TITLE_MM = 1.5 + 2.0 + TEXT_MM + 2.6
"""Top of the shared signal's title below its axis (under its tick labels)."""

PLOT_LEFT_MM = 20.0
PLOT_RIGHT_MM = 142.0
PLOT_TOP_MM = 16.0
PLOT_BOTTOM_MM = 78.0
PLOT_HEIGHT_MM = 50.0
"""Height of the plot (travel 0 to 100 %): the chart is as tall as the plot, its title and
its axes need, at most ``CHART_HEIGHT_MM`` (a chart without the shared signal's axis is
shorter, leaving room on the sheet)."""

GRID_GREY = "#b3b3b3"
GRID_GREY_DARK = "#666666"
GAP_FILL = "#d9d9d9"
OVERLAP_FILL = "#8c8c8c"
#: Dash patterns, mm, telling elements apart in black and white: solid, long dash, dash-dot, short dash.
ELEMENT_DASHES: tuple[tuple[float, ...] | None, ...] = (None, (4.0, 1.5), (5.0, 1.2, 1.0, 1.2), (1.6, 1.2))
#: Travel error above which the intent is drawn beside the settings, % travel (docs/design.md §4.4).
TOLERANCE_PCT = 1.0


@dataclass
class RangeChart(Drawing):
    """The placed chart (a :class:`Drawing`) and the data it shows."""

    controller: str = ""
    loop_id: str = ""
    curves: dict[str, list[tuple[float, float]]] = field(default_factory=dict)
    """Element tag -> the drawn (CO %, travel %) points, in CO order."""
    curve_source: dict[str, str] = field(default_factory=dict)
    """Element tag -> ``settings`` (realised travel) or ``intent``."""
    signal_axis: tuple[str, float, float] | None = None
    """(unit, signal at CO 0 %, signal at CO 100 %) of the second x-axis, or None."""
    capacity: list[tuple[float, float]] | None = None
    markers: list[tuple[str, tuple[str, ...]]] = field(default_factory=list)
    """(rule, tags) of each finding marked."""
    plot: Rect = field(default_factory=lambda: Rect(PLOT_LEFT_MM, PLOT_TOP_MM, PLOT_RIGHT_MM - PLOT_LEFT_MM,
                                                    PLOT_BOTTOM_MM - PLOT_TOP_MM))

    def x_of(self, co_pct: float) -> float:
        return self.plot.x + self.plot.width * co_pct / 100.0

    def y_of(self, travel_pct: float) -> float:
        return self.plot.bottom - self.plot.height * travel_pct / 100.0


# --------------------------------------------------------------------------- curves


def _breakpoints_co(element: SplitElement) -> list[float]:
    """Every CO, %, in 0..100 where the element's travel can change slope."""
    points = [0.0, 100.0, element.co_start_pct, element.co_end_pct]
    settings = element.settings
    if settings is not None:
        span = settings.span
        fractions = [(v - span.low) / span.width for v in (settings.input_low, settings.input_high)]
        if element.method == "dcs":
            scaling = element.required_dcs_scaling
            c0, c100 = (scaling.co_at_0_pct, scaling.co_at_100_pct) if scaling else (0.0, 100.0)
            points += [c0, c100] + [c0 + f * (c100 - c0) for f in fractions if 0.0 <= f <= 1.0]
        else:
            points += [100.0 * f for f in fractions]
    return sorted({round(p, 9) for p in points if 0.0 <= p <= 100.0})


def travel_curve(element: SplitElement) -> tuple[list[tuple[float, float]], str] | None:
    """(CO %, travel %) points of the line drawn for ``element`` and its source:
    ``settings`` (realised travel, docs/design.md §4.3) or ``intent`` when it has no usable
    settings; None when it has neither. Collinear points are dropped."""
    if element.settings is not None:
        travel, source = element.realised_travel_pct, "settings"
    elif element.intent is not None:
        travel, source = element.intended_travel_pct, "intent"
    else:
        return None
    points = [(co, travel(co)) for co in _breakpoints_co(element)]
    return _simplify(points), source


def intent_curve(element: SplitElement) -> list[tuple[float, float]] | None:
    if element.intent is None:
        return None
    cos = sorted({0.0, 100.0, element.co_start_pct, element.co_end_pct})
    return _simplify([(co, element.intended_travel_pct(co)) for co in cos if 0.0 <= co <= 100.0])


def _simplify(points: list[tuple[float, float]]) -> list[tuple[float, float]]:
    out: list[tuple[float, float]] = []
    for p in points:
        if len(out) >= 2:
            (x0, y0), (x1, y1) = out[-2], out[-1]
            if abs((x1 - x0) * (p[1] - y0) - (p[0] - x0) * (y1 - y0)) < 1e-9:
                out[-1] = p
                continue
        out.append(p)
    return out


# --------------------------------------------------------------------------- ticks


def nice_step(span: float, target_ticks: int = 5) -> float:
    """A 1-2-2.5-5 x 10^n step giving about ``target_ticks`` intervals over ``span``.

    >>> nice_step(40), nice_step(16), nice_step(7.3)
    (10.0, 4.0, 2.0)
    """
    if not (span > 0 and math.isfinite(span)):
        return 1.0
    raw = span / target_ticks
    base = 10 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 4.0, 5.0, 10.0):
        if m * base >= raw - 1e-12:
            return m * base
    return 10.0 * base


def _signal_ticks(low: float, high: float) -> list[float]:
    """Tick values for a signal axis from ``low`` to ``high`` (both included)."""
    span = high - low
    if span <= 0:
        return [low]
    # the classic quarter points of a signal span (4, 8, 12, 16, 20 mA; 3, 6, 9, 12, 15 psig)
    return [low + span * k / 4 for k in range(5)]


# --------------------------------------------------------------------------- placement


def spread_centres(wanted_mm: Sequence[float], widths_mm: Sequence[float], gap_mm: float,
                   low_mm: float, high_mm: float) -> list[float]:
    """Centres, mm, for labels in one row, each as near its ``wanted_mm`` x as it can be
    with at least ``gap_mm`` between neighbours, in the same order, within
    ``[low_mm, high_mm]``. Labels that would collide are pushed apart as a block around the
    mean of their wanted centres (least squares), blocks merging until none overlap.

    >>> spread_centres([50.0, 52.8], [6.0, 6.0], 1.0, 0.0, 180.0)
    [47.9, 54.9]
    >>> spread_centres([10.0, 80.0], [6.0, 6.0], 1.0, 0.0, 180.0)
    [10.0, 80.0]
    """
    n = len(wanted_mm)
    order = sorted(range(n), key=lambda i: wanted_mm[i])
    # offset of each label's centre from its block's first centre
    blocks: list[list[int]] = []
    offsets: dict[int, float] = {}
    starts: list[float] = []

    def place(block: list[int]) -> float:
        return sum(wanted_mm[i] - offsets[i] for i in block) / len(block)

    for i in order:
        blocks.append([i])
        offsets[i] = 0.0
        starts.append(wanted_mm[i])
        while len(blocks) > 1:
            a, b = blocks[-2], blocks[-1]
            last = a[-1]
            need = starts[-2] + offsets[last] + (widths_mm[last] + widths_mm[b[0]]) / 2 + gap_mm
            if starts[-1] >= need - 1e-9:
                break
            shift = offsets[last] + (widths_mm[last] + widths_mm[b[0]]) / 2 + gap_mm
            for j in b:
                offsets[j] += shift
            merged = a + b
            blocks[-2:] = [merged]
            starts[-2:] = [place(merged)]
    centres = [0.0] * n
    for block, start in zip(blocks, starts):
        for i in block:
            centres[i] = start + offsets[i]
    # keep the row inside the bounds, moving only as much as needed
    ranked = [centres[i] for i in order]
    half = [widths_mm[i] / 2 for i in order]
    if ranked:
        over = ranked[-1] + half[-1] - high_mm
        if over > 0:
            ranked = [c - over for c in ranked]
        under = low_mm - (ranked[0] - half[0])
        if under > 0:
            ranked = [c + under for c in ranked]
    for k, i in enumerate(order):
        centres[i] = round(ranked[k], 6)
    return centres


class _Placer:
    """Keeps the boxes already taken and finds the first free candidate for a text."""

    def __init__(self, bounds: Rect) -> None:
        self.bounds = bounds
        self.taken: list[Rect] = []

    def free(self, box: Rect, within: Rect | None = None) -> bool:
        area = within or self.bounds
        if not area.contains(box):
            return False
        return not any(box.overlaps(t, 0.3) for t in self.taken)

    def take(self, box: Rect) -> None:
        self.taken.append(box)

    def place(self, chart: Drawing, candidates: Sequence[PlacedText], within: Rect | None = None) -> PlacedText | None:
        for text in candidates:
            if self.free(text.box, within):
                chart.texts.append(text)
                self.take(text.box)
                return text
        return None


def _txt(text: str, x: float, y: float, anchor: str = "start", role: str = "label", size: float = TEXT_MM,
         bold: bool = False, rotate: float = 0.0, owner: str = "") -> PlacedText:
    return PlacedText(text, x, y, size, anchor, bold, role, owner, None, rotate)


CURVE_CLEAR_MM = 0.45
"""Half-width of the boxes sampled along a travel curve: a label keeps this clear of it."""


# --------------------------------------------------------------------------- chart


def _group_findings(group: SplitGroup, findings: Sequence[Finding]) -> list[Finding]:
    names = set(group.tags) | {group.controller}
    out = []
    for f in findings:
        if f.severity is Severity.INFO:
            continue
        if f.loop not in (None, group.loop) and not names.intersection(f.tags):
            continue
        if names.intersection(f.tags):
            out.append(f)
    return sorted(out, key=lambda f: (f.severity.rank, f.rule, f.tags))


def _title(group: SplitGroup) -> str:
    method = {"dcs": "split in the control system", "positioner": "split in the positioners",
              "pneumatic": "pneumatic split"}.get(group.method, f"{group.method} split")
    return f"Split range {group.controller} (loop {group.loop}): {group.mode}, {method}"


def _subtitle(group: SplitGroup) -> str | None:
    """What the capacity split says, for a ``staged`` group with every Cv known."""
    rec = group.recommended_boundaries_pct
    if not rec:
        return None
    actual = sorted({round(e.co_end_pct, 6) for e in group.elements[:-1]})
    match = len(actual) == len(rec) and all(abs(a - r) <= 0.5 for a, r in zip(actual, rec))
    advice = group.capacity_advice
    kind = "Cv-proportional" if advice is None or advice.is_proportional else "Recommended"
    text = f"{kind} {'boundary' if len(rec) == 1 else 'boundaries'} {', '.join(fmt_pct(r) for r in rec)} % CO"
    text += " (as set)" if match else f" (set: {', '.join(fmt_pct(a) for a in actual)} %)"
    if group.gain_ratios:
        text += "; gain ratio across " + ("each boundary " if len(group.gain_ratios) > 1 else "the boundary ")
        text += ", ".join(f"{r:.2f}" for r in group.gain_ratios)
    return text


def chart_layout(group: SplitGroup, findings: Sequence[Finding] = (), width_mm: float = CHART_WIDTH_MM) -> RangeChart:
    """Place the range chart of ``group``; ``findings`` of the project (those on the
    group's tags, error or warning, are marked). Sizes in mm, natural size
    ``CHART_WIDTH_MM`` x at most ``CHART_HEIGHT_MM`` (taller only when findings need a list below).
    ``width_mm`` narrower than ``CHART_WIDTH_MM`` (``NARROW_CHART_MM``): the plot narrower by
    as much, the title wrapped to the width (one line less of plot height per line more)."""
    shared = group.method in ("positioner", "pneumatic") and bool(group.elements)
    # under the plot: CO ticks and title; the shared signal's axis, ticks and title
    bottom_space = (SIGNAL_AXIS_MM + AXIS_TITLE_MM if shared else CO_TITLE_MM) + TEXT_MM + 2.5
    subtitle = _subtitle(group)
    title_width = round(text_width_mm(_title(group), TITLE_MM, bold=True) + 1.5, 1)
    # as wide as its title when the title is longer (3.5 mm bold on one line), unless
    # set narrow: then the title wraps
    width = max(width_mm, title_width) if width_mm >= CHART_WIDTH_MM else width_mm
    titles = wrap_text(_title(group), width - 1.5, TITLE_MM, bold=True) if title_width > width else [_title(group)]
    subtitles = wrap_text(subtitle, width - 1.0, TEXT_MM) if subtitle else []
    plot_top = PLOT_TOP_MM + LINE_MM * (len(subtitles) + len(titles) - 1)
    plot_height = PLOT_HEIGHT_MM
    if width < CHART_WIDTH_MM:
        # no taller than at its own width: the plot gives up the lines the wrapping adds
        wide_lines = len(wrap_text(subtitle, CHART_WIDTH_MM - 1.0, TEXT_MM)) if subtitle else 0
        plot_height = max(NARROW_PLOT_MM, plot_height - LINE_MM * (len(subtitles) + len(titles) - 1 - wide_lines))
    height = min(CHART_HEIGHT_MM, plot_top + plot_height + bottom_space)
    plot_right = width - (CHART_WIDTH_MM - PLOT_RIGHT_MM)
    plot_rect = Rect(PLOT_LEFT_MM, plot_top, plot_right - PLOT_LEFT_MM, height - bottom_space - plot_top)
    chart = RangeChart(controller=group.controller, loop_id=group.loop,
                       width_mm=width, height_mm=height, plot=plot_rect)
    chart.title = f"Range chart {group.controller}"
    chart.description = _title(group)
    plot = chart.plot
    placer = _Placer(Rect(0.0, 0.0, width, height + 60.0))

    def put(text: PlacedText) -> PlacedText:
        chart.texts.append(text)
        placer.take(text.box)
        return text

    for i, line in enumerate(titles):
        put(_txt(line, 0.5, 1.0 + i * LINE_MM + ASCENT_EM * TITLE_MM, "start", "title", TITLE_MM, bold=True))
    for i, line in enumerate(subtitles):
        put(_txt(line, 0.5, 6.3 + (i + len(titles) - 1) * LINE_MM + ASCENT_EM * TEXT_MM, "start", "subtitle"))

    # shading first (painted under everything): gaps, overlaps of staged neighbours
    bands: list[tuple[float, float, str, str]] = []  # (co from, co to, kind, label)
    between = set()
    for first, second, rel in group.pairs:
        if rel.gap_pct > 0.01:
            word = "dead band" if rel.direction == "opposed" else "gap"
            bands.append((first.co_end_pct, second.co_start_pct, "gap", f"{word} {fmt_pct(rel.gap_pct)} %"))
            between.add((round(first.co_end_pct, 6), round(second.co_start_pct, 6)))
        elif rel.overlap_pct > 0.01 and rel.ranges == "staged":
            bands.append((second.co_start_pct, first.co_end_pct, "overlap", f"overlap {fmt_pct(rel.overlap_pct)} %"))
    for a, b in group.uncovered_co:
        if (round(a, 6), round(b, 6)) not in between and b - a > 0.01:
            bands.append((a, b, "gap", f"nothing moves {fmt_pct(b - a)} %"))
    for a, b, kind, _label in bands:
        x0, x1 = chart.x_of(a), chart.x_of(b)
        fill, opacity = (GAP_FILL, 1.0) if kind == "gap" else (OVERLAP_FILL, 0.45)
        chart.paths.append(Path(((x0, plot.y), (x1, plot.y), (x1, plot.bottom), (x0, plot.bottom)),
                                stroke_mm=None, closed=True, fill=fill, fill_opacity=opacity, role=f"shade-{kind}"))

    # grid, frame, travel axis
    for co in range(10, 100, 10):
        chart.paths.append(Path(((chart.x_of(co), plot.y), (chart.x_of(co), plot.bottom)), THIN_MM,
                                stroke=GRID_GREY, role="grid"))
    for t in (25, 50, 75):
        chart.paths.append(Path(((plot.x, chart.y_of(t)), (plot.right, chart.y_of(t))), THIN_MM,
                                stroke=GRID_GREY, role="grid"))
    chart.paths.append(Path(((plot.x, plot.y), (plot.right, plot.y), (plot.right, plot.bottom), (plot.x, plot.bottom)),
                            MEDIUM_MM, closed=True, role="plot-frame"))
    for t in (0, 25, 50, 75, 100):
        y = chart.y_of(t)
        chart.paths.append(Path(((plot.x - 1.2, y), (plot.x, y)), THIN_MM, role="tick"))
        put(_txt(str(t), plot.x - 1.8, y + CAP_HEIGHT_EM * TEXT_MM / 2, "end", "tick-travel"))
    put(_txt("Travel, %", 1.0 + ASCENT_EM * TEXT_MM, plot.y + plot.height / 2, "middle", "axis-title", rotate=-90.0))

    # CO axis
    for co in range(0, 101, 10):
        x = chart.x_of(co)
        chart.paths.append(Path(((x, plot.bottom), (x, plot.bottom + (1.5 if co % 20 == 0 else 0.9))), THIN_MM,
                                role="tick"))
        if co % 20 == 0:
            put(_txt(str(co), x, plot.bottom + 2.0 + ASCENT_EM * TEXT_MM, "middle", "tick-co"))
    put(_txt("Controller output (CO), %", plot.x + plot.width / 2, plot.bottom + CO_TITLE_MM + ASCENT_EM * TEXT_MM,
             "middle", "axis-title"))

    boundaries = sorted({round(v, 6) for e in group.elements if e.intent is not None  # an invalid element has none
                         for v in (e.co_start_pct, e.co_end_pct) if 0.0 < v < 100.0})

    # second x-axis: the signal all elements share
    if shared:
        span = group.elements[0].span
        chart.signal_axis = (span.unit, span.low, span.high)
        axis_y = plot.bottom + SIGNAL_AXIS_MM
        chart.paths.append(Path(((plot.x, axis_y), (plot.right, axis_y)), MEDIUM_MM, role="signal-axis"))
        for co in boundaries:
            x = chart.x_of(co)
            chart.paths.append(Path(((x, axis_y), (x, axis_y + 1.5)), WIDE_MM, role="tick"))
        _spread_labels(chart, placer,
                       [(chart.x_of(co), fmt_signal(span.low + span.width * co / 100.0, span.unit)) for co in boundaries],
                       axis_y + 1.5 + LEADER_MM + ASCENT_EM * TEXT_MM, axis_y + 1.5, "tick-signal-boundary", bold=True)
        for value in _signal_ticks(span.low, span.high):
            x = chart.x_of(100.0 * (value - span.low) / span.width)
            label = _txt(fmt_signal(value, span.unit), x, axis_y + 1.5 + LEADER_MM + ASCENT_EM * TEXT_MM, "middle",
                         "tick-signal")
            if placer.free(label.box):
                chart.paths.append(Path(((x, axis_y), (x, axis_y + 1.5)), THIN_MM, role="tick"))
                put(label)
        put(_txt(f"Shared output signal, {span.unit} (bold: at the boundaries)", plot.x + plot.width / 2,
                 axis_y + AXIS_TITLE_MM + ASCENT_EM * TEXT_MM, "middle", "axis-title"))

    # element boundaries: thin dashed verticals, CO values above the plot in one row;
    # values that would collide are spread apart, each with a leader to its line
    for co in boundaries:
        x = chart.x_of(co)
        chart.paths.append(Path(((x, plot.y), (x, plot.bottom)), THIN_MM, dash_mm=(1.2, 0.8), role="boundary"))
        placer.take(Rect(x - 0.4, plot.y, 0.8, plot.height))
    _spread_labels(chart, placer, [(chart.x_of(co), f"{fmt_pct(co)} %") for co in boundaries],
                   plot.y - LEADER_MM - DESCENT_EM * TEXT_MM, plot.y, "boundary", bold=False)

    # capacity-proportional boundaries that differ from the set ones
    recommended = [r for r in (group.recommended_boundaries_pct or ()) if all(abs(r - b) > 0.5 for b in boundaries)]
    for co in recommended:
        x = chart.x_of(co)
        chart.paths.append(Path(((x, plot.y), (x, plot.bottom)), MEDIUM_MM, dash_mm=(3.0, 1.0, 0.6, 1.0),
                                stroke=GRID_GREY_DARK, role="recommended-boundary"))
        placer.take(Rect(x - 0.4, plot.y, 0.8, plot.height))

    # combined capacity, right axis
    curve = group.capacity_curve(1.0)
    cv_points_mm: list[Point] = []
    if curve:
        chart.capacity = [(co, cv) for co, cv in curve]
        top_cv = max(cv for _, cv in curve)
        step = nice_step(top_cv * 1.05, 4)
        axis_max = step * math.ceil(top_cv * 1.05 / step - 1e-9) if top_cv > 0 else 1.0
        k = 0
        while k * step <= axis_max + 1e-9:
            y = plot.bottom - plot.height * (k * step) / axis_max
            chart.paths.append(Path(((plot.right, y), (plot.right + 1.2, y)), THIN_MM, role="tick"))
            label = _txt(f"{k * step:g}", plot.right + 1.8, y + CAP_HEIGHT_EM * TEXT_MM / 2, "start", "tick-cv")
            if placer.free(label.box):
                put(label)
            k += 1
        put(_txt("Total Cv", width - 1.0 - ASCENT_EM * TEXT_MM, plot.y + plot.height / 2, "middle", "axis-title",
                 rotate=90.0))
        cv_points_mm = _simplify([(chart.x_of(co), plot.bottom - plot.height * cv / axis_max) for co, cv in curve])
        chart.paths.append(Path(tuple(cv_points_mm), MEDIUM_MM, dash_mm=(0.6, 0.9), role="capacity"))

    # element lines
    obstacles: list[Rect] = []
    drawn: list[SplitElement] = []
    intents: list[tuple[SplitElement, list[Point]]] = []
    for index, element in enumerate(group.elements):
        # an element whose CO segment is invalid is not drawn as a segment (its finding is listed)
        result = travel_curve(element) if element.intent is not None else None
        if result is None:
            continue
        points, source = result
        chart.curves[element.tag] = points
        chart.curve_source[element.tag] = source
        mm = [(chart.x_of(co), chart.y_of(t)) for co, t in points]
        chart.paths.append(Path(tuple(mm), WIDE_MM if source == "settings" else MEDIUM_MM,
                                dash_mm=ELEMENT_DASHES[index % len(ELEMENT_DASHES)], role=f"curve:{element.tag}"))
        obstacles += polyline_boxes(mm, CURVE_CLEAR_MM)
        drawn.append(element)
        error = element.travel_error[0] if element.travel_error else 0.0
        if source == "settings" and error > TOLERANCE_PCT:
            intent = intent_curve(element)
            if intent:
                imm = [(chart.x_of(co), chart.y_of(t)) for co, t in intent]
                chart.paths.append(Path(tuple(imm), THIN_MM, dash_mm=(0.8, 0.8), role=f"intent:{element.tag}"))
                obstacles += polyline_boxes(imm, CURVE_CLEAR_MM)
                intents.append((element, imm))
    obstacles += polyline_boxes(cv_points_mm, CURVE_CLEAR_MM) if cv_points_mm else []
    for box in obstacles:
        placer.take(box)

    inner = Rect(plot.x + 0.5, plot.y + 0.5, plot.width - 1.0, plot.height - 1.0)
    # gap and overlap labels: upright text inside a wide band, turned text in a narrow one
    for a, b, kind, label_text in bands:
        xa, xb = chart.x_of(a), chart.x_of(b)
        cx = (xa + xb) / 2
        cands = []
        if xb - xa >= text_width_mm(label_text, TEXT_MM) + 1.0:
            cands += [_txt(label_text, cx, plot.y + plot.height * f, "middle", f"band-{kind}")
                      for f in (0.5, 0.3, 0.7, 0.15, 0.85)]
        if xb - xa >= TEXT_MM + 0.8:
            cands += [_txt(label_text, cx + (ASCENT_EM - DESCENT_EM) * TEXT_MM / 2, plot.y + plot.height * f,
                           "middle", f"band-{kind}", rotate=-90.0) for f in (0.5, 0.3, 0.7, 0.2, 0.8)]
        cands += [_txt(label_text, cx + d, plot.y + 1.0 + ASCENT_EM * TEXT_MM + row * LINE_MM, anchor, f"band-{kind}")
                  for row in range(8) for d, anchor in ((1.0, "start"), (-1.0, "end"))]
        placer.place(chart, cands, inner)

    for co in recommended:
        x = chart.x_of(co)
        text = f"{'Cv' if group.capacity_advice is None or group.capacity_advice.is_proportional else 'rec.'} {fmt_pct(co)} %"
        rows = int(plot.height // LINE_MM)
        cands = [_txt(text, x + d, plot.bottom - 1.0 - DESCENT_EM * TEXT_MM - row * LINE_MM, anchor, "recommended")
                 for row in range(rows) for d, anchor in ((0.8, "start"), (-0.8, "end"))]
        placer.place(chart, cands, inner)

    # tag labels beside their lines, where the element moves
    label_of: dict[str, PlacedText] = {}
    for element in drawn:
        text = element.tag if chart.curve_source[element.tag] == "settings" else f"{element.tag} (intent)"
        placed = placer.place(chart, _label_candidates(text, element, chart), inner)
        if placed is None:
            placed = placer.place(chart, [_txt(text, x, y, "start", "curve-label") for x, y in _scan(inner)], inner)
        if placed is not None:
            label_of[element.tag] = placed
    for element, imm in intents:
        placer.place(chart, _along(imm, f"{element.tag} intended", "intent-label"), inner)
    if cv_points_mm:
        placer.place(chart, _along(cv_points_mm, "total Cv", "capacity-label"), inner)

    # findings: a marker with the rule name beside the tag it names, else listed below
    notes: list[str] = []
    for finding in _group_findings(group, findings):
        chart.markers.append((finding.rule, finding.tags))
        text = finding.rule + (" (accepted)" if finding.accepted else "")
        anchor = next((label_of[t] for t in finding.tags if t in label_of), None)
        placed = False
        if anchor is not None:
            box = anchor.box
            width = 4.0 + text_width_mm(text, TEXT_MM)
            base = box.bottom - DESCENT_EM * TEXT_MM
            spots = []
            for k in (0, 1, -1, 2, -2, 3, -3, 4, -4, 5, -5):
                for x in (box.right + 1.0, box.x, box.x - width - 1.0, box.right + 1.0 + width / 2):
                    spots.append((x, base + k * (LINE_MM + 0.4)))
            placed = any(_marker(chart, placer, x, b, text, inner) for x, b in spots)
        if not placed:
            notes.append(f"{text}: {', '.join(finding.tags)}")
    y = height - 1.0
    for note in notes:
        _marker(chart, placer, plot.x, y + ASCENT_EM * TEXT_MM, note, None, force=True)
        y += LINE_MM + 0.5
    chart.height_mm = round(y + 1.5, 3) if notes else height
    return chart


LINE_MM = 1.25 * TEXT_MM
"""Baseline to baseline of stacked labels."""
LEADER_MM = 2.0
"""Room between a spread label row and the line or axis its leaders run to."""


def _spread_labels(chart: RangeChart, placer: _Placer, marks: Sequence[tuple[float, str]], baseline_mm: float,
                   target_y_mm: float, role: str, bold: bool) -> None:
    """One row of labels at ``baseline_mm``, each as near its mark's x as the others
    allow (:func:`spread_centres`); a label moved off its mark gets a thin leader from
    the row to (mark x, ``target_y_mm``), so close marks never share or lose a label."""
    if not marks:
        return
    widths = [text_width_mm(text, TEXT_MM, bold=bold) for _, text in marks]
    centres = spread_centres([x for x, _ in marks], widths, 1.2, 0.5, chart.width_mm - 0.5)
    above = target_y_mm < baseline_mm - ASCENT_EM * TEXT_MM  # the row hangs below its target
    for (x, text), c in zip(marks, centres):
        label = _txt(text, c, baseline_mm, "middle", role, bold=bold)
        chart.texts.append(label)
        placer.take(label.box)
        if abs(c - x) > 0.3:
            box = label.box
            edge = box.y - 0.3 if above else box.bottom + 0.3
            chart.paths.append(Path(((c, edge), (x, target_y_mm)), THIN_MM, role="leader"))


def _along(points_mm: Sequence[Point], text: str, role: str) -> list[PlacedText]:
    """Label positions beside a polyline, from its right end towards its left."""
    length = [0.0]
    for (x0, y0), (x1, y1) in zip(points_mm, points_mm[1:]):
        length.append(length[-1] + math.hypot(x1 - x0, y1 - y0))
    out: list[tuple[bool, int, PlacedText]] = []
    for k in range(19, 0, -1):
        target = length[-1] * k / 20
        i = max(j for j in range(len(length)) if length[j] <= target)
        i = min(i, len(points_mm) - 2)
        seg = length[i + 1] - length[i] or 1.0
        f = (target - length[i]) / seg
        px = points_mm[i][0] + f * (points_mm[i + 1][0] - points_mm[i][0])
        py = points_mm[i][1] + f * (points_mm[i + 1][1] - points_mm[i][1])
        # a level stretch (travel held at 0 or 100 %) is shared with other lines: last resort
        level = abs(points_mm[i + 1][1] - points_mm[i][1]) < 1e-6
        out += [(level, len(out), t) for t in (
            _txt(text, px - 1.0, py - 1.5, "end", role),
            _txt(text, px + 1.0, py + 1.5 + ASCENT_EM * TEXT_MM, "start", role),
            _txt(text, px - 1.0, py + 1.5 + ASCENT_EM * TEXT_MM, "end", role),
            _txt(text, px + 1.0, py - 1.5, "start", role))]
    return [t for _, _, t in sorted(out, key=lambda item: (item[0], item[1]))]


def _scan(area: Rect, step: float = 4.0):
    """Candidate text positions over an area, top to bottom, left to right."""
    y = area.y + ASCENT_EM * TEXT_MM + 0.5
    while y < area.bottom:
        x = area.x + 1.0
        while x < area.right - 5.0:
            yield (x, y)
            x += step * 2
        y += step


def _label_candidates(text: str, element: SplitElement, chart: RangeChart) -> list[PlacedText]:
    """Positions beside the moving part of the element's line, middle first."""
    a, b = element.co_start_pct, element.co_end_pct
    out = []
    for f in (0.5, 0.35, 0.65, 0.2, 0.8, 0.1, 0.9):
        co = a + f * (b - a)
        try:
            travel = element.realised_travel_pct(co) if element.settings is not None else element.intended_travel_pct(co)
        except ValueError:
            continue
        x, y = chart.x_of(co), chart.y_of(travel)
        out += [
            _txt(text, x + 1.5, y - 1.5, "start", "curve-label"),
            _txt(text, x - 1.5, y - 1.5, "end", "curve-label"),
            _txt(text, x + 1.5, y + 1.5 + ASCENT_EM * TEXT_MM, "start", "curve-label"),
            _txt(text, x - 1.5, y + 1.5 + ASCENT_EM * TEXT_MM, "end", "curve-label"),
        ]
    return out


def _marker(chart: RangeChart, placer: _Placer, x: float, baseline: float, text: str,
            within: Rect | None, force: bool = False) -> bool:
    """A warning triangle with "!" and the rule name, its baseline at ``baseline``."""
    size = 3.2
    tri = Rect(x, baseline - size + 0.3, size, size)
    label = _txt(text, tri.right + 0.8, baseline, "start", "finding")
    bang = _txt("!", tri.x + size / 2, baseline - 0.1, "middle", "finding-mark", bold=True, size=TEXT_MM,
                owner=f"marker:{len(chart.markers)}:{x:.1f}:{baseline:.1f}")
    box = Rect.union([tri, label.box])
    if not force and not placer.free(box, within):
        return False
    chart.paths.append(Path(((tri.x, tri.bottom), (tri.x + size / 2, tri.y), (tri.right, tri.bottom)),
                            MEDIUM_MM, closed=True, fill="#ffffff", role="finding-marker"))
    chart.texts += [bang, label]
    placer.take(box)
    return True


def split_groups_to_chart(groups: Sequence[SplitGroup]) -> list[SplitGroup]:
    """The groups that get a range chart: real splits (more than one element, or one
    over part of the CO)."""
    return [g for g in groups if g.is_split]


def range_chart_svg(group: SplitGroup, findings: Sequence[Finding] = (), width_mm: float = CHART_WIDTH_MM) -> str:
    """SVG text of the range chart of ``group`` (natural size ``CHART_WIDTH_MM`` wide, or ``width_mm``)."""
    from loopdocs.draw.svg import svg_document

    return svg_document(chart_layout(group, findings, width_mm))

