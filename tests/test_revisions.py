"""Revision state and ``loopdocs build --issue`` (``loopdocs.model.revisions``): the revision
sequence, the description of a change, the state file's round trip and merge, and issues
of a small project and of the example project.

Reference facts, with their sources:
- drawings issued before construction carry letter revisions (A, B, C...; after Z comes AA)
  and from the first issue for construction numbers (0, 1, 2...): common practice;
- a revision is bumped only on a drawing whose content changed; unchanged drawings keep
  their revision in a re-issue (common practice: a transmittal lists only the drawings sent);
- a line-based three-way merge (``git merge-file``, the diff3 algorithm) merges changes to
  different, non-adjacent lines of a file without a conflict and exits 0 (git
  documentation of ``git merge-file``: "the exit value is the number of conflicts").
"""

from __future__ import annotations

import hashlib
import importlib.util
import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest
from pypdf import PdfReader
from typer.testing import CliRunner

from loopdocs.checks import check_project
from loopdocs.cli import app
from loopdocs.core.errors import InputError
from loopdocs.model.revisions import (STATE_NAME, RevisionScheme, RevisionState, capped, issue, next_revision,
                                      parse_state, read_state, revision_scheme, state_text)
from loopdocs.model.tagname import parse_tag
from loopdocs.render import builder
from loopdocs.render.builder import CRASH_ENV, BuildError, frame_record, loop_settings
from loopdocs.sheets.index_template import write_index_workbook

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"
runner = CliRunner()
LOOPS3 = ("T-3110", "T-7401", "L-2105")


@pytest.fixture
def steady_code(monkeypatch):
    """Other work on the source tree must not re-render sheets between two builds of one
    test: the code part of the cache key is held fixed (the key's records and frame stay)."""
    monkeypatch.setattr(builder, "environment_digest", lambda *args: "fixed for the test")


def example_rows() -> list[dict]:
    spec = importlib.util.spec_from_file_location("make_example", EXAMPLE / "make_example.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.rows()


def write_project(folder: Path, loops: tuple[str, ...], edit=None) -> Path:
    rows = [dict(r) for r in example_rows() if parse_tag(r["tag"]).loop_id in loops]
    if edit:
        rows = [edit(r) for r in rows]
    folder.mkdir(parents=True, exist_ok=True)
    write_index_workbook(folder / "index.xlsx", rows)
    if not (folder / "loopdocs.toml").exists():
        shutil.copy(EXAMPLE / "loopdocs.toml", folder / "loopdocs.toml")
    return folder


def set_cells(tag: str, **cells):
    def edit(row):
        return {**row, **cells} if row["tag"] == tag else row
    return edit


def hashes(*folders: Path) -> dict[str, str]:
    return {str(p): hashlib.sha256(p.read_bytes()).hexdigest()
            for folder in folders for p in sorted(folder.rglob("*")) if p.is_file()}


def one_line(text: str) -> str:
    return " ".join(text.split())


# --- the revision sequence ---------------------------------------------------------------

def test_revisions_count_up_in_letters_then_numbers():
    # common practice: A, B ... Z, AA; 0, 1 ... 9, 10; a numbered prefix keeps its width
    assert [next_revision(r) for r in ("A", "B", "Y", "Z", "AZ", "0", "9", "P1", "C09")] == \
        ["B", "C", "Z", "AA", "BA", "1", "10", "P2", "C10"]
    with pytest.raises(ValueError):
        next_revision("-")


def test_sequence_switches_to_numbers_at_the_first_issue_for_construction(index_files):
    rows = [{"tag": "TT-101", "signal": "4-20 mA", "range_low": 0, "range_high": 150, "units": "degC"}]
    state = RevisionState()
    seen = []
    for number, purpose in enumerate(["Issued for review", "Issued for review", "Issued for construction",
                                      "Issued for review", "As built"], start=1):
        rows[0]["range_high"] = 150 + number  # a change each time, so every issue bumps
        state, issued = issue(state, check_project(index_files.write(rows)).project, purpose, f"2026-12-{number:02}")
        seen.append(issued[0].revision)
    # once issued for construction, a loop stays in numbers (common practice)
    assert seen == ["A", "B", "0", "1", "2"]

    direct, issued = issue(RevisionState(), check_project(index_files.write(rows)).project, "For construction", "2026-12-01")
    assert [s.revision for s in issued] == ["0"]
    # "pre-construction" is not "construction" as a word of its own
    pre, issued = issue(RevisionState(), check_project(index_files.write(rows)).project, "Pre-construction review", "2026-12-01")
    assert [s.revision for s in issued] == ["A"]


def test_sequence_from_the_project_file(index_files):
    rows = [{"tag": "PT-7", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "bar"}]
    scheme = revision_scheme({"before_construction": "P1", "for_construction": "C01", "construction_words": ["IFC"]})
    state, revs = RevisionState(), []
    for number, purpose in enumerate(["IFR", "IFR", "IFC", "IFC"], start=1):
        rows[0]["range_high"] = 10 + number
        state, issued = issue(state, check_project(index_files.write(rows)).project, purpose, "2026-12-01", scheme)
        revs.append(issued[0].revision)
    assert revs == ["P1", "P2", "C01", "C02"]
    with pytest.raises(InputError, match=r"\[revisions\.for_construction\]"):
        revision_scheme({"for_construction": "-"}, "loopdocs.toml")
    with pytest.raises(InputError, match=r"\[revisions\.start\]"):
        revision_scheme({"start": "A"}, "loopdocs.toml")


# --- what a revision says ----------------------------------------------------------------

CTRL = {"tag": "TIC-101", "service": "Tank temperature", "platform": "dcs", "signal": "4-20 mA",
        "control_action": "reverse"}
TT = {"tag": "TT-101", "service": "Tank temperature", "signal": "4-20 mA", "range_low": 0, "range_high": 150,
      "units": "degC"}
TV = {"tag": "TV-101A", "signal": "4-20 mA", "air_action": "ATC", "fail_position": "FO", "driven_by": "TIC-101"}
PT = {"tag": "PT-201", "service": "Header pressure", "signal": "4-20 mA", "range_low": -1, "range_high": 5,
      "units": "bar"}


def test_description_names_each_change_with_old_and_new_values(index_files):
    old_rows = [CTRL, TT, TV, PT]
    new_rows = [CTRL, {**TT, "range_high": 200, "alarm_h": 180}, {**TV, "tag": "TV-101B"},
                {"tag": "TE-101", "signal": "RTD", "sensor": "Pt100"},
                {**PT, "range_low": 0, "range_high": 10}]
    first, issued = issue(RevisionState(), check_project(index_files.write(old_rows)).project, "For review", "2026-12-01")
    assert [(s.loop, s.revision, s.previous) for s in issued] == [("P-201", "A", ""), ("T-101", "A", "")]
    scheme = RevisionScheme(changes_listed=10)
    second, issued = issue(first, check_project(index_files.write(new_rows)).project, "For review", "2026-12-08", scheme)
    assert [(s.loop, s.revision, s.previous) for s in issued] == [("P-201", "B", "A"), ("T-101", "B", "A")]
    # the old and new values are the cells of the two indexes written above
    assert second.loops["T-101"].history[-1].changes == (
        "TE-101 added",
        "TV-101A renamed TV-101B",
        "Range of TT-101 changed 0-150 degC to 0-200 degC",
        "Alarm H of TT-101 set to 180",
    )
    assert second.loops["P-201"].history[-1].changes == ("Range of PT-201 was -1 to 5 bar, now 0-10 bar",)
    changed = {(c.tag, c.field) for c in second.loops["T-101"].changed}
    assert changed == {("TE-101", "tag"), ("TV-101B", "tag"), ("TT-101", "range_high"), ("TT-101", "alarm_h")}
    assert second.loops["T-101"].history[0] == first.loops["T-101"].history[0]  # history kept

    # removing a tag, and the cap on the number of lines
    third, _ = issue(second, check_project(index_files.write([CTRL, {**TT, "range_high": 250, "alarm_h": 190,
                                                                      "alarm_l": 5, "accuracy_pct": 0.5},
                                                              {**PT, "range_low": 0, "range_high": 10}])).project,
                     "For review", "2026-12-09")
    assert third.loops["T-101"].history[-1].changes == (
        "TE-101 removed", "TV-101B removed", "and 4 more changes")
    assert third.loops["P-201"] == second.loops["P-201"]  # untouched loop keeps its revision
    assert capped(["a"], 3) == ("a",)


def test_row_order_and_software_do_not_bump_a_revision(index_files):
    state, issued = issue(RevisionState(), check_project(index_files.write([CTRL, TT, TV])).project, "For review", "2026-12-01")
    again, issued = issue(state, check_project(index_files.write([TV, TT, CTRL])).project, "For review", "2026-12-02")
    assert issued == [] and again == state


# --- the state file ----------------------------------------------------------------------

def test_state_file_round_trip_is_exact(index_files):
    hostile = {**TT, "service": 'Tank "7" \\ temperature\nsecond line \u00b0C \u2013 \x7f', "notes": "=1+2"}
    state, _ = issue(RevisionState(), check_project(index_files.write([CTRL, hostile, TV])).project,
                     'Issued "for" review', "2026-12-01")
    state, _ = issue(state, check_project(index_files.write([CTRL, {**hostile, "range_high": 90}, TV])).project,
                     "Issued for construction", "2026-12-02")
    text = state_text(state)
    back = parse_state(text)
    assert back == state
    assert state_text(back) == text  # same state, same bytes


def test_state_file_is_one_sorted_block_per_loop(index_files):
    rows = [{**TT, "tag": f"TT-{n}"} for n in (12, 3, 101)]
    state, _ = issue(RevisionState(), check_project(index_files.write(rows)).project, "For review", "2026-12-01")
    heads = [line for line in state_text(state).splitlines() if line.startswith("[loop.") and line.count(".") == 1]
    assert heads == ['[loop."T-3"]', '[loop."T-12"]', '[loop."T-101"]']  # natural order


def test_broken_state_file_is_reported_with_its_name(tmp_path):
    (tmp_path / STATE_NAME).write_text('[loop."T-1"]\nrevision = "A"\n<<<<<<< HEAD\n', encoding="utf-8")
    with pytest.raises(InputError, match="loopdocs-revisions.toml: not valid TOML"):
        read_state(tmp_path)
    (tmp_path / STATE_NAME).write_text('[loop."T-1"]\nrevision = "A"\n', encoding="utf-8")
    with pytest.raises(InputError, match="loop T-1: content is missing"):
        read_state(tmp_path)


def test_two_branches_that_issued_different_loops_merge_without_conflict(tmp_path, index_files):
    loops = [{**TT, "tag": f"TT-{n}"} for n in (101, 102, 103, 104)]
    base, _ = issue(RevisionState(), check_project(index_files.write(loops)).project, "For review", "2026-12-01")

    def branch(tag, high, extra=()):
        rows = [{**r, "range_high": high} if r["tag"] == tag else r for r in loops] + list(extra)
        return issue(base, check_project(index_files.write(rows)).project, "For review", "2026-12-05")[0]

    ours = branch("TT-102", 180)                                   # neighbouring loops,
    theirs = branch("TT-103", 190, [{**TT, "tag": "TT-105"}])      # and a new loop at the end
    files = {}
    for name, state in (("base", base), ("ours", ours), ("theirs", theirs)):
        files[name] = tmp_path / f"{name}.toml"
        files[name].write_text(state_text(state), encoding="utf-8")
    done = subprocess.run(["git", "merge-file", "-p", str(files["ours"]), str(files["base"]), str(files["theirs"])],
                          capture_output=True, text=True)
    assert done.returncode == 0, done.stdout  # the number of conflicts (git merge-file documentation)
    merged = parse_state(done.stdout)
    assert merged.loops["T-102"] == ours.loops["T-102"] and merged.loops["T-102"].revision == "B"
    assert merged.loops["T-103"] == theirs.loops["T-103"] and merged.loops["T-103"].revision == "B"
    assert merged.loops["T-105"] == theirs.loops["T-105"]
    assert merged.loops["T-101"] == base.loops["T-101"] and merged.loops["T-104"] == base.loops["T-104"]
    assert done.stdout == state_text(merged)  # the merge is itself a well-formed state file

    # the same loop issued on both branches is a conflict for a person to resolve
    (tmp_path / "other.toml").write_text(state_text(branch("TT-102", 175)), encoding="utf-8")
    clash = subprocess.run(["git", "merge-file", "-p", str(files["ours"]), str(files["base"]),
                            str(tmp_path / "other.toml")], capture_output=True, text=True)
    assert clash.returncode > 0


# --- the frame record --------------------------------------------------------------------

def test_frame_record_carries_the_loops_revision_and_changed_items(index_files):
    from loopdocs.render.settings import SheetSettings

    project = check_project(index_files.write([CTRL, TT, TV])).project
    first, _ = issue(RevisionState(), project, "For review", "2026-12-01")
    changed = check_project(index_files.write([CTRL, {**TT, "range_high": 200}, TV])).project
    second, _ = issue(first, changed, "For review", "2026-12-02")
    settings = SheetSettings()
    a = frame_record(project, loop_settings(settings, first, "T-101"), "T-101", 1, 1, False)
    b = frame_record(changed, loop_settings(settings, second, "T-101"), "T-101", 1, 1, False,
                     second.loops["T-101"].changed)
    assert (a["revision"], b["revision"]) == ("A", "B")
    assert a["revision_changes"] == [] and b["revision_changes"] == [{"tag": "TT-101", "field": "range_high"}]
    assert [r["rev"] for r in b["sheet"]["revisions"]] == ["A", "B"]
    unissued = frame_record(project, loop_settings(settings, RevisionState(), "T-101"), "T-101", 1, 1, False)
    assert unissued["revision"] == builder.NOT_ISSUED


# --- issuing a project -------------------------------------------------------------------

def test_issue_bumps_only_changed_loops_and_an_unchanged_rebuild_changes_nothing(tmp_path, steady_code):
    from loopdocs.commands.build import issue_build

    project = write_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    done = runner.invoke(app, ["build", str(project), "--out", str(out), "--issue", "Issued for review",
                               "--date", "2026-12-01", "--workers", "2"])
    assert done.exit_code == 0, done.output
    assert "issued:  3 sheet(s)" in done.output
    state = read_state(project)
    assert {loop: s.revision for loop, s in state.loops.items()} == {loop: "A" for loop in LOOPS3}
    wb = openpyxl.load_workbook(out / "transmittal.xlsx")
    listed = [row for row in wb.active.iter_rows(values_only=True) if row and row[1] in LOOPS3]
    assert sorted(r[1] for r in listed) == sorted(LOOPS3)
    assert {(r[0], r[3], r[5], r[6]) for r in listed} == {
        (f"KCB-LS-{loop}", "A", "Issued for review", "2026-12-01") for loop in LOOPS3}

    before = hashes(out, project)
    again = builder.build(project, out, workers=2)
    assert again.rendered == [] and sorted(again.reused) == sorted(LOOPS3)
    assert hashes(out, project) == before  # not one byte of any file changed

    write_project(project, LOOPS3, edit=set_cells("TT-7401C", range_high=1700))
    issued = issue_build(project, out, "Issued for construction", "2026-12-20", workers=2)
    assert issued.rendered == ["T-7401"] and sorted(issued.reused) == ["L-2105", "T-3110"]
    assert [(s.loop, s.previous, s.revision) for s in issued.issued] == [("T-7401", "A", "0")]
    assert issued.revisions == {"L-2105": "A", "T-3110": "A", "T-7401": "0"}
    state = read_state(project)
    assert state.loops["T-7401"].history[-1].changes == ("Range of TT-7401C changed 600-1600 degC to 600-1700 degC",)
    assert state.loops["T-3110"].history[-1].rev == "A" and len(state.loops["T-3110"].history) == 1
    sheet = one_line(PdfReader(issued.loop_files["T-7401"]).pages[0].extract_text())
    assert "Issued for construction; Range of TT-7401C changed 600-1600 degC to 600-1700 degC" in sheet
    text = one_line(PdfReader(out / "transmittal.pdf").pages[0].extract_text())
    assert "KCB-LS-T-7401" in text and "T-3110" not in text

    # issuing again with nothing changed issues nothing and leaves the state file alone
    state_bytes = (project / STATE_NAME).read_bytes()
    nothing = runner.invoke(app, ["build", str(project), "--out", str(out), "--issue", "Issued for construction",
                                  "--workers", "2"])
    assert nothing.exit_code == 0 and "nothing issued" in nothing.output
    assert (project / STATE_NAME).read_bytes() == state_bytes


def test_issue_options_are_checked(tmp_path):
    project = write_project(tmp_path / "p", ("T-3110",))
    bad_date = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--issue", "x", "--date", "20/12/2026"])
    assert bad_date.exit_code == 2 and "not a date" in bad_date.output
    selection = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--issue", "x", "--loop", "T-3110"])
    assert selection.exit_code == 2 and "--loop" in selection.output
    blank = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--issue", "  "])
    assert blank.exit_code == 2 and "purpose" in blank.output
    assert not (project / STATE_NAME).exists()


def test_failed_issue_leaves_the_state_file_as_it_was(tmp_path, monkeypatch, steady_code):
    from loopdocs.commands.build import issue_build

    project = write_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    issue_build(project, out, "Issued for review", "2026-12-01", workers=2)
    state_bytes = (project / STATE_NAME).read_bytes()
    transmittal = (out / "transmittal.xlsx").read_bytes()

    # T-3110 changes, the title-block date changes every sheet (three sheets to render in
    # worker processes), and the worker rendering T-3110 dies half-way through its PDF
    write_project(project, LOOPS3, edit=set_cells("TT-3110", range_high=35))
    config = project / "loopdocs.toml"
    config.write_text(config.read_text().replace('date = "2026-12-01"', 'date = "2026-12-24"', 1))
    monkeypatch.setenv(CRASH_ENV, "T-3110")
    with pytest.raises(BuildError, match="died"):
        issue_build(project, out, "Issued for construction", "2026-12-24", workers=2)
    assert (project / STATE_NAME).read_bytes() == state_bytes
    assert (out / "transmittal.xlsx").read_bytes() == transmittal

    monkeypatch.delenv(CRASH_ENV)
    resumed = issue_build(project, out, "Issued for construction", "2026-12-24", workers=2)
    assert [(s.loop, s.revision) for s in resumed.issued] == [("T-3110", "0")]


def test_example_project_issued_twice(tmp_path, steady_code):
    """The issue's "done when": the example, issued for review, one range changed, issued for
    construction; the second package shows exactly the right revisions and descriptions."""
    from loopdocs.commands.build import issue_build

    project = tmp_path / "example"
    project.mkdir()
    for name in ("index.xlsx", "loopdocs.toml"):
        shutil.copy(EXAMPLE / name, project / name)
    out = project / "out"
    first = issue_build(project, out, "Issued for review", "2026-12-01", workers=2)
    loops = list(first.loop_files)
    assert len(first.issued) == len(loops) and set(first.revisions.values()) == {"A"}

    wb = openpyxl.load_workbook(project / "index.xlsx")
    ws = wb["Index"]
    head = {c.value: c.column for c in ws[1]}
    row = next(r for r in range(2, ws.max_row + 1) if ws.cell(r, head["Tag"]).value == "TT-3105")
    low, high, units = (ws.cell(row, head[h]).value for h in ("Range Low", "Range High", "Units"))
    ws.cell(row, head["Range High"]).value = high + 10
    wb.save(project / "index.xlsx")

    second = issue_build(project, out, "Issued for construction", "2026-12-20", workers=2)
    assert second.rendered == ["T-3105"] and [s.loop for s in second.issued] == ["T-3105"]
    reader = PdfReader(second.package)
    listing = reader.pages[1].extract_text()
    for loop in loops:
        line = next(l for l in listing.splitlines() if f" {loop} " in l)
        assert line.split()[-1] == ("0" if loop == "T-3105" else "A"), line
    cover = one_line(reader.pages[0].extract_text())
    assert f"A 2026-12-01 Issued for review ({len(loops)} sheets)" in cover
    assert "0 2026-12-20 Issued for construction (1 sheet)" in cover
    sheets = {}
    for page in reader.pages[2:]:
        text = one_line(page.extract_text())
        loop = next(l for l in loops if f"loop {l}:" in text)
        sheets.setdefault(loop, text)
    span = f"{low} to {high}" if str(low).startswith("-") else f"{low}-{high}"
    new_span = f"{low} to {high + 10}" if str(low).startswith("-") else f"{low}-{high + 10}"
    was_now = (f"was {span} {units}, now {new_span} {units}" if " to " in span
               else f"changed {span} {units} to {new_span} {units}")
    assert f"0 2026-12-20 Issued for construction; Range of TT-3105 {was_now}" in sheets["T-3105"]
    for loop, text in sheets.items():
        assert ("Issued for construction" in text) == (loop == "T-3105"), loop
        assert "A 2026-12-01 Issued for review" in text
