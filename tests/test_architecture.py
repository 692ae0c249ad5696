"""The house rules of the code base (DEVELOPERS.md, "Layers"): layers, no cycles, no Textual
outside the terminal UI, small modules. These are checked on the real package tree."""

from __future__ import annotations

import pathlib
import pkgutil
import subprocess
import sys

import pytest

import planner

ROOT = pathlib.Path(planner.__file__).resolve().parent
MAX_MODULE_LINES = 400


def _all_modules() -> list[str]:
    names = ["planner"]
    for info in pkgutil.walk_packages([str(ROOT)], prefix="planner."):
        names.append(info.name)
    return sorted(names)


def test_walk_finds_the_whole_package():
    names = _all_modules()
    files = [p for p in ROOT.rglob("*.py")]
    assert len(names) == len(files)


def test_no_module_outside_the_ui_imports_textual():
    """Every non-UI module, found by walking the package (not a hand list), imports without Textual."""
    modules = [m for m in _all_modules() if not m.startswith("planner.tui")]
    code = ("import importlib, sys\n"
            f"for name in {modules!r}:\n"
            "    importlib.import_module(name)\n"
            "bad = sorted(m for m in sys.modules if m == 'textual' or m.startswith('textual.'))\n"
            "assert not bad, bad[:5]\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]


def test_no_module_is_over_the_size_limit():
    long = {str(p.relative_to(ROOT)): n for p in ROOT.rglob("*.py")
            if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_MODULE_LINES}
    assert not long, long


def _strongly_connected(graph: dict[str, set[str]]) -> list[list[str]]:
    """Tarjan's algorithm (iterative): the cycles of an import graph."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    on_stack: set[str] = set()
    stack: list[str] = []
    out: list[list[str]] = []
    counter = 0
    for root in graph:
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            node, children = work[-1]
            child = next(children, None)
            if child is not None:
                if child not in index:
                    index[child] = low[child] = counter
                    counter += 1
                    stack.append(child)
                    on_stack.add(child)
                    work.append((child, iter(sorted(graph.get(child, ())))))
                elif child in on_stack:
                    low[node] = min(low[node], index[child])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                comp = []
                while True:
                    top = stack.pop()
                    on_stack.discard(top)
                    comp.append(top)
                    if top == node:
                        break
                if len(comp) > 1:
                    out.append(sorted(comp))
    return out


def test_cycle_finder_finds_a_cycle():
    assert _strongly_connected({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]


def test_no_import_cycles():
    """No two modules import each other, directly or through others (function-level imports count)."""
    import grimp  # installed with import-linter (test extra)

    graph = grimp.build_graph("planner")
    edges = {m: {i for i in graph.find_modules_directly_imported_by(m) if i.startswith("planner")}
             for m in graph.modules if m.startswith("planner")}
    # A package's __init__ re-exporting its own modules is not a cycle of code.
    for m, targets in edges.items():
        edges[m] = {t for t in targets if not m.startswith(t + ".")}
    assert _strongly_connected(edges) == []


def test_layer_contracts_hold():
    """The import-linter contracts in pyproject.toml (layers; Textual only in the UI)."""
    exe = pathlib.Path(sys.executable).with_name("lint-imports")
    proc = subprocess.run([str(exe)], capture_output=True, text=True, timeout=300,
                          cwd=ROOT.parent)
    assert proc.returncode == 0, proc.stdout[-3000:]
