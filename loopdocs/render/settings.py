"""Loop-sheet settings: the ``[sheet]`` table of ``loopdocs.toml``, validated.

``ProjectConfig.sheet`` is kept as a plain table; :func:`sheet_settings` turns it into
:class:`SheetSettings` or raises ``InputError`` naming the key. The models are defined
with the project file (``loopdocs.read.project_file``), which validates the table as it is
read, so ``check`` and ``calibrate`` refuse a ``[sheet]`` mistake as ``build`` does.
Paper sizes are landscape:

====== ============== =============================================
size   width x height source
====== ============== =============================================
A3     420 x 297 mm   ISO 216 (A3 is 297 x 420 mm)
A4     297 x 210 mm   ISO 216 (A4 is 210 x 297 mm)
11x17  431.8 x 279.4  ANSI/ASME Y14.1 size B, 11 x 17 in (25.4 mm/in)
====== ============== =============================================

The frame leaves a 20 mm binding margin on the left and 10 mm elsewhere (ISO 5457
drawing-sheet frame, from memory).

>>> s = sheet_settings({"size": "a4"})
>>> s.size, s.paper.width_mm, s.paper.height_mm
('A4', 297.0, 210.0)
"""

from __future__ import annotations

from loopdocs.read.project_file import (  # noqa: F401  (defined with the project file, whose table it is)
    MM_PER_INCH,
    PAPERS,
    Paper,
    Revision,
    SheetSettings,
    sheet_settings,
)
