"""The scaling table of ``docs/performance.md``: ``loopdocs check`` (and ``build`` where it
is quick enough) at 1,000, 3,000, 10,000 and 30,000 loops, time and peak memory, with
the floor (python-calamine reading the same sheet into Python lists) beside each figure.

Uses the generated indexes and the subprocess timing of ``bench_check.py`` (wall time and
``ru_maxrss`` of each child, medians of alternating runs). ``build`` is timed in a fresh
interpreter with 2 workers into an empty folder, only up to ``--build-loops`` (default
100: a full build renders every sheet, about 0.2 to 0.5 s of processor time each, so
30,000 loops would take hours); the table says where it was not run.

Writes the table between its markers in ``docs/performance.md`` (and prints it).
Run: ``make bench`` or ``.venv/bin/python benchmarks/scaling.py [--loops 1000 3000 ...]
[--build-loops 100] [--repeat 3]``.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from bench_check import PYTHON, ROOT, index_file, measure, run_once  # noqa: E402

DOC = ROOT / "docs" / "performance.md"
BEGIN = "<!-- scaling table: written by benchmarks/scaling.py -->"
END = "<!-- end of scaling table -->"

BUILD_CHILD = """
import json, resource, sys, time
from pathlib import Path
from loopdocs.render.builder import build
from loopdocs.render.pdf import harfbuzz_subsetting
started = time.perf_counter()
result = build(Path(sys.argv[1]), Path(sys.argv[2]), workers=2)
print(json.dumps({"wall_s": time.perf_counter() - started, "sheets": len(result.rendered),
                  "main_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "worker_mb": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024,
                  "harfbuzz": harfbuzz_subsetting()}))
"""


def time_build(index: Path) -> dict:
    """One full build of ``index`` into an empty temporary folder, in a fresh interpreter."""
    with tempfile.TemporaryDirectory() as folder:
        source = Path(folder) / index.name
        shutil.copy(index, source)
        run = subprocess.run([PYTHON, "-c", BUILD_CHILD, str(source), str(Path(folder) / "out")],
                             capture_output=True, text=True, cwd=ROOT)
    if run.returncode not in (0, 1) or not run.stdout.strip():
        last = (run.stderr.strip().splitlines() or ["no output"])[-1]
        print(f"build failed: {last}", flush=True)
        return {"failed": last}
    return json.loads(run.stdout.strip().splitlines()[-1])


def table(rows: list[dict], build_loops: int) -> str:
    lines = [
        "| loops | rows | check s | floor s | check / floor | check peak MB | floor peak MB | build s (2 workers) | build peak MB (main / worker) |",
        "|---:|---:|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for r in rows:
        if r.get("build", {}).get("failed"):
            build_s, build_mb = "failed when last run", "-"
        elif r.get("build"):
            b = r["build"]
            build_s = f"{b['wall_s']:.1f} ({b['wall_s'] / max(b['sheets'], 1):.2f} a sheet)"
            build_mb = f"{b['main_mb']:.0f} / {b['worker_mb']:.0f}"
        else:
            build_s = build_mb = f"not run (above {build_loops} loops)" if build_loops else "not run"
        lines.append(
            f"| {r['loops']:,} | {r['rows']:,} | {r['check_s']:.2f} | {r['floor_s']:.2f} | {r['check_s'] / r['floor_s']:.1f} "
            f"| {r['check_mb']:.0f} | {r['floor_mb']:.0f} | {build_s} | {build_mb} |"
        )
    return "\n".join(lines)


def write_doc(text: str) -> None:
    doc = DOC.read_text(encoding="utf-8") if DOC.exists() else f"# Performance\n\n{BEGIN}\n{END}\n"
    if BEGIN not in doc or END not in doc:
        doc = doc.rstrip("\n") + f"\n\n{BEGIN}\n{END}\n"
    head, rest = doc.split(BEGIN, 1)
    _, tail = rest.split(END, 1)
    DOC.write_text(f"{head}{BEGIN}\n{text}\n{END}{tail}", encoding="utf-8")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--loops", type=int, nargs="+", default=[1000, 3000, 10000, 30000])
    parser.add_argument("--build-loops", type=int, default=100, help="largest index also built (0: none)")
    parser.add_argument("--repeat", type=int, default=3, help="alternating runs per size up to 3,000 loops (1 above)")
    parser.add_argument("--no-write", action="store_true", help="print the table only")
    args = parser.parse_args()

    rows = []
    sizes = sorted(set(args.loops) | ({args.build_loops} if args.build_loops else set()))
    for n in sizes:
        path = index_file(n)
        measured = measure(path, args.repeat if n <= 3000 else 1, ("check", "floor"))
        from make_index import generate_rows

        n_rows = len(generate_rows(n))
        row = {"loops": n, "rows": n_rows, "check_s": measured.seconds("check"), "floor_s": measured.seconds("floor"),
               "check_mb": measured.peak_mb("check"), "floor_mb": measured.peak_mb("floor")}
        if args.build_loops and n <= args.build_loops:
            row["build"] = time_build(path)
        rows.append(row)
        print(f"{n} loops: check {row['check_s']:.2f} s {row['check_mb']:.0f} MB, floor {row['floor_s']:.2f} s "
              f"{row['floor_mb']:.0f} MB", flush=True)
    built = [r["build"] for r in rows if r.get("build") and not r["build"].get("failed")]
    path_note = ""
    if built:
        path_note = (" Fonts were subset with " + ("the HarfBuzz subsetting library." if built[0]["harfbuzz"]
                     else "fontTools (libharfbuzz-subset not installed)."))
    stamp = (f"Measured {datetime.date.today().isoformat()} on {os.cpu_count()} cores (load average "
             f"{os.getloadavg()[0]:.2f} at the end); medians of {args.repeat} alternating runs up to 3,000 loops, one "
             f"run above.{path_note}")
    text = table(rows, args.build_loops) + "\n\n" + stamp
    print(text)
    if not args.no_write:
        write_doc(text)
        print(f"written to {DOC.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
