"""``loopdocs calibrate`` messages: the --out summary, an index with errors, help text and wording.

Sources:
- ATO actuators fail closed, ATC fail open (spring return): a fact of the trade, common
  practice; a row that says ATO and FO contradicts itself (rule ``valve.air-fail``).
- Help paragraphs: a terminal wraps prose at its own width; a line broken where the source
  had a newline mid-sentence reads as a defect (common practice for command-line help).
"""

from __future__ import annotations

import ast
import inspect
import json
import re
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from loopdocs.calibration.marks import MARK
from loopdocs.cli import app
from loopdocs.sheets.index_template import write_index_workbook

EXAMPLE = Path(__file__).resolve().parent.parent / "project_example"
LOOPDOCS = Path(__file__).resolve().parent.parent / "loopdocs"
runner = CliRunner()

FIC = {"tag": "FIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}
GOOD_VALVE = {"tag": "FV-201", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
              "positioner_action": "direct", "driven_by": "FIC-201", "input_low": 4, "input_high": 20,
              "input_units": "mA", "effect": "raises"}
PT = {"tag": "PT-101", "service": "Wort kettle pressure", "signal": "4-20 mA", "range_low": 0, "range_high": 10,
      "units": "barg", "accuracy_pct": 0.25}


def write_index(tmp_path: Path, rows: list[dict]) -> Path:
    path = tmp_path / "index.xlsx"
    write_index_workbook(path, rows)
    return path


def test_out_prints_a_summary_not_every_table(tmp_path):
    out = tmp_path / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--out", str(out)], env={"COLUMNS": "200"})
    assert result.exit_code == 0, result.output
    text = " ".join(result.stdout.split())
    assert "┏" not in result.stdout and "% span" not in result.stdout  # no table printed
    assert re.search(r"\d+ table\(s\) for \d+ tag\(s\)", text)
    assert re.search(r"\d+ tag\(s\) without a table", text)
    assert f"wrote {out}" in text and "test points on" in text
    # the same command without --out prints the tables
    full = runner.invoke(app, ["calibrate", str(EXAMPLE)])
    assert "┏" in full.stdout and len(full.stdout) > 10 * len(result.stdout)


def test_index_with_errors_exits_1_and_marks_the_tables_involved(tmp_path):
    # FV-202: ATO yet FO (valve.air-fail, an error); FV-201 and PT-101 are clean
    bad = {**GOOD_VALVE, "tag": "FV-202", "fail_position": "FO", "driven_by": "FIC-202"}
    index = write_index(tmp_path, [FIC, GOOD_VALVE, {**FIC, "tag": "FIC-202"}, bad, PT])
    check = runner.invoke(app, ["check", str(index), "--format", "json"])
    errors = [f for f in json.loads(check.stdout)["findings"] if f["severity"] == "error"]
    assert check.exit_code == 1 and {tuple(f["tags"]) for f in errors} >= {("FV-202",)}

    out = tmp_path / "cal.xlsx"
    result = runner.invoke(app, ["calibrate", str(index), "--out", str(out)], env={"COLUMNS": "200"})
    assert result.exit_code == 1
    text = " ".join(result.stdout.split())
    assert "the index has" in text and "error(s)" in text and "loopdocs check" in text and "FV-202" in text
    assert out.exists()  # the workbook is still written, marked

    data = json.loads(runner.invoke(app, ["calibrate", str(index), "--format", "json"]).stdout)
    assert data["index_errors"] and all(e["severity"] == "error" for e in data["index_errors"])
    marked = {(i["tag"], i["kind"]) for i in data["instruments"] if any(n.startswith(MARK) for n in i["notes"])}
    assert ("FV-202", "final element") in marked and ("FV-202", "fail action") in marked
    assert not any(tag in ("FV-201", "PT-101") for tag, _ in marked)
    (note,) = {n for i in data["instruments"] if i["tag"] == "FV-202" for n in i["notes"] if n.startswith(MARK)}
    assert note.startswith(f"{MARK}: valve.air-fail: ")

    wb = openpyxl.load_workbook(out)
    cells = [str(c.value) for ws in wb.worksheets[1:-1] for row in ws.iter_rows() for c in row if c.value]
    assert any(c.startswith(f"{MARK}: valve.air-fail") for c in cells)

    plain = runner.invoke(app, ["calibrate", str(index)], env={"COLUMNS": "200"})
    assert plain.exit_code == 1 and f"{MARK}: valve.air-fail" in " ".join(plain.stdout.split())


def test_clean_index_exits_0(tmp_path):
    index = write_index(tmp_path, [FIC, GOOD_VALVE, PT])
    result = runner.invoke(app, ["calibrate", str(index)])
    assert result.exit_code == 0, result.output
    assert MARK not in result.stdout


def _commands():
    from typer.main import get_command

    return get_command(app).commands  # type: ignore[attr-defined]


@pytest.mark.parametrize("columns", ["80", "120"])
def test_help_paragraphs_wrap_at_the_terminal_not_at_source_newlines(columns):
    for name, command in _commands().items():
        doc = inspect.cleandoc(command.callback.__doc__ or "")
        for paragraph in doc.split("\n\n"):
            # rich keeps a newline inside a paragraph as a line break: one line per paragraph
            assert "\n" not in paragraph.strip(), f"{name}: help paragraph broken in the source: {paragraph!r}"
        for param in command.params:
            assert "\n" not in (getattr(param, "help", None) or ""), f"{name} {param.name}"
        result = runner.invoke(app, [name, "--help"], env={"COLUMNS": columns}, terminal_width=int(columns))
        assert result.exit_code == 0
        description = result.stdout.split("╭")[0].splitlines()[3:]  # after the usage line
        lines = [line.rstrip() for line in description]
        for line, following in zip(lines, lines[1:]):
            # a short line followed by more of the same paragraph is a break mid-sentence
            if line.strip() and following.strip() and len(line) < int(columns) * 0.6:
                pytest.fail(f"{name} --help at {columns} columns breaks {line!r} / {following!r}")


def _user_strings(path: Path) -> list[tuple[int, str]]:
    """String constants that are not docstrings (messages, notes, help)."""
    tree = ast.parse(path.read_text())
    docs = set()
    for node in ast.walk(tree):
        body = getattr(node, "body", None)
        if isinstance(body, list):
            for stmt in body:
                if isinstance(stmt, ast.Expr) and isinstance(stmt.value, ast.Constant):
                    docs.add(id(stmt.value))
    return [(n.lineno, n.value) for n in ast.walk(tree)
            if isinstance(n, ast.Constant) and isinstance(n.value, str) and id(n) not in docs]


# Owned by another part of the work; listed for them, not edited here.
_OTHERS = {"checks/valve.py", "checks/split_rules.py", "calc/capacity.py"}


def test_messages_name_no_design_document():
    found = []
    for path in sorted(LOOPDOCS.rglob("*.py")):
        if str(path.relative_to(LOOPDOCS)) in _OTHERS:
            continue
        for line, text in _user_strings(path):
            if "DESIGN" in text or "§" in text:
                found.append(f"{path.relative_to(LOOPDOCS)}:{line}: {text[:80]}")
    for name, command in _commands().items():
        if "DESIGN" in (command.callback.__doc__ or "") or "§" in (command.callback.__doc__ or ""):
            found.append(f"{name} --help")
    assert found == []
