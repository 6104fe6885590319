"""Guards on the package's shape: every module imports, the core never reaches the edges (file
reading, writing, jobs, CLI), no import cycle, no importorskip on our own modules, short modules.

The import graph is read from the source with ``ast`` (imports at module level and inside
functions both count), not from what happens to be imported at run time.
"""

from __future__ import annotations

import ast
import importlib
import pkgutil
from pathlib import Path

import schedcheck

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "schedcheck"
TESTS = ROOT / "tests"

#: The core: stages that neither read nor write files nor know about jobs or the CLI.
CORE = ("readings", "runstate", "schedule", "audit", "findings", "changes", "demo",
        "errors", "site", "durations", "intervals", "window")
EDGES = ("inputs", "outputs", "jobs", "cli")
#: Import edges allowed to close a cycle: none (the last one, site.load_site importing
#: inputs/site_file.py, went when load_site moved into inputs/).
KNOWN_CYCLE_EDGES: set[tuple[str, str]] = set()
MAX_LINES = 450   # common practice, no source: a module a reader can hold in mind


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _sources() -> dict[str, Path]:
    return {_module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def _imports(name: str, path: Path) -> set[str]:
    """Every schedcheck module ``name`` imports, anywhere in its file (absolute names)."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    is_package = path.name == "__init__.py"
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = name.split(".")
                base = base[: len(base) - node.level + (1 if is_package else 0)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            found.add(module)
            # ``from schedcheck.x import y`` may import the module schedcheck.x.y
            found.update(f"{module}.{a.name}" for a in node.names)
    modules = _sources()
    return {m for m in found if m in modules and m != name}


def _graph() -> dict[str, set[str]]:
    return {name: _imports(name, path) for name, path in _sources().items()}


def test_every_module_of_the_package_imports():
    # walk_packages only descends into folders with __init__.py: a folder without one holds
    # modules that are missing from the list below, and the comparison with the files fails
    walked = {m.name for m in pkgutil.walk_packages(schedcheck.__path__, "schedcheck.")}
    on_disk = set(_sources()) - {"schedcheck"}
    assert on_disk - walked == set(), "modules in a folder without __init__.py"
    for name in sorted(walked - {"schedcheck.__main__"}):   # that one runs the CLI
        importlib.import_module(name)
    assert "schedcheck.__main__" in walked


def _stage(name: str) -> str:
    """``schedcheck.audit.run`` -> ``audit``; ``schedcheck.site`` -> ``site``."""
    return name.split(".")[1] if "." in name else ""


def test_the_core_never_imports_inputs_outputs_jobs_or_cli():
    bad = [f"{name} imports {target}"
           for name, targets in _graph().items() if _stage(name) in CORE
           for target in sorted(targets)
           if _stage(target) in EDGES and (name, target) not in KNOWN_CYCLE_EDGES]
    assert bad == []


def _cycles(graph: dict[str, set[str]], allowed: set[tuple[str, str]]) -> list[list[str]]:
    """One cycle per strongly connected component with more than one module (Tarjan)."""
    edges = {a: {b for b in bs if (a, b) not in allowed} for a, bs in graph.items()}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    components: list[list[str]] = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(edges[v]):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                components.append(sorted(comp))

    for v in sorted(edges):
        if v not in index:
            visit(v)
    cycles = []
    for comp in components:   # a path back to the start, inside the component, to report
        members, start = set(comp), comp[0]
        path, seen = [start], {start}
        while True:
            nxt = sorted(w for w in edges[path[-1]] if w in members)
            back = start in nxt
            if back:
                break
            step = next((w for w in nxt if w not in seen), None)
            if step is None:
                break
            path.append(step)
            seen.add(step)
        cycles.append(path + [start])
    return cycles


def test_no_import_cycle():
    cycles = _cycles(_graph(), KNOWN_CYCLE_EDGES)
    assert cycles == [], "import cycle: " + "; ".join(" -> ".join(c) for c in cycles)


def test_the_cycle_search_finds_a_cycle_and_the_allowance_is_one_edge():
    graph = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}
    assert _cycles(graph, set()) == [["a", "b", "c", "a"]]
    assert _cycles(graph, {("b", "c")}) == []
    assert len(KNOWN_CYCLE_EDGES) <= 1


def test_no_test_skips_on_the_package_s_own_modules():
    bad = []
    for path in sorted(TESTS.rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr == "importorskip" and node.args
                    and isinstance(node.args[0], ast.Constant)
                    and str(node.args[0].value).split(".")[0] == "schedcheck"):
                bad.append(f"{path.relative_to(ROOT)}:{node.lineno}")
    assert bad == []


def _long_modules() -> list[str]:
    out = []
    for name, path in _sources().items():
        n = len(path.read_text(encoding="utf-8").splitlines())
        if n > MAX_LINES:
            out.append(f"{name} ({n})")
    return out


def test_no_module_is_longer_than_450_lines():
    assert _long_modules() == []
