"""The package's import graph: layers import only downwards and nothing imports in a cycle.

Walks every module under ``src/trundle`` with :mod:`ast` (nothing is imported, so a cycle that
Python would tolerate at run time is still found). Two rules, as DEVELOPERS.md states them:

1. Layer order — ``core < scan < loads < analysis < workflows < io < report < cli < trundle`` —
   holds for *every* import, at module level or inside a function, ``TYPE_CHECKING`` included.
2. The graph of all imports, deferred ones included, is acyclic, with no exception
   (``Beam.influence``/``Beam.static`` are bound in ``trundle/core/__init__.py``, above the
   modules they join).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src"
PACKAGE = SRC / "trundle"
LAYERS = ("core", "scan", "loads", "analysis", "workflows", "io", "report", "cli")


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(SRC).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


MODULES = {_module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def _layer(module: str) -> int:
    if module == "trundle._version":
        return -1  # a constant, imported by every layer that labels its output
    parts = module.split(".")
    if len(parts) == 1 or parts[1] in ("__main__",):
        return len(LAYERS)  # the package root re-exports the public API: above everything
    name = parts[1]
    if name.startswith("cli_"):
        name = "cli"  # a command module registered by cli.py (cli_fleet.py) is the cli layer
    assert name in LAYERS, f"{module} is in no layer; add it to a layer package"
    return LAYERS.index(name)


def _target(module: str, names: list[str]) -> list[str]:
    """The modules an ``from module import names`` statement really loads."""
    found = [f"{module}.{n}" for n in names if f"{module}.{n}" in MODULES]
    return found or [module]


class _Imports(ast.NodeVisitor):
    def __init__(self, module: str, is_package: bool) -> None:
        self.module, self.is_package = module, is_package
        self.edges: list[tuple[str, bool, int]] = []  # (target, at module level, line)
        self.depth = 0

    def _absolute(self, node: ast.ImportFrom) -> str:
        if not node.level:
            return node.module or ""
        base = self.module.split(".")
        base = base if self.is_package else base[:-1]
        base = base[: len(base) - node.level + 1]
        return ".".join(base + ([node.module] if node.module else []))

    def visit_Import(self, node: ast.Import) -> None:
        for alias in node.names:
            if alias.name.startswith("trundle"):
                self.edges.append((alias.name, self.depth == 0, node.lineno))

    def visit_ImportFrom(self, node: ast.ImportFrom) -> None:
        module = self._absolute(node)
        if module == "trundle" or module.startswith("trundle."):
            for target in _target(module, [a.name for a in node.names]):
                self.edges.append((target, self.depth == 0, node.lineno))

    def _nested(self, node: ast.AST) -> None:
        self.depth += 1
        self.generic_visit(node)
        self.depth -= 1

    visit_FunctionDef = visit_AsyncFunctionDef = visit_ClassDef = _nested

    def visit_If(self, node: ast.If) -> None:
        # ``if TYPE_CHECKING:`` imports are for annotations only: deferred, not module level
        if isinstance(node.test, ast.Name) and node.test.id == "TYPE_CHECKING":
            self._nested(node)
        else:
            self.generic_visit(node)


def _graph() -> dict[str, list[tuple[str, bool, int]]]:
    graph = {}
    for module, path in MODULES.items():
        visitor = _Imports(module, path.name == "__init__.py")
        visitor.visit(ast.parse(path.read_text(), str(path)))
        graph[module] = [(t, top, line) for t, top, line in visitor.edges if t != module]
    return graph


GRAPH = _graph()


def test_every_import_names_a_module_that_exists() -> None:
    for module, edges in GRAPH.items():
        for target, _, line in edges:
            assert target in MODULES, f"{module}:{line} imports {target}, which is no module"


@pytest.mark.parametrize("module", sorted(m for m in MODULES if m != "trundle"))
def test_imports_only_go_downwards(module: str) -> None:
    for target, _, line in GRAPH[module]:
        if target == "trundle":
            pytest.fail(f"{module}:{line} imports the package root (import the module instead)")
        assert _layer(target) <= _layer(module), (
            f"{module}:{line} imports {target} from a higher layer "
            f"({LAYERS[_layer(module)]} < {LAYERS[_layer(target)]})")


def _cycle(edges: dict[str, set[str]]) -> list[str] | None:
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        stack.append(node)
        for nxt in sorted(edges.get(node, ())):
            if state.get(nxt) == 1:
                return stack[stack.index(nxt):] + [nxt]
            if nxt not in state:
                found = visit(nxt)
                if found:
                    return found
        stack.pop()
        state[node] = 2
        return None

    for node in sorted(edges):
        if node not in state:
            found = visit(node)
            if found:
                return found
    return None


def test_no_import_cycle() -> None:
    edges: dict[str, set[str]] = {}
    for module, targets in GRAPH.items():
        for target, _top, _ in targets:
            edges.setdefault(module, set()).add(target)
    cycle = _cycle(edges)
    assert cycle is None, "import cycle: " + " -> ".join(cycle)


def test_the_cycle_finder_finds_a_cycle() -> None:
    assert _cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}}) == ["a", "b", "c", "a"]
    assert _cycle({"a": {"b"}, "b": set()}) is None
