"""The functions of a resolved basis as site components, for the matrix code.

A basis made of *sites* (atoms or bonds), each carrying an ``s``-dimensional space, transforms
as Γ(R) (e_j ⊗ u) = e_{π_R(j)} ⊗ M(R, j) u. :func:`site_components` writes a
:class:`~gammatrace.bases.resolve.ResolvedBasis` as such homogeneous parts (:class:`Component`);
representation matrices, projectors and the orbit-type reduction of
:mod:`gammatrace.bases.salc` are built from them.

Basis order: Cartesian ``3 * atom + (x, y, z)``; atoms one per atom; orbitals atom-major, within
an atom the element's shells in the order given, within a shell the real harmonics
m = -l..l of :mod:`gammatrace.group.harmonics`; π one p orbital per π centre in atom order,
along the centre's normal (``ResolvedBasis.normals``); bonds in the order of the pairs, a
vector along bond (a, b) pointing from a to b.

The matrix code serves :data:`MATRIX_KINDS` (orbitals up to l = ``harmonics.MAX_L``); any
other basis raises :class:`~gammatrace.errors.BasisError` when it is used here
(:func:`check_matrix_kind`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import _core
from ..errors import BasisError, SymmetryError
from ..group import harmonics
from .spec import ORBITAL_LETTERS

__all__ = [
    "MATRIX_KINDS",
    "Component",
    "bond_permutation",
    "check_matrix_kind",
    "component_matrix",
    "site_components",
]

#: The kinds of basis the matrix code (representation matrices, SALCs, projectors) serves.
MATRIX_KINDS = ("atoms", "cartesian", "orbitals", "pi", "bonds", "bond_vectors")


@dataclass(frozen=True)
class Component:
    """One homogeneous part of a basis: the same site space on a set of sites.

    Attributes
    ----------
    tag : str
        Identifies the site space and its matrices (equal tags share local reductions).
    site_perm : ndarray, shape (h, n_universe)
        Image of every site of the universe (atoms or bonds) under each operation.
    site_sign : ndarray or None, shape (h, n_universe)
        ±1 factor of every site's function under each operation (vectors along bonds, π
        orbitals turned over).
    sites : ndarray, shape (n_c,)
        Sites (indices into the universe) carrying this component; closed under the group.
    offsets : ndarray, shape (n_c,)
        Global index of the first function of the component at each site.
    mats : ndarray, shape (h, s, s)
        Matrix M(R) of the site space for each operation.
    """

    tag: str
    site_perm: np.ndarray
    site_sign: np.ndarray | None
    sites: np.ndarray
    offsets: np.ndarray
    mats: np.ndarray

    @property
    def size(self) -> int:
        """Dimension of the site space."""
        return int(self.mats.shape[1])

    def local_perm(self) -> np.ndarray:
        """(h, n_c) image of each component site, as a position in ``sites``."""
        n_universe = self.site_perm.shape[1]
        pos = np.full(n_universe, -1, dtype=np.int64)
        pos[self.sites] = np.arange(self.sites.size)
        out = pos[self.site_perm[:, self.sites]]
        return out

    def local_sign(self) -> np.ndarray | None:
        """(h, n_c) sign of each component site under each operation, or None."""
        if self.site_sign is None:
            return None
        return self.site_sign[:, self.sites]


def check_matrix_kind(basis: Any) -> None:
    """Raise :class:`BasisError` when the matrix code cannot serve ``basis``.

    Raises
    ------
    BasisError
        Names the basis and what the matrix code supports.
    """
    served = (
        f"the matrix code (representation matrices, symmetry-adapted bases, projectors) serves "
        f"{', '.join(MATRIX_KINDS)} with orbitals up to l = {harmonics.MAX_L} "
        f"({ORBITAL_LETTERS[harmonics.MAX_L]})"
    )
    if basis.kind not in MATRIX_KINDS:
        raise BasisError(
            f"basis '{basis}': {served}; its characters and reduction come from "
            "Analysis.representation"
        )
    if basis.kind == "orbitals":
        top = max(l for _, ls in basis.shell_spec for l in ls)
        if top > harmonics.MAX_L:
            raise BasisError(
                f"basis '{basis}': shell {ORBITAL_LETTERS[top]} (l = {top}) is beyond what "
                f"{served}; its characters and reduction come from Analysis.representation"
            )


def bond_permutation(permutations: np.ndarray, pairs: np.ndarray):
    """Image bond and orientation sign of every bond under every operation.

    Returns
    -------
    bperm : ndarray, shape (h, n_bonds)
    sign : ndarray, shape (h, n_bonds)
        +1 when the image keeps the listed orientation, -1 when reversed.

    Raises
    ------
    SymmetryError
        When an operation maps a bond onto a pair that is not a bond.
    """
    n = permutations.shape[1]
    key = np.sort(pairs, axis=1)
    code = key[:, 0] * n + key[:, 1]
    srt = np.argsort(code)
    img_a = permutations[:, pairs[:, 0]]
    img_b = permutations[:, pairs[:, 1]]
    img_code = np.minimum(img_a, img_b) * n + np.maximum(img_a, img_b)
    where = np.searchsorted(code[srt], img_code).clip(0, max(code.size - 1, 0))
    found = code[srt][where] == img_code if code.size else np.zeros(img_code.shape, dtype=bool)
    if not np.all(found):
        k, b = np.argwhere(~found)[0]
        raise SymmetryError(
            f"bonds are not closed under operation {k}: bond {b} ({pairs[b, 0]}, {pairs[b, 1]}) "
            f"maps onto ({img_a[k, b]}, {img_b[k, b]}), which is not in pairs"
        )
    bperm = srt[where]
    sign = np.where(pairs[bperm, 0] == img_a, 1.0, -1.0)
    return bperm, sign


def pi_signs(
    permutations: np.ndarray, operations: np.ndarray, normals: np.ndarray, centres: np.ndarray
) -> np.ndarray:
    """``(h, n_atoms)`` ±1: operation k sends the p orbital of centre j onto that sign times
    the p orbital of centre ``permutations[k, j]`` (1 at atoms without one).

    Raises
    ------
    SymmetryError
        When an operation sends a centre onto an atom without a p orbital, or turns an orbital
        away from ± the orbital of its image (|(R n_j)·n_{π(j)}| < ``_core.PI_ALIGNMENT``).
    """
    h, n = permutations.shape
    sign = np.ones((h, n))
    if centres.size == 0:
        return sign
    img = permutations[:, centres]
    has = np.zeros(n, dtype=bool)
    has[centres] = True
    if not has[img].all():
        k, j = np.argwhere(~has[img])[0]
        raise SymmetryError(
            f"pi: operation {k} maps π centre {centres[j]} onto atom {img[k, j]}, which "
            "carries no p orbital"
        )
    turned = np.einsum("kab,jb->kja", operations, normals[centres])
    dot = np.einsum("kja,kja->kj", turned, normals[img])
    bad = np.abs(dot) < _core.PI_ALIGNMENT
    if bad.any():
        k, j = np.argwhere(bad)[0]
        raise SymmetryError(
            f"pi: operation {k} turns the p orbital of atom {centres[j]} away from that of "
            f"atom {img[k, j]} ((R n)·n' = {dot[k, j]:.3f}, not ±1)"
        )
    sign[:, centres] = np.sign(dot)
    return sign


def site_components(resolved: Any, permutations: np.ndarray, operations: np.ndarray) -> list:
    """The components of a resolved basis under a group's operations.

    Parameters
    ----------
    resolved : ResolvedBasis
    permutations : ndarray, shape (h, n_atoms)
        Operation k maps atom i onto atom ``permutations[k, i]``.
    operations : ndarray, shape (h, 3, 3)
        The (exact) operations in the input frame.

    Returns
    -------
    list of Component

    Raises
    ------
    BasisError
        For a basis the matrix code does not serve (:func:`check_matrix_kind`).
    SymmetryError
        For bonds that the operations do not map onto bonds, or π orbitals that they do not
        map onto ± π orbitals.
    """
    check_matrix_kind(resolved.basis)
    h, n = permutations.shape
    kind = resolved.kind
    if kind == "cartesian":
        atoms = np.arange(n)
        return [Component("cartesian", permutations, None, atoms, 3 * atoms, operations)]
    if kind == "atoms":
        atoms = np.arange(n)
        return [Component("scalar", permutations, None, atoms, atoms, np.ones((h, 1, 1)))]
    if kind in ("bonds", "bond_vectors"):
        pairs = resolved.pairs
        nb = pairs.shape[0]
        if nb == 0:
            return []
        bperm, sign = bond_permutation(permutations, pairs)
        signs = sign if kind == "bond_vectors" else None
        return [Component(kind, bperm, signs, np.arange(nb), np.arange(nb), np.ones((h, 1, 1)))]
    if kind == "pi":
        centres = resolved.centres
        offsets = np.arange(centres.size, dtype=np.int64)
        sign = pi_signs(permutations, operations, resolved.atom_normals, centres)
        return [Component("pi", permutations, sign, centres, offsets, np.ones((h, 1, 1)))]
    # orbitals: one component per (element, shell), atoms of the element in index order
    sizes = resolved.functions_per_atom
    atom_off = np.concatenate([[0], np.cumsum(sizes)[:-1]]).astype(np.int64)
    dmats: dict = {}
    comps = []
    for z, shells in sorted(resolved.element_shells.items()):
        atoms = np.flatnonzero(resolved.numbers == z)
        shell_off = 0
        for l in shells:
            if l not in dmats:
                dmats[l] = harmonics.rotation_matrices(l, operations)
            offsets = atom_off[atoms] + shell_off
            comps.append(Component(f"l={l}", permutations, None, atoms, offsets, dmats[l]))
            shell_off += 2 * l + 1
    return comps


def component_matrix(comp: Component, k: int):
    """COO triplets (rows, cols, data) of one component's block of Γ(R_k)."""
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
