"""The project file: where the index is and what ``loopdocs.toml`` says (its tables as
pydantic models: index, columns, title block, accepted findings, sheet settings).

A command's PATH is an index file (``.xlsx``, ``.xlsm``, ``.csv``) or a project folder
holding ``loopdocs.toml``. A ``loopdocs.toml`` beside an index file is read too.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

from typing import Any, Literal, TypeVar

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator

from loopdocs.core.errors import InputError

class TitleBlock(BaseModel):
    """What the title block of every sheet shows (from ``loopdocs.toml``)."""

    model_config = ConfigDict(extra="forbid")

    project: str = "Untitled project"
    client: str = ""
    unit: str = ""
    drawing_number: str = "LS-{loop}"
    """Pattern for the drawing number; ``{loop}`` is replaced by the loop id."""
    revision: str = "A"
    date: str = ""
    drawn: str = ""
    checked: str = ""
    approved: str = ""


class AcceptedFinding(BaseModel):
    """A finding accepted on purpose by engineering review (docs/design.md §5.1)."""

    model_config = ConfigDict(extra="forbid")

    rule: str
    tag: str
    reason: str
    by: str


class IndexSettings(BaseModel):
    model_config = ConfigDict(extra="forbid")

    file: str | None = None
    """Index file, relative to the project folder; default: the only .xlsx/.xlsm/.csv there."""
    sheet: str | None = None
    tag_pattern: str | None = None


# --- the [sheet] table (paper sizes in loopdocs.render.settings) ---------------------------

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


ModelT = TypeVar("ModelT", bound=BaseModel)


def validated(model: type[ModelT], data: Any, config_file: Path | str | None = None, table: str = "") -> ModelT:
    """``model`` validated from ``data`` (a table of ``loopdocs.toml``, or the whole file
    when ``table`` is empty); ``InputError`` names the file and the first key at fault,
    for example ``loopdocs.toml: [sheet.size] Input should be 'A3', 'A4' or '11x17'``."""
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        first = exc.errors()[0]
        where = ".".join([*([table] if table else []), *(str(part) for part in first["loc"])])
        raise InputError(f"{config_file or 'loopdocs.toml'}: [{where}] {first['msg']}") from None


def sheet_settings(table: dict[str, Any], config_file: Path | str | None = None) -> SheetSettings:
    """Validate the ``[sheet]`` table; ``InputError`` names the file and the key."""
    return validated(SheetSettings, table, config_file, "sheet")


class ProjectConfig(BaseModel):
    """The contents of ``loopdocs.toml``; every table is optional."""

    model_config = ConfigDict(extra="forbid")

    index: IndexSettings = Field(default_factory=IndexSettings)
    columns: dict[str, str] = Field(default_factory=dict)
    """Extra header map: header as written in the index -> loopdocs column key or header."""
    title_block: TitleBlock = Field(default_factory=TitleBlock)
    accept: list[AcceptedFinding] = Field(default_factory=list)
    sheet: dict[str, Any] = Field(default_factory=dict)
    """Loop-sheet settings (paper size and the like), read by the renderer."""
    revisions: dict[str, Any] = Field(default_factory=dict)
    """Revision sequence of ``build --issue``, read by ``loopdocs.model.revisions``."""


CONFIG_NAME = "loopdocs.toml"
INDEX_SUFFIXES = (".xlsx", ".xlsm", ".csv")


@dataclass(frozen=True)
class ProjectPaths:
    folder: Path
    index: Path
    config_file: Path | None


def load_config(path: Path) -> ProjectConfig:
    """Parse and validate ``loopdocs.toml``; ``InputError`` names the file and the key."""
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: cannot read the project config ({exc})") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: not valid TOML ({exc})") from None
    except RecursionError:
        raise InputError(f"{path}: nested too deeply to be a loopdocs project file") from None
    config = validated(ProjectConfig, data, path)
    sheet_settings(config.sheet, path)  # a [sheet] mistake is one line for every command, check too
    return config


def locate(path: Path) -> ProjectPaths:
    """Resolve a command's PATH into the index file and the config file (if any)."""
    path = Path(path)
    if not path.exists():
        raise InputError(f"{path}: no such file or folder")
    if path.is_dir():
        config_file = path / CONFIG_NAME
        if not config_file.is_file():
            raise InputError(f"{path}: a project folder needs a {CONFIG_NAME} (run 'loopdocs init {path}' to start one)")
        config = load_config(config_file)
        if config.index.file:
            index = path / config.index.file
            if path.resolve() not in index.resolve().parents:
                raise InputError(f"{config_file}: [index] file = {config.index.file!r} is outside the project folder "
                                 f"{path}; keep the index in the folder")
            if not index.is_file():
                raise InputError(f"{config_file}: [index] file = {config.index.file!r} does not exist in {path}")
        else:
            candidates = sorted(
                p for p in path.iterdir()
                if p.suffix.lower() in INDEX_SUFFIXES and not p.name.startswith(("~$", "."))
            )
            if len(candidates) != 1:
                found = ", ".join(p.name for p in candidates) or "none"
                raise InputError(f"{config_file}: set [index] file = '...'; index files found in {path}: {found}")
            index = candidates[0]
        return ProjectPaths(path, index, config_file)
    beside = path.parent / CONFIG_NAME
    return ProjectPaths(path.parent, path, beside if beside.is_file() else None)
