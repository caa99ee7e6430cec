"""Tests of gammatrace.tables.products: symmetric and antisymmetric powers, bands, transitions.

Sources (each check names its own):
- E. B. Wilson, J. C. Decius, P. C. Cross, Molecular Vibrations (McGraw-Hill, 1955), the
  tables of the species of overtone levels of degenerate fundamentals (appendix).
- G. Herzberg, Infrared and Raman Spectra of Polyatomic Molecules (Van Nostrand, 1945), the
  tables of species of overtone and combination levels.
- G. Herzberg, Spectra of Diatomic Molecules (Van Nostrand, 1950): the states of equivalent
  π electrons and the electric-dipole selection rules ΔΛ = 0, ±1, Σ+ ↮ Σ−, g ↔ u.
- E. U. Condon, G. H. Shortley, The Theory of Atomic Spectra (1935): the terms of p² and d².
Species lists were written down from memory of these sources; "common practice" marks facts
found in any textbook of the subject (Laporte's rule, Newton's identities, C(d+n−1, n)).
"""

from __future__ import annotations

from math import comb

import numpy as np
import pytest
from gammatrace.errors import InputError, ReductionError, TableError
from gammatrace.tables import get_table
from gammatrace.tables import products as pr

# --------------------------------------------------------------------- symmetric powers


@pytest.mark.parametrize(
    "group, label, n, expected",
    [
        # Wilson, Decius & Cross (1955), overtone species: (T1u)² = A1g + Eg + T2g in Oh
        ("Oh", "T1u", 2, {"A1g": 1, "Eg": 1, "T2g": 1}),
        # Wilson, Decius & Cross (1955): (E)² = A1 + E in C3v
        ("C3v", "E", 2, {"A1": 1, "E": 1}),
        # Wilson, Decius & Cross (1955): (E)³ = A1 + A2 + E in C3v
        ("C3v", "E", 3, {"A1": 1, "A2": 1, "E": 1}),
        # Herzberg (1945), D6h overtones: (E1u)² = A1g + E2g
        ("D6h", "E1u", 2, {"A1g": 1, "E2g": 1}),
        # Herzberg (1945), Td: (T2)² = A1 + E + T2 (2ν3 of methane), (E)² = A1 + E
        ("Td", "T2", 2, {"A1": 1, "E": 1, "T2": 1}),
        ("Td", "E", 2, {"A1": 1, "E": 1}),
        # Herzberg (1945), Td: (T2)³ = A1 + T1 + 2T2 (3ν3 of methane, printed F1, F2)
        ("Td", "T2", 3, {"A1": 1, "T1": 1, "T2": 2}),
        # Wilson, Decius & Cross (1955), Oh: (T1u)³ = A2u + 2T1u + T2u (10 states)
        ("Oh", "T1u", 3, {"A2u": 1, "T1u": 2, "T2u": 1}),
        # Herzberg (1950): Π² = Σ+ + Δ in C∞v (the symmetric part of π²)
        ("C∞v", "Π", 2, {"Σ+": 1, "Δ": 1}),
        # Herzberg (1945): (Πu)² = Σg+ + Δg in D∞h (2ν2 of CO2)
        ("D∞h", "Πu", 2, {"Σg+": 1, "Δg": 1}),
        # common practice: n quanta of a |m| = 1 vibration carry m = n, n − 2, …
        ("C∞v", "Π", 3, {"Π": 1, "Φ": 1}),
        ("C∞v", "Π", 6, {"Σ+": 1, "Δ": 1, "Γ": 1, "I": 1}),
        # Condon & Shortley: the spatially symmetric terms of p² are S and D, of d² S, D, G
        ("K_h", "Pu", 2, {"Sg": 1, "Dg": 1}),
        ("K_h", "Dg", 2, {"Sg": 1, "Dg": 1, "Gg": 1}),
        # Herzberg (1945), Ih: (T1u)² = Ag + Hg (fullerene overtones; from memory)
        ("Ih", "T1u", 2, {"Ag": 1, "Hg": 1}),
    ],
)
def test_symmetric_powers_match_published_overtone_species(group, label, n, expected):
    assert pr.symmetric_power(get_table(group), label, n) == expected


@pytest.mark.parametrize(
    "group, label, n, expected",
    [
        # Herzberg (1950): the triplet of π² (antisymmetric spatial part) is Σ−; of (πg)² in
        # O2 it is Σg− (the ground state 3Σg−)
        ("C∞v", "Π", 2, {"Σ-": 1}),
        ("D∞h", "Πg", 2, {"Σg-": 1}),
        # Condon & Shortley: the triplets of p² are P, of d² P and F
        ("K_h", "Pu", 2, {"Pg": 1}),
        ("K_h", "Dg", 2, {"Pg": 1, "Fg": 1}),
        # common practice: x·(y × z) is a pseudoscalar: Λ³ of the vector representation
        ("Oh", "T1u", 3, {"A1u": 1}),
        ("Td", "T2", 3, {"A2": 1}),
        ("K_h", "Pu", 3, {"Su": 1}),
        # common practice: Λⁿ vanishes above the dimension
        ("Oh", "Eg", 3, {}),
    ],
)
def test_antisymmetric_powers(group, label, n, expected):
    assert pr.antisymmetric_power(get_table(group), label, n) == expected


MANY_GROUPS = [
    "C1", "Cs", "Ci", "C2v", "C3", "C3v", "C4h", "C5", "C6v", "D2h", "D3d", "D4h", "D5h",
    "D6h", "D7d", "S4", "S8", "T", "Td", "Th", "O", "Oh", "I", "Ih", "C∞v", "D∞h",
]  # fmt: skip


@pytest.mark.parametrize("group", MANY_GROUPS)
def test_dimension_of_symmetric_power_is_the_monomial_count(group):
    # common practice: Sⁿ of a d-dimensional space has C(d + n − 1, n) dimensions; Λⁿ C(d, n)
    t = get_table(group)
    for ir in t.irreps:
        top = 6 if not t.is_linear else 6 // max(1, _abs_m(t, ir.label))
        for n in range(1, top + 1):
            sym = pr.symmetric_power(t, ir.label, n)
            dims = {x.label: x.dim for x in t.irreps}
            assert sum(dims[k] * v for k, v in sym.items()) == comb(ir.dim + n - 1, n)
            chi = pr.symmetric_power_characters(t, ir.label, n)
            assert chi[0] == pytest.approx(comb(ir.dim + n - 1, n))
            anti = pr.antisymmetric_power_characters(t, ir.label, n)
            assert anti[0] == pytest.approx(comb(ir.dim, n))


def _abs_m(table, label):
    reach = pr._reach(table)
    return int(reach[1][[x.label for x in table.irreps].index(label)])


@pytest.mark.parametrize("group", [*MANY_GROUPS, "K_h"])
def test_symmetric_plus_antisymmetric_square_is_the_direct_square(group):
    # common practice: Γ ⊗ Γ = [Γ²] + {Γ²}
    t = get_table(group)
    for ir in t.irreps:
        s = pr.symmetric_power_characters(t, ir.label, 2)
        a = pr.antisymmetric_power_characters(t, ir.label, 2)
        np.testing.assert_allclose(s + a, t.direct_product(ir.label, ir.label), atol=1e-12)
        # the table's own squares read the core's square map; the power map must agree
        np.testing.assert_allclose(
            s, (np.asarray(ir.characters) ** 2 + _square_chars(t, ir.label)) / 2, atol=1e-12
        )
        # l ≥ 3 (|m| ≥ 4): the square reaches l ≥ 6 (|m| ≥ 8), past what the table resolves
        if not (t.is_spherical and ir.dim > 5) and not (t.is_linear and _abs_m(t, ir.label) > 3):
            assert pr.symmetric_power(t, ir.label, 2) == t.symmetric_square(ir.label)


def _square_chars(table, label):
    chi = np.asarray(table.irreps[table.index(label)].characters)
    return chi[pr.power_classes(table, 2)]


def _h_from_eigenvalues(matrix, n):
    """Complete homogeneous symmetric polynomial of degree n in the eigenvalues of ``matrix``:
    the coefficient of tⁿ in Π_j 1 / (1 − λ_j t) (an independent route to χ(Sⁿ))."""
    series = np.zeros(n + 1, dtype=complex)
    series[0] = 1.0
    for lam in np.linalg.eigvals(matrix):
        geometric = lam ** np.arange(n + 1)
        series = np.convolve(series, geometric)[: n + 1]
    return series[n].real


@pytest.mark.parametrize("group", ["Oh", "Td", "Ih", "D6h", "C5h", "S8", "D∞h", "K_h"])
@pytest.mark.parametrize("n", [2, 3, 5])
def test_power_map_agrees_with_eigenvalues_of_the_operations(group, n):
    # The canonical operations are the vector representation Γ(x,y,z): χ(Sⁿ) from their
    # eigenvalues (no power map) must equal the power-sum recursion.
    t = get_table(group)
    reps = np.unique(t.operation_class, return_index=True)[1]
    expected = [_h_from_eigenvalues(t.operations[r], n) for r in reps]
    got = pr.symmetric_power_characters(t, t.vector_characters, n)
    np.testing.assert_allclose(got, expected, atol=1e-9)


def test_power_map_agrees_with_reference_irrep_matrices():
    # Independent route for irreps beyond the vector: the reference matrices of the
    # change-of-basis code (C60, Ih: G and H irreps of dimension 4 and 5).
    import gammatrace as gt
    from gammatrace.group.irreps import group_data
    from gammatrace.io.builders import c60

    sym = gt.analyze(c60()).symmetry
    data = group_data(sym)
    t = sym.table
    first = np.unique(sym.op_class, return_index=True)[1]
    for label, mats in zip(data.labels, data.matrices):
        for n in (2, 4):
            expected = [_h_from_eigenvalues(mats[k], n) for k in first]
            got = pr.symmetric_power_characters(t, label, n)
            np.testing.assert_allclose(got, expected, atol=1e-8, err_msg=f"{label}^{n}")


def test_power_map_of_real_classes_and_cache():
    t = get_table("C5")  # real classes join C5 with C5^4: the power map still is one class
    p2 = pr.power_classes(t, 2)
    assert p2 is pr.power_classes(t, 2)  # cached
    assert not p2.flags.writeable
    labels = [c.label for c in t.classes]
    assert [labels[c] for c in p2] == ["E", "2C5^2", "2C5"]
    assert [labels[c] for c in pr.power_classes(t, 5)] == ["E", "E", "E"]
    assert list(pr.power_classes(t, 0)) == [0, 0, 0]


def test_large_powers_stay_exact():
    # C(d + n − 1, n) states for every n; 200 quanta of an H irrep (d = 5) of Ih
    t = get_table("Ih")
    sym = pr.symmetric_power(t, "Hg", 200)
    dims = {x.label: x.dim for x in t.irreps}
    assert sum(dims[k] * v for k, v in sym.items()) == comb(204, 200)


def test_powers_beyond_the_linear_tables_are_refused():
    # Π⁷ holds |m| = 7, which C∞v's finite stand-in (|m| ≤ 6) would alias onto I
    with pytest.raises(ReductionError, match=r"\|m\| = 7"):
        pr.symmetric_power(get_table("C∞v"), "Π", 7)
    with pytest.raises(ReductionError, match="l = 6"):
        pr.symmetric_power(get_table("K_h"), "Fg", 2)
    # Λ² of Π is one-dimensional (Σ−): no |m| bound is hit even for I
    assert pr.antisymmetric_power(get_table("C∞v"), "I", 2) == {"Σ-": 1}


def test_bad_powers():
    t = get_table("Oh")
    for bad in (0, -1, pr.MAX_POWER + 1, 2.5, True, "2"):
        with pytest.raises(InputError):
            pr.symmetric_power(t, "T1u", bad)
    with pytest.raises(InputError, match="T3g"):
        pr.symmetric_power(t, "T3g", 2)


# --------------------------------------------------------------------- bands


@pytest.mark.parametrize(
    "group, spec, irreps, ir, raman",
    [
        # Herzberg (1945), Oh: 2ν(T1u) = A1g + Eg + T2g, Raman-active only
        ("Oh", "T1u^2", {"A1g": 1, "Eg": 1, "T2g": 1}, False, True),
        # Herzberg (1945), Td: ν(A1) + ν(T2) = T2 and 2ν(T2) both IR and Raman active
        ("Td", "A1+T2", {"T2": 1}, True, True),
        ("Td", "T2^2", {"A1": 1, "E": 1, "T2": 1}, True, True),
        # D6h products (Herzberg 1945, D6h table): E1u ⊗ E2g = B1u + B2u + E1u, IR-active
        ("D6h", "E1u+E2g", {"B1u": 1, "B2u": 1, "E1u": 1}, True, False),
        # C3v: A1 ⊗ [E²] = A1 + E (Wilson, Decius & Cross 1955)
        ("C3v", "A1+E^2", {"A1": 1, "E": 1}, True, True),
        # C3v: E ⊗ [E²] = E ⊗ (A1 + E) = A1 + A2 + 2E (from memory)
        ("C3v", "E+E^2", {"A1": 1, "A2": 1, "E": 2}, True, True),
        # CO2: ν1 + ν3 = Σg+ ⊗ Σu+ = Σu+, IR-active (Herzberg 1945)
        ("D∞h", "Σg++Σu+", {"Σu+": 1}, True, False),
        ("D∞h", "Sigmag+ + Sigmau+", {"Σu+": 1}, True, False),
        # K_h: p ⊗ p = S + P + D (common practice: coupling two l = 1)
        ("K_h", "Pu+Pu", {"Sg": 1, "Pg": 1, "Dg": 1}, False, True),
    ],
)
def test_bands(group, spec, irreps, ir, raman):
    b = pr.band(get_table(group), spec)
    assert b.irreps == irreps
    assert (b.ir_active, b.raman_active) == (ir, raman)
    assert b.to_dict() == {
        "band": "".join(spec.split()),
        "irreps": irreps,
        "ir_active": ir,
        "raman_active": raman,
    }


def test_band_terms_and_spec_agree():
    t = get_table("D6h")
    assert pr.parse_band(t, " A1g + E2u ^3 ") == [("A1g", 1), ("E2u", 3)]
    assert pr.band(t, [("A1g", 1), ("E2u", 3)]).irreps == pr.band(t, "A1g+E2u^3").irreps
    # linear labels containing '+' are read whole
    assert pr.parse_band(get_table("D∞h"), "Σg++Σg+^2") == [("Σg+", 1), ("Σg+", 2)]


@pytest.mark.parametrize(
    "spec, fragment",
    [
        ("", "empty"),
        ("T1u^", "needs a power"),
        ("T1u^0", "at least 1"),
        ("X7+T1u", "'X7' is not an irrep"),
        ("T1u+", "not a sum of irreps"),
        ("T1u^999", "above"),
    ],
)
def test_malformed_band_specs_name_the_spec(spec, fragment):
    with pytest.raises(InputError) as err:
        pr.band(get_table("Oh"), spec)
    assert repr(spec) in str(err.value) and fragment in str(err.value)


def test_unknown_irrep_lists_the_labels():
    with pytest.raises(InputError) as err:
        pr.band(get_table("C2v"), "E^2")
    assert "A1, A2, B1, B2" in str(err.value)


# --------------------------------------------------------------------- transitions


@pytest.mark.parametrize(
    "spec, components",
    [
        # Cotton (1990), C2v table with the Mulliken axes this project uses (DEVELOPERS.md:
        # x the normal of the molecular plane, B1 ∋ x, B2 ∋ y): A1 → B1 by x, A1 → B2 by y,
        # A1 → A1 by z, A1 → A2 forbidden, A2 → B1 by y (A2 ⊗ B1 = B2), A2 → B2 by x
        ("A1->B1", ["x"]),
        ("A1->B2", ["y"]),
        ("A1->A1", ["z"]),
        ("A1->A2", []),
        ("A2->B1", ["y"]),
        ("A2->B2", ["x"]),
        ("B1->B2", []),
    ],
)
def test_c2v_transitions(spec, components):
    tr = pr.transition(get_table("C2v"), spec)
    assert list(tr.components) == components
    assert tr.allowed == bool(components)


def test_laporte_rule_in_oh():
    # common practice (Laporte): with a centre of symmetry, g ↔ g and u ↔ u are forbidden;
    # octahedral d–d transitions (all g → g) are parity-forbidden.
    t = get_table("Oh")
    labels = [ir.label for ir in t.irreps]
    for a in labels:
        for b in labels:
            tr = pr.transition(t, a, b)
            if a[-1] == b[-1]:
                assert not tr.allowed, (a, b)
    # the ground state A1g reaches only T1u (Γ(x,y,z) = T1u)
    allowed = [b for b in labels if pr.transition(t, "A1g", b).allowed]
    assert allowed == ["T1u"]
    assert pr.transition(t, "A1g->T1u").to_dict() == {
        "transition": "A1g->T1u",
        "allowed": True,
        "components": ["x", "y", "z"],
    }
    # Eg ⊗ T1u = T1u + T2u: Eg → T1u and Eg → T2u allowed, Eg → A1u forbidden (from memory)
    assert pr.transition(t, "Eg->T2u").allowed
    assert not pr.transition(t, "Eg->A1u").allowed


@pytest.mark.parametrize(
    "group, spec, components",
    [
        # Herzberg (1950): ΔΛ = 0, ±1; Σ+ ↔ Σ+ by z, Σ ↔ Π by (x, y); Σ+ ↮ Σ−; Σ ↮ Δ
        ("C∞v", "Σ+->Σ+", ["z"]),
        ("C∞v", "Σ+->Π", ["x", "y"]),
        ("C∞v", "Σ+->Σ-", []),
        ("C∞v", "Σ+->Δ", []),
        ("C∞v", "Π->Δ", ["x", "y"]),
        ("C∞v", "Π->Π", ["z"]),
        ("C∞v", "Φ->Φ", ["z"]),
        ("C∞v", "H->I", ["x", "y"]),
        # and g ↔ u only in D∞h
        ("D∞h", "Σg+->Σu+", ["z"]),
        ("D∞h", "Σg+->Πu", ["x", "y"]),
        ("D∞h", "Σg+->Πg", []),
        ("D∞h", "Σg-->Σu-", ["z"]),
        ("D∞h", "Πg->Δu", ["x", "y"]),
        # common practice for atoms: parity changes, ΔL = 0, ±1, L = 0 ↮ 0
        ("K_h", "Sg->Pu", ["x", "y", "z"]),
        ("K_h", "Sg->Su", []),
        ("K_h", "Sg->Dg", []),
        ("K_h", "Pu->Dg", ["x", "y", "z"]),
        ("K_h", "Pu->Fg", []),
        ("K_h", "Hu->Hg", ["x", "y", "z"]),
    ],
)
def test_transitions_of_the_infinite_groups(group, spec, components):
    assert list(pr.transition(get_table(group), spec).components) == components


def test_linear_transition_beyond_the_sampling_is_refused():
    # I ⊗ Π ⊗ I reaches |m| = 13 = M: the stand-in C13v would alias it onto Σ+
    with pytest.raises(ReductionError, match="13"):
        pr.transition(get_table("C∞v"), "I->I")


def test_dipole_components_follow_the_table_functions():
    assert pr.dipole_components(get_table("C2v")) == {"A1": ("z",), "B1": ("x",), "B2": ("y",)}
    assert pr.dipole_components(get_table("D6h")) == {"A2u": ("z",), "E1u": ("x", "y")}
    assert pr.dipole_components(get_table("C1")) == {"A": ("x", "y", "z")}
    assert pr.dipole_components(get_table("C2h")) == {"Au": ("z",), "Bu": ("x", "y")}


@pytest.mark.parametrize(
    "spec, fragment", [("A1g", "'->'"), ("A1g->", "'->'"), ("A1g->Q", "'Q' is not an irrep")]
)
def test_malformed_transitions(spec, fragment):
    with pytest.raises(InputError) as err:
        pr.transition(get_table("Oh"), spec)
    assert repr(spec) in str(err.value) and fragment in str(err.value)


def test_totally_symmetric_labels():
    # common practice: the totally symmetric irrep of each group
    expected = {"C2v": "A1", "Oh": "A1g", "D3h": "A1'", "C∞v": "Σ+", "D∞h": "Σg+", "K_h": "Sg"}
    for group, label in expected.items():
        assert pr.totally_symmetric(get_table(group)) == label


# --------------------------------------------------------------------- selection


def test_selection_matches_the_interface_shape():
    out = pr.selection("Oh", bands=["T1u^2"], transitions=["A1g->T1u"])
    assert out == {
        "group": "Oh",
        "bands": [
            {
                "band": "T1u^2",
                "irreps": {"A1g": 1, "Eg": 1, "T2g": 1},
                "ir_active": False,
                "raman_active": True,
            }
        ],
        "transitions": [{"transition": "A1g->T1u", "allowed": True, "components": ["x", "y", "z"]}],
    }
    assert pr.selection("Dinfh")["group"] == "D∞h"
    with pytest.raises(TableError):
        pr.selection("Q7", bands=["A^2"])


def test_table_products_refuse_what_the_linear_sampling_cannot_label():
    # C∞v is sampled by C13v, which separates |m| ≤ 6: Γ ⊗ Γ reaches |m| = 8 and would alias
    # onto H (|m| = 5); Π² = Σ+ + Δ (Herzberg, Electronic Spectra of Polyatomic Molecules,
    # products of Π states; from memory) is inside the reach
    from gammatrace.errors import ReductionError
    from gammatrace.tables import get_table

    t = get_table("C∞v")
    assert t.symmetric_square("Π") == {"Σ+": 1, "Δ": 1}
    assert t.antisymmetric_square("Γ") == {"Σ-": 1}  # Λ² of a doublet is Σ- for any |m|
    with pytest.raises(ReductionError, match=r"\|m\| = 8"):
        t.symmetric_square("Γ")
    with pytest.raises(ReductionError, match=r"\|m\| = 7"):
        t.decompose_product("Φ", "Γ")
    kh = get_table("K_h")
    assert kh.antisymmetric_square("Dg") == {"Pg": 1, "Fg": 1}  # Λ²(l=2) = l 1 + l 3
    with pytest.raises(ReductionError, match="l = 6"):
        kh.decompose_product("Fu", "Fu")
