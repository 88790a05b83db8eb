"""``loopdocs.model.changed_rows``: a comparison of two issues of the index made on the rows
it needs only must say exactly what the comparison of every row says.

The reference here is the full comparison itself (every row of both issues turned into
records, every split group built, every calibration table compared: the path ``loopdocs
diff`` took before rows were cut), on the example project and on random edits of it of
every kind an engineer makes: a cell changed, a number typed as text or as TRUE, a tag
renamed, a Driven By moved to another controller, a row deleted, copied, added or moved.
"""

from __future__ import annotations

import copy
from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import given, settings as hyp_settings
from hypothesis import strategies as st

from loopdocs.calibration.table_changes import changed_tables
from loopdocs.commands.diff import diff_json
from loopdocs.model.changed_rows import rows_to_compare
from loopdocs.model.changes import compare_projects
from loopdocs.model.from_rows import build_project
from loopdocs.model.tagname import compile_tag_pattern
from loopdocs.read.background import read_project
from loopdocs.read.table import IndexRow

EXAMPLE = Path(__file__).resolve().parents[1] / "project_example"
PATTERN = compile_tag_pattern()
#: A project's own grammar where the number is not always the tag's last digits (a suffix
#: may hold a digit: TV-3105B2 is in loop T-3105): every tag is parsed to find its loop.
OWN_GRAMMAR = r"(?P<letters>[A-Z]{1,6})-(?P<number>[0-9]{2,6})(?P<suffix>[A-Z][0-9]?)?"


@pytest.fixture(scope="module")
def example_table():
    return read_project(EXAMPLE)[2]


def _diff(old_table, new_table, grammar: str | None = None) -> dict:
    """What ``loopdocs diff`` reports (its JSON) for two tables as given, read with the tag
    grammar ``grammar`` (default: the default one)."""
    from loopdocs.read.project_file import ProjectConfig

    config = ProjectConfig.model_validate({"index": {"tag_pattern": grammar}})
    before, after = build_project(old_table, config)[0], build_project(new_table, config)[0]
    changes = compare_projects(before, after)
    calibration = changed_tables(before, after, {r.old: r.new for r in changes.renamed}, changes.touched)
    return diff_json(changes, calibration, before, after)


def _tags(table) -> list[str]:
    return [row.values["tag"] for row in table.rows]


def _with(table, edits):
    """A copy of ``table`` with ``edits`` applied: (row index, column key, new value), a
    value of None blanks the cell."""
    rows = copy.deepcopy(table.rows)
    for index, key, value in edits:
        if value is None:
            rows[index].values.pop(key, None)
        else:
            rows[index].values[key] = value
    return replace(table, rows=rows)


def test_an_edit_keeps_its_loop_and_split_group_whole(example_table):
    # PV-4120B's CO start moves: the rows kept are the whole of loop P-4120 (transmitter,
    # controller, I/P and the three valves of its split group), in both issues, in order.
    index = _tags(example_table).index("PV-4120B")
    new = _with(example_table, [(index, "co_start_pct", 12)])
    old_cut, new_cut = rows_to_compare(example_table, new, PATTERN)
    group = ["PT-4120", "PIC-4120", "PY-4120", "PV-4120A", "PV-4120B", "PV-4120C"]
    assert _tags(old_cut) == group and _tags(new_cut) == group
    assert _diff(old_cut, new_cut) == _diff(example_table, new)


def test_a_driven_by_moved_keeps_both_groups(example_table):
    # TV-5310B moved from TIC-5310 to TIC-3105: both controllers' groups and loops are kept.
    index = _tags(example_table).index("TV-5310B")
    new = _with(example_table, [(index, "driven_by", "TIC-3105")])
    old_cut, new_cut = rows_to_compare(example_table, new, PATTERN)
    assert {"TIC-3105", "TV-3105A", "TV-3105B", "TE-3105", "TIC-5310", "TV-5310A", "TV-5310B"} <= set(_tags(new_cut))
    assert "LIC-2101" not in _tags(new_cut)
    assert _diff(old_cut, new_cut) == _diff(example_table, new)


def test_the_same_issue_keeps_no_row(example_table):
    old_cut, new_cut = rows_to_compare(example_table, copy.deepcopy(example_table), PATTERN)
    assert old_cut.rows == [] and new_cut.rows == []


def test_a_number_written_as_true_is_a_change(example_table):
    # In Python 1 == True, but a TRUE cell is not the number 1 (the model reports it as not a
    # number): the rows compare value and type.
    index = next(i for i, row in enumerate(example_table.rows) if row.values.get("range_low") == 0)
    tag = example_table.rows[index].values["tag"]
    old = _with(example_table, [(index, "range_low", 1)])
    new = _with(example_table, [(index, "range_low", True)])
    old_cut, new_cut = rows_to_compare(old, new, PATTERN)
    assert tag in _tags(new_cut)
    report = _diff(old_cut, new_cut)
    assert report == _diff(old, new)
    assert [c["tag"] for c in report["changed"]] == [tag]


def test_rows_sorted_another_way_are_compared_whole(example_table):
    # Which element of a split group is last in the index decides which carries the loop
    # checks: with the shared rows in another order nothing is cut.
    new = replace(example_table, rows=list(reversed(copy.deepcopy(example_table.rows))))
    old_cut, new_cut = rows_to_compare(example_table, new, PATTERN)
    assert len(old_cut.rows) == len(new_cut.rows) == len(example_table.rows)
    assert _diff(old_cut, new_cut) == _diff(example_table, new)


# --- random edits: the cut comparison against the full one ---------------------------------

_VALUES = st.one_of(
    st.sampled_from([0, 1, 4, 12, 20, 50, 100, 150, "12", " 20 ", True, "ATO", "ATC", "FC", "FO", "direct",
                     "reverse", "positioner", "dcs", "pneumatic", "mA", "degC", "3-15 psig", "4-20 mA", None]),
    st.floats(min_value=-50, max_value=250, allow_nan=False),
)
_KEYS = ["tag", "loop", "driven_by", "range_low", "range_high", "units", "air_action", "fail_position",
         "positioner_action", "split_method", "co_start_pct", "co_end_pct", "travel_start_pct",
         "travel_end_pct", "input_low", "input_high", "input_units", "signal", "service", "cv", "io_address"]


@st.composite
def edited_issue(draw, table):
    """``table`` after 1 to 4 random edits of rows (see the module docstring)."""
    rows = copy.deepcopy(table.rows)
    tags = [row.values["tag"] for row in rows]
    controllers = [t for t in tags if "IC" in t]
    for _ in range(draw(st.integers(1, 4))):
        kind = draw(st.sampled_from(["cell", "cell", "cell", "driven_by", "rename", "delete", "copy", "add", "move"]))
        index = draw(st.integers(0, len(rows) - 1))
        row = rows[index]
        if kind == "cell":
            key = draw(st.sampled_from(_KEYS[1:]))
            value = draw(_VALUES)
            if value is None:
                row.values.pop(key, None)
            else:
                row.values[key] = value
        elif kind == "driven_by":
            row.values["driven_by"] = draw(st.sampled_from(controllers + ["PY-4120", "XX-1"]))
        elif kind == "rename":
            row.values["tag"] = draw(st.sampled_from([f"{row.values['tag']}X", "TV-3105C", "PIC-4121", "tic-3105"]))
        elif kind == "delete" and len(rows) > 2:
            del rows[index]
        elif kind == "copy":  # the same tag on two rows: the first is kept, the second reported
            rows.insert(draw(st.integers(0, len(rows))), copy.deepcopy(row))
        elif kind == "add":
            added = copy.deepcopy(row)
            added.values["tag"] = draw(st.sampled_from(["TV-3105C", "PV-4120D", "FT-1202", "LV-2101C", "TV-3105B2"]))
            rows.insert(draw(st.integers(0, len(rows))), added)
        elif kind == "move":
            rows.insert(draw(st.integers(0, len(rows) - 1)), rows.pop(index))
    for number, row in enumerate(rows):
        rows[number] = IndexRow(number + 2, row.values, row.extra)
    return replace(table, rows=rows)


@hyp_settings(max_examples=120, deadline=None)
@given(data=st.data())
def test_random_edits_cut_and_full_comparisons_agree(example_table, data):
    new = data.draw(edited_issue(example_table))
    for old_issue, new_issue in ((example_table, new), (new, example_table)):
        old_cut, new_cut = rows_to_compare(old_issue, new_issue, PATTERN)
        assert _diff(old_cut, new_cut) == _diff(old_issue, new_issue)


@hyp_settings(max_examples=60, deadline=None)
@given(data=st.data())
def test_random_edits_with_a_projects_own_tag_grammar(example_table, data):
    new = data.draw(edited_issue(example_table))
    for old_issue, new_issue in ((example_table, new), (new, example_table)):
        old_cut, new_cut = rows_to_compare(old_issue, new_issue, compile_tag_pattern(OWN_GRAMMAR))
        assert _diff(old_cut, new_cut, OWN_GRAMMAR) == _diff(old_issue, new_issue, OWN_GRAMMAR)


def test_a_suffix_with_a_digit_stays_in_its_loop(example_table):
    # Under the project's grammar TT-3105B2 (a second transmitter, in both issues, unchanged,
    # driven by nothing) belongs to loop T-3105: a change to TT-3105 keeps it, found by
    # parsing every tag, not by the tag's last digits, which are "2".
    index = _tags(example_table).index("TT-3105")
    second = copy.deepcopy(example_table.rows[index])
    second.values["tag"] = "TT-3105B2"
    old = replace(example_table, rows=[*copy.deepcopy(example_table.rows), second])
    new = _with(old, [(index, "range_high", 95)])
    for grammar in (OWN_GRAMMAR, None):
        old_cut, new_cut = rows_to_compare(old, new, compile_tag_pattern(grammar))
        loop = {"TE-3105", "TT-3105", "TIC-3105", "TV-3105A", "TV-3105B"}
        if grammar is not None:  # under the default grammar TT-3105B2 does not parse: no record
            loop.add("TT-3105B2")
        assert loop <= set(_tags(old_cut)) and loop <= set(_tags(new_cut))
        assert _diff(old_cut, new_cut, grammar) == _diff(old, new, grammar)


def test_issues_with_different_tag_grammars_are_compared_whole(tmp_path, monkeypatch):
    # Two project folders whose loopdocs.toml differ only in the title block (as two issues
    # do: another date) are cut as usual; a different tag grammar reads the same row as
    # another tag, so those are compared row by row in full.
    import shutil

    from loopdocs.model import changed_rows
    from loopdocs.model.loading import load_pair

    old, new = tmp_path / "old", tmp_path / "new"
    for folder in (old, new):
        shutil.copytree(EXAMPLE, folder, ignore=shutil.ignore_patterns("out"))
    toml = new / "loopdocs.toml"
    text = toml.read_text(encoding="utf-8")
    toml.write_text(text.replace('date = "2026-12-01"', 'date = "2026-12-08"', 1), encoding="utf-8")
    before, after = load_pair(old, new)  # every row equal: none kept
    assert before.tags == {} and after.tags == {}
    toml.write_text(text.replace('[index]\n', f'[index]\ntag_pattern = {OWN_GRAMMAR!r}\n', 1), encoding="utf-8")
    monkeypatch.setattr(changed_rows, "rows_to_compare", lambda *a: pytest.fail("rows were cut"))
    before, after = load_pair(old, new)
    assert len(before.tags) == len(after.tags) == 46



def test_a_loop_cell_that_names_another_loop_keeps_its_tag_there(example_table):
    # TY-3199's Loop cell says T-3105, which disagrees with its tag: the engineer's grouping
    # is kept (loop T-3105), so a change to TT-3105 keeps TY-3199 too, in both issues.
    index = _tags(example_table).index("TT-3105")
    extra = IndexRow(0, {"tag": "TY-3199", "loop": "T-3105", "service": "Spare converter"})
    old = replace(example_table, rows=[*copy.deepcopy(example_table.rows), extra])
    new = _with(old, [(index, "range_high", 95)])
    old_cut, new_cut = rows_to_compare(old, new, PATTERN)
    assert "TY-3199" in _tags(old_cut) and "TY-3199" in _tags(new_cut)
    assert _diff(old_cut, new_cut) == _diff(old, new)
