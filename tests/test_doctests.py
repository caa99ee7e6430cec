"""The examples in the public docstrings run as doctests (shared/STYLE.md §5)."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import gammatrace
import pytest

MODULES = sorted(
    m.name
    for m in pkgutil.walk_packages(gammatrace.__path__, "gammatrace.")
    if not m.name.endswith("._core")
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0


def test_some_examples_exist():
    finder = doctest.DocTestFinder()
    n = sum(len(t.examples) for name in MODULES for t in finder.find(importlib.import_module(name)))
    assert n >= 5
