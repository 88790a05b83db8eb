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
  (target: 1 sheet, under 5 % of the full build);
- peak resident memory: the build process (``ru_maxrss`` of itself) and the largest
  worker (``ru_maxrss`` of its waited-for children), at every N (target under 500 MB
  and not growing with N).

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
    "package_pages": result.package_pages,
    "render_s": sorted(result.render_seconds.values()),
    "main_peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
    "worker_peak_mb": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024,
}))
"""


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


SNAPSHOT = OUT / "snapshot"


def take_snapshot() -> None:
    """Copy ``loopdocs/`` and ``symbols/`` aside and run every build from the copy, so that
    commits made while the benchmark runs do not change the code the cache keys hash."""
    shutil.rmtree(SNAPSHOT, ignore_errors=True)
    shutil.copytree(ROOT / "loopdocs", SNAPSHOT / "loopdocs", ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(ROOT / "symbols", SNAPSHOT / "symbols")


def run_build(index: Path, out: Path, workers: int) -> dict:
    env = {**os.environ, "PYTHONPATH": str(SNAPSHOT)} if SNAPSHOT.is_dir() else None
    done = subprocess.run([PYTHON, "-c", CHILD, str(index), str(out), str(workers)],
                          capture_output=True, text=True, cwd=ROOT, env=env)
    if done.returncode != 0:
        raise SystemExit(f"build failed:\n{done.stderr[-3000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


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


def bench(n_loops: int, repeat: int, one_worker: bool) -> dict:
    index = index_for(n_loops)
    work = OUT / f"build_{n_loops}"
    results: dict = {"loops": n_loops}

    out2 = work / "out_w2"
    shutil.rmtree(out2, ignore_errors=True)
    full2 = run_build(index, out2, 2)
    results["full_w2"] = full2
    print(f"N={n_loops} full, 2 workers: {fmt(full2)}", flush=True)

    if one_worker:
        out1 = work / "out_w1"
        shutil.rmtree(out1, ignore_errors=True)
        full1 = run_build(index, out1, 1)
        results["full_w1"] = full1
        shutil.rmtree(out1, ignore_errors=True)
        results["speedup"] = full1["build_s"] / full2["build_s"]
        print(f"N={n_loops} full, 1 worker:  {fmt(full1)}", flush=True)
        print(f"N={n_loops} speed-up of 2 workers over 1: {results['speedup']:.2f}x (target >= 1.7)", flush=True)

    rebuilds = []
    edited = work / "index_edited.xlsx"
    source = index
    for i in range(repeat):
        # edits accumulate: each rebuild sees exactly one more changed loop than the last
        tag = edited_copy(source, edited, i)
        source = edited
        figures = run_build(edited, out2, 2)
        rebuilds.append(figures)
        print(f"N={n_loops} rebuild after editing {tag}: {fmt(figures)}", flush=True)
    results["rebuilds"] = rebuilds
    median = statistics.median(r["build_s"] for r in rebuilds)
    results["rebuild_median_s"] = median
    results["rebuild_fraction"] = median / full2["build_s"]
    print(f"N={n_loops} rebuild median {median:.2f} s = {100 * results['rebuild_fraction']:.1f} % of the full build "
          f"(target < 5 %); sheets re-rendered: {[r['rendered'] for r in rebuilds]}", flush=True)
    return results


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
    parser.add_argument("--skip-one-worker", type=int, nargs="*", default=[],
                        help="N values for which the 1-worker full build is skipped (all when given alone)")
    args = parser.parse_args()
    print(f"{os.cpu_count()} CPU cores; python {sys.version.split()[0]}", flush=True)
    print(f"font subsetting measured: {font_subsetting_path()}", flush=True)
    take_snapshot()
    skip = args.skip_one_worker
    all_results = [bench(n, args.repeat, not (skip == [] and "--skip-one-worker" in sys.argv or n in skip))
                   for n in args.loops]
    print("\nsummary")
    for r in all_results:
        line = (f"N={r['loops']}: full {r['full_w2']['build_s']:.1f} s "
                f"({r['full_w2']['build_s'] / r['full_w2']['rendered']:.3f} s/sheet), ")
        if "speedup" in r:
            line += f"speed-up {r['speedup']:.2f}x, "
        line += (f"rebuild {r['rebuild_median_s']:.2f} s ({100 * r['rebuild_fraction']:.1f} %), "
                 f"peak main {r['full_w2']['main_peak_mb']:.0f} MB, worker {r['full_w2']['worker_peak_mb']:.0f} MB")
        print(line)
    (OUT / "bench_build.json").write_text(json.dumps(all_results, indent=1))


if __name__ == "__main__":
    main()
