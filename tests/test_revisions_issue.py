"""Issuing, second part (``loopdocs.model.revisions``, ``loopdocs.sheets.transmittal``,
``loopdocs build --issue``): sheets withdrawn when their loop leaves the index, the status
a sheet is issued with (NOT FOR CONSTRUCTION, errors released), the transmittal as a
working document, and the state file's fast reader against the reference TOML parser.

Reference facts, with their sources:
- a drawing cancelled from a set is listed on the transmittal that cancels it, at its last
  revision, and is no longer in the drawing list; its number is not reused for another
  drawing and its history is kept (common practice);
- a document transmittal lists each document sent with its revision and status and is
  signed by who issues it, who checked it and who receives it, each with a date (common
  practice);
- a spring-return actuator fails where its spring takes it: air to open (ATO) fails
  closed (FC), air to close (ATC) fails open (FO) (common practice; the check
  ``valve.fail_vs_air`` in docs/design.md);
- TOML 1.0 is read by ``tomllib`` (Python standard library, the reference parser here):
  the state file's own fast reader must give exactly what tomllib gives, or step aside.
"""

from __future__ import annotations

import sys
import tomllib
from pathlib import Path

import openpyxl
import pytest
from pypdf import PdfReader
from typer.testing import CliRunner

from loopdocs.checks import check_project
from loopdocs.cli import app
from loopdocs.core.errors import InputError
from loopdocs.core.wording import CAUTION
from loopdocs.model.revisions import (STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED, WITHDRAWN, RevisionState,
                                      _read_own_layout, issue, issue_summaries, parse_state, read_state, state_text)
from loopdocs.render.builder import loop_settings
from loopdocs.render.package import issue_rows
from loopdocs.render.settings import SheetSettings
from loopdocs.sheets.transmittal import transmittal_facts, transmittal_rows, write_transmittal_xlsx
sys.path.insert(0, str(Path(__file__).resolve().parent))
from test_revisions import CTRL, LOOPS3, PT, TT, TV, one_line, set_cells, steady_code, write_project  # noqa: E402, F401

runner = CliRunner()


# --- withdrawn sheets --------------------------------------------------------------------

def test_loop_removed_from_the_index_is_withdrawn_once_and_continues_on_return(index_files):
    both = check_project(index_files.write([CTRL, TT, TV, PT])).project
    without = check_project(index_files.write([CTRL, TT, TV])).project
    first, _ = issue(RevisionState(), both, "Issued for review", "2026-12-01")

    # withdrawn at an issue for construction: listed at its last revision, history kept
    second, issued = issue(first, without, "Issued for construction", "2026-12-08")
    assert [(s.loop, s.revision, s.withdrawn) for s in issued] == [("P-201", "A", True)]
    gone = second.loops["P-201"]
    assert gone.withdrawn and gone.revision == "A" and gone.rows == first.loops["P-201"].rows
    assert gone.history[:-1] == first.loops["P-201"].history
    assert (gone.history[-1].rev, gone.history[-1].date, gone.history[-1].changes) == ("A", "2026-12-08", (WITHDRAWN,))
    assert second.loops["T-101"] == first.loops["T-101"]  # unchanged loop: not issued again
    summary = issue_summaries(second)[-1]
    assert (summary.date, summary.sheets, summary.withdrawn, summary.revisions) == ("2026-12-08", 0, 1, ())
    assert (issue_rows(second)[-1].rev, issue_rows(second)[-1].description) == ("-", "Issued for construction (1 withdrawn)")

    # withdrawn once: the next issue without the loop lists nothing
    third, issued = issue(second, without, "Issued for construction", "2026-12-09")
    assert issued == [] and third == second

    # back in the index: the next revision in its own sequence (A -> B for review); the
    # issue that withdrew it did not issue its sheet for construction, so its first issue
    # for construction is 0, not the next number after a withdrawal
    back, issued = issue(third, both, "Issued for review", "2026-12-15")
    assert [(s.loop, s.previous, s.revision, s.withdrawn) for s in issued] == [("P-201", "A", "B", False)]
    assert back.loops["P-201"].history[-1].changes == ("Back in the index (sheet withdrawn 2026-12-08)",)
    assert not back.loops["P-201"].withdrawn
    built, issued = issue(third, both, "Issued for construction", "2026-12-15")
    assert [(s.previous, s.revision) for s in issued] == [("A", "0")]
    # its sheet's revision table shows the revisions issued, not the withdrawal
    table = loop_settings(SheetSettings(), back, "P-201").revisions
    assert [(r.rev, r.date) for r in table] == [("A", "2026-12-01"), ("B", "2026-12-15")]

    # the state file keeps the withdrawal through a round trip, in both readers
    text = state_text(second)
    assert parse_state(text) == second
    assert _read_own_layout(text) == tomllib.loads(text)
    assert "withdrawn = true" in text


def test_status_change_alone_issues_the_sheet_again(index_files):
    project = check_project(index_files.write([CTRL, TT, TV])).project
    marked, issued = issue(RevisionState(), project, "Issued for construction", "2026-12-01",
                           status={"T-101": STATUS_NOT_FOR_CONSTRUCTION})
    assert [(s.revision, s.status) for s in issued] == [("0", STATUS_NOT_FOR_CONSTRUCTION)]
    assert marked.loops["T-101"].status == STATUS_NOT_FOR_CONSTRUCTION

    # no status given: every loop keeps the one it has, nothing to issue
    same, issued = issue(marked, project, "Issued for construction", "2026-12-02")
    assert issued == [] and same == marked

    # the errors accepted or released: same rows, the mark changes, so the sheet changes
    released, issued = issue(marked, project, "Issued for construction", "2026-12-03", status={"T-101": STATUS_RELEASED})
    assert [(s.previous, s.revision, s.status) for s in issued] == [("0", "1", STATUS_RELEASED)]
    assert released.loops["T-101"].history[-1].changes == ("NOT FOR CONSTRUCTION mark removed: errors released",)
    clear, issued = issue(released, project, "Issued for construction", "2026-12-04", status={})
    assert [s.revision for s in issued] == ["2"] and clear.loops["T-101"].status == ""
    assert clear.loops["T-101"].history[-1].changes == ("Errors released earlier are resolved",)
    assert parse_state(state_text(released)) == released


# --- the command and the transmittal ------------------------------------------------------

def test_transmittal_rows_show_each_status_and_the_head_counts_them(index_files):
    rows = [CTRL, TT, TV, PT, {**PT, "tag": "PT-301"}]
    project = check_project(index_files.write(rows)).project
    status = {"T-101": STATUS_NOT_FOR_CONSTRUCTION, "P-201": STATUS_RELEASED}
    state, issued = issue(RevisionState(), project, "Issued for construction", "2026-12-01", status=status)
    listed = transmittal_rows(project, issued, state)
    assert [(r.loop, r.revision, r.status) for r in listed] == [
        ("P-201", "0", "issued, errors released"), ("P-301", "0", ""), ("T-101", "0", "NOT FOR CONSTRUCTION")]
    facts = dict(transmittal_facts(project, listed))
    assert facts["Sheets issued"] == "3" and facts["Marked NOT FOR CONSTRUCTION"] == "1"
    assert facts["Issued with errors released in the project configuration"] == "1"
    assert "Sheets withdrawn" not in facts  # a count of zero is left out


def fail_open(row):
    """LV-2105 is air to open; failing open contradicts its spring (an error finding)."""
    return {**row, "fail_position": "FO"} if row["tag"] == "LV-2105" else row


def test_issue_for_construction_lists_withdrawn_and_marked_sheets(tmp_path, steady_code):  # noqa: F811
    project = write_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    first = runner.invoke(app, ["build", str(project), "--out", str(out), "--issue", "Issued for review",
                                "--date", "2026-12-01", "--workers", "2"])
    assert first.exit_code == 0, first.output

    # T-3110 leaves the index; LV-2105 gets a fail position its actuator cannot give
    (project / "index.xlsx").unlink()
    write_project(project, ("T-7401", "L-2105"), edit=fail_open)
    errors = [f for f in check_project(project).findings if f.counts_as_error]
    assert [(f.rule, f.tags) for f in errors] and all(f.loop == "L-2105" for f in errors)
    done = runner.invoke(app, ["build", str(project), "--out", str(out), "--issue", "Issued for construction",
                               "--date", "2026-12-20", "--workers", "2"])
    assert done.exit_code == 1, done.output  # an error finding: exit 1 (docs/design.md §9.4)
    assert "issued:  1 sheet(s): L-2105 A -> 0\n" in done.output
    assert "withdrawn: 1 sheet(s) of loops removed from the index: T-3110 (last revision A)\n" in done.output
    assert done.output.count("caution:") == 1
    assert ("caution: L-2105 revision 0 issued 'Issued for construction' but marked NOT FOR CONSTRUCTION "
            "(unresolved error findings; the transmittal says so)\n") in done.output

    state = read_state(project)
    assert state.loops["T-3110"].withdrawn and state.loops["T-3110"].revision == "A"
    assert state.loops["L-2105"].status == STATUS_NOT_FOR_CONSTRUCTION
    assert not (out / "loops" / "T-3110.pdf").exists()
    listing = PdfReader(out / "loop-sheets.pdf").pages[1].extract_text()
    assert "T-3110" not in listing and "L-2105" in listing  # left the drawing list

    wb = openpyxl.load_workbook(out / "transmittal.xlsx")
    ws = wb.active
    values = [[c.value for c in row] for row in ws.iter_rows()]
    head = next(i for i, r in enumerate(values) if r[0] == "Drawing number")
    assert values[head][7] == "Status"
    listed = {r[1]: r for r in values[head + 1:] if r[1] in ("L-2105", "T-3110", "T-7401")}
    assert set(listed) == {"L-2105", "T-3110"}  # T-7401 did not change: not sent
    assert listed["L-2105"][3:5] == ["0", "A"] and listed["L-2105"][7] == "NOT FOR CONSTRUCTION"
    assert listed["T-3110"][3] == "A" and listed["T-3110"][7].startswith("WITHDRAWN")
    assert "last issued at revision A" in listed["T-3110"][7]
    assert listed["T-3110"][2] == "Fermenter FV-5 cone temperature"  # service from its rows as issued
    facts = {r[0]: r[1] for r in values[1:head] if r[0]}
    assert (facts["Sheets issued"], facts["Sheets withdrawn"], facts["Marked NOT FOR CONSTRUCTION"]) == ("1", "1", "1")
    assert any(r[0] == f"Caution: {CAUTION}" for r in values)
    sign = next(i for i, r in enumerate(values) if r[0] == "Signatures")
    assert values[sign][1:4] == ["Name", "Signature", "Date"]
    assert [r[0] for r in values[sign + 1:sign + 4]] == ["Issued by", "Checked", "Received by"]
    assert all(c.data_type == "s" for row in ws.iter_rows() for c in row if isinstance(c.value, str))

    text = one_line(" ".join(p.extract_text() for p in PdfReader(out / "transmittal.pdf").pages))
    for words in ("Sheets withdrawn 1", "NOT FOR CONSTRUCTION", "WITHDRAWN: loop removed from the index",
                  one_line(CAUTION), "Issued by", "Checked", "Received by", "Signature"):
        assert words in text, words
    assert "T-7401" not in text


def test_transmittal_workbook_keeps_formula_looking_text_as_text(tmp_path, index_files):
    project = check_project(index_files.write([{**CTRL, "service": "=HYPERLINK(\"http://x\")"}, TT, TV])).project
    state, issued = issue(RevisionState(), project, "=1+1 for review", "2026-12-01")
    path = write_transmittal_xlsx(tmp_path / "t.xlsx", project, transmittal_rows(project, issued, state))
    ws = openpyxl.load_workbook(path).active
    cells = [c for row in ws.iter_rows() for c in row if isinstance(c.value, str) and c.value.startswith("=")]
    assert cells and all(c.data_type == "s" for c in cells)  # stored as text, never as a formula


# --- the fast reader against tomllib ------------------------------------------------------

def test_fast_reader_gives_what_tomllib_gives_or_steps_aside(index_files):
    hostile = {**TT, "service": 'Tank "7" \\ temp\nline \u00b0C \u2028 \x7f \t', "notes": "=1+2"}
    state, _ = issue(RevisionState(), check_project(index_files.write([CTRL, hostile, TV, PT])).project,
                     'Issued "for" review', "2026-12-01", status={"T-101": STATUS_NOT_FOR_CONSTRUCTION})
    state, _ = issue(state, check_project(index_files.write([CTRL, {**hostile, "range_high": 90}, TV])).project,
                     "Issued for construction", "2026-12-02")
    text = state_text(state)
    own = _read_own_layout(text)
    assert own is not None and own == tomllib.loads(text)
    assert _read_own_layout(text.replace("\n", "\r\n")) == tomllib.loads(text.replace("\n", "\r\n"))

    # edits by hand in other valid TOML spellings: the fast reader steps aside, tomllib reads
    edits = [
        text.replace('revision = "A"', "revision = 'A'  # literal string, comment", 1),
        text.replace('date = "2026-12-01"', 'date = "\\U00000032026-12-01"', 1),  # \U00000032 is "2"
        text.replace('purpose = "Issued for construction"', 'purpose   =   "Issued for construction"', 1),
    ]
    for edited in edits:
        assert edited != text
        assert _read_own_layout(edited) is None
        assert parse_state(edited) == state
    # a key given twice is an error tomllib reports; the fast reader does not swallow it
    twice = text.replace('revision = "A"', 'revision = "A"\nrevision = "C"', 1)
    assert _read_own_layout(twice) is None
    with pytest.raises(InputError, match="not valid TOML"):
        parse_state(twice)
