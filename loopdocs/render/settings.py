"""Loop-sheet settings: the ``[sheet]`` table of ``loopdocs.toml``, validated.

``ProjectConfig.sheet`` is kept as a plain table by the model (the renderer owns its
meaning); :func:`sheet_settings` turns it into :class:`SheetSettings` or raises
``InputError`` naming the key. Paper sizes are landscape:

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

from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator

from loopdocs.core.errors import InputError

MM_PER_INCH = 25.4


@dataclass(frozen=True)
class Paper:
    name: str
    width_mm: float
    height_mm: float
    binding_margin_mm: float = 20.0
    margin_mm: float = 10.0


PAPERS: dict[str, Paper] = {
    "A3": Paper("A3", 420.0, 297.0),
    "A4": Paper("A4", 297.0, 210.0),
    "11x17": Paper("11x17", 17 * MM_PER_INCH, 11 * MM_PER_INCH),
}


class Revision(BaseModel):
    """One row of the revision table."""

    model_config = ConfigDict(extra="forbid")

    rev: str
    date: str = ""
    description: str = ""
    by: str = ""
    checked: str = ""
    approved: str = ""


class SheetSettings(BaseModel):
    """What ``[sheet]`` in ``loopdocs.toml`` may hold (every key optional)."""

    model_config = ConfigDict(extra="forbid")

    size: Literal["A3", "A4", "11x17"] = "A3"
    """Paper, always landscape."""
    author: str = ""
    """PDF metadata author; default: the title block's ``drawn``."""
    notes: list[str] = Field(default_factory=list)
    """General notes printed on every loop sheet, before the notes of the loop's tags."""
    revisions: list[Revision] = Field(default_factory=list)
    """The revision table, oldest first; default: one row from the title block."""
    release_with_errors: dict[str, str] = Field(default_factory=dict)
    """Loop id -> reason: issue the sheet for construction although it has an unaccepted
    error finding (the reason is printed on the sheet instead of the marking)."""

    @field_validator("size", mode="before")
    @classmethod
    def _size_spelling(cls, value: Any) -> Any:
        if isinstance(value, str):
            folded = value.strip().upper().replace(" ", "")
            return {"A3": "A3", "A4": "A4", "11X17": "11x17", "B": "11x17", "TABLOID": "11x17"}.get(folded, value)
        return value

    @field_validator("release_with_errors")
    @classmethod
    def _reasons_given(cls, value: dict[str, str]) -> dict[str, str]:
        for loop, reason in value.items():
            if not reason.strip():
                raise ValueError(f"loop {loop}: a reason is required to issue a sheet that has errors")
        return value

    @property
    def paper(self) -> Paper:
        return PAPERS[self.size]

    def release_reason(self, loop_id: str) -> str | None:
        """The configured reason to release ``loop_id`` despite errors (loop ids compare
        case-insensitively), or ``None``."""
        wanted = loop_id.upper()
        return next((reason for loop, reason in self.release_with_errors.items() if loop.upper() == wanted), None)


def sheet_settings(table: dict[str, Any], config_file: Path | str | None = None) -> SheetSettings:
    """Validate the ``[sheet]`` table; ``InputError`` names the file and the key."""
    try:
        return SheetSettings.model_validate(table)
    except ValidationError as exc:
        first = exc.errors()[0]
        where = ".".join(["sheet", *(str(part) for part in first["loc"])])
        raise InputError(f"{config_file or 'loopdocs.toml'}: [{where}] {first['msg']}") from None
