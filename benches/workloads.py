"""Inputs of the benchmark suite, all from fixed seeds.

- Clusters of about 10³, 10⁴, 10⁵ and 10⁶ atoms: Mackay icosahedra (Ih) and fcc spheres (Oh).
- Conformers of a 30-atom molecule: symmetric parents (Td, D3h, C2v, built as orbits of seed
  points) in random orientations; half keep their symmetry (noise 10⁻⁴ Å), half are distorted
  (noise 0.05 Å, so C1 at the default tolerance of 0.01 Å).
- A multi-frame XYZ file of about 50 MB made of such conformers.
- Single molecules for detection next to counting: benzene, C60, a 2057-atom Mackay
  icosahedron, and C1 conformers (the distorted half of the conformers above).
- For the per-structure path: the three 30-atom parents in a random orientation and one C1
  conformer; a 20,000-frame conformer ensemble file for the command line; the 1,025,235-atom
  Mackay icosahedron as an XYZ file.
"""

from __future__ import annotations

import functools
import os

import numpy as np
from gammatrace import get_table
from gammatrace.io import Structure, write_xyz
from gammatrace.io.builders import c60, fcc_cluster, mackay_icosahedron, orbit_structure

SEED = 20260707
TOL = 0.01
SIZES = (3, 4, 5, 6)  # log10 of the number of atoms
#: Mackay shells giving about 10^k atoms (923, 10179, 104223, 1025235).
MACKAY_SHELLS = {3: 6, 4: 14, 5: 31, 6: 67}
#: fcc sphere radii (Å) giving about 10^k atoms (959, 10641, 104589, 1015599).
FCC_RADIUS = {3: 16.0, 4: 35.0, 5: 75.0, 6: 160.0}
FAMILIES = {"Ih": "Mackay icosahedron", "Oh": "fcc sphere"}
N_CONFORMERS = 10_000
CONFORMER_ATOMS = 30
XYZ_TARGET_BYTES = 50_000_000
#: Mackay shells of the 2057-atom icosahedron.
ICO_2057_SHELLS = 8
#: Frames of the conformer ensemble given to the command line (half C1, half Td/D3h/C2v).
ENSEMBLE_FRAMES = 20_000


@functools.cache
def cluster(family: str, exponent: int) -> Structure:
    """The ~10^exponent-atom cluster of a family (``"Ih"`` or ``"Oh"``)."""
    if family == "Ih":
        return mackay_icosahedron(MACKAY_SHELLS[exponent])
    if family == "Oh":
        return fcc_cluster(FCC_RADIUS[exponent])
    raise ValueError(f"family: expected 'Ih' or 'Oh', got {family!r}")


def _parent(group: str, orbit_seeds: list, numbers: list) -> Structure:
    s = orbit_structure(get_table(group).operations, np.array(orbit_seeds), np.array(numbers))
    if s.n_atoms != CONFORMER_ATOMS:
        raise RuntimeError(f"{group} parent has {s.n_atoms} atoms, expected {CONFORMER_ATOMS}")
    d = np.linalg.norm(s.positions[:, None] - s.positions[None], axis=-1)
    if np.min(d + 1e3 * np.eye(len(d))) < 0.8:
        raise RuntimeError(f"{group} parent has atoms closer than 0.8 Å")
    return s


@functools.cache
def parents() -> tuple:
    """Three 30-atom parents: Td (24 + 6), D3h (12 + 12 + 6), C2v (7 × 4 + 2)."""
    td = _parent("Td", [[0.9, 1.7, 2.6], [1.9, 0.0, 0.0]], [1, 6])
    d3h = _parent("D3h", [[0.6, 1.9, 1.3], [2.3, 0.7, 2.4], [2.9, 1.1, 0.0]], [1, 1, 6])
    c2v_seeds = [
        [0.7, 1.1, 0.3],
        [1.9, 0.6, -1.2],
        [0.5, 2.6, 1.7],
        [2.8, 1.7, 0.9],
        [1.4, 3.4, -0.8],
        [3.3, 0.5, 2.2],
        [0.9, 0.8, 2.9],
        [0.0, 0.0, 1.5],
        [0.0, 0.0, -1.6],
    ]
    c2v = _parent("C2v", c2v_seeds, [1, 1, 6, 6, 8, 1, 7, 6, 8])
    return (("Td", td), ("D3h", d3h), ("C2v", c2v))


def _random_rotations(rng: np.random.Generator, n: int) -> np.ndarray:
    q, r = np.linalg.qr(rng.standard_normal((n, 3, 3)))
    q = q * np.sign(np.diagonal(r, axis1=1, axis2=2))[:, None, :]
    q[np.linalg.det(q) < 0, :, 0] *= -1.0
    return q


def conformers(n: int = N_CONFORMERS, seed: int = SEED) -> tuple:
    """``n`` 30-atom conformers, their expected point groups, rotations and shifts.

    Returns
    -------
    (structures, expected_groups, parent_index, rotations, shifts)
    """
    rng = np.random.default_rng(seed)
    par = parents()
    which = rng.integers(0, len(par), n)
    distorted = rng.random(n) < 0.5
    rot = _random_rotations(rng, n)
    shift = rng.normal(0.0, 5.0, (n, 3))
    noise = rng.standard_normal((n, CONFORMER_ATOMS, 3))
    noise *= np.where(distorted, 0.05, 1e-4)[:, None, None]
    base = np.stack([p.positions for _, p in par])[which] + noise
    pos = np.einsum("kij,kaj->kai", rot, base) + shift[:, None, :]
    nums = np.stack([p.numbers for _, p in par])[which]
    structures = [
        Structure(nums[k], np.ascontiguousarray(pos[k]), "<conformer>", k) for k in range(n)
    ]
    expected = np.where(distorted, "C1", np.array([g for g, _ in par])[which])
    return structures, expected, which, rot, shift


def write_conformer_xyz(path: os.PathLike, target_bytes: int = XYZ_TARGET_BYTES) -> int:
    """Write conformers until the file holds about ``target_bytes``; returns the frame count."""
    line_bytes = 2 + 3 * 17 + 1  # "Sy" + 3 × " %16.10f" + newline (gammatrace.io.write_xyz)
    frame_bytes = CONFORMER_ATOMS * line_bytes + len(f"{CONFORMER_ATOMS}\n") + 1
    n_frames = max(1, target_bytes // frame_bytes)
    structures, *_ = conformers(n_frames, seed=SEED + 1)
    write_xyz(structures, path)
    return n_frames


def _rotated(s: Structure, seed: int) -> Structure:
    """``s`` in a fixed random orientation, shifted off the origin."""
    rng = np.random.default_rng(seed)
    rot = _random_rotations(rng, 1)[0]
    pos = s.positions @ rot.T + rng.normal(0.0, 5.0, 3)
    return Structure(s.numbers, np.ascontiguousarray(pos), s.source)


@functools.cache
def molecule(name: str) -> Structure:
    """``"benzene"`` (D6h), ``"C60"`` (Ih) or ``"Ih-2057"`` (Ih), in a random orientation."""
    if name == "benzene":
        # C–C 1.39 Å, C–H 1.09 Å (approximate; only the symmetry matters here).
        angle = np.arange(6) * np.pi / 3
        ring = np.stack([np.cos(angle), np.sin(angle), np.zeros(6)], axis=1)
        pos = np.concatenate([1.39 * ring, 2.48 * ring])
        base = Structure(np.array([6] * 6 + [1] * 6), np.ascontiguousarray(pos), "<benzene>")
    elif name == "C60":
        base = c60()
    elif name == "Ih-2057":
        base = mackay_icosahedron(ICO_2057_SHELLS)
    else:
        raise ValueError(f"molecule: expected 'benzene', 'C60' or 'Ih-2057', got {name!r}")
    return _rotated(base, SEED + len(name))


@functools.cache
def c1_conformers(n: int = 100) -> tuple:
    """``n`` distinct 30-atom conformers of point group C1 (distorted parents)."""
    structures, expected, *_ = conformers(4 * n, seed=SEED + 2)
    picked = [s for s, g in zip(structures, expected) if g == "C1"][:n]
    if len(picked) != n:
        raise RuntimeError(f"only {len(picked)} C1 conformers among {4 * n}")
    return tuple(picked)


@functools.cache
def molecule30(name: str) -> Structure:
    """A 30-atom molecule: the ``"Td"``, ``"D3h"`` or ``"C2v"`` parent in a random orientation,
    or ``"C1"``, the first of :func:`c1_conformers`."""
    if name == "C1":
        return c1_conformers()[0]
    par = dict(parents())
    if name not in par:
        raise ValueError(f"molecule30: expected 'Td', 'D3h', 'C2v' or 'C1', got {name!r}")
    return _rotated(par[name], SEED + 30 + len(name))


def write_ensemble_xyz(path: os.PathLike, n: int = ENSEMBLE_FRAMES) -> np.ndarray:
    """Write ``n`` conformers (:func:`conformers`, fixed seed) as one multi-frame XYZ file;
    returns the expected point group of every frame."""
    structures, expected, *_ = conformers(n, seed=SEED + 3)
    write_xyz(structures, path)
    return expected
