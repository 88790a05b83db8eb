"""Write a :class:`~loopdocs.draw.geometry.Drawing` as an SVG 1.1 document.

Plain text output, built in a fixed order from the drawing's lists, numbers through
``fmt_mm`` (at most 3 decimals): the same drawing always gives the same bytes (no ids,
no dates). Sizes are mm: ``width="Wmm" height="Hmm" viewBox="0 0 W H"``.
"""

from __future__ import annotations

from xml.sax.saxutils import escape, quoteattr

from loopdocs.draw.geometry import Dot, Drawing, Frame, Path, PlacedSymbol, PlacedText, SignalLine, THIN_MM
from loopdocs.draw.symbols import fmt_mm, line_kinds, line_style
from loopdocs.draw.text import FONT_FAMILY, text_width_mm

SVG_NS = "http://www.w3.org/2000/svg"


def _points(points) -> str:
    return " ".join(f"{fmt_mm(x)},{fmt_mm(y)}" for x, y in points)


def _paint(fill: str | None, fill_opacity: float | None, stroke: str | None, stroke_mm: float | None,
           dash_mm: tuple[float, ...] | None) -> str:
    parts = [f'fill="{fill or "none"}"']
    if fill and fill_opacity is not None:
        parts.append(f'fill-opacity="{fmt_mm(fill_opacity)}"')
    if stroke_mm is None or stroke is None:
        parts.append('stroke="none"')
    else:
        parts.append(f'stroke="{stroke}" stroke-width="{fmt_mm(stroke_mm)}"')
        if dash_mm:
            parts.append(f'stroke-dasharray="{" ".join(fmt_mm(d) for d in dash_mm)}"')
    return " ".join(parts)


def frame_svg(frame: Frame) -> str:
    r = frame.rect
    return (f'<rect x="{fmt_mm(r.x)}" y="{fmt_mm(r.y)}" width="{fmt_mm(r.width)}" height="{fmt_mm(r.height)}" '
            f'{_paint(frame.fill, frame.fill_opacity, "#000000", frame.stroke_mm, frame.dash_mm)}/>')


def path_svg(path: Path) -> str:
    element = "polygon" if path.closed else "polyline"
    return (f'<{element} points="{_points(path.points)}" '
            f'{_paint(path.fill, path.fill_opacity, path.stroke, path.stroke_mm, path.dash_mm)}/>')


def line_svg(line: SignalLine) -> str:
    if line.kind in line_kinds():
        return line_style(line.kind).svg(line.points)
    return (f'<polyline points="{_points(line.points)}" fill="none" stroke="#000000" '
            f'stroke-width="{fmt_mm(THIN_MM)}"/>')


def dot_svg(dot: Dot) -> str:
    return f'<circle cx="{fmt_mm(dot.x)}" cy="{fmt_mm(dot.y)}" r="{fmt_mm(dot.radius_mm)}" fill="#000000" stroke="none"/>'


def symbol_svg(placed: PlacedSymbol) -> str:
    return placed.symbol.svg_at(placed.x, placed.y, port=placed.anchor, rotate_deg=placed.rotate_deg)


def text_svg(text: PlacedText) -> str:
    attrs = [f'x="{fmt_mm(text.x)}"', f'y="{fmt_mm(text.y)}"', f'font-size="{fmt_mm(text.size_mm)}"']
    if text.anchor != "start":
        attrs.append(f'text-anchor="{text.anchor}"')
    if text.bold:
        attrs.append('font-weight="bold"')
    if text.fit_width_mm is not None and text_width_mm(text.text, text.size_mm, text.bold) > text.fit_width_mm:
        attrs.append(f'textLength="{fmt_mm(text.fit_width_mm)}" lengthAdjust="spacingAndGlyphs"')
    if text.rotate_deg % 360:
        attrs.append(f'transform="rotate({fmt_mm(text.rotate_deg)} {fmt_mm(text.x)} {fmt_mm(text.y)})"')
    return f"<text {' '.join(attrs)}>{escape(text.text)}</text>"


def svg_document(drawing: Drawing) -> str:
    """The SVG text of ``drawing`` (UTF-8 XML declaration, SVG 1.1, sizes in mm)."""
    w, h = fmt_mm(drawing.width_mm), fmt_mm(drawing.height_mm)
    out = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        f'<svg xmlns="{SVG_NS}" version="1.1" width="{w}mm" height="{h}mm" viewBox="0 0 {w} {h}"'
        + (f' data-free-corner="{fmt_mm(drawing.free_corner_mm[0])} {fmt_mm(drawing.free_corner_mm[1])}"'
           if drawing.free_corner_mm else "") + ">",
    ]
    if drawing.title:
        out.append(f"<title>{escape(drawing.title)}</title>")
    if drawing.description:
        out.append(f"<desc>{escape(drawing.description)}</desc>")
    out.append(f"<g font-family={quoteattr(FONT_FAMILY)}>")
    out += [frame_svg(f) for f in drawing.frames]
    out += [path_svg(p) for p in drawing.paths]
    out += [line_svg(line) for line in drawing.lines]
    out += [dot_svg(d) for d in drawing.dots]
    out += [symbol_svg(s) for s in drawing.symbols]
    out.append('<g fill="#000000" stroke="none">')
    out += [text_svg(t) for t in drawing.texts]
    out.append("</g>")
    out.append("</g>")
    out.append("</svg>")
    return "\n".join(out) + "\n"
