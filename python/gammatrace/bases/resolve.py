"""A basis resolved against one structure: the per-site function data every consumer reads.

:func:`resolve` (also :meth:`gammatrace.Basis.resolve`) does, once, everything that depends on
the structure: which shells each atom carries, the bond list (found from covalent radii at the
basis's scale, or the given pairs checked against the atoms), the normal of a planar
structure, the user's vectors checked against the atoms. The counting code
(:mod:`gammatrace.bases.counting`) and the matrix code (:mod:`gammatrace.bases.components`)
read the :class:`ResolvedBasis` and nothing else.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np

from .. import _core
from ..errors import BasisError

__all__ = ["ResolvedBasis", "find_bonds", "plane_normal", "resolve"]

_ANY = "*"


@dataclass(frozen=True, eq=False)
class ResolvedBasis:
    """A :class:`~gammatrace.Basis` on one structure.

    Attributes
    ----------
    basis : Basis
        The structure-independent description.
    numbers : numpy.ndarray
        ``int64 (n_atoms,)`` atomic numbers of the structure (read-only).
    element_shells : dict
        Orbitals: atomic number -> tuple of angular momenta, for every element present
        (an empty tuple when the element carries none). Empty for the other kinds.
    pairs : numpy.ndarray or None
        Bond bases: ``int64 (n_bonds, 2)`` atom pairs, each an atom of the structure.
    normal : numpy.ndarray or None
        π: unit normal ``(3,)`` of the plane of the structure.
    vectors : numpy.ndarray or None
        User vectors: ``float64 (n_atoms, m, 3)``.
    """

    basis: Any
    numbers: np.ndarray
    element_shells: dict
    pairs: np.ndarray | None = None
    normal: np.ndarray | None = None
    vectors: np.ndarray | None = None

    @property
    def kind(self) -> str:
        """The kind of the basis (``"cartesian"``, ``"orbitals"`` ...)."""
        return self.basis.kind

    @property
    def n_atoms(self) -> int:
        """Number of atoms of the structure it was resolved on."""
        return int(self.numbers.shape[0])

    @cached_property
    def functions_per_atom(self) -> np.ndarray:
        """``int64 (n_atoms,)`` functions at each atom (atom-site kinds; zeros for bonds)."""
        n = self.n_atoms
        kind = self.kind
        if kind in ("atoms", "pi"):
            return np.ones(n, dtype=np.int64)
        if kind == "cartesian":
            return np.full(n, 3, dtype=np.int64)
        if kind == "vectors":
            return np.full(n, self.vectors.shape[1], dtype=np.int64)
        if kind == "orbitals":
            present = np.array(sorted(self.element_shells), dtype=np.int64)
            size = np.array(
                [sum(2 * l + 1 for l in self.element_shells[int(z)]) for z in present],
                dtype=np.int64,
            )
            return size[np.searchsorted(present, self.numbers)]
        return np.zeros(n, dtype=np.int64)

    @property
    def dimension(self) -> int:
        """Number of functions of the basis on this structure."""
        if self.pairs is not None:
            return int(self.pairs.shape[0])
        return int(self.functions_per_atom.sum())

    @cached_property
    def shell_counts(self) -> np.ndarray:
        """Orbitals: ``uint32 (n_atoms, l_max + 1)``, shells of each l at each atom."""
        present = np.array(sorted(self.element_shells), dtype=np.int64)
        n_l = 1 + max((l for ls in self.element_shells.values() for l in ls), default=0)
        table = np.zeros((max(len(present), 1), n_l), dtype=np.uint32)
        for row, z in enumerate(present):
            for l in self.element_shells[int(z)]:
                table[row, l] += 1
        return np.ascontiguousarray(table[np.searchsorted(present, self.numbers)])

    @property
    def uniform(self) -> bool:
        """True when every atom carries the same functions (a contribution per atom exists)."""
        if self.kind != "orbitals":
            return True
        present = np.unique(self.numbers)
        return len({tuple(sorted(self.element_shells[int(z)])) for z in present}) == 1


def find_bonds(numbers: np.ndarray, positions: np.ndarray, scale: float) -> np.ndarray:
    """Bonded atom pairs ``int64 (n_bonds, 2)``: d_ij ≤ scale · (r_i + r_j), covalent radii."""
    nums = np.ascontiguousarray(numbers, dtype=np.int64)
    radii = _core.element_data(nums)[1]
    pos = np.ascontiguousarray(positions, dtype=np.float64)
    return _core.find_bonds(pos, radii, float(scale))


def plane_normal(positions: np.ndarray, center: np.ndarray, tol: float) -> np.ndarray:
    """Unit normal of the plane of a planar structure.

    Raises
    ------
    BasisError
        When the structure is not planar within ``tol`` (names the farthest atom).
    """
    x = positions - center
    if len(x) < 3:
        raise BasisError("pi: needs a planar structure of at least 3 atoms")
    _, _s, vt = np.linalg.svd(x, full_matrices=False)
    normal = vt[-1]
    height = np.abs(x @ normal)
    worst = int(np.argmax(height))
    if height[worst] > tol:
        raise BasisError(
            f"pi: the structure is not planar: atom {worst} is {height[worst]:.3f} Å from the "
            f"best plane (tolerance {tol} Å)"
        )
    return normal / np.linalg.norm(normal)


def resolve(
    basis: Any, structure: Any, *, center: Any = None, tol: float = _core.DEFAULT_TOLERANCE
) -> ResolvedBasis:
    """Resolve a :class:`~gammatrace.Basis` against one structure.

    Parameters
    ----------
    basis : Basis
    structure
        Anything with ``positions`` ``(n_atoms, 3)`` and ``numbers`` ``(n_atoms,)``: a
        :class:`~gammatrace.Structure` or a :class:`~gammatrace.basis_change.SymmetryData`.
    center : array_like, optional
        Fixed point of the operations (for the plane of π); default ``structure.center``
        when it has one, else the centroid.
    tol : float
        Largest distance from the plane for π, Å.

    Raises
    ------
    BasisError
        When the basis does not fit the structure: a bond naming a missing atom, vectors
        for another number of atoms, π on a structure that is not planar.
    """
    positions = np.ascontiguousarray(structure.positions, dtype=np.float64)
    numbers = np.array(structure.numbers, dtype=np.int64)
    if positions.ndim != 2 or positions.shape[1] != 3 or numbers.shape != positions.shape[:1]:
        raise BasisError(
            f"basis '{basis}': expected positions (n_atoms, 3) and numbers (n_atoms,), got "
            f"{positions.shape} and {numbers.shape}"
        )
    numbers.setflags(write=False)
    n = len(numbers)
    kind = basis.kind
    if kind == "orbitals":
        spec = dict(basis.shell_spec)
        other = spec.get(_ANY, ())
        shells = {int(z): spec.get(int(z), other) for z in np.unique(numbers)}
        return ResolvedBasis(basis, numbers, shells)
    if kind in ("bonds", "bond_vectors"):
        pairs = basis.pairs
        if pairs is None:
            pairs = find_bonds(numbers, positions, basis.bond_scale)
            pairs.setflags(write=False)
        if len(pairs) and (pairs.min() < 0 or pairs.max() >= n):
            k = int(np.argmax((pairs < 0).any(1) | (pairs >= n).any(1)))
            raise BasisError(
                f"bonds: bond {k} ({pairs[k, 0]}, {pairs[k, 1]}) names an atom that does not "
                f"exist (the structure has {n} atoms)"
            )
        return ResolvedBasis(basis, numbers, {}, pairs=pairs)
    if kind == "pi":
        if center is None:
            center = getattr(structure, "center", None)
        c = positions.mean(axis=0) if center is None else np.asarray(center, dtype=np.float64)
        return ResolvedBasis(basis, numbers, {}, normal=plane_normal(positions, c, tol))
    if kind == "vectors":
        vec = basis.vectors
        if vec.shape[0] != n:
            raise BasisError(f"vectors: {vec.shape[0]} rows but the structure has {n} atoms")
        return ResolvedBasis(basis, numbers, {}, vectors=vec)
    return ResolvedBasis(basis, numbers, {})
