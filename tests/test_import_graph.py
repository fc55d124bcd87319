"""No import circles in the core or the app (issue #22).

The graph is built from the source with :mod:`ast`: every ``import``/``from … import`` anywhere in a module —
at module level, inside functions and under ``if TYPE_CHECKING:`` — is an edge from that module to the module
it names (``from pkg import name`` points at ``pkg.name`` when that is a module of the project, else at
``pkg``).  Importing a sub-module also runs its package's ``__init__``; that implicit edge is not drawn, so a
package's ``__init__`` re-exporting its own modules is not a circle.  Imports built from strings at run time
(``importlib.import_module``) are not seen.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PACKAGES = ("network_models", "app")


def module_names(root: Path = ROOT, packages=PACKAGES) -> dict[str, Path]:
    """Dotted name → file for every module of the given top-level packages (``pkg/__init__.py`` is ``pkg``)."""
    out = {}
    for pkg in packages:
        for path in sorted((root / pkg).rglob("*.py")):
            parts = list(path.relative_to(root).with_suffix("").parts)
            if "migrations" in parts:  # Alembic scripts: run by Alembic, never imported by the project
                continue
            if parts[-1] == "__init__":
                parts.pop()
            out[".".join(parts)] = path
    return out


def _resolve(importer: str, is_package: bool, node: ast.ImportFrom) -> str:
    if not node.level:
        return node.module or ""
    base = importer.split(".") if is_package else importer.split(".")[:-1]
    base = base[: len(base) - (node.level - 1)] if node.level > 1 else base
    return ".".join(base + ([node.module] if node.module else []))


def imports_of(name: str, source: str, is_package: bool, known: set[str]) -> set[str]:
    """The project modules ``name`` imports anywhere in its source."""
    found: set[str] = set()
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            mod = _resolve(name, is_package, node)
            targets = [f"{mod}.{a.name}" if f"{mod}.{a.name}" in known else mod for a in node.names]
        else:
            continue
        for t in targets:
            while t and t not in known:  # `import a.b.c` of a non-module attribute path: nearest module
                t = t.rpartition(".")[0]
            if t and t != name:
                found.add(t)
    return found


def import_graph(root: Path = ROOT, packages=PACKAGES) -> dict[str, set[str]]:
    mods = module_names(root, packages)
    known = set(mods)
    return {name: imports_of(name, path.read_text(encoding="utf-8"), path.name == "__init__.py", known)
            for name, path in mods.items()}


def find_cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """One cycle per strongly connected component with more than one module (or a self-loop), as a list
    of modules ending where it starts — Tarjan's algorithm, iterative."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    comps: list[list[str]] = []
    counter = 0
    for root in sorted(graph):
        if root in index:
            continue
        work = [(root, iter(sorted(graph.get(root, ()))))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            v, it = work[-1]
            for w in it:
                if w not in index:
                    index[w] = low[w] = counter
                    counter += 1
                    stack.append(w)
                    on_stack.add(w)
                    work.append((w, iter(sorted(graph.get(w, ())))))
                    break
                if w in on_stack:
                    low[v] = min(low[v], index[w])
            else:
                work.pop()
                if work:
                    low[work[-1][0]] = min(low[work[-1][0]], low[v])
                if low[v] == index[v]:
                    comp = []
                    while True:
                        w = stack.pop()
                        on_stack.discard(w)
                        comp.append(w)
                        if w == v:
                            break
                    if len(comp) > 1 or v in graph.get(v, ()):
                        comps.append(comp)
    return [_cycle_in(set(c), graph) for c in comps]


def _cycle_in(comp: set[str], graph: dict[str, set[str]]) -> list[str]:
    """A concrete cycle through the component's first module (breadth-first back to it)."""
    start = min(comp)
    prev: dict[str, str] = {}
    frontier = [start]
    while frontier:
        nxt = []
        for v in frontier:
            for w in sorted(graph.get(v, ())):
                if w == start:
                    path = [v]
                    while path[-1] != start:
                        path.append(prev[path[-1]])
                    return [start, *reversed(path[:-1]), start] if len(path) > 1 else [start, start]
                if w in comp and w not in prev:
                    prev[w] = v
                    nxt.append(w)
        frontier = nxt
    return sorted(comp)


# ----- the cycle finder itself -------------------------------------------------------------------------
def test_cycle_finder_finds_a_three_module_circle_and_nothing_in_a_tree():
    graph = {"a": {"b"}, "b": {"c"}, "c": {"a", "d"}, "d": set(), "e": {"d"}}
    cycles = find_cycles(graph)
    assert len(cycles) == 1
    cyc = cycles[0]
    assert cyc[0] == cyc[-1] == "a" and set(cyc) == {"a", "b", "c"}
    for u, v in zip(cyc, cyc[1:], strict=False):  # every step of the reported cycle is a real edge
        assert v in graph[u]
    assert find_cycles({"a": {"b"}, "b": {"c"}, "c": set(), "d": {"a", "c"}}) == []
    assert find_cycles({"a": {"a"}}) == [["a", "a"]]


def test_graph_sees_function_level_and_type_checking_imports(tmp_path):
    pkg = tmp_path / "pkg"
    pkg.mkdir()
    (pkg / "__init__.py").write_text("")
    (pkg / "one.py").write_text("def f():\n    from .two import g\n    return g\n")
    (pkg / "two.py").write_text("from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    from pkg import one\n")
    (pkg / "three.py").write_text("from . import two\nimport pkg.one\n")
    graph = import_graph(tmp_path, ("pkg",))
    assert graph["pkg.one"] == {"pkg.two"} and graph["pkg.two"] == {"pkg.one"}
    assert graph["pkg.three"] == {"pkg.one", "pkg.two"}
    assert find_cycles(graph) == [["pkg.one", "pkg.two", "pkg.one"]]


# ----- the project ----------------------------------------------------------------------------------------
def test_no_import_circles_in_the_core_or_the_app():
    cycles = find_cycles(import_graph())
    assert not cycles, "import circles:\n" + "\n".join(" → ".join(c) for c in cycles)


@pytest.mark.parametrize("pkg", PACKAGES)
def test_the_graph_is_not_empty(pkg):
    graph = import_graph()
    assert sum(len(v) for k, v in graph.items() if k.startswith(pkg)) > 10  # the test looks at real imports
