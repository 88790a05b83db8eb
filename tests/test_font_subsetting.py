"""The one-line note of a build whose fonts are subset the slow way (no HarfBuzz
subsetting library): loopdocs's test must agree with what weasyprint actually does.

Reference: weasyprint itself, which logs "Using fontTools instead of HarfBuzz-Subset"
each time it falls back to fontTools while writing a PDF (weasyprint.pdf.fonts).
"""

from __future__ import annotations

import logging

from loopdocs.render import pdf


def test_note_agrees_with_the_path_weasyprint_takes(caplog):
    logger = logging.getLogger("weasyprint")
    level = logger.level
    logger.setLevel(logging.WARNING)
    try:
        with caplog.at_level(logging.WARNING, logger="weasyprint"):
            data = pdf.html_to_pdf("<html><body><p>TIC-3105 Fermenter 5 jacket</p></body></html>")
    finally:
        logger.setLevel(level)
    assert data.startswith(b"%PDF")
    fell_back = any("fontTools instead of HarfBuzz" in r.getMessage() for r in caplog.records)
    assert pdf.harfbuzz_subsetting() is (not fell_back)
    notes = pdf.subsetting_notes(["T-3105"])
    assert notes == ([pdf.SUBSETTING_NOTE] if fell_back else [])


def test_note_is_one_line_naming_the_library_and_the_package(monkeypatch):
    monkeypatch.setattr(pdf, "harfbuzz_subsetting", lambda: False)
    (note,) = pdf.subsetting_notes(["T-3105"])
    assert "\n" not in note and "libharfbuzz-subset0" in note and "1.7 times slower" in note
    assert pdf.subsetting_notes([]) == []  # nothing rendered, nothing to say
    monkeypatch.setattr(pdf, "harfbuzz_subsetting", lambda: True)
    assert pdf.subsetting_notes(["T-3105"]) == []
