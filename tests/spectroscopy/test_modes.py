"""Tests of normal-mode labelling and block diagonalisation against textbook assignments."""

from __future__ import annotations

import numpy as np
import pytest
from _force_field import MASSES, ammonia, benzene, methane, water
from _symmetry_helpers import TABLES, random_rotation, symmetry_data
from gammatrace.errors import InputError, SymmetryBreakingWarning
from gammatrace.modes import (
    HESSIAN_UNITS,
    block_diagonalize,
    frequencies_from_eigenvalues,
    label_modes,
)

MOLECULES = {
    "H2O": ("C2v", water),
    "NH3": ("C3v", ammonia),
    "CH4": ("Td", methane),
    "C6H6": ("D6h", benzene),
}

PUBLISHED = {
    # Source: Herzberg, "Infrared and Raman Spectra of Polyatomic Molecules" (1945); Nakamoto,
    # "Infrared and Raman Spectra of Inorganic and Coordination Compounds" (water in yz).
    "H2O": {"A1": 2, "B2": 1},
    # Source: Herzberg (1945); Nakamoto.
    "NH3": {"A1": 2, "E": 2},
    # Source: Herzberg (1945); Nakamoto.
    "CH4": {"A1": 1, "E": 1, "T2": 2},
    # Source: Herzberg (1945); Wilson (1934) numbering, C2' through atoms.
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


def molecule(name, seed=5, project_table=False):
    group, builder = MOLECULES[name]
    pos, num, hess, terms = builder()
    q = random_rotation(seed)
    if project_table:
        from gammatrace.tables import get_table

        table = get_table(group)
    else:
        table = TABLES[group]
    sym = symmetry_data(table, pos, num, rotation=q, shift=(0.4, -1.0, 2.0))
    big = np.kron(np.eye(len(num)), q)
    masses = np.array([MASSES[z] for z in num])
    return sym, big @ hess @ big.T, masses, [(big @ row, k) for row, k in terms]


@pytest.mark.parametrize("project_table", [False, True])
@pytest.mark.parametrize("name", list(MOLECULES))
def test_vibrations_match_published_assignments(name, project_table):
    sym, hess, masses, _ = molecule(name, project_table=project_table)
    labels = label_modes(sym, hessian=hess, masses=masses)
    assert labels.counts() == PUBLISHED[name]
    assert labels.purity.min() > 1 - 1e-9
    assert int(labels.external.sum()) == 6
    assert np.all(np.abs(labels.frequencies[labels.external]) < 1e-3)
    assert labels.symmetry_breaking < 1e-12
    # every degenerate set has the dimension of its irrep
    dims = {ir.label: ir.dim for ir in sym.table.irreps}
    assert all(len(s.modes) == dims[s.irrep] for s in labels.sets)


def test_water_bend_and_symmetric_stretch_are_a1_antisymmetric_stretch_b2():
    # Source: Herzberg (1945): ν1 (sym. stretch) a1, ν2 (bend) a1, ν3 (antisym. stretch) b2.
    sym, hess, masses, terms = molecule("H2O")
    labels = label_modes(sym, hessian=hess, masses=masses)
    r1, r2 = terms[0][0], terms[1][0]
    vib = np.nonzero(~labels.external)[0]
    sqrt_m = np.sqrt(np.repeat(masses, 3))
    by_label = {}
    for k in vib:
        cart = labels.vectors[k] / sqrt_m  # Cartesian displacement of a mass-weighted mode
        by_label.setdefault(labels.irreps[k], []).append(
            (labels.frequencies[k], r1 @ cart, r2 @ cart)
        )
    ((_, a, b),) = by_label["B2"]
    assert np.isclose(a, -b, atol=1e-9) and abs(a) > 1e-3  # bonds stretch in antiphase
    (_, a1, b1), (_, a2, b2) = sorted(by_label["A1"])  # bend first, then stretch
    assert np.isclose(a1, b1) and np.isclose(a2, b2)  # in phase
    assert abs(a1) < abs(a2)  # the lower A1 mode is the bend, the upper the stretch


@pytest.mark.parametrize("name", ["NH3", "C6H6"])
def test_block_eigenvalues_equal_full_hessian_eigenvalues(name):
    sym, hess, masses, _ = molecule(name)
    blocks = block_diagonalize(sym, hess, masses=masses)
    mw = hess / np.sqrt(np.outer(np.repeat(masses, 3), np.repeat(masses, 3)))
    full = np.linalg.eigvalsh(mw)
    assert np.abs(blocks.all_eigenvalues() - full).max() < 1e-10 * np.abs(full).max()
    assert blocks.max_splitting < 1e-10
    # each block mode is an eigenvector of the full matrix
    for lab, modes in blocks.modes.items():
        for vals, vecs in zip(blocks.eigenvalues[lab], modes):
            assert np.abs(vecs @ mw - vals * vecs).max() < 1e-9


def test_labels_from_mode_vectors_and_frequencies_match_hessian_labels():
    sym, hess, masses, _ = molecule("CH4")
    from_h = label_modes(sym, hessian=hess, masses=masses)
    order = np.random.default_rng(1).permutation(len(from_h.irreps))
    from_v = label_modes(
        sym,
        modes=from_h.vectors[order],
        frequencies=from_h.frequencies[order],
        mass_weighted=True,
        masses=masses,
    )
    back = np.argsort(order)
    vib = ~from_h.external
    # vibrations keep their labels one by one; the six-fold zero set (T1 + T2, translations
    # and rotations) may come back rotated within itself
    assert [from_v.irreps[k] for k in back[vib]] == [from_h.irreps[k] for k in np.nonzero(vib)[0]]
    assert from_v.counts() == PUBLISHED["CH4"]
    assert from_v.counts(vibrations_only=False) == from_h.counts(vibrations_only=False)


def test_mode_vectors_without_frequencies_are_grouped_by_label():
    sym, hess, masses, _ = molecule("NH3")
    from_h = label_modes(sym, hessian=hess, masses=masses)
    from_v = label_modes(sym, modes=from_h.vectors, masses=masses, mass_weighted=True)
    assert from_v.irreps == from_h.irreps
    assert from_v.counts() == PUBLISHED["NH3"]


def test_symmetry_breaking_hessian_warns_and_lowers_purity():
    sym, hess, masses, _ = molecule("NH3")
    rng = np.random.default_rng(4)
    noise = rng.standard_normal(hess.shape)
    broken = hess + 0.05 * (noise + noise.T)
    with pytest.warns(SymmetryBreakingWarning, match="breaks"):
        labels = label_modes(sym, hessian=broken, masses=masses)
    assert labels.symmetry_breaking > 1e-3
    assert labels.purity.min() < 0.999
    with pytest.warns(SymmetryBreakingWarning):
        block_diagonalize(sym, broken, masses=masses)


def test_frequency_unit_conversion_matches_harmonic_oscillator():
    # ν̃ = (1/2πc) sqrt(k/μ) (common practice), SI constants CODATA 2018
    k_mdyn, mu = 5.0, 0.5
    expect = np.sqrt(k_mdyn * 100.0 / (mu * 1.66053906660e-27)) / (2 * np.pi * 2.99792458e10)
    got = frequencies_from_eigenvalues([k_mdyn / mu])[0]
    assert np.isclose(got, expect, rtol=1e-12)
    h2m = HESSIAN_UNITS["hartree/bohr2"]
    assert np.isclose(h2m, 15.569, rtol=1e-4)  # 1 E_h/a0² = 1556.9 N/m (CODATA 2018)
    assert frequencies_from_eigenvalues([-1.0])[0] < 0


def test_hessian_unit_does_not_change_frequencies():
    # A Hessian in hartree/bohr² gives the same frequencies as the same one in mdyn/Å.
    sym, hess, masses, _ = molecule("H2O")
    a = label_modes(sym, hessian=hess, masses=masses).frequencies
    b = label_modes(
        sym, hessian=hess / HESSIAN_UNITS["hartree/bohr2"], masses=masses, unit="hartree/bohr2"
    ).frequencies
    assert np.allclose(a, b, rtol=1e-10, atol=1e-3)  # zero modes are rounding noise


def test_bad_hessians_and_modes_raise_input_error():
    sym, hess, _, _ = molecule("H2O")
    with pytest.raises(InputError, match=r"hessian: expected shape \(9, 9\).*\(8, 8\)"):
        label_modes(sym, hessian=hess[:8, :8])
    bad = hess.copy()
    bad[0, 1] += 1.0
    with pytest.raises(InputError, match="hessian: expected a symmetric matrix"):
        block_diagonalize(sym, bad)
    bad = hess.copy()
    bad[2, 2] = np.nan
    with pytest.raises(InputError, match="hessian: contains NaN"):
        label_modes(sym, hessian=bad)
    with pytest.raises(InputError, match=r"modes: expected shape \(n_modes, 9\)"):
        label_modes(sym, modes=np.ones((3, 12)))
    with pytest.raises(InputError, match=r"masses: expected shape \(3,\)"):
        label_modes(sym, hessian=hess, masses=[1.0, 2.0])
    with pytest.raises(InputError, match="exactly one"):
        label_modes(sym)
    with pytest.raises(InputError, match="unit"):
        label_modes(sym, hessian=hess, unit="kcal")
