"""Element symbols by atomic number, read once from the core's element table (rust/structure.rs),
so the project has a single periodic table."""

from __future__ import annotations

import numpy as np

from .. import _core

__all__ = ["SYMBOLS", "atomic_number"]

#: ``SYMBOLS[z]`` is the symbol of element z (``SYMBOLS[0]`` is a placeholder "X").
SYMBOLS: list[str] = ["X", *_core.element_data(np.arange(1, 119, dtype=np.int64))[2]]


def atomic_number(symbol: str) -> int:
    """Atomic number of an element symbol (case-insensitive).

    Raises
    ------
    KeyError
        For an unknown symbol.
    """
    try:
        return int(_core.atomic_numbers([symbol])[0])
    except ValueError:
        raise KeyError(symbol) from None
