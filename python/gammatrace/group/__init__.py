"""The group layer: a structure with its point group, above ``io`` and ``tables``.

- :mod:`.symmetry` — :class:`SymmetryData`, the one value object every layer above reads
  (structure, operations in canonical order, classes, permutations, table);
- :mod:`.chirality` — ``improper_within``, the margin of a chiral verdict;
- :mod:`.measure` — near symmetry: higher groups at looser tolerances and continuous symmetry
  measures (``NearSymmetry``, ``continuous_measure``);
- :mod:`.orbits` — symmetry-equivalent atoms and their site groups;
- :mod:`.stabilisers` — where the operations send given atoms;
- :mod:`.irreps` — exact operations and reference irreducible matrices (for the matrix code);
- :mod:`.harmonics` — real spherical harmonics and their rotation matrices.
"""

from __future__ import annotations

from .chirality import improper_within
from .measure import NearGroup, NearSymmetry, continuous_measure
from .orbits import Orbit, environments, orbits, site_group_names
from .symmetry import DEFAULT_TOL, VERIFY_ALL_LIMIT, SymmetryData, as_symmetry

__all__ = [
    "DEFAULT_TOL",
    "VERIFY_ALL_LIMIT",
    "NearGroup",
    "NearSymmetry",
    "Orbit",
    "SymmetryData",
    "as_symmetry",
    "continuous_measure",
    "environments",
    "improper_within",
    "orbits",
    "site_group_names",
]
