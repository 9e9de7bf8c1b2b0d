"""Imports go one way: ``cli -> run -> core -> the stages`` (ifc, loads, rules, design, report,
materials, common), with no cycle between any two modules of the package.

Every module of the package is found with ``pkgutil`` and its source parsed with ``ast``; every
``import`` and ``from ... import`` in it counts, at module level, inside functions and under
``if TYPE_CHECKING:`` alike (a cycle through a function-level import is still a cycle of the
design, only one that Python tolerates). How a name is resolved:

* ``import a.b.c`` and ``from a.b.c import x`` are an edge to ``a.b.c``;
* ``from a.b import c`` is an edge to the module ``a.b.c`` when there is one, else to ``a.b``;
* a package's ``__init__`` is the module named after the package: ``from modelcheck.cli import
  main`` (from, say, ``modelcheck.tests``) is an edge to ``modelcheck.cli``, and importing
  ``a.b.c`` is NOT also an edge to ``a`` or ``a.b``, although Python runs their ``__init__``
  first. The packages' ``__init__`` modules hold docstrings or re-export their own submodules,
  so they add no edge out of their package that the graph would miss.
"""

from __future__ import annotations

import ast
import pkgutil
from pathlib import Path

import pytest

import modelcheck

PACKAGE = "modelcheck"
#: the layers that must not know how the work is run nor how it was asked for
BELOW_RUN = ("core", "ifc", "loads", "rules", "design", "report", "materials", "common")


def module_files(root: Path) -> dict[str, Path]:
    """Every module of the package at ``root`` -> its source file (a package: its __init__.py).
    ``pkgutil.iter_modules`` folder by folder: nothing is imported, so any tree can be read."""
    out = {PACKAGE: root / "__init__.py"}

    def walk(folder: Path, prefix: str) -> None:
        for info in pkgutil.iter_modules([str(folder)]):
            name = f"{prefix}.{info.name}"
            if info.ispkg:
                out[name] = folder / info.name / "__init__.py"
                walk(folder / info.name, name)
            else:
                out[name] = folder / f"{info.name}.py"

    walk(root, PACKAGE)
    return out


def import_graph(root: Path) -> dict[str, set[str]]:
    """Module -> the modules of the package it imports (the rules in this module's docstring)."""
    files = module_files(root)
    graph: dict[str, set[str]] = {}
    for name, path in files.items():
        is_pkg = path.name == "__init__.py"
        package = name if is_pkg else name.rsplit(".", 1)[0]
        edges: set[str] = set()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:   # relative: from the module's own package upwards
                    base = package.split(".")[:len(package.split(".")) - node.level + 1]
                    mod = ".".join(base + ([node.module] if node.module else []))
                else:
                    mod = node.module or ""
                targets = [f"{mod}.{a.name}" if f"{mod}.{a.name}" in files else mod for a in node.names]
            else:
                continue
            for t in targets:
                while t and t not in files and "." in t:   # import a.b.Name: the deepest module named
                    t = t.rsplit(".", 1)[0]
                if t in files and t != name:
                    edges.add(t)
        graph[name] = edges
    return graph


def find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    """One cycle of ``graph`` as [a, b, ..., a], or None."""
    state: dict[str, int] = {}   # 1: on the current path, 2: done
    path: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        path.append(node)
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == 1:
                return path[path.index(nxt):] + [nxt]
            if nxt not in state:
                found = visit(nxt)
                if found:
                    return found
        path.pop()
        state[node] = 2
        return None

    for start in sorted(graph):
        if start not in state:
            found = visit(start)
            if found:
                return found
    return None


def wrong_way(graph: dict[str, set[str]]) -> list[str]:
    """Imports against the direction cli -> run -> core -> stages, one line each."""
    def layer(mod: str) -> str:
        parts = mod.split(".")
        return parts[1] if len(parts) > 1 else ""

    out = []
    for mod, targets in sorted(graph.items()):
        for t in sorted(targets):
            if layer(mod) in BELOW_RUN and layer(t) in ("run", "cli"):
                out.append(f"{mod} imports {t}")
            elif layer(mod) == "run" and layer(t) == "cli":
                out.append(f"{mod} imports {t}")
    return out


ROOT = Path(modelcheck.__file__).parent


def test_no_module_of_the_package_imports_itself_round_a_cycle():
    cycle = find_cycle(import_graph(ROOT))
    assert cycle is None, "import cycle: " + " -> ".join(cycle or [])


def test_imports_go_from_the_command_line_to_the_runners_to_the_core_and_stages():
    assert wrong_way(import_graph(ROOT)) == []


def test_the_graph_sees_every_kind_of_import(tmp_path):
    """A package built here with a cycle through a function-level import, one through a relative
    import and one layer breach: each is found (the test can fail)."""
    root = tmp_path / PACKAGE
    for pkg in ("", "core", "run", "cli"):
        (root / pkg).mkdir(parents=True, exist_ok=True)
        (root / pkg / "__init__.py").write_text('"""x"""\n', encoding="utf-8")
    (root / "core" / "a.py").write_text("def f():\n    from modelcheck.core import b\n", encoding="utf-8")
    (root / "core" / "b.py").write_text("from . import a\n", encoding="utf-8")
    graph = import_graph(root)
    assert graph["modelcheck.core.a"] == {"modelcheck.core.b"}
    assert graph["modelcheck.core.b"] == {"modelcheck.core.a"}
    assert find_cycle(graph) == ["modelcheck.core.a", "modelcheck.core.b", "modelcheck.core.a"]
    (root / "core" / "b.py").write_text("import modelcheck.run.x\nfrom modelcheck.cli import y\n",
                                        encoding="utf-8")
    (root / "run" / "x.py").write_text("from modelcheck.core.b import thing\n", encoding="utf-8")
    (root / "cli" / "y.py").write_text("", encoding="utf-8")
    graph = import_graph(root)
    assert graph["modelcheck.core.b"] == {"modelcheck.run.x", "modelcheck.cli.y"}
    assert wrong_way(graph) == ["modelcheck.core.b imports modelcheck.cli.y",
                                "modelcheck.core.b imports modelcheck.run.x"]
    assert find_cycle(graph) == ["modelcheck.core.b", "modelcheck.run.x", "modelcheck.core.b"]


@pytest.mark.parametrize("text, target", [
    ("from modelcheck.cli import main\n", "modelcheck.cli"),             # a package's __init__: the package
    ("from modelcheck.cli import y\n", "modelcheck.cli.y"),              # a submodule by from-import
    ("import modelcheck.cli.y\n", "modelcheck.cli.y"),                   # not also modelcheck.cli
    ("from modelcheck.cli.y import Name\n", "modelcheck.cli.y"),
])
def test_a_package_init_counts_as_the_package_alone(tmp_path, text, target):
    root = tmp_path / PACKAGE
    (root / "cli").mkdir(parents=True)
    (root / "__init__.py").write_text("", encoding="utf-8")
    (root / "cli" / "__init__.py").write_text("", encoding="utf-8")
    (root / "cli" / "y.py").write_text("", encoding="utf-8")
    (root / "z.py").write_text(text, encoding="utf-8")
    assert import_graph(root)["modelcheck.z"] == {target}
