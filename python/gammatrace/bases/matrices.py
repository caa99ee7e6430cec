"""Change of basis: sparse representation matrices, projectors and symmetry-adapted bases.

Everything here starts from a :class:`SymmetryData` (structure, operations with their atom
permutations, character table) and a basis: the one :class:`~gammatrace.Basis` (also
importable as ``basis_change.Basis``), a spec string such as ``"orbitals:Fe=spd,H=s"``, or a
:class:`~gammatrace.bases.ResolvedBasis` already resolved on the same structure. The matrix
code serves Cartesian displacements, atom positions, atomic orbitals up to l = 3, π orbitals,
bond stretches and vectors along bonds; any other basis raises ``BasisError`` when used here.

Conventions
-----------
* Basis order: see :mod:`gammatrace.bases.components` (Cartesian ``3 * atom + (x, y, z)``,
  orbitals atom-major with real harmonics m = -l..l, p = y, z, x; π one p orbital per π centre
  along its normal; bonds in the order given, a vector along bond (a, b) pointing from a to
  b), all in the input frame.
* Representation matrices act on coefficient vectors: Γ(R) maps the function at site j to
  the function at site π_R(j), so Γ(R S) = Γ(R) Γ(S). Cartesian: Γ(R) = P(R) ⊗ R.
* The symmetry-adapted basis ``X`` is square and orthogonal with ROWS = symmetry-adapted
  functions (coefficient vectors in the original basis): ``X @ X.T = I`` and
  ``X @ Γ(R) @ X.T`` is block diagonal, with one d x d block per (irrep, copy) equal to the
  irrep's reference matrix D(R) (the same for every copy). Rows are ordered by irrep (table
  order), then copy, then partner. The reference matrices are described in
  :mod:`gammatrace.group.irreps`; they are returned as ``irreducible_matrices``. Each copy's
  first partner starts with a positive coefficient (:mod:`gammatrace.bases.salc`).
* :meth:`SymmetryAdaptedBasis.combinations` writes the rows out over named basis functions
  (:mod:`gammatrace.bases.naming`).
* Operations are made exact first (the canonical operation detection says each one is, or
  group averaging with products read off the atom permutations), so
  the results are exact for the ideal group near the detected one.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import scipy.sparse as sp

from .._progress import progress as _progress
from ..errors import BasisError, InputError
from ..group.irreps import GroupData, group_data
from ..group.symmetry import SymmetryData
from ..text import plural
from .components import check_matrix_kind, component_matrix, site_components
from .naming import COEFFICIENT_CUTOFF, Combination, exact_form, function_names
from .resolve import ResolvedBasis
from .salc import reduce_components
from .spec import Basis, parse_basis

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


def resolve_on(sym: SymmetryData, basis: Any) -> ResolvedBasis:
    """``basis`` (Basis, spec string or ResolvedBasis) resolved on the structure of ``sym``.

    Raises
    ------
    BasisError
        For a basis the matrix code does not serve (checked before resolving), or a resolved
        basis of another structure.
    """
    check_matrix_kind(parse_basis(basis))
    if isinstance(basis, ResolvedBasis):
        if basis.n_atoms != sym.n_atoms or np.any(basis.numbers != sym.numbers):
            raise BasisError(
                f"basis '{basis.basis}': resolved on a structure of "
                f"{plural(basis.n_atoms, 'atom')}, not on this one ({plural(sym.n_atoms, 'atom')})"
            )
        return basis
    return parse_basis(basis).resolve(sym)


def _components(sym: SymmetryData, resolved: ResolvedBasis, g: GroupData) -> list:
    return site_components(resolved, sym.permutations, g.ops_input)


def basis_dimension(sym: SymmetryData, basis) -> int:
    """Number of functions in ``basis`` for the structure of ``sym``.

    Parameters
    ----------
    sym : SymmetryData
    basis : Basis, str or ResolvedBasis

    Returns
    -------
    int
    """
    return resolve_on(sym, basis).dimension


def _matrix_from_components(comps, k, n):
    empty = (np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64), np.zeros(0))
    parts = [empty] + [component_matrix(c, k) for c in comps]
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
    basis : Basis, str or ResolvedBasis

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n, n)
        Γ(R), with nnz at most n * s (s = 3 for Cartesian, 2l + 1 for a shell, 1 for bonds).

    Raises
    ------
    BasisError
        For an unknown basis or bonds that the operation does not map onto bonds.
    """
    resolved = resolve_on(sym, basis)
    k = _check_op(sym, op_index)
    g = group_data(sym)
    return _matrix_from_components(_components(sym, resolved, g), k, resolved.dimension)


def representation_matrices(sym: SymmetryData, basis) -> list:
    """Sparse representation matrices of all operations (list of csr_matrix, in op order)."""
    resolved = resolve_on(sym, basis)
    g = group_data(sym)
    comps = _components(sym, resolved, g)
    n = resolved.dimension
    return [_matrix_from_components(comps, k, n) for k in range(sym.order)]


def characters(sym: SymmetryData, basis) -> np.ndarray:
    """Character of every operation in ``basis``, counted over unshifted sites.

    Returns
    -------
    ndarray, shape (h,)
    """
    resolved = resolve_on(sym, basis)
    g = group_data(sym)
    out = np.zeros(sym.order)
    for comp in _components(sym, resolved, g):
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
    basis : Basis, str or ResolvedBasis
    irrep : str or int
        Mulliken label or index in table order.

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n, n)
        Symmetric, idempotent; nonzeros only within orbits.
    """
    resolved = resolve_on(sym, basis)
    g = group_data(sym)
    i = _irrep_index(g, irrep)
    comps = _components(sym, resolved, g)
    n = resolved.dimension
    coef = g.dims[i] / (g.order * g.nu[i]) * g.chars[i]
    rows, cols, data = [np.zeros(0, dtype=np.int64)], [np.zeros(0, dtype=np.int64)], [np.zeros(0)]
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
        :mod:`gammatrace.group.irreps`).
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
    basis : ResolvedBasis or None
        The basis the columns refer to (names its functions; None for a hand-made one).
    symbols : tuple of str or None
        Species symbols of the structure's atoms (isotopes apart), for the names.
    """

    matrix: sp.csr_matrix
    irreps: tuple
    dims: np.ndarray
    row_irrep: np.ndarray
    row_copy: np.ndarray
    row_partner: np.ndarray
    multiplicities: dict
    irreducible_matrices: dict
    basis: ResolvedBasis | None = field(default=None, compare=False, repr=False)
    symbols: tuple | None = field(default=None, compare=False, repr=False)

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

    @cached_property
    def function_names(self) -> tuple:
        """One name per column (basis function): ``σ(O1–H2)``, ``p_z(C3)``, ``x(H4)`` …
        (:func:`gammatrace.bases.naming.function_names`); ``f1``, ``f2`` … without a basis."""
        if self.basis is None:
            return tuple(f"f{j + 1}" for j in range(self.matrix.shape[1]))
        return tuple(function_names(self.basis, self.symbols))

    def combinations(self, rows: Any = None, cutoff: float = COEFFICIENT_CUTOFF) -> list:
        """The symmetry-adapted functions written out over the named basis functions.

        Parameters
        ----------
        rows : slice, sequence of int or None
            Rows of X to write out (default all, in X's order: irrep, copy, partner).
        cutoff : float
            Coefficients of smaller magnitude are left out (default
            :data:`~gammatrace.bases.naming.COEFFICIENT_CUTOFF`, 1e-6).

        Returns
        -------
        list of Combination
            One per row, with the listed indices, coefficients, names and exact form
            (:mod:`gammatrace.bases.naming`); ``c.expression()`` is the text.

        Examples
        --------
        >>> import gammatrace as gt
        >>> water = gt.analyze(["O", "H", "H"],
        ...                    [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
        >>> for c in water.symmetry_adapted_basis("bonds").combinations():
        ...     print(c.label, c.expression())
        A1 (1/√2)(σ(O1–H2) + σ(O1–H3))
        B2 (1/√2)(σ(O1–H2) − σ(O1–H3))
        """
        every = range(self.matrix.shape[0])
        if rows is None:
            picked = every
        elif isinstance(rows, slice):
            picked = every[rows]
        else:
            picked = rows
        x = self.matrix.tocsr()
        if not x.has_sorted_indices:
            x = x.sorted_indices()  # a copy: the caller's matrix stays as it is
        names = self.function_names
        mults = self.multiplicities
        out = []
        for r in picked:
            r = int(r)
            lo, hi = x.indptr[r], x.indptr[r + 1]
            idx, val = x.indices[lo:hi], x.data[lo:hi]
            keep = np.abs(val) >= cutoff
            idx, val = idx[keep].astype(np.int64), val[keep].astype(np.float64)
            irrep = self.irreps[int(self.row_irrep[r])]
            out.append(
                Combination(
                    row=r,
                    irrep=irrep,
                    copy=int(self.row_copy[r]),
                    partner=int(self.row_partner[r]),
                    dimension=int(self.dims[int(self.row_irrep[r])]),
                    multiplicity=int(mults.get(irrep, 0)),
                    indices=idx,
                    coefficients=val,
                    functions=tuple(names[j] for j in idx),
                    exact=exact_form(val),
                )
            )
        return out


def symmetry_adapted_basis(
    sym: SymmetryData, basis="cartesian", progress: bool | None = False
) -> SymmetryAdaptedBasis:
    """Full reduction of a basis: the orthogonal sparse change of basis and its labels.

    Built per orbit type and assembled sparsely (DESIGN.md §4); see :mod:`gammatrace.bases.salc`.

    Parameters
    ----------
    sym : SymmetryData
    basis : Basis, str or ResolvedBasis, default "cartesian"
    progress : bool or None, default False
        A bar over the functions reduced, orbit type by orbit type (:mod:`gammatrace._progress`):
        True shows it, None only when standard error is a terminal, False never.

    Returns
    -------
    SymmetryAdaptedBasis

    Raises
    ------
    ReductionError
        If an orbit does not reduce (operations and table do not match).
    """
    resolved = resolve_on(sym, basis)
    g = group_data(sym)
    comps = _components(sym, resolved, g)
    with _progress(resolved.dimension, unit="function", desc="SALCs", enabled=progress) as bar:
        x, irrep, copy, partner = reduce_components(comps, g, progress=bar)
    counts = np.bincount(irrep, minlength=len(g.labels)) // g.dims
    mults = {g.labels[i]: int(c) for i, c in enumerate(counts) if c}
    return SymmetryAdaptedBasis(
        x,
        g.labels,
        g.dims.copy(),
        irrep,
        copy,
        partner,
        mults,
        dict(zip(g.labels, g.matrices)),
        basis=resolved,
        symbols=tuple(sym.structure.species_symbols),
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
