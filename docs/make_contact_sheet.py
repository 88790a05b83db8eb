"""Write ``contact_sheet.svg`` and ``README.md`` for the symbol library in this folder.

Usage (from the repository root): ``.venv/bin/python docs/make_contact_sheet.py``.
Both outputs are generated; edit the symbol files, ``lines.json`` or this script, then
run it again and commit the results (a test checks they are up to date).
"""

from __future__ import annotations

import sys
from html import escape
from pathlib import Path

from loopdocs.draw import devices
from loopdocs.draw import symbols as lib
from loopdocs.draw.symbols import Symbol, fmt_mm

HERE = Path(__file__).resolve().parent.parent / "loopdocs" / "symbols"
SHEET_NAME = "contact_sheet.svg"
README_NAME = "README.md"

SHEET_W_MM = 300.0
MARGIN_MM = 10.0
FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
PORT_COLOUR = "#c00000"
AREA_COLOUR = "#0050c0"
NOTE_COLOUR = "#555555"


def _text(x: float, y: float, text: str, size: float, anchor: str = "start", colour: str = "#000000",
          weight: str = "normal") -> str:
    extra = f' font-weight="{weight}"' if weight != "normal" else ""
    return (
        f'<text x="{fmt_mm(x)}" y="{fmt_mm(y)}" font-size="{fmt_mm(size)}" text-anchor="{anchor}" '
        f'fill="{colour}"{extra}>{escape(text)}</text>'
    )


def _scaled(symbol: Symbol, x: float, y: float, scale: float) -> str:
    return f'<g transform="translate({fmt_mm(x)} {fmt_mm(y)}) scale({fmt_mm(scale)})">{symbol.markup}</g>'


def _annotations(symbol: Symbol, x: float, y: float, scale: float) -> list[str]:
    """Text areas as blue dashed boxes, ports as red crosses with their names."""
    out = []
    for ax, ay, aw, ah in symbol.text_areas.values():
        out.append(
            f'<rect x="{fmt_mm(x + ax * scale)}" y="{fmt_mm(y + ay * scale)}" width="{fmt_mm(aw * scale)}" '
            f'height="{fmt_mm(ah * scale)}" fill="none" stroke="{AREA_COLOUR}" stroke-width="0.15" '
            f'stroke-dasharray="0.6 0.4"/>'
        )
    arm = 0.7
    for name, (px, py) in symbol.ports.items():
        cx, cy = x + px * scale, y + py * scale
        out.append(
            f'<path d="M {fmt_mm(cx - arm)} {fmt_mm(cy - arm)} L {fmt_mm(cx + arm)} {fmt_mm(cy + arm)} '
            f'M {fmt_mm(cx - arm)} {fmt_mm(cy + arm)} L {fmt_mm(cx + arm)} {fmt_mm(cy - arm)}" '
            f'stroke="{PORT_COLOUR}" stroke-width="0.18" fill="none"/>'
        )
        if px <= symbol.width_mm * 0.2:
            out.append(_text(cx - 1.0, cy - 0.8, name, 1.5, "end", PORT_COLOUR))
        else:
            out.append(_text(cx + 1.0, cy - 0.8, name, 1.5, "start", PORT_COLOUR))
    return out


def _section(y: float, title: str, note: str) -> tuple[list[str], float]:
    parts = [
        f'<line x1="{fmt_mm(MARGIN_MM)}" y1="{fmt_mm(y)}" x2="{fmt_mm(SHEET_W_MM - MARGIN_MM)}" '
        f'y2="{fmt_mm(y)}" stroke="#000000" stroke-width="0.25"/>',
        _text(MARGIN_MM, y + 6, title, 3.5, weight="bold"),
        _text(MARGIN_MM, y + 10.5, note, 2.0, colour=NOTE_COLOUR),
    ]
    return parts, y + 15


def _symbol_grid(y: float) -> tuple[list[str], float]:
    parts, y = _section(
        y,
        "Symbol files",
        "Each file drawn at up to 4x. Red crosses: ports (name beside). Blue dashed boxes: text areas. "
        "Size is the viewBox in mm.",
    )
    cols, cell_w, cell_h, draw_h = 5, (SHEET_W_MM - 2 * MARGIN_MM) / 5, 66.0, 50.0
    for i, (name, symbol) in enumerate(lib.all_symbols().items()):
        col, row = i % cols, i // cols
        cx0, cy0 = MARGIN_MM + col * cell_w, y + row * cell_h
        scale = min(4.0, (cell_w - 22) / symbol.width_mm, (draw_h - 10) / symbol.height_mm)
        sx = cx0 + (cell_w - symbol.width_mm * scale) / 2
        sy = cy0 + 4 + (draw_h - 4 - symbol.height_mm * scale) / 2
        parts.append(_scaled(symbol, sx, sy, scale))
        parts.extend(_annotations(symbol, sx, sy, scale))
        parts.append(_text(cx0 + cell_w / 2, cy0 + draw_h + 6, name, 2.5, "middle", weight="bold"))
        parts.append(
            _text(cx0 + cell_w / 2, cy0 + draw_h + 9.5,
                  f"{fmt_mm(symbol.width_mm)} x {fmt_mm(symbol.height_mm)} mm, drawn at {fmt_mm(scale)}x",
                  1.8, "middle", NOTE_COLOUR)
        )
    rows = -(-len(lib.symbol_names()) // cols)
    return parts, y + rows * cell_h + 4


def _bubble_matrix(y: float) -> tuple[list[str], float]:
    parts, y = _section(
        y,
        "Instrument symbols: display class x location (instrument_bubble)",
        "Drawn at 3x with a sample tag in 2.5 mm text (7.5 mm at 3x) on ports tag-func and tag-loop. "
        "Location: field = no line, main-panel = solid line, behind-panel = dashed line, aux-panel = double line.",
    )
    scale, head_w, col_w, row_h = 3.0, 32.0, 62.0, 44.0
    for j, location in enumerate(lib.LOCATION_OVERLAYS):
        parts.append(_text(MARGIN_MM + head_w + j * col_w + col_w / 2, y + 3, location, 2.5, "middle", weight="bold"))
    for i, display in enumerate(lib.BUBBLE_DISPLAYS):
        ry = y + 8 + i * row_h
        parts.append(_text(MARGIN_MM, ry + 18, display, 2.5, weight="bold"))
        for j, location in enumerate(lib.LOCATION_OVERLAYS):
            symbol = lib.instrument_bubble(display, location)
            sx = MARGIN_MM + head_w + j * col_w + (col_w - symbol.width_mm * scale) / 2
            parts.append(_scaled(symbol, sx, ry, scale))
            for port, label in (("tag-func", "TIC"), ("tag-loop", "3105")):
                px, py = symbol.port(port)
                parts.append(_text(sx + px * scale, ry + py * scale, label, 2.5 * scale, "middle"))
            parts.append(_text(sx + symbol.width_mm * scale / 2, ry + symbol.height_mm * scale + 4,
                               symbol.name, 1.6, "middle", NOTE_COLOUR))
    return parts, y + 8 + len(lib.BUBBLE_DISPLAYS) * row_h + 2


def _assemblies(y: float) -> tuple[list[str], float]:
    parts, y = _section(
        y,
        "Stacked symbols (loopdocs.draw.devices: valve_symbol, thermowell_symbol)",
        "Actuator port stem-bottom on the body's stem-top; element port head on the well's head; drawn at 3x.",
    )
    scale, col_w = 3.0, 90.0
    height = 0.0
    stacked = [(devices.valve_symbol(devices.BodyKind.GLOBE, a), f"valve {a.value}") for a in devices.ActuatorKind]
    for kind in (devices.MeasuringKind.RTD, devices.MeasuringKind.THERMOCOUPLE):
        entry = devices.MEASURING[kind]
        stacked.append((devices.thermowell_symbol(entry.part, entry.inner), kind.value))
    col_w = min(col_w, (SHEET_W_MM - 2 * MARGIN_MM - 20) / len(stacked))
    for i, (symbol, caption) in enumerate(stacked):
        sx = MARGIN_MM + 20 + i * col_w
        parts.append(_scaled(symbol, sx, y + 2, scale))
        parts.extend(_annotations(symbol, sx, y + 2, scale))
        parts.append(_text(sx + symbol.width_mm * scale / 2, y + 2 + symbol.height_mm * scale + 6,
                           caption, 2.2, "middle"))
        height = max(height, symbol.height_mm * scale + 12)
    return parts, y + height + 2


def _line_samples(y: float) -> tuple[list[str], float]:
    parts, y = _section(
        y,
        "Line styles (symbols/lines.json, line_style(kind).svg(points))",
        "Left: full size (1:1). Right: the same line at 2x. Marks sit on each straight run, clear of corners.",
    )
    row_h = 20.0
    for i, kind in enumerate(lib.line_kinds()):
        style = lib.line_style(kind)
        ry = y + i * row_h
        parts.append(_text(MARGIN_MM, ry + 5, kind, 2.5, weight="bold"))
        parts.append(_text(MARGIN_MM, ry + 8.5, f"{fmt_mm(style.stroke_width_mm)} mm", 1.8, colour=NOTE_COLOUR))
        path = [(0.0, 4.0), (70.0, 4.0), (70.0, 16.0)]
        parts.append(f'<g transform="translate({fmt_mm(MARGIN_MM + 28)} {fmt_mm(ry)})">{style.svg(path)}</g>')
        path2 = [(0.0, 2.0), (72.0, 2.0), (72.0, 8.0)]
        parts.append(
            f'<g transform="translate({fmt_mm(MARGIN_MM + 120)} {fmt_mm(ry)}) scale(2)">{style.svg(path2)}</g>'
        )
    return parts, y + len(lib.line_kinds()) * row_h + 2


def _terminal_strips(y: float) -> tuple[list[str], float]:
    parts, y = _section(
        y,
        "Terminal strips (one unit repeated at a pitch of the symbol height)",
        "Drawn at 2x with terminal numbers in 2.5 mm text (5 mm at 2x) on port label.",
    )
    scale, units = 2.0, 4
    for i, name in enumerate(("terminal-jb", "terminal-cabinet")):
        unit = lib.load_symbol(name)
        sx = MARGIN_MM + 20 + i * 90
        for k in range(units):
            uy = y + k * unit.height_mm * scale
            parts.append(_scaled(unit, sx, uy, scale))
            px, py = unit.port("label")
            parts.append(_text(sx + px * scale, uy + py * scale, str(k + 1), 2.5 * scale, "middle"))
        parts.append(_text(sx + unit.width_mm * scale / 2, y + units * unit.height_mm * scale + 6, name, 2.2, "middle"))
    return parts, y + units * 4 * scale + 12


def contact_sheet_svg() -> str:
    """The whole contact sheet as SVG text (deterministic: same inputs, same bytes)."""
    body = [_text(MARGIN_MM, MARGIN_MM + 4, "loopdocs symbol library: contact sheet", 5.0, weight="bold"),
            _text(MARGIN_MM, MARGIN_MM + 9, "Generated by docs/make_contact_sheet.py. Units: mm.", 2.2,
                  colour=NOTE_COLOUR)]
    y = MARGIN_MM + 13
    for section in (_symbol_grid, _bubble_matrix, _assemblies, _line_samples, _terminal_strips):
        parts, y = section(y)
        body.extend(parts)
    height = y + MARGIN_MM
    return (
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{fmt_mm(SHEET_W_MM)}mm" '
        f'height="{fmt_mm(height)}mm" viewBox="0 0 {fmt_mm(SHEET_W_MM)} {fmt_mm(height)}">\n'
        f'<rect x="0" y="0" width="{fmt_mm(SHEET_W_MM)}" height="{fmt_mm(height)}" fill="#ffffff"/>\n'
        f'<g font-family="{FONT}">\n' + "\n".join(body) + "\n</g>\n</svg>\n"
    )


def _row(cells: list[str]) -> str:
    return "| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |"


def readme_md() -> str:
    """The library's README as Markdown text."""
    lines = [
        "# Symbol library",
        "",
        "Our own ISA-5.1-style symbols for loop diagrams, one hand-written SVG 1.1 file per symbol,",
        "loaded by `loopdocs.draw.symbols`. This file and `contact_sheet.svg` are generated by",
        "`make_contact_sheet.py`; do not edit them by hand.",
        "",
        "![Contact sheet: every symbol with its ports](contact_sheet.svg)",
        "",
        "## Loading",
        "",
        "```python",
        "from loopdocs.draw.symbols import load_symbol, all_symbols, instrument_bubble, line_style",
        "",
        "tt = instrument_bubble(\"discrete\", \"field\")   # Symbol",
        "tt.width_mm, tt.height_mm, tt.ports[\"tag-func\"], tt.text_areas[\"tag-loop\"]",
        "tt.svg_at(40, 60, port=\"centre\")                # <g> with the drawing placed",
        "tt.symbol_def(\"sym-tt\")                          # <symbol> for <defs> and <use>",
        "line_style(\"pneumatic\").svg([(0, 0), (30, 0)])   # polyline plus its marks",
        "```",
        "",
        "Files are parsed with defusedxml and cached, each read once per process. The folder is",
        "`loopdocs/symbols/`, shipped with the package (`symbols/` at the repository root links to it), or `$LOOPDOCS_SYMBOLS_DIR` when set.",
        "",
        "## Conventions",
        "",
        "- Units: `viewBox=\"0 0 W H\"` with 1 user unit = 1 mm, origin top left, and matching",
        "  `width=\"Wmm\" height=\"Hmm\"`. Instrument bubbles are 11 mm across.",
        "- Pens: black strokes (`#000000`) of 0.25, 0.35, 0.5 or 0.7 mm; fills only `none` or white.",
        "  Outlines 0.35, fine detail 0.25, process pipe 0.7 (the same as the `process` line style).",
        "- Geometry is drawn on stroke centrelines, so strokes may stand half a pen width outside",
        "  the viewBox; embed with `overflow=\"visible\"` (as `Symbol.symbol_def` does).",
        "- Drawing attributes go on a `<g>` inside the root (not on `<svg>`), so they survive",
        "  embedding. No ids on drawing elements, no namespaced attributes, no scripts or styles.",
        "",
        "## Ports",
        "",
        "A port is a connection point the layout code reads:",
        "",
        "```xml",
        '<circle class="port" id="port-NAME" cx="X" cy="Y" r="0"/>',
        "```",
        "",
        "The port is called `NAME` (the id without `port-`), at (X, Y) mm in symbol coordinates.",
        "`r=\"0\"` means it is never rendered. Ports lie inside or on the viewBox. Lines join a",
        "symbol at a port; stacked symbols join port to port.",
        "",
        "A text area is a box a label must fit in:",
        "",
        "```xml",
        '<rect class="text-area" id="text-NAME" x="X" y="Y" width="W" height="H" fill="none" stroke="none"/>',
        "```",
        "",
        "Instrument bubbles have ports `tag-func` and `tag-loop`: the centre of the text baseline",
        "for the function letters (above the middle) and for the loop number (below the middle),",
        "for 2.5 mm text, `text-anchor=\"middle\"`. The text areas of the same names are the boxes",
        "around them. Terminal units and the positioner have `label` likewise.",
        "",
        "## Instrument symbols and locations",
        "",
        "The four bubble files are the display classes drawn field mounted (no line). The three",
        "`location-*` files are overlays centred on the bubble's `centre` port; together that is",
        "4 x 4 = 16 instrument symbols from 7 files, built by",
        "`instrument_bubble(display, location)`:",
        "",
        _row(["location", "overlay", "meaning"]),
        _row(["---", "---", "---"]),
        _row(["field", "(none)", "field mounted"]),
        _row(["main-panel", "location-main-panel", "one solid line: primary location, normally accessible to the operator"]),
        _row(["behind-panel", "location-behind-panel", "one dashed line: auxiliary location, normally inaccessible (behind the panel)"]),
        _row(["aux-panel", "location-aux-panel", "two lines: auxiliary location, normally accessible to the operator"]),
        "",
        "Device symbols (elements, valve bodies, actuators, accessories) are chosen and placed by",
        "the drawing vocabulary in `loopdocs/draw/devices.py`: `valve_symbol(body, actuator)` stacks",
        "an actuator (port `stem-bottom`) on a body (port `stem-top`), `thermowell_symbol` an RTD or",
        "thermocouple (port `head`) in the thermowell; `stack(base, port, top, port)` does the same",
        "for any pair.",
        "",
        "Kinds that share a symbol are told apart by letters: the in-line meters (`element-meter`)",
        "carry " + ", ".join(f"{devices.MEASURING[k].code} {k.value.replace(' flow meter', '')}"
                             for k in devices.MeasuringKind
                             if devices.MEASURING[k].part.file == "element-meter") + " in their box",
        "(common practice, from memory); the analyser probe (`element-probe`) has pH, conductivity, O2",
        "or analyser written beside it. Valve accessories are drawn where they are mounted: the signal",
        "path (positioner, I/P), the air line to the actuator (lock-up, solenoid valve, booster), the",
        "yoke (limit switch box, position transmitter) or the supply line (air filter regulator).",
        "All drawings are our own, simple line symbols in the manner of ISA-5.1; the filter diamond",
        "follows ISO 1219-1 and the earth IEC 60617 S00200 (both from memory).",
        "",
        "## Line styles",
        "",
        "Defined once, in `lines.json`; read with `line_style(kind)`. `LineStyle.svg(points)` draws",
        "the polyline and puts the style's mark symbol (rotated to the run) on every straight run,",
        "`max(1, floor(run / spacing))` marks per run, none on runs shorter than half the spacing.",
        "",
        _row(["kind", "width mm", "dashes mm", "mark", "spacing mm", "description"]),
        _row(["---", "---", "---", "---", "---", "---"]),
    ]
    for kind in lib.line_kinds():
        s = lib.line_style(kind)
        lines.append(_row([
            f"`{kind}`", fmt_mm(s.stroke_width_mm),
            " ".join(fmt_mm(d) for d in s.dasharray_mm) if s.dasharray_mm else "solid",
            f"`{s.mark}`" if s.mark else "-", fmt_mm(s.mark_spacing_mm) if s.mark_spacing_mm else "-",
            s.description,
        ]))
    lines += [
        "",
        "## Symbols",
        "",
        _row(["name", "size mm", "ports", "text areas", "what it is"]),
        _row(["---", "---", "---", "---", "---"]),
    ]
    for name, s in lib.all_symbols().items():
        lines.append(_row([
            f"`{name}`", f"{fmt_mm(s.width_mm)} x {fmt_mm(s.height_mm)}",
            ", ".join(f"`{p}`" for p in s.ports), ", ".join(f"`{a}`" for a in s.text_areas) or "-",
            s.description,
        ]))
    lines += [
        "",
        "## Adding a symbol",
        "",
        "1. Copy the nearest existing file to `loopdocs/symbols/<name>.svg` (lower case, words joined by `-`).",
        "2. Set `viewBox`, `width`, `height`, `<title>` (the name) and `<desc>` (one or two",
        "   sentences: what it is and how it is drawn; the table above is built from it).",
        "3. Draw inside a `<g fill=\"none\" stroke=\"#000000\" stroke-width=\"0.35\">` with the pens above.",
        "4. Add the ports (and text areas) the drawing will use. A device symbol gets an entry in",
        "   the drawing vocabulary, `loopdocs/draw/devices.py` (its module docstring says how);",
        "   a building block is listed in `BUILDING_BLOCK_PORTS` (and `REQUIRED_TEXT_AREAS`) in",
        "   `loopdocs/draw/symbols.py`.",
        "5. Run `.venv/bin/python docs/make_contact_sheet.py`, look at `contact_sheet.svg`,",
        "   then run `.venv/bin/python -m pytest -q tests/test_symbols.py` and commit the symbol,",
        "   the README and the contact sheet together.",
        "",
    ]
    return "\n".join(lines)


def write_outputs(out_dir: Path = HERE) -> list[Path]:
    """Write the contact sheet and the README into ``out_dir``; return their paths."""
    out_dir.mkdir(parents=True, exist_ok=True)
    sheet, readme = out_dir / SHEET_NAME, out_dir / README_NAME
    sheet.write_text(contact_sheet_svg(), encoding="utf-8", newline="\n")
    readme.write_text(readme_md(), encoding="utf-8", newline="\n")
    return [sheet, readme]


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    out_dir = Path(args[0]) if args else HERE
    for path in write_outputs(out_dir):
        print(path)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
