"""Small mutation tester for loopdocs/calc and loopdocs/checks (run by hand, not collected by pytest).

Each mutant changes one thing in one source file:

* a number: ``n -> n + 1`` and ``n -> n - 1`` (``0 -> 1``); booleans and strings are left alone;
* a comparison: ``<`` <-> ``<=``, ``>`` <-> ``>=`` (boundary) and ``<`` <-> ``>``, ``<=`` <-> ``>=``
  (direction), ``==`` <-> ``!=``;
* arithmetic: ``+`` <-> ``-``, ``*`` <-> ``/`` (also in ``+=``/``-=``), unless an operand is a
  string literal or f-string (that only raises TypeError, a mutant every test kills);
* ``and`` <-> ``or``.

Nothing inside an f-string is mutated (display text). The mutant is written over the file in a
temporary copy of the repository (the checkout itself is never touched), then the tests run
with ``pytest -x`` in two stages, stopping at the first failure:

1. the module's own doctests and the test files that import the module (directly, or through a
   package ``__init__`` that imports it, e.g. ``loopdocs.checks`` imports every rule module);
2. only if stage 1 passes: the other fast test files whose imports reach the module
   (``--direct-only`` skips this stage; a module no test imports gets these files in stage 1).

A mutant is *killed* when a test fails (or the run exceeds the timeout), *survived* otherwise.
Tests that already fail on the unmutated copy (someone's work in progress) are deselected.

Usage (from the repository root)::

    .venv/bin/python tests/mutants.py                       # every file of calc/ and checks/
    .venv/bin/python tests/mutants.py --files loopdocs/calc/travel.py --limit 40
    .venv/bin/python tests/mutants.py --limit 60 --seed 1 --jobs 2 --json mutants.json

``--limit N`` keeps N mutants per file, drawn at random with ``--seed`` (default 0) and run in
source order; without it every mutant runs.
"""

from __future__ import annotations

import argparse
import ast
import concurrent.futures
import copy
import json
import os
import random
import re
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import asdict, dataclass, field
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
ROOT = REPO  # the tree mutants and test maps are read from: a snapshot of REPO while running
DEFAULT_GLOBS = ("loopdocs/calc/*.py", "loopdocs/checks/*.py")
# Test files left out of the mutant runs: slow (PDF builds, rendering, whole workbooks) or not
# about behaviour (architecture, symbol files). The full suite still runs them.
SLOW_TESTS = {
    "test_build.py", "test_render.py", "test_calibration_workbook.py", "test_draw.py",
    "test_draw_wiring.py", "test_symbols.py", "test_architecture.py",
}
_IGNORE = shutil.ignore_patterns(".venv", ".git", "__pycache__", "*.pyc", ".pytest_cache",
                                 ".hypothesis", "out", "dist", "build", "*.egg-info", ".mypy_cache")

_BOUNDARY = {ast.Lt: ast.LtE, ast.LtE: ast.Lt, ast.Gt: ast.GtE, ast.GtE: ast.Gt,
             ast.Eq: ast.NotEq, ast.NotEq: ast.Eq}
_DIRECTION = {ast.Lt: ast.Gt, ast.Gt: ast.Lt, ast.LtE: ast.GtE, ast.GtE: ast.LtE}
_ARITH = {ast.Add: ast.Sub, ast.Sub: ast.Add, ast.Mult: ast.Div, ast.Div: ast.Mult}
_BOOL = {ast.And: ast.Or, ast.Or: ast.And}
_SYMBOL = {ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">=", ast.Eq: "==", ast.NotEq: "!=",
           ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.And: "and", ast.Or: "or"}


@dataclass
class Mutant:
    path: str           # repository-relative
    line: int
    kind: str           # number, compare, arith, bool
    what: str           # e.g. "5.0 -> 6.0" or "<= -> <"
    start: tuple[int, int]
    end: tuple[int, int]
    replacement: str
    source_line: str = ""
    status: str = ""    # killed, timeout, survived, error
    stage: int = 0      # the stage whose tests killed it
    killer: str = ""
    seconds: float = 0.0


# --- generating mutants -------------------------------------------------------------------

def _is_str(node: ast.AST) -> bool:
    return isinstance(node, ast.JoinedStr) or (isinstance(node, ast.Constant) and isinstance(node.value, str))


def _number_text(value: float | int) -> str:
    text = repr(value)
    return f"({text})" if text.startswith("-") else text


def _skipped_nodes(tree: ast.AST) -> set[int]:
    """Ids of nodes inside f-strings or annotations (display text and typing only)."""
    skip: set[int] = set()
    for node in ast.walk(tree):
        roots: list[ast.AST] = []
        if isinstance(node, ast.JoinedStr):
            roots.append(node)
        if isinstance(node, (ast.AnnAssign, ast.arg)) and node.annotation is not None:
            roots.append(node.annotation)
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)) and node.returns is not None:
            roots.append(node.returns)
        for root in roots:
            skip.update(id(n) for n in ast.walk(root))
    return skip


def generate(path: Path) -> list[Mutant]:
    """Every mutant of one file, in source order."""
    source = path.read_text(encoding="utf-8")
    lines = source.splitlines()
    tree = ast.parse(source)
    skip = _skipped_nodes(tree)
    rel = str(path.relative_to(ROOT))
    out: list[Mutant] = []

    def add(node: ast.AST, kind: str, what: str, new_node: ast.AST | None, text: str | None = None) -> None:
        replacement = text if text is not None else f"({ast.unparse(new_node)})"
        out.append(Mutant(rel, node.lineno, kind, what, (node.lineno, node.col_offset),
                          (node.end_lineno, node.end_col_offset), replacement,
                          lines[node.lineno - 1].strip()))

    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.Constant) and type(node.value) in (int, float):
            v = node.value
            for new in ([1] if v == 0 else [v + 1, v - 1]):
                new = type(v)(new)
                add(node, "number", f"{v!r} -> {new!r}", None, _number_text(new))
        elif isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub) and isinstance(node.operand, ast.Constant):
            continue  # -n: its constant n is mutated on its own
        elif isinstance(node, ast.Compare):
            for i, op in enumerate(node.ops):
                for table in (_BOUNDARY, _DIRECTION):
                    if type(op) in table:
                        new = copy.deepcopy(node)
                        new.ops[i] = table[type(op)]()
                        add(node, "compare", f"{_SYMBOL[type(op)]} -> {_SYMBOL[table[type(op)]]}", new)
        elif isinstance(node, ast.BinOp) and type(node.op) in _ARITH:
            if _is_str(node.left) or _is_str(node.right):
                continue
            new = copy.deepcopy(node)
            new.op = _ARITH[type(node.op)]()
            add(node, "arith", f"{_SYMBOL[type(node.op)]} -> {_SYMBOL[type(new.op)]}", new)
        elif isinstance(node, ast.AugAssign) and type(node.op) in _ARITH and not _is_str(node.value):
            new = copy.deepcopy(node)
            new.op = _ARITH[type(node.op)]()
            add(node, "arith", f"{_SYMBOL[type(node.op)]}= -> {_SYMBOL[type(new.op)]}=", None, ast.unparse(new))
        elif isinstance(node, ast.BoolOp):
            new = copy.deepcopy(node)
            new.op = _BOOL[type(node.op)]()
            add(node, "bool", f"{_SYMBOL[type(node.op)]} -> {_SYMBOL[type(new.op)]}", new)
    out.sort(key=lambda m: (m.start, m.kind, m.what))
    return out


def apply(source: str, m: Mutant) -> str:
    """``source`` with the segment of ``m`` replaced (positions are 1-based lines, 0-based UTF-8 columns)."""
    lines = source.splitlines(keepends=True)
    (l0, c0), (l1, c1) = m.start, m.end
    first = lines[l0 - 1].encode("utf-8")
    last = lines[l1 - 1].encode("utf-8")
    head = first[:c0].decode("utf-8")
    tail = last[c1:].decode("utf-8")
    return "".join(lines[: l0 - 1]) + head + m.replacement + tail + "".join(lines[l1:])


# --- choosing tests -----------------------------------------------------------------------

def _module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _imports(path: Path) -> set[str]:
    """Dotted names of loopdocs modules a file imports (also inside functions)."""
    names: set[str] = set()
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = _module_name(path) if path.name == "__init__.py" else _module_name(path).rpartition(".")[0]
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                pkg = package.split(".")
                base = ".".join(pkg[: len(pkg) - node.level + 1] + ([base] if base else []))
            names.add(base)
            names.update(f"{base}.{a.name}" for a in node.names)
    return {n for n in names if n == "loopdocs" or n.startswith("loopdocs.")}


class TestMap:
    """Which test files reach which module."""

    def __init__(self) -> None:
        self.modules = {_module_name(p): p for p in (ROOT / "loopdocs").rglob("*.py")}
        self.graph = {m: {n for n in _imports(p) if n in self.modules} for m, p in self.modules.items()}
        self.tests = sorted((ROOT / "tests").glob("test_*.py"))
        self.test_imports = {t.name: {n for n in _imports(t) if n in self.modules} for t in self.tests}
        for helper in ("conftest.py", "workbook_helpers.py", "drawing_helpers.py"):
            if (ROOT / "tests" / helper).exists():  # helpers used by every test that loads them
                extra = {n for n in _imports(ROOT / "tests" / helper) if n in self.modules}
                for name, imports in self.test_imports.items():
                    if helper == "conftest.py" or helper[:-3] in (ROOT / "tests" / name).read_text():
                        imports |= extra

    def _closure(self, start: set[str], through_init_only: bool) -> set[str]:
        seen, todo = set(), list(start)
        while todo:
            m = todo.pop()
            if m in seen:
                continue
            seen.add(m)
            if not through_init_only or self.modules[m].name == "__init__.py":
                todo.extend(self.graph.get(m, ()))
        return seen

    def stages(self, module: str) -> tuple[list[str], list[str]]:
        direct, wide = [], []
        for t in self.tests:
            if t.name in SLOW_TESTS:
                continue
            imports = self.test_imports[t.name]
            if module in self._closure(imports, through_init_only=True):
                direct.append(f"tests/{t.name}")
            elif module in self._closure(imports, through_init_only=False):
                wide.append(f"tests/{t.name}")
        # likeliest killers first (pytest -x stops at the first failure; the order never changes
        # a verdict, only how soon a run ends): files importing the module itself, then files
        # naming the rules it reports (``Finding("split.gap", ...)``) most often, then the rest
        rules = set(re.findall(r'Finding\(\s*"([a-z]+\.[a-z-]+)"', self.modules[module].read_text(encoding="utf-8")))
        texts = {t: (ROOT / t).read_text(encoding="utf-8") for t in direct}
        direct.sort(key=lambda t: (module not in self.test_imports[t[len("tests/"):]],
                                   -sum(texts[t].count(f'"{r}"') for r in rules)))
        if not direct:  # no test imports it: it is tested through the modules that use it
            direct, wide = wide, []
        return direct, wide


# --- running ------------------------------------------------------------------------------

def _env(root: Path) -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(root)
    env["PYTHONDONTWRITEBYTECODE"] = "1"  # a stale .pyc of the same size and second would hide a mutant
    env["PYTHONHASHSEED"] = "0"
    return env


def _pytest(root: Path, targets: list[str], deselect: list[str], timeout: float) -> tuple[str, str]:
    """('pass' | 'fail' | 'timeout', first failing test id)."""
    cmd = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "-p", "no:randomly",
           "--hypothesis-seed=0", "-o", "addopts=--doctest-modules --import-mode=importlib", *targets]
    for d in deselect:  # a file that fails to import is ignored, a failing test deselected
        cmd += ["--deselect", d] if "::" in d else ["--ignore", d]
    try:
        run = subprocess.run(cmd, cwd=root, env=_env(root), capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return "timeout", ""
    if run.returncode == 0:
        return "pass", ""
    if run.returncode == 5:  # nothing collected
        return "pass", ""
    found = re.search(r"^(?:FAILED|ERROR) (\S+)", run.stdout, re.M)
    if found:
        return "fail", found.group(1)
    last = run.stdout.strip().splitlines()[-1:] or ["error"]
    return "fail", last[0][:120]


def _copy_repo(into: Path, source: Path = REPO) -> Path:
    root = into / "repo"
    shutil.copytree(source, root, ignore=_IGNORE, symlinks=True)
    return root


def baseline_failures(root: Path, targets: list[str]) -> list[str]:
    """Test ids failing on the unmutated copy (deselected afterwards)."""
    cmd = [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "-rfE", "--hypothesis-seed=0",
           "-o", "addopts=--doctest-modules --import-mode=importlib", *targets]
    run = subprocess.run(cmd, cwd=root, env=_env(root), capture_output=True, text=True)
    return re.findall(r"^(?:FAILED|ERROR) (\S+)", run.stdout, re.M)


def _check_copy(root: Path) -> None:
    probe = subprocess.run([sys.executable, "-c", "import loopdocs; print(loopdocs.__file__)"],
                           cwd=root, env=_env(root), capture_output=True, text=True, check=True)
    if not Path(probe.stdout.strip()).resolve().is_relative_to(root.resolve()):
        sys.exit(f"the copy does not import its own loopdocs ({probe.stdout.strip()}); refusing to run")


def _worker(jobs: list[tuple[Mutant, list[str], list[str]]], deselect: list[str], timeout: float,
            snapshot: Path) -> list[Mutant]:
    with tempfile.TemporaryDirectory(prefix="loopdocs-mutants-") as tmp:
        root = _copy_repo(Path(tmp), snapshot)
        _check_copy(root)
        done = []
        for m, direct, wide in jobs:
            target = root / m.path
            original = target.read_text(encoding="utf-8")
            mutated = apply(original, m)
            started = time.monotonic()
            try:
                compile(mutated, m.path, "exec")
            except SyntaxError as exc:
                m.status, m.killer = "error", f"mutant does not compile: {exc}"
                done.append(m)
                continue
            target.write_text(mutated, encoding="utf-8")
            try:
                m.status = "survived"
                for stage, tests in ((1, [m.path, *direct]), (2, wide)):
                    if not tests:
                        continue
                    result, killer = _pytest(root, tests, deselect, timeout)
                    if result != "pass":
                        m.status = "killed" if result == "fail" else "timeout"
                        m.stage, m.killer = stage, killer
                        break
            finally:
                target.write_text(original, encoding="utf-8")
            m.seconds = round(time.monotonic() - started, 1)
            print(f"  {m.status:8} {m.path}:{m.line}  {m.what:16} {m.source_line[:60]}  [{m.killer}]", flush=True)
            done.append(m)
        return done


def _match(current: list[Mutant], wanted: list[Mutant]) -> list[Mutant]:
    """The mutants of ``current`` that are the same change as one of ``wanted`` (same source
    line text and change, nearest line; the file may have moved under it)."""
    chosen = []
    for w in wanted:
        same = [m for m in current if (m.source_line, m.what, m.replacement) == (w.source_line, w.what, w.replacement)
                and m not in chosen]
        if same:
            chosen.append(min(same, key=lambda m: abs(m.line - w.line)))
        else:
            print(f"  (no longer in the source, kept as a survivor: {w.path}:{w.line} {w.what} {w.source_line[:60]})")
            w.killer = "not re-run: the source line changed"
            chosen.append(w)
    return sorted(chosen, key=lambda m: (m.start, m.what))


def main(argv: list[str] | None = None) -> int:
    global ROOT
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--files", nargs="*", help="source files (default: loopdocs/calc/*.py loopdocs/checks/*.py)")
    ap.add_argument("--limit", type=int, default=0, help="mutants per file, drawn at random (0: all)")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--jobs", type=int, default=2, help="parallel workers, each with its own copy")
    ap.add_argument("--timeout", type=float, default=120.0, help="seconds per pytest run (a timeout counts as killed)")
    ap.add_argument("--direct-only", action="store_true", help="skip stage 2 (wider tests)")
    ap.add_argument("--list", action="store_true", help="only list the mutants")
    ap.add_argument("--json", type=Path, help="write every mutant and its result here")
    ap.add_argument("--rerun", type=Path, help="run again only the survivors recorded in this --json file "
                                               "(matched by source line and change; the others keep their result)")
    ap.add_argument("--without", nargs="*", default=[], metavar="TEST_FILE",
                    help="leave these test files out of the snapshot (to measure what they add)")
    args = ap.parse_args(argv)

    started = time.monotonic()
    # One snapshot of the checkout (others may be editing it): mutants, the test map, the
    # baseline and every worker's copy all come from it.
    with tempfile.TemporaryDirectory(prefix="loopdocs-mutants-") as tmp:
        ROOT = _copy_repo(Path(tmp))
        _check_copy(ROOT)
        for name in args.without:
            (ROOT / name).unlink()
        rels = list(args.files) if args.files else sorted(
            str(p.relative_to(REPO)) for g in DEFAULT_GLOBS for p in REPO.glob(g))
        rng = random.Random(args.seed)
        tests = TestMap()
        earlier: list[Mutant] = []
        wanted: list[Mutant] = []
        if args.rerun:
            recorded = [Mutant(**{**m, "start": tuple(m["start"]), "end": tuple(m["end"])})
                        for m in json.loads(args.rerun.read_text())["mutants"]]
            earlier = [m for m in recorded if m.status != "survived"]
            wanted = [m for m in recorded if m.status == "survived"]
            rels = sorted({m.path for m in wanted})
        plan: list[tuple[Mutant, list[str], list[str]]] = []
        totals: dict[str, int] = {}
        for rel in rels:
            path = ROOT / rel
            mutants = generate(path)
            totals[rel] = len(mutants)
            if args.rerun:
                mutants = _match(mutants, [m for m in wanted if m.path == rel])
                earlier.extend(m for m in mutants if m.killer.startswith("not re-run"))
                mutants = [m for m in mutants if not m.killer.startswith("not re-run")]
            elif args.limit and len(mutants) > args.limit:
                chosen = sorted(rng.sample(range(len(mutants)), args.limit))
                mutants = [mutants[i] for i in chosen]
            direct, wide = tests.stages(_module_name(path))
            if args.direct_only:
                wide = []
            plan.extend((m, direct, wide) for m in mutants)
            print(f"{rel}: {len(mutants)} of {totals[rel]} mutants; stage 1: {len(direct)} test files, "
                  f"stage 2: {len(wide)}")
        if args.list:
            for m, _, _ in plan:
                print(f"{m.path}:{m.line}  {m.kind:7} {m.what:16} {m.source_line[:80]}")
            return 0

        all_tests = sorted({t for _, d, w in plan for t in d + w} | {m.path for m, _, _ in plan})
        deselect = baseline_failures(ROOT, all_tests)
        if deselect:
            print("failing before any mutation (deselected):", *deselect, sep="\n  ")
        jobs = max(1, min(args.jobs, len(plan)))
        chunks = [plan[i:: jobs] for i in range(jobs)]
        results: list[Mutant] = []
        with concurrent.futures.ProcessPoolExecutor(jobs) as pool:
            for done in pool.map(_worker, chunks, [deselect] * jobs, [args.timeout] * jobs, [ROOT] * jobs):
                results.extend(done)
    results.extend(earlier)
    results.sort(key=lambda m: (m.path, m.start, m.what))
    elapsed = time.monotonic() - started
    _summary(results, elapsed, args)
    if args.json:
        args.json.write_text(json.dumps({"totals": totals, "deselected": deselect, "seconds": round(elapsed),
                                         "mutants": [asdict(m) for m in results]}, indent=1))
    return 0


def _summary(results: list[Mutant], elapsed: float, args: argparse.Namespace) -> None:
    killed_states = ("killed", "timeout", "error")
    print("\nfile                                   mutants  killed  stage2  survived  kill rate")
    for path in sorted({m.path for m in results}):
        ms = [m for m in results if m.path == path]
        killed = sum(m.status in killed_states for m in ms)
        stage2 = sum(m.stage == 2 for m in ms)
        print(f"{path:38} {len(ms):7} {killed:7} {stage2:7} {len(ms) - killed:9}  {100 * killed / len(ms):7.1f} %")
    killed = sum(m.status in killed_states for m in results)
    print(f"{'total':38} {len(results):7} {killed:7} {sum(m.stage == 2 for m in results):7} "
          f"{len(results) - killed:9}  {100 * killed / max(1, len(results)):7.1f} %")
    print(f"({elapsed / 60:.1f} min, {args.jobs} workers, seed {args.seed}, limit {args.limit or 'none'}"
          f"{', re-run of ' + str(args.rerun) if args.rerun else ''})")
    survivors = [m for m in results if m.status == "survived"]
    if survivors:
        print("\nsurvivors:")
        for m in survivors:
            print(f"  {m.path}:{m.line}  {m.what:16} {m.source_line[:90]}")


if __name__ == "__main__":
    sys.exit(main())
