"""The package's shape: no import cycle (function-level imports counted), no two modules
with the same name, and every import flowing down the pipeline (docs/design.md, the
architecture section: core → calc → read → model → checks → calibration → draw →
render → sheets → commands).

The imports are read from the source with ``ast``, so an import inside a function counts
the same as one at the top of a module.
"""

from __future__ import annotations

import ast
from collections import defaultdict
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "loopdocs"

#: Stages in pipeline order; a module may import from its own stage or an earlier one.
STAGES = ("core", "calc", "read", "model", "checks", "calibration", "draw", "render", "sheets", "commands")


def module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def modules() -> dict[str, Path]:
    return {module_name(p): p for p in PACKAGE.rglob("*.py")}


def imports_of(path: Path, name: str, known: set[str]) -> set[str]:
    """The loopdocs modules a module imports anywhere in its source."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            targets = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join(anchor + ([base] if base else []))
            targets = [f"{base}.{alias.name}" for alias in node.names] + [base]
        else:
            continue
        for target in targets:
            while target and target not in known:
                target = target.rpartition(".")[0]
            if target and target != name:
                found.add(target)
    return found


def import_graph() -> dict[str, set[str]]:
    mods = modules()
    known = set(mods)
    return {name: imports_of(path, name, known) for name, path in mods.items()}


def cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one module (Tarjan), each sorted."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in graph.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    return found


def stage_of(name: str) -> str | None:
    parts = name.split(".")
    return parts[1] if len(parts) > 1 and parts[1] in STAGES else None


def test_cycle_finder_finds_a_planted_cycle():
    # the checker itself must be able to fail: a -> b -> c -> a is one cycle, d is not in it
    graph = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}
    assert cycles(graph) == [["a", "b", "c"]]


def test_no_import_cycles_counting_function_level_imports():
    assert cycles(import_graph()) == []


def test_no_two_modules_share_a_name():
    stems: dict[str, list[str]] = defaultdict(list)
    for name, path in modules().items():
        if path.name != "__init__.py":
            stems[path.stem].append(name)
    assert {stem: names for stem, names in stems.items() if len(names) > 1} == {}


def test_every_module_sits_in_a_stage():
    loose = sorted(n for n in modules() if n.count(".") == 1 and n.split(".")[1] not in STAGES)
    # the entry points only
    assert loose == ["loopdocs.__main__", "loopdocs.cli"]


def test_imports_flow_down_the_pipeline():
    upstream = []
    for name, targets in import_graph().items():
        stage = stage_of(name)
        if stage is None:
            continue
        for target in targets:
            target_stage = stage_of(target)
            if target_stage is not None and STAGES.index(target_stage) > STAGES.index(stage):
                upstream.append(f"{name} imports {target}")
    assert upstream == []


def test_every_data_file_ships_in_the_wheel():
    # setuptools package-data globs (pyproject.toml) must cover every non-Python file of the
    # package: the symbols and templates are read through importlib.resources at run time
    import fnmatch
    import tomllib

    config = tomllib.loads((PACKAGE.parent / "pyproject.toml").read_text(encoding="utf-8"))
    globs = config["tool"]["setuptools"]["package-data"]["loopdocs"]
    data = [p.relative_to(PACKAGE).as_posix() for p in PACKAGE.rglob("*")
            if p.is_file() and p.suffix not in (".py", ".pyc") and "__pycache__" not in p.parts]
    assert data, "no data files found"
    assert [f for f in data if not any(fnmatch.fnmatch(f, g) for g in globs)] == []


def test_design_references_name_existing_sections():
    # the code cites its reasons as "docs/design.md §4.3": every cited section must exist
    import re
    import subprocess

    root = PACKAGE.parent
    design = (root / "docs" / "design.md").read_text(encoding="utf-8")
    sections = set(re.findall(r"^#+ (§[\d.]+) ", design, flags=re.M))
    files = subprocess.run(["git", "ls-files", "*.py", "*.md", "*.html", "*.css"], cwd=root,
                           capture_output=True, text=True, check=True).stdout.split()
    cited = {}
    for name in files:
        path = root / name
        if path.is_file() and not path.is_symlink():
            for ref in re.findall(r"docs/design\.md\s+(§\d+(?:\.\d+)*)", path.read_text(encoding="utf-8")):
                cited.setdefault(ref, name)
    assert len(cited) > 20
    assert {ref: name for ref, name in cited.items() if ref not in sections} == {}
