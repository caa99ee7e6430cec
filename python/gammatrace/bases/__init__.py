"""Bases: the one structure-independent description of functions on sites, and its resolved form.

- :class:`Basis` (:mod:`.spec`): frozen, hashable; string form ``NAME:options``
  (:func:`parse_basis`), constructors for every kind.
- :class:`ResolvedBasis` (:mod:`.resolve`): a basis on one structure (shells per atom, bonds,
  π centres and normals, vectors), read by the counting code and the matrix code alike.
- :mod:`.components`: a resolved basis as site components for the matrix code;
  :mod:`.salc` their orbit-type reduction; :mod:`.naming` names of the basis functions and
  symmetry-adapted functions written out over them.

This package sits below the analysis, representations, sites and CLI layers and imports none
of them.
"""

from __future__ import annotations

from .components import MATRIX_KINDS, check_matrix_kind
from .resolve import ResolvedBasis, find_bonds, pi_centres, plane_normal
from .spec import ANY_ELEMENT, DEFAULT_BOND_SCALE, KINDS, ORBITAL_LETTERS, Basis, parse_basis

__all__ = [
    "ANY_ELEMENT",
    "DEFAULT_BOND_SCALE",
    "KINDS",
    "MATRIX_KINDS",
    "ORBITAL_LETTERS",
    "Basis",
    "ResolvedBasis",
    "check_matrix_kind",
    "find_bonds",
    "parse_basis",
    "pi_centres",
    "plane_normal",
]
