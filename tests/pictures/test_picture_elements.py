"""The elements behind the pictures: one representative per class, every class labelled once,
the axes' Hermann–Mauguin symbols, and the element counts of the polyhedral groups."""

from __future__ import annotations

from collections import Counter

import gammatrace as gt
import numpy as np
import pytest
from _picture_structures import benzene, carbon_dioxide, group_structure, one_atom
from gammatrace.io.builders import c60
from gammatrace.pictures import axis_lines, representative_elements, symmetry_elements

GROUPS = [
    "C2", "C3", "Cs", "Ci", "C2v", "C3v", "C4v", "C6v", "C2h", "C3h", "C4h", "S4", "S6",
    "S8", "D2", "D3", "D2h", "D3h", "D4h", "D5h", "D6h", "D2d", "D3d", "D4d", "T", "Td",
    "Th", "O", "Oh", "I", "Ih",
]  # fmt: skip


@pytest.mark.parametrize("group", GROUPS)
def test_every_non_identity_class_is_labelled_exactly_once(group):
    res = group_structure(group)
    reps = representative_elements(res)
    labels = [lab for r in reps for lab in r.labels]
    expected = [c.label for c in res.symmetry.classes if c.label != "E"]
    assert sorted(labels) == sorted(expected)
    # a drawn element is what its classes' operations fix: every operation of each class
    # listed on an axis turns about a line of that class, a plane's class is a mirror class
    sym = res.symmetry
    axes_std = sym.axis @ sym.frame.T
    for r in reps:
        for c in r.classes:
            ops = np.flatnonzero(sym.op_class == c)
            if r.kind == "axis":
                assert np.any(np.abs(np.abs(axes_std[ops] @ r.vector) - 1.0) < 1e-6)
            elif r.kind == "plane":
                assert not sym.proper[ops].any() and np.all(sym.angle[ops] < 1e-6)
            else:
                assert np.all(np.abs(sym.angle[ops] - 180.0) < 1e-6)


def test_c60_has_five_representatives_instead_of_31_axes_and_15_planes():
    res = gt.analyze(c60())
    reps = representative_elements(res)
    assert [r.kind for r in reps] == ["axis", "axis", "axis", "plane", "centre"]
    # Ih: 6 C5, 10 C3 and 15 C2 axes, 15 mirror planes (common practice)
    assert [r.count for r in reps] == [6, 10, 15, 15, 1]
    assert reps[0].labels[0] == "12C5" and "12S10" in reps[0].labels
    # all of them, as before
    el = symmetry_elements(res)
    assert len(el["axes"]) == 31 and len(el["planes"]) == 15 and el["inversion"]


def test_benzene_c2_prime_and_double_prime_are_separate_elements_on_their_own_planes():
    # D6h in the standard frame of DEVELOPERS.md: C2' through the atoms, σv containing the
    # C2' axes, σd the C2'' axes (common practice for benzene)
    res = benzene()
    reps = {r.text: r for r in representative_elements(res)}
    c2p, c2pp = reps["3C2'"], reps["3C2''"]
    assert abs(c2p.vector @ c2pp.vector) < np.cos(np.radians(25))  # different axes
    pos = (res.symmetry.positions - res.symmetry.center) @ res.symmetry.frame.T
    on_axis = np.linalg.norm(np.cross(pos, c2p.vector), axis=1) < 1e-6
    assert on_axis.sum() == 4  # two C and two H on the drawn C2'
    assert abs(reps["3σv"].vector @ c2p.vector) < 1e-6  # σv contains C2'
    assert abs(reps["3σd"].vector @ c2pp.vector) < 1e-6  # σd contains C2''
    assert reps["2C6, 2C3, C2, 2S6, 2S3"].vector @ [0, 0, 1] > 1 - 1e-9


def test_linear_molecule_shows_c_infinity_and_no_finite_stand_in():
    reps = representative_elements(carbon_dioxide())
    assert [r.text for r in reps] == ["C∞, S∞", "∞C2", "∞σv", "i"]
    assert reps[0].order == 0 and reps[1].count is None and reps[2].count is None
    assert all(len(r.others) == 0 for r in reps)


def test_single_atom_gets_only_its_centre():
    reps = representative_elements(one_atom())
    assert [(r.kind, r.text) for r in reps] == [("centre", "i")]


# Hermann–Mauguin symbols of the axes. Source: International Tables for Crystallography
# Vol. A, the point-group symbols m-3m, -43m, m-3, -42m, -6, -3m, -82m, -10m2, m-3-5
# (from memory).
AXIS_SYMBOLS = {
    "Oh": {"4/m": 3, "3̄": 4, "2/m": 6},
    "Td": {"4̄": 3, "3": 4},
    "Th": {"2/m": 3, "3̄": 4},
    "O": {"4": 3, "3": 4, "2": 6},
    "Ih": {"5̄": 6, "3̄": 10, "2/m": 15},
    "D2d": {"4̄": 1, "2": 2},
    "C3h": {"6̄": 1},
    "D3d": {"3̄": 1, "2/m": 3},
    "D4d": {"8̄": 1, "2": 4},
    "D5h": {"10̄": 1, "2": 5},
    "C2h": {"2/m": 1},
    "S4": {"4̄": 1},
    "S6": {"3̄": 1},
    "C4v": {"4": 1},
    "D6h": {"6/m": 1, "2/m": 6},
    "Ci": {},
    "Cs": {},
}


@pytest.mark.parametrize("group", sorted(AXIS_SYMBOLS))
def test_axis_symbols_follow_hermann_mauguin(group):
    lines = axis_lines(group_structure(group))
    assert Counter(line.symbol for line in lines) == Counter(AXIS_SYMBOLS[group])
