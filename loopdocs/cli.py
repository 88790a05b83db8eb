"""The ``loopdocs`` command line (typer). Each command is a thin edge over the pipeline:
parse options, call the stages, print. Heavy imports happen inside the commands.

Commands live in their own modules (``loopdocs/commands/``), each with a
``register(app)`` function listed in ``COMMAND_MODULES``.
"""

from __future__ import annotations

import importlib
import sys


#: Commands that read their workbooks first and write nothing but their output: they start
#: parsing them at once (:func:`_parse_index_ahead`) and leave without the final teardown
#: (:func:`_leave`). How many workbook files each takes.
_QUICK_COMMANDS = {"check": 1, "diff": 2}


def _parse_index_ahead(args: list[str]) -> None:
    """``loopdocs check FILE.xlsx ...`` and ``loopdocs diff OLD.xlsx NEW.xlsx ...``: start
    parsing the workbooks now, each on a thread of its own, while typer and the commands
    are imported (``read.background.parse_ahead``; docs/performance.md). The arguments
    taken are the workbook files on the line, when there are as many as the command takes."""
    wanted = _QUICK_COMMANDS.get(args[0]) if args else None
    if wanted is None:
        return
    files = [a for a in args[1:] if a[-5:].lower() in (".xlsx", ".xlsm") and not a.startswith("-")]
    if len(files) == wanted:
        from loopdocs.read.background import parse_ahead

        for name in files:
            parse_ahead(name)


_parse_index_ahead(sys.argv[1:])

import typer  # noqa: E402

COMMAND_MODULES = (
    "loopdocs.commands.check",
    "loopdocs.commands.init",
    "loopdocs.commands.draw",
    "loopdocs.commands.build",
    "loopdocs.commands.calibrate",
    "loopdocs.commands.verify",
    "loopdocs.commands.diff",
)

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Instrument index -> checked loops, calibration tables, loop diagrams and PDF loop sheets.",
)
for _name in COMMAND_MODULES:
    importlib.import_module(_name).register(app)


#: Exit code of a failure inside loopdocs (not the user's input): one line, the details in a log.
EXIT_INTERNAL = 3


def main() -> None:
    """Run the command line. An error in the input exits 2 with one line (the commands say
    which cell or file); anything else exits 3 with one line apologising and naming the log
    file that holds the traceback. ``--debug`` anywhere on the line shows the traceback."""
    import sys

    debug = "--debug" in sys.argv[1:]
    if debug:
        sys.argv = [arg for arg in sys.argv if arg != "--debug"]
    try:
        app(standalone_mode=True)
    except SystemExit as stop:
        if sys.argv[1:2] and sys.argv[1] in _QUICK_COMMANDS:
            _leave(stop.code)
        raise
    except KeyboardInterrupt:
        typer.echo("loopdocs: interrupted", err=True)
        raise SystemExit(130) from None
    except Exception as exc:  # the last line of defence: never a traceback on the terminal
        if debug:
            raise
        log = _write_log(exc)
        typer.echo(f"loopdocs: sorry, an internal error stopped this command ({type(exc).__name__}: "
                   f"{' '.join(str(exc).split())[:200]}); the details are in {log}, please send them with the "
                   "input; run again with --debug to see them", err=True)
        raise SystemExit(EXIT_INTERNAL) from None


def _leave(code: object) -> None:
    """Leave at once once ``check`` or ``diff`` has printed everything: flush the output
    and exit without the interpreter's final teardown, which would collect every record of
    the project one by one (0.15 s of a 1.2 s check of 3,000 loops, measured). ``check``
    writes no file; ``diff --out`` has written its report whole (renamed into place)
    before the command returns, so nothing is left half done."""
    import os
    import sys

    sys.stdout.flush()
    sys.stderr.flush()
    os._exit(code if isinstance(code, int) else (0 if code is None else 1))


def _write_log(exc: BaseException) -> str:
    """Write the traceback to a log file in the temporary folder; its path."""
    import tempfile
    import traceback

    try:
        with tempfile.NamedTemporaryFile("w", prefix="loopdocs-error-", suffix=".log", delete=False,
                                         encoding="utf-8") as log:
            log.write("".join(traceback.format_exception(exc)))
            return log.name
    except OSError:
        return "(no log could be written)"
