"""Structure builders for the demo, the benchmarks and property tests.

Idealised geometries generated from their construction (no data files): Mackay icosahedra of any
size, fcc (Oh) clusters, the C60 truncated icosahedron, and orbits of seed points under the
canonical operations of any point group (random symmetric structures). All vectorised.
"""

from __future__ import annotations

import itertools

import numpy as np

from .structure import Structure

__all__ = [
    "GOLDEN",
    "c60",
    "fcc_cluster",
    "icosahedron_vertices",
    "mackay_icosahedron",
    "mackay_size",
    "orbit_structure",
]

GOLDEN = (1.0 + 5.0**0.5) / 2.0


def icosahedron_vertices() -> np.ndarray:
    """The 12 vertices: cyclic permutations of (0, ±1, ±φ); edge 2, C5 as in DEVELOPERS.md."""
    base = np.array([(0.0, s1, s2 * GOLDEN) for s1 in (-1, 1) for s2 in (-1, 1)])
    return np.concatenate([base, base[:, [2, 0, 1]], base[:, [1, 2, 0]]])


def _ico_edges_faces(v: np.ndarray) -> tuple[list, list]:
    d = np.linalg.norm(v[:, None] - v[None], axis=-1)
    adj = np.isclose(d, 2.0)
    edges = [(i, j) for i in range(12) for j in range(i + 1, 12) if adj[i, j]]
    faces = [
        (i, j, k)
        for i, j, k in itertools.combinations(range(12), 3)
        if adj[i, j] and adj[j, k] and adj[i, k]
    ]
    return edges, faces


def mackay_size(n_shells: int) -> int:
    """Atoms in a Mackay icosahedron with ``n_shells`` shells around the centre atom."""
    return 1 + sum(10 * k * k + 2 for k in range(1, n_shells + 1))


def mackay_icosahedron(n_shells: int, spacing: float = 2.8, element: int = 79) -> Structure:
    """A Mackay icosahedron (Ih): centre atom plus ``n_shells`` shells of 10k²+2 atoms.

    ``spacing`` is the nearest-neighbour distance along the shell edges, in ångström.
    """
    v = icosahedron_vertices() / 2.0  # edge length 1
    edges, faces = _ico_edges_faces(icosahedron_vertices())
    parts = [np.zeros((1, 3))]
    for k in range(1, n_shells + 1):
        parts.append(v * k)
        if k >= 2:
            t = np.arange(1, k)[:, None]
            for a, b in edges:
                parts.append(v[a] * (k - t) + v[b] * t)
        if k >= 3:
            ij = np.array([(i, j) for i in range(1, k) for j in range(1, k - i)])
            i, j = ij[:, :1], ij[:, 1:]
            for a, b, c in faces:
                parts.append(v[a] * (k - i - j) + v[b] * i + v[c] * j)
    pos = np.ascontiguousarray(np.concatenate(parts) * spacing)
    return Structure(np.full(len(pos), element, dtype=np.int64), pos, f"<Mackay {len(pos)}>")


def fcc_cluster(radius: float, spacing: float = 2.88, element: int = 79) -> Structure:
    """Atoms of an fcc lattice (nearest-neighbour ``spacing``) within ``radius`` of an atom: Oh."""
    a = spacing * 2**0.5
    m = int(np.ceil(radius / a)) + 1
    g = np.arange(-m, m + 1)
    cube = np.stack(np.meshgrid(g, g, g, indexing="ij"), -1).reshape(-1, 3).astype(float)
    basis = np.array([[0, 0, 0], [0.5, 0.5, 0], [0.5, 0, 0.5], [0, 0.5, 0.5]])
    pts = (cube[:, None, :] + basis[None]).reshape(-1, 3) * a
    pos = np.ascontiguousarray(pts[np.linalg.norm(pts, axis=1) <= radius + 1e-9])
    return Structure(np.full(len(pos), element, dtype=np.int64), pos, f"<fcc {len(pos)}>")


def c60(bond: float = 1.43) -> Structure:
    """Buckminsterfullerene as an ideal truncated icosahedron (all edges ``bond`` Å).

    Vertices: even permutations of (0, ±1, ±3φ), (±1, ±(2+φ), ±2φ), (±φ, ±2, ±φ³), edge 2.
    """
    phi = GOLDEN
    seeds = [(0.0, 1.0, 3 * phi), (1.0, 2 + phi, 2 * phi), (phi, 2.0, phi**3)]
    pts = set()
    for s in seeds:
        for signs in itertools.product((-1, 1), repeat=3):
            p = tuple(a * b for a, b in zip(s, signs))
            for r in range(3):  # cyclic (even) permutations
                pts.add(tuple(round(p[(i + r) % 3], 12) for i in range(3)))
    pos = np.array(sorted(pts)) * (bond / 2.0)
    return Structure(np.full(len(pos), 6, dtype=np.int64), np.ascontiguousarray(pos), "<C60>")


def orbit_structure(
    operations: np.ndarray, seeds: np.ndarray, numbers: np.ndarray, merge_tol: float = 1e-6
) -> Structure:
    """The orbits of seed points under a set of operations (a group), duplicates merged.

    Parameters
    ----------
    operations : (h, 3, 3) array
        The group's matrices (e.g. ``get_table(name).operations``).
    seeds : (k, 3) array
        One point per orbit.
    numbers : (k,) int array
        Atomic number of each seed's orbit.
    """
    ops = np.asarray(operations, dtype=np.float64)
    seeds = np.asarray(seeds, dtype=np.float64).reshape(-1, 3)
    pts = np.einsum("hij,kj->khi", ops, seeds)  # (k, h, 3)
    nums = np.repeat(np.asarray(numbers, dtype=np.int64), len(ops))
    flat = pts.reshape(-1, 3)
    key = np.round(flat / merge_tol).astype(np.int64)
    _, first = np.unique(key, axis=0, return_index=True)
    first = np.sort(first)
    return Structure(nums[first], np.ascontiguousarray(flat[first]), "<orbits>")
