"""Test-only valence force fields: Cartesian Hessians H = Bᵀ F B at equilibrium.

B holds the Wilson s-vectors of the internal coordinates (Wilson, Decius & Cross, "Molecular
Vibrations", 1955, ch. 4); F is diagonal. Out-of-plane motion of planar molecules uses, for
four atoms of the plane, the unique combination of their z displacements that vanishes for
rigid translations and rotations (a linearised wag or torsion).
"""

from __future__ import annotations

import numpy as np

# Standard atomic weights, IUPAC 2021 (abridged), in u.
MASSES = {1: 1.008, 6: 12.011, 7: 14.007, 8: 15.999}


def stretch(pos, a, b):
    row = np.zeros(pos.shape)
    e = (pos[b] - pos[a]) / np.linalg.norm(pos[b] - pos[a])
    row[a], row[b] = -e, e
    return row.ravel()


def bend(pos, a, b, c):
    """Angle a-b-c (b at the apex), Wilson's s-vectors, radians per Å."""
    r1, r2 = pos[a] - pos[b], pos[c] - pos[b]
    l1, l2 = np.linalg.norm(r1), np.linalg.norm(r2)
    e1, e2 = r1 / l1, r2 / l2
    cos = e1 @ e2
    sin = np.sqrt(1.0 - cos * cos)
    row = np.zeros(pos.shape)
    row[a] = (cos * e1 - e2) / (l1 * sin)
    row[c] = (cos * e2 - e1) / (l2 * sin)
    row[b] = -row[a] - row[c]
    return row.ravel()


def out_of_plane(pos, atoms):
    """Linearised out-of-plane coordinate of four atoms of a plane z = const."""
    atoms = list(atoms)
    m = np.vstack([np.ones(4), pos[atoms, 0], pos[atoms, 1]])
    _, _, vt = np.linalg.svd(m)
    coef = vt[-1] / np.linalg.norm(vt[-1])
    row = np.zeros(pos.shape)
    row[atoms, 2] = coef
    return row.ravel()


def hessian(terms):
    """Σ_k f_k b_k b_kᵀ for (row, force constant) pairs."""
    n = len(terms[0][0])
    h = np.zeros((n, n))
    for row, k in terms:
        h += k * np.outer(row, row)
    return h


def water():
    """H2O in the yz plane, z along C2: r = 0.9572 Å, angle 104.52° (common practice)."""
    r, th = 0.9572, np.radians(104.52)
    pos = np.array(
        [
            [0.0, 0.0, 0.0],
            [0.0, r * np.sin(th / 2), -r * np.cos(th / 2)],
            [0.0, -r * np.sin(th / 2), -r * np.cos(th / 2)],
        ]
    )
    num = np.array([8, 1, 1])
    terms = [(stretch(pos, 0, 1), 8.45), (stretch(pos, 0, 2), 8.45), (bend(pos, 1, 0, 2), 0.76)]
    return pos, num, hessian(terms), terms


def ammonia():
    """NH3, C3 along z, one H in the xz plane: r = 1.012 Å, HNH = 106.7° (common practice)."""
    r, hnh = 1.012, np.radians(106.7)
    # angle β between N-H and -z: cos(HNH) = 1 - 1.5 sin²β
    sin_b = np.sqrt((1.0 - np.cos(hnh)) / 1.5)
    cos_b = np.sqrt(1.0 - sin_b**2)
    pos = [[0.0, 0.0, 0.0]]
    for k in range(3):
        phi = 2.0 * np.pi * k / 3.0
        pos.append([r * sin_b * np.cos(phi), r * sin_b * np.sin(phi), -r * cos_b])
    pos = np.array(pos)
    num = np.array([7, 1, 1, 1])
    terms = [(stretch(pos, 0, k), 6.4) for k in (1, 2, 3)]
    terms += [(bend(pos, a, 0, b), 0.55) for a, b in ((1, 2), (2, 3), (1, 3))]
    return pos, num, hessian(terms), terms


def methane():
    """CH4, S4 axes along x, y, z: r = 1.087 Å (common practice)."""
    a = 1.087 / np.sqrt(3.0)
    pos = np.array([[0, 0, 0], [a, a, a], [a, -a, -a], [-a, a, -a], [-a, -a, a]], dtype=float)
    num = np.array([6, 1, 1, 1, 1])
    terms = [(stretch(pos, 0, k), 5.0) for k in range(1, 5)]
    terms += [(bend(pos, i, 0, j), 0.46) for i in range(1, 5) for j in range(i + 1, 5)]
    return pos, num, hessian(terms), terms


def benzene():
    """C6H6 in the xy plane, C atoms on the x axis and its 60° images (C2' through atoms):
    r(CC) = 1.397 Å, r(CH) = 1.084 Å (common practice)."""
    rc, rh = 1.397, 1.397 + 1.084
    ang = np.radians(60.0 * np.arange(6))
    c = np.stack([rc * np.cos(ang), rc * np.sin(ang), np.zeros(6)], axis=1)
    hh = np.stack([rh * np.cos(ang), rh * np.sin(ang), np.zeros(6)], axis=1)
    pos = np.vstack([c, hh])
    num = np.array([6] * 6 + [1] * 6)
    terms = []
    for i in range(6):
        j, k, m = (i + 1) % 6, (i - 1) % 6, (i + 2) % 6
        terms.append((stretch(pos, i, j), 7.6))  # C-C
        terms.append((stretch(pos, i, 6 + i), 5.1))  # C-H
        terms.append((bend(pos, k, i, j), 1.2))  # C-C-C
        terms.append((bend(pos, k, i, 6 + i), 0.52))  # C-C-H
        terms.append((bend(pos, j, i, 6 + i), 0.52))
        terms.append((out_of_plane(pos, (i, k, j, 6 + i)), 0.41))  # C-H wag
        terms.append((out_of_plane(pos, (k, i, j, m)), 0.30))  # ring torsion
        terms.append((out_of_plane(pos, (6 + i, i, j, 6 + j)), 0.12))  # H-C-C-H torsion
    return pos, num, hessian(terms), terms
