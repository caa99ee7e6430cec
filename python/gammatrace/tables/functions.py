"""Basis functions of the irreps, found by how candidate functions transform.

For every candidate set of functions (``z``, ``(x,y)``, ``(Rx,Ry)``, ``x2+y2``,
``(x2-y2,xy)``, …) the representation matrices under every canonical operation are
computed numerically: the functions are sampled at fixed points r, the transformed
functions f(R⁻¹r) are sampled too, and a least-squares fit gives the matrix (a residual
check proves the span is invariant). A set whose character reduces to one irrep, once,
with that irrep's characters (the table's reduction formula, class weights included), is
listed under that irrep. Rotations (Rx, Ry, Rz) transform as x, y, z times det R.

Which sets are tried follows printed tables: cubic groups list (x,y,z), x2+y2+z2 and the
(2z2-x2-y2, x2-y2) / (xy,xz,yz) sets (or all five together for I, Ih and K_h); axial groups with
a two-dimensional (x,y) list z, (x,y), x2+y2, z2, (x2-y2,xy) (or x2-y2 and xy apart when
they split) and (xz,yz); the groups of order ≤ 8 without such a pair list x, y, z and the
six quadratic monomials one by one. Functions are written in ASCII (x2 for x²).
"""

from __future__ import annotations

import numpy as np

__all__ = ["match_functions"]

_RNG_SEED = 20240601
_POINTS = np.random.default_rng(_RNG_SEED).uniform(-1.0, 1.0, size=(40, 3))


_X, _Y, _Z = 0, 1, 2

# Component functions of points p (..., 3).
_COMPONENTS = {
    "x": lambda p: p[..., _X],
    "y": lambda p: p[..., _Y],
    "z": lambda p: p[..., _Z],
    "x2": lambda p: p[..., _X] ** 2,
    "y2": lambda p: p[..., _Y] ** 2,
    "z2": lambda p: p[..., _Z] ** 2,
    "xy": lambda p: p[..., _X] * p[..., _Y],
    "xz": lambda p: p[..., _X] * p[..., _Z],
    "yz": lambda p: p[..., _Y] * p[..., _Z],
    "x2+y2": lambda p: p[..., _X] ** 2 + p[..., _Y] ** 2,
    "x2-y2": lambda p: p[..., _X] ** 2 - p[..., _Y] ** 2,
    "x2+y2+z2": lambda p: (p**2).sum(axis=-1),
    "2z2-x2-y2": lambda p: 2 * p[..., _Z] ** 2 - p[..., _X] ** 2 - p[..., _Y] ** 2,
}


def _components(name: str):
    inner = name[1:-1] if name.startswith("(") else name
    return inner.split(",")


def _characters_of(name: str, ops: np.ndarray):
    """Characters per operation of the function set ``name``, or None if not invariant."""
    axial = name.lstrip("(").startswith("R")
    comps = [c.lstrip("R") for c in _components(name)]
    fns = [_COMPONENTS[c] for c in comps]
    base = np.stack([fn(_POINTS) for fn in fns], axis=-1)  # (K, m)
    moved = _POINTS[None, :, :] @ ops  # rows r·R = (R⁻¹ r)ᵀ for orthogonal R
    trans = np.stack([fn(moved) for fn in fns], axis=-1)  # (h, K, m)
    mats = np.linalg.pinv(base)[None] @ trans  # (h, m, m)
    residual = np.abs(base[None] @ mats - trans).max()
    if residual > 1e-8:
        return None
    chi = np.trace(mats, axis1=1, axis2=2)
    if axial:
        chi = chi * np.linalg.det(ops)
    return chi


def _single_irrep(chi_ops, op_class, char_matrix, factor, h, kappa):
    """Index of the irrep that the per-operation character chi_ops is, or None."""
    reps = np.unique(op_class, return_index=True)[1]
    chi = chi_ops[reps]
    if np.abs(chi_ops - chi[op_class]).max() > 1e-8:
        return None
    n = (char_matrix * factor) @ chi / (h * kappa)
    if np.abs(n - np.round(n)).max() > 1e-6:
        return None
    n = np.round(n).astype(int)
    if n.sum() != 1 or n.min() < 0:
        return None
    j = int(np.argmax(n))
    if np.abs(char_matrix[j] - chi).max() > 1e-6:
        return None  # K_h: a set beyond the table's reach can reduce to one row by aliasing
    return j


def match_functions(ops, op_class, char_matrix, factor, kappa):
    """Linear, rotational and quadratic functions of each irrep.

    Parameters
    ----------
    ops : numpy.ndarray, shape (h, 3, 3)
        Canonical operations in the standard frame.
    op_class : numpy.ndarray of int, shape (h,)
    char_matrix : numpy.ndarray, shape (n_irreps, n_classes)
    factor : numpy.ndarray, shape (n_classes,)
        h times the class weights of the reduction formula: the class sizes for a finite
        group, size·(1 − cos θ) for K_h.
    kappa : numpy.ndarray, shape (n_irreps,)
        1 for real irreps, 2 for complex-conjugate pairs combined into one real irrep.

    Returns
    -------
    list of tuple of str
        One tuple per irrep, in table order.
    """
    h = len(ops)
    out = [[] for _ in range(char_matrix.shape[0])]

    def place(name):
        chi = _characters_of(name, ops)
        if chi is None:
            return False
        j = _single_irrep(chi, op_class, char_matrix, factor, h, kappa)
        if j is None:
            return False
        out[j].append(name)
        return True

    def irreducible(name):
        chi = _characters_of(name, ops)
        return (
            chi is not None
            and _single_irrep(chi, op_class, char_matrix, factor, h, kappa) is not None
        )

    if irreducible("(x,y,z)"):
        for name in ("(x,y,z)", "(Rx,Ry,Rz)", "x2+y2+z2"):
            place(name)
        if not place("(2z2-x2-y2,x2-y2,xy,xz,yz)"):
            place("(2z2-x2-y2,x2-y2)")
            place("(xy,xz,yz)")
    elif irreducible("(x,y)"):
        for name in ("z", "(x,y)", "Rz", "(Rx,Ry)", "x2+y2", "z2"):
            place(name)
        if not place("(x2-y2,xy)"):
            place("x2-y2")
            place("xy")
        place("(xz,yz)")
    else:
        for name in ("x", "y", "z", "Rx", "Ry", "Rz", "x2", "y2", "z2", "xy", "xz", "yz"):
            place(name)
    return [tuple(f) for f in out]
