"""Structures in and out: the bottom layer of the package (imports only the core and errors).

- :mod:`.structure` — :class:`Structure`, :class:`FrameError`;
- :mod:`.elements` — the one periodic table (symbols, masses, radii), read from the core;
- :mod:`.xyz` — (extended) XYZ through the Rust reader, and XYZ output;
- :mod:`.adapters` — optional ASE and RDKit readers;
- :mod:`.convert` — :func:`as_structure`, any supported input to a Structure;
- :mod:`.builders` — ideal test structures (C60, Mackay icosahedra, fcc clusters, orbits).
"""

from __future__ import annotations

from .adapters import from_ase, from_rdkit, read_structures
from .convert import StructureLike, as_structure
from .elements import SYMBOLS, atomic_number, atomic_numbers, element_data
from .structure import FrameError, Structure
from .xyz import read_xyz, read_xyz_raw, write_xyz

__all__ = [
    "SYMBOLS",
    "FrameError",
    "Structure",
    "StructureLike",
    "as_structure",
    "atomic_number",
    "atomic_numbers",
    "element_data",
    "from_ase",
    "from_rdkit",
    "read_structures",
    "read_xyz",
    "read_xyz_raw",
    "write_xyz",
]
