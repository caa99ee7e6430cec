"""Reducible representations counted from unshifted atoms: orbital, π, bond and vector bases,
Burnside's lemma, and the literal method (traces of full matrices) as an independent check."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, octahedral, random_rotation
from gammatrace.io.builders import orbit_structure


def test_d_orbitals_at_octahedral_site_split_eg_t2g():
    # Source: Cotton, Chemical Applications of Group Theory, ch. 9 (crystal-field splitting):
    # the d set of a metal at an Oh site spans eg + t2g.
    res = gt.analyze(*octahedral("Fe", "F", 2.0))
    rep = res.representation(gt.Basis.orbitals({"Fe": "d"}))
    assert rep.irreps == {"Eg": 1, "T2g": 1}


def test_octahedral_sigma_donors_span_a1g_eg_t1u():
    # Source: Cotton, ch. 8 (σ bonding in octahedral complexes): A1g + Eg + T1u.
    res = gt.analyze(*octahedral("Fe", "F", 2.0))
    rep = res.representation(gt.Basis.orbitals({"F": "s"}))
    assert rep.irreps == {"A1g": 1, "Eg": 1, "T1u": 1}
    # the same six ligand σ orbitals as bond vectors pointing at the metal
    bonds = np.array([[k, 0] for k in range(1, 7)])
    assert res.representation(gt.Basis.bond_stretches(bonds)).irreps == {
        "A1g": 1,
        "Eg": 1,
        "T1u": 1,
    }


def test_metal_spd_and_hydrogen_s_orbital_sets():
    # Source: Cotton, appendix (Oh table functions): s -> A1g, p -> T1u, d -> Eg + T2g;
    # ligand s orbitals as above. A per-element orbital set adds them up.
    res = gt.analyze(*octahedral("Fe", "H", 1.6))
    rep = res.representation("orbitals:Fe=spd,H=s")
    assert rep.irreps == {"A1g": 2, "Eg": 2, "T2g": 1, "T1u": 2}
    assert rep.dimension == 9 + 6


def test_benzene_pi_system():
    # Source: Cotton, ch. 7 (Hückel π MOs of benzene): A2u + B2g + E1g + E2u.
    symbols, pos = ase_molecule("C6H6")
    carbons = [i for i, s in enumerate(symbols) if s == "C"]
    pi = gt.analyze(["C"] * 6, pos[carbons]).representation("pi")
    assert pi.irreps == {"A2u": 1, "B2g": 1, "E1g": 1, "E2u": 1}


def test_benzene_bond_stretches():
    # Herzberg (1945) / Wilson numbering (from memory): the C-H stretches are ν2 (a1g),
    # ν13 (b1u), ν7 (e2g), ν20 (e1u); the ring C-C stretches ν1 (a1g), ν14 (b2u, the Kekulé
    # mode), ν8 (e2g), ν19 (e1u). C-H bonds lie on the C2' axes, C-C bonds across the C2''.
    symbols, pos = ase_molecule("C6H6")
    res = gt.analyze(symbols, pos)
    rep = res.representation("bonds")
    assert rep.dimension == 12
    assert rep.irreps == {"A1g": 2, "E2g": 2, "B1u": 1, "B2u": 1, "E1u": 2}
    ring = gt.Basis.bond_stretches([[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0]])
    assert res.representation(ring).irreps == {"A1g": 1, "E2g": 1, "B2u": 1, "E1u": 1}


def test_water_oh_bond_vectors():
    # common practice: the two O-H stretches of water span A1 + B2.
    res = gt.analyze(*ase_molecule("H2O"))
    assert res.representation("bonds").irreps == {"A1": 1, "B2": 1}
    # vectors along the bonds behave the same here (no operation reverses an O-H bond)
    assert res.representation("bond_vectors").irreps == {"A1": 1, "B2": 1}


def test_user_vectors_reproduce_cartesian():
    # three orthonormal vectors at every atom are just the Cartesian displacements
    symbols, pos = ase_molecule("NH3")
    res = gt.analyze(symbols, pos)
    vec = np.broadcast_to(np.eye(3), (len(symbols), 3, 3))
    assert (
        res.representation(gt.Basis.vector_set(vec)).irreps
        == res.representation("cartesian").irreps
    )


def test_bad_bases_raise_typed_errors():
    res = gt.analyze(*ase_molecule("H2O"))
    with pytest.raises(gt.BasisError, match="Xx"):
        res.representation(gt.Basis.orbitals({"Xx": "s"}))
    with pytest.raises(gt.BasisError, match="angular momentum"):
        gt.Basis.orbitals({"O": "spq"})
    with pytest.raises(gt.BasisError, match="bond 0"):
        res.representation(gt.Basis.bond_stretches([[0, 7]]))
    with pytest.raises(gt.BasisError, match="shape"):
        gt.Basis.vector_set(np.zeros((3, 2)))
    with pytest.raises(gt.BasisError, match="rows"):
        res.representation(gt.Basis.vector_set(np.zeros((5, 3))))
    with pytest.raises(gt.BasisError, match="unknown basis"):
        res.representation("spinors")
    ch4 = gt.analyze(*ase_molecule("CH4"))
    with pytest.raises(gt.BasisError, match="not planar"):
        ch4.representation("pi")


# ------------------------------------------------------------------ random symmetric structures
GROUPS = [
    "C2v",
    "C3v",
    "C4h",
    "D3h",
    "D2d",
    "D4h",
    "D5d",
    "S6",
    "S8",
    "C6",
    "D6",
    "Td",
    "Th",
    "O",
    "Oh",
    "I",
    "Ih",
    "Cs",
    "Ci",
    "C2h",
    "D7h",
    "C5v",
]


def random_symmetric(group: str, rng: np.random.Generator, n_seeds: int = 3):
    ops = gt.get_table(group).operations
    seeds = rng.normal(size=(n_seeds, 3)) * 2.0
    numbers = rng.choice([1, 6, 8], size=n_seeds)
    s = orbit_structure(ops, seeds, numbers)
    rot = random_rotation(rng)
    return s.numbers, s.positions @ rot.T + rng.normal(size=3)


@pytest.mark.parametrize("group", GROUPS)
def test_burnside_orbits(group, rng):
    # Burnside's lemma (common practice): (1/h) Σ_R unshifted(R) = number of orbits.
    numbers, pos = random_symmetric(group, rng)
    res = gt.analyze(numbers, pos)
    rep = res.representation("atoms")
    burnside = rep.per_operation.sum() / len(res.operations)
    assert burnside == pytest.approx(len(res.orbits))
    assert sum(o.size for o in res.orbits) == res.n_atoms
    for o in res.orbits:
        assert o.size * o.site_order == res.order


def _literal_cartesian_traces(res) -> np.ndarray:
    """The literal method: build each 3N x 3N matrix (permutation ⊗ R) and take its trace."""
    perms = res.permutations
    n = res.n_atoms
    out = []
    for k, r in enumerate(res.operation_matrices):
        big = np.zeros((3 * n, 3 * n))
        for i in range(n):
            j = perms[k, i]
            big[3 * j : 3 * j + 3, 3 * i : 3 * i + 3] = r
        out.append(np.trace(big))
    return np.array(out)


@pytest.mark.parametrize("group", GROUPS)
def test_counted_characters_equal_traces_of_full_matrices(group, rng):
    numbers, pos = random_symmetric(group, rng)
    res = gt.analyze(numbers, pos)
    assert res.point_group == group
    counted = res.representation("cartesian").per_operation
    np.testing.assert_allclose(counted, _literal_cartesian_traces(res), atol=1e-9)


def test_worked_table_lists_unshifted_atoms():
    # Cotton ch. 10 worked example for water (transposed to the yz plane): unshifted atoms
    # 3, 1, 1, 3 under E, C2, σv(xz), σv'(yz); contributions 3, -1, 1, 1; Γ_3N = 9, -1, 1, 3.
    res = gt.analyze(*ase_molecule("H2O"))
    rep = res.representation("cartesian")
    assert rep.unshifted.tolist() == [3, 1, 1, 3]
    assert [float(c) for c in rep.contributions] == [3.0, -1.0, 1.0, 1.0]
    assert rep.characters.tolist() == [9, -1, 1, 3]
    text = rep.worked_table()
    assert "σv'(yz)" in text and "unshifted atoms" in text
