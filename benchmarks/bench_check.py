"""Speed of ``loopdocs check`` against a plain openpyxl read of the same workbook.

Generates a 3000-loop index (about 10,000 rows) into ``benchmarks/out/`` if it is not
there, then times, as whole subprocesses (interpreter start included), alternating:

(a) ``loopdocs check FILE --format json`` (the real console script), when it runs and
    prints its JSON report (until then it is left out, and said so);
(a') ``python -c "read_index(FILE)"``: reading alone;
(b) ``python -c`` that opens the file with openpyxl ``load_workbook(read_only=True,
    data_only=True)`` and iterates the values of every row.

Prints the median of each and the ratios (a)/(b) and (a')/(b); the target for (a)/(b)
is 0.5 or less.
Run: ``make bench`` or ``.venv/bin/python benchmarks/bench_check.py [--loops N] [--repeat K]``.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
OUT = HERE / "out"
TARGET_RATIO = 0.5

OPENPYXL_READ = """
import sys
from openpyxl import load_workbook
book = load_workbook(sys.argv[1], read_only=True, data_only=True)
sheet = book.worksheets[0]
cells = 0
for values in sheet.iter_rows(values_only=True):
    cells += len(values)
book.close()
print(cells)
"""

READ_ONLY = """
import sys
from pathlib import Path
from loopdocs.read import read_index
table = read_index(Path(sys.argv[1]))
print(len(table.rows))
"""


def index_file(n_loops: int, seed: int = 0) -> Path:
    """The generated index for ``n_loops`` loops, written once and reused."""
    path = OUT / f"index_{n_loops}_seed{seed}.xlsx"
    if not path.exists():
        sys.path.insert(0, str(HERE))
        from make_index import write_index

        started = time.perf_counter()
        write_index(path, n_loops, seed)
        print(f"wrote {path.relative_to(ROOT)} in {time.perf_counter() - started:.1f} s")
    return path


VENV_BIN = ROOT / ".venv" / "bin"
PYTHON = str(VENV_BIN / "python") if (VENV_BIN / "python").exists() else sys.executable
"""The project's venv interpreter for the timed subprocesses (it has loopdocs installed)."""


def console_script() -> Path:
    """The ``loopdocs`` console script: the project venv's, else beside this interpreter."""
    script = VENV_BIN / "loopdocs"
    return script if script.exists() else Path(sys.executable).parent / "loopdocs"


def check_command(path: Path) -> list[str] | None:
    """The real ``loopdocs check`` command if it runs and prints the JSON report, else None."""
    script = console_script()
    command = [str(script), "check", str(path), "--format", "json"]
    if not script.exists():
        print(f"note: {script} not found; timing reading alone instead")
        return None
    run = subprocess.run(command, capture_output=True, text=True, cwd=ROOT)
    try:
        report = json.loads(run.stdout)
    except ValueError:
        report = None
    if run.returncode in (0, 1) and isinstance(report, dict) and "findings" in report:
        print(f"loopdocs check: {len(report['findings'])} findings, exit {run.returncode}")
        return command
    detail = (run.stderr.strip().splitlines() or ["no JSON on stdout"])[-1]
    print(f"note: `loopdocs check` not usable yet (exit {run.returncode}: {detail}); timing reading alone instead")
    return None


def timed(command: list[str]) -> tuple[float, str]:
    started = time.perf_counter()
    run = subprocess.run(command, capture_output=True, text=True, cwd=ROOT)
    elapsed = time.perf_counter() - started
    if run.returncode not in (0, 1):
        raise SystemExit(f"command failed (exit {run.returncode}): {' '.join(command[:3])} ...\n{run.stderr}")
    return elapsed, run.stdout.strip().splitlines()[-1] if run.stdout.strip() else ""


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--loops", type=int, default=3000)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()

    path = index_file(args.loops)
    size_mb = path.stat().st_size / 1e6
    print(f"index: {path.relative_to(ROOT)} ({args.loops} loops, {size_mb:.1f} MB); machine: {os.cpu_count()} cores")
    reading = [PYTHON, "-c", READ_ONLY, str(path)]
    check = check_command(path)
    runs = {}
    if check is not None:
        runs["check"] = ("loopdocs check FILE --format json (console script)", check)
    runs["read"] = ("python -c: loopdocs.read.read_index(FILE) only", reading)
    runs["openpyxl"] = ("python -c: openpyxl load_workbook(read_only=True, data_only=True), all rows' values", [PYTHON, "-c", OPENPYXL_READ, str(path)])

    for _, command in runs.values():  # warm the page cache and the bytecode cache
        timed(command)
    times: dict[str, list[float]] = {name: [] for name in runs}
    for _ in range(args.repeat):  # alternate, so load changes on a shared machine hit all alike
        for name, (_, command) in runs.items():
            times[name].append(timed(command)[0])
    medians = {name: statistics.median(values) for name, values in times.items()}
    for name, (what, _) in runs.items():
        runs_text = ", ".join(f"{t:.3f}" for t in times[name])
        print(f"{name:>8}: median {medians[name]:.3f} s  [{runs_text}]  {what}")
    for name in runs:
        if name != "openpyxl":
            ratio = medians[name] / medians["openpyxl"]
            verdict = "met" if ratio <= TARGET_RATIO else "NOT met"
            print(f"ratio {name}/openpyxl = {ratio:.2f} (target <= {TARGET_RATIO}: {verdict})")
    if "check" not in runs:
        print("timed: reading alone (loopdocs check not available), not the whole check")


if __name__ == "__main__":
    main()
