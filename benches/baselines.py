"""Plain baselines: what a user would write without gammatrace, in the project's own code.

(a) ``dense_cartesian_characters``: the literal method. Map the atoms (KD-tree), build the
    3N × 3N matrix Γ(R) = P(R) ⊗ R of every operation and take its trace. Memory 72 N² bytes
    per matrix, so only for about 2000 atoms or fewer.
(b) ``kdtree_cartesian_characters``: numpy + scipy.spatial.cKDTree. One tree per element; for
    every operation, rotate all atoms, query the nearest atom, check it is within ``tol`` and
    count the atoms mapped onto themselves; χ_3N(R) = n_unshifted · tr(R).
    Both are GIVEN the operations (and their classes) found by gammatrace: only the mapping and
    counting are compared with gammatrace's full detection, never the search for operations.
(c) ``read_xyz_loadtxt`` / ``read_xyz_pandas``: numpy.loadtxt and pandas.read_csv on a
    multi-frame XYZ file whose frames all have the same number of atoms (a simplification the
    gammatrace reader does not need).
"""

from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree


class NotASymmetry(Exception):
    """An operation does not map the structure onto itself within the tolerance."""


def _element_trees(x: np.ndarray, numbers: np.ndarray) -> list:
    out = []
    for z in np.unique(numbers):
        idx = np.flatnonzero(numbers == z)
        out.append((idx, cKDTree(x[idx])))
    return out


def map_atoms_kdtree(x: np.ndarray, trees: list, op: np.ndarray, tol: float) -> np.ndarray:
    """Permutation of the atoms under ``op`` (centred coordinates ``x``) with cKDTree queries."""
    y = x @ op.T
    perm = np.empty(len(x), dtype=np.int64)
    for idx, tree in trees:
        d, j = tree.query(y[idx], distance_upper_bound=tol)
        if not np.all(np.isfinite(d)):
            raise NotASymmetry(f"atom {idx[np.argmin(np.isfinite(d))]} has no image")
        perm[idx] = idx[j]
    return perm


def kdtree_cartesian_characters(
    positions: np.ndarray, numbers: np.ndarray, center: np.ndarray, ops: np.ndarray, tol: float
) -> np.ndarray:
    """χ_3N of every given operation: unshifted atoms (KD-tree mapping) times tr(R)."""
    x = positions - center
    trees = _element_trees(x, numbers)
    ident = np.arange(len(x))
    chars = np.empty(len(ops))
    for k, op in enumerate(ops):
        perm = map_atoms_kdtree(x, trees, op, tol)
        chars[k] = np.count_nonzero(perm == ident) * np.trace(op)
    return chars


def dense_cartesian_characters(
    positions: np.ndarray, numbers: np.ndarray, center: np.ndarray, ops: np.ndarray, tol: float
) -> np.ndarray:
    """χ_3N of every given operation as the trace of the literal 3N × 3N matrix P(R) ⊗ R."""
    x = positions - center
    n = len(x)
    trees = _element_trees(x, numbers)
    cols = 3 * np.arange(n)[:, None, None] + np.arange(3)[None, None, :]  # (n, 1, 3)
    chars = np.empty(len(ops))
    for k, op in enumerate(ops):
        perm = map_atoms_kdtree(x, trees, op, tol)
        gamma = np.zeros((3 * n, 3 * n))
        # displacement of atom i is carried to atom perm[i] and rotated: block (perm[i], i) = R
        gamma[3 * perm[:, None, None] + np.arange(3)[None, :, None], cols] = op[None]
        chars[k] = np.trace(gamma)
        del gamma  # one matrix at a time
    return chars


def reduce_vibrations(table, op_class: np.ndarray, chars_per_op: np.ndarray) -> tuple:
    """Γ_3N and Γ_vib multiplicities (dicts) from per-operation characters, with the table."""
    nc = len(table.classes)
    sizes = np.asarray(table.class_sizes, dtype=np.float64)
    per_class = np.bincount(op_class, weights=chars_per_op, minlength=nc) / sizes
    chi = np.asarray(table.character_matrix, dtype=np.float64)
    order = sizes.sum()
    labels = [ir.label for ir in table.irreps]

    def reduce(c):
        m = (c * sizes) @ chi.T / order
        return {lab: round(v) for lab, v in zip(labels, m) if round(v)}

    vib = (
        per_class
        - np.asarray(table.vector_characters, dtype=np.float64)
        - np.asarray(table.rotation_characters, dtype=np.float64)
    )
    return reduce(per_class), reduce(vib)


def read_xyz_loadtxt(path, n_atoms: int) -> tuple:
    """Symbols and ``(n_frames, n_atoms, 3)`` positions with numpy.loadtxt (equal frames)."""
    per = n_atoms + 2
    with open(path, encoding="utf-8") as fh:
        body = [line for k, line in enumerate(fh) if k % per >= 2]
    symbols = np.loadtxt(body, usecols=0, dtype=str)
    xyz = np.loadtxt(body, usecols=(1, 2, 3))
    return symbols, xyz.reshape(-1, n_atoms, 3)


def read_xyz_pandas(path, n_atoms: int) -> tuple:
    """Symbols and ``(n_frames, n_atoms, 3)`` positions with pandas.read_csv (C parser).

    Whitespace-separated, header lines dropped as the rows without three coordinates (blank
    comment lines are skipped by the parser).
    """
    import pandas as pd

    frame = pd.read_csv(
        path, sep=r"\s+", header=None, names=["symbol", "x", "y", "z"], engine="c"
    ).dropna(subset=["z"])
    xyz = frame[["x", "y", "z"]].to_numpy(dtype=np.float64)
    return frame["symbol"].to_numpy(), xyz.reshape(-1, n_atoms, 3)
