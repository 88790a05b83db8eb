"""The faster paths of ``check`` give what the plain paths give.

- Records made from converted cells without a second validation
  (``model.records.tag_from_converted``, ``loop_from_converted``) against pydantic (a
  general-purpose validation library) validating the same values into a ``Tag``, a ``Loop``;
- the parse started before the command line is read, against openpyxl's cells;
- valves of one set-up worked out once (``model.groups``), against building each alone.
"""

from __future__ import annotations

from pathlib import Path

from openpyxl import Workbook

from loopdocs.model.from_rows import build_project
from loopdocs.model.records import Loop, Tag
from loopdocs.read import read_index

HEADER = [
    "Tag", "Loop", "Service", "Signal", "Range Low", "Range High", "Units", "Air Action", "Fail Position",
    "Driven By", "CO Start %", "CO End %", "Cv", "Characteristic", "Accessories", "IO Address", "JB",
    "Accuracy %", "Site Memo",
]


def _workbook(path: Path, rows) -> Path:
    book = Workbook()
    sheet = book.active
    for row in rows:
        sheet.append(row)
    book.save(path)
    return path


def test_records_are_what_pydantic_validates_from_the_same_values(tmp_path: Path):
    # Numbers as numbers and as text, vocabulary in other spellings, an accessory list,
    # a number in a free-text column (JB 31), a blank Loop, a Loop that disagrees, a column
    # the template does not know, and a cell that does not convert (reported, left blank).
    rows = [
        HEADER,
        ["TIC-3105", None, "Fermenter 5 jacket", "4-20 mA", 0, 40, "degC", None, None, None, None, None, None,
         None, None, "CAB2-R1-S04-CH03", 31, "0.25", "north wall"],
        ["TV-3105A", "T-3105", "cooling", "4-20 mA HART", None, None, None, "air to open", "fc", "tic-3105",
         "0", "50 %", "25", "Equal Percentage", "SOV, open/closed limit switches", None, "JB-07", None, None],
        ["TV-3105B", "T-3106", None, None, None, None, None, "ATC", "FO", "TIC-3105", 50, 100, 12.5, "linear",
         None, None, None, None, ""],
        ["PT-4120", None, "Brite tank", "4-20 mA", "-1", "6", "barg", None, None, None, None, None, "ten",
         None, None, None, None, 0.5, None],
    ]
    project, findings = build_project(read_index(_workbook(tmp_path / "index.xlsx", rows)))
    # common practice: a word in a numeric column is reported and read as blank
    assert [f.rule for f in findings if f.tags == ("PT-4120",)] == ["index.not-a-number"]
    assert set(project.tags) == {"TIC-3105", "TV-3105A", "TV-3105B", "PT-4120"}
    for record in project.tags.values():
        given = {name: getattr(record, name) for name in record.model_fields_set}
        validated = Tag(**given)
        assert record == validated
        assert record.model_fields_set == validated.model_fields_set
        assert list(record.__dict__) == list(validated.__dict__)
        assert [type(v) for v in record.__dict__.values()] == [type(v) for v in validated.__dict__.values()]
        assert record.model_dump_json() == validated.model_dump_json()
    for loop in project.loops.values():
        validated_loop = Loop(**{name: getattr(loop, name) for name in loop.model_fields_set})
        assert loop == validated_loop and loop.model_fields_set == validated_loop.model_fields_set
        assert loop.model_dump_json() == validated_loop.model_dump_json()
    assert project.loops["T-3105"].tags == ("TIC-3105", "TV-3105A") and project.loops["T-3105"].service == "Fermenter 5 jacket"
    valve = project.tags["TV-3105A"]
    assert valve.co_end_pct == 50.0 and type(valve.cv) is float and valve.driven_by == "TIC-3105"
    assert len(valve.accessories) == 3 and project.tags["TIC-3105"].jb == "31"
    assert project.tags["TIC-3105"].extra == {"Site Memo": "north wall"}
    assert project.tags["PT-4120"].cv is None and project.tags["PT-4120"].range_low == -1.0


def test_a_parse_started_before_the_command_line_is_taken_over_by_the_read(tmp_path: Path):
    # The cells against openpyxl (a general-purpose spreadsheet library) reading the same file.
    from openpyxl import load_workbook

    from loopdocs.read import background

    rows = [HEADER[:7], ["TT-3105", "T-3105", "Fermenter 5", "4-20 mA", 0, 40, "degC"],
            ["PT-4120", None, "Brite tank", "4-20 mA", -1, 6, "barg"]]
    path = _workbook(tmp_path / "index.xlsx", rows)
    other = _workbook(tmp_path / "other.xlsx", rows[:2])
    background.parse_ahead(str(other))  # for another file: waits for its own claim (diff's two workbooks)
    background.parse_ahead(str(path))
    made: list[Path] = []
    original = background._FirstSheet.__init__

    def counting(self, p):
        made.append(p)
        original(self, p)

    background._FirstSheet.__init__ = counting
    try:
        _, _, table = background.start_reading(path).result()
        assert [ahead.path for ahead in background._STARTED] == [other]
        _, _, other_table = background.start_reading(other).result()
    finally:
        background._FirstSheet.__init__ = original
    assert made == [] and background._STARTED == []
    assert [row.values["tag"] for row in other_table.rows] == ["TT-3105"]
    expected = [list(r) for r in load_workbook(path, read_only=True).active.iter_rows(min_row=2, values_only=True)]
    got = [[row.values.get(k) for k in ("tag", "loop", "service", "signal", "range_low", "range_high", "units")]
           for row in table.rows]
    assert got == expected
    background.parse_ahead(str(tmp_path / "missing.xlsx"))  # not a file: nothing started
    background.parse_ahead(str(tmp_path))
    assert background._STARTED == []


def test_valves_of_one_set_up_share_their_working_but_keep_their_own_record(tmp_path: Path):
    # Valves with the same set-up (positioner split, ATO, CO 0 to 50 %), two in split groups
    # and two alone, one of those with a "-0" CO Start, and valves of another set-up; each
    # element against building it alone.
    from loopdocs.model import groups

    header = ["Tag", "Signal", "Air Action", "Fail Position", "Driven By", "Split Method", "CO Start %", "CO End %",
              "Input Low", "Input High", "Input Units"]
    rows = [header, ["TIC-3105", "4-20 mA", None, None, None, None, None, None, None, None, None],
            ["TIC-3106", "4-20 mA", None, None, None, None, None, None, None, None, None]]
    singles = (("TV-3104", "TIC-3104", 0), ("TV-3107", "TIC-3107", "-0"))
    for tag, driver, co_start in (("TV-3105A", "TIC-3105", 0), ("TV-3106A", "TIC-3106", 0), *singles):
        rows.append([tag, "4-20 mA", "ATO", "FC", driver, "positioner", co_start, 50, 4, 12, "mA"])
    rows.append(["TV-3105B", "4-20 mA", "ATC", "FO", "TIC-3105", "positioner", 50, 100, 12, 20, "mA"])
    rows.append(["TV-3106B", "4-20 mA", "ATC", "FO", "TIC-3106", "positioner", 50, 100, 12, 20, "mA"])
    rows.append(["TV-3109", "4-20 mA", "ATC", "FO", "TIC-3109", "positioner", 0, 50, 4, 12, "mA"])  # air only differs
    project, _ = build_project(read_index(_workbook(tmp_path / "index.xlsx", rows)))
    built = groups.build_groups(project)
    elements = {e.tag: (g, e) for g in built for e in g.elements}
    assert set(elements) == {"TV-3104", "TV-3105A", "TV-3105B", "TV-3106A", "TV-3106B", "TV-3107", "TV-3109"}
    for tag, (group, element) in elements.items():
        alone = groups._build_element(
            element.record, element.method, None, len(group.elements) == 1, group.controller_record, None)
        assert element.record is project.tags[tag]
        assert {k: v for k, v in vars(element).items() if k != "assumptions"} == \
            {k: v for k, v in vars(alone).items() if k != "assumptions"}
        assert element.assumptions == alone.assumptions
    # each has its own assumptions (a change to one reaches no other)
    assert elements["TV-3105A"][1].assumptions is not elements["TV-3106A"][1].assumptions
    # common practice: a positioner split over half the controller output on 4-20 mA is
    # calibrated 4 to 12 mA (ATO, opening as CO rises) and 12 to 20 mA for the second half
    assert elements["TV-3105A"][1].required_input_range == (4.0, 12.0)
    assert elements["TV-3106B"][1].required_input_range == (12.0, 20.0)
    assert str(elements["TV-3104"][1].co_start_pct) == "0.0" and str(elements["TV-3107"][1].co_start_pct) == "-0.0"


def test_diff_parses_both_workbooks_ahead_and_reads_them_whole(tmp_path: Path):
    # ``loopdocs diff OLD NEW``: both workbooks start parsing before the command line is
    # taken; the comparison reads each from its own parse. The cells against openpyxl.
    from openpyxl import load_workbook

    from loopdocs.cli import _parse_index_ahead
    from loopdocs.read import background

    rows = [HEADER[:7], ["TT-3105", "T-3105", "Fermenter 5", "4-20 mA", 0, 40, "degC"]]
    old = _workbook(tmp_path / "old.xlsx", rows)
    new = _workbook(tmp_path / "new.xlsx", rows + [["PT-4120", None, "Brite tank", "4-20 mA", -1, 6, "barg"]])
    _parse_index_ahead(["diff", str(old), str(new), "--format", "json"])
    assert sorted(ahead.path for ahead in background._STARTED) == sorted([old, new])
    tables = [background.start_reading(p).result(scan_formulas=False)[2] for p in (old, new)]
    assert background._STARTED == []
    for path, table in zip((old, new), tables):
        expected = [list(r) for r in load_workbook(path, read_only=True).active.iter_rows(min_row=2, values_only=True)]
        got = [[row.values.get(k) for k in ("tag", "loop", "service", "signal", "range_low", "range_high", "units")]
               for row in table.rows]
        assert got == expected
    _parse_index_ahead(["diff", str(old)])  # one workbook where two are taken: nothing started
    assert background._STARTED == []
