"""Real spherical harmonics up to l = 3 and their rotation matrices.

The harmonics are real solid harmonics (homogeneous harmonic polynomials of degree l), all
with the same normalisation within a shell, so that they are orthonormal on the unit sphere up
to one common factor per l. Order within a shell: m = -l, ..., l, i.e.

====  =====================================================================================
 l     functions in order m = -l .. l
====  =====================================================================================
 0     1
 1     y, z, x
 2     xy, yz, z2, xz, x2-y2
 3     y(3x2-y2), xyz, yz2, z3, xz2, z(x2-y2), x(x2-3y2)
====  =====================================================================================

(m < 0: the sin(|m|φ) combinations; m > 0: the cos(mφ) ones; no Condon-Shortley phase.)

Convention for the representation matrices (common practice): an operation R acts on a function
as (O_R f)(r) = f(R⁻¹ r), and ``O_R Y_m = Σ_m' Y_m' D[m', m](R)``. For l = 1 in the order
(x, y, z) this makes D(R) = R, the same matrix that rotates a displacement vector. Improper
operations need no special case: harmonic polynomials of degree l are closed under all of O(3),
and D(σh·C(θ)) = (-1)^l D(C'(θ)) holds automatically (checked in the tests).
"""

from __future__ import annotations

import numpy as np

__all__ = ["MAX_L", "harmonic_labels", "real_harmonics", "rotation_matrices"]

#: The highest angular momentum supported (f functions).
MAX_L = 3

_LABELS = {
    0: ("s",),
    1: ("y", "z", "x"),
    2: ("xy", "yz", "z2", "xz", "x2-y2"),
    3: ("y(3x2-y2)", "xyz", "yz2", "z3", "xz2", "z(x2-y2)", "x(x2-3y2)"),
}


def harmonic_labels(l: int) -> tuple[str, ...]:
    """Names of the real harmonics of angular momentum ``l`` in the order m = -l..l.

    Parameters
    ----------
    l : int
        Angular momentum, 0 <= l <= 3.

    Returns
    -------
    tuple of str
        ``2l + 1`` labels such as ``("y", "z", "x")`` for l = 1.

    Examples
    --------
    >>> harmonic_labels(2)
    ('xy', 'yz', 'z2', 'xz', 'x2-y2')
    """
    return _LABELS[int(l)]


def real_harmonics(l: int, points: np.ndarray) -> np.ndarray:
    """Evaluate the real solid harmonics of degree ``l`` at ``points``.

    Parameters
    ----------
    l : int
        Angular momentum, 0 <= l <= 3.
    points : ndarray, shape (n, 3)
        Cartesian points (need not be unit vectors).

    Returns
    -------
    ndarray, shape (n, 2l + 1)
        Values in the order m = -l..l (see the module docstring).
    """
    p = np.asarray(points, dtype=np.float64)
    x, y, z = p[:, 0], p[:, 1], p[:, 2]
    if l == 0:
        return np.ones((p.shape[0], 1))
    if l == 1:
        return np.stack([y, z, x], axis=1)
    r2 = x * x + y * y + z * z
    if l == 2:
        s3 = np.sqrt(3.0)
        return np.stack(
            [
                s3 * x * y,
                s3 * y * z,
                0.5 * (3.0 * z * z - r2),
                s3 * x * z,
                0.5 * s3 * (x * x - y * y),
            ],
            axis=1,
        )
    if l == 3:
        a, b, c = np.sqrt(5.0 / 8.0), np.sqrt(15.0), np.sqrt(3.0 / 8.0)
        return np.stack(
            [
                a * (3.0 * x * x - y * y) * y,
                b * x * y * z,
                c * y * (5.0 * z * z - r2),
                0.5 * z * (5.0 * z * z - 3.0 * r2),
                c * x * (5.0 * z * z - r2),
                0.5 * b * z * (x * x - y * y),
                a * (x * x - 3.0 * y * y) * x,
            ],
            axis=1,
        )
    raise ValueError(f"l must be between 0 and {MAX_L}, got {l}")


def _sample_points() -> np.ndarray:
    # A fixed golden-spiral set: generic enough that the harmonics' values have full column rank.
    n = 24
    k = np.arange(n) + 0.5
    z = 1.0 - 2.0 * k / n
    phi = np.pi * (1.0 + np.sqrt(5.0)) * k
    rho = np.sqrt(1.0 - z * z)
    return np.stack([rho * np.cos(phi), rho * np.sin(phi), z], axis=1)


_POINTS = _sample_points()
_PINV = {l: np.linalg.pinv(real_harmonics(l, _POINTS)) for l in range(MAX_L + 1)}


def rotation_matrices(l: int, operations: np.ndarray) -> np.ndarray:
    """Representation matrices of the real harmonics of degree ``l``.

    Parameters
    ----------
    l : int
        Angular momentum, 0 <= l <= 3.
    operations : ndarray, shape (h, 3, 3)
        Orthogonal 3x3 matrices (proper or improper).

    Returns
    -------
    ndarray, shape (h, 2l + 1, 2l + 1)
        ``D[k]`` with ``O_R Y_m = Σ_m' Y_m' D[k][m', m]`` for R = ``operations[k]``.

    Notes
    -----
    ``Y_m(R⁻¹ r)`` is a polynomial of degree l in r; evaluating it at a fixed set of points and
    solving against the harmonics' values at the same points gives D exactly (to rounding).
    """
    ops = np.asarray(operations, dtype=np.float64)
    if l == 0:
        return np.ones((ops.shape[0], 1, 1))
    h = ops.shape[0]
    # (R⁻¹ r) written as a row is r @ R for orthogonal R.
    moved = np.einsum("pi,kij->kpj", _POINTS, ops).reshape(-1, 3)
    values = real_harmonics(l, moved).reshape(h, _POINTS.shape[0], 2 * l + 1)
    return np.einsum("mp,kpn->kmn", _PINV[l], values)
