"""Imports run in one direction: every module of gvflow imports only from its own layer or the layers
below it (docs/architecture.md, "Layers"), and no chain of imports comes back to where it started.

The import graph is read from the source with ``ast``, module-level and function-level imports alike
(an import inside a function is still a dependency; deferring it only hides a cycle). Importing
``gvflow.a.b`` from outside the package ``gvflow.a`` also runs ``gvflow/a/__init__.py``, so it counts as
an import of ``gvflow.a`` too.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "gvflow"

#: The layers, bottom to top, each with the modules it holds (a name covers its submodules; "gvflow"
#: stands for the package's __init__ alone).
LAYERS = [
    ("units and errors", ["gvflow.errors", "gvflow._warn", "gvflow._version", "gvflow.units", "gvflow._validate",
                          "gvflow._models", "gvflow._roots", "gvflow.coefficients",
                          "gvflow._labels", "gvflow._notes"]),
    ("core and engine", ["gvflow._core", "gvflow._engine"]),
    ("sections, friction and uniform flow", ["gvflow.sections", "gvflow.friction", "gvflow.uniform",
                                             "gvflow.jumps", "gvflow.survey", "gvflow.design"]),
    ("profile engine", ["gvflow.profiles", "gvflow._pieces", "gvflow.verify"]),
    ("structures (pure relations)", ["gvflow.structures"]),
    ("controls", ["gvflow.controls"]),
    ("reach model and solver", ["gvflow._plausible", "gvflow._near_critical", "gvflow._solver", "gvflow.reach"]),
    ("results, plots, files and command line", ["gvflow.result", "gvflow.plot", "gvflow.section_plot",
                                                "gvflow.io", "gvflow.cli"]),
    ("sweeps, Monte Carlo and executors", ["gvflow.batch", "gvflow.uncertainty"]),
    ("the package", ["gvflow"]),
]

#: Imports allowed against the layers, each with its reason. Only a deprecation path belongs here.
ALLOWED = {
    ("gvflow.structures", "gvflow.controls"): "deprecated forward of the control classes that moved to "
                                              "gvflow.controls (module __getattr__, warns, unused inside gvflow)",
}


def layer_of(module: str) -> int:
    """Index in LAYERS of the longest name covering ``module``."""
    best, found = -1, None
    for i, (_, names) in enumerate(LAYERS):
        for name in names:
            covers = module == name or (name != "gvflow" and module.startswith(name + "."))
            if covers and len(name) > best:
                best, found = len(name), i
    if found is None:
        raise KeyError(f"{module} has no layer: add it to LAYERS in tests/test_layers.py and docs/architecture.md")
    return found


def modules(root: Path = PACKAGE) -> dict[str, tuple[Path, bool]]:
    """Dotted name -> (file, is a package) for every module under ``root``."""
    out = {}
    for path in sorted(root.rglob("*.py")):
        parts = list(path.relative_to(root.parent).with_suffix("").parts)
        is_pkg = parts[-1] == "__init__"
        if is_pkg:
            parts = parts[:-1]
        out[".".join(parts)] = (path, is_pkg)
    return out


def _targets(module: str, is_pkg: bool, node, known) -> list[str]:
    """gvflow modules an import statement depends on."""
    if isinstance(node, ast.Import):
        explicit = [a.name for a in node.names if a.name == "gvflow" or a.name.startswith("gvflow.")]
        implicit = []
    else:
        if node.level:
            parts = module.split(".") if is_pkg else module.split(".")[:-1]
            parts = parts[:len(parts) - (node.level - 1)]
            base = ".".join(parts + ([node.module] if node.module else []))
        else:
            base = node.module or ""
        if not (base == "gvflow" or base.startswith("gvflow.")):
            return []
        subs = [f"{base}.{a.name}" for a in node.names if f"{base}.{a.name}" in known]
        if len(subs) < len(node.names):  # a name defined in base's own code
            explicit, implicit = subs + [base], []
        else:  # only submodules: base's __init__ runs first
            explicit, implicit = subs, [base]
    for t in explicit:  # importing a.b.c runs the __init__ of a.b first
        parts = t.split(".")
        implicit += [".".join(parts[:k]) for k in range(2, len(parts))]
    # a package holding this module is already being imported when it runs: no dependency on it
    implicit = [t for t in implicit if t != "gvflow" and not module.startswith(t + ".")]
    return explicit + implicit


def import_edges(root: Path = PACKAGE) -> list[tuple[str, str, int, str | None]]:
    """(importer, imported, line, enclosing function or None) for every import of a gvflow module."""
    known = modules(root)
    edges = []
    for mod, (path, is_pkg) in known.items():
        tree = ast.parse(path.read_text(encoding="utf-8"))
        stack = [(tree, None)]
        while stack:
            node, func = stack.pop()
            for child in ast.iter_child_nodes(node):
                if isinstance(child, ast.Import | ast.ImportFrom):
                    edges += [(mod, t, child.lineno, func) for t in _targets(mod, is_pkg, child, known) if t != mod]
                inner = child.name if isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef) else func
                stack.append((child, inner))
    return sorted(edges)


def upward(edges) -> list[str]:
    """Imports of a higher layer that ALLOWED does not list."""
    bad = []
    for src, dst, line, func in edges:
        if layer_of(dst) > layer_of(src) and (src, dst) not in ALLOWED:
            where = f" in {func}()" if func else ""
            bad.append(f"{src}:{line}{where} imports {dst} ({LAYERS[layer_of(dst)][0]} above "
                       f"{LAYERS[layer_of(src)][0]})")
    return bad


def cycles(edges) -> list[list[str]]:
    """Strongly connected groups of more than one module (each holds an import cycle)."""
    graph: dict[str, set[str]] = {}
    for src, dst, _, _ in edges:
        if (src, dst) in ALLOWED:
            continue
        graph.setdefault(src, set()).add(dst)
        graph.setdefault(dst, set())
    index, low, stack, on, out = {}, {}, [], set(), []
    counter = [0]

    def strong(v):  # Tarjan's algorithm
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(graph[v]):
            if w not in index:
                strong(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                out.append(sorted(group))

    for v in sorted(graph):
        if v not in index:
            strong(v)
    return out


def test_every_module_has_a_layer():
    for mod in modules():
        layer_of(mod)


def test_no_module_imports_a_higher_layer():
    assert upward(import_edges()) == []


def test_no_import_cycle():
    assert cycles(import_edges()) == []


def test_the_allowed_upward_import_is_only_the_deprecation_forward():
    found = [(s, d, f) for s, d, _, f in import_edges() if (s, d) in ALLOWED]
    assert found and all(f == "__getattr__" for _, _, f in found)


def test_the_checks_can_fail(tmp_path):
    """A small package with a function-level import of a higher layer that closes a cycle."""
    pkg = tmp_path / "gvflow"
    (pkg / "controls").mkdir(parents=True)
    (pkg / "__init__.py").write_text("from . import units, reach\n")
    (pkg / "units.py").write_text("def f():\n    from .reach import Reach\n    return Reach\n")
    (pkg / "reach.py").write_text("from .units import f\nfrom .controls.base import Control\n")
    (pkg / "controls" / "__init__.py").write_text("from .base import Control\n")
    (pkg / "controls" / "base.py").write_text("Control = object\n")
    (pkg / "cli.py").write_text("def version():\n    from . import __version__\n    return __version__\n")
    edges = import_edges(pkg)
    assert ("gvflow.units", "gvflow.reach", 2, "f") in edges
    assert ("gvflow.reach", "gvflow.controls", 2, None) in edges  # the package's __init__ runs too
    assert sorted(upward(edges)) == [
        "gvflow.cli:2 in version() imports gvflow (the package above results, plots, files and command line)",
        "gvflow.units:2 in f() imports gvflow.reach (reach model and solver above units and errors)"]
    assert cycles(edges) == [["gvflow.reach", "gvflow.units"]]
    with pytest.raises(KeyError, match="no layer"):
        layer_of("gvflow.somewhere_new")
