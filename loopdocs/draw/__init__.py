"""Drawing: loop diagrams as SVG, built from records and the repository's ``symbols/`` library.

``loopdocs.draw.symbols`` loads the symbol SVG files (ports, text areas, markup to embed)
and the signal line styles.
"""
