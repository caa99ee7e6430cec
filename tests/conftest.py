"""Shared fixtures: molecules from ASE's collection and idealised ones built here.

Geometries are inputs, not reference values: each test names the source of the answer it checks.
"""

from __future__ import annotations

import os

import numpy as np
import pytest
from hypothesis import settings

# "fast" (the default, what CI runs) draws the same examples every run, so a red CI is
# reproducible; "thorough" (GAMMATRACE_HYPOTHESIS=thorough) explores afresh, 500 per test.
settings.register_profile("fast", max_examples=25, deadline=None, derandomize=True)
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


def ferrocene_like():
    """An invented staggered M(C5H5)2 sandwich built as orbits of D5d (no reference geometry):
    Fe at the centre, C and H seeds in a mirror plane (18° from x, between two C2' axes)."""
    import gammatrace as gt
    from gammatrace.io.builders import orbit_structure

    ops = gt.get_table("D5d").operations
    phi = np.radians(18.0)
    direction = np.array([np.cos(phi), np.sin(phi), 0.0])
    seeds = np.array([[0.0, 0.0, 0.0], 1.2 * direction + [0, 0, 1.65], 2.27 * direction])
    seeds[2, 2] = 1.65
    return orbit_structure(ops, seeds, np.array([26, 6, 1]))


def twisted_ethylene():
    """Ethylene twisted by 90° about the C=C axis (z), invented geometry (C=C 1.34 Å, C-H
    1.08 Å, H-C-H 117°): the CH2 planes are the diagonal mirror planes x = y and x = -y, so
    the structure is D2d and the two p orbitals of the π bond are perpendicular."""
    half = np.radians(117.0 / 2)
    r, z = 1.08 * np.sin(half), 0.67 + 1.08 * np.cos(half)
    d = np.array([1.0, 1.0, 0.0]) / np.sqrt(2.0)
    e = np.array([1.0, -1.0, 0.0]) / np.sqrt(2.0)
    pos = [[0, 0, 0.67], [0, 0, -0.67]]
    pos += [list(r * d + [0, 0, z]), list(-r * d + [0, 0, z])]
    pos += [list(r * e - [0, 0, z]), list(-r * e - [0, 0, z])]
    return ["C", "C", "H", "H", "H", "H"], np.array(pos, dtype=float)


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
