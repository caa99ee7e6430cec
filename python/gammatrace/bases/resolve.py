"""A basis resolved against one structure: the per-site function data every consumer reads.

:func:`resolve` (also :meth:`gammatrace.Basis.resolve`) does, once, everything that depends on
the structure: which shells each atom carries, the bond list (found from covalent radii at the
basis's scale, or the given pairs checked against the atoms), the π centres and their normals,
the user's vectors checked against the atoms. The counting code
(:mod:`gammatrace.bases.counting`) and the matrix code (:mod:`gammatrace.bases.components`)
read the :class:`ResolvedBasis` and nothing else.

The π centres (:func:`pi_centres`)
----------------------------------
The π basis puts one p orbital on each π centre, perpendicular to the π system there. The
atoms that may carry it are those of the named elements (``pi:C,N``), by default every element
but hydrogen (``pi:*``: every atom, hydrogens included). Then:

1. **A planar structure** (every atom within ``tol`` of one plane through the centre, and not
   all on one line): every such atom is a π centre, its orbital along the plane normal.
2. **Any other structure**: the π centres are found locally. Bonds come from covalent radii as
   for the bond bases (d ≤ 1.2 (r_i + r_j)), leaving out bonds to metal atoms, so a ring bound
   to a metal (a sandwich complex) keeps its π system. A non-hydrogen atom is

   - *trigonal* when it has three neighbours and its three bond angles add up to at least
     :data:`PI_PLANAR_ANGLE_SUM` (a flat, not pyramidal, atom);
   - *bent* when it has two neighbours at an angle of at most :data:`PI_LINEAR_ANGLE`;
   - *terminal* when its only neighbour is trigonal or bent (the O of a C=O);

   its orbital lies along the normal of the plane of its bonds (a terminal atom takes its
   neighbour's). Of these atoms, those bonded to another one form the π systems (a lone flat
   atom is not one), and the centres are their atoms of the named elements. Hydrogens are
   never local π centres, and metal atoms only in planar structures. Each normal points to
   the side where its largest component is positive.

Linear structures and single atoms have no such basis (their p orbitals come in
perpendicular pairs): use ``orbitals:El=p``.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np

from .. import _core
from ..errors import BasisError
from ..io.elements import SYMBOLS
from ..text import format_length, plural

__all__ = [
    "DEFAULT_BOND_SCALE",
    "NON_METALS",
    "PI_LINEAR_ANGLE",
    "PI_PLANAR_ANGLE_SUM",
    "ResolvedBasis",
    "find_bonds",
    "pi_centres",
    "plane_normal",
    "resolve",
]

_ANY = "*"
#: Bond criterion d_ij <= scale * (r_i + r_j) with Cordero covalent radii.
DEFAULT_BOND_SCALE = 1.2
#: Atomic numbers of the elements that are not metals (hydrogen, the noble gases, the
#: non-metals and the metalloids B, Si, Ge, As, Sb, Te, At); bonds to any other element are
#: left out when the π rule looks for local π systems.
NON_METALS = frozenset(
    {1, 2, 5, 6, 7, 8, 9, 10, 14, 15, 16, 17, 18, 32, 33, 34, 35, 36, 51, 52, 53, 54, 85, 86}
)
#: A three-coordinate atom is flat (a π centre) when its bond angles add up to at least
#: this many degrees (360 for a planar atom; about 328 for a tetrahedral one).
PI_PLANAR_ANGLE_SUM = 355.0
#: A two-coordinate atom is bent (a π centre) when its bond angle is at most this many
#: degrees; straighter, it has two perpendicular p orbitals and no single normal.
PI_LINEAR_ANGLE = 175.0


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
        π: unit normal ``(3,)`` of the plane of a planar structure; None when the π centres
        were found locally (see the module notes).
    vectors : numpy.ndarray or None
        User vectors: ``float64 (n_atoms, m, 3)``.
    centres : numpy.ndarray or None
        π: ``int64 (k,)`` the atoms carrying a p orbital, in increasing order.
    normals : numpy.ndarray or None
        π: ``float64 (k, 3)`` the unit direction of each centre's p orbital.
    """

    basis: Any
    numbers: np.ndarray
    element_shells: dict
    pairs: np.ndarray | None = None
    normal: np.ndarray | None = None
    vectors: np.ndarray | None = None
    centres: np.ndarray | None = None
    normals: np.ndarray | None = None

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
        if kind == "atoms":
            return np.ones(n, dtype=np.int64)
        if kind == "pi":
            out = np.zeros(n, dtype=np.int64)
            out[self.centres] = 1
            return out
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

    @cached_property
    def carriers(self) -> np.ndarray:
        """``bool (n_atoms,)``: the atoms carrying at least one function (atom-site kinds)."""
        return self.functions_per_atom > 0

    @cached_property
    def atom_normals(self) -> np.ndarray:
        """π: ``float64 (n_atoms, 3)`` each atom's p direction, a zero row for non-centres."""
        out = np.zeros((self.n_atoms, 3))
        if self.centres is not None:
            out[self.centres] = self.normals
        return out

    @property
    def uniform(self) -> bool:
        """True when every atom carrying the basis carries the same functions, transformed
        alike (so an unshifted atom contributes the same amount whichever it is)."""
        if self.kind == "orbitals":
            present = np.unique(self.numbers[self.carriers])
            return len({tuple(sorted(self.element_shells[int(z)])) for z in present}) <= 1
        if self.kind == "pi":
            # one orbital each, but p orbitals along different normals may answer one
            # operation with different signs
            return bool(np.all(np.abs(self.normals @ self.normals[0]) > 1.0 - 1e-9))
        if self.kind == "vectors":
            return bool(np.all(self.vectors == self.vectors[:1]))
        return True


def find_bonds(numbers: np.ndarray, positions: np.ndarray, scale: float) -> np.ndarray:
    """Bonded atom pairs ``int64 (n_bonds, 2)``: d_ij ≤ scale · (r_i + r_j), covalent radii."""
    nums = np.ascontiguousarray(numbers, dtype=np.int64)
    radii = _core.element_data(nums)[1]
    pos = np.ascontiguousarray(positions, dtype=np.float64)
    return _core.find_bonds(pos, radii, float(scale))


def plane_normal(positions: np.ndarray, center: np.ndarray, tol: float) -> np.ndarray:
    """Unit normal of the plane of a planar structure (through ``center``).

    Raises
    ------
    BasisError
        When the structure is not planar within ``tol`` (names the farthest atom), or when
        it is a single atom or linear (no single plane).
    """
    normal, worst, height = _best_plane(positions - center, tol)
    if height > tol:
        raise BasisError(
            f"pi: the structure is not planar: atom {worst} is {format_length(height)} Å from "
            f"the best plane (tolerance {tol} Å)"
        )
    return normal


def _best_plane(x: np.ndarray, tol: float) -> tuple[np.ndarray, int, float]:
    """Normal of the best plane through the origin, the farthest atom and its distance.

    Raises
    ------
    BasisError
        For a single atom or atoms all within ``tol`` of one line through the origin.
    """
    if len(x) < 2 or np.all(np.linalg.norm(x, axis=1) <= tol):
        raise BasisError(
            "pi: a single atom has no plane; its p orbitals come as a set of three "
            "(use orbitals:El=p)"
        )
    _, _s, vt = np.linalg.svd(x, full_matrices=False)
    if len(vt) < 3:
        vt = np.linalg.svd(np.vstack([x, np.zeros((3 - len(x), 3))]))[2]
    off_line = np.linalg.norm(x - np.outer(x @ vt[0], vt[0]), axis=1)
    if np.all(off_line <= tol):
        raise BasisError(
            "pi: the structure is linear: its p orbitals perpendicular to the axis come in "
            "pairs, with no single plane to stand on (use orbitals:El=p)"
        )
    normal = vt[2] / np.linalg.norm(vt[2])
    height = np.abs(x @ normal)
    worst = int(np.argmax(height))
    return normal, worst, float(height[worst])


def _oriented(normals: np.ndarray) -> np.ndarray:
    """Unit normals, each turned so that its largest component is positive."""
    out = normals / np.linalg.norm(normals, axis=1, keepdims=True)
    size = np.abs(out)
    # the first component within 1e-9 of the largest, so near-ties fall alike everywhere
    first = np.argmax(size > size.max(axis=1, keepdims=True) - 1e-9, axis=1)
    flip = out[np.arange(len(out)), first] < 0
    return out * np.where(flip, -1.0, 1.0)[:, None] + 0.0  # no negative zeros


def _element_list(elements: tuple) -> str:
    if not elements:
        return "non-hydrogen"
    if elements == (_ANY,):
        return "any"
    return "/".join(SYMBOLS[z] for z in elements)


def pi_centres(
    numbers: np.ndarray,
    positions: np.ndarray,
    center: np.ndarray,
    tol: float,
    elements: tuple = (),
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """The π centres of a structure and the direction of each one's p orbital.

    The rule is that of the module notes: every atom of the named elements in a planar
    structure, else the atoms of local π systems found from the bonds.

    Parameters
    ----------
    numbers, positions
        The structure.
    center : ndarray, shape (3,)
        The point the operations fix (the plane of a planar structure passes through it).
    tol : float
        Largest distance from the plane, Å.
    elements : tuple
        Atomic numbers allowed to carry the orbital; ``()`` for every element but hydrogen,
        ``("*",)`` for every element.

    Returns
    -------
    centres : ndarray ``int64 (k,)``
    normals : ndarray ``float64 (k, 3)``
    plane : ndarray ``(3,)`` or None
        The plane normal of a planar structure, None when the centres were found locally.

    Raises
    ------
    BasisError
        For a single atom or a linear structure, and when no atom qualifies.
    """
    nums = np.asarray(numbers, dtype=np.int64)
    x = np.asarray(positions, dtype=np.float64) - center
    if elements == (_ANY,):
        allowed = np.ones(len(nums), dtype=bool)
    elif elements:
        allowed = np.isin(nums, np.array(elements, dtype=np.int64))
    else:
        allowed = nums != 1
    which = _element_list(elements)
    plane, worst, height = _best_plane(x, tol)
    if height <= tol:
        centres = np.flatnonzero(allowed)
        if centres.size == 0:
            raise BasisError(f"pi: no {which} atom in this planar structure carries a p orbital")
        plane = _oriented(plane[None, :])[0]
        return centres, np.tile(plane, (centres.size, 1)), plane
    centres, normals = _local_pi_systems(nums, np.asarray(positions, dtype=np.float64))
    keep = allowed[centres]
    if not keep.any():
        raise BasisError(
            f"pi: no π centres: the structure is not planar (atom {worst} is "
            f"{format_length(height)} Å from the best plane, tolerance {tol} Å) and no "
            f"{which} atom belongs to a local π system (flat atoms with two or three bonds, "
            "bonded to one another)"
        )
    return centres[keep], normals[keep], None


def _local_pi_systems(nums: np.ndarray, pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Atoms of the local π systems (any element but hydrogen) and their unit normals."""
    n = len(nums)
    pairs = find_bonds(nums, pos, DEFAULT_BOND_SCALE)
    metal = ~np.isin(nums, np.array(sorted(NON_METALS)))
    pairs = pairs[~(metal[pairs[:, 0]] | metal[pairs[:, 1]])]
    ends = np.concatenate([pairs[:, 0], pairs[:, 1]])
    others = np.concatenate([pairs[:, 1], pairs[:, 0]])
    order = np.argsort(ends, kind="stable")
    ends, others = ends[order], others[order]
    degree = np.bincount(ends, minlength=n)
    start = np.concatenate([[0], np.cumsum(degree)[:-1]])
    heavy = nums != 1
    normals = np.zeros((n, 3))
    flat = np.zeros(n, dtype=bool)

    def directions(atoms: np.ndarray, k: int) -> np.ndarray:
        nb = others[start[atoms][:, None] + np.arange(k)]
        d = pos[nb] - pos[atoms][:, None, :]
        return d / np.linalg.norm(d, axis=2, keepdims=True)

    three = np.flatnonzero(heavy & (degree == 3))
    if three.size:
        u = directions(three, 3)
        cos = np.stack([np.sum(u[:, a] * u[:, b], axis=1) for a, b in ((0, 1), (1, 2), (2, 0))])
        angle_sum = np.degrees(np.arccos(np.clip(cos, -1.0, 1.0))).sum(axis=0)
        ok = angle_sum >= PI_PLANAR_ANGLE_SUM
        # around a flat atom the three cross products point the same way
        w = np.cross(u[:, 0], u[:, 1]) + np.cross(u[:, 1], u[:, 2]) + np.cross(u[:, 2], u[:, 0])
        flat[three[ok]] = True
        normals[three[ok]] = w[ok]
    two = np.flatnonzero(heavy & (degree == 2))
    if two.size:
        u = directions(two, 2)
        cos = np.sum(u[:, 0] * u[:, 1], axis=1)
        ok = np.degrees(np.arccos(np.clip(cos, -1.0, 1.0))) <= PI_LINEAR_ANGLE
        flat[two[ok]] = True
        normals[two[ok]] = np.cross(u[ok, 0], u[ok, 1])
    one = np.flatnonzero(heavy & (degree == 1))
    if one.size:
        nb = others[start[one]]
        ok = flat[nb]
        normals[one[ok]] = normals[nb[ok]]
        flat[one[ok]] = True
    # a π system has at least two centres: keep the flat atoms bonded to another one
    linked = np.zeros(n, dtype=bool)
    both = flat[pairs[:, 0]] & flat[pairs[:, 1]]
    linked[pairs[both].ravel()] = True
    centres = np.flatnonzero(flat & linked)
    if centres.size == 0:
        return centres, np.zeros((0, 3))
    return centres, _oriented(normals[centres])


def resolve(
    basis: Any, structure: Any, *, center: Any = None, tol: float | None = None
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
    tol : float, optional
        Largest distance from the plane for π, Å; default ``structure.tol`` when it has one
        (a :class:`~gammatrace.basis_change.SymmetryData`), else 0.01.

    Raises
    ------
    BasisError
        When the basis does not fit the structure: a bond naming a missing atom, vectors
        for another number of atoms, π on a structure without π centres (see the module
        notes).
    """
    if tol is None:
        tol = float(getattr(structure, "tol", _core.DEFAULT_TOLERANCE))
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
                f"exist (the structure has {plural(n, 'atom')})"
            )
        return ResolvedBasis(basis, numbers, {}, pairs=pairs)
    if kind == "pi":
        if center is None:
            center = getattr(structure, "center", None)
        c = positions.mean(axis=0) if center is None else np.asarray(center, dtype=np.float64)
        centres, normals, plane = pi_centres(numbers, positions, c, tol, basis.elements)
        for a in (centres, normals):
            a.setflags(write=False)
        return ResolvedBasis(basis, numbers, {}, normal=plane, centres=centres, normals=normals)
    if kind == "vectors":
        vec = basis.vectors
        if vec.shape[0] != n:
            raise BasisError(
                f"vectors: {plural(vec.shape[0], 'row')} but the structure has {plural(n, 'atom')}"
            )
        return ResolvedBasis(basis, numbers, {}, vectors=vec)
    return ResolvedBasis(basis, numbers, {})
