"""One module per command; shared option types and the exit-2 path live here."""

from __future__ import annotations

import json
import sys
from enum import Enum
from pathlib import Path
from typing import Annotated, Any, NoReturn

import typer

from loopdocs.core.errors import InputError


class OutputFormat(str, Enum):
    text = "text"
    json = "json"


PathArg = Annotated[Path, typer.Argument(help="Index file (.xlsx, .xlsm, .csv) or project folder holding loopdocs.toml.")]
FormatOpt = Annotated[OutputFormat, typer.Option("--format", "-f", help="text for people, json for tools.")]


def emit_json(data: Any) -> None:
    """Print one JSON object on stdout: indented for a person at a terminal, compact
    (C encoder, several times faster on a large index) when piped to a tool."""
    json.dump(data, sys.stdout, indent=2 if sys.stdout.isatty() else None)
    sys.stdout.write("\n")


def fail_input(exc: InputError) -> NoReturn:
    """Exit 2 with one line on stderr (docs/design.md §9.4)."""
    typer.echo(f"loopdocs: {exc}", err=True)
    raise typer.Exit(2)
