"""Change of basis end to end: analyze() -> SALCs, mode labels and symmetrisation, from Python
and from the command line."""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
from _force_field import benzene, water
from gammatrace.cli import main
from gammatrace.io import Structure, write_xyz


def test_water_modes_through_analyze():
    # Herzberg (1945), water in the yz plane (Mulliken 1955): bend and symmetric stretch A1,
    # antisymmetric stretch B2.
    pos, num, hess, _ = water()
    res = gt.analyze(num, pos)
    labels = res.label_modes(hess)
    assert labels.counts() == {"A1": 2, "B2": 1}
    vib = [k for k in range(len(labels.irreps)) if not labels.external[k]]
    assert min(labels.purity[vib]) > 0.999


def test_benzene_salcs_through_analyze():
    pos, num, _, _ = benzene()
    res = gt.analyze(num, pos)
    sab = res.symmetry_adapted_basis("cartesian")
    x = sab.matrix
    assert abs(x @ x.T - np.eye(x.shape[0])).max() < 1e-10
    # the multiplicities equal the reduction of the counted Γ_3N
    assert {k: v for k, v in sab.multiplicities.items() if v} == res.representation(
        "cartesian"
    ).irreps


def test_cli_salc_modes_symmetrize(tmp_path, capsys):
    pos, num, hess, _ = water()
    xyz = tmp_path / "water.xyz"
    write_xyz([Structure(np.asarray(num), pos)], xyz)
    h_path = tmp_path / "h.npy"
    np.save(h_path, hess)
    x_path = tmp_path / "x.npz"
    assert main(["salc", str(xyz), "--out", str(x_path), "--format", "json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["multiplicities"] == {"A1": 3, "A2": 1, "B1": 2, "B2": 3}
    from gammatrace.basis_change import load_npz

    x, labels = load_npz(x_path)
    assert x.shape == (9, 9) and len(labels) == 9
    assert main(["modes", str(xyz), "--hessian", str(h_path), "--format", "json"]) == 0
    modes = json.loads(capsys.readouterr().out)
    assert modes["counts"] == {"A1": 2, "B2": 1}
    # a slightly bent-out-of-shape water: symmetrized back, C2v within a looser tolerance
    noisy = pos + np.array([[0, 0, 0], [0.003, 0.004, 0], [0, -0.002, 0.001]])
    write_xyz([Structure(np.asarray(num), noisy)], xyz)
    out_xyz = tmp_path / "sym.xyz"
    assert (
        main(["symmetrize", str(xyz), "--tol", "0.001", "--out", str(out_xyz), "--format", "json"])
        == 0
    )
    sym = json.loads(capsys.readouterr().out)
    assert sym["max_deviation"] < 1e-10
    assert "C2v" in [h["point_group"] for h in sym["higher_groups"]]
    again = gt.analyze(str(out_xyz), tol=1e-6)
    assert again.order >= 2


def test_cli_modes_bad_hessian_exit_1(tmp_path, capsys):
    pos, num, _, _ = water()
    xyz = tmp_path / "water.xyz"
    write_xyz([Structure(np.asarray(num), pos)], xyz)
    h_path = tmp_path / "h.npy"
    np.save(h_path, np.zeros((4, 4)))
    assert main(["modes", str(xyz), "--hessian", str(h_path)]) == 1
    assert "shape" in capsys.readouterr().err


def test_one_basis_spec_serves_characters_and_salcs():
    # the same spec gives the representation and the symmetry-adapted basis; the SALC
    # multiplicities equal the reduction (Cotton ch. 9: Fe d at an Oh site -> Eg + T2g,
    # the six ligand s orbitals -> A1g + Eg + T1u)
    from conftest import octahedral

    res = gt.analyze(*octahedral("Fe", "F", 2.0))
    for spec in ("orbitals:Fe=d", "orbitals:F=s", "bonds", gt.Basis.orbitals({"Fe": "spd"})):
        sab = res.symmetry_adapted_basis(spec)
        counted = res.representation(spec).irreps
        assert {k: v for k, v in sab.multiplicities.items() if v} == counted
