"""The bundled example project (an invented brewery) is a valid demo of the template."""

from pathlib import Path

from loopdocs.checks import check_project
from loopdocs.model.vocab import Sensor, Signal

REPO = Path(__file__).resolve().parents[1]


def test_example_covers_every_signal_and_sensor_kind():
    project = check_project(REPO / "project_example").project
    assert {t.signal for t in project.tags.values() if t.signal} == set(Signal)
    assert {t.sensor for t in project.tags.values() if t.sensor} == set(Sensor)
    assert 30 <= len(project.tags) <= 60
    assert 10 <= len(project.loops) <= 14


def test_example_has_no_error_or_warning():
    findings = check_project(REPO / "project_example").findings
    assert [f.as_json() for f in findings if f.severity.value != "info" and f.accepted is None] == []


def test_example_index_matches_its_generator(tmp_path):
    """The committed index.xlsx holds what make_example.py writes (same cell values)."""
    import importlib.util

    import openpyxl

    spec = importlib.util.spec_from_file_location("make_example", REPO / "project_example" / "make_example.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    from loopdocs.sheets.index_template import write_index_workbook

    write_index_workbook(tmp_path / "index.xlsx", module.rows())
    values = lambda p: [tuple(c.value for c in r) for r in openpyxl.load_workbook(p)["Index"].iter_rows()]  # noqa: E731
    assert values(tmp_path / "index.xlsx") == values(REPO / "project_example" / "index.xlsx")
