"""Speed and memory of ``loopdocs build`` on a generated index (issue 6 targets).

For each N (loops) the generated index of ``make_index.write_index(path, N, seed)`` is
written once to ``benchmarks/out/build_N/index.xlsx``. Each measurement runs ``build()``
in a fresh interpreter (``python -c``) so that import time, memory and pool start-up are
those of a real command; the child prints its own figures as JSON:

- full build with 2 workers (empty output folder): wall time, time per sheet;
- full build with 1 worker: the speed-up of 2 workers over 1 (target >= 1.7);
- rebuild after changing one loop (the Service cell of one transmitter, edited with
  openpyxl into a copy of the index; each repeat edits one more loop, so each rebuild
  sees exactly one changed loop), 2 workers, on the output of the full build: wall time (median of the repeats) and sheets re-rendered
  (target: 1 sheet, at most 2 % of the full build: issue 14 target 4; issue 6 asked under 5 %);
- peak resident memory: the build process (``ru_maxrss`` of itself) and the largest
  worker (``ru_maxrss`` of its waited-for children), at every N (target under 500 MB
  and not growing with N);
- per sheet, in one fresh interpreter: the processor time a worker spends on a sheet
  (``render_job``: drawing, HTML, PDF, write, join fragment) against weasyprint alone
  rendering that sheet's finished HTML (``HTML(string=...).write_pdf()``, a new font
  configuration and stylesheet parse each time, as weasyprint does by default), the two
  alternating sheet by sheet, medians and the ratio of the totals (issue 14 target 3:
  at most 1.2).

Every build runs from a copy of ``loopdocs/`` and ``symbols/`` taken at the start (the
cache keys hash the source code). The machine's cores are shared: the figures are wall
times of one run each for the full builds and medians for the rebuilds. Run:
``.venv/bin/python benchmarks/bench_build.py --loops 100 300 3000 [--repeat 3] [--skip-one-worker 3000]``.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
OUT = HERE / "out"
VENV_PYTHON = ROOT / ".venv" / "bin" / "python"
PYTHON = str(VENV_PYTHON) if VENV_PYTHON.exists() else sys.executable

CHILD = """
import json, resource, sys, time
from pathlib import Path
started = time.perf_counter()
from loopdocs.render.builder import build
index, out, workers = Path(sys.argv[1]), Path(sys.argv[2]), int(sys.argv[3])
result = build(index, out, workers=workers)
wall = time.perf_counter() - started
print(json.dumps({
    "wall_s": wall,
    "build_s": result.seconds,
    "rendered": len(result.rendered),
    "reused": len(result.reused),
    "source": str(Path(__import__("loopdocs").__file__).parent),
    "package_pages": result.package_pages,
    "render_s": sorted(result.render_seconds.values()),
    "main_peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
    "worker_peak_mb": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024,
}))
"""


SNAPSHOT = OUT / "snapshot"
BEFORE = OUT / "snapshot_before"

PER_SHEET = """
import json, statistics, sys, time
from pathlib import Path
from loopdocs.checks import check_project
from loopdocs.read.project_file import locate
from loopdocs.render import builder
from loopdocs.render.pieces import loop_findings
from loopdocs.render.settings import sheet_settings
from loopdocs.render.sheet import TEMPLATES_DIR, SheetFrame, print_zoom, sheet_html
import weasyprint

index, out, count = Path(sys.argv[1]), Path(sys.argv[2]), int(sys.argv[3])
paths = locate(index)
checked = check_project(index)
project = checked.project
settings = sheet_settings(project.config.sheet, paths.config_file)
found = loop_findings(checked.findings, project)
loops = list(project.loops)
step = max(1, len(loops) // count)
chosen = loops[::step][:count]
out.mkdir(parents=True, exist_ok=True)
(out / "fragments").mkdir(exist_ok=True)
if hasattr(builder, "splits_by_loop"):  # this tree
    from loopdocs.render.pdf import warm_up
    builder._init_worker(checked, settings, paths.folder, False, builder.splits_by_loop(builder._splits(checked)),
                         out / "fragments")
else:  # a tree from before issue 14
    warm_up = builder._warm_up
    builder._init_worker(checked, settings, paths.folder, False)
warm_up()
base = str(TEMPLATES_DIR.resolve()) + "/"
zoom = print_zoom(settings)
worker, alone = [], []
for i, loop_id in enumerate(chosen):
    number = loops.index(loop_id) + 1
    job = builder.Job(loop_id, number, len(loops), out / f"sheet-{i}.pdf", "k", tuple(found[loop_id]))
    pieces, _ = builder._pieces(job)
    html = sheet_html(pieces, SheetFrame(project.config.title_block, settings, number, len(loops)))

    def ours():
        t = time.process_time(); builder.render_job(job); worker.append(time.process_time() - t)

    def theirs():
        t = time.process_time()
        weasyprint.HTML(string=html, base_url=base).write_pdf(zoom=zoom)
        alone.append(time.process_time() - t)

    for run in ((ours, theirs) if i % 2 == 0 else (theirs, ours)):
        run()
print(json.dumps({"sheets": len(chosen), "worker_s": worker, "alone_s": alone}))
"""


def per_sheet(index: Path, out: Path, count: int, tree: Path = SNAPSHOT) -> dict:
    """Worker CPU per sheet against weasyprint alone on the same HTML (fresh interpreter)."""
    env, cwd = _tree_env(tree)
    done = subprocess.run([PYTHON, "-c", PER_SHEET, str(index), str(out), str(count)],
                          capture_output=True, text=True, cwd=cwd, env=env)
    if done.returncode != 0:
        raise SystemExit(f"per-sheet run failed:\n{done.stderr[-3000:]}")
    figures = json.loads(done.stdout.strip().splitlines()[-1])
    figures["worker_median_s"] = statistics.median(figures["worker_s"])
    figures["alone_median_s"] = statistics.median(figures["alone_s"])
    figures["ratio"] = sum(figures["worker_s"]) / sum(figures["alone_s"])
    return figures


def index_for(n_loops: int, seed: int = 0) -> Path:
    """The generated index for ``n_loops``, written once and reused."""
    folder = OUT / f"build_{n_loops}"
    path = folder / "index.xlsx"
    if not path.exists():
        sys.path.insert(0, str(HERE))
        from make_index import write_index

        folder.mkdir(parents=True, exist_ok=True)
        started = time.perf_counter()
        write_index(path, n_loops, seed)
        print(f"wrote {path.relative_to(ROOT)} in {time.perf_counter() - started:.1f} s", flush=True)
    return path


def take_snapshot(source: Path = ROOT, target: Path = SNAPSHOT) -> None:
    """Copy ``loopdocs/`` and ``symbols/`` of ``source`` aside and run every build from the
    copy, so that commits made while the benchmark runs do not change the code the cache
    keys hash."""
    shutil.rmtree(target, ignore_errors=True)
    shutil.copytree(source / "loopdocs", target / "loopdocs", ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(source / "symbols", target / "symbols")


def _tree_env(tree: Path) -> tuple[dict[str, str] | None, Path]:
    """Environment and working folder of a child that must import ``loopdocs`` from ``tree``.
    ``python -c`` puts its working folder first on ``sys.path``, ahead of ``PYTHONPATH``:
    run from the repository, the child would import the working copy, not the snapshot."""
    if not tree.is_dir():
        return None, ROOT
    return {**os.environ, "PYTHONPATH": str(tree)}, tree


def run_build(index: Path, out: Path, workers: int, tree: Path = SNAPSHOT) -> dict:
    env, cwd = _tree_env(tree)
    done = subprocess.run([PYTHON, "-c", CHILD, str(index), str(out), str(workers)],
                          capture_output=True, text=True, cwd=cwd, env=env)
    if done.returncode != 0:
        raise SystemExit(f"build failed:\n{done.stderr[-3000:]}")
    figures = json.loads(done.stdout.strip().splitlines()[-1])
    if tree.is_dir() and Path(figures["source"]) != (tree / "loopdocs").resolve():
        raise SystemExit(f"the build ran {figures['source']}, not the snapshot in {tree}")
    return figures


def edited_copy(index: Path, target: Path, nth: int) -> str:
    """Copy of ``index`` with the Service of the ``nth`` transmitter changed; returns its tag."""
    from openpyxl import load_workbook

    book = load_workbook(index)
    sheet = book.worksheets[0]
    header_row, columns = None, {}
    for row in sheet.iter_rows(min_row=1, max_row=20):
        names = {str(c.value).strip(): c.column for c in row if c.value is not None}
        if "Tag" in names:
            header_row, columns = row[0].row, names
            break
    seen = 0
    for row in sheet.iter_rows(min_row=header_row + 1):
        tag = row[columns["Tag"] - 1].value
        if tag and "T-" in str(tag) and str(tag)[1] == "T":
            if seen == nth:
                cell = row[columns["Service"] - 1]
                cell.value = f"{cell.value or ''} (revised {nth})"
                book.save(target)
                return str(tag)
            seen += 1
    raise SystemExit("no transmitter found to edit")


def fmt(figures: dict) -> str:
    per_sheet = figures["build_s"] / max(1, figures["rendered"])
    return (f"{figures['build_s']:.1f} s build ({figures['wall_s']:.1f} s with interpreter start), "
            f"{figures['rendered']} rendered, {per_sheet:.3f} s/sheet, "
            f"peak main {figures['main_peak_mb']:.0f} MB, largest worker {figures['worker_peak_mb']:.0f} MB")


def bench(n_loops: int, repeat: int, one_worker: bool, sheets: int = 30,
          trees: tuple[tuple[str, Path], ...] = (("this", SNAPSHOT),)) -> dict:
    """Every measurement at ``n_loops``, for each code tree of ``trees`` ((label, folder
    holding ``loopdocs/`` and ``symbols/``)); with two trees each step runs both, their
    order swapped from one step to the next, so that both see the same load."""
    index = index_for(n_loops)
    work = OUT / f"build_{n_loops}"
    results: dict = {"loops": n_loops}
    per = {label: results.setdefault(label, {}) for label, _ in trees}

    def say(label: str, text: str) -> None:
        print(f"N={n_loops}{f' [{label}]' if len(trees) > 1 else ''} {text}", flush=True)

    def order(step: int) -> tuple[tuple[str, Path], ...]:
        return trees if step % 2 == 0 else tuple(reversed(trees))

    if sheets:
        for label, tree in order(0):
            folder = work / f"per_sheet_{label}"
            shutil.rmtree(folder, ignore_errors=True)
            cpu = per[label]["per_sheet"] = per_sheet(index, folder, sheets, tree)
            say(label, f"per sheet ({cpu['sheets']} sheets, processor time, alternating): worker median "
                       f"{cpu['worker_median_s']:.3f} s, weasyprint alone median {cpu['alone_median_s']:.3f} s; "
                       f"worker / weasyprint alone {cpu['ratio']:.2f} (target <= 1.2)")

    outs = {label: work / ("out_w2" if label == "this" else f"out_w2_{label}") for label, _ in trees}
    for label, tree in order(1):
        shutil.rmtree(outs[label], ignore_errors=True)
        per[label]["full_w2"] = run_build(index, outs[label], 2, tree)
        say(label, f"full, 2 workers: {fmt(per[label]['full_w2'])}")

    if one_worker:
        for label, tree in order(0):
            out1 = work / f"out_w1_{label}"
            shutil.rmtree(out1, ignore_errors=True)
            full1 = per[label]["full_w1"] = run_build(index, out1, 1, tree)
            shutil.rmtree(out1, ignore_errors=True)
            per[label]["speedup"] = full1["build_s"] / per[label]["full_w2"]["build_s"]
            say(label, f"full, 1 worker:  {fmt(full1)}")
            say(label, f"speed-up of 2 workers over 1: {per[label]['speedup']:.2f}x (target >= 1.7)")

    edited = work / "index_edited.xlsx"
    source = index
    for i in range(repeat):
        # edits accumulate: each rebuild sees exactly one more changed loop than the last
        tag = edited_copy(source, edited, i)
        source = edited
        for label, tree in order(i + 1):
            figures = run_build(edited, outs[label], 2, tree)
            per[label].setdefault("rebuilds", []).append(figures)
            say(label, f"rebuild after editing {tag}: {fmt(figures)}")
    for label, _ in trees:
        figures = per[label]
        rebuilds = figures.get("rebuilds", [])
        if not rebuilds:
            continue
        figures["rebuild_median_s"] = statistics.median(r["build_s"] for r in rebuilds)
        figures["rebuild_fraction"] = figures["rebuild_median_s"] / figures["full_w2"]["build_s"]
        say(label, f"rebuild median {figures['rebuild_median_s']:.2f} s = {100 * figures['rebuild_fraction']:.1f} % "
                   f"of the full build (target <= 2 %); sheets re-rendered: {[r['rendered'] for r in rebuilds]}")
    return results


def summary_line(n_loops: int, label: str, r: dict) -> str:
    line = (f"N={n_loops} {label}: full {r['full_w2']['build_s']:.1f} s "
            f"({r['full_w2']['build_s'] / r['full_w2']['rendered']:.3f} s/sheet), ")
    if "per_sheet" in r:
        line += (f"per sheet worker {r['per_sheet']['worker_median_s']:.3f} s / weasyprint alone "
                 f"{r['per_sheet']['alone_median_s']:.3f} s (ratio of totals {r['per_sheet']['ratio']:.2f}), ")
    if "speedup" in r:
        line += f"speed-up {r['speedup']:.2f}x, "
    if "rebuild_median_s" in r:
        line += f"rebuild {r['rebuild_median_s']:.2f} s ({100 * r['rebuild_fraction']:.1f} %), "
    return line + f"peak main {r['full_w2']['main_peak_mb']:.0f} MB, worker {r['full_w2']['worker_peak_mb']:.0f} MB"


def font_subsetting_path() -> str:
    """Which way weasyprint subsets fonts here (``loopdocs.render.pdf.harfbuzz_subsetting``)."""
    run = subprocess.run([PYTHON, "-c", "from loopdocs.render.pdf import harfbuzz_subsetting as h; print(h())"],
                         capture_output=True, text=True, cwd=ROOT)
    if run.stdout.strip() == "True":
        return "HarfBuzz subsetting library (libharfbuzz-subset)"
    if run.stdout.strip() == "False":
        return "fontTools (libharfbuzz-subset not installed: sheets about 1.7x slower)"
    return "unknown (could not ask weasyprint)"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--loops", type=int, nargs="+", default=[100, 300])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--sheets", type=int, default=30,
                        help="sheets in the per-sheet comparison with weasyprint alone (0: skip it)")
    parser.add_argument("--before", type=Path, default=None,
                        help="a second source tree (holding loopdocs/ and symbols/, e.g. a git worktree of an "
                             "earlier commit): every measurement runs on both, alternating")
    parser.add_argument("--skip-one-worker", type=int, nargs="*", default=[],
                        help="N values for which the 1-worker full build is skipped (all when given alone)")
    args = parser.parse_args()
    print(f"{os.cpu_count()} CPU cores; python {sys.version.split()[0]}", flush=True)
    print(f"font subsetting measured: {font_subsetting_path()}", flush=True)
    take_snapshot()
    trees: tuple[tuple[str, Path], ...] = (("this", SNAPSHOT),)
    if args.before is not None:
        take_snapshot(args.before.resolve(), BEFORE)
        trees = (("before", BEFORE), ("this", SNAPSHOT))
    skip = args.skip_one_worker
    all_results = [bench(n, args.repeat, not (skip == [] and "--skip-one-worker" in sys.argv or n in skip),
                         args.sheets, trees) for n in args.loops]
    print("\nsummary")
    for r in all_results:
        for label, _ in trees:
            print(summary_line(r["loops"], label, r[label]))
        if len(trees) > 1:
            before, this = r["before"], r["this"]
            ratios = [f"full build {this['full_w2']['build_s'] / before['full_w2']['build_s']:.2f}"]
            if "rebuild_median_s" in this:
                ratios.append(f"rebuild {this['rebuild_median_s'] / before['rebuild_median_s']:.2f}")
            if "per_sheet" in this:
                ratios.append(f"worker time a sheet (median) "
                              f"{this['per_sheet']['worker_median_s'] / before['per_sheet']['worker_median_s']:.2f}")
            print(f"N={r['loops']} this / before: " + ", ".join(ratios))
    (OUT / "bench_build.json").write_text(json.dumps(all_results, indent=1))


if __name__ == "__main__":
    main()
