"""Symmetry data, basis descriptions and sparse representation matrices.

Conventions
-----------
* Basis order. Cartesian: atom-major, ``3 * atom + (x, y, z)``, in the input frame. Orbitals:
  atom-major; within an atom the element's shells in the order given; within a shell the real
  harmonics m = -l..l of :mod:`gammatrace._sph_harm` (p = y, z, x) with axes of the input
  frame. Bonds: in the order given; a vector along bond (a, b) points from a to b.
* Representation matrices act on coefficient vectors: Γ(R) maps the function at site j to
  the function at site π_R(j), so Γ(R S) = Γ(R) Γ(S). Cartesian: Γ(R) = P(R) ⊗ R.
* Operations are made exact first (see :mod:`gammatrace._group`).

The public names are re-exported by :mod:`gammatrace.basis_change`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any, Union

import numpy as np
import scipy.sparse as sp

from . import _sph_harm
from ._elements import SYMBOLS, atomic_number
from ._group import GroupData, group_data
from ._salc import Component
from .errors import BasisError, InputError, SymmetryError

__all__ = [
    "Basis",
    "SymmetryData",
    "atom_orbits",
    "basis_dimension",
    "characters",
    "representation_matrices",
    "representation_matrix",
]

_SHELL_LETTERS = {"s": 0, "p": 1, "d": 2, "f": 3}


def _shape_error(name, expected, received):
    return InputError(f"{name}: expected {expected}, received {received}")


@dataclass(frozen=True)
class SymmetryData:
    """A structure with its point-group operations, as the analysis hands it over.

    Parameters
    ----------
    positions : ndarray, shape (N, 3)
        Cartesian coordinates in ångström, input frame.
    numbers : ndarray, shape (N,)
        Atomic numbers.
    center : ndarray, shape (3,)
        The fixed point of all operations.
    frame : ndarray, shape (3, 3)
        Rows = standard x, y, z axes in input coordinates.
    operations : ndarray, shape (h, 3, 3)
        Operations in the input frame acting on ``positions - center``.
    permutations : ndarray, shape (h, N)
        Operation k maps atom i onto atom ``permutations[k, i]``.
    table : CharacterTable
        The group's character table (``irreps``, ``character_matrix``, optional ``operations``
        and ``operation_class`` in the standard frame).
    op_class : ndarray, shape (h,)
        Class index (into ``table.classes``) of each operation.
    canonical_index : ndarray, shape (h,), optional
        Which of ``table.operations`` each operation is (as detection reports it); by
        default operation k is canonical operation k.

    Raises
    ------
    InputError
        If an array has the wrong shape or a permutation is not one.
    SymmetryError
        If a permutation maps an atom onto an atom of another element.
    """

    positions: np.ndarray
    numbers: np.ndarray
    center: np.ndarray
    frame: np.ndarray
    operations: np.ndarray
    permutations: np.ndarray
    table: Any
    op_class: np.ndarray
    canonical_index: np.ndarray | None = None

    def __post_init__(self):
        pos = np.ascontiguousarray(self.positions, dtype=np.float64)
        if pos.ndim != 2 or pos.shape[1] != 3 or pos.shape[0] == 0:
            raise _shape_error("positions", "shape (n_atoms, 3) with n_atoms >= 1", pos.shape)
        if not np.all(np.isfinite(pos)):
            raise InputError("positions: contains NaN or infinite coordinates")
        n = pos.shape[0]
        num = np.ascontiguousarray(self.numbers, dtype=np.int64)
        if num.shape != (n,):
            raise _shape_error("numbers", f"shape ({n},)", num.shape)
        center = np.ascontiguousarray(self.center, dtype=np.float64).reshape(-1)
        if center.shape != (3,):
            raise _shape_error("center", "shape (3,)", center.shape)
        frame = np.ascontiguousarray(self.frame, dtype=np.float64)
        if frame.shape != (3, 3):
            raise _shape_error("frame", "shape (3, 3)", frame.shape)
        ops = np.ascontiguousarray(self.operations, dtype=np.float64)
        if ops.ndim != 3 or ops.shape[1:] != (3, 3) or ops.shape[0] == 0:
            raise _shape_error("operations", "shape (h, 3, 3)", ops.shape)
        h = ops.shape[0]
        perms = np.ascontiguousarray(self.permutations, dtype=np.int64)
        if perms.shape != (h, n):
            raise _shape_error("permutations", f"shape ({h}, {n})", perms.shape)
        if np.any(np.sort(perms, axis=1) != np.arange(n)[None, :]):
            raise InputError("permutations: every row must be a permutation of range(n_atoms)")
        if np.any(num[perms] != num[None, :]):
            k, i = np.argwhere(num[perms] != num[None, :])[0]
            raise SymmetryError(
                f"operation {k} maps atom {i} ({SYMBOLS[num[i]] if 0 < num[i] < 119 else num[i]})"
                f" onto atom {perms[k, i]} of another element"
            )
        op_class = np.ascontiguousarray(self.op_class, dtype=np.int64)
        if op_class.shape != (h,):
            raise _shape_error("op_class", f"shape ({h},)", op_class.shape)
        n_classes = len(getattr(self.table, "classes", ()))
        if n_classes and (op_class.min() < 0 or op_class.max() >= n_classes):
            raise InputError(
                f"op_class: expected class indices in 0..{n_classes - 1}, received "
                f"{op_class.min()}..{op_class.max()}"
            )
        for name, value in (
            ("positions", pos),
            ("numbers", num),
            ("center", center),
            ("frame", frame),
            ("operations", ops),
            ("permutations", perms),
            ("op_class", op_class),
        ):
            value.setflags(write=False)
            object.__setattr__(self, name, value)

    @property
    def n_atoms(self) -> int:
        """Number of atoms N."""
        return int(self.positions.shape[0])

    @property
    def order(self) -> int:
        """Number of operations h."""
        return int(self.operations.shape[0])


ShellSpec = Mapping[Union[str, int], Union[str, "list[int]", "tuple[int, ...]"]]


@dataclass(frozen=True)
class Basis:
    """Description of a basis for representation matrices and symmetry-adapted functions.

    Build one with the class methods: :meth:`cartesian`, :meth:`atoms`, :meth:`orbitals`,
    :meth:`bonds`, :meth:`bond_vectors`. The strings ``"cartesian"`` and ``"atoms"`` are
    accepted wherever a Basis is.

    Attributes
    ----------
    kind : str
        ``"cartesian"``, ``"atoms"``, ``"orbitals"``, ``"bonds"`` or ``"bond_vectors"``.
    shells : dict or None
        For orbitals: atomic number -> tuple of angular momenta.
    pairs : ndarray or None
        For bond bases: (n_bonds, 2) atom indices.

    Examples
    --------
    >>> Basis.orbitals({"Fe": "spd", "H": "s"}).shells
    {26: (0, 1, 2), 1: (0,)}
    """

    kind: str
    shells: dict | None = None
    pairs: np.ndarray | None = field(default=None, compare=False)

    @classmethod
    def cartesian(cls) -> Basis:
        """Cartesian displacements x, y, z of every atom (3N functions)."""
        return cls("cartesian")

    @classmethod
    def atoms(cls) -> Basis:
        """One scalar per atom (the permutation representation)."""
        return cls("atoms")

    @classmethod
    def orbitals(cls, shells: ShellSpec) -> Basis:
        """Atomic orbitals in real spherical harmonics, per element.

        Parameters
        ----------
        shells : mapping
            Element symbol or atomic number -> shells, as letters (``"spd"``) or angular
            momenta (``[0, 1, 2]``), l <= 3. Repeated shells (``"ssp"``) are allowed.

        Raises
        ------
        BasisError
            For an unknown element, shell letter or an angular momentum above 3.
        """
        out = {}
        for key, spec in dict(shells).items():
            try:
                z = atomic_number(key) if isinstance(key, str) else int(key)
            except KeyError:
                raise BasisError(f"shells: unknown element {key!r}") from None
            if not 0 < z < len(SYMBOLS):
                raise BasisError(f"shells: unknown atomic number {key!r}")
            ls = []
            for item in spec:
                if isinstance(item, str):
                    if item.lower() not in _SHELL_LETTERS:
                        raise BasisError(
                            f"shells[{key!r}]: unknown shell {item!r}; expected s, p, d or f"
                        )
                    ls.append(_SHELL_LETTERS[item.lower()])
                else:
                    l = int(item)
                    if not 0 <= l <= _sph_harm.MAX_L:
                        raise BasisError(
                            f"shells[{key!r}]: angular momentum {item!r} outside "
                            f"0..{_sph_harm.MAX_L}"
                        )
                    ls.append(l)
            out[z] = tuple(ls)
        return cls("orbitals", shells=out)

    @classmethod
    def bonds(cls, pairs) -> Basis:
        """One scalar (a stretch) per bond; ``pairs`` is an (n_bonds, 2) integer array."""
        return cls("bonds", pairs=_check_pairs(pairs))

    @classmethod
    def bond_vectors(cls, pairs) -> Basis:
        """One vector along each bond (a -> b); reversed by an operation, it changes sign."""
        return cls("bond_vectors", pairs=_check_pairs(pairs))


def _check_pairs(pairs) -> np.ndarray:
    arr = np.asarray(pairs)
    if arr.ndim != 2 or arr.shape[1] != 2 or not np.issubdtype(arr.dtype, np.integer):
        raise BasisError(
            f"pairs: expected an integer array of shape (n_bonds, 2), received "
            f"{arr.dtype} {arr.shape}"
        )
    arr = np.ascontiguousarray(arr, dtype=np.int64)
    if np.any(arr[:, 0] == arr[:, 1]):
        raise BasisError(
            f"pairs: bond {int(np.argmax(arr[:, 0] == arr[:, 1]))} joins an atom to itself"
        )
    key = np.sort(arr, axis=1)
    if np.unique(key, axis=0).shape[0] != key.shape[0]:
        raise BasisError("pairs: a bond is listed twice")
    arr.setflags(write=False)
    return arr


def as_basis(basis) -> Basis:
    if isinstance(basis, Basis):
        return basis
    if isinstance(basis, str) and basis in ("cartesian", "atoms"):
        return Basis(basis)
    raise BasisError(f"basis: expected a Basis or one of 'cartesian', 'atoms', received {basis!r}")


def _bond_permutation(sym: SymmetryData, pairs: np.ndarray):
    n = sym.n_atoms
    if pairs.size and (pairs.min() < 0 or pairs.max() >= n):
        raise BasisError(f"pairs: atom indices must lie in 0..{n - 1}")
    key = np.sort(pairs, axis=1)
    code = key[:, 0] * n + key[:, 1]
    srt = np.argsort(code)
    img_a = sym.permutations[:, pairs[:, 0]]
    img_b = sym.permutations[:, pairs[:, 1]]
    img_code = np.minimum(img_a, img_b) * n + np.maximum(img_a, img_b)
    where = np.searchsorted(code[srt], img_code).clip(0, code.size - 1)
    found = code[srt][where] == img_code
    if not np.all(found):
        k, b = np.argwhere(~found)[0]
        raise SymmetryError(
            f"bonds are not closed under operation {k}: bond {b} ({pairs[b, 0]}, {pairs[b, 1]}) "
            f"maps onto ({img_a[k, b]}, {img_b[k, b]}), which is not in pairs"
        )
    bperm = srt[where]
    sign = np.where(pairs[bperm, 0] == img_a, 1.0, -1.0)
    return bperm, sign


def basis_components(sym: SymmetryData, basis: Basis, g: GroupData) -> list:
    h, n = sym.order, sym.n_atoms
    if basis.kind == "cartesian":
        return [
            Component(
                "cartesian", sym.permutations, None, np.arange(n), 3 * np.arange(n), g.ops_input
            )
        ]
    if basis.kind == "atoms":
        return [
            Component(
                "scalar", sym.permutations, None, np.arange(n), np.arange(n), np.ones((h, 1, 1))
            )
        ]
    if basis.kind in ("bonds", "bond_vectors"):
        nb = basis.pairs.shape[0]
        bperm, sign = _bond_permutation(sym, basis.pairs)
        return [
            Component(
                basis.kind,
                bperm,
                sign if basis.kind == "bond_vectors" else None,
                np.arange(nb),
                np.arange(nb),
                np.ones((h, 1, 1)),
            )
        ]
    if basis.kind == "orbitals":
        present = np.unique(sym.numbers)
        missing = [int(z) for z in present if int(z) not in basis.shells]
        if missing:
            names = ", ".join(SYMBOLS[z] if 0 < z < len(SYMBOLS) else str(z) for z in missing)
            raise BasisError(f"shells: no shells given for element(s) {names} of the structure")
        per_atom = np.array([sum(2 * l + 1 for l in basis.shells[int(z)]) for z in present])
        sizes = per_atom[np.searchsorted(present, sym.numbers)]
        atom_off = np.concatenate([[0], np.cumsum(sizes)[:-1]])
        dmats = {}
        comps = []
        for z in present:
            atoms = np.nonzero(sym.numbers == z)[0]
            shell_off = 0
            for l in basis.shells[int(z)]:
                if l not in dmats:
                    dmats[l] = _sph_harm.rotation_matrices(l, g.ops_input)
                comps.append(
                    Component(
                        f"l={l}",
                        sym.permutations,
                        None,
                        atoms,
                        atom_off[atoms] + shell_off,
                        dmats[l],
                    )
                )
                shell_off += 2 * l + 1
        return comps
    raise BasisError(f"basis: unknown kind {basis.kind!r}")


def basis_dimension(sym: SymmetryData, basis) -> int:
    """Number of functions in ``basis`` for the structure of ``sym``.

    Parameters
    ----------
    sym : SymmetryData
    basis : Basis or str

    Returns
    -------
    int
    """
    basis = as_basis(basis)
    if basis.kind == "cartesian":
        return 3 * sym.n_atoms
    if basis.kind == "atoms":
        return sym.n_atoms
    if basis.kind in ("bonds", "bond_vectors"):
        return int(basis.pairs.shape[0])
    present = np.unique(sym.numbers)
    missing = [int(z) for z in present if int(z) not in basis.shells]
    if missing:
        raise BasisError(f"shells: no shells given for atomic number(s) {missing}")
    per_z = {int(z): sum(2 * l + 1 for l in basis.shells[int(z)]) for z in present}
    return int(sum(per_z[int(z)] for z in sym.numbers))


def component_matrix(comp: Component, k: int):
    s = comp.size
    pos = np.full(comp.site_perm.shape[1], -1, dtype=np.int64)
    pos[comp.sites] = np.arange(comp.sites.size)
    img = pos[comp.site_perm[k, comp.sites]]
    rows = comp.offsets[img][:, None, None] + np.arange(s)[None, :, None]
    cols = comp.offsets[:, None, None] + np.arange(s)[None, None, :]
    data = np.broadcast_to(comp.mats[k][None], (comp.sites.size, s, s))
    if comp.site_sign is not None:
        data = data * comp.site_sign[k, comp.sites][:, None, None]
    rows, cols = np.broadcast_arrays(rows, cols)
    data = np.broadcast_to(data, rows.shape)
    keep = data != 0.0
    return rows[keep], cols[keep], data[keep]


def _matrix_from_components(comps, k, n):
    parts = [component_matrix(c, k) for c in comps]
    rows = np.concatenate([p[0] for p in parts])
    cols = np.concatenate([p[1] for p in parts])
    data = np.concatenate([p[2] for p in parts])
    return sp.csr_matrix((data, (rows, cols)), shape=(n, n))


def _check_op(sym, op_index):
    k = int(op_index)
    if not 0 <= k < sym.order:
        raise InputError(
            f"op_index: expected an integer in 0..{sym.order - 1}, received {op_index!r}"
        )
    return k


def representation_matrix(sym: SymmetryData, op_index: int, basis) -> sp.csr_matrix:
    """Sparse representation matrix of one operation in a basis.

    Parameters
    ----------
    sym : SymmetryData
    op_index : int
        Index into ``sym.operations``.
    basis : Basis or str

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n, n)
        Γ(R), with nnz at most n * s (s = 3 for Cartesian, 2l + 1 for a shell, 1 for bonds).

    Raises
    ------
    BasisError
        For an unknown basis or bonds that the operation does not map onto bonds.
    """
    basis = as_basis(basis)
    k = _check_op(sym, op_index)
    g = group_data(sym)
    comps = basis_components(sym, basis, g)
    return _matrix_from_components(comps, k, basis_dimension(sym, basis))


def representation_matrices(sym: SymmetryData, basis) -> list:
    """Sparse representation matrices of all operations (list of csr_matrix, in op order)."""
    basis = as_basis(basis)
    g = group_data(sym)
    comps = basis_components(sym, basis, g)
    n = basis_dimension(sym, basis)
    return [_matrix_from_components(comps, k, n) for k in range(sym.order)]


def characters(sym: SymmetryData, basis) -> np.ndarray:
    """Character of every operation in ``basis``, counted over unshifted sites.

    Returns
    -------
    ndarray, shape (h,)
    """
    basis = as_basis(basis)
    g = group_data(sym)
    out = np.zeros(sym.order)
    for comp in basis_components(sym, basis, g):
        fixed = comp.site_perm[:, comp.sites] == comp.sites[None, :]
        weight = fixed * (1.0 if comp.site_sign is None else comp.site_sign[:, comp.sites])
        out += weight.sum(axis=1) * np.trace(comp.mats, axis1=1, axis2=2)
    return out


def atom_orbits(sym: SymmetryData) -> list:
    """Sets of symmetry-equivalent atoms.

    Returns
    -------
    list of ndarray
        One sorted array of atom indices per orbit, ordered by their smallest atom.
    """
    rep = sym.permutations.min(axis=0)
    order = np.argsort(rep, kind="stable")
    _, starts = np.unique(rep[order], return_index=True)
    return [np.sort(a) for a in np.split(order, starts[1:])]
