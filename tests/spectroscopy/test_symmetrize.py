"""Tests of symmetrisation onto the exact point group."""

from __future__ import annotations

import numpy as np
import pytest
from _symmetry_helpers import PHI, TABLES, build, permutations, random_rotation
from gammatrace.basis_change import SymmetryData
from gammatrace.errors import SymmetryError
from gammatrace.symmetrize import symmetrize

CASES = {
    "Td": [(6, (0, 0, 0)), (1, (0.63, 0.63, 0.63)), (8, (0.4, 0.7, 1.7))],
    "D6h": [(6, (1.397, 0, 0)), (1, (2.481, 0, 0)), (7, (0.5, 0.2, 1.1))],
    "Ih": [(6, (0, 0.7, 0.7 * PHI)), (8, (0.4, 0.7, 1.1)), (26, (0, 0, 0))],
}


def noisy(group, amplitude, seed=0, exact_ops=True):
    """An ideal structure, rotated and shifted, with every atom moved by at most ``amplitude``."""
    table = TABLES[group]
    pos, num = build(table, CASES[group])
    q = random_rotation(seed + 1)
    center = np.array([0.5, -0.25, 1.0])
    ideal = pos @ q.T + center
    rng = np.random.default_rng(seed)
    step = rng.standard_normal(ideal.shape)
    step *= amplitude * rng.uniform(0, 1, (len(num), 1)) / np.linalg.norm(step, axis=1)[:, None]
    moved = ideal + step
    ops = np.einsum("ia,kab,jb->kij", q, table.operations, q)
    perms = permutations(ops, moved, center, tol=3 * amplitude + 1e-9)
    if not exact_ops:
        ops = ops + 1e-5 * rng.standard_normal(ops.shape)
    sym = SymmetryData(moved, num, center, q.T, ops, perms, table, table.operation_class)
    return sym, ideal, ops


@pytest.mark.parametrize("exact_ops", [True, False])
@pytest.mark.parametrize("group", list(CASES))
def test_symmetrised_structure_is_exact_and_moves_atoms_within_tolerance(group, exact_ops):
    tol = 0.01  # Å, the detection tolerance of DEVELOPERS.md
    sym, ideal, _ = noisy(group, 0.3 * tol, exact_ops=exact_ops)
    res = symmetrize(sym, tolerance=tol)
    # independent check with the table's exact operations rotated into the input frame
    q = sym.frame.T
    ops = np.einsum("ia,kab,jb->kij", q, sym.table.operations, q)
    y = res.positions - sym.center
    dev = np.linalg.norm(np.einsum("kij,nj->kni", ops, y) - y[sym.permutations], axis=2)
    assert dev.max() < 1e-10
    assert res.max_deviation < 1e-10
    step = np.linalg.norm(res.positions - sym.positions, axis=1)
    assert step.max() <= tol and np.isclose(res.max_displacement, step.max())
    assert np.isclose(res.rms_displacement, np.sqrt(np.mean(step**2)))
    # the projection removes the asymmetric part of the noise: closer to the ideal structure
    assert np.linalg.norm(res.positions - ideal) < np.linalg.norm(sym.positions - ideal)


def test_symmetrising_an_exact_structure_changes_nothing():
    sym, _, _ = noisy("Td", 0.0)
    res = symmetrize(sym)
    assert res.max_displacement < 1e-12


def test_moving_further_than_the_tolerance_raises():
    sym, _, _ = noisy("D6h", 0.005, seed=3)
    with pytest.raises(SymmetryError, match="tolerance"):
        symmetrize(sym, tolerance=1e-4)
