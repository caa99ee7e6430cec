"""Complex-conjugate pairs: the ``pair`` flag, the real table's footnote and the complex form."""

import cmath
import json

import numpy as np
import pytest
from _symmetry_helpers import member_index
from gammatrace.cli import main
from gammatrace.tables import ComplexForm, Irrep, get_table
from gammatrace.tables._ops import canonical_group, multiplication_table, rotation
from gammatrace.tables.complex import format_root

COTTON = "F. A. Cotton, Chemical Applications of Group Theory, 3rd ed., Appendix IIA"

# Groups whose real tables combine complex-conjugate pairs: Cn, Cnh (n ≥ 3), S2n (2n ≥ 4),
# T and Th; every other point group has only real characters (common practice: the groups
# whose printed tables carry ε).
WITH_PAIRS = (
    [f"C{n}" for n in range(3, 13)]
    + [f"C{n}h" for n in range(3, 13)]
    + [f"S{2 * n}" for n in range(2, 13)]
    + ["T", "Th"]
)
WITHOUT_PAIRS = (
    ["C1", "Cs", "Ci", "C2", "C2h"]
    + [f"C{n}v" for n in range(2, 13)]
    + [f"D{n}{s}" for n in range(2, 13) for s in ("", "h", "d")]
    + ["Td", "O", "Oh", "I", "Ih", "C∞v", "D∞h", "K_h"]
)

EPS = cmath.exp(2j * cmath.pi / 3)


def _run(capsys, argv):
    status = main(argv)
    out, err = capsys.readouterr()
    assert status == 0, err
    return out


def _kappa(t):
    """(1/h) Σ_c g_c χ(c)², computed here from the printed characters and class sizes."""
    h = t.class_sizes.sum()
    return (t.character_matrix**2 * t.class_sizes).sum(axis=1) / h


def _n_conjugacy_classes(name):
    return len(np.unique(canonical_group(name).class_of))


# --- the pair flag and the footnote --------------------------------------------------------


@pytest.mark.parametrize("name", WITH_PAIRS)
def test_pair_flags_exactly_where_the_norm_is_two(name, capsys):
    t = get_table(name)
    kappa = _kappa(t)
    flags = [ir.pair for ir in t.irreps]
    np.testing.assert_allclose(kappa, np.where(flags, 2.0, 1.0), atol=1e-9)
    assert any(flags)
    # Each pair is two irreps and two classes of the complex group: the number of conjugacy
    # classes (the core's) is the number of real irreps plus twice the number of pairs.
    assert _n_conjugacy_classes(name) == len(flags) + sum(flags)
    assert [t.is_pair(ir.label) for ir in t.irreps] == flags
    data = json.loads(_run(capsys, ["table", name, "--format", "json"]))
    assert [ir["pair"] for ir in data["irreps"]] == flags
    # The footnote of the text table names the pairs and the 2h of the reduction formula.
    note = t.to_text().splitlines()[-1]
    pairs = [ir.label for ir in t.irreps if ir.pair]
    for label in pairs:
        assert f"1{label} and 2{label}" in note
    assert "2h" in note and "each member of the pair" in note


@pytest.mark.parametrize("name", WITHOUT_PAIRS)
def test_no_pair_flags_and_no_footnote_without_pairs(name, capsys):
    t = get_table(name)
    assert not any(ir.pair for ir in t.irreps)
    assert "complex-conjugate" not in t.to_text()
    data = json.loads(_run(capsys, ["table", name, "--format", "json"]))
    assert not any(ir["pair"] for ir in data["irreps"])
    form = t.complex_form()
    assert not form.has_pairs
    text = _run(capsys, ["table", name, "--complex"])
    assert text.startswith(t.to_text()) and "no complex-conjugate pairs" in text


def test_irrep_records_stay_four_argument_compatible():
    ir = Irrep("E", 2, (2.0, -1.0), ("(x,y)",))
    assert ir.pair is False
    assert Irrep("E", 2, (2.0, -1.0), (), True).pair is True
    with pytest.raises(KeyError, match="no irrep"):
        get_table("C3").is_pair("T")


def test_hand_reduction_of_c3_counts_each_member():
    # (18, 0) on E, 2C3: the reduction formula with the pair's norm 2h gives 6 E, which is
    # how often each of 1E and 2E occurs; the complex form, reduced with the usual
    # (1/h) Σ g χ χ*, agrees (common practice).
    t = get_table("C3")
    assert t.reduce([18, 0]) == {"A": 6, "E": 6}
    form = t.complex_form()
    chars = np.array([18, 0, 0])  # E, C3, C3^2
    sizes = np.array([c.size for c in form.classes])
    n = (form.characters.conj() * sizes) @ chars / 3
    np.testing.assert_allclose(n, [6, 6, 6], atol=1e-12)


# --- published complex tables --------------------------------------------------------------


def _eps_rows(rows):
    return np.array(rows, dtype=complex)


PUBLISHED_COMPLEX = {
    # Source: Cotton, Appendix IIA, C3 (ε = exp(2πi/3))  # from memory
    "C3": (
        ["E", "C3", "C3^2"],
        ["A", "1E", "2E"],
        [[1, 1, 1], [1, EPS, EPS.conjugate()], [1, EPS.conjugate(), EPS]],
    ),
    # Source: Cotton, Appendix IIA, C4  # from memory
    "C4": (
        ["E", "C4", "C2", "C4^3"],
        ["A", "B", "1E", "2E"],
        [[1, 1, 1, 1], [1, -1, 1, -1], [1, 1j, -1, -1j], [1, -1j, -1, 1j]],
    ),
    # Source: Cotton, Appendix IIA, T (ε = exp(2πi/3))  # from memory
    "T": (
        ["E", "4C3", "4C3^2", "3C2"],
        ["A", "1E", "2E", "T"],
        [[1, 1, 1, 1], [1, EPS, EPS.conjugate(), 1], [1, EPS.conjugate(), EPS, 1], [3, 0, 0, -1]],
    ),
}


@pytest.mark.parametrize("name", sorted(PUBLISHED_COMPLEX))
def test_published_complex_tables(name):
    classes, labels, rows = PUBLISHED_COMPLEX[name]
    form = get_table(name).complex_form()
    assert isinstance(form, ComplexForm)
    assert [c.label for c in form.classes] == classes
    assert list(form.labels) == labels
    np.testing.assert_allclose(form.characters, _eps_rows(rows), atol=1e-12)


# Printed complex tables written with ε: the columns and the rows of one pair each.
PUBLISHED_EPSILON_ROWS = [
    # Source: Cotton, Appendix IIA, C6 (ε = exp(2πi/6))  # from memory
    ("C6", "E C6 C3 C2 C3^2 C6^5", "1E1", "1 ε -ε* -1 -ε ε*"),
    ("C6", "E C6 C3 C2 C3^2 C6^5", "1E2", "1 -ε* -ε 1 -ε* -ε"),
    # Source: Cotton, Appendix IIA, C5 (ε = exp(2πi/5))  # from memory
    ("C5", "E C5 C5^2 C5^3 C5^4", "1E2", "1 ε² ε* ε ε²*"),
    # Source: Cotton, Appendix IIA, S6 (ε = exp(2πi/3))  # from memory
    ("S6", "E C3 C3^2 i S6^5 S6", "1Eu", "1 ε ε* -1 -ε -ε*"),
    # Source: Cotton, Appendix IIA, C3h (ε = exp(2πi/3))  # from memory
    ("C3h", "E C3 C3^2 σh S3 S3^5", "1E''", "1 ε ε* -1 -ε -ε*"),
    # Source: Cotton, Appendix IIA, S4  # from memory
    ("S4", "E S4 C2 S4^3", "1E", "1 i -1 -i"),
    # Source: Cotton, Appendix IIA, C4h  # from memory
    ("C4h", "E C4 C2 C4^3 i S4^3 σh S4", "1Eu", "1 i -1 -i -1 -i 1 i"),
    # Source: Cotton, Appendix IIA, S8 (ε = exp(2πi/8))  # from memory
    ("S8", "E S8 C4 S8^3 C2 S8^5 C4^3 S8^7", "1E1", "1 ε i -ε* -1 -ε -i ε*"),
]


@pytest.mark.parametrize("name, head, label, row", PUBLISHED_EPSILON_ROWS)
def test_complex_text_writes_epsilon_as_printed(name, head, label, row):
    text = get_table(name).complex_form().to_text()
    lines = text.splitlines()
    assert lines[0].split()[1:-1] == head.split()
    line = next(x for x in lines if x.split()[:1] == [label])
    assert line.split()[1 : 1 + len(head.split())] == row.split()


@pytest.mark.parametrize(
    "z, n, text",
    [
        # Roots of unity written with ε = exp(2πi/n), smallest power (common practice)
        (cmath.exp(2j * cmath.pi * 2 / 6), 6, "-ε*"),
        (cmath.exp(2j * cmath.pi * 3 / 8), 8, "-ε*"),
        (cmath.exp(2j * cmath.pi * 3 / 5), 5, "ε²*"),
        (cmath.exp(2j * cmath.pi * 3 / 7), 7, "ε³"),
        (1j, 8, "i"),
        (-1.0, 3, "-1"),
    ],
)
def test_format_root(z, n, text):
    assert format_root(z, n) == text


# --- properties of every complex form -----------------------------------------------------


@pytest.mark.parametrize("name", WITH_PAIRS)
def test_complex_rows_are_orthonormal_and_complete(name):
    form = get_table(name).complex_form()
    chi = form.characters
    sizes = np.array([c.size for c in form.classes])
    h = sizes.sum()
    assert h == len(get_table(name).operations)
    # (1/h) Σ_c g_c χ_i(c) χ_j(c)* = δ_ij  (common practice: orthogonality theorem)
    np.testing.assert_allclose((chi * sizes) @ chi.conj().T / h, np.eye(len(chi)), atol=1e-9)
    assert chi.shape[0] == chi.shape[1] == _n_conjugacy_classes(name)
    assert (np.array(form.dims) ** 2).sum() == h


@pytest.mark.parametrize("name", WITH_PAIRS)
def test_members_are_homomorphisms_and_sum_to_the_real_row(name):
    t = get_table(name)
    form = t.complex_form()
    prod, _ = multiplication_table(name)  # the core's group arithmetic
    per_op = form.characters[:, form.operation_class]  # (rows, h)
    for row, pair in zip(per_op, form.pair_of):
        if pair is not None:  # λ(a b) = λ(a) λ(b) for all a, b (common practice)
            np.testing.assert_allclose(row[prod], np.outer(row, row), atol=1e-9)
    for pair in form.pairs:
        one, two = (j for j, p in enumerate(form.pair_of) if p == pair)
        real = t.character_matrix[t.index(pair)]
        summed = form.characters[one] + form.characters[two]
        np.testing.assert_allclose(summed, real[[c.real_class for c in form.classes]], atol=1e-12)
        np.testing.assert_allclose(form.characters[one], form.characters[two].conj(), atol=1e-12)


@pytest.mark.parametrize("name", WITH_PAIRS)
def test_complex_classes_are_conjugacy_classes_with_their_inverses(name):
    t = get_table(name)
    form = t.complex_form()
    group = canonical_group(name)
    cls = form.operation_class
    # one complex class per conjugacy class of the core, inside the real class around it
    pairs = set(zip(cls.tolist(), np.asarray(group.class_of).tolist()))
    assert len(pairs) == len(form.classes) == _n_conjugacy_classes(name)
    np.testing.assert_array_equal(t.operation_class, [form.classes[c].real_class for c in cls])
    np.testing.assert_array_equal(np.bincount(cls), [c.size for c in form.classes])
    inv_cls = cls[np.asarray(group.inverse)]
    np.testing.assert_array_equal(inv_cls, [form.classes[c].inverse for c in cls])
    for j, c in enumerate(form.classes):
        back = form.classes[c.inverse]
        assert back.inverse == j
        merged = sum(1 for d in form.classes if d.real_class == c.real_class) == 2
        assert (c.inverse != j) == merged
        real = t.classes[c.real_class]
        assert (c.proper, c.angle) == (real.proper, real.angle)
        assert real.size == (2 * c.size if merged else c.size)


@pytest.mark.parametrize(
    "name, axis, angle, label",
    [
        # The printed column C_n (ε on the first member) is the counter-clockwise rotation
        # by 360°/n; in T the 4C3 column holds C3 about (1, 1, 1), x -> y -> z (common
        # practice: right-handed rotations; Cotton, Appendix IIA, from memory).
        ("C3", [0, 0, 1], 120.0, "C3"),
        ("C3", [0, 0, 1], 240.0, "C3^2"),
        ("C4", [0, 0, 1], 90.0, "C4"),
        ("C6", [0, 0, 1], 300.0, "C6^5"),
        ("T", [1, 1, 1], 120.0, "4C3"),
        ("T", [1, 1, 1], 240.0, "4C3^2"),
    ],
)
def test_complex_class_labels_name_their_operations(name, axis, angle, label):
    t = get_table(name)
    form = t.complex_form()
    k = member_index(t.operations, rotation(axis, np.radians(angle))[None])[0]
    assert form.classes[form.operation_class[k]].label == label


# --- the command line ----------------------------------------------------------------------


def test_cli_complex_json_writes_re_im_pairs(capsys):
    data = json.loads(_run(capsys, ["table", "C3", "--complex", "--format", "json"]))
    assert data["group"] == "C3" and data["order"] == 3 and data["form"] == "complex"
    assert [c["label"] for c in data["classes"]] == ["E", "C3", "C3^2"]
    assert [c["inverse"] for c in data["classes"]] == ["E", "C3^2", "C3"]
    assert data["pairs"] == [{"label": "E", "members": ["1E", "2E"]}]
    rows = {ir["label"]: ir for ir in data["irreps"]}
    assert rows["1E"]["pair_of"] == "E" and rows["A"]["pair_of"] is None
    # Cotton, Appendix IIA, C3: 1, ε, ε* with ε = exp(2πi/3)  # from memory
    got = [complex(re, im) for re, im in rows["1E"]["characters"]]
    np.testing.assert_allclose(got, [1, EPS, EPS.conjugate()], atol=1e-12)
    assert all(len(x) == 2 for ir in data["irreps"] for x in ir["characters"])


def test_cli_complex_text_and_real_footnote(capsys):
    text = _run(capsys, ["table", "C3", "--complex"])
    assert "ε = exp(2πi/3)" in text
    assert text.splitlines()[0].split() == ["C3", "E", "C3", "C3^2", "functions"]
    real = _run(capsys, ["table", "C3"])
    assert "2h" in real and "1E and 2E" in real
    # without pairs: the ordinary table, said so, in JSON with [re, im] pairs too
    plain = json.loads(_run(capsys, ["table", "D3h", "--complex", "--format", "json"]))
    assert plain["pairs"] == [] and plain["epsilon"] is None
    ordinary = get_table("D3h").to_dict()
    assert [c["label"] for c in plain["classes"]] == [c["label"] for c in ordinary["classes"]]
    for a, b in zip(plain["irreps"], ordinary["irreps"]):
        assert [x[0] for x in a["characters"]] == b["characters"]
        assert all(x[1] == 0 for x in a["characters"])
