"""Elements: symbols, atomic numbers, standard masses and covalent radii, all read from the
core's element table (rust/structure.rs), so the project has a single periodic table; and
isotopes: the nuclide symbols ``D`` and ``T`` and the species of atoms (element and mass).

Masses: standard atomic weights IUPAC 2021 (abridged); ²H 2.014101778 u and ³H 3.016049281 u
from the Atomic Mass Evaluation AME2020 (Wang et al., Chinese Physics C 45, 030003, 2021).
Both are written in rust/structure.rs from memory of the published tables.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .. import _core

__all__ = [
    "MASS_TOLERANCE",
    "STANDARD_MASSES",
    "SYMBOLS",
    "atomic_number",
    "atomic_numbers",
    "element_data",
    "nuclides",
    "species",
]

_TABLE = _core.element_data(np.arange(1, 119, dtype=np.int64))
#: ``SYMBOLS[z]`` is the symbol of element z (``SYMBOLS[0]`` is a placeholder "X").
SYMBOLS: list[str] = ["X", *_TABLE[2]]
#: ``STANDARD_MASSES[z]``: the standard atomic weight of element z in u (index 0 is NaN).
STANDARD_MASSES: np.ndarray = np.concatenate([[np.nan], _TABLE[0]])
STANDARD_MASSES.setflags(write=False)
#: Masses of one element closer than this (u) are one species, and a mass this close to the
#: standard atomic weight is the standard one (the core's ``MASS_TOLERANCE``).
MASS_TOLERANCE: float = float(_core.MASS_TOLERANCE)


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


def nuclides(symbols: Sequence[str]) -> tuple[np.ndarray, np.ndarray | None]:
    """Atomic numbers and masses of element or nuclide symbols (``"C"``, ``"D"``, ``"T"``).

    Returns
    -------
    numbers : ``int64 (n,)``
    masses : ``float64 (n,)`` or None
        None when no symbol names a nuclide; else the nuclide masses, with the standard
        atomic weight for element symbols.

    Raises
    ------
    StructureError
        For an unknown symbol; the message names its position.
    """
    try:
        return _core.nuclides(symbols)
    except TypeError:  # not a sequence of str: numpy strings, numbers written as symbols...
        return _core.nuclides([str(s) for s in symbols])


def species(numbers: np.ndarray, masses: np.ndarray | None = None) -> tuple[np.ndarray, list]:
    """Species codes (equal for atoms of one element and mass, within
    :data:`MASS_TOLERANCE`) and species symbols (the element symbol for the standard mass,
    ``D``/``T`` for ²H/³H, else the mass number before the symbol, ``13C``).

    Raises
    ------
    StructureError
        For an unknown atomic number or a mass that is not a positive number.
    InputError
        When ``masses`` does not have one entry per atom.
    """
    nums = np.ascontiguousarray(numbers, dtype=np.int64)
    m = None if masses is None else np.ascontiguousarray(masses, dtype=np.float64)
    return _core.species(nums, m)
