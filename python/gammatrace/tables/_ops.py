"""Point operations as 3x3 matrices: construction, description, lookup, closure and classes.

Every operation is R = C(θ) (proper) or R = σh·C(θ) (improper) about a unit axis, θ in
[0°, 180°] (DEVELOPERS.md, "Operations"). Since σh·C(θ) = −C(θ + 180°), an improper R has
θ = 180° − angle(−R). Lookups find the nearest matrix of a table by the Frobenius inner
product (for orthogonal matrices ‖A − B‖² = 6 − 2⟨A, B⟩), in chunks so that memory stays
bounded for groups of a few thousand operations.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np

__all__ = [
    "IDENTITY",
    "INVERSION",
    "SIGMA_H",
    "close",
    "describe",
    "lookup",
    "mirror",
    "nearest",
    "real_classes",
    "rot_z",
    "rotation",
    "rotation_label",
]

IDENTITY = np.eye(3)
INVERSION = -np.eye(3)
SIGMA_H = np.diag([1.0, 1.0, -1.0])

# Chunk of queries per matrix product in `nearest` (queries x table inner products).
_CHUNK = 512


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


def nearest(table: np.ndarray, queries: np.ndarray):
    """Index of, and Frobenius distance to, the nearest table matrix for each query.

    Parameters
    ----------
    table : numpy.ndarray, shape (h, 3, 3)
    queries : numpy.ndarray, shape (k, 3, 3)

    Returns
    -------
    index : numpy.ndarray of int, shape (k,)
    distance : numpy.ndarray of float, shape (k,)
    """
    t = np.asarray(table, dtype=np.float64).reshape(len(table), 9)
    q = np.asarray(queries, dtype=np.float64).reshape(-1, 9)
    t_sq = np.einsum("ij,ij->i", t, t)
    index = np.empty(len(q), dtype=np.int64)
    for start in range(0, len(q), _CHUNK):
        block = q[start : start + _CHUNK]
        # ‖q − t‖² = ‖q‖² + ‖t‖² − 2⟨q, t⟩; ‖q‖² is constant per row.
        score = 2.0 * block @ t.T - t_sq[None, :]
        index[start : start + _CHUNK] = np.argmax(score, axis=1)
    distance = np.linalg.norm(q - t[index], axis=1)
    return index, distance


def lookup(table: np.ndarray, queries: np.ndarray, tol: float = 1e-6) -> np.ndarray:
    """Indices of queries that are (numerically) members of ``table``.

    Raises
    ------
    RuntimeError
        If a query is not in the table: an internal inconsistency, never user input.
    """
    index, distance = nearest(table, queries)
    if len(distance) and distance.max() > tol:
        bad = int(np.argmax(distance))
        raise RuntimeError(
            f"internal: operation {bad} is not in the generated group "
            f"(distance {distance[bad]:.3g})"
        )
    return index


def _key(m: np.ndarray) -> bytes:
    return np.round(m, 8).tobytes()


def close(generators, max_order: int = 200) -> np.ndarray:
    """Close a set of orthogonal matrices under multiplication.

    Parameters
    ----------
    generators : sequence of (3, 3) arrays
    max_order : int
        Guard against generators of an infinite group.

    Returns
    -------
    numpy.ndarray, shape (h, 3, 3)
        The group, identity first, then in order of discovery.
    """
    gens = [np.asarray(g, dtype=np.float64) for g in generators]
    ops = [np.eye(3)]
    seen = {_key(np.eye(3) + 0.0)}
    frontier = [np.eye(3)]
    while frontier:
        new = []
        for a in frontier:
            for g in gens:
                p = g @ a
                p[np.abs(p) < 1e-14] = 0.0
                k = _key(p + 0.0)
                if k not in seen:
                    seen.add(k)
                    ops.append(p)
                    new.append(p)
                    if len(ops) > max_order:
                        raise RuntimeError("internal: generators do not close into a finite group")
        frontier = new
    return np.array(ops)


def real_classes(ops: np.ndarray, generators) -> np.ndarray:
    """Real classes: conjugacy classes merged with their inverse classes.

    A real character cannot tell g from g⁻¹, and a printed table with complex-conjugate
    pairs combined into one real irrep lists {g, g⁻¹} classes; for ambivalent groups
    (all but Cn, Cnh, S2n with n ≥ 3, T, Th) these are the conjugacy classes themselves.
    Conjugation by the generators generates conjugation by the whole group, so the
    classes are the connected components of x ~ g x g⁻¹ (g a generator) and x ~ x⁻¹.

    Returns
    -------
    numpy.ndarray of int, shape (h,)
        Class id of each operation: the smallest operation index in its class.
    """
    ops = np.asarray(ops, dtype=np.float64)
    links = [lookup(ops, np.transpose(ops, (0, 2, 1)))]
    for g in generators:
        g = np.asarray(g, dtype=np.float64)
        links.append(lookup(ops, g @ ops @ g.T))
    label = np.arange(len(ops))
    while True:
        old = label.copy()
        for perm in links:
            # Propagate the minimum along each link in both directions.
            np.minimum.at(label, perm, label)
            label = np.minimum(label, label[perm])
        label = label[label]  # pointer jumping
        if np.array_equal(label, old):
            return label


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
