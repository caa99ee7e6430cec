"""Shared fixtures: molecules from ASE's collection and idealised ones built here.

Geometries are inputs, not reference values: each test names the source of the answer it checks.
"""

from __future__ import annotations

import os

import numpy as np
import pytest
from hypothesis import settings

settings.register_profile("fast", max_examples=25, deadline=None)
settings.register_profile("thorough", max_examples=500, deadline=None)
settings.load_profile(os.environ.get("GAMMATRACE_HYPOTHESIS", "fast"))


def ase_molecule(name: str):
    """(symbols, positions) of a molecule of ASE's G2 collection (ase.build.molecule)."""
    from ase.build import molecule

    atoms = molecule(name)
    return atoms.get_chemical_symbols(), atoms.get_positions()


def octahedral(center: str, ligand: str, d: float):
    """An ideal octahedral ML6 (e.g. SF6): ligands on ±x, ±y, ±z at distance d."""
    pos = [[0, 0, 0]] + [list(v) for v in (np.vstack([np.eye(3), -np.eye(3)]) * d)]
    return [center] + [ligand] * 6, np.array(pos, dtype=float)


def trigonal_bipyramid(center: str, ligand: str, d_ax: float, d_eq: float):
    """An ideal trigonal bipyramid ML5 (e.g. PF5)."""
    ang = np.radians([90, 210, 330])
    eq = np.stack([d_eq * np.cos(ang), d_eq * np.sin(ang), np.zeros(3)], 1)
    pos = np.vstack([[0, 0, 0], eq, [[0, 0, d_ax], [0, 0, -d_ax]]])
    return [center] + [ligand] * 5, pos


def square_planar(center: str, ligand: str, d: float):
    """An ideal square-planar ML4 (e.g. XeF4)."""
    pos = np.array([[0, 0, 0], [d, 0, 0], [-d, 0, 0], [0, d, 0], [0, -d, 0]], dtype=float)
    return [center] + [ligand] * 4, pos


def random_rotation(rng: np.random.Generator) -> np.ndarray:
    """A uniformly random proper rotation matrix."""
    q, r = np.linalg.qr(rng.normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    if np.linalg.det(q) < 0:
        q[:, 0] = -q[:, 0]
    return q


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)
