"""Structures in and out: the bottom layer of the package (imports only the core and errors).

- :mod:`.structure` — :class:`Structure`, :class:`FrameError`;
- :mod:`.elements` — the one periodic table (symbols, masses, radii), read from the core, and
  isotopes (nuclide symbols ``D``/``T``, species of atoms);
- :mod:`.xyz` — (extended) XYZ through the Rust reader, and XYZ output;
- :mod:`.cell` — periodic frames: refused, analysed as given, or unwrapped (``cell=``);
- :mod:`.adapters` — optional ASE and RDKit readers;
- :mod:`.convert` — :func:`as_structure`, any supported input to a Structure;
- :mod:`.builders` — ideal test structures (C60, Mackay icosahedra, fcc clusters, orbits).
"""

from __future__ import annotations

from .adapters import from_ase, from_rdkit, read_structures
from .cell import CELL_CHOICES, apply_cell, check_cell_choice
from .convert import StructureLike, as_structure
from .elements import (
    MASS_TOLERANCE,
    STANDARD_MASSES,
    SYMBOLS,
    atomic_number,
    atomic_numbers,
    element_data,
    nuclides,
)
from .structure import FrameError, Structure
from .xyz import read_xyz, read_xyz_raw, write_xyz

__all__ = [
    "CELL_CHOICES",
    "MASS_TOLERANCE",
    "STANDARD_MASSES",
    "SYMBOLS",
    "FrameError",
    "Structure",
    "StructureLike",
    "apply_cell",
    "as_structure",
    "atomic_number",
    "atomic_numbers",
    "check_cell_choice",
    "element_data",
    "from_ase",
    "from_rdkit",
    "nuclides",
    "read_structures",
    "read_xyz",
    "read_xyz_raw",
    "write_xyz",
]
