"""No import cycles anywhere under carboy/ (design.md: "No import cycles").

Every ``import`` statement counts, at module level or inside a function (a deferred import
still ties the two modules together); only imports under ``if TYPE_CHECKING:`` are left out,
since they never run.  Importing ``a.b.c`` also imports the packages ``a`` and ``a.b``.
"""

from __future__ import annotations

import ast
import functools
from pathlib import Path

import carboy

ROOT = Path(carboy.__file__).parent

KNOWN_CYCLES: frozenset[tuple[str, str]] = frozenset()
"""Import edges ("a imports b") that close a cycle known today, left out of the check.

Delete an entry when its cycle is gone: the test fails on an entry that no longer names an
import, so the list cannot outlive the cycles it excuses."""


def module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _is_type_checking(node: ast.If) -> bool:
    test = node.test
    return ((isinstance(test, ast.Name) and test.id == "TYPE_CHECKING")
            or (isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING"))


def _imports(tree: ast.AST) -> list[ast.Import | ast.ImportFrom]:
    """Every import statement in the tree, except those under ``if TYPE_CHECKING:``."""
    found: list[ast.Import | ast.ImportFrom] = []
    todo = [tree]
    while todo:
        node = todo.pop()
        if isinstance(node, (ast.Import, ast.ImportFrom)):
            found.append(node)
        elif isinstance(node, ast.If) and _is_type_checking(node):
            todo.extend(node.orelse)
            continue
        todo.extend(ast.iter_child_nodes(node))
    return found


def _with_packages(target: str, modules: set[str]) -> set[str]:
    """``target`` and every package above it that is one of ``modules``."""
    parts = target.split(".")
    return {".".join(parts[:n]) for n in range(1, len(parts) + 1)} & modules


def _targets(node: ast.Import | ast.ImportFrom, here: str, is_package: bool,
             modules: set[str]) -> set[str]:
    """The carboy modules one import statement loads."""
    if isinstance(node, ast.Import):
        names = [alias.name for alias in node.names]
    else:
        base = node.module or ""
        if node.level:
            package = here.split(".") if is_package else here.split(".")[:-1]
            package = package[:len(package) - (node.level - 1)]
            base = ".".join(package + ([base] if base else []))
        names = [base] + [f"{base}.{alias.name}" for alias in node.names]
    found: set[str] = set()
    for name in names:
        found |= _with_packages(name, modules)
    return found


def import_graph() -> dict[str, set[str]]:
    """Module -> the carboy modules it imports (anywhere in its text); a fresh copy of the
    graph read once per test process."""
    return {name: set(edges) for name, edges in _read_graph().items()}


@functools.cache
def _read_graph() -> dict[str, frozenset[str]]:
    files = {module_name(p): p for p in sorted(ROOT.rglob("*.py"))}
    modules = set(files)
    graph: dict[str, frozenset[str]] = {}
    for name, path in files.items():
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        is_package = path.name == "__init__.py"
        edges: set[str] = set()
        for node in _imports(tree):
            edges |= _targets(node, name, is_package, modules)
        graph[name] = frozenset(edges - {name})
    return graph


def cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components with more than one module (Tarjan), sorted."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph.get(v, ())):
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
    return sorted(found)


def test_no_import_cycles():
    graph = import_graph()
    for a, b in KNOWN_CYCLES:
        graph[a] = graph.get(a, set()) - {b}
    assert cycles(graph) == []


def test_known_cycles_still_exist():
    graph = import_graph()
    stale = sorted((a, b) for a, b in KNOWN_CYCLES if b not in graph.get(a, set()))
    assert stale == [], "these cycles are gone: remove them from KNOWN_CYCLES"


def test_the_check_finds_a_cycle():
    """The checker itself: a two-module cycle and a three-module one are found."""
    graph = {"a": {"b"}, "b": {"a"}, "c": {"d"}, "d": {"e"}, "e": {"c"}, "f": {"a"}}
    assert cycles(graph) == [["a", "b"], ["c", "d", "e"]]


def test_the_graph_sees_deferred_and_relative_imports(tmp_path):
    source = ("from . import sibling\n"
              "def f():\n    import carboy.store.db\n"
              "if TYPE_CHECKING:\n    from carboy.tui import app\n")
    tree = ast.parse(source)
    modules = {"carboy", "carboy.store", "carboy.store.db", "carboy.store.sibling",
               "carboy.tui", "carboy.tui.app"}
    edges: set[str] = set()
    for node in _imports(tree):
        edges |= _targets(node, "carboy.store.here", False, modules)
    assert edges == {"carboy", "carboy.store", "carboy.store.db", "carboy.store.sibling"}
