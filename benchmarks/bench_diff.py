"""Speed of ``loopdocs diff OLD NEW`` against ``loopdocs check`` of one index (issue 12:
``diff`` of two 3,000-loop indexes takes no longer than ``check`` of one).

OLD is the generated index of ``make_index.write_index`` (or the second layout,
``write_index_variant``); NEW is the same plant after a week of edits, as an engineer
makes them (:func:`edited_rows`): ``--edits`` cells changed on random rows (numbers
raised, words extended), one row deleted, one tag renamed and one loop added. Both are
written once into ``benchmarks/out/``. Then, as whole subprocesses (interpreter start
included), in alternation:

- ``diff``: ``loopdocs diff OLD NEW --format json``;
- ``check``: ``loopdocs check NEW --format json``.

Prints each median, the ratio diff/check (target at most 1.00) and how many tags the
diff named as changed (every edit must show up: a faster diff that misses one is no use).

Run: ``.venv/bin/python benchmarks/bench_diff.py [--loops N] [--repeat K] [--edits E]
[--generator default variant]``.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import subprocess
import sys
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from bench_check import OUT, ROOT, console_script, index_file, run_once  # noqa: E402
from make_index import (HEADERS, KEYS, _as_text, _write_rows, generate_rows, title_block,  # noqa: E402
                        variant_layout)

TARGET_RATIO = 1.0
#: Columns an edit may touch (never the Tag, whose change is the rename, nor the Loop).
_EDITABLE = [i for i, key in enumerate(KEYS) if key not in ("tag", "loop")]


def edited_rows(rows: list[list[Any]], n_loops: int, edits: int, seed: int = 0) -> tuple[list[list[Any]], set[str]]:
    """A copy of the generated data ``rows`` after ``edits`` cell changes on distinct rows,
    one row deleted, one tag renamed (its other cells unchanged) and one loop added at the
    end; and the tags whose cells changed (the ones ``diff`` must name as changed)."""
    rng = random.Random(7_000 + seed)
    rows = [list(row) for row in rows]
    tag_at = KEYS.index("tag")
    chosen = rng.sample(range(len(rows)), edits + 2)
    changed: set[str] = set()
    for index in chosen[:edits]:
        row = rows[index]
        filled = [i for i in _EDITABLE if row[i] not in (None, "")]
        column = rng.choice(filled)
        value = row[column]
        row[column] = value + 1 if isinstance(value, (int, float)) and not isinstance(value, bool) else f"{value} rev"
        changed.add(row[tag_at])
    renamed, deleted = chosen[edits], chosen[edits + 1]
    rows[renamed][tag_at] = f"{rows[renamed][tag_at]}A"
    changed.discard(rows[renamed][tag_at][:-1])
    changed.discard(rows[deleted][tag_at])
    del rows[deleted]
    added = generate_rows(1, seed=10_000 + seed)  # one more loop, numbered past the last
    for row in added:
        for key in ("tag", "loop", "driven_by"):
            at = KEYS.index(key)
            if row[at]:
                row[at] = f"{row[at].rsplit('-', 1)[0]}-{1001 + n_loops}"
    return rows + added, changed


def index_pair(n_loops: int, generator: str, edits: int, seed: int = 0) -> tuple[Path, Path, set[str]]:
    """``(old, new, changed tags)``: the generated index and its edited issue, written once."""
    old = index_file(n_loops, generator, seed)
    data, changed = edited_rows(generate_rows(n_loops, seed), n_loops, edits, seed)
    new = OUT / f"{old.stem}_edited{edits}.xlsx"
    if not new.exists():
        if generator == "default":
            _write_rows(new, [*title_block(n_loops, seed), HEADERS, *data], "Index")
        else:
            order, headers = variant_layout(seed)
            layout = [[f"Kettle Creek Brewery - instruments ({n_loops} loops, seed {seed}, second layout)"], [], headers]
            _write_rows(new, layout + [[_as_text(row[i]) for i in order] for row in data], "Instruments")
    return old, new, changed


def named_changes(old: Path, new: Path) -> dict[str, Any]:
    """The diff's JSON, run once untimed."""
    done = subprocess.run([str(console_script()), "diff", str(old), str(new), "--format", "json"],
                          capture_output=True, text=True, cwd=ROOT)
    if done.returncode not in (0, 1):
        raise SystemExit(f"diff failed (exit {done.returncode}):\n{done.stderr[-2000:]}")
    return json.loads(done.stdout)


def main() -> None:
    import statistics

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--loops", type=int, default=3000)
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--edits", type=int, default=40)
    parser.add_argument("--generator", nargs="+", choices=("default", "variant"), default=["default", "variant"])
    args = parser.parse_args()
    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.2f}; "
          f"{args.repeat} alternating runs of each command, medians", flush=True)
    verdicts = []
    for generator in args.generator:
        old, new, changed = index_pair(args.loops, generator, args.edits)
        result = named_changes(old, new)
        named = {c["tag"] for c in result["changed"]}
        found = "all found" if named == changed else f"MISMATCH: missed {sorted(changed - named)}, extra {sorted(named - changed)}"
        print(f"{args.loops} loops, {generator} generator: {new.relative_to(ROOT)}")
        print(f"  diff names {len(named)} changed tags ({found}), {len(result['added'])} added, "
              f"{len(result['removed'])} removed, {len(result['renamed'])} renamed, {len(result['splits'])} split changes")
        script = str(console_script())
        runs: dict[str, list[float]] = {"diff": [], "check": []}
        command = {"diff": [script, "diff", str(old), str(new), "--format", "json"],
                   "check": [script, "check", str(new), "--format", "json"]}
        for name in runs:  # warm-up: page cache, bytecode cache
            run_once(command[name])
        for _ in range(args.repeat):
            for name in runs:
                runs[name].append(run_once(command[name]).seconds)
        medians = {name: statistics.median(times) for name, times in runs.items()}
        for name, times in runs.items():
            print(f"  {name:>6}: median {medians[name]:.3f} s  [{', '.join(f'{t:.3f}' for t in times)}]")
        ratio = medians["diff"] / medians["check"]
        ok = ratio <= TARGET_RATIO and named == changed
        verdicts.append(ok)
        print(f"  ratio diff/check = {ratio:.2f} (target <= {TARGET_RATIO:.2f}: {'met' if ok else 'NOT met'})")
    print("every target met" if all(verdicts) else "some target NOT met")


if __name__ == "__main__":
    main()
