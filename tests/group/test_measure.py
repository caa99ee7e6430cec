"""Continuous symmetry measures and near symmetry (shared/INTERFACE.md, "Near symmetry").

The measure is S(G) = 100 · min_Q Σ|P_i − Q_i|² / Σ|P_i − P₀|² (Zabrodsky, Peleg and Avnir,
J. Am. Chem. Soc. 1992, 114, 7843; size normalisation as in Pinsky and Avnir, Inorg. Chem. 1998,
37, 5575 — from memory), with the atom assignment detection found. The closed forms below are
worked out in each test from that definition: with the assignment fixed, the nearest symmetric
structure is the group average of the images.
"""

from __future__ import annotations

import math

import gammatrace as gt
import numpy as np
import pytest
from conftest import octahedral, random_rotation
from gammatrace.group.chirality import tolerance_ladder
from gammatrace.group.irreps import _orthonormal_frame
from gammatrace.group.measure import EXTENDED_BOUND, continuous_measure
from gammatrace.io.builders import c60
from gammatrace.tables._ops import rotation


def benzene(noise: float = 0.0, seed: int = 7):
    # ring C–C 1.39 Å, C–H 1.08 Å (common practice; planar D6h)
    ang = np.arange(6) * np.pi / 3
    ring = np.c_[np.cos(ang), np.sin(ang), np.zeros(6)]
    pos = np.r_[1.39 * ring, 2.47 * ring]
    if noise:
        pos = pos + np.random.default_rng(seed).normal(0.0, noise, pos.shape)
    return ["C"] * 6 + ["H"] * 6, pos


def exact_operations(sym):
    """The detected group's canonical operations written in the input frame."""
    frame = _orthonormal_frame(sym.frame)
    canon = np.asarray(sym.table.operations)[sym.canonical_index]
    return np.einsum("ai,kab,bj->kij", frame, canon, frame)


# ------------------------------------------------------------------ exact structures: 0


@pytest.mark.parametrize(
    ("build", "group", "subgroup"),
    [
        (benzene, "D6h", "C2v"),
        (lambda: octahedral("S", "F", 1.56), "Oh", "D4h"),
        (lambda: c60(), "Ih", "D5d"),
    ],
)
def test_exact_structures_measure_zero(build, group, subgroup):
    # S(G) = 0 exactly when the structure is G-symmetric (Zabrodsky, Peleg & Avnir 1992)
    built = build()
    a = gt.analyze(*built) if isinstance(built, tuple) else gt.analyze(built)
    assert a.point_group == group
    assert a.near_symmetry() == []  # nothing higher within 10 × the tolerance
    for name in (group, subgroup):
        r = a.symmetry_measure(name)
        assert r.group == name and r.tolerance == a.tol and r.found_at == a.tol
        assert 0.0 <= r.measure < 1e-20
    cm = a.chirality_measure
    assert cm is not None and cm.measure < 1e-20 and cm.tolerance == a.tol


# ------------------------------------------------------------------ closed forms


def test_rectangle_against_the_square_groups():
    # Four like atoms at (±a/2, ±b/2, 0). C4 about z sends corner 1 (a/2, b/2) to corner 2
    # (−a/2, b/2) and so on round the rectangle; the group average of corner 1 is
    #   (1/4)[(a/2, b/2) + (b/2, a/2) + (a/2, b/2) + (b/2, a/2)] = ((a+b)/4, (a+b)/4):
    # a square of side s = (a+b)/2, which is already planar D4h. Each corner is off by
    # ((a−b)/4, (b−a)/4), so Σ|P − Q|² = 4 (a−b)²/8 = (a−b)²/2, and Σ|P − P₀|² = a² + b²:
    #   S(C4) = S(D4h) = 100 (a−b)² / (2 (a² + b²))                      (derived here)
    a_, b_ = 2.0, 2.2
    pos = np.array([[1, 1, 0], [-1, 1, 0], [-1, -1, 0], [1, -1, 0]]) * [a_ / 2, b_ / 2, 0]
    expected = 100 * (a_ - b_) ** 2 / (2 * (a_**2 + b_**2))
    an = gt.analyze(["Na"] * 4, pos, tol=0.02)
    assert an.point_group == "D2h"
    near = {r.group: r for r in an.near_symmetry()}
    assert "D4h" in near
    assert near["D4h"].measure == pytest.approx(expected, rel=1e-9)
    assert an.symmetry_measure("C4").measure == pytest.approx(expected, rel=1e-9)
    # At 0.01 Å the square is beyond 10 × the tolerance (its C4 moves corners by
    # |a − b|/√2 ≈ 0.14 Å): tolerance null, the measure still found on the longer search.
    far = gt.analyze(["Na"] * 4, pos, tol=0.01).symmetry_measure("D4h")
    assert far.tolerance is None and 0.1 < far.found_at <= EXTENDED_BOUND
    assert far.measure == pytest.approx(expected, rel=1e-9)
    assert round(expected, 6) == 0.226244  # the number quoted in the report


def test_isosceles_triangle_against_c3_and_d3h():
    # Vertices as complex numbers p1 = 2d·i, p2 = −w − d·i, p3 = w − d·i (centroid 0). With
    # ω = e^{2πi/3}, p_k = A ω^{k−1} + B ω^{−(k−1)}, A = (p1 + ω²p2 + ωp3)/3 = i(d + w/√3),
    # B = (p1 + ωp2 + ω²p3)/3 = i(d − w/√3). The C3 average keeps A ω^{k−1} (an equilateral
    # triangle, also D3h), so Σ|P − Q|² = 3|B|², Σ|P|² = 3(|A|² + |B|²):
    #   S(C3) = S(D3h) = 100 (d − w/√3)² / ((d + w/√3)² + (d − w/√3)²)  (derived here)
    w, d = 1.0, 0.62  # equilateral at d = w/√3 ≈ 0.577
    pos = np.array([[0, 2 * d, 0], [-w, -d, 0], [w, -d, 0]])
    s = w / math.sqrt(3)
    expected = 100 * (d - s) ** 2 / ((d + s) ** 2 + (d - s) ** 2)
    a = gt.analyze(["Na"] * 3, pos, tol=0.02)
    assert a.point_group == "C2v"
    near = {r.group: r for r in a.near_symmetry()}
    assert near["D3h"].measure == pytest.approx(expected, rel=1e-9)
    assert a.symmetry_measure("C3").measure == pytest.approx(expected, rel=1e-9)
    assert round(expected, 5) == 0.12672


def test_two_pairs_against_ci():
    # Two pairs of like atoms, ±A and ±B (exactly C2h: all four in one plane), then A moved by
    # δ. Ci pairs A↔−A, B↔−B about the centroid c = δ/4; a pair p, q (relative to c) keeps
    # ±(p − q)/2 and is off by |p + q|²/2 in all. p + q = δ − 2c = δ/2 for the A pair and
    # −2c = −δ/2 for the B pair, so Σ|P − Q|² = |δ|²/4; Σ|P − c|² = 2|A|² + 2|B|² + 2A·δ
    # + |δ|² − 4|c|². Ci has no orientation to choose, so this is the measure itself:
    #   S(Ci) = 100 (|δ|²/4) / (2|A|² + 2|B|² + 2A·δ + 3|δ|²/4)           (derived here)
    va, vb = np.array([1.0, 0.3, 0.2]), np.array([0.2, 1.2, -0.4])
    normal = np.cross(va, vb) / np.linalg.norm(np.cross(va, vb))
    delta = 0.04 * normal
    pos = np.array([va + delta, -va, vb, -vb])
    expected = (
        100
        * (delta @ delta / 4)
        / (2 * va @ va + 2 * vb @ vb + 2 * va @ delta + 0.75 * delta @ delta)
    )
    a = gt.analyze(["O", "O", "N", "N"], pos)
    r = a.symmetry_measure("Ci")
    assert a.point_group != "C2h" and r.tolerance is not None
    assert r.measure == pytest.approx(expected, rel=1e-9)
    # the chirality measure is the smallest over the improper groups, Ci among them
    cm = a.chirality_measure
    assert cm is not None and cm.measure <= r.measure * (1 + 1e-12)


def test_bent_triatomic_against_the_linear_groups():
    # C at (0, h), O at (±x, 0). The nearest D∞h structure under this assignment puts all three
    # on the line through the centroid (y₀ = h/3): C off by 2h/3, each O by h/3, so
    # Σ|P − Q|² = 2h²/3 and Σ|P − P₀|² = 2x² + 2h²/3:
    #   S(D∞h) = S(C∞v) = 100 (2h²/3) / (2x² + 2h²/3)                       (derived here)
    x, h = 1.16, 0.02
    a = gt.analyze(["C", "O", "O"], [[0, h, 0], [-x, 0, 0], [x, 0, 0]])
    expected = 100 * (2 * h * h / 3) / (2 * x * x + 2 * h * h / 3)
    assert a.point_group == "C2v"
    near = {r.group: r for r in a.near_symmetry()}
    assert near["D∞h"].measure == pytest.approx(expected, rel=1e-9)
    assert a.symmetry_measure("C∞v").measure == pytest.approx(expected, rel=1e-9)


def squashed_octahedron(eps: float, d: float = 1.56):
    symbols, pos = octahedral("S", "F", d)  # S, then ligands on +x, +y, +z, −x, −y, −z
    pos[[3, 6], 2] *= 1 - eps
    return symbols, pos


def test_squashed_octahedron_grows_with_the_distortion():
    # Ligands on ±x, ±y at d and on ±z at d(1 − ε). The Oh average puts all six at the mean
    # radius d(1 − ε/3): four are off by dε/3, two by 2dε/3, so Σ|P − Q|² = (4/3) d² ε², and
    # Σ|P − P₀|² = 4d² + 2d²(1 − ε)²:
    #   S(Oh) = 100 (4ε²/3) / (4 + 2(1 − ε)²)                               (derived here)
    values = []
    for eps in (0.01, 0.02, 0.04, 0.08, 0.16):
        symbols, pos = squashed_octahedron(eps)
        a = gt.analyze(symbols, pos)
        assert a.point_group == "D4h"
        r = a.symmetry_measure("Oh")
        assert r.measure == pytest.approx(100 * (4 * eps**2 / 3) / (4 + 2 * (1 - eps) ** 2))
        values.append(r.measure)
    assert all(lo < hi for lo, hi in zip(values, values[1:]))


# ------------------------------------------------------------------ invariance


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_measure_is_invariant_under_rotation_translation_renumbering_and_scale(seed):
    # S is defined on the shape alone (Zabrodsky, Peleg & Avnir 1992: size-normalised)
    symbols, pos = benzene(0.01, seed=5)
    base = gt.analyze(symbols, pos)
    rng = np.random.default_rng(seed)
    q, perm, scale = random_rotation(rng), rng.permutation(12), 1.0 + seed / 3
    moved = (pos @ q.T + rng.normal(size=3) * 5.0) * scale
    other = gt.analyze([symbols[i] for i in perm], moved[perm], tol=base.tol * scale)
    assert other.symmetry_measure("D6h").measure == pytest.approx(
        base.symmetry_measure("D6h").measure, rel=1e-8
    )
    ours = [(r.group, r.measure) for r in base.near_symmetry()]
    theirs = [(r.group, r.measure) for r in other.near_symmetry()]
    assert [g for g, _ in ours] == [g for g, _ in theirs]
    assert np.allclose([m for _, m in ours], [m for _, m in theirs], rtol=1e-8)


# ------------------------------------------------------------------ noisy structures


@pytest.mark.parametrize("seed", [3, 5, 11])
def test_noisy_benzene_is_near_d6h_with_a_small_measure(seed):
    # The ideal benzene is D6h-symmetric with the assignment detection finds, so the minimum
    # can only be lower than its distance: S ≤ 100 Σ|noise|² / Σ|P − P₀|² (the definition).
    symbols, pos = benzene(0.01, seed)
    ideal = benzene()[1]
    a = gt.analyze(symbols, pos)
    assert a.order < 24
    near = {r.group: r for r in a.near_symmetry()}
    assert "D6h" in near
    r = near["D6h"]
    centred = pos - pos.mean(axis=0)
    bound = 100 * np.sum((pos - ideal) ** 2) / np.sum(centred**2)
    assert 0.0 < r.measure <= bound < 0.05
    assert a.tol < r.tolerance <= 10 * a.tol and r.found_at == r.tolerance
    # the nearest structure is D6h itself, within rounding
    assert gt.analyze(symbols, r.nearest, tol=1e-6).point_group == "D6h"
    # tolerances come from the ladder of improper_within
    assert r.tolerance in tolerance_ladder(a.tol, 10 * a.tol)


def test_orientation_is_optimised():
    # Operations turned away from the best orientation give a larger measure when used as
    # they are; the alternating projection / Kabsch fit brings them back (module doc).
    symbols, pos = benzene(0.01, seed=5)
    sym = gt.analyze(symbols, pos, tol=0.05).symmetry
    assert sym.point_group == "D6h"
    ops = exact_operations(sym)
    best = continuous_measure(pos, ops, sym.permutations).value
    for deg in (1.0, 10.0):
        u = rotation([1.0, 0.3, 0.2], math.radians(deg))
        turned = u @ ops @ u.T
        fixed = continuous_measure(pos, turned, sym.permutations, optimise=False)
        free = continuous_measure(pos, turned, sym.permutations)
        assert fixed.value > 2 * best
        assert free.value == pytest.approx(best, rel=1e-6) and free.steps >= 1


def test_permutations_that_do_not_compose_give_no_measure():
    # E must fix every atom: an assignment that swaps two atoms under E is no group action, and
    # the group average is then not symmetric (so it bounds nothing)
    pos = np.random.default_rng(4).normal(size=(4, 3))
    ops = np.stack([np.eye(3), np.diag([-1.0, -1.0, 1.0])])
    good = np.array([[0, 1, 2, 3], [1, 0, 3, 2]])
    bad = np.array([[1, 0, 2, 3], [0, 1, 2, 3]])
    assert 0.0 < continuous_measure(pos, ops, good).value < 100.0
    assert continuous_measure(pos, ops, bad) is None


# ------------------------------------------------------------------ chirality measure


def test_chirality_measure_is_the_smallest_improper_measure():
    # The continuous chirality measure is the measure against the nearest improper group
    # (Zabrodsky and Avnir, J. Am. Chem. Soc. 1995, 117, 462 — from memory): here the minimum
    # over the Cs, Ci and S4 copies where an improper operation first holds.
    symbols, pos = benzene(0.02, seed=1)
    a = gt.analyze(symbols, pos)
    assert a.chiral
    cm = a.chirality_measure
    assert cm is not None and cm.group in ("Cs", "Ci", "S4")
    assert cm.tolerance == pytest.approx(a.improper_within, rel=0.3)
    named = [a.symmetry_measure(g) for g in ("Cs", "Ci", "S4")]
    same_step = [r.measure for r in named if r.found_at == cm.found_at]
    assert cm.measure == pytest.approx(min(same_step), rel=1e-12)
    assert 0.0 < cm.measure < 0.05


def test_a_stereocentre_has_no_improper_group_nearby():
    # CHFClBr: four different substituents, no mirror at any small tolerance (common practice)
    pos = [[0, 0, 0], [0.63, 0.63, 0.63], [-0.8, -0.8, 0.8], [-1.0, 1.0, -1.0], [1.1, -1.1, -1.1]]
    a = gt.analyze(["C", "H", "F", "Cl", "Br"], pos)
    assert a.chirality_measure is None
    r = a.symmetry_measure("Cs")
    assert r.tolerance is None and r.measure is None and r.searched_to == EXTENDED_BOUND


# ------------------------------------------------------------------ edge cases


def test_one_atom_and_linear_molecules():
    # one atom is every group's structure; an exact linear molecule has its subgroups exactly
    atom = gt.analyze(["Ar"], [[0.0, 0.0, 0.0]])
    assert atom.symmetry_measure("Oh").measure == 0.0
    ocs = gt.analyze(["O", "C", "S"], [[0, 0, -1.16], [0, 0, 0], [0, 0, 1.56]])
    assert ocs.point_group == "C∞v"
    for name in ("C4v", "Cs"):
        r = ocs.symmetry_measure(name)
        assert r.tolerance == ocs.tol and r.measure < 1e-20
    assert ocs.symmetry_measure("D∞h").measure is None  # O and S never swap


def test_bad_arguments():
    a = gt.analyze(*benzene())
    with pytest.raises(gt.errors.TableError):
        a.symmetry_measure("Q7")
    with pytest.raises(gt.errors.InputError):
        a.near_symmetry(0.5)
