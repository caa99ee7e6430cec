"""House rules that a test can hold (shared/STYLE.md §2, §5): the Rust core is plain Rust
outside rust/python/, and the typed stub lists exactly what the compiled core exports."""

from __future__ import annotations

import ast
import pathlib
import re

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
