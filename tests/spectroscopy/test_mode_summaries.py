"""Mode summaries from finite-difference Hessians with noise: the irreps of the modes found from
a Hessian are Γ_vib, in table order, with translations and rotations apart.

The Hessians are central second differences of analytic energies (tests/spectroscopy/
_fd_hessians.py) in random orientations, so they carry real finite-difference error; symmetric
random noise is added on top.
"""

from __future__ import annotations

import warnings
from functools import cache

import gammatrace as gt
import numpy as np
import pytest
from _fd_hessians import benzene_field, fd_hessian, lj13, planar_ammonia, sf6, symmetric_noise
from _force_field import benzene
from _symmetry_helpers import TABLES, closure
from conftest import random_rotation
from gammatrace.bases.matrices import representation_matrices
from gammatrace.errors import SymmetryBreakingWarning
from gammatrace.modes import (
    SYMMETRY_TOLERANCE,
    block_diagonalize,
    label_modes,
    symmetry_breaking,
)


def _benzene():
    pos, num, _, _ = benzene()
    return pos, num, benzene_field(pos)


MODELS = {"SF6": sf6, "C6H6": _benzene, "LJ13": lj13}
UNITS = {"SF6": "mdyn/angstrom", "C6H6": "mdyn/angstrom", "LJ13": "eV/angstrom2"}

PUBLISHED = {
    # Nakamoto, "Infrared and Raman Spectra of Inorganic and Coordination Compounds", octahedral
    # XY6 molecules (ν1 a1g, ν2 eg, ν3 ν4 f1u, ν5 f2g, ν6 f2u); also Herzberg (1945).
    "SF6": {"A1g": 1, "Eg": 1, "T2g": 1, "T1u": 2, "T2u": 1},
    # Herzberg, "Infrared and Raman Spectra of Polyatomic Molecules" (1945), benzene; Wilson,
    # Decius & Cross, "Molecular Vibrations" (1955), benzene (from memory; B1u/B2u with the
    # C2' axes through the atoms).
    "C6H6": {
        "A1g": 2,
        "A2g": 1,
        "B2g": 2,
        "E1g": 1,
        "E2g": 4,
        "A2u": 1,
        "B1u": 2,
        "B2u": 2,
        "E1u": 3,
        "E2u": 2,
    },
}

EXTERNAL = {
    # Cotton, "Chemical Applications of Group Theory", character tables (from memory):
    # (x, y, z) and (Rx, Ry, Rz) of Oh, D6h and Ih.
    "SF6": ({"T1u": 1}, {"T1g": 1}),
    "C6H6": ({"A2u": 1, "E1u": 1}, {"A2g": 1, "E1g": 1}),
    "LJ13": ({"T1u": 1}, {"T1g": 1}),
}


def lj13_gamma_vib_by_hand():
    """Γ_vib of a centred icosahedron by the reduction formula with the Ih table typed from
    Cotton (tests/_symmetry_helpers.py, from memory). Unshifted atoms per class (E, C5, C5²,
    C3, C2, i, S10, S10³, S6, σ): all 13; the centre and the two vertices on a C5 axis; the
    centre alone for C3, C2, i and the improper rotations; the centre and the four vertices in a
    mirror plane (common practice). Characters of (x, y, z): 1 + 2cos θ, −1 + 2cos θ."""
    table = TABLES["Ih"]
    unshifted = np.array([13, 3, 3, 1, 1, 1, 1, 1, 1, 5])
    angle = np.array([0, 72, 144, 120, 180, 180, 36, 108, 60, 0])
    proper = np.array([1, 1, 1, 1, 1, 0, 0, 0, 0, 0], dtype=bool)
    cos = np.cos(np.radians(angle))
    vec = np.where(proper, 1 + 2 * cos, -1 + 2 * cos)
    rot = np.where(proper, 1, -1) * vec
    return table.reduce(unshifted * vec - vec - rot)


@cache
def model(name, seed=3):
    pos, num, energy = MODELS[name]()
    q = random_rotation(np.random.default_rng(seed))
    p = pos @ q.T
    return p, num, fd_hessian(energy, p, h=0.01)


def table_order(point_group, irreps):
    labels = [ir.label for ir in gt.get_table(point_group).irreps]
    return [lab for lab in labels if lab in irreps]


@pytest.mark.parametrize("noise", [0.0, 1e-4, 3e-3])
@pytest.mark.parametrize("name", list(MODELS))
def test_summary_of_noisy_finite_difference_hessians_is_the_counted_gamma_vib(name, noise):
    pos, num, hess = model(name)
    noisy = symmetric_noise(hess, noise, seed=11)
    res = gt.analyze(num, pos)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SymmetryBreakingWarning)
        labels = res.label_modes(noisy, unit=UNITS[name])
    counted = res.vibrations().irreps
    summary = labels.counts()
    assert summary == counted
    assert list(summary) == table_order(res.point_group, summary)  # table order, not frequency
    if name in PUBLISHED:
        assert summary == PUBLISHED[name]
    else:
        assert summary == lj13_gamma_vib_by_hand()
    trans, rot = EXTERNAL[name]
    assert labels.gamma_trans == trans and labels.gamma_rot == rot
    # 3N − 6 vibrations numbered before the six rigid motions; sets of d partners of one irrep
    n_vib = 3 * len(num) - 6
    assert labels.kinds[:n_vib] == ["vibration"] * n_vib
    assert not labels.external[:n_vib].any() and labels.external[n_vib:].all()
    dims = {ir.label: ir.dim for ir in gt.get_table(res.point_group).irreps}
    assert all(len(s.modes) == dims[s.irrep] for s in labels.sets)
    assert sum(len(s.modes) for s in labels.sets if s.kind == "vibration") == n_vib
    # vibrations by ascending eigenvalue of the symmetric part
    vib_sets = [s.value for s in labels.sets if s.kind == "vibration"]
    assert vib_sets == sorted(vib_sets)


@pytest.mark.parametrize("name", list(MODELS))
def test_finite_difference_splitting_of_degenerate_sets_does_not_split_the_count(name):
    # Before: sets cut at 1e-6 max|λ| counted a pair split by 0.01 cm⁻¹ twice. The
    # finite-difference Hessian splits degenerate sets (seen in the per-mode frequencies),
    # and each set still counts once.
    pos, num, hess = model(name)
    res = gt.analyze(num, pos)
    labels = res.label_modes(hess, unit=UNITS[name])
    degenerate = [s for s in labels.sets if len(s.modes) > 1 and s.kind == "vibration"]
    assert max(s.splitting for s in degenerate) > 1e-4  # cm⁻¹: really split
    assert max(s.splitting for s in degenerate) < 2.0
    assert labels.counts() == res.vibrations().irreps


@pytest.mark.parametrize("name", list(MODELS))
def test_finite_difference_hessians_pass_the_symmetry_threshold(name):
    # Measured: steps 0.005 Å break the symmetry by up to 6e-5, 0.01 Å by up to 4e-4
    # (module notes of gammatrace.modes); the warning threshold is above both.
    pos, num, hess = model(name)
    res = gt.analyze(num, pos)
    eps = symmetry_breaking(res.symmetry, hess)
    assert 1e-7 < eps < SYMMETRY_TOLERANCE  # finite differences do break it, a little
    with warnings.catch_warnings():
        warnings.simplefilter("error", SymmetryBreakingWarning)
        res.label_modes(hess, unit=UNITS[name])
    with pytest.warns(SymmetryBreakingWarning, match=r"‖H − P\(H\)‖/‖H‖ = 0\.0"):
        res.label_modes(symmetric_noise(hess, 0.02, seed=5), unit=UNITS[name])


def test_symmetry_breaking_is_the_distance_to_the_group_average():
    # P(H) = (1/h) Σ_R Γ(R) H Γ(R)ᵀ (common practice), summed here over the representation
    # matrices; the measure must equal ‖H − P(H)‖/‖H‖.
    pos, num, hess = model("SF6")
    noisy = symmetric_noise(hess, 1e-3, seed=2)
    res = gt.analyze(num, pos)
    mats = [g.toarray() for g in representation_matrices(res.symmetry, "cartesian")]
    avg = sum(g @ noisy @ g.T for g in mats) / len(mats)
    direct = np.linalg.norm(noisy - avg) / np.linalg.norm(noisy)
    assert np.isclose(symmetry_breaking(res.symmetry, noisy), direct, rtol=1e-8)
    assert symmetry_breaking(res.symmetry, avg) < 1e-13


def _rigid_motions(pos, masses):
    """Mass-weighted translations and rotations about the centre of mass (common practice)."""
    com = (masses[:, None] * pos).sum(0) / masses.sum()
    r = pos - com
    vecs = []
    for a in range(3):
        t = np.zeros_like(pos)
        t[:, a] = 1.0
        vecs.append(t)
        vecs.append(np.cross(np.eye(3)[a], r))
    v = np.stack([x.ravel() for x in vecs], 1) * np.sqrt(np.repeat(masses, 3))[:, None]
    q, _ = np.linalg.qr(v)
    return q


@pytest.mark.parametrize("name", list(MODELS))
def test_frequencies_are_those_of_the_hessian_with_rigid_motions_projected_out(name):
    pos, num, hess = model(name)
    noisy = symmetric_noise(hess, 3e-4, seed=4)
    res = gt.analyze(num, pos)
    labels = res.label_modes(noisy, unit=UNITS[name])
    m = np.repeat(res.masses, 3)
    hw = noisy / np.sqrt(np.outer(m, m))
    q = _rigid_motions(pos, res.masses)
    proj = np.eye(len(m)) - q @ q.T
    spectrum = np.linalg.eigvalsh(proj @ hw @ proj)
    # six zeros for the rigid motions; the rest are the vibrations' eigenvalues
    zeros = np.argsort(np.abs(spectrum))[:6]
    expected = np.sort(np.delete(spectrum, zeros))
    got = np.sort(labels.eigenvalues[~labels.external])
    assert np.allclose(got, expected, rtol=1e-9, atol=1e-12 * np.abs(expected).max())


def test_noise_lowers_purity_but_not_the_labels_of_the_symmetric_part():
    pos, num, hess = model("SF6")
    res = gt.analyze(num, pos)
    clean = res.label_modes(hess)
    assert clean.purity[~clean.external].min() > 0.999
    with pytest.warns(SymmetryBreakingWarning):
        noisy = res.label_modes(symmetric_noise(hess, 0.02, seed=8))
    assert noisy.purity.min() < 0.99
    assert noisy.irreps == clean.irreps


def test_planar_ammonia_has_one_imaginary_a2_double_prime_mode():
    # The planar (D3h) inversion barrier top of NH3: the umbrella mode, A2'', is imaginary
    # (Herzberg 1945, the inversion doubling of ν2; from memory).
    pos, num, energy = planar_ammonia()
    hess = fd_hessian(energy, pos)
    res = gt.analyze(num, pos)
    assert res.point_group == "D3h"
    labels = res.label_modes(hess)
    imag = np.nonzero(labels.imaginary & ~labels.external)[0]
    assert len(imag) == 1 and labels.irreps[imag[0]] == "A2''"
    assert labels.frequencies[imag[0]] < 0
    assert imag[0] == 0  # the most negative eigenvalue comes first
    assert labels.counts() == res.vibrations().irreps
    (a2,) = [s for s in labels.sets if s.irrep == "A2''" and s.kind == "vibration"]
    assert a2.value < 0 and a2.frequency < 0


def test_blocks_of_a_noisy_hessian_report_the_first_order_splitting():
    pos, num, hess = model("C6H6")
    res = gt.analyze(num, pos)
    exact = block_diagonalize(res.symmetry, hess, masses=res.masses)
    assert 0 < exact.max_splitting < 1e-3 * np.abs(exact.all_eigenvalues()).max()
    # the block eigenvalues are those of the group-averaged Hessian
    mats = [g.toarray() for g in representation_matrices(res.symmetry, "cartesian")]
    avg = sum(g @ hess @ g.T for g in mats) / len(mats)
    m = np.repeat(res.masses, 3)
    full = np.linalg.eigvalsh(avg / np.sqrt(np.outer(m, m)))
    assert np.allclose(exact.all_eigenvalues(), full, atol=1e-9 * np.abs(full).max())


def test_mass_weighted_hessian_needs_masses_for_the_rigid_motions():
    pos, num, hess = model("SF6")
    res = gt.analyze(num, pos)
    with pytest.raises(gt.InputError, match="masses"):
        label_modes(res.symmetry, hessian=hess, mass_weighted=True)


def test_linear_molecule_has_two_rotations_and_3n_minus_5_modes():
    # CO2: Γ_vib = Σg+ + Σu+ + Πu, Γ_rot = Πg (Herzberg 1945; from memory). Morse C–O and O–O
    # pairs plus a harmonic bend (the carbon's displacement from the oxygens' midpoint).
    from _fd_hessians import morse

    pos = (
        np.array([[0, 0, 0], [0, 0, 1.16], [0, 0, -1.16]])
        @ random_rotation(np.random.default_rng(4)).T
    )
    num = np.array([6, 8, 8])
    energy = morse([(0, 1, 1.0, 2.0, 1.16), (0, 2, 1.0, 2.0, 1.16), (1, 2, 0.1, 1.5, 2.32)])
    axis = pos[1] / np.linalg.norm(pos[1])
    perp = np.linalg.svd(np.eye(3) - np.outer(axis, axis))[0][:, :2].T
    bend = np.hstack([perp, -0.5 * perp, -0.5 * perp])
    hess = fd_hessian(energy, pos) + 0.5 * bend.T @ bend
    res = gt.analyze(num, pos)
    labels = res.label_modes(hess)
    assert labels.counts() == {"Σg+": 1, "Σu+": 1, "Πu": 1} == res.vibrations().irreps
    assert labels.gamma_rot == {"Πg": 1} and labels.gamma_trans == {"Σu+": 1, "Πu": 1}
    assert labels.kinds.count("vibration") == 4 and len(labels.irreps) == 9


def _orbit_structure(generators, seeds):
    ops = closure(generators)
    pos, num = [], []
    for z, point in seeds:
        imgs = []
        for r in ops:
            q = r @ np.asarray(point, dtype=float)
            if not any(np.linalg.norm(q - o) < 1e-6 for o in imgs):
                imgs.append(q)
        pos += imgs
        num += [z] * len(imgs)
    return np.array(pos), np.array(num)


def _rot(axis, deg):
    from scipy.spatial.transform import Rotation

    axis = np.asarray(axis, dtype=float)
    return Rotation.from_rotvec(np.radians(deg) * axis / np.linalg.norm(axis)).as_matrix()


@pytest.mark.parametrize(
    ("group", "generators"),
    [
        ("C3", [_rot((0, 0, 1), 120)]),
        ("S4", [np.diag([1.0, 1.0, -1.0]) @ _rot((0, 0, 1), 90)]),
        ("C5h", [_rot((0, 0, 1), 72), np.diag([1.0, 1.0, -1.0])]),
        ("T", [_rot((0, 0, 1), 180), _rot((1, 1, 1), 120)]),
    ],
)
def test_groups_with_complex_pairs_give_eigenvectors_of_the_projected_hessian(group, generators):
    # Complex-conjugate pairs shown as one real E: the block is Hermitian, each eigenvalue a
    # set of two partners. A random group-averaged Hessian: every vibration must be an
    # eigenvector of it (rigid motions projected out), every set closed under the group.
    pos, num = _orbit_structure(
        generators, [(6, (1.1, 0.3, 0.45)), (1, (0.4, -1.3, -0.9)), (8, (0.0, 0.0, 0.0))]
    )
    res = gt.analyze(num, pos, tol=1e-4)
    assert res.point_group == group
    assert 2.0 in gt.get_table(group).norms  # the table has a complex pair
    mats = [g.toarray() for g in representation_matrices(res.symmetry, "cartesian")]
    a = np.random.default_rng(0).standard_normal((3 * len(num),) * 2)
    hess = sum(g @ (a @ a.T) @ g.T for g in mats) / len(mats)
    labels = res.label_modes(hess)
    assert labels.counts() == res.vibrations().irreps
    m = np.repeat(res.masses, 3)
    hw = hess / np.sqrt(np.outer(m, m))
    ext = labels.vectors[labels.external]
    proj = np.eye(len(m)) - ext.T @ ext
    hp = proj @ hw @ proj
    for k in np.nonzero(~labels.external)[0]:
        v = labels.vectors[k]
        assert np.abs(hp @ v - labels.eigenvalues[k] * v).max() < 1e-9 * np.abs(hw).max()
    assert np.abs(labels.vectors @ labels.vectors.T - np.eye(len(m))).max() < 1e-10
    for s in labels.sets:
        v = labels.vectors[list(s.modes)]
        for g in mats:
            moved = v @ g.T
            assert np.abs(moved - (moved @ v.T) @ v).max() < 1e-9


def test_degeneracy_tolerance_is_deprecated_and_has_no_effect():
    pos, num, hess = model("SF6")
    res = gt.analyze(num, pos)
    plain = res.label_modes(hess)
    with pytest.warns(DeprecationWarning, match="degeneracy_tolerance has no effect"):
        old = res.label_modes(hess, degeneracy_tolerance=1e-12)
    assert old.counts() == plain.counts() and old.irreps == plain.irreps


def test_modes_command_draws_the_stick_spectrum(tmp_path):
    # SF6 (Nakamoto, octahedral XY6): the picture is written next to the summary
    from gammatrace.cli import main
    from gammatrace.io import Structure, write_xyz

    pos, num, energy = sf6()
    xyz, npy, out = tmp_path / "sf6.xyz", tmp_path / "h.npy", tmp_path / "pics"
    write_xyz([Structure(num, pos)], xyz)
    np.save(npy, fd_hessian(energy, pos))
    assert main(["modes", str(xyz), "--hessian", str(npy), "--draw", str(out)]) == 0
    png = out / "sf6_modes.png"
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 5000
