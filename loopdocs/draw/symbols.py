"""The symbol library: load the SVG symbols shipped in the package's ``symbols/`` folder and
the signal line styles in ``symbols/lines.json``.

Conventions of a symbol file (see ``symbols/README.md``):

- SVG 1.1, ``viewBox="0 0 W H"`` in millimetres (1 user unit = 1 mm), origin at the top
  left; geometry is drawn on stroke centrelines, so a stroke may stand half a pen width
  outside the viewBox (embed with ``overflow="visible"``).
- A *port* is ``<circle class="port" id="port-NAME" cx=".." cy=".." r="0"/>``; the port's
  name is the id without ``port-``. ``r="0"`` disables rendering (SVG 1.1, 9.3).
- A *text area* is ``<rect class="text-area" id="text-NAME" x y width height
  fill="none" stroke="none"/>``: the box a label must fit in. For instrument bubbles the
  ports ``tag-func`` and ``tag-loop`` are the centres of the text baselines (function
  letters above the middle, loop number below) and the text areas of the same names are
  the boxes around them.
- Ports, text areas, ``title`` and ``desc`` are read into :class:`Symbol`; the rest is the
  drawing, returned as markup to embed.

Files are parsed with ``defusedxml`` (no DTD, no entities) and each is read once per
process (``functools.lru_cache``).
"""

from __future__ import annotations

import json
import math
import os
import re
import xml.etree.ElementTree as ET
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from types import MappingProxyType

import defusedxml
import defusedxml.ElementTree as DET

SVG_NS = "http://www.w3.org/2000/svg"
SYMBOLS_DIR_ENV = "LOOPDOCS_SYMBOLS_DIR"
LINES_FILE = "lines.json"
NOT_SYMBOLS = frozenset({"contact_sheet"})  # SVG files in symbols/ that are not symbols

BUBBLE_DISPLAYS = ("discrete", "shared", "computer", "plc")
# location name -> overlay symbol drawn across the bubble (None: no line, field mounted)
LOCATION_OVERLAYS: Mapping[str, str | None] = MappingProxyType(
    {
        "field": None,
        "main-panel": "location-main-panel",
        "behind-panel": "location-behind-panel",
        "aux-panel": "location-aux-panel",
    }
)
BUBBLE_PORTS = ("centre", "left", "right", "top", "bottom", "tag-func", "tag-loop")
TERMINAL_PORTS = ("wire-left", "wire-right", "label")

# The building blocks every diagram is made of (bubbles, location overlays, terminal units,
# line marks) and the ports the drawing code relies on. Device symbols (elements, valve
# bodies, actuators, accessories) are listed with their ports in the drawing vocabulary,
# ``loopdocs.draw.devices``; every file in symbols/ is one or the other (tests/test_symbols.py).
BUILDING_BLOCK_PORTS: Mapping[str, tuple[str, ...]] = MappingProxyType(
    {
        **{f"bubble-{d}": BUBBLE_PORTS for d in BUBBLE_DISPLAYS},
        **{overlay: ("centre",) for overlay in LOCATION_OVERLAYS.values() if overlay},
        "terminal-jb": TERMINAL_PORTS,
        "terminal-cabinet": TERMINAL_PORTS,
        "mark-pneumatic": ("centre",),
        "mark-data": ("centre",),
        "barrier": ("wire-left", "wire-right", "label"),
        "earth": ("tap",),
    }
)
# Text areas the layout relies on, per symbol file (files not listed need none).
REQUIRED_TEXT_AREAS: Mapping[str, tuple[str, ...]] = MappingProxyType(
    {
        **{f"bubble-{d}": ("tag-func", "tag-loop") for d in BUBBLE_DISPLAYS},
        "positioner": ("label",),
        "terminal-jb": ("label",),
        "terminal-cabinet": ("label",),
        "barrier": ("label",),
    }
)

Point = tuple[float, float]
Box = tuple[float, float, float, float]  # x, y, width, height in mm


class SymbolError(ValueError):
    """A symbol file is missing, unsafe or does not follow the library's conventions."""


def fmt_mm(value: float) -> str:
    """Format a length in mm for SVG text: at most 3 decimals, no trailing zeros.

    >>> fmt_mm(5.5), fmt_mm(0.30000000000000004), fmt_mm(-0.0), fmt_mm(12.0)
    ('5.5', '0.3', '0', '12')
    """
    text = f"{round(value, 3) + 0.0:.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _translated(markup: str, dx_mm: float, dy_mm: float) -> str:
    if dx_mm == 0 and dy_mm == 0:
        return markup
    return f'<g transform="translate({fmt_mm(dx_mm)} {fmt_mm(dy_mm)})">{markup}</g>'


@dataclass(frozen=True, eq=False)
class Symbol:
    """One symbol: size, named ports and text areas (mm, symbol coordinates), drawing markup.

    ``markup`` is plain SVG (no namespace prefixes, no ids) for the drawing only, ready to
    put inside a ``<g>`` or ``<symbol>`` of a document whose default namespace is SVG.
    """

    name: str
    width_mm: float
    height_mm: float
    ports: Mapping[str, Point]
    text_areas: Mapping[str, Box]
    markup: str
    title: str = ""
    description: str = ""

    def port(self, name: str) -> Point:
        """Position of port ``name`` in symbol coordinates, mm."""
        try:
            return self.ports[name]
        except KeyError:
            known = ", ".join(sorted(self.ports))
            raise KeyError(f"symbol {self.name!r} has no port {name!r}; ports: {known}") from None

    def svg_at(
        self, x_mm: float, y_mm: float, port: str | None = None, rotate_deg: float = 0.0
    ) -> str:
        """A ``<g>`` placing the drawing so that ``port`` (or the symbol's top-left corner)
        lands on ``(x_mm, y_mm)``, rotated ``rotate_deg`` clockwise about that point.

        >>> load_symbol("positioner").svg_at(20, 30, port="signal-in")[:50]
        '<g transform="translate(20 30) translate(0 -2.5)">'
        """
        parts = [f"translate({fmt_mm(x_mm)} {fmt_mm(y_mm)})"]
        if rotate_deg:
            parts.append(f"rotate({fmt_mm(rotate_deg)})")
        if port is not None:
            px, py = self.port(port)
            if px or py:
                parts.append(f"translate({fmt_mm(-px)} {fmt_mm(-py)})")
        return f'<g transform="{" ".join(parts)}">{self.markup}</g>'

    def symbol_def(self, element_id: str) -> str:
        """A ``<symbol>`` definition of the drawing, for ``<defs>`` and ``<use>``."""
        return (
            f'<symbol id="{element_id}" viewBox="0 0 {fmt_mm(self.width_mm)} '
            f'{fmt_mm(self.height_mm)}" overflow="visible">{self.markup}</symbol>'
        )


def symbols_dir() -> Path:
    """The symbol folder: ``$LOOPDOCS_SYMBOLS_DIR`` if set, else the ``symbols`` folder
    shipped inside the package (``importlib.resources``; a wheel installs it as files)."""
    override = os.environ.get(SYMBOLS_DIR_ENV)
    if override:
        folder = Path(override)
    else:
        from importlib import resources

        folder = Path(str(resources.files("loopdocs").joinpath("symbols")))
    if not folder.is_dir():
        raise SymbolError(
            f"symbol folder not found: {folder} (set {SYMBOLS_DIR_ENV} to a folder of loopdocs symbols)"
        )
    return folder


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def _has_class(element: ET.Element, name: str) -> bool:
    return name in element.get("class", "").split()


def _is_port(element: ET.Element) -> bool:
    return _local(element.tag) == "circle" and _has_class(element, "port")


def _is_text_area(element: ET.Element) -> bool:
    return _local(element.tag) == "rect" and _has_class(element, "text-area")


def _number(element: ET.Element, attribute: str, where: str) -> float:
    try:
        return float(element.get(attribute, "0"))
    except ValueError:
        raise SymbolError(f"{where}: {attribute}={element.get(attribute)!r} is not a number") from None


def _clean_copy(element: ET.Element, where: str) -> ET.Element | None:
    """Copy of ``element`` without namespaces, ports, text areas or blank text."""
    if _is_port(element) or _is_text_area(element):
        return None
    for key in element.attrib:
        if key.startswith("{"):
            raise SymbolError(f"{where}: namespaced attribute {key!r}; use plain SVG 1.1 attributes")
    copy = ET.Element(_local(element.tag), dict(element.attrib))
    copy.text = element.text if element.text and element.text.strip() else None
    for child in element:
        clean = _clean_copy(child, where)
        if clean is not None:
            clean.tail = child.tail if child.tail and child.tail.strip() else None
            copy.append(clean)
    return copy


def parse_symbol(svg: str | bytes, name: str) -> Symbol:
    """Parse symbol SVG text (safely: no DTD, no entities) into a :class:`Symbol`."""
    try:
        root = DET.fromstring(svg, forbid_dtd=True)
    except (defusedxml.DefusedXmlException, ET.ParseError) as exc:
        raise SymbolError(f"symbol {name!r}: not safe, well-formed XML ({exc})") from exc
    if root.tag != f"{{{SVG_NS}}}svg":
        raise SymbolError(f"symbol {name!r}: root element is {root.tag!r}, expected SVG <svg>")
    view_box = re.split(r"[\s,]+", root.get("viewBox", "").strip())
    try:
        min_x, min_y, width_mm, height_mm = (float(v) for v in view_box)
    except ValueError:
        raise SymbolError(f"symbol {name!r}: needs viewBox=\"0 0 W H\" in mm") from None
    if min_x != 0 or min_y != 0 or width_mm <= 0 or height_mm <= 0:
        raise SymbolError(f"symbol {name!r}: viewBox must be \"0 0 W H\" with W, H > 0")

    ports: dict[str, Point] = {}
    areas: dict[str, Box] = {}
    for element in root.iter():
        element_id = element.get("id", "")
        where = f"symbol {name!r} element {element_id or _local(element.tag)!r}"
        if _is_port(element):
            if not element_id.startswith("port-") or element_id[5:] in ports:
                raise SymbolError(f"{where}: a port needs a unique id 'port-NAME'")
            ports[element_id[5:]] = (_number(element, "cx", where), _number(element, "cy", where))
        elif _is_text_area(element):
            if not element_id.startswith("text-") or element_id[5:] in areas:
                raise SymbolError(f"{where}: a text area needs a unique id 'text-NAME'")
            x, y, w, h = (_number(element, a, where) for a in ("x", "y", "width", "height"))
            areas[element_id[5:]] = (x, y, w, h)

    texts = {_local(c.tag): (c.text or "").strip() for c in root if _local(c.tag) in ("title", "desc")}
    parts = []
    for child in root:
        if _local(child.tag) in ("title", "desc", "metadata"):
            continue
        clean = _clean_copy(child, f"symbol {name!r}")
        if clean is not None:
            parts.append(ET.tostring(clean, encoding="unicode"))
    return Symbol(
        name=name,
        width_mm=width_mm,
        height_mm=height_mm,
        ports=MappingProxyType(ports),
        text_areas=MappingProxyType(areas),
        markup="".join(parts),
        title=texts.get("title", ""),
        description=texts.get("desc", ""),
    )


@lru_cache(maxsize=None)
def load_symbol(name: str) -> Symbol:
    """The symbol in ``symbols/<name>.svg`` (read once per process).

    >>> s = load_symbol("bubble-discrete")
    >>> (s.width_mm, s.ports["tag-func"], s.ports["tag-loop"])
    (11.0, (5.5, 4.3), (5.5, 8.5))
    """
    path = symbols_dir() / f"{name}.svg"
    if name in NOT_SYMBOLS or not path.is_file():
        raise SymbolError(f"no symbol {name!r} (looked for {path})")
    return parse_symbol(path.read_bytes(), name)


def symbol_names() -> tuple[str, ...]:
    """Names of every symbol file in the folder, sorted."""
    return tuple(sorted(p.stem for p in symbols_dir().glob("*.svg") if p.stem not in NOT_SYMBOLS))


def all_symbols() -> dict[str, Symbol]:
    """Every symbol file in the folder, by name, sorted."""
    return {name: load_symbol(name) for name in symbol_names()}


def stack(base: Symbol, base_port: str, top: Symbol, top_port: str) -> Symbol:
    """Combine two symbols with ``top``'s ``top_port`` on ``base``'s ``base_port``.

    The result is re-based so its box starts at 0, 0. Ports and text areas of both are
    kept; where a name is in both, the base's wins.

    >>> v = stack(load_symbol("valve-globe"), "stem-top", load_symbol("actuator-piston"), "stem-bottom")
    >>> v.name, v.height_mm, v.ports["stem-top"] == v.ports["stem-bottom"]
    ('valve-globe+actuator-piston', 18.0, True)
    """
    bx, by = base.port(base_port)
    tx, ty = top.port(top_port)
    dx, dy = bx - tx, by - ty  # top's origin in base coordinates
    min_x, min_y = min(0.0, dx), min(0.0, dy)
    max_x, max_y = max(base.width_mm, dx + top.width_mm), max(base.height_mm, dy + top.height_mm)
    sx, sy = -min_x, -min_y

    def moved(point: Point, ox: float, oy: float) -> Point:
        return (round(point[0] + ox, 3) + 0.0, round(point[1] + oy, 3) + 0.0)

    ports = {k: moved(p, dx + sx, dy + sy) for k, p in top.ports.items()}
    ports.update({k: moved(p, sx, sy) for k, p in base.ports.items()})
    def moved_area(area: Box, ox: float, oy: float) -> Box:
        x, y = moved((area[0], area[1]), ox, oy)
        return (x, y, area[2], area[3])

    areas = {k: moved_area(a, dx + sx, dy + sy) for k, a in top.text_areas.items()}
    areas.update({k: moved_area(a, sx, sy) for k, a in base.text_areas.items()})
    return Symbol(
        name=f"{base.name}+{top.name}",
        width_mm=round(max_x - min_x, 3),
        height_mm=round(max_y - min_y, 3),
        ports=MappingProxyType(ports),
        text_areas=MappingProxyType(areas),
        markup=_translated(base.markup, sx, sy) + _translated(top.markup, dx + sx, dy + sy),
        title=f"{base.title} + {top.title}",
        description=f"{base.description} {top.description}",
    )


@lru_cache(maxsize=None)
def instrument_bubble(display: str, location: str) -> Symbol:
    """The instrument symbol for a display class (``BUBBLE_DISPLAYS``) at a location
    (``LOCATION_OVERLAYS``): the bubble with the location overlay centred on it.

    >>> b = instrument_bubble("shared", "main-panel")
    >>> b.name, b.width_mm, b.height_mm, b.markup.count("<line")
    ('bubble-shared+location-main-panel', 11.0, 11.0, 1)
    """
    if display not in BUBBLE_DISPLAYS:
        raise ValueError(f"unknown display {display!r}; use one of {', '.join(BUBBLE_DISPLAYS)}")
    if location not in LOCATION_OVERLAYS:
        raise ValueError(f"unknown location {location!r}; use one of {', '.join(LOCATION_OVERLAYS)}")
    bubble = load_symbol(f"bubble-{display}")
    overlay = LOCATION_OVERLAYS[location]
    if overlay is None:
        return bubble
    return stack(bubble, "centre", load_symbol(overlay), "centre")


def mark_positions(points_mm: Sequence[Point], spacing_mm: float) -> list[tuple[float, float, float]]:
    """Where to put the marks of a marked line: ``(x_mm, y_mm, angle_deg)`` per mark.

    Each straight run of length L gets ``n = max(1, floor(L / spacing))`` marks at
    ``(i + 0.5) * L / n`` along it (none if L < spacing / 2), so marks keep clear of
    corners. ``angle_deg`` is the run's direction, clockwise from +x (SVG y down).

    >>> mark_positions([(0, 0), (20, 0), (20, 6)], 10)
    [(5.0, 0.0, 0.0), (15.0, 0.0, 0.0), (20.0, 3.0, 90.0)]
    """
    if spacing_mm <= 0:
        raise ValueError(f"spacing_mm must be > 0, got {spacing_mm}")
    marks: list[tuple[float, float, float]] = []
    for (x0, y0), (x1, y1) in zip(points_mm, points_mm[1:]):
        run_mm = math.hypot(x1 - x0, y1 - y0)
        if run_mm < spacing_mm / 2:
            continue
        count = max(1, math.floor(run_mm / spacing_mm))
        angle_deg = math.degrees(math.atan2(y1 - y0, x1 - x0)) + 0.0
        for i in range(count):
            f = (i + 0.5) / count
            marks.append((round(x0 + f * (x1 - x0), 3) + 0.0, round(y0 + f * (y1 - y0), 3) + 0.0, round(angle_deg, 3)))
    return marks


@dataclass(frozen=True)
class LineStyle:
    """How one kind of line is drawn (from ``symbols/lines.json``)."""

    kind: str
    description: str
    stroke_width_mm: float
    dasharray_mm: tuple[float, ...] | None
    mark: str | None  # symbol drawn along the line, centred on its port "centre"
    mark_spacing_mm: float | None

    def svg(self, points_mm: Sequence[Point]) -> str:
        """SVG for a line through ``points_mm``: the polyline, then its marks.

        >>> line_style("electrical").svg([(0, 0), (30, 0)])
        '<polyline points="0,0 30,0" fill="none" stroke="#000000" stroke-width="0.35" stroke-dasharray="3 1.5"/>'
        """
        coords = " ".join(f"{fmt_mm(x)},{fmt_mm(y)}" for x, y in points_mm)
        dash = ""
        if self.dasharray_mm:
            dash = f' stroke-dasharray="{" ".join(fmt_mm(d) for d in self.dasharray_mm)}"'
        parts = [
            f'<polyline points="{coords}" fill="none" stroke="#000000" '
            f'stroke-width="{fmt_mm(self.stroke_width_mm)}"{dash}/>'
        ]
        if self.mark and self.mark_spacing_mm:
            mark = load_symbol(self.mark)
            for x, y, angle in mark_positions(points_mm, self.mark_spacing_mm):
                parts.append(mark.svg_at(x, y, port="centre", rotate_deg=angle))
        return "".join(parts)


@lru_cache(maxsize=1)
def _line_styles() -> Mapping[str, LineStyle]:
    path = symbols_dir() / LINES_FILE
    try:
        raw = json.loads(path.read_text(encoding="utf-8"))
        styles = {
            kind: LineStyle(
                kind=kind,
                description=str(entry["description"]),
                stroke_width_mm=float(entry["stroke_width_mm"]),
                dasharray_mm=tuple(float(d) for d in entry["dasharray_mm"]) if entry["dasharray_mm"] else None,
                mark=entry["mark"],
                mark_spacing_mm=float(entry["mark_spacing_mm"]) if entry["mark_spacing_mm"] else None,
            )
            for kind, entry in raw.items()
        }
    except (OSError, ValueError, KeyError, TypeError) as exc:
        raise SymbolError(f"{path}: cannot read line styles ({exc})") from exc
    return MappingProxyType(styles)


def line_kinds() -> tuple[str, ...]:
    """The line kinds defined in ``symbols/lines.json``, in file order."""
    return tuple(_line_styles())


def line_style(kind: str) -> LineStyle:
    """The style of signal or process line ``kind`` (electrical, pneumatic, data, process).

    >>> line_style("process").stroke_width_mm
    0.7
    """
    styles = _line_styles()
    if kind not in styles:
        raise ValueError(f"unknown line kind {kind!r}; use one of {', '.join(styles)}")
    return styles[kind]
