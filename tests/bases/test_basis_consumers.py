"""The two consumers of one resolved basis agree: the counted characters (rust/count.rs, via
``Analysis.representation``) equal the traces of the sparse representation matrices of
``gammatrace.basis_change``, operation by operation (common practice: a character is the trace
of the representation matrix). Bases the matrix code cannot serve say so when used."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, octahedral
from gammatrace.basis_change import (
    basis_dimension,
    representation_matrices,
    representation_matrix,
    symmetry_adapted_basis,
)
from gammatrace.cli import main
from gammatrace.io import Structure, write_xyz
from gammatrace.io.builders import orbit_structure


def ferrocene_like() -> Structure:
    """An invented staggered M(C5H5)2 sandwich built as orbits of D5d (no reference geometry):
    Fe at the centre, C and H seeds in a mirror plane (18° from x, between two C2' axes)."""
    ops = gt.get_table("D5d").operations
    phi = np.radians(18.0)
    direction = np.array([np.cos(phi), np.sin(phi), 0.0])
    seeds = np.array([[0.0, 0.0, 0.0], 1.2 * direction + [0, 0, 1.65], 2.27 * direction])
    seeds[2, 2] = 1.65
    return orbit_structure(ops, seeds, np.array([26, 6, 1]))


MOLECULES = {
    "water": lambda: gt.analyze(*ase_molecule("H2O")),
    "ammonia": lambda: gt.analyze(*ase_molecule("NH3")),
    "methane": lambda: gt.analyze(*ase_molecule("CH4")),
    "benzene": lambda: gt.analyze(*ase_molecule("C6H6")),
    "SF6": lambda: gt.analyze(*octahedral("S", "F", 1.56)),
    "ferrocene-like": lambda: gt.analyze(ferrocene_like()),
}
MATRIX_SPECS = [
    "atoms",
    "cartesian",
    "orbitals:*=spdf",
    "orbitals:Fe=spd,S=spd,C=sp,N=sp,O=sp,F=p",  # H not named: no functions on it
    "orbitals:ps,H=s",
    "bonds",
    "bond_vectors",
]


@pytest.fixture(scope="module", params=list(MOLECULES))
def analysis(request):
    return MOLECULES[request.param]()


def test_ferrocene_like_sandwich_is_d5d():
    # from memory: a staggered metallocene has D5d symmetry; 1 + 10 + 10 atoms
    res = gt.analyze(ferrocene_like())
    assert res.point_group == "D5d" and res.n_atoms == 21
    assert len(res.bonds()) == 10 + 5 + 5 + 10  # Fe-C, C-C in each ring, C-H


@pytest.mark.parametrize("spec", MATRIX_SPECS)
def test_counted_characters_equal_matrix_traces(analysis, spec):
    resolved = analysis.resolve_basis(spec)
    counted = analysis.representation(spec).per_operation
    matrices = representation_matrices(analysis.symmetry_data(), resolved)
    traces = np.array([m.diagonal().sum() for m in matrices])
    assert len(traces) == analysis.order
    assert np.allclose(traces, counted, atol=1e-8), (spec, traces, counted)
    assert basis_dimension(analysis.symmetry_data(), resolved) == round(counted[0])


@pytest.mark.parametrize("spec", ["orbitals:Fe=d,S=d,C=p,N=p,O=p,*=s", "bond_vectors"])
def test_salc_multiplicities_equal_the_counted_reduction(analysis, spec):
    counted = analysis.representation(spec).irreps
    sab = analysis.symmetry_adapted_basis(spec)
    assert {k: v for k, v in sab.multiplicities.items() if v} == counted


def test_unserved_bases_raise_basis_error_when_used():
    benzene = gt.analyze(*ase_molecule("C6H6"))
    sym = benzene.symmetry_data()
    pi = gt.Basis.pi()  # constructing is fine: the characters are counted
    assert benzene.representation(pi).dimension == 12
    for call in (
        lambda: benzene.symmetry_adapted_basis(pi),
        lambda: symmetry_adapted_basis(sym, "pi"),
        lambda: representation_matrix(sym, 0, benzene.resolve_basis(pi)),
    ):
        with pytest.raises(gt.BasisError, match=r"basis 'pi'.*serves atoms, cartesian"):
            call()
    vec = gt.Basis.vector_set(np.broadcast_to(np.eye(3), (12, 3, 3)))
    assert benzene.representation(vec).irreps == benzene.representation("cartesian").irreps
    with pytest.raises(gt.BasisError, match=r"basis 'vectors.*serves"):
        benzene.symmetry_adapted_basis(vec)
    g = gt.Basis.orbitals({"C": "g"})
    assert benzene.representation(g).dimension == 6 * 9  # counted for any l
    with pytest.raises(gt.BasisError, match=r"'orbitals:C=g'.*l = 4"):
        representation_matrices(sym, g)
    methane = gt.analyze(*ase_molecule("CH4"))
    # not planar, but the first thing said is that the matrix code has no π
    with pytest.raises(gt.BasisError, match="serves"):
        methane.symmetry_adapted_basis("pi")


def test_cli_salc_reports_an_unserved_basis(tmp_path, capsys):
    symbols, pos = ase_molecule("C6H6")
    xyz = tmp_path / "benzene.xyz"
    write_xyz([Structure(np.asarray(gt.io.atomic_numbers(symbols)), pos)], xyz)
    assert main(["salc", str(xyz), "--basis", "pi"]) == 1
    err = capsys.readouterr().err
    assert "BasisError" in err and "'pi'" in err
    assert main(["salc", str(xyz), "--basis", "orbitals:C=p", "--format", "json"]) == 0
