"""What one station of a loop diagram draws: the :class:`Cluster` and the pieces every
device drawing is made of (docs/design.md §8.1).

A cluster is a small :class:`~loopdocs.draw.geometry.Drawing` in row coordinates (the
row's signal line at y = 0, the column's alignment line at x = 0) with the points where
lines join it. This module holds the building blocks that are not a device kind of the
drawing vocabulary (``loopdocs.draw.devices``): the ISA-5.1 tag bubble (display class by
platform, location line by location), instrument and function bubbles with their texts,
terminal units and I/O channel blocks, and the label helpers (every text placed from a
measured box, ``loopdocs.draw.text``). Sizes are mm.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

from loopdocs.draw.geometry import Drawing, Frame, PlacedSymbol, PlacedText, Point, Rect, SignalLine
from loopdocs.draw.symbols import instrument_bubble, load_symbol
from loopdocs.draw.text import ASCENT_EM, DESCENT_EM, text_width_mm, wrap_text
from loopdocs.model.records import Tag
from loopdocs.model.tagname import TagKind
from loopdocs.model.vocab import Location, Platform, Transfer

# --------------------------------------------------------------------------- sizes, mm

TEXT_MM = 3.43
"""Font size of every label: 2.5 mm capitals (DejaVu Sans capitals are 0.729 em), the
lettering ISO 3098 asks of an A3 drawing (from memory). A tag number wider than its
bubble's text area is squeezed to it (SVG ``textLength``), its height kept."""
TITLE_MM = 3.5
LINE_PITCH_MM = 4.4
"""Baseline to baseline of wrapped lines (1.28 x the type)."""
ENCLOSURE_PAD_MM = 2.0
SERVICE_WRAP_MM = 36.0
PIPE_STUB_MM = 5.0
"""Length of the pipe drawn on each side of an in-line device."""
SUPPLY_LEAD_MM = 4.0
"""Length of a 4-wire device's supply line above its bubble."""
EARTH_DROP_MM = 1.5
"""Lead from a device or terminal down to a screen's earth symbol."""
MINUS = "\u2212"

_DISPLAY_BY_PLATFORM = {Platform.DCS: "shared", Platform.PLC: "plc", Platform.SIS: "plc",
                        Platform.COMPUTER: "computer", Platform.DEVICE: "discrete"}
_OVERLAY_BY_LOCATION = {Location.FIELD: "field", Location.CONTROL_ROOM: "main-panel",
                        Location.RACK_ROOM: "behind-panel", Location.LOCAL_PANEL: "aux-panel"}
_DEFAULT_OVERLAY_BY_BAND = {"field": "field", "local": "aux-panel", "jb": "field",
                            "cabinet": "behind-panel", "control": "main-panel"}


# --------------------------------------------------------------------------- texts


def fmt_number(value: float) -> str:
    """A number for a label: at most 2 decimals, no trailing zeros.

    >>> fmt_number(11.68), fmt_number(4.0), fmt_number(-5), fmt_number(8.333)
    ('11.68', '4', '-5', '8.33')
    """
    text = f"{round(float(value), 2) + 0.0:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def bubble_style(tag: Tag, band: str) -> tuple[str, str]:
    """(display class, location overlay) of the tag's ISA-5.1 bubble."""
    if band == "field":
        return "discrete", "field"
    display = _DISPLAY_BY_PLATFORM.get(tag.platform, "discrete") if tag.platform else (
        "shared" if band == "control" else "discrete")
    overlay = _OVERLAY_BY_LOCATION.get(tag.location) if tag.location else None
    return display, overlay or _DEFAULT_OVERLAY_BY_BAND[band]


def loop_text(tag: Tag) -> str:
    """The lower line of a tag bubble: area, number and suffix (``3105A``, ``41-3105``)."""
    parts = tag.parts
    number = f"{parts.number}{parts.suffix}"
    return f"{parts.area}-{number}" if parts.area else number



def label_height() -> float:
    return (ASCENT_EM + DESCENT_EM) * TEXT_MM


def label(text: str, x: float, y: float, anchor: str = "start", role: str = "label", owner: str = "",
          size: float = TEXT_MM, bold: bool = False, fit: float | None = None) -> PlacedText:
    return PlacedText(text, x, y, size, anchor, bold, role, owner, fit)


def stack_lines(lines: list[str], x: float, top: float, anchor: str, role: str) -> list[PlacedText]:
    """Text lines whose first box top is at ``top``."""
    first = top + ASCENT_EM * TEXT_MM
    return [label(line, x, first + i * LINE_PITCH_MM, anchor, role) for i, line in enumerate(lines)]


def stack_height(count: int) -> float:
    return 0.0 if count == 0 else (count - 1) * LINE_PITCH_MM + label_height()



# --------------------------------------------------------------------------- clusters


@dataclass
class Cluster:
    """What one station of a row draws, in row coordinates (row line at y = 0, the
    column's alignment line at x = 0), and where lines join it."""

    drawing: Drawing
    attach_in: Point | None = None
    attach_out: Point | None = None
    out_path: tuple[Point, ...] = ()
    """Points a line to the right starts with, before reaching the row line (FE taps)."""
    points: dict[str, Point] = field(default_factory=dict)
    pad_mm: float = 0.0

    @property
    def joint_in(self) -> Point:
        """Where a line from the left joins (only asked of clusters that take one)."""
        if self.attach_in is None:
            raise ValueError("this cluster takes no line from the left")
        return self.attach_in

    @property
    def joint_out(self) -> Point:
        """Where a line to the right leaves (only asked of clusters that give one)."""
        if self.attach_out is None:
            raise ValueError("this cluster gives no line to the right")
        return self.attach_out

    @property
    def box(self) -> Rect:
        return self.drawing.content_box().grown(self.pad_mm) if self.pad_mm else self.drawing.content_box()

    def reach_near_line(self, half_height_mm: float) -> tuple[float, float]:
        """Leftmost and rightmost x of what the cluster draws within ``half_height_mm``
        of the row line (where line labels go), padding included."""
        d = self.drawing
        boxes = [s.box for s in d.symbols] + [t.box for t in d.texts] + [f.rect for f in d.frames]
        for line in d.lines:
            boxes += line.segment_boxes()
        near = [b for b in boxes if b.y < half_height_mm and b.bottom > -half_height_mm]
        if not near:
            return (0.0, 0.0)
        return (min(b.x for b in near) - self.pad_mm, max(b.right for b in near) + self.pad_mm)


def bubble(tag: Tag, band: str, role: str) -> tuple[PlacedSymbol, list[PlacedText]]:
    display, overlay = bubble_style(tag, band)
    symbol = instrument_bubble(display, overlay)
    placed = PlacedSymbol(symbol, 0.0, 0.0, anchor="centre", role=role, tag=tag.tag,
                          ports_used=("centre", "left", "right", "top", "bottom", "tag-func", "tag-loop"),
                          name=f"bubble:{tag.tag}")
    texts = []
    for port, text in (("tag-func", tag.parts.letters), ("tag-loop", loop_text(tag))):
        x, y = placed.port(port)
        area = symbol.text_areas[port]
        texts.append(label(text, x, y, "middle", role=port, owner=placed.name, fit=area[2]))
    return placed, texts


def range_text(tag: Tag) -> str | None:
    if not tag.has_range:
        return None
    text = f"{fmt_number(tag.range_low)} to {fmt_number(tag.range_high)}"
    if tag.units:
        text += f" {tag.units}"
    if tag.transfer is Transfer.SQRT:
        text += ", sqrt"
    return text


def service_lines(tag: Tag, loop_service: str | None) -> list[str]:
    """The tag's service, wrapped; left out when it only repeats the loop's service
    (the sheet's title gives that), except for final elements, which it tells apart."""
    if not tag.service or (tag.service == loop_service and tag.kind is not TagKind.FINAL_ELEMENT):
        return []
    return wrap_text(tag.service, SERVICE_WRAP_MM, TEXT_MM, max_lines=6, balanced=True)


def wrapped(lines: Iterable[str | None], width_mm: float = SERVICE_WRAP_MM) -> list[str]:
    """Each free text from the index (interlock, area) wrapped at ``width_mm``: a long
    interlock text takes three lines, not the width of its band; blanks left out.

    >>> wrapped(["interlock CE-012 closes FV-1201 on mash tun high level", None, "SP 5"])
    ['interlock CE-012', 'closes FV-1201 on', 'mash tun high level', 'SP 5']
    """
    return [part for line in lines if line for part in wrap_text(line, width_mm, TEXT_MM, balanced=True)]


def earth_at(drawing: Drawing, point: Point, name: str) -> Rect:
    """A screen's earth symbol hung on a thin lead below ``point``, ``screen`` written
    beside it; returns the box of what it adds."""
    symbol = load_symbol("earth")
    tap = (point[0], point[1] + EARTH_DROP_MM)
    placed = PlacedSymbol(symbol, tap[0], tap[1], anchor="tap", role="earth", ports_used=("tap",), name=name)
    drawing.symbols.append(placed)
    drawing.lines.append(SignalLine("connection", (point, tap), "screen-earth"))
    box = placed.box
    text = label("screen", box.right + 0.6, box.bottom, "start", "screen")
    drawing.texts.append(text)
    return Rect.union([box, text.box])


def instrument_cluster(tag: Tag, band: str, above: Iterable[str | None] = (), below: Iterable[str] = (),
                       right: Iterable[str] = (), right_above: str | None = None,
                       enclosure_title: str | None = None, pad_mm: float = 0.0,
                       supply: str | None = None, earth: bool = False) -> Cluster:
    """A tag bubble centred on the row line with texts above, below and to its right;
    ``enclosure_title`` (the cabinet a rack-mounted device is in) goes top left.
    ``supply`` (a 4-wire device's power) is drawn as an electrical line rising from the
    bubble's top with the supply written at its end; ``earth`` hangs the cable screen's
    earth below the bubble (Shield field or both)."""
    drawing = Drawing()
    placed, texts = bubble(tag, band, "instrument")
    drawing.symbols.append(placed)
    drawing.texts += texts
    box = placed.box
    top_y = box.y
    if supply:
        top = placed.port("top")
        end = (top[0], top[1] - SUPPLY_LEAD_MM)
        drawing.lines.append(SignalLine("electrical", (top, end), "power-supply"))
        text = label(supply, end[0] + 0.8, end[1] + ASCENT_EM * TEXT_MM, "start", "power-supply")
        drawing.texts.append(text)
        top_y = end[1]
    above_lines = [line for line in above if line]
    if above_lines:
        top = top_y - 1.0 - stack_height(len(above_lines))
        drawing.texts += stack_lines(above_lines, 0.0, top, "middle", "annotation")
    bottom_y = box.bottom
    if earth:
        bottom_y = earth_at(drawing, placed.port("bottom"), f"earth:{tag.tag}").bottom
    below_lines = [line for line in below if line]
    if below_lines:
        drawing.texts += stack_lines(below_lines, 0.0, bottom_y + 1.0, "middle", "annotation")
    right_lines = [line for line in right if line]
    if right_lines:
        top = -stack_height(len(right_lines)) / 2
        drawing.texts += stack_lines(right_lines, box.right + 1.5, top, "start", "annotation")
    if right_above:
        # ISA-5.1: a function designation (I/P) stands outside the bubble, upper right.
        drawing.texts.append(label(right_above, box.right + 1.0, box.y + ASCENT_EM * TEXT_MM, "start", "function"))
    if enclosure_title:
        content = drawing.content_box()
        drawing.texts.append(label(enclosure_title, content.x, content.y - 0.8 - DESCENT_EM * TEXT_MM,
                                   "start", "enclosure-title"))
    return Cluster(drawing, attach_in=placed.port("left"), attach_out=placed.port("right"),
                   points={"top": placed.port("top"), "bottom": placed.port("bottom")}, pad_mm=pad_mm)


def terminal_cluster(kind: str, terminals: str | None, titles: list[str], name: str,
                     show_strip: bool = True, polarity: bool = False, earth: bool = False) -> Cluster:
    """One terminal unit (``terminal-jb`` or ``terminal-cabinet``) on the row line, its
    numbers in the unit (``51+ 52−`` with ``polarity``), the strip (``X1`` of
    ``X1:11-12``, when ``show_strip``) and the enclosure name above; ``earth``: the cable
    screen earthed here, the earth symbol hung below the unit."""
    drawing = Drawing()
    symbol = load_symbol(kind)
    placed = PlacedSymbol(symbol, 0.0, 0.0, anchor="wire-left", role="terminal", tag=None,
                          ports_used=("wire-left", "wire-right", "label"), name=name)
    drawing.symbols.append(placed)
    strip, numbers = None, terminals
    if terminals and ":" in terminals:
        strip, numbers = terminals.rsplit(":", 1)
    if polarity:
        # + above and - below the wire where it lands (the first terminal of the pair takes
        # the + core, as the Cores text lists them), outside the unit: its number area is
        # too narrow for both numbers with their signs at 2.5 mm
        x, y = placed.port("wire-left")
        drawing.texts.append(label("+", x - 0.6, y - 0.3 - 0.4 - DESCENT_EM * TEXT_MM, "end", "polarity", name))
        drawing.texts.append(label(MINUS, x - 0.6, y + 0.3 + 0.4 + ASCENT_EM * TEXT_MM, "end", "polarity", name))
    if earth:
        bottom = (placed.port("label")[0], placed.box.bottom - placed.stroke_pad_mm)
        earth_at(drawing, bottom, f"earth:{name}")
    if numbers:
        x, y = placed.port("label")
        area = symbol.text_areas["label"]
        drawing.texts.append(label(numbers, x, y, "middle", "terminal", owner=name, fit=area[2]))
    above = [t for t in titles if t] + ([f"strip {strip}"] if strip and show_strip else [])
    if above:
        box = placed.box
        drawing.texts += stack_lines(above, box.x, box.y - 0.8 - stack_height(len(above)), "start", "terminal-title")
    return Cluster(drawing, attach_in=placed.port("wire-left"), attach_out=placed.port("wire-right"),
                   pad_mm=ENCLOSURE_PAD_MM)


def barrier_cluster(text: str, name: str) -> Cluster:
    """An intrinsic-safety barrier or isolator on the row line: the ``barrier`` box with IS
    on its field side, the Barrier text (tag and type) above it."""
    drawing = Drawing()
    symbol = load_symbol("barrier")
    placed = PlacedSymbol(symbol, 0.0, 0.0, anchor="wire-left", role="barrier", ports_used=("wire-left", "wire-right", "label"),
                          name=name)
    drawing.symbols.append(placed)
    x, y = placed.port("label")
    drawing.texts.append(label("IS", x, y, "middle", "barrier-mark", owner=name, fit=symbol.text_areas["label"][2]))
    lines = wrap_text(text, 30.0, TEXT_MM, max_lines=2, balanced=True)
    box = placed.box
    drawing.texts += stack_lines(lines, box.x, box.y - 0.6 - stack_height(len(lines)), "start", "barrier")
    return Cluster(drawing, attach_in=placed.port("wire-left"), attach_out=placed.port("wire-right"),
                   pad_mm=ENCLOSURE_PAD_MM)


def io_cluster(heading: str, address: str, notes: list[str], name: str) -> Cluster:
    """An I/O channel block: a box with the host and channel type and the address."""
    drawing = Drawing()
    width = max(text_width_mm(heading, TEXT_MM, bold=True), text_width_mm(address, TEXT_MM)) + 3.0
    height = 2 * LINE_PITCH_MM + 2.2
    rect = Rect(0.0, -height / 2, width, height)
    drawing.frames.append(Frame(rect, stroke_mm=0.35, role="io", name=name, solid=True))
    first = rect.y + 1.1 + ASCENT_EM * TEXT_MM
    drawing.texts.append(label(heading, width / 2, first, "middle", "io-heading", owner=name, bold=True))
    drawing.texts.append(label(address, width / 2, first + LINE_PITCH_MM, "middle", "io-address", owner=name))
    if notes:
        drawing.texts += stack_lines(notes, 0.0, rect.bottom + 1.0, "start", "io-note")
    return Cluster(drawing, attach_in=(0.0, 0.0), attach_out=(width, 0.0))

