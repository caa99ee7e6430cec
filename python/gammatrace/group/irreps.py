"""Exact operations, the multiplication table and reference irreducible matrices of a point group.

Detected operations are only as exact as the tolerance that found them. Everything in the
change-of-basis code needs an exact representation, so the operations are first made exact:

* when the character table carries canonical operations (``table.operations``, standard frame),
  each detected operation is replaced by the canonical operation it stands for
  (``canonical_index``, as the core reports it; by default operation k is canonical operation
  k), written back in the input frame; the products come from the core's group arithmetic;
* otherwise they are idealised by the group average ρ'(g) = (1/h) Σ_x ρ(gx) ρ(x)⁻¹ followed by
  the nearest orthogonal matrix, which converges quadratically to an exact representation of
  the group whose multiplication table the detected matrices define.

Reference irreducible matrices (one fixed orthogonal set per irrep, used for every copy of the
irrep in every basis):

* one-dimensional irreps: the characters themselves;
* multi-dimensional irreps: the irrep's subspace of the first representation, in the list
  polar vector (x, y, z), axial vector (Rx, Ry, Rz), then real harmonics of l = 2 and 3 with
  both parities, that contains it exactly once; the basis is Gram-Schmidt over the
  projected unit functions in their order, so an E irrep found among (x, y, z) has partners
  (x, y) exactly as printed tables pair them;
* otherwise (for instance E4 of C9): one irreducible subspace of the regular representation,
  split off as an eigenspace of a group-averaged random symmetric matrix (fixed seed) inside
  the isotypic component.

Complex-conjugate pairs of one-dimensional irreps appear as one real two-dimensional irrep (as
in printed tables); they are recognised by their Frobenius-Schur-like norm
ν = (1/h) Σ_R χ(R)² = 2 instead of 1, and every projector divides by ν.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SymmetryError, TableError
from ..tables._ops import locate
from . import harmonics

__all__ = ["GroupData", "group_data"]


@dataclass(frozen=True)
class GroupData:
    """Everything about the group the change-of-basis code needs, computed once per call.

    Attributes
    ----------
    ops_input : ndarray, shape (h, 3, 3)
        Exact operations in the input frame (acting on positions - center).
    ops_standard : ndarray, shape (h, 3, 3)
        The same operations in the standard frame.
    frame : ndarray, shape (3, 3)
        Orthonormal frame (rows = standard axes in input coordinates).
    mult : ndarray, shape (h, h)
        ``mult[a, b]`` is the index of the operation ``ops[a] @ ops[b]``.
    inverse : ndarray, shape (h,)
        Index of each operation's inverse.
    labels : tuple of str
        Irrep labels in table order.
    dims : ndarray, shape (n_irreps,)
        Irrep dimensions.
    chars : ndarray, shape (n_irreps, h)
        Character of every irrep for every operation.
    nu : ndarray, shape (n_irreps,)
        (1/h) Σ_R χ(R)²: 1 for real irreps, 2 for complex-conjugate pairs shown as one.
    matrices : tuple of ndarray
        Reference irreducible matrices, ``matrices[i]`` of shape (h, d_i, d_i).
    """

    ops_input: np.ndarray
    ops_standard: np.ndarray
    frame: np.ndarray
    mult: np.ndarray
    inverse: np.ndarray
    labels: tuple
    dims: np.ndarray
    chars: np.ndarray
    nu: np.ndarray
    matrices: tuple

    @property
    def order(self) -> int:
        """Number of operations h."""
        return int(self.ops_input.shape[0])


def _polar(m: np.ndarray) -> np.ndarray:
    """Nearest orthogonal matrices (polar factor) of a stack of 3x3 matrices."""
    u, _, vt = np.linalg.svd(m)
    return u @ vt


def products_from_permutations(ops: np.ndarray, perms: np.ndarray) -> np.ndarray:
    """Multiplication table of approximate group matrices, read off their atom permutations.

    Only for tables without canonical operations (a table made by hand): operation a·b moves
    atom i to ``perms[a][perms[b][i]]``, and that permutation is looked up exactly among the
    given ones. No matrix is matched to a nearest one; the matrices only confirm the result.

    Raises
    ------
    SymmetryError
        If two operations move the atoms alike (the structure cannot tell them apart), or the
        products do not close onto the set, or a product's matrix disagrees with the operation
        its permutation names.
    """
    h = ops.shape[0]
    perms = np.ascontiguousarray(perms, dtype=np.int64)
    where = {row.tobytes(): k for k, row in enumerate(perms)}
    if len(where) != h:
        raise SymmetryError(
            f"{h} operations but only {len(where)} distinct atom permutations: the structure "
            "cannot tell the operations apart, so their products are unknown (use a table "
            "from gammatrace.tables.get_table, which carries the canonical operations)"
        )
    mult = np.empty((h, h), dtype=np.int64)
    for a in range(h):
        composed = perms[a][perms]  # row b: a·b
        for b in range(h):
            k = where.get(composed[b].tobytes())
            if k is None:
                raise SymmetryError(
                    f"the {h} operations do not close into a group: operation {a} times "
                    f"operation {b} moves the atoms as none of them does"
                )
            mult[a, b] = k
    worst = float(np.abs(np.einsum("aij,bjk->abik", ops, ops) - ops[mult]).max())
    if worst > 0.1:
        raise SymmetryError(
            f"the operations' matrices disagree with their atom permutations: a product lies "
            f"{worst:.3g} from the operation its permutation names"
        )
    return mult


def _idealise(ops: np.ndarray, mult: np.ndarray) -> np.ndarray:
    """Make approximate group matrices exact by repeated group averaging (see module doc)."""
    rho = _polar(ops)
    for _ in range(8):
        # ρ'(g) = (1/h) Σ_x ρ(g x) ρ(x)ᵀ
        new = np.einsum("gxij,xkj->gik", rho[mult], rho) / rho.shape[0]
        new = _polar(new)
        err = np.abs(new - rho).max()
        rho = new
        if err < 1e-15:
            break
    return rho


def _orthonormal_frame(frame: np.ndarray) -> np.ndarray:
    u, _, vt = np.linalg.svd(np.asarray(frame, dtype=np.float64))
    return u @ vt


def _irrep_info(table, op_class: np.ndarray):
    irreps = list(table.irreps)
    labels = tuple(str(ir.label) for ir in irreps)
    dims = np.array([int(ir.dim) for ir in irreps], dtype=np.int64)
    charmat = np.asarray(table.character_matrix, dtype=np.float64)
    chars = charmat[:, op_class]
    h = op_class.shape[0]
    nu = (chars**2).sum(axis=1) / h
    if np.any(np.abs(nu - np.rint(nu)) > 1e-6) or np.any((np.rint(nu) != 1) & (np.rint(nu) != 2)):
        raise TableError(
            "the character table's irreps are not orthonormal over the given operations "
            f"(Σχ²/h = {np.round(nu, 6).tolist()}); operations and classes do not match the table"
        )
    return labels, dims, chars, np.rint(nu)


def _gram_schmidt_columns(p: np.ndarray, d: int) -> np.ndarray | None:
    """Orthonormalise the columns of ``p`` in order, keeping the first ``d`` independent ones."""
    basis = []
    for col in p.T:
        v = col.copy()
        for b in basis:
            v -= (b @ v) * b
        n = np.linalg.norm(v)
        if n > 1e-6:
            basis.append(v / n)
            if len(basis) == d:
                return np.stack(basis, axis=1)
    return None


def _natural_representations(ops_std: np.ndarray):
    """Yield (name, matrices) of small natural representations in the standard frame."""
    det = np.sign(np.linalg.det(ops_std))
    yield "polar vector", ops_std
    yield "axial vector", ops_std * det[:, None, None]
    for l in (2, 3):
        d = harmonics.rotation_matrices(l, ops_std)
        yield f"l={l}", d
        yield f"l={l} (opposite parity)", d * det[:, None, None]


def _split_regular(g: int, mult, inverse, chi, d, nu, seed=20240611):
    """One irreducible subspace of the regular representation for an irrep (see module doc)."""
    h = mult.shape[0]
    # Regular representation: Γ(g) e_x = e_{gx}. Isotypic projector P[a, x] ∝ χ(a x⁻¹).
    proj = (d / (h * nu)) * chi[mult[:, inverse]]
    w, v = np.linalg.eigh(0.5 * (proj + proj.T))
    basis = v[:, w > 0.5]
    r = basis.shape[1]

    def restricted(k):
        # (Γ(k) B)[y] = B[k⁻¹ y]
        return basis[mult[inverse[k]]]

    if r == d:
        return basis
    rng = np.random.default_rng(seed)
    for _ in range(5):
        s = rng.standard_normal((r, r))
        s = s + s.T
        avg = np.zeros((r, r))
        for k in range(h):
            gk = basis.T @ restricted(k)
            avg += gk @ s @ gk.T
        ew, ev = np.linalg.eigh(avg / h)
        top, spread = ew[-d:], ew[-1] - ew[-d]
        gap = ew[-d] - ew[-d - 1]
        if gap > 1e-6 * max(1.0, abs(top).max()) and spread < 1e-9 * max(1.0, abs(top).max()):
            return basis @ ev[:, -d:]
    raise SymmetryError(f"could not split the regular representation for irrep {g}")


def _reference_matrices(ops_std, mult, inverse, labels, dims, chars, nu):
    h = ops_std.shape[0]
    natural = None
    out = []
    for i, label in enumerate(labels):
        d, chi = int(dims[i]), chars[i]
        if d == 1:
            out.append(chi.reshape(h, 1, 1).copy())
            continue
        if natural is None:
            natural = list(_natural_representations(ops_std))
        mats = None
        for _, gam in natural:
            tr = np.trace(gam, axis1=1, axis2=2)
            mlt = float(chi @ tr) / (h * nu[i])
            if abs(mlt - 1.0) < 1e-6:
                proj = (d / (h * nu[i])) * np.einsum("k,kij->ij", chi, gam)
                q = _gram_schmidt_columns(proj, d)
                if q is not None:
                    mats = np.einsum("ia,kij,jb->kab", q, gam, q)
                    break
        if mats is None:
            b = _split_regular(label, mult, inverse, chi, d, nu[i])
            mats = np.stack([b.T @ b[mult[inverse[k]]] for k in range(h)])
        # Self-check: a representation with the table's characters.
        err_hom = np.abs(np.einsum("aij,bjk->abik", mats, mats) - mats[mult]).max()
        err_chi = np.abs(np.trace(mats, axis1=1, axis2=2) - chi).max()
        if err_hom > 1e-8 or err_chi > 1e-8:
            raise SymmetryError(
                f"irreducible matrices for {label} are inconsistent with the table "
                f"(homomorphism error {err_hom:.2g}, character error {err_chi:.2g})"
            )
        out.append(mats)
    return tuple(out)


def _canonical(ops_std: np.ndarray, sym) -> tuple[np.ndarray, np.ndarray] | None:
    """Exact operations and multiplication table from the table's canonical operations.

    None when the table carries no canonical operations (a table made by hand).

    Raises
    ------
    SymmetryError
        When the operations are not the canonical ones they are said to be (farther than
        0.2 in Frobenius norm, far beyond any tolerance).
    """
    table = sym.table
    canon = getattr(table, "operations", None)
    if canon is None:
        return None
    canon = np.asarray(canon, dtype=np.float64)
    index = sym.canonical_index
    index = np.arange(len(canon)) if index is None else np.asarray(index, dtype=np.int64)
    if len(index) != len(ops_std) or np.unique(index).size != len(canon):
        raise SymmetryError(
            f"{len(ops_std)} operations given for the {len(canon)} canonical operations of "
            f"{getattr(table, 'name', 'the table')} (canonical_index must list each once)"
        )
    exact = canon[index]
    worst = float(np.linalg.norm(ops_std - exact, axis=(1, 2)).max())
    if worst > 0.2:
        raise SymmetryError(
            f"an operation lies {worst:.3g} (Frobenius norm) from the canonical operation of "
            f"{getattr(table, 'name', 'the table')} it is said to be: operations and "
            "canonical_index disagree"
        )
    # exact products of exact operations: membership, in the core
    h = len(exact)
    mult = locate(exact, np.einsum("aij,bjk->abik", exact, exact)).reshape(h, h)
    return exact, mult


def group_data(sym) -> GroupData:
    """Exact operations, multiplication table, characters and reference irreps of ``sym``.

    Parameters
    ----------
    sym : SymmetryData
        The symmetry description (see :class:`gammatrace.basis_change.SymmetryData`).

    Returns
    -------
    GroupData

    Raises
    ------
    SymmetryError
        If the operations do not form a group or do not match the table, or for a single
        atom (K_h): its group is sampled by rotations about one axis, whose projections do not
        separate the irreps of O(3).
    """
    if getattr(sym.table, "is_spherical", False):
        raise SymmetryError(
            "a single atom (K_h) has no finite group for a change of basis: its group is "
            "sampled by rotations about one axis, which do not separate the irreps of O(3)"
        )
    frame = _orthonormal_frame(sym.frame)
    ops_in = np.asarray(sym.operations, dtype=np.float64)
    op_class = np.asarray(sym.op_class, dtype=np.int64)
    ops_std = np.einsum("ai,kij,bj->kab", frame, ops_in, frame)
    found = _canonical(ops_std, sym)
    if found is None:
        mult = products_from_permutations(ops_std, sym.permutations)
        exact = _idealise(ops_std, mult)
    else:
        exact, mult = found
    identity = int(np.argmin(np.abs(exact - np.eye(3)).reshape(-1, 9).sum(axis=1)))
    inverse = np.argmax(mult == identity, axis=1)
    labels, dims, chars, nu = _irrep_info(sym.table, op_class)
    matrices = _reference_matrices(exact, mult, inverse, labels, dims, chars, nu)
    ops_input = np.einsum("ai,kab,bj->kij", frame, exact, frame)
    return GroupData(ops_input, exact, frame, mult, inverse, labels, dims, chars, nu, matrices)
