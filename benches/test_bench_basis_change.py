"""Benchmarks: symmetry-adapted Cartesian bases of icosahedral clusters.

Paired in one group with a plain baseline: the dense isotypic projector Σ χ(R) Γ(R) built
from dense 3N x 3N matrices (only at the small size). Run with ``pytest benches/``.
"""

from __future__ import annotations

import numpy as np
import pytest
from gammatrace.basis_change import SymmetryData, symmetry_adapted_basis
from gammatrace.tables import get_table
from scipy.spatial import cKDTree

PHI = (1.0 + np.sqrt(5.0)) / 2.0


def icosahedral_cluster(n_generic: int, seed: int = 0) -> SymmetryData:
    """A centre atom, special orbits on the C5, C3 and C2 axes and in a mirror, and
    ``n_generic`` orbits of 120 atoms at random points (fixed seed)."""
    table = get_table("Ih")
    rng = np.random.default_rng(seed)
    seeds = [
        np.zeros(3),
        np.array([0.0, 1.0, PHI]) * 2,
        np.ones(3) * 2,
        np.array([0, 0, 3.0]),
        np.array([2.0, 0.7, 0.0]),
    ]
    seeds += list(rng.normal(size=(n_generic, 3)) * 4.0)
    pos = []
    for p in seeds:
        imgs = table.operations @ p
        _, idx = np.unique(np.round(imgs, 8), axis=0, return_index=True)
        pos.append(imgs[np.sort(idx)])
    pos = np.concatenate(pos)
    moved = np.einsum("kij,nj->kni", table.operations, pos).reshape(-1, 3)
    _, perm = cKDTree(pos).query(moved)
    return SymmetryData(
        pos,
        np.full(len(pos), 29),
        np.zeros(3),
        np.eye(3),
        table.operations,
        perm.reshape(table.order, -1),
        table,
        table.operation_class,
    )


@pytest.mark.parametrize("n_generic", [8, 83])
def test_salc_icosahedral_cluster(benchmark, n_generic):
    sym = icosahedral_cluster(n_generic)
    benchmark.group = f"salc-Ih-{sym.n_atoms}"
    sab = benchmark(symmetry_adapted_basis, sym, "cartesian")
    assert sab.matrix.shape == (3 * sym.n_atoms, 3 * sym.n_atoms)


def test_dense_projector_baseline(benchmark):
    sym = icosahedral_cluster(8)
    benchmark.group = f"salc-Ih-{sym.n_atoms}"
    n = sym.n_atoms
    chi = sym.table.character_matrix[sym.table.index("T1u"), sym.op_class]

    def dense_projector():
        total = np.zeros((3 * n, 3 * n))
        for k in range(sym.order):
            gam = np.zeros((3 * n, 3 * n))
            for a in range(3):
                for b in range(3):
                    gam[3 * sym.permutations[k] + a, 3 * np.arange(n) + b] = sym.operations[k, a, b]
            total += chi[k] * gam
        return total * 3 / sym.order

    proj = benchmark.pedantic(dense_projector, rounds=1, iterations=1)
    m = np.trace(proj) / 3  # multiplicity of T1u
    assert np.isclose(m, round(m)) and round(m) > 0
