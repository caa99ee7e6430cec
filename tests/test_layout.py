"""House rules that a test can hold (shared/STYLE.md §2, §5): the Rust core is plain Rust
outside rust/python/, and the typed stub lists exactly what the compiled core exports."""

from __future__ import annotations

import ast
import pathlib
import re
import sys

import gammatrace
from gammatrace import _core

ROOT = pathlib.Path(__file__).resolve().parent.parent


PYTHON_AWARE = re.compile(
    r"\b(pyo3|numpy)::|use (pyo3|numpy)\b|#\[py(function|class|module|methods)\b"
)


def test_only_rust_python_folder_uses_pyo3_or_numpy():
    glue = ROOT / "rust" / "python"
    files = sorted((ROOT / "rust").rglob("*.rs"))
    core = [p for p in files if glue not in p.parents]
    assert len(core) > 5  # the core's modules are there to be checked
    offenders = [
        str(p.relative_to(ROOT)) for p in core if PYTHON_AWARE.search(p.read_text(encoding="utf-8"))
    ]
    assert offenders == []
    # The glue is where this test expects it: every file of rust/python/ is Python-aware.
    glue_files = sorted(glue.glob("*.rs"))
    assert (glue / "mod.rs") in glue_files
    assert all(PYTHON_AWARE.search(p.read_text(encoding="utf-8")) for p in glue_files)


def test_stub_lists_exactly_the_core_exports():
    stub = ROOT / "python" / "gammatrace" / "_core.pyi"
    if not stub.exists():  # installed without sources: check the packaged stub instead
        stub = pathlib.Path(gammatrace.__file__).with_name("_core.pyi")
    tree = ast.parse(stub.read_text(encoding="utf-8"))
    declared = {n.name for n in tree.body if isinstance(n, (ast.FunctionDef, ast.ClassDef))}
    exported = {
        name for name in dir(_core) if not name.startswith("_") and callable(getattr(_core, name))
    }
    assert declared == exported


def test_public_api_is_importable_and_documented():
    for name in gammatrace.__all__:
        obj = getattr(gammatrace, name)
        if callable(obj):
            assert obj.__doc__, name


def _module_name(path: pathlib.Path, package_root: pathlib.Path) -> str:
    rel = path.relative_to(package_root.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _import_graph() -> dict[str, set[str]]:
    """Edges module -> gammatrace module it imports, from every import statement anywhere in
    the file (function-local imports count; `if TYPE_CHECKING:` blocks do not run)."""
    root = ROOT / "python" / "gammatrace"
    files = {_module_name(p, root): p for p in root.rglob("*.py")}
    graph: dict[str, set[str]] = {m: set() for m in files}
    for mod, path in files.items():
        is_pkg = path.name == "__init__.py"
        package = mod if is_pkg else mod.rpartition(".")[0]
        tree = ast.parse(path.read_text(encoding="utf-8"))
        # annotations only: `if TYPE_CHECKING:` blocks never run
        typing_only = {
            id(n)
            for block in ast.walk(tree)
            if isinstance(block, ast.If) and "TYPE_CHECKING" in ast.unparse(block.test)
            for stmt in block.body
            for n in ast.walk(stmt)
        }
        for node in ast.walk(tree):
            if id(node) in typing_only:
                continue
            targets = []
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    base = package.split(".")
                    base = base[: len(base) - (node.level - 1)]
                    stem = ".".join(base + ([node.module] if node.module else []))
                else:
                    stem = node.module or ""
                # `from X import name`: the submodule X.name if there is one, else X itself
                targets = [
                    f"{stem}.{a.name}" if f"{stem}.{a.name}" in files else stem for a in node.names
                ]
            for t in targets:
                # the deepest existing module named by the import
                while t and t not in files:
                    t = t.rpartition(".")[0]
                # a package is always imported before its modules: edges to an enclosing
                # package say nothing about cycles
                if t and t != mod and not mod.startswith(t + "."):
                    graph[mod].add(t)
    return graph


def test_no_import_cycle_inside_the_package():
    graph = _import_graph()
    assert len(graph) > 20 and any(graph.values())  # the package is there to be checked
    # Tarjan's strongly connected components; any component of two or more is a cycle
    index, low, stack, on_stack, cycles = {}, {}, [], set(), []
    counter = [0]

    def visit(v):
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph[v]):
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
                cycles.append(sorted(comp))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    assert cycles == []


def test_cycle_finder_sees_function_local_imports(tmp_path, monkeypatch):
    # the check above must be able to fail: a package whose two modules import each other,
    # one of them inside a function
    pkg = tmp_path / "python" / "gammatrace"
    pkg.mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "a.py").write_text("from . import b\n")
    (pkg / "b.py").write_text("def f():\n    from .a import g\n")
    monkeypatch.setattr(sys.modules[__name__], "ROOT", tmp_path)
    graph = _import_graph()
    assert "gammatrace.a" in graph["gammatrace.b"] and "gammatrace.b" in graph["gammatrace.a"]


# The layers of DEVELOPERS.md ("Layers"), bottom up: a module imports only from its own layer
# or the layers below it. Keys are top-level modules or sub-packages of gammatrace.
LAYERS = {
    "_core": 0,
    "_progress": 0,
    "text": 0,
    "errors": 0,
    "render": 0,
    "io": 1,
    "tables": 2,
    "group": 3,
    "bases": 4,
    "basis_change": 4,
    "spectroscopy": 5,
    "modes": 5,
    "symmetrize": 5,
    "pictures": 5,
    "summary": 5,
    "analysis": 6,
    "descent": 7,
    "batch": 7,
    "demo": 8,
    "cli": 9,
}


def _layer(module: str) -> int | None:
    parts = module.split(".")
    if len(parts) < 2:
        return None  # the package's own __init__ (the public API) may import anything
    return LAYERS[parts[1]]


def _upward_imports(graph: dict[str, set[str]]) -> list[tuple[str, str]]:
    return sorted(
        (mod, dep)
        for mod, deps in graph.items()
        for dep in deps
        if _layer(mod) is not None and _layer(dep) is not None and _layer(dep) > _layer(mod)
    )


def test_every_module_has_a_layer_and_imports_only_downward():
    graph = _import_graph()
    unplaced = sorted(m for m in graph if "." in m and m.split(".")[1] not in LAYERS)
    assert unplaced == []
    assert _upward_imports(graph) == []


def test_layer_check_sees_an_upward_import(tmp_path, monkeypatch):
    # the check above must be able to fail: io importing the analysis layer
    pkg = tmp_path / "python" / "gammatrace"
    (pkg / "io").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "io" / "__init__.py").write_text("def f():\n    from ..analysis import analyze\n")
    (pkg / "analysis.py").write_text("from .io import f\n")
    monkeypatch.setattr(sys.modules[__name__], "ROOT", tmp_path)
    assert _upward_imports(_import_graph()) == [("gammatrace.io", "gammatrace.analysis")]
