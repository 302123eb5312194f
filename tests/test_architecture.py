"""The package's layering (DEVELOPERS.md): imports go one way, downwards; no cycles; no private names shared.

Every module of ``src/globcons`` is parsed (not imported) and each of its ``import`` statements, at module
level or inside a function, is checked against the layer table below. A test that fails here names the
importing module, the line and the rule it breaks.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "src" / "globcons"

#: Layer of every subpackage or top-level module, lowest first. A module may import from its own
#: subpackage and from lower layers only; two subpackages on one layer may not import each other.
LAYERS: dict[str, int] = {
    "_version": 0, "errors": 0, "_lazy": 0,
    "core": 1,
    "io": 2,
    "frame": 3,
    "align": 4, "phylo": 4,
    "analysis": 5,
    "mutations": 6,
    "plots": 7, "structure": 7,
    "report": 8,
    "demo": 9,
    "cli": 10,
    "__main__": 11,
}
#: The package's own ``__init__`` is its public face: it may import any library layer (not the CLI).
TOP_LEVEL_MAX = 9


def _modules() -> dict[str, Path]:
    found = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        found[name] = path
    return found


MODULES = _modules()


def _unit(module: str) -> str:
    """The layer-table key of a module: ``globcons.io.fasta`` -> ``io``; ``globcons`` -> ``""``."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def _lazy_exports(tree: ast.Module) -> dict[str, str]:
    """A package's ``_EXPORTS`` table (name -> module, loaded on first use), or {}."""
    for node in tree.body:
        if isinstance(node, ast.Assign) and any(isinstance(t, ast.Name) and t.id == "_EXPORTS" for t in node.targets):
            return ast.literal_eval(node.value)
    return {}


def _imports(path: Path, module: str) -> list[tuple[int, str, list[str]]]:
    """(line, imported module, names) of every import of the package in a module, relative ones resolved.

    A package's lazily exported names count as imports of their modules (from the ``_EXPORTS`` line).
    """
    tree = ast.parse(path.read_text(encoding="utf-8"))
    is_package = path.name == "__init__.py"
    found = [(0, target, [name]) for name, target in _lazy_exports(tree).items()]
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name, []) for alias in node.names if alias.name.split(".")[0] == "globcons"]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = module.split(".") if is_package else module.split(".")[:-1]
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "globcons":
                continue
            names = [alias.name for alias in node.names]
            # "from globcons.io import fasta" imports the module globcons.io.fasta
            submodules = [f"{target}.{n}" for n in names if f"{target}.{n}" in MODULES]
            found.append((node.lineno, target, [n for n in names if f"{target}.{n}" not in MODULES]))
            found += [(node.lineno, sub, []) for sub in submodules]
    return found


def _edges() -> list[tuple[str, int, str, list[str]]]:
    return [(module, line, target, names) for module, path in MODULES.items()
            for line, target, names in _imports(path, module)]


def test_every_subpackage_and_module_has_a_layer():
    units = {_unit(m) for m in MODULES} - {""}
    assert units <= set(LAYERS), f"add these to LAYERS (and to DEVELOPERS.md): {sorted(units - set(LAYERS))}"


def test_imports_go_downwards():
    problems = []
    for module, line, target, _ in _edges():
        source, dest = _unit(module), _unit(target)
        if source == dest or dest == "":
            if dest == "" and source != "":
                problems.append(f"{module}:{line} imports the package top level ({target}); import the module")
            continue
        if source == "":
            if LAYERS[dest] > TOP_LEVEL_MAX:
                problems.append(f"{module}:{line} (the package's public face) imports {target}")
            continue
        if LAYERS[dest] >= LAYERS[source]:
            problems.append(f"{module}:{line} (layer {LAYERS[source]}) imports {target} (layer {LAYERS[dest]})")
    assert not problems, "upward or sideways imports:\n" + "\n".join(problems)


def test_no_private_names_cross_module_boundaries():
    problems = [f"{module}:{line} imports {name} from {target}"
                for module, line, target, names in _edges() for name in names
                if name.startswith("_") and not (name.startswith("__") and name.endswith("__")) and target != module]
    assert not problems, "private names used outside their module:\n" + "\n".join(problems)


def test_no_import_cycles():
    graph: dict[str, set[str]] = {module: set() for module in MODULES}
    for module, _, target, _names in _edges():
        if target in MODULES and target != module:
            graph[module].add(target)
    # A package's __init__ re-exports its modules: an edge module -> its own package is the usual cycle
    # risk, so every edge counts, __init__ files included.
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        stack.append(node)
        for nxt in sorted(graph[node]):
            if state.get(nxt) == 1:
                return stack[stack.index(nxt):] + [nxt]
            if nxt not in state:
                cycle = visit(nxt)
                if cycle:
                    return cycle
        stack.pop()
        state[node] = 2
        return None

    for module in sorted(graph):
        if module not in state:
            cycle = visit(module)
            assert cycle is None, "import cycle: " + " -> ".join(cycle)


@pytest.mark.parametrize("module", sorted(m for m in MODULES if MODULES[m].name != "__main__.py"))
def test_public_modules_declare_all(module):
    """Every module says what it exports (``__all__``), and exports only names it defines or imports."""
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    declared = [node for node in tree.body if isinstance(node, ast.Assign)
                and any(isinstance(t, ast.Name) and t.id == "__all__" for t in node.targets)]
    if module.endswith("_version"):
        return
    assert declared, f"{module} has no __all__"
    lazy = _lazy_exports(tree)
    value = declared[0].value
    if isinstance(value, ast.Call):  # __all__ = list(_EXPORTS)
        names = list(lazy)
    else:  # a list, possibly with *_EXPORTS in it
        names = [n for e in value.elts for n in (lazy if isinstance(e, ast.Starred) else [ast.literal_eval(e)])]
    bound = set()
    for node in tree.body:
        if isinstance(node, (ast.FunctionDef, ast.ClassDef, ast.AsyncFunctionDef)):
            bound.add(node.name)
        elif isinstance(node, ast.Assign):
            bound |= {t.id for t in node.targets if isinstance(t, ast.Name)}
            bound |= {e.id for t in node.targets if isinstance(t, ast.Tuple) for e in t.elts if isinstance(e, ast.Name)}
        elif isinstance(node, ast.AnnAssign) and isinstance(node.target, ast.Name):
            bound.add(node.target.id)
        elif isinstance(node, (ast.Import, ast.ImportFrom)):
            bound |= {(a.asname or a.name).split(".")[0] for a in node.names}
    assert not set(names) - bound - set(lazy) - {"__version__"}, f"{module}.__all__ lists undefined names"
    assert not [n for n in names if n.startswith("_") and n != "__version__"], f"{module}.__all__ exports private names"


def test_the_rule_catches_an_upward_import(tmp_path, monkeypatch):
    """The checker itself: a core module importing the analysis layer is reported."""
    fake = tmp_path / "globcons" / "core"
    fake.mkdir(parents=True)
    (fake / "bad.py").write_text("from globcons.analysis.columns import score_columns\n")
    edges = _imports(fake / "bad.py", "globcons.core.bad")
    assert edges == [(1, "globcons.analysis.columns", ["score_columns"])]
    assert LAYERS[_unit(edges[0][1])] > LAYERS[_unit("globcons.core.bad")]


@pytest.mark.parametrize("package", sorted(m for m, p in MODULES.items() if p.name == "__init__.py"
                                           and _lazy_exports(ast.parse(p.read_text(encoding="utf-8")))))
def test_lazy_exports_resolve_to_the_named_objects_even_after_every_submodule_is_imported(package):
    """A submodule named like a function it exports would shadow that function once imported: none is."""
    import importlib

    for module in MODULES:
        if module.startswith(package + ".") and not module.endswith("__main__"):
            importlib.import_module(module)
    loaded = importlib.import_module(package)
    for name, source in _lazy_exports(ast.parse(MODULES[package].read_text(encoding="utf-8"))).items():
        assert getattr(loaded, name) is getattr(importlib.import_module(source), name), f"{package}.{name}"
