"""Time and memory of the technicians' workbook (``calibrate --out``) for large indexes.

For each size (default 1,000 and 10,000 loops) a generated index
(``benchmarks/make_index.py``, seed 0) is checked and tabulated, then the workbook is
written; each size runs in its own process so that its peak resident memory is its own.
Prints, per size: seconds to check and tabulate, seconds to write the workbook (wall
clock, and the process's CPU seconds, which a shared machine's load does not stretch),
peak RSS before and after the write (MB, ``resource.getrusage`` ``ru_maxrss``, kB on
Linux), the workbook's size, and the load average when the size was done.

Run: ``python benchmarks/bench_workbook.py [N_LOOPS ...]``.
"""

from __future__ import annotations

import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))


def _peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # kB on Linux


def one_size(n_loops: int, folder: Path) -> dict:
    """Generate, check, tabulate and write the workbook for ``n_loops``; the figures."""
    from make_index import write_index

    from loopdocs.calibration.marks import mark_index_errors
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.checks import check_project
    from loopdocs.sheets.technicians_workbook import write_workbook

    index = write_index(folder / f"index-{n_loops}.xlsx", n_loops)
    started = time.perf_counter()
    checked = check_project(index)
    cset = calibration_set(checked.project)
    cset, _ = mark_index_errors(cset, [f for f in checked.findings if f.counts_as_error])
    tabulated = time.perf_counter()
    peak_before = _peak_mb()
    out = folder / f"cal-{n_loops}.xlsx"
    cpu = time.process_time()
    counts = write_workbook(cset, out)
    written = time.perf_counter()
    cpu = time.process_time() - cpu
    return {
        "loops": n_loops,
        "tables": len(cset.tables),
        "test_points": sum(counts.values()),
        "check_and_tabulate_s": round(tabulated - started, 2),
        "write_s": round(written - tabulated, 2),
        "write_cpu_s": round(cpu, 2),
        "peak_rss_before_write_mb": round(peak_before, 1),
        "peak_rss_mb": round(_peak_mb(), 1),
        "workbook_mb": round(out.stat().st_size / 1e6, 2),
        "load_average": " ".join(f"{x:.2f}" for x in os.getloadavg()),
    }


def main(argv: list[str]) -> None:
    if argv and argv[0] == "--one":
        with tempfile.TemporaryDirectory() as tmp:
            print(json.dumps(one_size(int(argv[1]), Path(tmp))))
        return
    sizes = [int(a) for a in argv] or [1000, 10000]
    print(f"{'loops':>6} {'tables':>7} {'points':>7} {'check+tab s':>12} {'write s':>8} {'write CPU s':>12} "
          f"{'RSS before MB':>14} {'peak RSS MB':>12} {'file MB':>8}  load average")
    for n in sizes:
        run = subprocess.run([sys.executable, __file__, "--one", str(n)], capture_output=True, text=True, check=True)
        r = json.loads(run.stdout.strip().splitlines()[-1])
        print(f"{r['loops']:>6} {r['tables']:>7} {r['test_points']:>7} {r['check_and_tabulate_s']:>12} "
              f"{r['write_s']:>8} {r['write_cpu_s']:>12} {r['peak_rss_before_write_mb']:>14} {r['peak_rss_mb']:>12} "
              f"{r['workbook_mb']:>8}  {r['load_average']}", flush=True)


if __name__ == "__main__":
    main(sys.argv[1:])
