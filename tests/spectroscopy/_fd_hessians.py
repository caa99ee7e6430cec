"""Test-only finite-difference Hessians of analytic energies, so that the noise is realistic.

Each model is an energy E(x) of Cartesian positions, evaluated for a batch of geometries at
once; :func:`fd_hessian` takes central second differences of it (the common textbook formula
H_ij ≈ [E(+i+j) − E(+i−j) − E(−i+j) + E(−i−j)] / 4h², common practice), so the Hessian carries
the truncation error O(h²) of a real finite-difference run and the rounding of E.

Models:

* Morse pair potentials (SF6: S–F and F–F pairs with their minima at the octahedral distances,
  so the octahedron is a stationary point).
* Lennard-Jones (the 13-atom icosahedral cluster, argon parameters ε/k_B = 119.8 K,
  σ = 3.405 Å, from memory; the radius is relaxed so that the icosahedron is stationary).
* Valence force fields with exact (non-linear) internal coordinates — bond lengths, angles and
  an out-of-plane coordinate proportional to the signed volume of four atoms — whose
  curvature at the reference geometry is the linear force field of tests/_force_field.py.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import minimize_scalar

# Energy units: aJ (= mdyn·Å) for the valence and Morse models, eV for Lennard-Jones.
EV = 1.602176634e-19  # J (CODATA 2018)
K_B = 1.380649e-23  # J/K (CODATA 2018)


def fd_hessian(energy, x0, h=0.005):
    """Central second differences of ``energy`` at ``x0`` (shape (n, 3)), step ``h`` in Å."""
    x0 = np.asarray(x0, dtype=np.float64)
    n3 = x0.size
    eye = np.eye(n3) * h
    plus = eye[:, None, :] + eye[None, :, :]
    minus = eye[:, None, :] - eye[None, :, :]
    disp = np.stack([plus, minus, -minus, -plus])  # (4, n3, n3, n3): +i+j, +i-j, -i+j, -i-j
    geoms = x0.ravel()[None, None, None, :] + disp
    e = energy(geoms.reshape(-1, *x0.shape)).reshape(4, n3, n3)
    hess = (e[0] - e[1] - e[2] + e[3]) / (4.0 * h * h)
    return 0.5 * (hess + hess.T)


def _dist(x, a, b):
    return np.linalg.norm(x[:, a] - x[:, b], axis=-1)


# ----------------------------------------------------------------------------- pair potentials
def morse(pairs):
    """E = Σ D (1 − exp(−a (r − r_e)))² over (i, j, D, a, r_e) pairs."""
    i = np.array([p[0] for p in pairs])
    j = np.array([p[1] for p in pairs])
    d, a, re = (np.array([p[k] for p in pairs], dtype=float) for k in (2, 3, 4))

    def energy(x):
        r = _dist(x, i, j)
        return (d * (1.0 - np.exp(-a * (r - re))) ** 2).sum(axis=-1)

    return energy


def sf6(r=1.561):
    """SF6 on ±x, ±y, ±z (r(S–F) = 1.561 Å, common practice) with a Morse S–F and F–F field.

    Returns positions, atomic numbers and the energy (aJ): D = 0.6 aJ, a = 2.0 Å⁻¹ for S–F;
    D = 0.05 aJ, a = 1.5 Å⁻¹ for F–F (invented, plausible magnitudes).
    """
    pos = np.vstack([np.zeros(3), np.eye(3) * r, -np.eye(3) * r])
    num = np.array([16] + [9] * 6)
    pairs = [(0, k, 0.6, 2.0, r) for k in range(1, 7)]
    for a in range(1, 7):
        for b in range(a + 1, 7):
            pairs.append((a, b, 0.05, 1.5, float(np.linalg.norm(pos[a] - pos[b]))))
    return pos, num, morse(pairs)


def lennard_jones(epsilon, sigma):
    def energy(x):
        n = x.shape[1]
        i, j = np.triu_indices(n, 1)
        s6 = (sigma / _dist(x, i, j)) ** 6
        return (4.0 * epsilon * (s6 * s6 - s6)).sum(axis=-1)

    return energy


def icosahedron(radius):
    phi = (1.0 + np.sqrt(5.0)) / 2.0
    v = []
    for s1 in (1, -1):
        for s2 in (1, -1):
            v += [[0, s1, s2 * phi], [s1, s2 * phi, 0], [s2 * phi, 0, s1]]
    v = np.array(v, dtype=float)
    v *= radius / np.linalg.norm(v[0])
    return np.vstack([np.zeros(3), v])


def lj13():
    """Ar13: a centred icosahedron, radius relaxed under Lennard-Jones (energy in eV)."""
    eps = 119.8 * K_B / EV
    energy = lennard_jones(eps, 3.405)
    best = minimize_scalar(
        lambda r: energy(icosahedron(r)[None])[0],
        bounds=(3.0, 4.5),
        method="bounded",
        options={"xatol": 1e-10},
    )
    return icosahedron(best.x), np.full(13, 18), energy


# ----------------------------------------------------------------------------- valence fields
def _angle(x, a, b, c):
    u, v = x[:, a] - x[:, b], x[:, c] - x[:, b]
    cos = (u * v).sum(-1) / (np.linalg.norm(u, axis=-1) * np.linalg.norm(v, axis=-1))
    return np.arccos(np.clip(cos, -1.0, 1.0))


def _volume(x, a, b, c, d):
    return np.einsum(
        "...i,...i->...", x[:, b] - x[:, a], np.cross(x[:, c] - x[:, a], x[:, d] - x[:, a])
    )


def _volume_gradient_norm(pos, atoms):
    """|∇V| at a planar reference: the scale that makes V a unit out-of-plane coordinate."""
    x = pos[None]
    g = np.zeros(pos.size)
    step = 1e-6
    for k in range(pos.size):
        e = np.zeros(pos.size)
        e[k] = step
        g[k] = (
            _volume(x + e.reshape(pos.shape), *atoms) - _volume(x - e.reshape(pos.shape), *atoms)
        )[0] / (2 * step)
    return float(np.linalg.norm(g))


def valence(pos, stretches=(), bends=(), out_of_plane=(), oop_quartic=()):
    """E = Σ f/2 (r − r0)² + Σ f/2 (θ − θ0)² + Σ f/2 q² + Σ (−a q² + b q⁴) with references
    taken from ``pos`` (so ``pos`` is a stationary point) and q = V / |∇V| at ``pos``."""
    st = [(a, b, f, float(np.linalg.norm(pos[a] - pos[b]))) for a, b, f in stretches]
    x0 = pos[None]
    be = [(a, b, c, f, float(_angle(x0, a, b, c)[0])) for a, b, c, f in bends]
    op = [(tuple(atoms), f, _volume_gradient_norm(pos, atoms)) for atoms, f in out_of_plane]
    qu = [(tuple(atoms), a, b, _volume_gradient_norm(pos, atoms)) for atoms, a, b in oop_quartic]

    def energy(x):
        e = np.zeros(x.shape[0])
        for a, b, f, r0 in st:
            e += 0.5 * f * (_dist(x, a, b) - r0) ** 2
        for a, b, c, f, t0 in be:
            e += 0.5 * f * (_angle(x, a, b, c) - t0) ** 2
        for atoms, f, s in op:
            e += 0.5 * f * (_volume(x, *atoms) / s) ** 2
        for atoms, a, b, s in qu:
            q = _volume(x, *atoms) / s
            e += -a * q**2 + b * q**4
        return e

    return energy


def benzene_field(pos):
    """The valence field of tests/_force_field.benzene with exact internal coordinates."""
    stretches, bends, oop = [], [], []
    for i in range(6):
        j, k, m = (i + 1) % 6, (i - 1) % 6, (i + 2) % 6
        stretches += [(i, j, 7.6), (i, 6 + i, 5.1)]
        bends += [(k, i, j, 1.2), (k, i, 6 + i, 0.52), (j, i, 6 + i, 0.52)]
        oop += [((i, k, j, 6 + i), 0.41), ((k, i, j, m), 0.30), ((6 + i, i, j, 6 + j), 0.12)]
    return valence(pos, stretches, bends, oop)


def planar_ammonia(r=1.0):
    """NH3 held planar (D3h), a saddle point: N–H stretches, H–N–H bends and a double-well
    out-of-plane coordinate −a q² + b q⁴ (the inversion barrier top, common practice)."""
    ang = np.radians([0.0, 120.0, 240.0])
    pos = np.vstack([np.zeros(3), np.stack([r * np.cos(ang), r * np.sin(ang), 0 * ang], 1)])
    num = np.array([7, 1, 1, 1])
    energy = valence(
        pos,
        stretches=[(0, k, 6.4) for k in (1, 2, 3)],
        bends=[(1, 0, 2, 0.55), (2, 0, 3, 0.55), (1, 0, 3, 0.55)],
        oop_quartic=[((0, 1, 2, 3), 0.2, 1.0)],
    )
    return pos, num, energy


def symmetric_noise(hess, relative, seed):
    """A random symmetric matrix of Frobenius norm ``relative`` x ‖hess‖, added to ``hess``."""
    rng = np.random.default_rng(seed)
    n = rng.standard_normal(hess.shape)
    n = n + n.T
    return hess + relative * np.linalg.norm(hess) * n / np.linalg.norm(n)
