"""`loopdocs build`: the example package, the cache, an interrupted build, PDF/A
attachments, hostile text in file names, and the command's exit codes.

Only the first fixture builds the whole example (11 loops, once per module); the other
tests build two or three loops.
"""

from __future__ import annotations

import importlib.util
import json
import re
import shutil
from pathlib import Path

import pytest
from pypdf import PdfReader
from typer.testing import CliRunner

from loopdocs.cli import app
from loopdocs.core.names import safe_filename
from loopdocs.model.tagname import parse_tag
from loopdocs.render.builder import CRASH_ENV, LOOPS_DIR, PACKAGE_NAME, BuildError, build
from loopdocs.render.cache import CACHE_DIR_NAME, MANIFEST_NAME
from loopdocs.sheets.index_template import write_index_workbook

REPO = Path(__file__).resolve().parents[1]
EXAMPLE = REPO / "project_example"
runner = CliRunner()


def example_rows() -> list[dict]:
    spec = importlib.util.spec_from_file_location("make_example", EXAMPLE / "make_example.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.rows()


def small_project(folder: Path, loops: tuple[str, ...], edit=None, config_extra: str = "") -> Path:
    """A project of a few example loops (same config as the example)."""
    rows = [dict(r) for r in example_rows() if parse_tag(r["tag"]).loop_id in loops]
    if edit:
        rows = [edit(r) for r in rows]
    folder.mkdir(parents=True, exist_ok=True)
    write_index_workbook(folder / "index.xlsx", rows)
    (folder / "loopdocs.toml").write_text((EXAMPLE / "loopdocs.toml").read_text() + config_extra, encoding="utf-8")
    return folder


def complete_pdf(path: Path) -> int:
    """Page count of a complete PDF (ends with %%EOF and parses strictly)."""
    data = path.read_bytes()
    assert data.rstrip().endswith(b"%%EOF"), path
    return len(PdfReader(path, strict=True).pages)


# --- the example package ----------------------------------------------------------------------

@pytest.fixture(scope="module")
def example_build(tmp_path_factory):
    project = tmp_path_factory.mktemp("example")
    for name in ("index.xlsx", "loopdocs.toml"):
        shutil.copy(EXAMPLE / name, project / name)
    out = project / "out"
    return build(project, out, workers=2)


def test_example_package_has_every_loop_in_order_with_bookmarks(example_build):
    result = example_build
    from loopdocs.checks import check_project

    loops = list(check_project(EXAMPLE).project.loops)
    assert result.rendered and sorted(result.rendered) == sorted(loops) and result.reused == []
    package = PdfReader(result.package, strict=True)
    front_pages = complete_pdf(result.out_dir / CACHE_DIR_NAME / "front-0.pdf")
    sheet_pages = [complete_pdf(result.loop_files[loop]) for loop in loops]
    assert len(package.pages) == result.package_pages == front_pages + sum(sheet_pages)
    marks = [(o.title, package.get_destination_page_number(o)) for o in package.outline]
    assert marks[0] == ("Cover sheet and drawing list", 0)
    expected_start = front_pages
    for (title, page), loop, pages in zip(marks[1:], loops, sheet_pages):
        assert title.split(":")[0] == loop
        assert page == expected_start
        assert f"Loop {loop}" in package.pages[page].extract_text()
        expected_start += pages
    assert len(marks) == 1 + len(loops)


def test_example_package_metadata_and_drawing_list(example_build):
    package = PdfReader(example_build.package)
    meta = package.metadata
    assert meta.title == "Kettle Creek Brewery - brewhouse and utilities revamp: loop sheets"
    assert meta.author == "loopdocs"  # [title_block] drawn, no [sheet] author in the example
    assert "revision A" in meta.subject and f"{len(example_build.loop_files)} sheets" in meta.subject
    assert len(example_build.loop_files) == 13  # the example's 13 loops
    assert "loop sheets" in meta["/Keywords"] and "Brewhouse and utilities" in meta["/Keywords"]
    front = "\n".join(p.extract_text() for p in PdfReader(example_build.out_dir / CACHE_DIR_NAME / "front-0.pdf").pages)
    assert "DRAWING LIST" in front.upper()
    for number, loop in enumerate(example_build.loop_files, start=1):
        assert re.search(rf"\b{number}\s+KCB-LS-{re.escape(loop)}\s+{re.escape(loop)}\b", front), loop


def test_example_sheets_carry_tags_and_calibration_values(example_build):
    text = "\n".join(p.extract_text() for p in PdfReader(example_build.loop_files["L-2101"]).pages)
    # LT-2101 0 to 3200 mm on 4-20 mA: 50 % = 1600 mm -> 12 mA (docs/design.md §6.1: I = 4 + 16 p)
    assert "LT-2101" in text and re.search(r"(?<![\d.])1600\s+12\.000(?!\d)", text)
    per_loop = PdfReader(example_build.loop_files["T-3105"])
    assert per_loop.metadata.title == "KCB-LS-T-3105 loop T-3105"
    assert per_loop.metadata.author == "loopdocs"


# --- the cache ---------------------------------------------------------------------------------

LOOPS3 = ("T-3110", "T-7401", "L-2105")


def test_cache_rerenders_only_the_changed_loop(tmp_path):
    project = small_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    first = build(project, out, workers=2)
    assert sorted(first.rendered) == sorted(LOOPS3) and first.package_pages
    package_mtime = (out / PACKAGE_NAME).stat().st_mtime_ns

    again = build(project, out, workers=2)
    assert again.rendered == [] and sorted(again.reused) == sorted(LOOPS3)
    assert not again.front_rendered and again.package_pages is None
    assert (out / PACKAGE_NAME).stat().st_mtime_ns == package_mtime  # package left as it was

    def rename(row):
        if row["tag"] == "TT-7401A":
            row["service"] = "Renamed service"
        return row

    small_project(project, LOOPS3, edit=rename)
    changed = build(project, out, workers=2)
    assert changed.rendered == ["T-7401"] and sorted(changed.reused) == ["L-2105", "T-3110"]
    assert changed.package_pages == complete_pdf(out / PACKAGE_NAME)
    assert "Renamed service" in PdfReader(changed.loop_files["T-7401"]).pages[0].extract_text()

    forced = build(project, out, workers=1, force=True)
    assert sorted(forced.rendered) == sorted(LOOPS3)


def test_selection_builds_only_the_named_loops_and_leaves_the_package(tmp_path):
    project = small_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    result = build(project, out, loops=["t-3110"], workers=2)
    assert result.rendered == ["T-3110"] and result.package is None
    assert not (out / PACKAGE_NAME).exists()
    assert complete_pdf(result.loop_files["T-3110"]) >= 1
    # the sheet keeps its place in the whole set
    assert "2 of 3" in PdfReader(result.loop_files["T-3110"]).pages[0].extract_text()


# --- an interrupted build --------------------------------------------------------------------

def test_worker_killed_mid_write_leaves_no_partial_file(tmp_path, monkeypatch):
    project = small_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    build(project, out, workers=2)
    before = {loop: (out / LOOPS_DIR / f"{loop}.pdf").read_bytes() for loop in LOOPS3}

    # every sheet changes (new date), and the worker rendering T-3110 dies half-way
    # through writing its PDF (os._exit: no cleanup runs in that process)
    config = project / "loopdocs.toml"
    config.write_text(config.read_text().replace('date = "2026-12-01"', 'date = "2026-12-24"', 1))
    monkeypatch.setenv(CRASH_ENV, "T-3110")
    with pytest.raises(BuildError, match="died"):
        build(project, out, workers=2)

    leftovers = [p.name for p in out.rglob("*") if p.name.endswith(".part")]
    assert leftovers == []
    for pdf in (out / LOOPS_DIR).glob("*.pdf"):
        complete_pdf(pdf)
    assert (out / LOOPS_DIR / "T-3110.pdf").read_bytes() == before["T-3110"]  # the old sheet, whole

    monkeypatch.delenv(CRASH_ENV)
    resumed = build(project, out, workers=2)
    assert "T-3110" in resumed.rendered
    assert set(resumed.rendered) | set(resumed.reused) == set(LOOPS3)
    assert "2026-12-24" in PdfReader(out / LOOPS_DIR / "T-3110.pdf").pages[0].extract_text()


# --- PDF/A-3b with the records attached -------------------------------------------------------

def test_pdfa_sheets_carry_their_records(tmp_path):
    project = small_project(tmp_path / "p", ("T-3110", "T-3105"))
    result = build(project, tmp_path / "out", workers=2, pdfa=True)
    sheet = PdfReader(result.loop_files["T-3105"])
    assert b"pdfaid:part" in sheet.trailer["/Root"]["/Metadata"].get_object().get_data()
    record = json.loads(sheet.attachments["T-3105.json"][0])
    assert record["loop"]["id"] == "T-3105"
    assert {t["tag"] for t in record["tags"]} >= {"TT-3105", "TIC-3105", "TV-3105A", "TV-3105B"}
    assert any(c["tag"] == "TT-3105" and c["kind"] == "transmitter" for c in record["calibration"])
    package = PdfReader(result.package)
    assert set(package.attachments) == {"T-3105.json", "T-3110.json"}
    # in the package each record is associated with the first page of its own sheet
    for outline in package.outline[1:]:
        page = package.pages[package.get_destination_page_number(outline)]
        loop = outline.title.split(":")[0]
        assert page["/AF"][0].get_object()["/F"] == f"{loop}.json"


# --- hostile text ------------------------------------------------------------------------------

def test_markup_and_paths_in_the_index_stay_text_and_file_names_stay_safe(tmp_path):
    rows = [
        {"tag": "TT-901", "loop": "../../etc/passwd", "service": "<script>alert(1)</script> <b>hot</b>",
         "signal": "4-20 mA", "range_low": 0, "range_high": 100, "units": "degC"},
        {"tag": "TT-902", "loop": "<b>CON</b>", "service": "plain", "signal": "4-20 mA",
         "range_low": 0, "range_high": 10, "units": "barg"},
    ]
    project = tmp_path / "p"
    project.mkdir()
    write_index_workbook(project / "index.xlsx", rows)
    (project / "loopdocs.toml").write_text('[title_block]\nproject = "P"\n', encoding="utf-8")
    out = tmp_path / "out"
    result = build(project, out, workers=1)
    files = sorted(p.relative_to(out).as_posix() for p in out.rglob("*.pdf"))
    assert files == sorted([".loopdocs-cache/front-0.pdf", PACKAGE_NAME,
                            f"loops/{safe_filename('../../etc/passwd')}.pdf", f"loops/{safe_filename('<b>CON</b>')}.pdf"])
    assert not (tmp_path / "etc").exists()
    for path in result.loop_files.values():
        assert path.parent == out / LOOPS_DIR and re.fullmatch(r"[A-Za-z0-9._-]+", path.name)
    text = PdfReader(result.loop_files["../../etc/passwd"]).pages[0].extract_text()
    assert "<script>alert(1)</script> <b>hot</b>" in text and "../../etc/passwd" in text
    assert "<b>CON</b>" in "\n".join(p.extract_text() for p in PdfReader(result.package).pages)


# --- the command -------------------------------------------------------------------------------

def test_build_command_exit_codes(tmp_path):
    missing = runner.invoke(app, ["build", str(tmp_path / "nothing"), "--out", str(tmp_path / "o")])
    assert missing.exit_code == 2 and "no such file" in missing.output
    project = small_project(tmp_path / "p", ("T-3110",))
    unknown = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--loop", "X-1"])
    assert unknown.exit_code == 2 and "no loop X-1" in unknown.output
    bad = small_project(tmp_path / "bad", ("T-3110",), config_extra='\n[sheet.release_with_errors]\n"T-3110" = ""\n')
    assert runner.invoke(app, ["build", str(bad), "--out", str(tmp_path / "o")]).exit_code == 2
    ok = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--workers", "1"])
    assert ok.exit_code == 0, ok.output
    assert "1 sheet(s) rendered" in ok.output and (tmp_path / "o" / PACKAGE_NAME).is_file()
    assert json.loads((tmp_path / "o" / CACHE_DIR_NAME / MANIFEST_NAME).read_text())["loops"]["T-3110"]["file"] == "loops/T-3110.pdf"


def test_build_command_exits_1_and_marks_sheets_when_errors_remain(tmp_path):
    def break_fail_position(row):
        if row["tag"] == "FV-1201":
            row["fail_position"] = "FO"  # ATO with FO: spring-return contradiction (docs/design.md §5.7)
        return row

    project = small_project(tmp_path / "p", ("F-1201",), edit=break_fail_position)
    result = runner.invoke(app, ["build", str(project), "--out", str(tmp_path / "o"), "--workers", "1"])
    from loopdocs.checks import check_project

    if not any(f.counts_as_error for f in check_project(project).findings):
        pytest.skip("the valve checks are not in this tree yet")
    assert result.exit_code == 1
    text = " ".join(PdfReader(tmp_path / "o" / LOOPS_DIR / "F-1201.pdf").pages[0].extract_text().split())
    assert "NOT FOR CONSTRUCTION" in text
