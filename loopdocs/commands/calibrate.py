"""``loopdocs calibrate``: calibration tables per tag, as text, JSON, or the technicians'
workbook. The index is checked as ``loopdocs check`` does: on errors the tables of the
tags involved are marked (``loopdocs.calibration.marks``) and the exit code is 1."""

from __future__ import annotations

from enum import Enum
from pathlib import Path
from typing import Annotated, Optional

import typer

from loopdocs.commands import FormatOpt, OutputFormat, PathArg, emit_json, fail_input
from loopdocs.core.errors import InputError


class SheetPer(str, Enum):
    loop = "loop"
    area = "area"


TagOpt = Annotated[Optional[list[str]], typer.Option(
    "--tag", "-t", help="Only this tag or loop id (repeat for more).")]
RefJunctionOpt = Annotated[Optional[float], typer.Option(
    "--ref-junction-c", help="Thermocouple reference-junction (transmitter terminal) temperature, degC: "
                             "the mV to inject is also given for it. The 0 degC values are always given.")]
PressureUnitOpt = Annotated[Optional[str], typer.Option(
    "--pressure-unit", help="Also show pressure inputs in this unit (what the calibrator reads), e.g. kPa, psi, mbar.")]
OutOpt = Annotated[Optional[Path], typer.Option(
    "--out", "-o", help="Write the technicians' workbook (.xlsx) here.")]
SheetPerOpt = Annotated[SheetPer, typer.Option(
    "--sheet-per", help="Workbook sheets: one per loop, or one per plant area (tag prefix).")]


def calibrate(
    path: PathArg,
    format: FormatOpt = OutputFormat.text,
    tag: TagOpt = None,
    ref_junction_c: RefJunctionOpt = None,
    pressure_unit: PressureUnitOpt = None,
    out: OutOpt = None,
    sheet_per: SheetPerOpt = SheetPer.loop,
) -> None:
    """Calibration values for every transmitter, sensor, converter and final element.

    The index is checked first, as loopdocs check does; the tables of tags with errors carry a note naming the error.

    With --out the workbook is written and only a summary is printed.

    Exit code 0 when done, 1 when the index has errors (tables still given, marked), 2 when the input could not be read or an option is wrong.
    """
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.calibration.marks import mark_index_errors
    from loopdocs.checks import check_project

    try:
        if pressure_unit:
            from loopdocs.calc.units import is_pressure

            if not is_pressure(pressure_unit):
                raise InputError(f"--pressure-unit {pressure_unit!r} is not a pressure unit pint knows (kPa, psi, mbar ...)")
        checked = check_project(path)
        cset = calibration_set(checked.project, reference_junction_c=ref_junction_c, calibrator_unit=pressure_unit)
        errors = [f for f in checked.findings if f.counts_as_error]
        cset, marked = mark_index_errors(cset, errors)
        if tag:
            cset = cset.select(tag)
            if not cset.tables and not cset.skipped:
                raise InputError(f"no tag or loop matches {', '.join(tag)}")
        if out is not None:
            from loopdocs.core.files import interrupt_on_terminate, refuse_overwriting, remove_stale_partials
            from loopdocs.read.project_file import locate
            from loopdocs.sheets.technicians_workbook import write_workbook

            if Path(out).suffix.lower() != ".xlsx":
                raise InputError(f"--out {out}: the technicians' workbook is an .xlsx file; name it so")
            paths = locate(Path(path))
            refuse_overwriting(out, [paths.index, *([paths.config_file] if paths.config_file else [])])

            try:
                remove_stale_partials(out)  # left by an earlier run killed mid-write (kill -9)
                with interrupt_on_terminate():  # SIGTERM as Ctrl-C: the temporary file is removed
                    counts = write_workbook(cset, out, sheet_per=sheet_per.value)
            except OSError as exc:
                raise InputError(f"{out}: cannot be written ({exc.strerror or exc})") from None
    except InputError as exc:
        fail_input(exc)
    if format is OutputFormat.json:
        emit_json({**cset.as_json(), "index_errors": [f.as_json() for f in errors]})
    elif out is None:
        from loopdocs.commands.calibration_text import print_calibration

        print_calibration(cset)
    else:
        from loopdocs.commands.calibration_text import print_summary

        print_summary(cset)
    err = format is OutputFormat.json
    if out is not None:
        typer.echo(f"wrote {out}: {sum(counts.values())} test points on {len(counts)} sheet(s)", err=err)
    if errors:
        shown = sorted(marked)
        typer.echo(
            f"the index has {len(errors)} error(s); run loopdocs check {path} for the cells to fix. "
            + (f"Tables marked for {len(shown)} tag(s): {', '.join(shown[:10])}" + (" ..." if len(shown) > 10 else "")
               if shown else "No table is affected."),
            err=err,
        )
        raise typer.Exit(1)


def register(app: typer.Typer) -> None:
    app.command()(calibrate)
