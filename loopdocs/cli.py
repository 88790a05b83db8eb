"""The ``loopdocs`` command line (typer). Each command is a thin edge over the pipeline:
parse options, call the stages, print. Heavy imports happen inside the commands.

Commands live in their own modules (``loopdocs/commands/``), each with a
``register(app)`` function listed in ``COMMAND_MODULES``.
"""

from __future__ import annotations

import importlib

import typer

COMMAND_MODULES = (
    "loopdocs.commands.check",
    "loopdocs.commands.init",
    "loopdocs.commands.draw",
    "loopdocs.commands.build",
    "loopdocs.commands.calibrate",
    "loopdocs.commands.verify",
)

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Instrument index -> checked loops, calibration tables, loop diagrams and PDF loop sheets.",
)
for _name in COMMAND_MODULES:
    importlib.import_module(_name).register(app)


def main() -> None:
    app()
