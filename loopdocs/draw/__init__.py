"""Drawing: loop diagrams as SVG, built from records and the symbol library shipped in ``loopdocs/symbols``.

``loopdocs.draw.symbols`` loads the symbol SVG files (ports, text areas, markup to embed)
and the signal line styles.
"""
