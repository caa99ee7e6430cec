"""Symmetry-adapted functions written out: function names, exact coefficients, the cutoff, the
sign of each copy, the listing limit, and the ``salc`` command's text and JSON."""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
import scipy.sparse as sp
from conftest import ase_molecule
from gammatrace.bases import Basis
from gammatrace.bases.matrices import SymmetryAdaptedBasis, load_npz
from gammatrace.bases.naming import (
    COEFFICIENT_CUTOFF,
    atom_labels,
    exact_form,
    function_names,
    harmonic_names,
)
from gammatrace.basis_change import projection_operator, symmetry_adapted_basis
from gammatrace.cli import main
from gammatrace.cli.salc import LISTING_LIMIT
from gammatrace.group import harmonics
from gammatrace.io import Structure, write_xyz
from gammatrace.io.builders import c60

# Water in the yz plane (the README's coordinates), O first.
WATER = (["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
R2, R3, R6, R12 = (np.sqrt(k) for k in (2.0, 3.0, 6.0, 12.0))


def _molecule(name):
    if name == "H2O":
        return gt.analyze(*WATER)
    return gt.analyze(*ase_molecule(name))


def _write(tmp_path, name, structure=None):
    path = tmp_path / f"{name}.xyz"
    if structure is None:
        symbols, pos = WATER if name == "H2O" else ase_molecule(name)
        structure = Structure(np.asarray(gt.io.atomic_numbers(symbols)), np.asarray(pos, float))
    write_xyz([structure], path)
    return str(path)


def _run(capsys, argv):
    status = main(argv)
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def _in_span(rows, vector):
    """Norm of the part of ``vector`` inside the span of orthonormal ``rows``."""
    return float(np.linalg.norm(rows @ vector))


# ------------------------------------------------------------------ textbook combinations


def test_water_bond_salcs_are_a1_plus_b2_with_one_over_root_two():
    # Source: F. A. Cotton, Chemical Applications of Group Theory (3rd ed.), the projection
    # operator applied to water's two O–H stretches: A1 = (1/√2)(r1 + r2), B2 = (1/√2)(r1 − r2)
    # (from memory).
    combos = _molecule("H2O").symmetry_adapted_basis("bonds").combinations()
    assert [c.irrep for c in combos] == ["A1", "B2"]
    assert [c.expression() for c in combos] == [
        "(1/√2)(σ(O1–H2) + σ(O1–H3))",
        "(1/√2)(σ(O1–H2) − σ(O1–H3))",
    ]
    for c, signs in zip(combos, ([1, 1], [1, -1])):
        assert np.allclose(c.coefficients, np.array(signs) / R2, atol=1e-12)
        assert c.exact == (2, tuple(signs))


def test_ammonia_bond_salcs_span_the_textbook_combinations():
    # Source: F. A. Cotton, Chemical Applications of Group Theory (3rd ed.), SALCs of NH3's
    # N–H bonds: A1 = (1/√3)(σ1 + σ2 + σ3); E = (1/√6)(2σ1 − σ2 − σ3), (1/√2)(σ2 − σ3) (from
    # memory). The partners of E depend on the choice of basis in E, so the test checks the
    # span, not the partners.
    a = _molecule("NH3")
    sab = a.symmetry_adapted_basis("bonds")
    combos = sab.combinations()
    assert [c.irrep for c in combos] == ["A1", "E", "E"]
    assert combos[0].expression() == "(1/√3)(σ(N1–H2) + σ(N1–H3) + σ(N1–H4))"
    x = sab.matrix.toarray()
    assert np.allclose(x @ x.T, np.eye(3), atol=1e-12)  # each SALC normalised, all orthogonal
    e_rows = x[sab.rows_of("E")]
    for t in (np.array([2.0, -1, -1]) / R6, np.array([0.0, 1, -1]) / R2):
        assert _in_span(e_rows, t) == pytest.approx(1.0, abs=1e-12)
    proj = projection_operator(a.symmetry, "bonds", "E").toarray()
    assert np.allclose(proj @ e_rows.T, e_rows.T, atol=1e-12)
    for c in combos[1:]:
        assert c.label in ("E (copy 1, partner 1)", "E (copy 1, partner 2)")
        assert c.exact is not None and c.exact[0] in (2, 6)  # forms of 1/√2 and 1/√6


def test_benzene_pi_salcs_match_the_huckel_orbitals():
    # Source: F. A. Cotton, Chemical Applications of Group Theory (3rd ed.), the π molecular
    # orbitals of benzene: A2u = (1/√6)Σφ_j, B2g = (1/√6)Σ(−1)^j φ_j, E1g and E2u pairs with
    # coefficients 2/√12, 1/√12 and 1/2 (from memory). ASE's benzene numbers the carbons in
    # order around the ring.
    a = _molecule("C6H6")
    sab = a.symmetry_adapted_basis("pi")
    assert sab.multiplicities == {"A2u": 1, "B2g": 1, "E1g": 1, "E2u": 1}
    x = sab.matrix.toarray()
    combos = sab.combinations()
    for c in combos:
        row = x[c.row]
        assert np.linalg.norm(row) == pytest.approx(1.0, abs=1e-12)
        proj = projection_operator(a.symmetry, "pi", c.irrep).toarray()
        assert np.allclose(proj @ row, row, atol=1e-12)  # lies in its irrep
        assert c.functions == tuple(f"p⊥(C{j})" for j in range(1, 7) if abs(row[j - 1]) > 1e-6)
    by = {c.irrep: c for c in combos if c.dimension == 1}
    # exactly the textbook combinations, up to overall sign (the sign rule makes it +)
    assert by["A2u"].expression() == "(1/√6)(" + " + ".join(f"p⊥(C{j})" for j in range(1, 7)) + ")"
    assert by["B2g"].expression() == "(1/√6)(p⊥(C1) − p⊥(C2) + p⊥(C3) − p⊥(C4) + p⊥(C5) − p⊥(C6))"
    theta = np.arange(6) * np.pi / 3
    textbook = {
        "E1g": (2 * np.cos(theta) / R12, 2 * np.sin(theta) / R12),
        "E2u": (2 * np.cos(2 * theta) / R12, 2 * np.sin(2 * theta) / R12),
    }
    for irrep, pair in textbook.items():
        rows = x[sab.rows_of(irrep)]
        for t in pair:
            t = t / np.linalg.norm(t)
            assert _in_span(rows, t) == pytest.approx(1.0, abs=1e-12)
        # our reference partners (x through a carbon atom): the 1/√12 and 1/2 forms
        ns = sorted(c.exact[0] for c in combos if c.irrep == irrep)
        assert ns == [4, 12]


# ------------------------------------------------------------------ function names


def test_function_names_of_every_basis_kind():
    water = gt.analyze(*WATER)
    names = {
        spec: function_names(water.resolve_basis(spec))
        for spec in ("atoms", "cartesian", "bonds", "bond_vectors", "orbitals:O=spd,H=s")
    }
    assert names["atoms"] == ["φ(O1)", "φ(H2)", "φ(H3)"]
    assert names["cartesian"] == [f"{c}({a})" for a in ("O1", "H2", "H3") for c in "xyz"]
    assert names["bonds"] == ["σ(O1–H2)", "σ(O1–H3)"]
    assert names["bond_vectors"] == ["b(O1→H2)", "b(O1→H3)"]
    assert names["orbitals:O=spd,H=s"] == [
        "s(O1)",
        "p_y(O1)",
        "p_z(O1)",
        "p_x(O1)",
        "d_xy(O1)",
        "d_yz(O1)",
        "d_z²(O1)",
        "d_xz(O1)",
        "d_x²−y²(O1)",
        "s(H2)",
        "s(H3)",
    ]
    vectors = np.zeros((3, 2, 3))
    vectors[:, 0, 2] = 1.0
    vectors[:, 1, 0] = 1.0
    assert function_names(water.resolve_basis(Basis.vector_set(vectors))) == [
        f"v{k}({a})" for a in ("O1", "H2", "H3") for k in (1, 2)
    ]
    # two shells of one l are numbered in the order given
    methane = _molecule("CH4")
    assert function_names(methane.resolve_basis("orbitals:C=ssp,H=s"))[:5] == [
        "s[1](C1)",
        "s[2](C1)",
        "p_y(C1)",
        "p_z(C1)",
        "p_x(C1)",
    ]
    # f shells follow gammatrace.group.harmonics, one name per function
    f_names = harmonic_names(3)
    assert len(f_names) == 7 and f_names[3] == "f_z³" and f_names[0] == "f_y(3x²−y²)"
    for l in range(harmonics.MAX_L + 1):
        plain = [h.replace("²", "2").replace("³", "3").replace("−", "-") for h in harmonic_names(l)]
        expected = ["s"] if l == 0 else [f"{'spdf'[l]}_{h}" for h in harmonics.harmonic_labels(l)]
        assert plain == expected


def test_pi_names_follow_the_centres():
    # formaldehyde: O, C carry the π orbital, the hydrogens do not
    a = _molecule("H2CO")
    resolved = a.resolve_basis("pi")
    symbols = a.symmetry.structure.species_symbols
    assert function_names(resolved) == [f"p⊥({symbols[j]}{j + 1})" for j in resolved.centres]
    assert function_names(resolved) == ["p⊥(O1)", "p⊥(C2)"]


def test_bond_vector_names_point_along_the_pairs():
    pairs = np.array([[1, 0], [0, 2]])
    water = gt.analyze(*WATER)
    assert function_names(water.resolve_basis(Basis.bond_vectors(pairs=pairs))) == [
        "b(H2→O1)",
        "b(O1→H3)",
    ]


def test_isotopes_are_named_by_their_species():
    hdo = gt.analyze(["O", "H", "D"], WATER[1])
    assert function_names(hdo.resolve_basis("bonds"), hdo.symmetry.structure.species_symbols) == [
        "σ(O1–H2)",
        "σ(O1–D3)",
    ]
    sab = hdo.symmetry_adapted_basis("bonds")
    assert sab.function_names == ("σ(O1–H2)", "σ(O1–D3)")
    assert atom_labels(["13C", "O", "D"]) == ["¹³C1", "O2", "D3"]


def test_names_sit_on_the_right_functions():
    # Water in the yz plane (Mulliken 1955): in C2v, x is B1, y is B2, z is A1; xy is A2,
    # xz B1, yz B2 (the C2v character table; common practice). Each single-function SALC of
    # the O orbitals must carry the name of the function the table puts in its irrep.
    sab = gt.analyze(*WATER).symmetry_adapted_basis("orbitals:O=spd")
    single = {c.functions[0]: c.irrep for c in sab.combinations() if len(c.functions) == 1}
    assert single["p_x(O1)"] == "B1" and single["p_y(O1)"] == "B2" and single["p_z(O1)"] == "A1"
    assert single["d_xy(O1)"] == "A2" and single["d_xz(O1)"] == "B1"
    assert single["d_yz(O1)"] == "B2"
    # Cartesian: the B1 displacements are the x (out-of-plane) ones only
    cart = gt.analyze(*WATER).symmetry_adapted_basis("cartesian").combinations()
    b1 = [f for c in cart if c.irrep == "B1" for f in c.functions]
    assert b1 and all(f.startswith("x(") for f in b1)


# ------------------------------------------------------------------ exact forms and cutoff


def test_exact_form_rule():
    assert exact_form([1.0]) == (1, (1,))
    assert exact_form([-1.0]) == (1, (-1,))
    assert exact_form(np.array([2, 1, -1, -2, -1, 1]) / R12) == (12, (4, 1, -1, -4, -1, 1))
    assert exact_form([0.5, np.sqrt(3) / 2]) == (4, (1, 3))
    # cos 72° is not of the form √(a/n)
    c = np.array([1.0, np.cos(np.radians(72))])
    assert exact_form(c / np.linalg.norm(c)) is None
    # off by more than the tolerance: not exact
    assert exact_form([1 / R2 + 1e-7, 1 / R2]) is None


def test_cutoff_drops_small_coefficients_only():
    small, kept = 0.5 * COEFFICIENT_CUTOFF, 2.0 * COEFFICIENT_CUTOFF
    c = np.sqrt((1.0 - small**2) / 2.0)
    rows = sp.csr_matrix(np.array([[c, c, small], [c, -c, kept], [0.0, 0.0, 1.0]]))
    sab = SymmetryAdaptedBasis(
        rows,
        ("A",),
        np.array([1]),
        np.zeros(3, dtype=np.int64),
        np.arange(3),
        np.zeros(3, dtype=np.int64),
        {"A": 3},
        {},
    )
    first, second, third = sab.combinations()
    assert first.functions == ("f1", "f2") and first.expression() == "(1/√2)(f1 + f2)"
    assert second.functions == ("f1", "f2", "f3") and second.exact is None
    assert second.expression() == "0.707 f1 − 0.707 f2 + 2.0e-06 f3"
    assert third.expression() == "f3" and third.label == "A (copy 3)"
    # a cutoff of one's own
    assert [c.expression() for c in sab.combinations(rows=[0], cutoff=0.8)] == ["0"]


def test_each_copy_starts_with_a_positive_coefficient():
    for sab in (
        gt.analyze(c60()).symmetry_adapted_basis("bonds"),
        _molecule("C6H6").symmetry_adapted_basis("cartesian"),
        _molecule("NH3").symmetry_adapted_basis("orbitals:N=spd,H=s"),
    ):
        combos = sab.combinations()
        firsts = [c for c in combos if c.partner == 0]
        assert len(firsts) == sum(sab.multiplicities.values())
        assert all(c.coefficients[0] > 0 for c in firsts)
        # flipping whole copies keeps X orthogonal
        x = sab.matrix
        assert abs(x @ x.T - sp.identity(x.shape[0])).max() < 1e-10


# ------------------------------------------------------------------ progress


def test_progress_bar_counts_every_function(capsys):
    a = gt.analyze(c60())
    sab = symmetry_adapted_basis(a.symmetry, "orbitals:C=sp", progress=True)
    err = capsys.readouterr().err
    assert "SALCs" in err and f"{sab.matrix.shape[0]}/{sab.matrix.shape[0]}" in err
    symmetry_adapted_basis(a.symmetry, "orbitals:C=sp", progress=None)  # stderr not a terminal
    symmetry_adapted_basis(a.symmetry, "orbitals:C=sp")
    assert capsys.readouterr().err == ""


# ------------------------------------------------------------------ the command


def test_cli_text_lists_benzene_pi_salcs(tmp_path, capsys):
    path = _write(tmp_path, "C6H6")
    status, out, err = _run(capsys, ["salc", path, "--basis", "pi"])
    assert status == 0 and err == ""
    lines = out.splitlines()
    assert lines[0] == f"{path}: D6h, basis pi, dimension 6, 32 nonzeros in X"
    assert lines[1] == "  Γ = B2g + E1g + A2u + E2u"
    assert lines[2].startswith("  SALCs (rows of X, normalised; coefficients below 1e-06")
    labels = [line[4:28].rstrip() for line in lines[3:]]
    assert labels == [
        "B2g",
        "E1g (copy 1, partner 1)",
        "E1g (copy 1, partner 2)",
        "A2u",
        "E2u (copy 1, partner 1)",
        "E2u (copy 1, partner 2)",
    ]
    a2u = "(1/√6)(" + " + ".join(f"p⊥(C{j})" for j in range(1, 7)) + ")"
    assert lines[6] == f"    {'A2u':<23}  {a2u}"


def test_cli_text_water_bonds(tmp_path, capsys):
    path = _write(tmp_path, "H2O")
    status, out, _ = _run(capsys, ["salc", path, "--basis", "bonds"])
    assert status == 0
    assert out.splitlines()[1:] == [
        "  Γ = A1 + B2",
        "  SALCs (rows of X, normalised; coefficients below 1e-06 left out):",
        "    A1  (1/√2)(σ(O1–H2) + σ(O1–H3))",
        "    B2  (1/√2)(σ(O1–H2) − σ(O1–H3))",
    ]


def test_cli_wraps_long_combinations(tmp_path, capsys):
    path = _write(tmp_path, "c60", c60())
    status, out, _ = _run(capsys, ["salc", path, "--basis", "bonds"])
    assert status == 0
    lines = out.splitlines()
    assert max(len(line) for line in lines[1:]) <= 100  # the first names the (long) path
    sab = gt.analyze(c60()).symmetry_adapted_basis("bonds")
    first = sab.combinations(rows=[0])[0]
    start = next(i for i, line in enumerate(lines) if line.startswith("    Ag (copy 1)"))
    column = lines[start].index("(1/√60)")
    body = [lines[start][column:]]
    k = start + 1
    while lines[k][: column + 1] == " " * column + lines[k][column]:  # continuation lines
        assert lines[k][column] != " "  # aligned under the first term
        body.append(lines[k][column:])
        k += 1
    assert len(body) > 1 and " ".join(body) == first.expression()
    assert first.expression().startswith("(1/√60)(")


def test_cli_json_gives_terms_and_keeps_the_old_keys(tmp_path, capsys):
    path = _write(tmp_path, "NH3")
    npz = tmp_path / "x.npz"
    status, out, _ = _run(
        capsys, ["salc", path, "--basis", "bonds", "--format", "json", "--out", str(npz)]
    )
    assert status == 0
    d = json.loads(out)
    for key in ("source", "point_group", "basis", "dimension", "nnz", "multiplicities", "labels"):
        assert key in d
    assert d["saved"] == str(npz) and d["listed"] is True
    assert d["listing_limit"] == LISTING_LIMIT and d["cutoff"] == COEFFICIENT_CUTOFF
    assert "matrix" not in d
    x, labels = load_npz(npz)
    x = x.toarray()
    assert len(d["salcs"]) == d["dimension"] == 3
    for s, lab in zip(d["salcs"], labels):
        assert set(s) == {"row", "irrep", "copy", "partner", "terms", "expression", "exact"}
        assert (s["irrep"], s["copy"], s["partner"]) == tuple(lab)
        assert [list(t) for t in s["terms"]] == [["index", "function", "coefficient"]] * len(
            s["terms"]
        )
        row = np.zeros(3)
        for t in s["terms"]:
            row[t["index"]] = t["coefficient"]
        assert np.allclose(row, x[s["row"]], atol=1e-11)
        n, squares = s["exact"]["n"], s["exact"]["squares"]
        assert np.allclose(
            [t["coefficient"] for t in s["terms"]],
            np.sign(squares) * np.sqrt(np.abs(squares) / n),
            atol=1e-11,
        )
    assert d["salcs"][0]["terms"][1]["function"] == "σ(N1–H3)"


def _random_atoms(n, seed=3):
    rng = np.random.default_rng(seed)
    pos = rng.uniform(-12.0, 12.0, size=(n, 3))
    return Structure(np.full(n, 6, dtype=np.int64), pos)


def test_listing_limit_counts_functions(tmp_path, capsys):
    # C1 clusters: the "atoms" basis has one function per atom
    at_limit = _write(tmp_path, "at", _random_atoms(LISTING_LIMIT))
    above = _write(tmp_path, "above", _random_atoms(LISTING_LIMIT + 1))
    status, out, _ = _run(capsys, ["salc", at_limit, "--basis", "atoms"])
    assert status == 0 and out.count("φ(C") == LISTING_LIMIT
    status, out, err = _run(capsys, ["salc", above, "--basis", "atoms"])
    assert status == 0 and "φ(" not in out and err == ""  # no bar: stderr is not a terminal
    assert (
        f"SALCs not listed ({LISTING_LIMIT + 1} functions is more than the listing limit of "
        f"{LISTING_LIMIT}; --list all writes them out); --out X.npz saves the whole basis" in out
    )
    status, out, _ = _run(capsys, ["salc", above, "--basis", "atoms", "--format", "json"])
    d = json.loads(out)
    assert d["listed"] is False and d["salcs"] is None and d["dimension"] == LISTING_LIMIT + 1
    status, out, _ = _run(capsys, ["salc", above, "--basis", "atoms", "--list", "all"])
    assert out.count("φ(C") == LISTING_LIMIT + 1
    status, out, _ = _run(capsys, ["salc", at_limit, "--basis", "atoms", "--list", "none"])
    assert "φ(" not in out and "SALCs not listed (--list none)" in out
