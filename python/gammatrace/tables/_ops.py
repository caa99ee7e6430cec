"""Point operations as 3x3 matrices: construction, description and the core's group arithmetic.

Every operation is R = C(θ) (proper) or R = σh·C(θ) (improper) about a unit axis, θ in
[0°, 180°] (DEVELOPERS.md, "Operations"). Since σh·C(θ) = −C(θ + 180°), an improper R has
θ = 180° − angle(−R).

The canonical operations of every group, with their conjugacy classes, inverses and squares,
come from the Rust core (``_core.canonical_group``), the one place where they are generated;
membership of exact matrices in a group is the core's ``locate_operations``. Nothing here
generates a group or matches a measured operation to the nearest canonical one.
"""

from __future__ import annotations

from fractions import Fraction
from functools import cache

import numpy as np

from .. import _core
from ..errors import InputError

__all__ = [
    "IDENTITY",
    "INVERSION",
    "LINEAR_SUBGROUP_N",
    "SIGMA_H",
    "canonical_group",
    "contains_all",
    "describe",
    "locate",
    "mirror",
    "multiplication_table",
    "real_classes",
    "rot_z",
    "rotation",
    "rotation_label",
]

#: n of the finite subgroup C_nv / D_nd that stands for C∞v / D∞h (odd); the core's value.
LINEAR_SUBGROUP_N: int = int(_core.LINEAR_SUBGROUP_N)

IDENTITY = np.eye(3)
INVERSION = -np.eye(3)
SIGMA_H = np.diag([1.0, 1.0, -1.0])


def rotation(axis, angle_rad: float) -> np.ndarray:
    """Proper rotation by ``angle_rad`` about ``axis`` (right-handed), as a 3x3 matrix.

    Parameters
    ----------
    axis : array_like, shape (3,)
        Rotation axis; normalised here.
    angle_rad : float
        Rotation angle in radians.

    Returns
    -------
    numpy.ndarray, shape (3, 3)
    """
    a = np.asarray(axis, dtype=np.float64)
    a = a / np.linalg.norm(a)
    c, s = np.cos(angle_rad), np.sin(angle_rad)
    k = np.array([[0.0, -a[2], a[1]], [a[2], 0.0, -a[0]], [-a[1], a[0], 0.0]])
    return c * np.eye(3) + s * k + (1.0 - c) * np.outer(a, a)


def rot_z(angle_rad) -> np.ndarray:
    """Rotations about z by each angle in ``angle_rad`` (scalar or 1-D), shape (..., 3, 3)."""
    t = np.asarray(angle_rad, dtype=np.float64)
    out = np.zeros((*t.shape, 3, 3))
    c, s = np.cos(t), np.sin(t)
    out[..., 0, 0] = c
    out[..., 0, 1] = -s
    out[..., 1, 0] = s
    out[..., 1, 1] = c
    out[..., 2, 2] = 1.0
    return out


def mirror(normal) -> np.ndarray:
    """Reflection through the plane with the given normal, I − 2nnᵀ."""
    n = np.asarray(normal, dtype=np.float64)
    n = n / np.linalg.norm(n)
    return np.eye(3) - 2.0 * np.outer(n, n)


def describe(ops: np.ndarray):
    """Describe operations as (proper, angle in degrees, unit axis).

    Parameters
    ----------
    ops : numpy.ndarray, shape (k, 3, 3)
        Orthogonal matrices.

    Returns
    -------
    proper : numpy.ndarray of bool, shape (k,)
    angle : numpy.ndarray of float, shape (k,)
        θ in [0, 180] with R = C(θ) or R = σh·C(θ).
    axis : numpy.ndarray, shape (k, 3)
        Rotation axis (improper: axis of −R, i.e. the normal of σh); z when undefined
        (E and i). Sign is not meaningful.
    """
    ops = np.asarray(ops, dtype=np.float64).reshape(-1, 3, 3)
    det = np.linalg.det(ops)
    proper = det > 0
    q = np.where(proper[:, None, None], ops, -ops)  # proper part
    tr = np.trace(q, axis1=1, axis2=2)
    # θ = atan2(sinθ, cosθ) keeps full precision near 0° and 180°, where arccos does not:
    # the antisymmetric part of Q is sinθ·[a]x.
    anti = 0.5 * (q - np.transpose(q, (0, 2, 1)))
    sin_q = np.sqrt(anti[:, 0, 1] ** 2 + anti[:, 0, 2] ** 2 + anti[:, 1, 2] ** 2)
    ang_q = np.degrees(np.arctan2(sin_q, (tr - 1.0) / 2.0))
    angle = np.where(proper, ang_q, 180.0 - ang_q)
    # Axis of the proper part: from the symmetric part S = cosθ I + (1 − cosθ) a aᵀ.
    c = np.cos(np.radians(ang_q))
    sym = 0.5 * (q + np.transpose(q, (0, 2, 1))) - c[:, None, None] * np.eye(3)
    col = np.argmax(np.linalg.norm(sym, axis=1), axis=1)
    axis = sym[np.arange(len(ops)), :, col]
    norm = np.linalg.norm(axis, axis=1)
    undefined = norm < 1e-9
    axis = np.where(
        undefined[:, None],
        np.array([0.0, 0.0, 1.0]),
        axis / np.where(undefined, 1.0, norm)[:, None],
    )
    return proper, angle, axis


@cache
def canonical_group(name: str):
    """The core's canonical operations of a group with their arithmetic (cached).

    Parameters
    ----------
    name : str
        Schoenflies name as the core spells it (``"C3v"``, ``"S8"``, ``"Ih"``, ``"C∞v"``,
        ``"K_h"``); C∞v / D∞h give the operations of C_Mv / D_Md and K_h those of
        C_M × Ci, M = ``LINEAR_SUBGROUP_N``.

    Returns
    -------
    gammatrace._core.GroupData
        ``operations`` (h, 3, 3) in the standard frame, E first; ``generators``;
        ``class_of`` (conjugacy class of each operation: its smallest member's index);
        ``inverse`` and ``square`` (index of each operation's inverse and square).
    """
    data = _core.canonical_group(name, LINEAR_SUBGROUP_N)
    for arr in (data.operations, data.generators, data.class_of, data.inverse, data.square):
        arr.setflags(write=False)
    return data


def locate(ops: np.ndarray, queries: np.ndarray) -> np.ndarray:
    """Index of each query among ``ops``: exact membership (entries within 1e-6), in the core.

    For products, conjugates and frame changes of canonical operations, which are exact.

    Raises
    ------
    InputError
        If a query is not an element of ``ops`` (an internal inconsistency, never user input).
    """
    q = np.ascontiguousarray(np.asarray(queries, dtype=np.float64).reshape(-1, 3, 3))
    return _core.locate_operations(np.ascontiguousarray(ops, dtype=np.float64), q)


def contains_all(ops: np.ndarray, queries: np.ndarray) -> bool:
    """True when every query is an element of ``ops`` (exact membership, as :func:`locate`)."""
    try:
        locate(ops, queries)
    except InputError:
        return False
    return True


@cache
def multiplication_table(name: str) -> tuple[np.ndarray, np.ndarray]:
    """``prod[a, b]`` = index of a·b among a group's canonical operations, and the inverses.

    Cached per group; ``int64 (h, h)`` and ``(h,)``, read-only. The identity is index 0.
    """
    group = canonical_group(name)
    ops = np.asarray(group.operations)
    h = len(ops)
    prod = locate(ops, np.einsum("aij,bjk->abik", ops, ops).reshape(-1, 3, 3)).reshape(h, h)
    prod.setflags(write=False)
    return prod, group.inverse


def real_classes(class_of: np.ndarray, inverse: np.ndarray) -> np.ndarray:
    """Real classes: conjugacy classes merged with their inverse classes.

    A real character cannot tell g from g⁻¹, and a printed table with complex-conjugate
    pairs combined into one real irrep lists {g, g⁻¹} classes; for ambivalent groups
    (all but Cn, Cnh, S2n with n ≥ 3, T, Th) these are the conjugacy classes themselves.

    Parameters
    ----------
    class_of, inverse : numpy.ndarray of int, shape (h,)
        The core's conjugacy class (smallest member) and inverse of each operation.

    Returns
    -------
    numpy.ndarray of int, shape (h,)
        Class id of each operation: the smallest operation index in its real class.
    """
    class_of = np.asarray(class_of, dtype=np.int64)
    return np.minimum(class_of, class_of[np.asarray(inverse, dtype=np.int64)])


def fraction_of_turn(angle_deg: float, max_den: int) -> Fraction:
    """The angle as a fraction p/q of a full turn (lowest terms, q ≤ max_den)."""
    return Fraction(float(angle_deg) / 360.0).limit_denominator(max_den)


def rotation_label(proper: bool, angle_deg: float, max_den: int) -> str:
    """Schoenflies name of one operation from its type and angle: ``C5^2``, ``S10^3``, ``i``.

    Proper C(360p/q) is C_q^p. Improper σh·C(360p/q) is S_q^p when p is odd; when p is
    even (q then odd) the same operation class is S_q^(q−p), σh·C(−θ).
    """
    if proper:
        if angle_deg < 1e-9:
            return "E"
        f = fraction_of_turn(angle_deg, max_den)
        p, q = f.numerator, f.denominator
        return f"C{q}" + (f"^{p}" if p > 1 else "")
    if angle_deg < 1e-9:
        return "σ"
    if abs(angle_deg - 180.0) < 1e-9:
        return "i"
    f = fraction_of_turn(angle_deg, max_den)
    p, q = f.numerator, f.denominator
    if p % 2 == 0:
        p = q - p
    return f"S{q}" + (f"^{p}" if p > 1 else "")
