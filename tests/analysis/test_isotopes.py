"""Isotopes end to end: atoms of one element with different masses are different species.

Every isotopologue is given three ways — by symbol (``D``), as an ``ase.Atoms`` with masses,
and as an extended-XYZ file with a ``masses`` column — and must come out with the same point
group, symmetry number and Γ_vib. Geometries are the idealised molecules of tests/_force_field.py
(inputs, not reference values).
"""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from _force_field import benzene, methane, water
from gammatrace.io import STANDARD_MASSES, Structure, read_xyz, write_xyz
from gammatrace.modes import frequencies_from_eigenvalues

# Source: AME2020 (Wang et al., Chinese Physics C 45, 030003, 2021), from memory.
M_D = 2.014101778
M_T = 3.016049281

BENZENE_VIB = {
    # Source: Herzberg, "Infrared and Raman Spectra of Polyatomic Molecules" (1945), benzene,
    # Wilson's numbering with C2' through atoms; C6D6 has the same symmetry species.
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
}

# name: (builder, indices of the atoms that are D, group, σ, Γ_vib)
ISOTOPOLOGUES = {
    # Source: Herzberg (1945), CH2D2: C2v, 4A1 + A2 + 2B1 + 2B2 (from memory). By hand with
    # the unshifted-atom method: χ(Γ3N) = 15, −1, 3, 3 → 5A1 + 2A2 + 4B1 + 4B2, less
    # translations (A1 + B1 + B2) and rotations (A2 + B1 + B2).
    "CH2D2": (methane, [3, 4], "C2v", 2, {"A1": 4, "A2": 1, "B1": 2, "B2": 2}),
    # Source: Herzberg (1945), CH3D: C3v, 3A1 + 3E (from memory). By hand: χ(Γ3N) = 15, 0, 3
    # → 4A1 + A2 + 5E, less (A1 + E) and (A2 + E).
    "CH3D": (methane, [4], "C3v", 3, {"A1": 3, "E": 3}),
    "C6D6": (benzene, list(range(6, 12)), "D6h", 12, BENZENE_VIB),
    # Derived by hand (not from a table): C6H5D in C2v, the ring in the yz plane (Mulliken),
    # the C2 axis through 4 atoms, σ(xz) containing those 4, σ(yz) all 12:
    # χ(Γ3N) = 36, −4, 4, 12 → 12A1 + 4A2 + 8B1 + 12B2, less translations (A1 + B1 + B2) and
    # rotations (A2 + B1 + B2) → 11A1 + 3A2 + 6B1 + 10B2 (21 in-plane, 9 out-of-plane).
    "C6H5D": (benzene, [6], "C2v", 2, {"A1": 11, "A2": 3, "B1": 6, "B2": 10}),
    # Source: Herzberg (1945), D2O: C2v, 2A1 + B2, as H2O (from memory).
    "D2O": (water, [1, 2], "C2v", 2, {"A1": 2, "B2": 1}),
    # Source: Herzberg (1945), HDO: Cs, 3A' (from memory).
    "HDO": (water, [1], "Cs", 1, {"A'": 3}),
}


def _molecule(name):
    builder, deuterated, group, sigma, vib = ISOTOPOLOGUES[name]
    pos, num, hess, _ = builder()
    symbols = [gt.io.SYMBOLS[z] for z in num]
    for i in deuterated:
        symbols[i] = "D"
    masses = STANDARD_MASSES[num].copy()
    masses[deuterated] = M_D
    return symbols, np.asarray(num, dtype=np.int64), pos, masses, hess, (group, sigma, vib)


def _extxyz(path, num, pos, masses):
    lines = [str(len(num)), "Properties=species:S:1:pos:R:3:masses:R:1"]
    lines += [
        f"{gt.io.SYMBOLS[z]} {x:.10f} {y:.10f} {w:.10f} {m:.9f}"
        for z, (x, y, w), m in zip(num, pos, masses)
    ]
    path.write_text("\n".join(lines) + "\n")
    return path


def _check(res, expected, masses):
    group, sigma, vib = expected
    assert res.point_group == group
    assert res.symmetry_number == sigma
    assert res.vibrations().irreps == vib
    np.testing.assert_allclose(res.masses, masses, rtol=0, atol=1e-9)
    # orbits never mix isotopes
    for orbit in res.orbits:
        assert len(set(np.round(res.masses[orbit.atoms], 6))) == 1


@pytest.mark.parametrize("name", list(ISOTOPOLOGUES))
def test_isotopologue_by_symbol(name):
    symbols, _, pos, masses, _, expected = _molecule(name)
    _check(gt.analyze(symbols, pos), expected, masses)


@pytest.mark.parametrize("name", list(ISOTOPOLOGUES))
def test_isotopologue_as_ase_atoms_with_masses(name):
    from ase import Atoms

    _, num, pos, masses, _, expected = _molecule(name)
    _check(gt.analyze(Atoms(numbers=num, positions=pos, masses=masses)), expected, masses)


@pytest.mark.parametrize("name", list(ISOTOPOLOGUES))
def test_isotopologue_from_an_extended_xyz_masses_column(name, tmp_path):
    _, num, pos, masses, _, expected = _molecule(name)
    path = _extxyz(tmp_path / f"{name}.xyz", num, pos, masses)
    _check(gt.analyze(path), expected, masses)


def test_rdkit_isotopes_are_honoured():
    Chem = pytest.importorskip("rdkit.Chem")
    from rdkit.Geometry import Point3D

    symbols, num, pos, masses, _, expected = _molecule("CH2D2")
    mol = Chem.RWMol()
    for sym, z in zip(symbols, num):
        atom = Chem.Atom(int(z))
        if sym == "D":
            atom.SetIsotope(2)
        mol.AddAtom(atom)
    conf = Chem.Conformer(len(num))
    for i, p in enumerate(pos):
        conf.SetAtomPosition(i, Point3D(*map(float, p)))
    mol.AddConformer(conf)
    _check(gt.analyze(mol.GetMol()), expected, masses)


def test_without_masses_the_same_geometry_keeps_its_higher_group():
    # Source: Herzberg (1945): CH4 is Td (σ = 12). The geometry of CH2D2 with standard masses
    # is methane's, so the masses alone lower the group.
    _, num, pos, _, _, _ = _molecule("CH2D2")
    res = gt.analyze(num, pos)
    assert (res.point_group, res.symmetry_number) == ("Td", 12)
    np.testing.assert_array_equal(res.masses, STANDARD_MASSES[num])
    # ASE's default masses are not read: only masses set on the Atoms count
    from ase import Atoms

    assert gt.analyze(Atoms(numbers=num, positions=pos)).structure.masses is None


def test_ase_masses_set_after_construction_are_honoured():
    from ase import Atoms

    _, num, pos, masses, _, (group, _, _) = _molecule("CH3D")
    atoms = Atoms(numbers=num, positions=pos)
    atoms.set_masses(masses)
    assert gt.analyze(atoms).point_group == group


def test_tritium_and_mixed_hydrogen_isotopes():
    # CH2DT on a methane frame keeps one mirror, the plane through C, D and T, which swaps
    # the two H atoms: Cs, σ = 1 (common practice).
    pos = _molecule("CH2D2")[2]
    symbols = ["C", "H", "H", "D", "T"]
    res = gt.analyze(symbols, pos)
    assert res.point_group == "Cs" and res.symmetry_number == 1
    assert res.masses[4] == pytest.approx(M_T, abs=1e-9)
    assert res.structure.species_symbols == ["C", "H", "H", "D", "T"]
    # CHD2T-like: one H, two D, one T: the mirror through C, H and T swaps the two D
    res = gt.analyze(["C", "H", "D", "D", "T"], pos)
    assert res.point_group == "Cs"


def test_species_symbols_and_codes():
    s = Structure(
        np.array([6, 1, 1, 6], dtype=np.int64),
        np.zeros((4, 3)),
        masses=np.array([12.011, 1.008, M_D, 13.003355]),  # ¹³C: AME2020, from memory
    )
    assert s.species_symbols == ["C", "H", "D", "13C"]
    codes = s.species
    assert len(set(codes.tolist())) == 4
    plain = Structure(np.array([6, 1, 1], dtype=np.int64), np.zeros((3, 3)))
    assert plain.species_symbols == ["C", "H", "H"]
    np.testing.assert_array_equal(plain.species, plain.numbers)


def test_unknown_symbols_and_bad_masses_are_refused():
    with pytest.raises(gt.StructureError, match="atom 1"):
        gt.analyze(["C", "Dx"], [[0, 0, 0], [0, 0, 1.1]])
    # D is a nuclide, not an element: the element lookup still refuses it
    with pytest.raises(KeyError):
        gt.io.atomic_number("D")
    bad = Structure(
        np.array([8, 1, 1], dtype=np.int64),
        water()[0],
        masses=np.array([16.0, 1.0, -1.0]),
    )
    with pytest.raises(gt.StructureError, match="atom 2 has mass -1"):
        gt.analyze(bad)
    with pytest.raises(gt.InputError, match="masses"):
        Structure(np.array([8, 1], dtype=np.int64), np.zeros((2, 3)), masses=[1.0])


def test_xyz_symbols_d_and_t_and_write_round_trip(tmp_path):
    symbols, num, pos, masses, _, expected = _molecule("D2O")
    path = tmp_path / "d2o.xyz"
    path.write_text(
        "3\nheavy water\n" + "".join(f"{s} {x} {y} {z}\n" for s, (x, y, z) in zip(symbols, pos))
    )
    (frame,) = read_xyz(path)
    np.testing.assert_array_equal(frame.numbers, num)
    np.testing.assert_allclose(frame.masses, masses)
    _check(gt.analyze(frame), expected, masses)
    # written back with D, read back with the same masses
    out = tmp_path / "back.xyz"
    write_xyz([frame], out)
    assert [line.split()[0] for line in out.read_text().splitlines()[2:]] == ["O", "D", "D"]
    (again,) = read_xyz(out)
    np.testing.assert_allclose(again.masses, masses)


def test_batches_honour_masses(tmp_path):
    names = ["CH2D2", "CH3D", "C6D6", "C6H5D", "D2O"]
    mols = [_molecule(n) for n in names]
    expected = [(m[5][0], m[5][1]) for m in mols]
    # a list of structures
    table = gt.analyze_batch([(m[0], m[2]) for m in mols], output="dict")
    assert list(zip(table["point_group"], table["symmetry_number"])) == expected
    # a multi-frame file with a masses column, through the batch reader and screen
    path = tmp_path / "isotopologues.xyz"
    path.write_text(
        "".join(
            _extxyz(tmp_path / f"{k}.xyz", m[1], m[2], m[3]).read_text() for k, m in enumerate(mols)
        )
    )
    table = gt.analyze_batch(path, output="dict")
    assert list(zip(table["point_group"], table["symmetry_number"])) == expected
    from gammatrace.batch.screen import screen

    summary = screen([path], progress=False)
    assert summary["groups"]["C2v"] == [f"{path}:0", f"{path}:3", f"{path}:4"]
    # a frame with D symbols mixed with plain frames: each frame keeps its own masses
    plain = "".join(
        f"{len(m[1])}\nplain\n"
        + "".join(f"{gt.io.SYMBOLS[z]} {x} {y} {w}\n" for z, (x, y, w) in zip(m[1], m[2]))
        for m in mols[:1]
    )
    mixed = tmp_path / "mixed.xyz"
    symbols, _, pos, _, _, _ = mols[0]
    mixed.write_text(
        plain + "5\nwith D\n" + "".join(f"{s} {x} {y} {w}\n" for s, (x, y, w) in zip(symbols, pos))
    )
    table = gt.analyze_batch(mixed, output="dict")
    assert list(table["point_group"]) == ["Td", "C2v"]


def test_ch2d2_hessian_labelling_uses_the_isotope_masses():
    # The force field is mass-independent (tests/_force_field.py); labels follow the group
    # (Herzberg 1945: CH2D2 4A1 + A2 + 2B1 + 2B2) and the frequencies must be those of the
    # Hessian weighted by the isotope masses, computed here directly with numpy.
    symbols, _, pos, masses, hess, (_, _, vib) = _molecule("CH2D2")
    res = gt.analyze(symbols, pos)
    labels = res.label_modes(hess)
    assert labels.counts() == vib
    assert labels.purity.min() > 1 - 1e-9
    m3 = np.repeat(masses, 3)
    direct = frequencies_from_eigenvalues(np.linalg.eigvalsh(hess / np.sqrt(np.outer(m3, m3))))
    vib_freqs = np.sort(labels.frequencies[~labels.external])
    np.testing.assert_allclose(vib_freqs, np.sort(direct)[6:], rtol=1e-9)
    # with standard masses the same Hessian has other frequencies (the masses were used)
    m3_std = np.repeat(STANDARD_MASSES[res.structure.numbers], 3)
    std = frequencies_from_eigenvalues(np.linalg.eigvalsh(hess / np.sqrt(np.outer(m3_std, m3_std))))
    assert np.abs(np.sort(std)[6:] - vib_freqs).max() > 10.0
