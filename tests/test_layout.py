"""House rules that a test can hold (shared/STYLE.md §2, §5): the Rust core is plain Rust
outside rust/lib.rs, and the typed stub lists exactly what the compiled core exports."""

from __future__ import annotations

import ast
import pathlib
import re

import gammatrace
from gammatrace import _core

ROOT = pathlib.Path(__file__).resolve().parent.parent


def test_no_python_types_outside_lib_rs():
    offenders = []
    files = sorted((ROOT / "rust").rglob("*.rs"))
    assert len(files) > 5  # the core's modules are there to be checked
    for path in files:
        if path.name == "lib.rs" and path.parent.name == "rust":
            continue
        text = path.read_text(encoding="utf-8")
        if re.search(r"\b(pyo3|numpy)::", text) or re.search(r"use (pyo3|numpy)\b", text):
            offenders.append(str(path.relative_to(ROOT)))
    assert offenders == []


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
