"""Symmetry-distinct environments per element (shared/INTERFACE.md, "More keys": environments).

The counts are those of the static structure: every set is an orbit of the point group. The
expected numbers are the symmetry-distinct atoms of each textbook geometry (common practice;
e.g. Silverstein, Webster & Kiemle, Spectrometric Identification of Organic Compounds, on
chemical equivalence by symmetry — from memory). Toluene shows why the docs say "static":
its methyl H are two sets in one geometry (one H in the mirror plane, a mirror pair), though a
rotating methyl makes them one NMR signal in solution.
"""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
from conftest import random_rotation
from gammatrace.io.builders import c60

CC, CH = 1.39, 1.08  # Å (common practice)


def _ring(radius, phase=0.0, n=6):
    ang = phase + np.arange(n) * 2 * np.pi / n
    return np.c_[radius * np.cos(ang), radius * np.sin(ang), np.zeros(n)]


def benzene():
    return ["C"] * 6 + ["H"] * 6, np.r_[_ring(CC), _ring(CC + CH)]


def toluene():
    ring = _ring(CC)
    h = _ring(CC + CH)[1:]
    c7 = np.array([CC + 1.51, 0.0, 0.0])
    # methyl staggered against the ring: one H in the plane perpendicular to the ring, the other
    # two mirror images across it (Cs, the mirror holding the ring's C2 axis)
    t = np.radians(109.47)
    d = [
        np.array([-np.cos(t), np.sin(t) * np.cos(p), np.sin(t) * np.sin(p)])
        for p in np.radians([90, 210, 330])
    ]
    h_in, h_up, h_dn = (c7 + CH * v for v in d)
    pos = np.r_[ring, [c7], h, [h_in, h_up, h_dn]]
    return ["C"] * 7 + ["H"] * 8, pos


def naphthalene():
    d = np.sqrt(3) * CC / 2  # centre of each ring on ±x
    carbons, hydrogens = [], []
    for sx in (-1.0, 1.0):
        centre = np.array([sx * d, 0.0, 0.0])
        for k in range(6):
            a = np.radians(30 + 60 * k)
            p = centre + CC * np.array([np.cos(a), np.sin(a), 0.0])
            if abs(p[0]) < 1e-9:  # the two shared carbons, added once below
                continue
            carbons.append(p)
            hydrogens.append(p + CH * (p - centre) / CC)
    carbons += [np.array([0.0, CC / 2, 0.0]), np.array([0.0, -CC / 2, 0.0])]
    return ["C"] * 10 + ["H"] * 8, np.array(carbons + hydrogens)


def cyclohexane_chair():
    r, dz, a = 1.45, 0.25, np.radians(19.5)
    syms, pos = [], []
    for k in range(6):
        th, s = np.radians(60 * k), (-1) ** k
        c = np.array([r * np.cos(th), r * np.sin(th), s * dz])
        pos += [
            c,
            c + np.array([0.0, 0.0, s * 1.09]),
            c + 1.09 * np.array([np.cos(th) * np.cos(a), np.sin(th) * np.cos(a), -s * np.sin(a)]),
        ]
        syms += ["C", "H", "H"]
    return syms, np.array(pos)


def adamantane():
    a, b, e = 0.89, 1.78, 0.62
    ch = [a * np.array(v) for v in ((1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1))]
    ch2, hs = [], []
    for axis in range(3):
        for s in (1.0, -1.0):
            c = np.zeros(3)
            c[axis] = s * b
            ch2.append(c)
            # the two H lie in the mirror plane that does not hold the carbon neighbours
            u, w = (axis + 1) % 3, (axis + 2) % 3
            for t in (1.0, -1.0):
                h = c.copy()
                h[axis] += s * e
                h[u] += t * e
                h[w] += -s * t * e
                hs.append(h)
    h_ch = [1.09 * v / np.linalg.norm(v) + v for v in ch]
    pos = ch + ch2 + h_ch + hs
    return ["C"] * 10 + ["H"] * 16, np.array(pos)


CASES = {
    "benzene": (benzene, "D6h", {"C": 1, "H": 1}),
    "toluene": (toluene, "Cs", {"C": 5, "H": 5}),
    "naphthalene": (naphthalene, "D2h", {"C": 3, "H": 2}),
    "cyclohexane chair": (cyclohexane_chair, "D3d", {"C": 1, "H": 2}),
    "adamantane": (adamantane, "Td", {"C": 2, "H": 2}),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_environment_counts(name):
    build, group, expected = CASES[name]
    symbols, pos = build()
    a = gt.analyze(symbols, pos @ random_rotation(np.random.default_rng(len(name))).T)
    assert a.point_group == group
    assert a.environments == expected
    # every set holds atoms of one element, and the sets cover all atoms once
    sets = a.environment_sets
    flat = sorted(i for lists in sets.values() for s in lists for i in s)
    assert flat == list(range(len(symbols)))
    assert all(symbols[i] == sym for sym, lists in sets.items() for s in lists for i in s)


def test_c60_has_one_carbon_environment():
    a = gt.analyze(c60())
    assert a.point_group == "Ih" and a.environments == {"C": 1}


def test_isotopes_are_their_own_environments():
    # CH2D2 (C2v): the two H are one set, the two D another (common practice)
    pos = [
        [0, 0, 0],
        [0.63, 0.63, 0.63],
        [-0.63, -0.63, 0.63],
        [-0.63, 0.63, -0.63],
        [0.63, -0.63, -0.63],
    ]
    a = gt.analyze(["C", "H", "H", "D", "D"], pos)
    assert a.environments == {"C": 1, "H": 1, "D": 1}


def test_json_and_text_report_name_the_sets():
    a = gt.analyze(*naphthalene())
    row = json.loads(json.dumps(a.to_dict()))
    assert row["environments"] == {"C": 3, "H": 2}
    line = a.report(worked=False).splitlines()[-1]
    assert line.startswith("  environments: C 3 (") and "atoms numbered from 1" in line
    # the two carbons shared by the rings (atoms 9 and 10) are one set of their own
    assert "9,10" in line


@pytest.mark.parametrize(
    "group", ["C2v", "C3v", "D3h", "D6h", "Td", "Oh", "Ih", "S6", "C5h", "D4d", "T", "Th"]
)
def test_orbits_of_the_generators_are_those_of_every_operation(group):
    # Orbits under a group are those under any generating set (common practice): the core
    # unions the generators' permutations only, and must find what every verified
    # permutation gives. Seeds in general position give orbits of full size; the origin and a
    # point on an axis give the smaller ones.
    from gammatrace import _core
    from gammatrace.io.builders import orbit_structure
    from gammatrace.tables import get_table

    rng = np.random.default_rng(7)
    general = [[1.13, 0.37, 0.71], [0.31, 2.62, -0.58], [-1.83, 0.61, 2.37]]
    seeds = np.r_[general, [[0.0, 0.0, 0.0], [0.0, 0.0, 1.7]]]
    s = orbit_structure(get_table(group).operations, seeds, np.array([6, 6, 1, 8, 7]))
    a = gt.analyze(s.numbers, s.positions @ random_rotation(rng).T)
    assert a.point_group == group
    sym = a.symmetry
    assert sym.all_verified and 0 < len(sym.generator_rows) < sym.order
    every = _core.orbits(sym.n_atoms, sym.generator_permutations)
    assert np.array_equal(
        _core.orbits(sym.n_atoms, sym.generator_permutations, sym.generator_rows), every
    )
    # and the orbits are those the seeds were built from: one set per seed (five)
    assert every.max() + 1 == 5
