"""A single atom has a character table like any other group: K_h = O(3) through its sampling
C13 × Ci, with quadrature weights in the reduction formula, in `analyze`, `table`,
`correlate`, `sites`, `ladder` and batches."""

from __future__ import annotations

import json

import numpy as np
import pytest
from gammatrace import (
    Basis,
    BasisError,
    ReductionError,
    SymmetryError,
    TableError,
    _core,
    analyze,
)
from gammatrace.batch import analyze_batch
from gammatrace.cli import main
from gammatrace.descent import check_induced, distortion_ladder, site_analysis
from gammatrace.io import Structure
from gammatrace.spectroscopy import external_characters, rotational_freedom, vibration_count
from gammatrace.tables import LINEAR_SUBGROUP_N, correlate, get_table, subgroups

LABELS = ["Sg", "Su", "Pg", "Pu", "Dg", "Du", "Fg", "Fu", "Gg", "Gu", "Hg", "Hu"]


def _run(capsys, argv) -> tuple[int, str, str]:
    capsys.readouterr()
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def _atom_file(tmp_path, symbol="Fe") -> str:
    path = tmp_path / f"{symbol}.xyz"
    path.write_text(f"1\none {symbol} atom\n{symbol} 0.3 -1.2 2.5\n", encoding="utf-8")
    return str(path)


def _proper_angles(table) -> np.ndarray:
    """Rotation angle θ (radians) of the proper part det(R)·R of one operation per class."""
    reps = np.unique(table.operation_class, return_index=True)[1]
    ops = table.operations[reps]
    proper = np.linalg.det(ops)[:, None, None] * ops
    return np.arccos(np.clip((np.trace(proper, axis1=1, axis2=2) - 1.0) / 2.0, -1.0, 1.0))


def _chi_by_m(l: int, theta: np.ndarray) -> np.ndarray:
    # χ_l(θ) = Σ_{m=-l..l} e^{imθ} = 1 + 2 Σ_{m=1..l} cos mθ (from memory; the closed form
    # sin((2l+1)θ/2)/sin(θ/2) is in Cotton, Chemical Applications of Group Theory, 3rd ed.,
    # §9.2 on the full rotation group)
    return 1.0 + 2.0 * sum(np.cos(m * theta) for m in range(1, l + 1))


# --------------------------------------------------------------------------------------------
# The table
# --------------------------------------------------------------------------------------------


def test_k_h_characters_are_the_angular_momentum_characters():
    t = get_table("K_h")
    assert t.labels == LABELS
    assert t.order is None and t.is_spherical and not t.is_linear
    theta = _proper_angles(t)
    improper = np.array([not c.proper for c in t.classes])
    for l in range(6):
        chi = _chi_by_m(l, theta)
        np.testing.assert_allclose(t.character_matrix[t.index(LABELS[2 * l])], chi, atol=1e-12)
        np.testing.assert_allclose(
            t.character_matrix[t.index(LABELS[2 * l + 1])],
            np.where(improper, -chi, chi),
            atol=1e-12,
        )
        assert t.irreps[2 * l].dim == 2 * l + 1


def test_k_h_classes_are_those_of_o3():
    # in O(3), C(θ) ~ C(−θ) and i·C(θ) ~ i·C(−θ), nothing else (common practice): the
    # sampled group C13 × Ci is abelian, so these are its elements paired with their inverses
    core = _core.canonical_group("K_h", LINEAR_SUBGROUP_N)
    t = get_table("K_h")
    h = 2 * LINEAR_SUBGROUP_N
    assert len(t.operations) == h and np.array_equal(t.operations, core.operations)
    for k in range(h):
        same = set(np.flatnonzero(t.operation_class == t.operation_class[k]).tolist())
        assert same == {k, int(core.inverse[k])}
        assert set(np.flatnonzero(core.class_of == core.class_of[k]).tolist()) == same
    labels = [c.label for c in t.classes]
    assert labels[0] == "E" and "i" in labels
    assert sum(lab.startswith("∞C(") for lab in labels) == (LINEAR_SUBGROUP_N - 1) // 2
    assert sum(lab.startswith("∞S(") for lab in labels) == (LINEAR_SUBGROUP_N - 1) // 2


def test_k_h_rows_are_orthonormal_under_the_quadrature_weights():
    # Weyl integration formula: for class functions of SO(3),
    # ∫ f dg = (1/π) ∫_0^π f(θ) (1 − cos θ) dθ (standard; see Hamermesh, Group Theory and its
    # Application to Physical Problems, ch. 9, from memory); sampled at θ = 2πk/13 it is exact
    # for l + l' + 1 < 13
    t = get_table("K_h")
    theta = _proper_angles(t)
    h = len(t.operations)
    w = t.class_sizes * (1.0 - np.cos(theta)) / h
    np.testing.assert_allclose(t.class_weights, w, atol=1e-15)
    assert t.class_weights[0] == 0.0
    assert abs(t.class_weights.sum() - 1.0) < 1e-12
    chi = t.character_matrix
    np.testing.assert_allclose((chi * w) @ chi.T, np.eye(len(LABELS)), atol=1e-12)
    np.testing.assert_array_equal(t.norms, np.ones(len(LABELS)))


@pytest.mark.parametrize(
    "name", ["C1", "Cs", "C2v", "C5", "S8", "D6h", "D3d", "Td", "Th", "Oh", "Ih", "C∞v", "D∞h"]
)
def test_finite_tables_weigh_classes_by_size_and_reduce_as_before(name):
    t = get_table(name)
    h = len(t.operations)
    np.testing.assert_array_equal(t.class_weights, t.class_sizes / h)
    rng = np.random.default_rng(3)
    chars = rng.integers(0, 4, size=(5, len(t.labels))) @ t.character_matrix
    # the reduction formula of a finite group, n = (1/h) Σ g χ χ_i / κ (common practice)
    old = chars @ (t.character_matrix * t.class_sizes).T / (h * t.norms)
    # (the matrix is prepared once per table, so the rounding may differ in the last bits)
    np.testing.assert_allclose(t.raw_multiplicities(chars), old, rtol=0, atol=1e-12)
    np.testing.assert_array_equal(t.reduce_many(chars), np.rint(old).astype(np.int64))


def test_k_h_functions_and_activity():
    # x, y, z span l = 1 (u), the rotations l = 1 (g), r² l = 0 and the five d functions
    # l = 2 (common practice)
    t = get_table("Kh")
    funcs = {ir.label: ir.functions for ir in t.irreps}
    assert funcs["Pu"] == ("(x,y,z)",)
    assert funcs["Pg"] == ("(Rx,Ry,Rz)",)
    assert funcs["Sg"] == ("x2+y2+z2",)
    assert funcs["Dg"] == ("(2z2-x2-y2,x2-y2,xy,xz,yz)",)
    assert all(not funcs[lab] for lab in LABELS if lab not in ("Pu", "Pg", "Sg", "Dg"))
    assert t.ir_active_irreps == {"Pu"}
    assert t.raman_active_irreps == {"Sg", "Dg"}


def test_k_h_products_follow_angular_momentum_coupling():
    # l ⊗ l' = |l − l'| … l + l', parities multiply (common practice)
    t = get_table("K_h")
    assert t.decompose_product("Pu", "Pu") == {"Sg": 1, "Pg": 1, "Dg": 1}
    assert t.decompose_product("Dg", "Fu") == {"Pu": 1, "Du": 1, "Fu": 1, "Gu": 1, "Hu": 1}
    with pytest.raises(ReductionError, match=r"reaches l = 6, beyond the K_h table.s l ≤ 5"):
        t.decompose_product("Fg", "Fg")  # holds l = 6


def test_angular_momentum_six_is_refused_not_aliased():
    # χ_6 on the sampled rotations is 13 at E and 0 elsewhere: every weighted multiplicity is
    # 0, so only the check Σ n_i χ_i = χ can see it
    t = get_table("K_h")
    chi6 = _chi_by_m(6, _proper_angles(t))
    assert np.abs(t.raw_multiplicities(chi6)).max() < 1e-9
    with pytest.raises(ReductionError, match=r"outside what the K_h table resolves"):
        t.reduce(chi6)
    with pytest.raises(ReductionError, match=r"row 1 .*above l = 5"):
        t.reduce_many(np.vstack([t.character_matrix[3], chi6]))


def test_correlation_from_k_h():
    oh = correlate("K_h", "Oh")["embeddings"]
    assert len(oh) == 1
    # d orbitals in Oh: (z2, x2−y2) Eg, (xy, xz, yz) T2g (Cotton, Oh character table)
    assert oh[0]["correlation"]["Dg"] == {"Eg": 1, "T2g": 1}
    # f orbitals in Oh: A2u + T1u + T2u (from memory)
    assert oh[0]["correlation"]["Fu"] == {"A2u": 1, "T1u": 1, "T2u": 1}
    # x, y, z in Td: T2 (Cotton, Td character table); d orbitals in Ih: Hg (from memory)
    assert correlate("K_h", "Td")["embeddings"][0]["correlation"]["Pu"] == {"T2": 1}
    assert correlate("K_h", "Ih")["embeddings"][0]["correlation"]["Dg"] == {"Hg": 1}
    # z is Σu+ and (x, y) Πu in D∞h (from memory)
    assert correlate("K_h", "D∞h")["embeddings"][0]["correlation"]["Pu"] == {"Σu+": 1, "Πu": 1}
    same = correlate("K_h", "K_h")["embeddings"][0]["correlation"]
    assert same == {lab: {lab: 1} for lab in LABELS}
    with pytest.raises(TableError, match="K_h is not a subgroup of Oh"):
        correlate("Oh", "K_h")
    with pytest.raises(TableError, match="infinitely many subgroups"):
        subgroups("K_h")


# --------------------------------------------------------------------------------------------
# One atom through the library
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("symbol", ["H", "Ne", "Fe", "Xe", "U"])
def test_one_atom_is_k_h_with_a_table(symbol):
    a = analyze([symbol], [[0.3, -1.2, 2.5]])
    assert a.point_group == "K_h" and a.table is get_table("K_h")
    assert a.order is None and a.symmetry_number == 1 and not a.chiral
    d = a.to_dict()
    # the keys and values of shared/INTERFACE.md for a single atom
    assert d["point_group"] == "K_h" and d["order"] is None
    assert d["representations"]["atoms"]["irreps"] == {"Sg": 1}
    assert d["representations"]["cartesian"]["irreps"] == {"Pu": 1}
    assert d["vibrations"]["irreps"] == {} and d["vibrations"]["modes"] == 0
    assert [c["label"] for c in d["classes"]] == [c.label for c in a.table.classes]
    assert d["representations"]["atoms"]["characters"] == [1] * len(a.table.classes)
    assert [o.site_group for o in a.orbits] == ["K_h"]


def test_one_atom_detection_reports_the_whole_sampling():
    det = _core.find_point_group(
        np.array([[0.3, -1.2, 2.5]]), np.array([26]), 0.01, LINEAR_SUBGROUP_N, 2_000_000
    )
    t = get_table("K_h")
    h = len(t.operations)
    assert det.point_group == "K_h" and det.operations.shape == (h, 3, 3)
    np.testing.assert_array_equal(det.canonical_index, np.arange(h))
    np.testing.assert_array_equal(det.verified, np.arange(h))
    assert det.permutations.shape == (h, 1) and not det.permutations.any()
    assert det.max_deviation == 0.0
    std = np.einsum("ij,kjl,ml->kim", det.frame, det.operations, det.frame)
    assert np.abs(std - t.operations).max() < 1e-12
    np.testing.assert_array_equal(det.class_of, _core.canonical_group("K_h", 13).class_of)
    assert np.count_nonzero(det.proper) == h // 2


def test_orbital_shells_of_one_atom():
    # a shell of angular momentum l is D_l with parity (−1)^l (common practice)
    a = analyze(["Fe"], [[0.0, 0.0, 0.0]])
    assert a.representation("orbitals:Fe=spd").irreps == {"Sg": 1, "Pu": 1, "Dg": 1}
    assert a.representation("orbitals:Fe=f").irreps == {"Fu": 1}
    assert a.representation("orbitals:Fe=g").irreps == {"Gg": 1}
    assert a.representation("orbitals:Fe=sspdfgh").irreps == {
        "Sg": 2, "Pu": 1, "Dg": 1, "Fu": 1, "Gg": 1, "Hu": 1,
    }  # fmt: skip
    with pytest.raises(ReductionError, match="above l = 5"):
        a.representation("orbitals:Fe=si")


def test_bases_without_meaning_on_one_atom():
    a = analyze(["Ar"], [[0.0, 0.0, 0.0]])
    bonds = a.representation("bonds")
    assert bonds.irreps == {} and not bonds.characters.any()
    assert a.representation("bond_vectors").irreps == {}
    with pytest.raises(BasisError, match="single atom"):
        a.representation(Basis.vector_set(np.array([[[0.0, 0.0, 1.0]]])))
    with pytest.raises(BasisError):
        a.representation("pi")
    # the value object exists; the change of basis refuses when used
    with pytest.raises(SymmetryError, match="single atom"):
        a.symmetry_adapted_basis("atoms")
    with pytest.raises(SymmetryError, match="single atom"):
        a.symmetrize()


def test_rotations_counted_in_one_place():
    # 3N − 6, 3N − 5 for a linear molecule, none for an atom (common practice)
    kh, dinfh, c2v = get_table("K_h"), get_table("D∞h"), get_table("C2v")
    assert [rotational_freedom(t) for t in (kh, dinfh, c2v)] == [0, 2, 3]
    assert vibration_count(kh, [1]).tolist() == [0]
    assert vibration_count(dinfh, [2, 3]).tolist() == [1, 4]
    assert vibration_count(c2v, [3]).tolist() == [3]
    assert kh.reduce(external_characters(kh)) == {"Pu": 1}


def test_sites_and_site_symmetry_route_of_one_atom():
    a = analyze(["Kr"], [[1.0, 2.0, 3.0]])
    sites = site_analysis(a)
    assert [(s.size, s.site_group) for s in sites.sites] == [(1, "K_h")]
    assert len(sites.sites[0].stabiliser) == len(a.table.operations)
    ind = check_induced(a)
    assert ind.irreps == {"Pu": 1} and ind.vibrations == {}
    assert check_induced(a, "atoms").irreps == {"Sg": 1}


def test_ladder_of_one_atom_stays_k_h():
    ladder = distortion_ladder(Structure(np.array([18]), np.zeros((1, 3))), [1e-3, 0.1])
    assert [st.point_group for st in ladder.steps] == ["K_h", "K_h"]
    assert ladder.descents == []


def test_batch_rows_of_one_atom_frames():
    structures = [
        Structure(np.array([18]), np.zeros((1, 3))),
        (["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]]),
        Structure(np.array([54]), np.ones((1, 3))),
    ]
    cols = analyze_batch(structures, output="dict")
    assert list(cols["point_group"]) == ["K_h", "C2v", "K_h"]
    assert list(cols["error"]) == ["", "", ""]
    assert cols["order"].tolist() == [-1, 4, -1]
    assert cols["symmetry_number"].tolist() == [1, 2, 1]
    assert cols["chiral"].tolist() == [False, False, False]
    assert cols["n_modes"].tolist() == [0, 3, 0]
    assert cols["n_fundamentals"].tolist() == [0, 3, 0]


def test_linear_orbits_are_named_as_the_linear_groups():
    # CO2 (C=O 1.16 Å, from memory): C on the centre keeps D∞h, each O keeps C∞v
    co2 = analyze(["O", "C", "O"], [[0, 0, -1.16], [0, 0, 0], [0, 0, 1.16]])
    assert sorted((o.size, o.site_group) for o in co2.orbits) == [(1, "D∞h"), (2, "C∞v")]


# --------------------------------------------------------------------------------------------
# The command line
# --------------------------------------------------------------------------------------------


def test_cli_table_k_h_text_and_json(capsys):
    status, out, err = _run(capsys, ["table", "K_h"])
    assert status == 0, err
    head = out.splitlines()[0].split()
    assert head[:2] == ["K_h", "E"] and head[-2:] == ["rotations", "quadratic"]
    assert "i" in head and any(c.startswith("∞C(") for c in head)
    rows = {line.split()[0]: line for line in out.splitlines()[2:] if line[:1].isalpha()}
    assert set(LABELS) <= set(rows)
    assert "(x,y,z)" in rows["Pu"] and "x²+y²+z²" in rows["Sg"]
    assert "360°/13" in out and "l ≤ 5" in out
    status, out, err = _run(capsys, ["table", "Kh", "--format", "json"])
    assert status == 0, err
    d = json.loads(out)
    t = get_table("K_h")
    assert d["group"] == "K_h" and d["order"] is None
    assert [ir["label"] for ir in d["irreps"]] == LABELS
    assert [c["label"] for c in d["classes"]] == [c.label for c in t.classes]
    np.testing.assert_allclose([ir["characters"] for ir in d["irreps"]], t.character_matrix)
    np.testing.assert_allclose(d["weights"], t.class_weights)
    assert next(ir for ir in d["irreps"] if ir["label"] == "Pg")["functions"] == ["(Rx,Ry,Rz)"]


def test_cli_analyze_one_atom_json(tmp_path, capsys):
    status, out, err = _run(capsys, ["analyze", _atom_file(tmp_path), "--format", "json"])
    assert status == 0, err
    d = json.loads(out)
    assert d["point_group"] == "K_h" and d["order"] is None and d["n_atoms"] == 1
    assert d["representations"]["atoms"]["irreps"] == {"Sg": 1}
    assert d["representations"]["cartesian"]["irreps"] == {"Pu": 1}
    assert d["vibrations"]["irreps"] == {} and d["vibrations"]["modes"] == 0
    assert d["symmetry_number"] == 1 and d["chiral"] is False
    status, out, err = _run(
        capsys, ["analyze", _atom_file(tmp_path), "--basis", "orbitals:Fe=spd", "--brief"]
    )
    assert status == 0, err
    assert "Sg + Pu + Dg" in out


def test_cli_correlate_sites_and_ladder_on_one_atom(tmp_path, capsys):
    status, out, err = _run(capsys, ["correlate", "K_h", "Oh", "--format", "json"])
    assert status == 0, err
    assert json.loads(out)["embeddings"][0]["correlation"]["Dg"] == {"Eg": 1, "T2g": 1}
    status, out, err = _run(capsys, ["correlate", "Oh", "K_h"])
    assert status == 1 and "not a subgroup" in err and "Traceback" not in err
    path = _atom_file(tmp_path, "Ne")
    status, out, err = _run(capsys, ["sites", path, "--induced", "--format", "json"])
    assert status == 0, err
    d = json.loads(out)
    assert [s["site_group"] for s in d["sites"]] == ["K_h"]
    assert d["induced"]["irreps"] == {"Pu": 1} and d["induced"]["vibrations"] == {}
    status, out, err = _run(capsys, ["ladder", path, "--tolerances", "0.01,0.1"])
    assert status == 0, err
    assert out.count("K_h") >= 2
    status, out, err = _run(capsys, ["salc", path])
    assert status == 1 and "single atom" in err and "Traceback" not in err
