"""Tests of gammatrace.tables: published tables, generated families, reduction, products."""

import doctest
import json
import math

import numpy as np
import pytest
from _symmetry_helpers import member_index
from gammatrace.errors import ReductionError, TableError
from gammatrace.tables import (
    LINEAR_SUBGROUP_N,
    CharacterTable,
    ClassInfo,
    Irrep,
    get_table,
    parse_group_name,
)
from gammatrace.tables import names as names_mod
from gammatrace.tables import registry as registry_mod
from gammatrace.tables import table as table_mod
from gammatrace.tables._ops import describe
from reference_tables import LINEAR_PUBLISHED, PUBLISHED, parse_rows

FAMILIES = ["C{}", "C{}v", "C{}h", "D{}", "D{}h", "D{}d", "S{}"]


def _family_name(fam, n):
    if fam == "S{}":
        return "Ci" if n == 1 else f"S{2 * n}"
    if n == 1:
        return {"C{}": "C1", "C{}v": "Cs", "C{}h": "Cs", "D{}": "C2", "D{}h": "C2v", "D{}d": "C2h"}[
            fam
        ]
    return fam.format(n)


ALL_AXIAL = sorted({_family_name(f, n) for f in FAMILIES for n in range(1, 31)})
POLYHEDRAL = ["T", "Td", "Th", "O", "Oh", "I", "Ih"]


def _norm_functions(funcs):
    """Functions as a set of frozensets of components, so (xz,yz,xy) == (xy,xz,yz)."""
    return {frozenset(f.strip("()").split(",")) for f in funcs}


# --- published tables -------------------------------------------------------------------


@pytest.mark.parametrize("name", sorted(PUBLISHED))
def test_published_table_matches(name):
    ref = PUBLISHED[name]  # source named in reference_tables.py beside each table
    t = get_table(name)
    assert [c.label for c in t.classes] == ref["classes"]
    rows = parse_rows(ref["rows"])
    assert [ir.label for ir in t.irreps] == [r[0] for r in rows]
    for ir, (label, chars, funcs) in zip(t.irreps, rows):
        np.testing.assert_allclose(ir.characters, chars, atol=1e-12, err_msg=f"{name} {label}")
        assert _norm_functions(ir.functions) == _norm_functions(funcs), f"{name} {label}"


def test_at_least_25_published_tables():
    required = {
        "C2v",
        "C3v",
        "C4v",
        "C5v",
        "C6v",
        "C2h",
        "C3h",
        "D2h",
        "D3h",
        "D4h",
        "D5h",
        "D6h",
        "D2d",
        "D3d",
        "D4d",
        "D5d",
        "S4",
        "S6",
        "T",
        "Td",
        "Th",
        "O",
        "Oh",
        "I",
        "Ih",
    }
    assert required <= set(PUBLISHED)


@pytest.mark.parametrize("name", sorted(PUBLISHED))
def test_class_sizes_follow_label_prefix(name):
    t = get_table(name)
    for c in t.classes:
        digits = ""
        for ch in c.label:
            if not ch.isdigit():
                break
            digits += ch
        assert c.size == (int(digits) if digits else 1)


@pytest.mark.parametrize("name", sorted(LINEAR_PUBLISHED))
def test_linear_groups_match_printed_labels_and_functions(name):
    t = get_table(name)
    ref = LINEAR_PUBLISHED[name]
    labels = [ir.label for ir in t.irreps]
    for label, funcs in ref.items():
        ir = t.irreps[t.index(label)]
        assert _norm_functions(ir.functions) == _norm_functions(funcs), label
    # Printed order: Σ+, Σ-, Π, Δ, Φ, ... (and the g block before the u block for D∞h).
    # Source: Cotton, Appendix IIA, C∞v and D∞h tables  # from memory
    if name == "C∞v":
        assert labels == ["Σ+", "Σ-", "Π", "Δ", "Φ", "Γ", "H", "I"]
    else:
        assert labels[:4] == ["Σg+", "Σg-", "Πg", "Δg"]
        assert labels[8:12] == ["Σu+", "Σu-", "Πu", "Δu"]


@pytest.mark.parametrize("name", ["C∞v", "D∞h"])
def test_linear_characters_are_2cos_m_phi(name):
    # Source: Cotton, Appendix IIA, C∞v: χ_Π(C(φ)) = 2cosφ, χ_Δ = 2cos2φ, χ_Φ = 2cos3φ
    # (from memory)
    t = get_table(name)
    assert t.order is None and t.is_linear
    greek = ["Π", "Δ", "Φ", "Γ", "H", "I"]
    for m, g in enumerate(greek, start=1):
        label = g if name == "C∞v" else g + "g"
        chi = t.character_matrix[t.index(label)]
        for c, cls in enumerate(t.classes):
            if cls.proper and cls.label.lstrip("0123456789").startswith(("E", "C∞(")):
                assert math.isclose(
                    chi[c], 2 * math.cos(math.radians(m * cls.angle)), abs_tol=1e-12
                )
    assert len(t.operations) == (2 if name == "C∞v" else 4) * LINEAR_SUBGROUP_N


def test_linear_names_and_aliases():
    assert get_table("Cinfv").name == "C∞v"
    assert get_table("Dinfh").name == "D∞h"
    assert get_table("Dinfh") is get_table("D∞h")
    d = get_table("D∞h").to_dict()
    assert d["order"] is None and d["group"] == "D∞h"
    # ∞ class labels as printed tables of C∞v head them (common practice), with φ the
    # sampled angle 360°/13, 720°/13, … of the reduction
    assert [c["label"] for c in get_table("C∞v").to_dict()["classes"]][:3] == [
        "E",
        "2C∞(27.69°)",
        "2C∞(55.38°)",
    ]
    assert get_table("C∞v").classes[-1].label == "∞σv"
    assert [c.label for c in get_table("D∞h").classes][-1] == "∞σv"


def test_golden_ratio_characters_are_exact():
    phi_plus, phi_minus = (1 + 5**0.5) / 2, (1 - 5**0.5) / 2
    ih = get_table("Ih")
    t1g = ih.irreps[ih.index("T1g")].characters
    assert t1g[1] == phi_plus and t1g[2] == phi_minus  # exact, not approximately
    d5h = get_table("D5h")
    e1 = d5h.irreps[d5h.index("E1'")].characters
    assert e1[1] == -phi_minus and e1[2] == -phi_plus


# --- generated families -----------------------------------------------------------------


@pytest.mark.parametrize("name", ALL_AXIAL + POLYHEDRAL + ["C∞v", "D∞h"])
def test_orthogonality_and_dimensions(name):
    t = get_table(name)
    m, g = t.character_matrix, t.class_sizes
    h = len(t.operations)
    kappa = t.norms
    assert set(kappa) <= {1.0, 2.0}
    # Row orthogonality: (1/h) Σ g χ_i χ_j = κ_i δ_ij (real forms).  # common practice
    np.testing.assert_allclose((m * g) @ m.T / h, np.diag(kappa), atol=1e-9)
    # Column orthogonality: Σ_i χ_i(c) χ_i(c') / κ_i = (h / g_c) δ_cc'.  # common practice
    np.testing.assert_allclose((m.T / kappa) @ m, np.diag(h / g), atol=1e-8)
    assert m.shape[0] == m.shape[1]
    assert g.sum() == h
    if t.order is not None:
        assert t.order == h
    dims = np.array([ir.dim for ir in t.irreps])
    np.testing.assert_array_equal(m[:, 0], dims)
    assert math.isclose((dims**2 / kappa).sum(), h)
    assert t.classes[0].label == "E"
    assert t.irreps[0].characters == (1.0,) * len(t.classes)


@pytest.mark.parametrize("name", ALL_AXIAL + POLYHEDRAL + ["C∞v", "D∞h"])
def test_canonical_operations_form_a_group(name):
    t = get_table(name)
    ops = t.operations
    h = len(ops)
    np.testing.assert_allclose(
        ops @ np.transpose(ops, (0, 2, 1)), np.broadcast_to(np.eye(3), ops.shape), atol=1e-12
    )
    products = np.einsum("aij,bjk->abik", ops, ops).reshape(-1, 3, 3)
    idx = member_index(ops, products)  # raises if a product is not in the set
    assert len(np.unique(idx)) == h
    assert len(np.unique(member_index(ops, ops))) == h  # no duplicates


@pytest.mark.parametrize("name", ALL_AXIAL + POLYHEDRAL)
def test_class_info_describes_its_operations(name):
    t = get_table(name)
    proper, angle, _ = describe(t.operations)
    cls = t.operation_class
    for c, info in enumerate(t.classes):
        members = cls == c
        assert members.sum() == info.size
        assert (proper[members] == info.proper).all()
        np.testing.assert_allclose(angle[members], info.angle, atol=1e-9)
        assert 0.0 <= info.angle <= 180.0
    # Characters are class functions: conjugates share a class.
    g = t.operations
    conj = np.einsum("aij,bjk,alk->abil", g, g, g).reshape(-1, 3, 3)  # a b a^T
    np.testing.assert_array_equal(
        cls[member_index(g, conj)].reshape(len(g), len(g)),
        np.broadcast_to(cls, (len(g), len(g))),
    )


@pytest.mark.parametrize("n", range(1, 31))
def test_family_labels_follow_mulliken(n):
    # Source: Cotton, Appendix IIA (the Cnh, Dnd and S2n tables)  # from memory
    cnh = get_table(_family_name("C{}h", n))
    marks = {ir.label[-1] for ir in cnh.irreps}
    if n % 2 == 1:
        assert marks == {"'"} and any(ir.label.endswith("''") for ir in cnh.irreps)
    else:
        assert marks == {"g", "u"}
    if n >= 2:
        dnd = get_table(f"D{n}d")
        has_gu = all(ir.label[-1] in "gu" for ir in dnd.irreps)
        assert has_gu == (n % 2 == 1)
    s2n = get_table(_family_name("S{}", n))
    assert all(ir.label[-1] in "gu" for ir in s2n.irreps) == (n % 2 == 1)
    cnv = get_table(_family_name("C{}v", n)) if n >= 2 else None
    if cnv is not None:
        e_labels = [ir.label for ir in cnv.irreps if ir.label.startswith("E")]
        assert e_labels == (["E"] if n in (3, 4) else [f"E{k}" for k in range(1, (n - 1) // 2 + 1)])


def test_big_n_class_labels():
    # Labels for generated tables: powers with ^ (DEVELOPERS.md, "Classes").  # common practice
    d12h = [c.label for c in get_table("D12h").classes]
    assert d12h[:7] == ["E", "2C12", "2C6", "2C4", "2C3", "2C12^5", "C2"]
    s24 = [c.label for c in get_table("S24").classes]
    assert "2S24^7" in s24 and s24[-1] == "C2"
    d7h = get_table("D7h")
    assert [c.label for c in d7h.classes] == [
        "E",
        "2C7",
        "2C7^2",
        "2C7^3",
        "7C2",
        "σh",
        "2S7",
        "2S7^5",
        "2S7^3",
        "7σv",
    ]


def test_standard_frame_of_canonical_operations():
    # DEVELOPERS.md "Standard orientation": σv of Cnv contains x; C2' of Dn along x;
    # C2v σv(xz) has normal y; Cs mirror normal z.  # common practice
    c2v = get_table("C2v")
    sigma_xz = np.diag([1.0, -1.0, 1.0])
    assert c2v.classes[c2v.locate_classes(sigma_xz[None])[0]].label == "σv(xz)"
    cs = get_table("Cs")
    assert cs.classes[cs.locate_classes(np.diag([1.0, 1.0, -1.0])[None])[0]].label == "σh"
    d6h = get_table("D6h")
    c2x = np.diag([1.0, -1.0, -1.0])
    assert d6h.classes[d6h.locate_classes(c2x[None])[0]].label == "3C2'"
    assert d6h.classes[d6h.locate_classes(np.diag([1.0, -1.0, 1.0])[None])[0]].label == "3σv"
    c3v = get_table("C3v")
    assert c3v.classes[c3v.locate_classes(sigma_xz[None])[0]].label == "3σv"
    d4d = get_table("D4d")
    assert d4d.classes[d4d.locate_classes(c2x[None])[0]].label == "4C2'"
    td = get_table("Td")
    s4z = np.array([[0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], [0.0, 0.0, -1.0]])
    assert td.classes[td.locate_classes(s4z[None])[0]].label == "6S4"
    oh = get_table("Oh")
    c4z = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    assert oh.classes[oh.locate_classes(c4z[None])[0]].label == "6C4"


# --- locate_classes: exact membership only ------------------------------------------------


def test_locate_classes_finds_exact_operations_in_any_order():
    t = get_table("D6h")
    order = np.random.default_rng(7).permutation(len(t.operations))
    np.testing.assert_array_equal(t.locate_classes(t.operations[order]), t.operation_class[order])


def test_locate_classes_refuses_measured_operations_and_foreign_ones():
    # Detected operations never need matching (detection reports canonical order); a matrix
    # off by 1e-3 is not an element of the group and must not be rounded onto one.
    t = get_table("D6h")
    noisy = t.operations + np.random.default_rng(7).normal(scale=1e-3, size=t.operations.shape)
    with pytest.raises(ValueError, match="matrix 0 is not one of the 24 operations"):
        t.locate_classes(noisy)
    c2v = get_table("C2v")
    c4 = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    with pytest.raises(ValueError, match="matrix 1 is not one of the 4"):
        c2v.locate_classes(np.stack([np.eye(3), c4]))
    with pytest.raises(ValueError, match="shape"):
        c2v.locate_classes(np.eye(3))


# --- reduction ---------------------------------------------------------------------------


def test_reduce_water_cartesian():
    # Water in the yz plane (Mulliken): Γ3N = 3A1 + A2 + 2B1 + 3B2, Γvib = 2A1 + B2.
    # Source: Cotton, ch. 10 (H2O normal modes)  # from memory
    t = get_table("C2v")
    assert t.reduce([9, -1, 1, 3]) == {"A1": 3, "A2": 1, "B1": 2, "B2": 3}


def test_reduce_ammonia_and_methane_and_sf6():
    # Source: INTERFACE.md example; Herzberg, Infrared and Raman Spectra (CH4: A1+E+2T2);
    # Nakamoto (XY6: A1g+Eg+2T1u+T2g+T2u)  # from memory
    assert get_table("C3v").reduce([12, 0, 2]) == {"A1": 3, "A2": 1, "E": 4}
    td = get_table("Td")
    g3n = td.reduce([15, 0, -1, -1, 3])
    assert g3n == {"A1": 1, "E": 1, "T1": 1, "T2": 3}
    oh = get_table("Oh")
    assert oh.reduce([21, 0, -1, 3, -3, -3, -1, 0, 5, 3]) == {
        "A1g": 1,
        "Eg": 1,
        "T1g": 1,
        "T2g": 1,
        "T1u": 3,
        "T2u": 1,
    }


def test_reduce_keys_in_table_order_and_zeros_left_out():
    t = get_table("D6h")
    chars = t.character_matrix[t.index("E2u")] + 2 * t.character_matrix[t.index("A1g")]
    assert list(t.reduce(chars)) == ["A1g", "E2u"]


def test_reduce_complex_pair_counts_once():
    # A real E of C3 (a complex pair) counted once, as in printed vibrational analyses.
    # common practice
    t = get_table("C3")
    assert t.reduce(t.vector_characters) == {"A": 1, "E": 1}


def test_reduction_error_shows_residuals():
    t = get_table("C3v")
    with pytest.raises(ReductionError) as err:
        t.reduce([1, 0, 0], what="made-up")
    msg = str(err.value)
    assert "made-up" in msg and "residual" in msg and "2C3: 0" in msg and "A1 0.166667" in msg


def test_reduce_rejects_negative_and_bad_shape():
    t = get_table("C3v")
    with pytest.raises(ReductionError):
        t.reduce(-np.array(t.character_matrix[0]))
    with pytest.raises(ValueError, match="n_classes = 3"):
        t.reduce([1, 2])
    with pytest.raises(ValueError, match="NaN"):
        t.reduce([1, np.nan, 0])


def test_reduce_many_matches_reduce_and_names_bad_row():
    t = get_table("Td")
    rng = np.random.default_rng(3)
    mult = rng.integers(0, 4, size=(20, 5))
    chars = mult @ t.character_matrix
    np.testing.assert_array_equal(t.reduce_many(chars), mult)
    chars[13, 1] += 0.5
    with pytest.raises(ReductionError, match="row 13"):
        t.reduce_many(chars)


# --- products ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    "group, labels, expected",
    [
        # Source: Atkins, Child & Phillips, direct-product tables  # from memory
        ("C3v", ("E", "E"), {"A1": 1, "A2": 1, "E": 1}),
        ("Td", ("T2", "T2"), {"A1": 1, "E": 1, "T1": 1, "T2": 1}),
        ("Td", ("E", "T1"), {"T1": 1, "T2": 1}),
        ("Oh", ("T1u", "T1u"), {"A1g": 1, "Eg": 1, "T1g": 1, "T2g": 1}),
        ("D6h", ("E1u", "E1u"), {"A1g": 1, "A2g": 1, "E2g": 1}),
        ("D4h", ("Eg", "Eu"), {"A1u": 1, "A2u": 1, "B1u": 1, "B2u": 1}),
        ("Ih", ("T1u", "T1u"), {"Ag": 1, "T1g": 1, "Hg": 1}),
        ("Ih", ("T1g", "T2g"), {"Gg": 1, "Hg": 1}),
        ("C∞v", ("Π", "Π"), {"Σ+": 1, "Σ-": 1, "Δ": 1}),
        ("D∞h", ("Πu", "Πu"), {"Σg+": 1, "Σg-": 1, "Δg": 1}),
        ("C2v", ("B1", "B2"), {"A2": 1}),
        # A complex pair combined into one real E: E x E = 2A + E in C3.  # common practice
        ("C3", ("E", "E"), {"A": 2, "E": 1}),
    ],
)
def test_direct_products(group, labels, expected):
    assert get_table(group).decompose_product(*labels) == expected


@pytest.mark.parametrize(
    "group, label, sym, anti",
    [
        # Source: Herzberg, Electronic Spectra (symmetric/antisymmetric products)  # from memory
        ("C3v", "E", {"A1": 1, "E": 1}, {"A2": 1}),
        ("Oh", "T1u", {"A1g": 1, "Eg": 1, "T2g": 1}, {"T1g": 1}),
        ("Td", "E", {"A1": 1, "E": 1}, {"A2": 1}),
        ("C∞v", "Π", {"Σ+": 1, "Δ": 1}, {"Σ-": 1}),
        ("Ih", "T1u", {"Ag": 1, "Hg": 1}, {"T1g": 1}),
    ],
)
def test_symmetric_and_antisymmetric_squares(group, label, sym, anti):
    t = get_table(group)
    assert t.symmetric_square(label) == sym
    assert t.antisymmetric_square(label) == anti


@pytest.mark.parametrize(
    "group, ir, raman",
    [
        # Source: Cotton, Appendix IIA (function columns)  # from memory
        ("C2v", {"A1", "B1", "B2"}, {"A1", "A2", "B1", "B2"}),
        ("Td", {"T2"}, {"A1", "E", "T2"}),
        ("Oh", {"T1u"}, {"A1g", "Eg", "T2g"}),
        ("D6h", {"A2u", "E1u"}, {"A1g", "E1g", "E2g"}),
        ("Ih", {"T1u"}, {"Ag", "Hg"}),
        ("D∞h", {"Σu+", "Πu"}, {"Σg+", "Πg", "Δg"}),
    ],
)
def test_ir_and_raman_activity(group, ir, raman):
    t = get_table(group)
    assert t.ir_active_irreps == ir
    assert t.raman_active_irreps == raman


_LINEAR_FUNCS = {"x", "y", "z", "(x,y)", "(x,y,z)"}


@pytest.mark.parametrize("name", ALL_AXIAL + POLYHEDRAL + ["C∞v", "D∞h"])
def test_functions_agree_with_vector_and_rotation_characters(name):
    t = get_table(name)
    kinds = {"linear": set(), "rotation": set(), "quadratic": set()}
    components = []
    for ir in t.irreps:
        for f in ir.functions:
            if f in _LINEAR_FUNCS:
                kinds["linear"].add(ir.label)
                components += f.strip("()").split(",")
            elif f.lstrip("(").startswith("R"):
                kinds["rotation"].add(ir.label)
            else:
                kinds["quadratic"].add(ir.label)
    assert kinds["linear"] == t.ir_active_irreps
    assert kinds["rotation"] == set(t.reduce(t.rotation_characters))
    assert kinds["quadratic"] == t.raman_active_irreps
    assert sorted(components) == ["x", "y", "z"]


# --- output ------------------------------------------------------------------------------


def test_to_dict_matches_interface_example():
    d = get_table("C3v").to_dict()
    # Source: shared/INTERFACE.md, `table` example (and its second-round `pair` key)
    assert d["group"] == "C3v" and d["order"] == 6
    assert d["classes"][1] == {"label": "2C3", "size": 2, "proper": True, "angle": 120.0}
    assert d["classes"][2] == {"label": "3σv", "size": 3, "proper": False, "angle": 0.0}
    assert d["irreps"][0] == {
        "label": "A1",
        "dim": 1,
        "characters": [1, 1, 1],
        "functions": ["z", "x2+y2", "z2"],
        "pair": False,
    }
    assert d["irreps"][2]["functions"][:2] == ["(x,y)", "(Rx,Ry)"]
    json.dumps(get_table("Ih").to_dict())  # serialisable


def test_to_text_is_aligned_and_readable():
    text = get_table("D5h").to_text()
    lines = text.splitlines()
    assert lines[0].split()[:4] == ["D5h", "E", "2C5", "2C5²"]
    # printed forms: 2cos72° with its decimal under the table, x² for x2, primes ′ ″
    assert "2cos72°" in text and "(2cos72° = 0.618" in text and "(x²-y²,xy)" in text
    t = get_table("D5h")
    rows = lines[2 : 2 + len(t.irreps)]
    for line, ir in zip(rows, t.irreps):
        cells = line.split()
        printed = ir.label.replace("''", "″").replace("'", "′")
        assert cells[0] == printed and len(cells) >= len(t.classes) + 1
    # Character columns are right-aligned under their heads.
    head_end = lines[0].index("2C5") + len("2C5")
    assert all(line[head_end - 1] != " " for line in rows)
    # The two function columns start under their heads: z (linear) and x²+y² (quadratic).
    linear, quadratic = lines[0].index("linear, rotations"), lines[0].index("quadratic")
    a2pp = next(line for line in rows if line.startswith("A2″"))
    a1p = next(line for line in rows if line.startswith("A1′"))
    assert a2pp[linear:].strip() == "z" and a1p[quadratic:] == "x²+y²; z²"


def test_class_info_and_irrep_are_records():
    t = get_table("C2v")
    assert isinstance(t.classes[0], ClassInfo) and isinstance(t.irreps[0], Irrep)
    assert isinstance(t, CharacterTable)
    assert t.classes[2] == ClassInfo("σv(xz)", 1, False, 0.0)


def test_tables_are_cached_and_read_only():
    t = get_table("D3h")
    assert get_table("d3H") is t
    with pytest.raises(ValueError):
        t.character_matrix[0, 0] = 5.0


# --- names -------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "bad, fragment",
    [
        ("D0h", "at least 1"),
        ("C0", "at least 1"),
        ("X5", "Accepted forms"),
        ("C2x", "Accepted forms"),
        ("", "Accepted forms"),
        ("D1001h", "limit"),
        ("S3", "C3h"),
        ("S2", "Ci"),
        ("C1h", "Cs"),
        ("D1", "C2"),
        ("C3i", "S6"),
        ("D2v", "not a point group"),
        ("Cinfh", "Accepted forms"),
    ],
)
def test_bad_names_raise_table_error(bad, fragment):
    with pytest.raises(TableError, match=fragment):
        get_table(bad)


def test_parse_group_name():
    assert parse_group_name(" d6H ") == ("D6h", "Dh", 6)
    assert parse_group_name("S8") == ("S8", "S", 8)
    assert parse_group_name("C∞v").name == "C∞v"
    with pytest.raises(TableError):
        parse_group_name(5)


def test_largest_supported_n_builds():
    t = get_table(f"C{names_mod.MAX_N}")
    assert len(t.classes) == names_mod.MAX_N // 2 + 1


@pytest.mark.parametrize("module", [registry_mod, names_mod, table_mod])
def test_docstring_examples(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.failed == 0 and result.attempted > 0
