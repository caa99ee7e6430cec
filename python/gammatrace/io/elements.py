"""Elements: symbols, atomic numbers, standard masses and covalent radii, all read from the
core's element table (rust/structure.rs), so the project has a single periodic table."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .. import _core

__all__ = ["SYMBOLS", "atomic_number", "atomic_numbers", "element_data"]

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


def atomic_numbers(symbols: Sequence[str]) -> np.ndarray:
    """Atomic numbers for element symbols (``"C"``, ``"cl"``) or numeric strings.

    Raises
    ------
    StructureError
        For an unknown symbol; the message names its position.
    """
    return _core.atomic_numbers([str(s).strip() for s in symbols])


def element_data(numbers: np.ndarray) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Standard atomic masses (u), covalent radii (Å) and symbols for atomic numbers."""
    nums = np.ascontiguousarray(numbers, dtype=np.int64)
    return _core.element_data(nums)
