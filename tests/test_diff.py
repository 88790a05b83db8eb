"""``loopdocs diff OLD NEW`` and ``loopdocs.model.changes``: two issues of an index written in
the test, every kind of change found with the right old and new values.

Reference values, with their sources:
- 4-20 mA transmitter output linear in the measured value, I = 4 + 16 * (x - LRV) / (URV - LRV):
  IEC 60381-1 (the 4 to 20 mA d.c. signal); so 12 mA is 75 degC on 0-150 degC and 100 degC on
  0-200 degC;
- an air-to-close (ATC) valve opens as its actuator pressure falls, so with a direct
  positioner the input that opens it as the controller output rises runs from the high end
  to the low end (20 to 12 mA instead of 12 to 20 mA): a fact of the trade (common practice);
- in a split range each element moves linearly over its own CO segment, travel =
  (CO - CO start) / (CO end - CO start) * 100 %: common practice (a loop check of the staged
  valve LV-201A over 0-40 % CO expects 75 % travel at CO 30 %, and 100 % at CO 40 %).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from loopdocs.cli import app
from loopdocs.sheets.index_template import write_index_workbook


runner = CliRunner()

CTRL = {"tag": "TIC-101", "service": "Test tank temperature", "platform": "dcs", "signal": "4-20 mA",
        "control_action": "reverse"}


def cool() -> dict:
    """Glycol valve: ATC, closes over CO 0-50 %, positioner 4-12 mA."""
    return {"tag": "TV-101A", "signal": "4-20 mA", "air_action": "ATC", "fail_position": "FO",
            "positioner_action": "direct", "driven_by": "TIC-101", "split_method": "positioner",
            "co_start_pct": 0, "co_end_pct": 50, "travel_start_pct": 100, "travel_end_pct": 0,
            "input_low": 4, "input_high": 12, "input_units": "mA", "effect": "lowers"}


def heat(**changes) -> dict:
    """Hot water valve: ATO, opens over CO 50-100 %, positioner 12-20 mA."""
    return {"tag": "TV-101B", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
            "positioner_action": "direct", "driven_by": "TIC-101", "split_method": "positioner",
            "co_start_pct": 50, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
            "input_low": 12, "input_high": 20, "input_units": "mA", "effect": "raises", **changes}


def staged(boundary: float = 25.0) -> list[dict]:
    """LIC-201 filling a tank through a small then a large valve, each on its own output (dcs)."""
    rows = [{"tag": "LIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}]
    for suffix, cv, (a, b) in zip("AB", (10, 30), [(0, boundary), (boundary, 100)]):
        rows.append({"tag": f"LV-201{suffix}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                     "positioner_action": "direct", "driven_by": "LIC-201", "split_method": "dcs",
                     "co_start_pct": a, "co_end_pct": b, "travel_start_pct": 0, "travel_end_pct": 100,
                     "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises", "cv": cv,
                     "characteristic": "linear", "io_address": f"AO-{suffix}"})
    return rows


TT = {"tag": "TT-1203", "service": "Reactor outlet temperature", "signal": "4-20 mA",
      "range_low": 0, "range_high": 150, "units": "degC"}
PT = {"tag": "PT-1301", "service": "Header pressure", "signal": "4-20 mA", "range_low": 0, "range_high": 10,
      "units": "bar"}
FT = {"tag": "FT-1401", "service": "Feed flow", "signal": "4-20 mA", "range_low": 0, "range_high": 50,
      "units": "m3/h"}
LT = {"tag": "LT-1501", "service": "Day tank level", "signal": "4-20 mA", "range_low": 0, "range_high": 100,
      "units": "%"}

OLD = [TT, PT, FT, CTRL, cool(), heat(), *staged()]
NEW = [{**TT, "range_high": 200}, {**PT, "tag": "PT-1302"}, LT,
       CTRL, cool(), heat(air_action="ATC", fail_position="FO"), *staged(boundary=40)]


@pytest.fixture(scope="module")
def issues(index_files):
    return index_files.write(OLD, "diff_old.xlsx"), index_files.write(NEW, "diff_new.xlsx")


@pytest.fixture(scope="module")
def report(issues):
    result = runner.invoke(app, ["diff", str(issues[0]), str(issues[1]), "--format", "json"])
    assert result.exit_code == 1, result.output
    return json.loads(result.output)


def _fields(report, tag):
    [change] = [c for c in report["changed"] if c["tag"] == tag]
    return {f["column"]: (f["old"], f["new"]) for f in change["fields"]}


def test_json_contract_keys(report):
    assert set(report) == {"added", "removed", "renamed", "changed", "loops", "splits", "calibration"}
    for change in report["changed"]:
        assert set(change) == {"tag", "loop", "fields"}
        assert all(set(f) == {"column", "old", "new", "cell"} for f in change["fields"])
    assert all(set(s) == {"controller", "loop", "what", "old", "new"} for s in report["splits"])
    assert all(set(c) == {"tag", "kind"} for c in report["calibration"])


def test_range_change_on_a_transmitter(report, index_files):
    # 0-150 degC -> 0-200 degC: only the Range High cell changed, the first row given
    assert _fields(report, "TT-1203") == {"Range High": ("150", "200")}
    [change] = [c for c in report["changed"] if c["tag"] == "TT-1203"]
    assert change["fields"][0]["cell"] == _cell(index_files, "range_high", 0)
    assert {"tag": "TT-1203", "kind": "transmitter"} in report["calibration"]


def test_range_change_moves_the_calibration_points(issues):
    # IEC 60381-1: 12 mA (50 %) is 75 degC on 0-150 and 100 degC on 0-200
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.model.loading import load_project

    def mid_input(path):
        tables = calibration_set(load_project(path)[0]).tables
        [table] = [t for t in tables if t.tag == "TT-1203" and t.kind == "transmitter"]
        [point] = [p for p in table.points if p.percent == 50 and p.direction == "up"]
        assert point.output.value == pytest.approx(12.0)
        return point.input.value

    assert mid_input(issues[0]) == pytest.approx(75.0)
    assert mid_input(issues[1]) == pytest.approx(100.0)


def _cell(index_files, key: str, index: int) -> str:
    """The cell of column ``key`` on the ``index``-th row given to the test workbook."""
    sheet, row, letter = index_files.cell(key, index)
    return f"{sheet}!{letter}{row}"


def test_added_removed_and_renamed(report, index_files):
    # each with the cell of its Tag: LT-1501 and PT-1302 in the later issue (3rd and 2nd
    # rows given), FT-1401 in the earlier one (3rd row given)
    assert report["added"] == [{"tag": "LT-1501", "loop": "L-1501", "cell": _cell(index_files, "tag", 2)}]
    assert report["removed"] == [{"tag": "FT-1401", "loop": "F-1401", "cell": _cell(index_files, "tag", 2)}]
    assert report["renamed"] == [{"old": "PT-1301", "new": "PT-1302", "old_loop": "P-1301", "new_loop": "P-1302",
                                  "cell": _cell(index_files, "tag", 1)}]
    named = {c["tag"] for c in report["changed"]}
    # a rename is not also an add, a remove or a change; unchanged tags are not named
    assert not named & {"PT-1301", "PT-1302", "TIC-101", "TV-101A", "LIC-201"}
    assert named == {"TT-1203", "TV-101B", "LV-201A", "LV-201B"}


def test_rename_needs_every_other_cell_equal(index_files):
    from loopdocs.model.changes import compare_projects
    from loopdocs.model.loading import load_project

    old = load_project(index_files.write([PT]))[0]
    new = load_project(index_files.write([{**PT, "tag": "PT-1302", "range_high": 16}]))[0]
    changes = compare_projects(old, new)
    assert not changes.renamed
    assert [t.tag for t in changes.removed] == ["PT-1301"] and [t.tag for t in changes.added] == ["PT-1302"]


def test_air_action_change_changes_the_split_settings(report):
    assert _fields(report, "TV-101B") == {"Air Action": ("ATO", "ATC"), "Fail Position": ("FC", "FO")}
    # ATC with a direct positioner: the opening input runs high to low (common practice)
    assert {"controller": "TIC-101", "loop": "T-101", "what": "TV-101B required input range",
            "old": "12 to 20 mA", "new": "20 to 12 mA"} in report["splits"]
    assert not [s for s in report["splits"] if s["what"].startswith("TV-101A")]
    assert {"tag": "TV-101B", "kind": "fail action"} in report["calibration"]


def test_co_boundary_change_changes_the_loop_check(report, issues):
    assert _fields(report, "LV-201A") == {"CO End %": ("25", "40")}
    assert _fields(report, "LV-201B") == {"CO Start %": ("25", "40")}
    assert {"tag": "LV-201A", "kind": "loop check"} in report["calibration"]
    assert {"tag": "LV-201B", "kind": "loop check"} in report["calibration"]
    assert [s["what"] for s in report["splits"] if s["controller"] == "LIC-201"] == [
        "LV-201A control-system scaling", "LV-201B control-system scaling"]

    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.model.loading import load_project

    tables = calibration_set(load_project(issues[1])[0]).tables
    [check] = [t for t in tables if t.tag == "LV-201A" and t.kind == "loop check"]
    travel = {p.percent: p.output.value for p in check.points if p.direction == "up"}
    # travel = (CO - 0) / (40 - 0) * 100 % on LV-201A's segment (common practice)
    assert travel[30] == pytest.approx(75.0) and travel[40] == pytest.approx(100.0)


def test_the_report_does_not_depend_on_the_order_of_the_rows(report, index_files):
    # The same later issue with its rows in reverse order: the same calibration list (natural
    # tag order, then kind), though the valve that carries each group's loop checks on the
    # sheet (the last in the index) is now the other one.
    reordered = index_files.write(NEW[::-1], "diff_new_reversed.xlsx")
    old = index_files.folder / "diff_old.xlsx"
    result = runner.invoke(app, ["diff", str(old), str(reordered), "--format", "json"])
    assert result.exit_code == 1, result.output
    assert json.loads(result.output)["calibration"] == report["calibration"]
    assert report["calibration"] == sorted(report["calibration"], key=lambda c: (c["tag"], c["kind"]))


def test_loops_affected_in_both_issues(report):
    assert report["loops"] == ["F-1401", "L-201", "L-1501", "P-1301", "P-1302", "T-101", "T-1203"]


def test_same_index_exits_0(issues):
    result = runner.invoke(app, ["diff", str(issues[0]), str(issues[0]), "--format", "json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert all(data[key] == [] for key in data)


def test_terminal_table_names_cells_and_exits_1(issues):
    result = runner.invoke(app, ["diff", str(issues[0]), str(issues[1])], env={"COLUMNS": "200"})
    assert result.exit_code == 1
    text = " ".join(result.stdout.split())
    assert "TT-1203" in text and "Range High" in text and "20 to 12 mA" in text


def test_unreadable_input_exits_2(issues, tmp_path):
    result = runner.invoke(app, ["diff", str(issues[0]), str(tmp_path / "missing.xlsx")])
    assert result.exit_code == 2
    assert "no such file" in result.output


def test_project_folder_against_an_index_file(issues, tmp_path):
    folder = tmp_path / "plant"
    folder.mkdir()
    write_index_workbook(folder / "index.xlsx", NEW, spare_rows=0)
    (folder / "loopdocs.toml").write_text('[title_block]\nproject = "Invented plant"\n', encoding="utf-8")
    same = runner.invoke(app, ["diff", str(issues[1]), str(folder), "--format", "json"])
    assert same.exit_code == 0, same.output
    other = runner.invoke(app, ["diff", str(issues[0]), str(folder), "--format", "json"])
    assert other.exit_code == 1
    assert json.loads(other.output)["renamed"][0]["new"] == "PT-1302"


def test_plain_values():
    from loopdocs.model.changes import plain
    from loopdocs.model.vocab import AirAction

    assert plain(AirAction("ATC")) == "ATC" and plain(200.0) == "200" and plain(None) == ""


def test_change_report_highlights_the_changed_cells(issues, tmp_path, index_files):
    import openpyxl

    from loopdocs.read.columns import COLUMNS
    from loopdocs.sheets.change_report import ADDED_FILL, CHANGED_FILL, REMOVED_FILL

    out = tmp_path / "changes.xlsx"
    result = runner.invoke(app, ["diff", str(issues[0]), str(issues[1]), "--out", str(out)])
    assert result.exit_code == 1, result.output
    book = openpyxl.load_workbook(out)
    listed = [tuple(r) for r in book["Changes"].iter_rows(values_only=True)]
    assert ("changed", "TT-1203", "T-1203", "Range High", "150", "200", _cell(index_files, "range_high", 0)) in listed
    rows = book["Rows"]
    headers = [c.value for c in rows[1]]
    assert headers[: len(COLUMNS)] == [c.header for c in COLUMNS]
    by_tag = {r[0].value: r for r in rows.iter_rows(min_row=2)}
    col = {h: i for i, h in enumerate(headers)}

    def colour(cell):
        return cell.fill.fgColor.rgb[-6:] if cell.fill.fill_type == "solid" else None

    high = by_tag["TT-1203"][col["Range High"]]
    assert high.value == "200" and colour(high) == CHANGED_FILL and high.comment.text == "was: 150"
    assert colour(by_tag["TT-1203"][col["Range Low"]]) is None  # unchanged cell not highlighted
    assert colour(by_tag["TV-101B"][col["Air Action"]]) == CHANGED_FILL
    assert colour(by_tag["PT-1302"][col["Tag"]]) == CHANGED_FILL
    assert colour(by_tag["LT-1501"][col["Units"]]) == ADDED_FILL
    assert colour(by_tag["FT-1401"][col["Tag"]]) == REMOVED_FILL
    assert set(by_tag) == {"TT-1203", "TV-101B", "LV-201A", "LV-201B", "PT-1302", "LT-1501", "FT-1401"}


def test_change_report_never_replaces_an_input(issues):
    result = runner.invoke(app, ["diff", str(issues[0]), str(issues[1]), "--out", str(issues[1])])
    assert result.exit_code == 2 and "is an input" in result.output


def test_calibration_limited_to_touched_tags_finds_the_same_tables(issues):
    # the shortcut (only tags changed and the members of their split groups) against the
    # comparison of every table of both issues
    from loopdocs.calibration.table_changes import changed_tables
    from loopdocs.model.changes import compare_projects
    from loopdocs.model.loading import load_project

    old, new = load_project(issues[0])[0], load_project(issues[1])[0]
    changes = compare_projects(old, new)
    rename = {r.old: r.new for r in changes.renamed}
    assert "TV-101A" in changes.touched and "TIC-101" in changes.touched  # group of the changed TV-101B
    assert "PT-1302" in changes.touched and "FT-1401" not in changes.touched
    assert changed_tables(old, new, rename, changes.touched) == changed_tables(old, new, rename)


# --- only the split groups a change can reach are built -----------------------------------

def _edited(project, *, update=None, drop=(), rename=None, add=None):
    """A copy of ``project`` with cells of some tags changed, tags dropped, one renamed or
    one added (records edited in memory; the comparison reads only ``tags``)."""
    tags = {}
    for name, tag in project.tags.items():
        if name in drop:
            continue
        if update and name in update:
            tag = tag.model_copy(update=update[name])
        if rename and name in rename:
            tag = tag.model_copy(update={"tag": rename[name]})
            name = rename[name]
        tags[name] = tag
    if add:
        for tag in add:
            tags[tag.tag] = tag
    return project.model_copy(update={"tags": tags})


@pytest.mark.parametrize("edit", [
    {"update": {"PV-4120B": {"co_start_pct": 10.0}}},                       # a boundary moves
    {"update": {"TV-5310B": {"driven_by": "TIC-3105"}}},                     # a valve changes group
    {"update": {"PY-4120": {"input_low": 4.0, "input_high": 20.0}}},         # the relay of a group
    {"update": {"LIC-2101": {"control_action": None}}},                      # the controller itself
    {"drop": ("LV-2101B",)},                                                  # a split loses a valve
    {"drop": ("PIC-6201",)},                                                  # a group loses its controller
    {"rename": {"TIC-3105": "TIC-3106"}},                                     # controller renamed, valves still name the old tag
    {"rename": {"PV-6201B": "PV-6201C"}},                                     # a valve renamed
    {"update": {"TT-3105": {"range_high": 45.0}}},                            # no group concerned
])
def test_comparing_only_the_groups_a_change_reaches_gives_the_full_comparison(edit, monkeypatch):
    # A split group is worked out from its own rows only (controller, relays, valves:
    # docs/design.md §4), so building just the groups that a changed, added, removed or
    # renamed tag can reach must give exactly what building every group of both issues
    # gives (the full comparison, made here by ignoring the restriction).
    from loopdocs.model import groups as groups_module
    from loopdocs.model.changes import compare_projects
    from loopdocs.model.loading import load_project

    old = load_project(Path(__file__).resolve().parents[1] / "project_example")[0]
    new = _edited(old, **edit)
    quick = compare_projects(old, new)
    every_group = groups_module.build_groups
    monkeypatch.setattr(groups_module, "build_groups", lambda project, controllers=None: every_group(project))
    full = compare_projects(old, new)
    assert quick == full
    assert quick.any
