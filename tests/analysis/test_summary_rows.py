"""The JSON object's group-dependent keys, built a group at a time (gammatrace.summary), are
those the objects give one structure at a time: Representation.to_dict for atoms and
cartesian, Vibrations.to_dict, σ and the chiral flag. Reference values of the objects are
checked elsewhere against published tables; here the two routes must agree exactly."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, ferrocene_like, octahedral, random_rotation
from gammatrace.io.builders import orbit_structure
from gammatrace.summary import summary_rows

# real molecules of every kind of group ASE's G2 collection holds (common practice)
G2 = ["H2O", "NH3", "CH4", "C6H6", "CO2", "HCN", "C2H4", "CH3CH2OH", "SiH4", "PF3", "CH3Cl"]
# groups with complex-conjugate pairs (combined E rows), improper axes and the cubic ones
BUILT = ["C3", "C5h", "S4", "S6", "T", "Th", "C4h", "D2d", "Oh", "Ih", "D7h", "C2"]


def _built(name: str, seed: int):
    rng = np.random.default_rng(seed)
    ops = gt.get_table(name).operations
    seeds = rng.normal(0.0, 1.5, (2, 3))
    s = orbit_structure(ops, seeds, np.array([6, 1]))
    return s.numbers, s.positions @ random_rotation(rng).T


def _corpus():
    for name in G2:
        yield name, ase_molecule(name)
    for k, name in enumerate(BUILT):
        yield name, _built(name, k)
    yield "SF6", octahedral("S", "F", 1.56)
    f = ferrocene_like()
    yield "ferrocene-like", (f.numbers, f.positions)
    yield "Xe", (["Xe"], [[0.0, 0.0, 0.0]])
    yield "CH2D2", (["C", "H", "H", "D", "D"], ase_molecule("CH4")[1])
    noisy = np.random.default_rng(5).normal(0, 0.003, (12, 3)) + ase_molecule("C6H6")[1]
    yield "noisy benzene", (ase_molecule("C6H6")[0], noisy)


@pytest.mark.parametrize("name, atoms", list(_corpus()), ids=[n for n, _ in _corpus()])
def test_summary_keys_equal_the_objects(name, atoms):
    a = gt.analyze(*atoms)
    sym = a.symmetry
    (row,) = summary_rows(sym.table, sym.unshifted_atoms[None], [sym.n_atoms])
    assert row is not None, name
    assert row["representations"]["atoms"] == a.representation("atoms").to_dict()
    assert row["representations"]["cartesian"] == a.representation("cartesian").to_dict()
    assert row["vibrations"] == a.vibrations().to_dict()
    assert row["symmetry_number"] == a.symmetry_number
    assert row["chiral"] == a.chiral
    assert row["classes"] == a.table.to_dict()["classes"]
    # and to_dict carries them
    d = a.to_dict()
    assert d["representations"] == row["representations"]
    assert d["vibrations"] == row["vibrations"]


def test_a_row_whose_characters_disagree_within_a_class_is_left_to_the_objects():
    # counts that differ between two C3 of one class cannot come from a structure: the row
    # is None, so the one-structure path raises its error naming the class
    t = gt.get_table("C3v")
    good = np.array([[4, 1, 1, 2, 2, 2]], dtype=float)
    bad = np.array([[4, 1, 2, 2, 2, 2]], dtype=float)
    rows = summary_rows(t, np.vstack([good, bad]), [4, 4])
    assert rows[0] is not None and rows[1] is None
    assert rows[0]["representations"]["atoms"]["irreps"] == {"A1": 2, "E": 1}


@pytest.mark.parametrize("name", ["C60-like Ih", "SF6"])
def test_huge_structure_rule_counts_one_operation_per_class_and_agrees(name, monkeypatch):
    # Above the verify-all limit detection verifies the generators and counting takes the
    # first operation of each class for its class: on an exact structure the object must be
    # the one of counting every operation. The limit is lowered here to make a small
    # structure "huge"; the batch path (core) follows the same rule.
    from gammatrace import analysis as analysis_module

    atoms = _built("Ih", 1) if name != "SF6" else octahedral("S", "F", 1.56)
    full = gt.analyze(*atoms).to_dict()
    monkeypatch.setattr(analysis_module, "VERIFY_ALL_LIMIT", 0)
    few = gt.analyze(*atoms)
    assert not few.symmetry.all_verified
    got = few.to_dict()
    # fewer operations verified: the largest deviation and the improper margin are over them
    assert got.pop("max_deviation") <= full.pop("max_deviation")
    assert got.pop("improper_within") >= full.pop("improper_within")
    assert got == full
