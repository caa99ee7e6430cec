"""Readers: native XYZ (standard and extended), ASE and RDKit inputs, SDF conformers."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from gammatrace.io import Structure, atomic_numbers, read_structures, write_xyz


def test_xyz_round_trip(tmp_path):
    from ase.build import molecule

    mols = [molecule(n) for n in ("H2O", "NH3", "C6H6")]
    structures = [Structure(m.numbers.astype(np.int64), m.positions) for m in mols]
    path = tmp_path / "three.xyz"
    write_xyz(structures, path)
    frames = gt.read_xyz(path)
    assert len(frames) == 3
    for s, f in zip(structures, frames):
        np.testing.assert_array_equal(f.numbers, s.numbers)
        np.testing.assert_allclose(f.positions, s.positions, atol=1e-9)


def test_extended_xyz_properties_are_honoured(tmp_path):
    # extended XYZ (as written by ASE): Properties tells which columns hold species and pos
    path = tmp_path / "ext.xyz"
    path.write_text(
        "3\n"
        'Properties=charge:R:1:species:S:1:pos:R:3 energy=-76.4 name="water one"\n'
        "-0.8 O 0.0 0.0 0.1173\n"
        "0.4 H 0.0 0.7572 -0.4692\n"
        "0.4 H 0.0 -0.7572 -0.4692\n"
    )
    (frame,) = gt.read_xyz(path)
    assert frame.symbols == ["O", "H", "H"]
    assert frame.info["energy"] == "-76.4" and frame.info["name"] == "water one"
    assert gt.analyze(frame).point_group == "C2v"


def test_ase_atoms_and_ase_formats(tmp_path):
    from ase.build import molecule
    from ase.io import write

    atoms = molecule("CH4")
    assert gt.analyze(atoms).point_group == "Td"
    pdb = tmp_path / "methane.pdb"
    write(pdb, atoms)
    (s,) = read_structures(pdb)
    assert gt.analyze(s).point_group == "Td"


def test_rdkit_cyclohexane_conformers():
    # Source: Eliel & Wilen, Stereochemistry of Organic Compounds (1994), ch. 11: the chair of
    # cyclohexane is D3d and the twist-boat D2 (from memory). Conformers from RDKit's ETKDG
    # embedding, optimised with its MMFF94 force field.
    Chem = pytest.importorskip("rdkit.Chem")
    from rdkit.Chem import AllChem

    mol = Chem.AddHs(Chem.MolFromSmiles("C1CCCCC1"))
    AllChem.EmbedMultipleConfs(mol, numConfs=6, randomSeed=42)
    results = AllChem.MMFFOptimizeMoleculeConfs(mol, maxIters=5000)
    groups = []
    for k, (converged, energy) in enumerate(results):
        assert converged == 0
        res = gt.analyze(mol, frame=k, tol=0.01)
        groups.append((round(energy, 2), res.point_group))
    energies = sorted(set(groups))
    lowest = energies[0]
    assert lowest[1] == "D3d"  # the chair is the minimum
    assert {g for _, g in groups} <= {"D3d", "D2"}


def test_rdkit_sdf_with_conformers(tmp_path):
    Chem = pytest.importorskip("rdkit.Chem")
    from rdkit.Chem import AllChem

    mol = Chem.AddHs(Chem.MolFromSmiles("C"))
    AllChem.EmbedMolecule(mol, randomSeed=1)
    AllChem.MMFFOptimizeMolecule(mol)
    path = tmp_path / "methane.sdf"
    with Chem.SDWriter(str(path)) as w:
        w.write(mol)
        w.write(mol)
    frames = read_structures(path)
    assert len(frames) == 2
    # methane is Td (common practice); force-field geometry is symmetric to ~1e-4 Å
    assert {gt.analyze(f, tol=0.01).point_group for f in frames} == {"Td"}


def test_unknown_symbol_is_named():
    with pytest.raises(gt.StructureError, match="atom 1"):
        atomic_numbers(["C", "Xq"])
