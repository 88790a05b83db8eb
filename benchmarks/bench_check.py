"""Speed and memory of ``loopdocs check`` against plain reads of the same workbook.

For each generator (``make_index.write_index``: the default headers in template order;
``make_index.write_index_variant``: columns shuffled, alias headers, numbers stored as
text) a generated index of N loops is written once into ``benchmarks/out/``, then these
are timed as whole subprocesses (interpreter start included), in alternation so that a
change of load on a shared machine hits all alike:

- ``check``: the real console script, ``loopdocs check FILE --format json``;
- ``floor``: ``python -c`` reading the sheet with python-calamine into Python lists
  (what any reader of the file must at least do);
- ``openpyxl``: ``python -c`` reading every row's values with openpyxl
  (``load_workbook(read_only=True, data_only=True)``), the yardstick of issue 14.

Each run's wall time and peak resident memory (``ru_maxrss`` of the waited-for child) are
kept; the medians are printed with the ratio check/openpyxl (target at most 0.25) and,
with ``--memory``, the peak memory of check at 30,000 loops (target at most 450 MB).

Run: ``make bench`` or ``.venv/bin/python benchmarks/bench_check.py [--loops N] [--repeat K]
[--generator default variant] [--memory]``.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
OUT = HERE / "out"
TARGET_RATIO = 0.25
MEMORY_LOOPS = 30_000
TARGET_MEMORY_MB = 450.0

VENV_BIN = ROOT / ".venv" / "bin"
PYTHON = str(VENV_BIN / "python") if (VENV_BIN / "python").exists() else sys.executable
"""The project's venv interpreter for the timed subprocesses (it has loopdocs installed)."""

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

CALAMINE_READ = """
import sys
from python_calamine import CalamineWorkbook
book = CalamineWorkbook.from_path(sys.argv[1])
rows = book.get_sheet_by_index(0).to_python()
print(sum(len(row) for row in rows))
"""

GENERATORS = ("default", "variant")


def index_file(n_loops: int, generator: str = "default", seed: int = 0) -> Path:
    """The generated index for ``n_loops`` loops, written once and reused."""
    sys.path.insert(0, str(HERE))
    from make_index import write_index, write_index_variant

    name = f"index_{n_loops}_seed{seed}.xlsx" if generator == "default" else f"index_{n_loops}_seed{seed}_{generator}.xlsx"
    path = OUT / name
    if not path.exists():
        started = time.perf_counter()
        (write_index if generator == "default" else write_index_variant)(path, n_loops, seed)
        print(f"wrote {path.relative_to(ROOT)} in {time.perf_counter() - started:.1f} s", flush=True)
    return path


def console_script() -> Path:
    """The ``loopdocs`` console script: the project venv's, else beside this interpreter."""
    script = VENV_BIN / "loopdocs"
    return script if script.exists() else Path(sys.executable).parent / "loopdocs"


@dataclass
class Run:
    """One timed subprocess: wall seconds and peak resident memory, MB."""

    seconds: float
    peak_mb: float


def run_once(command: list[str]) -> Run:
    """Run ``command`` (output to a temporary file) and measure it from the outside:
    wall time, and the child's own ``ru_maxrss`` (kB on Linux) from ``os.wait4``."""
    with tempfile.TemporaryFile() as out, tempfile.TemporaryFile() as err:
        started = time.perf_counter()
        child = subprocess.Popen(command, stdout=out, stderr=err, cwd=ROOT)
        _, status, usage = os.wait4(child.pid, 0)
        elapsed = time.perf_counter() - started
        child.returncode = code = os.waitstatus_to_exitcode(status)
        if code not in (0, 1):
            err.seek(0)
            raise SystemExit(f"command failed (exit {code}): {' '.join(command[:3])} ...\n{err.read().decode()[-2000:]}")
    return Run(elapsed, usage.ru_maxrss / 1024)


@dataclass
class Measured:
    """The runs of each command on one index, and their medians."""

    path: Path
    runs: dict[str, list[Run]] = field(default_factory=dict)

    def seconds(self, name: str) -> float:
        return statistics.median(r.seconds for r in self.runs[name])

    def peak_mb(self, name: str) -> float:
        return statistics.median(r.peak_mb for r in self.runs[name])


def commands(path: Path) -> dict[str, list[str]]:
    return {
        "check": [str(console_script()), "check", str(path), "--format", "json"],
        "floor": [PYTHON, "-c", CALAMINE_READ, str(path)],
        "openpyxl": [PYTHON, "-c", OPENPYXL_READ, str(path)],
    }


def measure(path: Path, repeat: int, names: tuple[str, ...] = ("check", "floor", "openpyxl")) -> Measured:
    """``repeat`` alternating runs of each command after one warm-up run each (page cache,
    bytecode cache)."""
    chosen = {name: command for name, command in commands(path).items() if name in names}
    for command in chosen.values():
        run_once(command)
    measured = Measured(path, {name: [] for name in chosen})
    for _ in range(repeat):
        for name, command in chosen.items():
            measured.runs[name].append(run_once(command))
    return measured


def report(measured: Measured, label: str) -> float | None:
    """Print the medians of one index; the ratio check/openpyxl (None without openpyxl)."""
    print(f"{label}: {measured.path.relative_to(ROOT)}")
    for name, runs in measured.runs.items():
        times = ", ".join(f"{r.seconds:.3f}" for r in runs)
        print(f"  {name:>8}: median {measured.seconds(name):.3f} s, peak {measured.peak_mb(name):.0f} MB  [{times}]")
    if "openpyxl" not in measured.runs:
        return None
    ratio = measured.seconds("check") / measured.seconds("openpyxl")
    floor = measured.seconds("floor") / measured.seconds("openpyxl")
    verdict = "met" if ratio <= TARGET_RATIO else "NOT met"
    print(f"  ratio check/openpyxl = {ratio:.2f} (target <= {TARGET_RATIO}: {verdict}); floor/openpyxl = {floor:.2f}")
    return ratio


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--loops", type=int, default=3000)
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--generator", nargs="+", choices=GENERATORS, default=list(GENERATORS))
    parser.add_argument("--memory", action="store_true", help=f"also check's peak memory at {MEMORY_LOOPS} loops")
    args = parser.parse_args()

    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.2f}; "
          f"{args.repeat} alternating runs of each command, medians", flush=True)
    verdicts = []
    for generator in args.generator:
        path = index_file(args.loops, generator)
        ratio = report(measure(path, args.repeat), f"{args.loops} loops, {generator} generator")
        verdicts.append(ratio is not None and ratio <= TARGET_RATIO)
    if args.memory:
        path = index_file(MEMORY_LOOPS, "default")
        measured = measure(path, 1, ("check", "floor"))
        report(measured, f"{MEMORY_LOOPS} loops, default generator (memory)")
        peak = measured.peak_mb("check")
        ok = peak <= TARGET_MEMORY_MB
        verdicts.append(ok)
        print(f"  check peak memory {peak:.0f} MB (target <= {TARGET_MEMORY_MB:.0f} MB: {'met' if ok else 'NOT met'})")
    print("every target met" if all(verdicts) else "some target NOT met")


if __name__ == "__main__":
    main()
