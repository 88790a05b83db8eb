"""``loopdocs verify WORKBOOK``: pass/fail from a filled calibration workbook."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from loopdocs.commands import FormatOpt, OutputFormat, emit_json, fail_input
from loopdocs.core.errors import InputError

WorkbookArg = Annotated[Path, typer.Argument(help="A calibration workbook written by loopdocs calibrate --out, filled in.")]
SummaryOpt = Annotated[Optional[Path], typer.Option("--out", "-o", help="Also write the results to this .xlsx.")]

_STYLE = {"pass": "green", "fail": "bold red", "failure current": "bold red", "invalid": "bold red",
          "invalid entries": "bold red", "refused": "bold magenta", "no tolerance": "yellow", "incomplete": "yellow",
          "not tested": "dim"}
_BAD = ("fail", "failure current", "invalid", "refused", "no tolerance")


def verify(workbook: WorkbookArg, format: FormatOpt = OutputFormat.text, out: SummaryOpt = None) -> None:
    """Error in % of span, pass/fail and hysteresis for every tested point, by tag.

    Blank readings are not tested, never passed; rows whose expected values were edited are refused; a transmitter output signal read at or beyond the NAMUR NE 43 failure limits (at or below 3.6 mA, at or above 21 mA) is a failure current, not a point out of tolerance.

    Exit code 0 when every tested point passes, 1 when a point fails, reads a failure current or an unreadable entry, a row is refused or nothing was tested, 2 when the workbook cannot be read.
    """
    from loopdocs.calibration.grading import verify as judge
    from loopdocs.sheets.technicians_workbook import read_workbook

    try:
        report = judge(read_workbook(workbook))
        if out is not None:
            from loopdocs.core.files import refuse_overwriting
            from loopdocs.sheets.verify_summary import write_summary

            refuse_overwriting(out, [workbook])
            try:
                write_summary(report, out)
            except OSError as exc:
                raise InputError(f"{out}: cannot be written ({exc.strerror or exc})") from None
    except InputError as exc:
        fail_input(exc)
    if format is OutputFormat.json:
        emit_json(report.as_json())
    else:
        _print(report)
    if out is not None:
        typer.echo(f"wrote {out}", err=format is OutputFormat.json)
    raise typer.Exit(report.exit_code)


def _fmt(value: float | None, digits: int = 3) -> str:
    return "" if value is None else f"{value:.{digits}f}"


def _signed(value: float | None) -> str:
    return "" if value is None else f"{value:+.3f}"


def _print(report) -> None:
    from rich.console import Console
    from rich.markup import escape
    from rich.table import Table

    console = Console(highlight=False)
    console.print(f"[bold]{escape(str(report.path))}[/]: {escape(str(report.project))}"
                  + (f", revision {escape(str(report.revision))}" if report.revision else ""))
    table = Table(title="results by tag (errors and hysteresis in % of span)", title_justify="left")
    for name, justify in (("tag", "left"), ("check", "left"), ("status", "left"), ("tested", "right"),
                          ("largest as-found err", "right"), ("largest as-left err", "right"), ("max hyst", "right"),
                          ("as-found fails", "right")):
        table.add_column(name, justify=justify, no_wrap=True)
    for t in report.tags:
        c = t.counts
        tested = c["pass"] + c["fail"] + c["failure current"] + c["invalid"] + c["no tolerance"]
        style = _STYLE.get(t.status, "")
        table.add_row(escape(str(t.tag)), escape(str(t.check)), f"[{style}]{t.status}[/]", f"{tested}/{len(t.points)}",
                      _signed(t.largest_as_found_error_pct), _signed(t.largest_as_left_error_pct),
                      _fmt(t.max_hysteresis_pct), str(t.as_found_failures or ""))
    console.print(table)
    problems = [p for t in report.tags for p in t.points
                if p.status in _BAD or (p.as_found is not None and p.as_found.status == "failure current")]
    problems += list(report.unknown_rows)
    if problems:
        console.print("[bold]points to look at[/]")

    def reading(label: str, r) -> str:
        if r is None or r.value is None:
            return f"{label} invalid entry" if r is not None and r.status == "invalid" else ""
        err = f" ({r.error_pct:+.3f} % of span)" if r.error_pct is not None else ""
        return f"{label} {r.value:g}{err}"

    for p in problems:
        where = f"{p.sheet}!{p.row}" if p.row else p.sheet
        what = "" if p.percent is None else f" {p.percent:g} % {p.direction}:"
        expected = "" if p.expected is None else f" expected {p.expected:g} {p.unit}"
        readings = ", ".join(x for x in (reading("as-found", p.as_found), reading("as-left", p.as_left)) if x)
        console.print(
            escape(f"  {p.ref} ({where}){what}{expected}" + (f", {readings}" if readings else ""))
            + f": [{_STYLE.get(p.status, '')}]{p.status}[/]" + (escape(f"; {p.reason}") if p.reason else "")
        )
    flagged = [(t, h) for t in report.tags for h in t.hysteresis if h.exceeds_tolerance]
    for t, h in flagged:
        console.print(f"[yellow]hysteresis[/] {escape(str(t.tag))} at {h.percent:g} %: as-found {_fmt(h.as_found_pct)} %, "
                      f"judged {_fmt(h.as_left_pct)} % of span, above the tolerance")
    c = report.counts
    console.print(f"[bold]{report.tested} point(s) tested: {c['pass']} pass, {c['fail']} fail, "
                  f"{c['failure current']} failure current, {c['invalid']} invalid entries, "
                  f"{c['no tolerance']} without tolerance, {c['refused']} refused; {c['not tested']} not tested[/]")
    if report.tested == 0:
        console.print("[bold red]nothing was tested: no pass can be given[/]")


def register(app: typer.Typer) -> None:
    app.command()(verify)
