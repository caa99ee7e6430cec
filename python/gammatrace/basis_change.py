"""Change of basis: sparse representation matrices, projectors and symmetry-adapted bases.

Everything here starts from a :class:`SymmetryData` (structure, operations with their atom
permutations, character table) and a :class:`Basis` (Cartesian displacements, atom positions,
atomic orbitals, bond stretches, vectors along bonds).

Conventions
-----------
* Basis order. Cartesian: atom-major, ``3 * atom + (x, y, z)``, in the input frame. Orbitals:
  atom-major; within an atom the element's shells in the order given; within a shell the real
  harmonics m = -l..l of :mod:`gammatrace._sph_harm` (p = y, z, x) with axes of the input
  frame. Bonds: in the order given; a vector along bond (a, b) points from a to b.
* Representation matrices act on coefficient vectors: Γ(R) maps the function at site j to
  the function at site π_R(j), so Γ(R S) = Γ(R) Γ(S). Cartesian: Γ(R) = P(R) ⊗ R.
* The symmetry-adapted basis ``X`` is square and orthogonal with ROWS = symmetry-adapted
  functions (coefficient vectors in the original basis): ``X @ X.T = I`` and
  ``X @ Γ(R) @ X.T`` is block diagonal, with one d x d block per (irrep, copy) equal to the
  irrep's reference matrix D(R) (the same for every copy). Rows are ordered by irrep (table
  order), then copy, then partner. The reference matrices are described in
  :mod:`gammatrace._group`; they are returned as ``irreducible_matrices``.
* Operations are made exact first (nearest canonical table operation, or group averaging), so
  the results are exact for the ideal group near the detected one.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from ._bases import (
    Basis,
    SymmetryData,
    as_basis,
    atom_orbits,
    basis_components,
    basis_dimension,
    characters,
    component_matrix,
    representation_matrices,
    representation_matrix,
)
from ._group import GroupData, group_data
from ._salc import reduce_components
from .errors import InputError

__all__ = [
    "Basis",
    "SymmetryAdaptedBasis",
    "SymmetryData",
    "atom_orbits",
    "basis_dimension",
    "characters",
    "irreducible_matrices",
    "isotypic_decomposition",
    "load_npz",
    "projection_operator",
    "representation_matrices",
    "representation_matrix",
    "save_npz",
    "symmetry_adapted_basis",
]


def _irrep_index(g: GroupData, irrep) -> int:
    if isinstance(irrep, str):
        if irrep not in g.labels:
            raise InputError(
                f"irrep: {irrep!r} is not an irrep of this group ({', '.join(g.labels)})"
            )
        return g.labels.index(irrep)
    i = int(irrep)
    if not 0 <= i < len(g.labels):
        raise InputError(f"irrep: index {irrep!r} outside 0..{len(g.labels) - 1}")
    return i


def projection_operator(sym: SymmetryData, basis, irrep) -> sp.csr_matrix:
    """Isotypic projector P_i = d_i / (h ν_i) Σ_R χ_i(R) Γ(R) as a sparse matrix.

    ν_i = 1 for real irreps and 2 for a complex-conjugate pair shown as one 2-d irrep.

    Parameters
    ----------
    sym : SymmetryData
    basis : Basis or str
    irrep : str or int
        Mulliken label or index in table order.

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n, n)
        Symmetric, idempotent; nonzeros only within orbits.
    """
    basis = as_basis(basis)
    g = group_data(sym)
    i = _irrep_index(g, irrep)
    comps = basis_components(sym, basis, g)
    n = basis_dimension(sym, basis)
    coef = g.dims[i] / (g.order * g.nu[i]) * g.chars[i]
    rows, cols, data = [], [], []
    for k in np.nonzero(coef)[0]:  # one sparse pass per operation, summed once at the end
        for comp in comps:
            r, c, v = component_matrix(comp, k)
            rows.append(r)
            cols.append(c)
            data.append(coef[k] * v)
    total = sp.csr_matrix(
        (np.concatenate(data), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n)
    )
    total.data[np.abs(total.data) < 1e-13] = 0.0
    total.eliminate_zeros()
    return total


def irreducible_matrices(sym: SymmetryData) -> dict:
    """Reference irreducible matrices of every irrep, one per operation.

    Returns
    -------
    dict
        Irrep label -> ndarray of shape (h, d, d), in the standard frame's conventions (see
        :mod:`gammatrace._group`).
    """
    g = group_data(sym)
    return dict(zip(g.labels, g.matrices))


@dataclass(frozen=True)
class SymmetryAdaptedBasis:
    """A symmetry-adapted orthonormal basis (rows of ``matrix``) with its labels.

    Attributes
    ----------
    matrix : scipy.sparse.csr_matrix, shape (n, n)
        Rows = symmetry-adapted functions; ``matrix @ matrix.T = I``.
    irreps : tuple of str
        All irrep labels of the table, in table order (``row_irrep`` indexes these).
    dims : ndarray
        Dimension of each irrep.
    row_irrep, row_copy, row_partner : ndarray, shape (n,)
        Irrep index, copy (from 0 within the irrep) and partner (from 0) of each row.
    multiplicities : dict
        Irrep label -> number of copies (irreps that do not occur are left out).
    irreducible_matrices : dict
        Irrep label -> (h, d, d) block that every copy of the irrep shows.
    """

    matrix: sp.csr_matrix
    irreps: tuple
    dims: np.ndarray
    row_irrep: np.ndarray
    row_copy: np.ndarray
    row_partner: np.ndarray
    multiplicities: dict
    irreducible_matrices: dict

    @property
    def labels(self) -> list:
        """One (irrep, copy, partner) tuple per row."""
        names = np.asarray(self.irreps, dtype=object)[self.row_irrep]
        return list(zip(names.tolist(), self.row_copy.tolist(), self.row_partner.tolist()))

    def rows_of(self, irrep: str) -> slice:
        """Row slice of one irrep's functions (empty if it does not occur)."""
        i = self.irreps.index(irrep)
        lo, hi = np.searchsorted(self.row_irrep, [i, i + 1])
        return slice(int(lo), int(hi))

    def transform(self, matrix) -> sp.csr_matrix:
        """``X @ matrix @ X.T`` for an operator written in the original basis."""
        x = self.matrix
        return (x @ sp.csr_matrix(matrix) @ x.T).tocsr()


def symmetry_adapted_basis(sym: SymmetryData, basis="cartesian") -> SymmetryAdaptedBasis:
    """Full reduction of a basis: the orthogonal sparse change of basis and its labels.

    Built per orbit type and assembled sparsely (DESIGN.md §4); see :mod:`gammatrace._salc`.

    Parameters
    ----------
    sym : SymmetryData
    basis : Basis or str, default "cartesian"

    Returns
    -------
    SymmetryAdaptedBasis

    Raises
    ------
    ReductionError
        If an orbit does not reduce (operations and table do not match).
    """
    basis = as_basis(basis)
    g = group_data(sym)
    comps = basis_components(sym, basis, g)
    x, irrep, copy, partner = reduce_components(comps, g)
    counts = np.bincount(irrep, minlength=len(g.labels)) // g.dims
    mults = {g.labels[i]: int(c) for i, c in enumerate(counts) if c}
    return SymmetryAdaptedBasis(
        x, g.labels, g.dims.copy(), irrep, copy, partner, mults, dict(zip(g.labels, g.matrices))
    )


def isotypic_decomposition(sym: SymmetryData, basis="cartesian") -> dict:
    """Orthonormal bases of the isotypic components.

    Returns
    -------
    dict
        Irrep label -> csr_matrix of shape (m_i * d_i, n) whose rows span the component.
    """
    sab = symmetry_adapted_basis(sym, basis)
    return {lab: sab.matrix[sab.rows_of(lab)] for lab in sab.multiplicities}


def save_npz(path, x, labels) -> None:
    """Save a symmetry-adapted basis and its row labels in one ``.npz`` file.

    The file holds the CSR arrays under the names ``scipy.sparse.save_npz`` uses, so
    ``scipy.sparse.load_npz(path)`` reads the matrix; the labels sit beside them as
    ``label_irrep`` (str), ``label_copy`` and ``label_partner`` (int64).

    Parameters
    ----------
    path : str or path-like
    x : sparse matrix, shape (n, n)
    labels : sequence of (irrep, copy, partner), length n
    """
    x = sp.csr_matrix(x)
    labels = list(labels)
    if len(labels) != x.shape[0]:
        raise InputError(
            f"labels: expected {x.shape[0]} entries (one per row), received {len(labels)}"
        )
    irr = np.array([str(lab[0]) for lab in labels], dtype=np.str_)
    copy = np.array([int(lab[1]) for lab in labels], dtype=np.int64)
    part = np.array([int(lab[2]) for lab in labels], dtype=np.int64)
    np.savez_compressed(
        path,
        format=np.array(b"csr"),
        shape=np.array(x.shape),
        data=x.data,
        indices=x.indices,
        indptr=x.indptr,
        label_irrep=irr,
        label_copy=copy,
        label_partner=part,
    )


def load_npz(path):
    """Load what :func:`save_npz` wrote.

    Returns
    -------
    x : scipy.sparse.csr_matrix
    labels : list of (str, int, int)
    """
    with np.load(path, allow_pickle=False) as f:
        x = sp.csr_matrix((f["data"], f["indices"], f["indptr"]), shape=tuple(f["shape"]))
        labels = list(
            zip(f["label_irrep"].tolist(), f["label_copy"].tolist(), f["label_partner"].tolist())
        )
    return x, labels
