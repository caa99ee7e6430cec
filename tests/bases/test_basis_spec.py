"""The one Basis: frozen, hashable, one string form, the old constructors of both former basis
types, and resolution on a structure."""

from __future__ import annotations

import ast
import dataclasses
import pathlib

import gammatrace as gt
import gammatrace.bases
import numpy as np
import pytest
from conftest import ase_molecule
from gammatrace import basis_change
from gammatrace.bases import Basis, ResolvedBasis, parse_basis

SPECS = [
    "atoms",
    "cartesian",
    "pi",
    "pi:C,N",
    "pi:*",
    "bonds",
    "bonds:scale=1.3",
    "bond_vectors",
    "bond_vectors:scale=1.05",
    "orbitals:Fe=spd,H=s",
    "orbitals:*=spd",
    "orbitals:spd",
    "orbitals:C=sp,*=s",
    "orbitals:O=ssp",
    "orbitals:U=spdfghi",
]


@pytest.mark.parametrize("spec", SPECS)
def test_string_form_round_trips(spec):
    basis = parse_basis(spec)
    again = parse_basis(str(basis))
    assert again == basis
    assert hash(again) == hash(basis)
    assert str(again) == str(basis)


def test_equal_specs_are_equal_and_hash_alike():
    same = [
        parse_basis("orbitals:Fe=spd,H=s"),
        parse_basis("orbitals:H=s,Fe=spd"),
        Basis.orbitals({26: [0, 1, 2], "H": "s"}),
        basis_change.Basis.orbitals({"Fe": "spd", 1: [0]}),
        parse_basis({"fe": "SPD", "H": "s"}),
    ]
    assert len({hash(b) for b in same}) == 1
    assert all(b == same[0] for b in same)
    pairs = np.array([[0, 1], [1, 2]])
    assert Basis.bonds(pairs) == Basis.bond_stretches(pairs.tolist())
    assert hash(Basis.bonds(pairs)) == hash(Basis.bond_stretches(pairs.tolist()))
    vec = np.arange(12.0).reshape(4, 3)
    assert Basis.vector_set(vec) == Basis.vector_set(vec[:, None, :].copy())
    assert parse_basis("cartesian") == Basis.cartesian() == Basis("cartesian")
    assert {parse_basis(s) for s in SPECS + SPECS} == {parse_basis(s) for s in SPECS}


def test_different_specs_differ():
    assert parse_basis("orbitals:O=sp") != parse_basis("orbitals:O=ps")  # function order
    assert parse_basis("bonds") != parse_basis("bonds:scale=1.3")
    assert parse_basis("bonds") != parse_basis("bond_vectors")
    assert Basis.bonds([[0, 1]]) != Basis.bonds([[1, 2]])
    assert Basis.bond_vectors([[0, 1]]) != Basis.bond_vectors([[1, 0]])  # orientation
    assert parse_basis("orbitals:O=sp") != parse_basis("orbitals:O=sp,*=s")
    assert parse_basis("pi") != parse_basis("pi:C") != parse_basis("pi:*")


def test_pi_names_its_elements_in_any_form():
    same = [parse_basis("pi:N,C"), parse_basis("pi: C , N "), Basis.pi(["C", "N"])]
    same += [Basis.pi([7, 6]), Basis.pi("n,c")]
    assert all(b == same[0] and hash(b) == hash(same[0]) for b in same)
    assert str(same[0]) == "pi:C,N" and same[0].elements == (6, 7)
    assert parse_basis("pi:").elements == () and str(parse_basis("pi:")) == "pi"
    assert parse_basis("pi:*").elements == ("*",)
    with pytest.raises(gt.BasisError, match="named twice"):
        parse_basis("pi:C,C")
    with pytest.raises(gt.BasisError, match="every element"):
        parse_basis("pi:*,C")
    with pytest.raises(gt.BasisError, match="unknown option"):
        parse_basis("pi:scale=1.3")
    with pytest.raises(gt.BasisError, match="takes no element list"):
        Basis("cartesian", elements=(6,))


def test_basis_is_frozen_and_keeps_its_own_arrays():
    pairs = np.array([[0, 1], [1, 2]])
    basis = Basis.bonds(pairs)
    pairs[0, 0] = 2  # the caller's array is not the basis's
    assert basis.pairs.tolist() == [[0, 1], [1, 2]]
    with pytest.raises(ValueError):
        basis.pairs[0, 0] = 5
    with pytest.raises(dataclasses.FrozenInstanceError):
        basis.kind = "atoms"


def test_both_former_basis_types_are_one_with_all_their_constructors():
    assert basis_change.Basis is gt.Basis is Basis
    pairs = [[0, 1], [0, 2]]
    assert basis_change.Basis("cartesian").kind == "cartesian"
    assert basis_change.Basis.cartesian() == Basis("cartesian")
    assert basis_change.Basis.atoms().kind == "atoms"
    assert basis_change.Basis.bonds(pairs).kind == "bonds"
    assert basis_change.Basis.bond_vectors(pairs).kind == "bond_vectors"
    assert gt.Basis.bond_stretches(pairs) == basis_change.Basis.bonds(pairs)
    assert gt.Basis.vector_set(np.eye(3)).vectors.shape == (3, 1, 3)
    assert gt.Basis.pi() == parse_basis("pi")
    # the shells view keeps the matrix code's form: atomic number -> angular momenta
    assert Basis.orbitals({"Fe": "spd", "*": "s"}).shells == {26: (0, 1, 2), "*": (0,)}


def test_bad_specs_raise_basis_error():
    with pytest.raises(gt.BasisError, match="unknown basis"):
        parse_basis("spinors")
    with pytest.raises(gt.BasisError, match="scale"):
        parse_basis("bonds:cutoff=2")
    with pytest.raises(gt.BasisError, match="twice"):
        parse_basis("orbitals:O=s,O=p")
    with pytest.raises(gt.BasisError, match="takes no options"):
        parse_basis("cartesian:x")
    with pytest.raises(gt.BasisError, match="listed twice"):
        Basis.bonds([[0, 1], [1, 0]])
    with pytest.raises(gt.BasisError, match=r"Basis\.vector_set"):
        parse_basis("vectors")


def test_resolution_gives_shells_per_atom_and_found_bonds():
    symbols, pos = ase_molecule("H2O")
    res = gt.analyze(symbols, pos)
    only_o = res.resolve_basis("orbitals:O=sp")
    assert isinstance(only_o, ResolvedBasis)
    # common practice: an s and a p shell are 1 + 3 functions; H not named carries none
    assert only_o.functions_per_atom.tolist() == [4, 0, 0] and only_o.dimension == 4
    others = res.resolve_basis("orbitals:O=sp,*=s")
    assert others.functions_per_atom.tolist() == [4, 1, 1]
    assert others.shell_counts.tolist() == [[1, 1], [1, 0], [1, 0]]
    bonds = res.resolve_basis("bonds")
    assert sorted(map(sorted, bonds.pairs.tolist())) == [[0, 1], [0, 2]]  # the two O-H bonds
    # the same basis resolves alike on the structure, the analysis and the symmetry data
    direct = parse_basis("bonds").resolve(res.structure)
    sym = parse_basis("bonds").resolve(res.symmetry_data())
    assert direct.pairs.tolist() == bonds.pairs.tolist() == sym.pairs.tolist()
    assert res.resolve_basis(parse_basis("bonds")) is bonds  # resolved once per Basis


def test_representations_are_cached_by_the_basis():
    symbols, pos = ase_molecule("NH3")
    res = gt.analyze(symbols, pos)
    pairs = np.array([[0, 1], [0, 2], [0, 3]])
    first = res.representation(Basis.bonds(pairs))
    assert res.representation(Basis.bonds(pairs.copy())) is first
    assert res.representation(Basis.bonds(pairs[::-1].copy())) is not first
    assert res.representation("orbitals:N=p") is res.representation({"N": "p"})


def test_bases_package_sits_below_the_layers_that_use_it():
    # DEVELOPERS.md, architecture: bases/ imports none of analysis, representations, sites, cli
    root = pathlib.Path(gammatrace.bases.__file__).parent
    above = {"analysis", "representations", "sites", "cli", "cli_basis", "basis_change"}
    offenders = []
    for path in sorted(root.glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and node.level == 2:
                names = {(node.module or "").split(".")[0]} | {a.name for a in node.names}
                offenders += [f"{path.name}: {n}" for n in sorted(names & above)]
    assert offenders == []
    assert len(list(root.glob("*.py"))) >= 5  # the package's modules are there to be checked
