"""loopdocs: instrument index to checked loops, calibration tables, loop diagrams and PDF loop sheets."""

__version__ = "0.1.0"
