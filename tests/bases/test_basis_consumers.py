"""The two consumers of one resolved basis agree: the counted characters (rust/count.rs, via
``Analysis.representation``) equal the traces of the sparse representation matrices of
``gammatrace.basis_change``, operation by operation (common practice: a character is the trace
of the representation matrix). Bases the matrix code cannot serve say so when used."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, ferrocene_like, octahedral, twisted_ethylene
from gammatrace.basis_change import (
    basis_dimension,
    representation_matrices,
    representation_matrix,
    symmetry_adapted_basis,
)
from gammatrace.cli import main
from gammatrace.io import Structure, write_xyz

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
    vec = gt.Basis.vector_set(np.broadcast_to(np.eye(3), (12, 3, 3)))
    assert benzene.representation(vec).irreps == benzene.representation("cartesian").irreps
    with pytest.raises(gt.BasisError, match=r"basis 'vectors.*serves"):
        benzene.symmetry_adapted_basis(vec)
    g = gt.Basis.orbitals({"C": "g"})
    assert benzene.representation(g).dimension == 6 * 9  # counted for any l
    for call in (
        lambda: representation_matrices(sym, g),
        lambda: benzene.symmetry_adapted_basis(g),
        lambda: symmetry_adapted_basis(sym, "orbitals:C=g"),
        lambda: representation_matrix(sym, 0, benzene.resolve_basis(g)),
    ):
        with pytest.raises(gt.BasisError, match=r"'orbitals:C=g'.*l = 4"):
            call()
    methane = gt.analyze(*ase_molecule("CH4"))
    # the matrix code serves π; methane has no π centre to put it on
    with pytest.raises(gt.BasisError, match="no π centres"):
        methane.symmetry_adapted_basis("pi")


def test_cli_salc_reports_an_unserved_basis(tmp_path, capsys):
    symbols, pos = ase_molecule("C6H6")
    xyz = tmp_path / "benzene.xyz"
    write_xyz([Structure(np.asarray(gt.io.atomic_numbers(symbols)), pos)], xyz)
    assert main(["salc", str(xyz), "--basis", "orbitals:C=g"]) == 1
    err = capsys.readouterr().err
    assert "BasisError" in err and "'orbitals:C=g'" in err
    assert main(["salc", str(xyz), "--basis", "orbitals:C=p", "--format", "json"]) == 0


PI_MOLECULES = {
    "benzene": lambda: gt.analyze(*ase_molecule("C6H6")),
    "pyridine": lambda: gt.analyze(*ase_molecule("C5H5N")),
    "furan": lambda: gt.analyze(*ase_molecule("C4H4O")),
    "isobutene": lambda: gt.analyze(*ase_molecule("isobutene")),
    "ferrocene-like": lambda: gt.analyze(ferrocene_like()),
    "twisted ethylene": lambda: gt.analyze(*twisted_ethylene()),
}


@pytest.mark.parametrize("name", list(PI_MOLECULES))
def test_pi_characters_equal_matrix_traces(name):
    # The matrix code serves π: p orbital j goes to ±(p orbital π_R(j)), the sign that of
    # (R n_j)·n_π(j); its traces are the counted characters, operation by operation.
    analysis = PI_MOLECULES[name]()
    resolved = analysis.resolve_basis("pi")
    counted = analysis.representation("pi").per_operation
    matrices = representation_matrices(analysis.symmetry_data(), resolved)
    traces = np.array([m.diagonal().sum() for m in matrices])
    assert np.allclose(traces, counted, atol=1e-8), (traces, counted)
    assert basis_dimension(analysis.symmetry_data(), resolved) == resolved.centres.size
    sab = analysis.symmetry_adapted_basis("pi")
    counted_irreps = analysis.representation("pi").irreps
    assert {k: v for k, v in sab.multiplicities.items() if v} == counted_irreps
