"""Structures for the picture tests: any point group from orbits of seed atoms, and a few
molecules with idealised geometries (bond lengths common practice, rounded)."""

from __future__ import annotations

import numpy as np
from gammatrace import analyze, get_table
from gammatrace.io.builders import orbit_structure


def group_structure(name: str, seed: int = 3):
    """An analysis of a structure whose point group is exactly ``name``: four general
    orbits of C, H, O, N atoms under the table's operations."""
    rng = np.random.default_rng(seed)
    s = orbit_structure(get_table(name).operations, rng.normal(size=(4, 3)) * 1.5, [6, 1, 8, 7])
    res = analyze(s)
    assert res.point_group == name
    return res


def benzene():
    ang = np.radians(np.arange(6) * 60.0)
    ring = np.stack([np.cos(ang), np.sin(ang), np.zeros(6)], 1)
    return analyze(["C"] * 6 + ["H"] * 6, np.vstack([1.39 * ring, 2.47 * ring]))


def sulfur_hexafluoride():
    d = 1.56
    pos = [[0, 0, 0], [d, 0, 0], [-d, 0, 0], [0, d, 0], [0, -d, 0], [0, 0, d], [0, 0, -d]]
    return analyze(["S"] + ["F"] * 6, pos)


def water():
    return analyze(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])


def carbon_dioxide():
    return analyze(["C", "O", "O"], [[0, 0, 0], [0, 0, 1.16], [0, 0, -1.16]])


def hydrogen_cyanide():
    return analyze(["H", "C", "N"], [[0, 0, -1.07], [0, 0, 0], [0, 0, 1.16]])


def one_atom():
    return analyze(["Ne"], [[0.0, 0.0, 0.0]])
