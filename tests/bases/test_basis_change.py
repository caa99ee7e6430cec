"""Tests of sparse representation matrices, projectors and symmetry-adapted bases."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from _symmetry_helpers import PHI, TABLES, build, random_rotation, symmetry_data
from gammatrace.basis_change import (
    Basis,
    SymmetryData,
    atom_orbits,
    basis_dimension,
    characters,
    irreducible_matrices,
    isotypic_decomposition,
    load_npz,
    projection_operator,
    representation_matrices,
    representation_matrix,
    save_npz,
    symmetry_adapted_basis,
)
from gammatrace.errors import BasisError, InputError, SymmetryError
from gammatrace.group import harmonics

# One structure per group: a few special orbits plus one generic orbit (seeds in the standard
# frame of DEVELOPERS.md).
STRUCTURES = {
    "C2v": [(8, (0, 0, 0.1)), (1, (0, 0.76, -0.5)), (6, (0.4, 0.7, 1.1))],
    "C3": [(7, (0, 0, 0.1)), (6, (0.4, 0.7, 1.1)), (1, (0.9, 0.0, -0.3))],
    "C3v": [(7, (0, 0, 0.1)), (1, (0.9, 0, -0.3)), (6, (0.4, 0.7, 1.1))],
    "D6h": [(6, (1.4, 0, 0)), (1, (2.5, 0, 0)), (7, (0.5, 0.2, 1.1))],
    "Td": [(6, (0, 0, 0)), (1, (0.6, 0.6, 0.6)), (8, (0.4, 0.7, 1.7))],
    "Oh": [(16, (0, 0, 0)), (9, (1.6, 0, 0)), (8, (0.4, 0.7, 1.1))],
    "Ih": [(6, (0, 1, PHI)), (8, (0.4, 0.7, 1.1)), (26, (0, 0, 0))],
}
GROUPS = list(STRUCTURES)


def make_sym(group, rotated=False, seeds=None):
    table = TABLES[group]
    pos, num = build(table, STRUCTURES[group] if seeds is None else seeds)
    rotation = random_rotation(7) if rotated else None
    return symmetry_data(
        table, pos, num, rotation=rotation, shift=(0.3, -0.2, 0.5) if rotated else (0.0, 0.0, 0.0)
    )


def check_block_structure(sym, basis):
    """X orthonormal; X Γ Xᵀ = ⊕ D_i for every operation; traces = table characters."""
    sab = symmetry_adapted_basis(sym, basis)
    assert sp.issparse(sab.matrix)
    x = sab.matrix.toarray()
    n = x.shape[0]
    assert x.shape == (n, n)
    assert np.abs(x @ x.T - np.eye(n)).max() < 1e-10
    table = sym.table
    chars = np.asarray(table.character_matrix)[:, sym.op_class]
    ident = sab.row_irrep * (n + 1) + sab.row_copy
    same_block = ident[:, None] == ident[None, :]
    for k, gam in enumerate(representation_matrices(sym, basis)):
        b = x @ (gam.toarray() @ x.T)
        assert np.abs(b[~same_block]).max(initial=0.0) < 1e-10
        for i, label in enumerate(sab.irreps):
            rows = np.nonzero(sab.row_irrep == i)[0]
            if rows.size == 0:
                continue
            d = int(sab.dims[i])
            m = rows.size // d
            blocks = b[np.ix_(rows, rows)].reshape(m, d, m, d)[np.arange(m), :, np.arange(m), :]
            # every copy shows the same irreducible matrices
            assert np.abs(blocks - sab.irreducible_matrices[label][k]).max() < 1e-10
            assert np.allclose(np.trace(blocks, axis1=1, axis2=2), chars[i, k], atol=1e-10)
    return sab


@pytest.mark.parametrize("rotated", [False, True])
@pytest.mark.parametrize("group", GROUPS)
def test_cartesian_basis_is_orthonormal_and_block_diagonal(group, rotated):
    sym = make_sym(group, rotated)
    sab = check_block_structure(sym, "cartesian")
    # Σ m_i d_i = 3N, and the multiplicities agree with the reduction formula of the table
    n = 3 * sym.n_atoms
    assert sum(m * sab.dims[sab.irreps.index(k)] for k, m in sab.multiplicities.items()) == n


@pytest.mark.parametrize("group", ["C3v", "C3", "Oh", "Ih"])
def test_orbital_basis_is_block_diagonal(group):
    sym = make_sym(group, rotated=True)
    zs = np.unique(sym.numbers)
    shells = {
        int(z): "spdf" if i == 0 else ("s" if group == "Ih" else "sp") for i, z in enumerate(zs)
    }
    check_block_structure(sym, Basis.orbitals(shells))


def _benzene_sym():
    # C atoms on the C2' axes (x and its 60° images), in ring order; H outside them.
    ang = np.radians(60.0 * np.arange(6))
    ring_xy = np.stack([np.cos(ang), np.sin(ang), np.zeros(6)], axis=1)
    pos = np.vstack([1.397 * ring_xy, 2.481 * ring_xy])
    num = np.array([6] * 6 + [1] * 6)
    sym = symmetry_data(TABLES["D6h"], pos, num, rotation=random_rotation(11), shift=(1, 2, 3))
    ring = np.array([[i, (i + 1) % 6] for i in range(6)])
    return sym, ring


def test_bond_bases_are_block_diagonal():
    sym, ring = _benzene_sym()
    spokes = np.array([[i, 6 + i] for i in range(6)])
    pairs = np.vstack([ring, spokes[:, ::-1]])
    check_block_structure(sym, Basis.bonds(pairs))
    sab = check_block_structure(sym, Basis.bond_vectors(pairs))
    # orientation of a listed bond only changes signs of coefficients
    flipped = check_block_structure(sym, Basis.bond_vectors(pairs[:, ::-1]))
    assert sab.multiplicities == flipped.multiplicities


def test_pi_bases_are_block_diagonal():
    # benzene through the helper's D6h table, rotated and shifted: one p orbital per carbon
    sym, _ = _benzene_sym()
    sab = check_block_structure(sym, "pi")
    # Cotton, ch. 7 (benzene π MOs): A2u + B2g + E1g + E2u
    assert {k: v for k, v in sab.multiplicities.items() if v} == {
        "A2u": 1,
        "B2g": 1,
        "E1g": 1,
        "E2u": 1,
    }
    # p orbitals along two perpendicular local normals (twisted ethylene, D2d): the signs of
    # the operations that turn one orbital into ± the other follow the normals
    import gammatrace as gt
    from conftest import twisted_ethylene

    sym = gt.analyze(*twisted_ethylene()).symmetry_data()
    sab = check_block_structure(sym, "pi")
    assert {k: v for k, v in sab.multiplicities.items() if v} == {"E": 1}


def test_benzene_cc_stretches_are_a1g_b2u_e1u_e2g():
    # Source: common practice (benzene C-C stretches, Kekulé mode b2u with C2' through atoms;
    # Wilson's numbering ν14).
    sym, ring = _benzene_sym()
    sab = symmetry_adapted_basis(sym, Basis.bonds(ring))
    assert sab.multiplicities == {"A1g": 1, "E2g": 1, "B2u": 1, "E1u": 1}


def test_bond_vector_characters_count_reversed_bonds_negative():
    # A vector along a bond contributes -1 when the operation reverses the bond (DESIGN.md §2).
    sym, ring = _benzene_sym()
    chi = characters(sym, Basis.bond_vectors(ring))
    labels = [c.label for c in sym.table.classes]
    per_class = {labels[c]: chi[sym.op_class == c] for c in range(len(labels))}
    assert np.allclose(per_class["3C2''"], -2) and np.allclose(per_class["3σd"], -2)
    assert np.allclose(per_class["σh"], 6) and np.allclose(per_class["3C2'"], 0)
    traces = [
        gam.diagonal().sum() for gam in representation_matrices(sym, Basis.bond_vectors(ring))
    ]
    assert np.allclose(traces, chi)


def test_methane_ch_bonds_are_a1_plus_t2():
    # Source: Cotton, "Chemical Applications of Group Theory", ch. 8 (sp3 hybrids: A1 + T2).
    sym = make_sym("Td", rotated=True, seeds=[(6, (0, 0, 0)), (1, (0.63, 0.63, 0.63))])
    pairs = np.array([[0, k] for k in range(1, 5)])
    assert symmetry_adapted_basis(sym, Basis.bonds(pairs)).multiplicities == {"A1": 1, "T2": 1}


@pytest.mark.parametrize(
    "group, shell, expected",
    [
        # Source: Cotton, ch. 9 (crystal-field splitting of d orbitals); f: common practice.
        ("Oh", "d", {"Eg": 1, "T2g": 1}),
        ("Oh", "p", {"T1u": 1}),
        ("Oh", "f", {"A2u": 1, "T1u": 1, "T2u": 1}),
        ("Td", "d", {"E": 1, "T2": 1}),
        # Source: common practice (from memory): d -> Hg, f -> T2u + Gu in Ih.
        ("Ih", "d", {"Hg": 1}),
        ("Ih", "f", {"T2u": 1, "Gu": 1}),
        ("D6h", "d", {"A1g": 1, "E1g": 1, "E2g": 1}),
    ],
)
def test_orbitals_of_a_central_atom_split_as_published(group, shell, expected):
    sym = make_sym(group, rotated=True, seeds=[(26, (0, 0, 0))])
    sab = symmetry_adapted_basis(sym, Basis.orbitals({"Fe": shell}))
    assert sab.multiplicities == expected


@pytest.mark.parametrize("group", ["C3v", "D6h", "Oh", "Ih"])
def test_counted_characters_match_traces_and_textbook_formula(group):
    sym = make_sym(group, rotated=True)
    zs = np.unique(sym.numbers)
    basis = Basis.orbitals({int(z): "spdf" for z in zs})
    gams = representation_matrices(sym, basis)
    traces = np.array([g.diagonal().sum() for g in gams])
    assert np.allclose(traces, characters(sym, basis), atol=1e-10)
    # χ_l(θ) = sin((l+½)θ)/sin(θ/2), improper: (-1)^l χ_l(θ+180°) per unshifted atom (DESIGN §2)
    cls = sym.table.classes
    fixed = (sym.permutations == np.arange(sym.n_atoms)).sum(axis=1)
    expect = np.zeros(sym.order)
    for k in range(sym.order):
        c = cls[sym.op_class[k]]
        for l in range(4):
            theta = np.radians(c.angle if c.proper else c.angle + 180.0)
            chi = (
                2 * l + 1
                if abs(np.sin(theta / 2)) < 1e-12
                else np.sin((l + 0.5) * theta) / np.sin(theta / 2)
            )
            expect[k] += fixed[k] * (chi if c.proper else (-1) ** l * chi)
    assert np.allclose(traces, expect, atol=1e-9)
    # Cartesian: 1 + 2cosθ (proper), -1 + 2cosθ (improper) per unshifted atom
    cart = characters(sym, "cartesian")
    ang = np.radians([cls[c].angle for c in sym.op_class])
    sign = np.array([1.0 if cls[c].proper else -1.0 for c in sym.op_class])
    assert np.allclose(cart, fixed * (sign + 2 * np.cos(ang)), atol=1e-9)


def test_representation_is_a_homomorphism_with_linear_nnz():
    sym = make_sym("Oh", rotated=True)
    basis = Basis.orbitals({16: "spd", 9: "sp", 8: "s"})
    gams = representation_matrices(sym, basis)
    n = basis_dimension(sym, basis)
    ops = sym.operations
    for a in (1, 5, 17):
        for b in (2, 9, 30):
            prod = ops[a] @ ops[b]
            c = int(np.argmin(np.abs(ops - prod).reshape(len(ops), -1).max(axis=1)))
            assert abs(gams[a] @ gams[b] - gams[c]).max() < 1e-12
    per_atom = {16: 1 + 9 + 25, 9: 1 + 9, 8: 1}
    assert all(g.nnz <= sum(per_atom[int(z)] for z in sym.numbers) for g in gams)
    assert all(g.shape == (n, n) for g in gams)
    single = representation_matrix(sym, 3, basis)
    assert abs(single - gams[3]).max() == 0.0


@pytest.mark.parametrize("group", ["C3", "D6h", "Td"])
def test_isotypic_projectors_are_idempotent_orthogonal_and_complete(group):
    sym = make_sym(group, rotated=True)
    n = 3 * sym.n_atoms
    projs = {
        ir.label: projection_operator(sym, "cartesian", ir.label).toarray()
        for ir in sym.table.irreps
    }
    total = np.zeros((n, n))
    for a, pa in projs.items():
        assert np.abs(pa @ pa - pa).max() < 1e-10
        assert np.abs(pa - pa.T).max() < 1e-12
        for b, pb in projs.items():
            if a != b:
                assert np.abs(pa @ pb).max() < 1e-10
        total += pa
    assert np.abs(total - np.eye(n)).max() < 1e-10
    iso = isotypic_decomposition(sym, "cartesian")
    for label, rows in iso.items():
        r = rows.toarray()
        assert np.abs(projs[label] @ r.T - r.T).max() < 1e-10  # rows lie in the component
        assert np.isclose(np.trace(projs[label]), r.shape[0])


def test_irreducible_matrices_follow_polar_vector_partners():
    # E of C3v is taken from (x, y): the reference matrices are the operations' xy blocks.
    sym = make_sym("C3v")
    mats = irreducible_matrices(sym)
    ops = sym.table.operations[:, :2, :2]
    assert np.abs(mats["E"] - ops).max() < 1e-12
    # T1u of Ih is (x, y, z) itself
    sym = make_sym("Ih")
    assert np.abs(irreducible_matrices(sym)["T1u"] - sym.table.operations).max() < 1e-12


def test_equivalent_orbits_share_coefficients():
    # Two generic orbits of C3v: the SALCs of the second are those of the first, relabelled.
    table = TABLES["C3v"]
    seeds = [(6, (0.4, 0.7, 1.1)), (6, (0.8, 1.4, -2.2))]
    pos, num = build(table, seeds)
    sym = symmetry_data(table, pos, num)
    x = symmetry_adapted_basis(sym, "atoms").matrix.toarray()
    first, second = x[:, :6], x[:, 6:]
    used_first = np.abs(first).sum(axis=1) > 0
    # orbit 2's atoms are the images of its seed under the same operations, in the same order
    assert np.allclose(
        np.sort(np.abs(first[used_first]).sum(axis=1)),
        np.sort(np.abs(second[~used_first]).sum(axis=1)),
    )
    assert len(atom_orbits(sym)) == 2


def test_save_and_load_round_trip(tmp_path):
    sym = make_sym("C3v", rotated=True)
    sab = symmetry_adapted_basis(sym, "cartesian")
    path = tmp_path / "salc.npz"
    save_npz(path, sab.matrix, sab.labels)
    x, labels = load_npz(path)
    assert abs(x - sab.matrix).max() == 0.0
    assert labels == sab.labels
    assert abs(sp.load_npz(path) - sab.matrix).max() == 0.0  # readable by scipy alone


def test_noisy_operations_without_canonical_matrices_are_idealised():
    table = TABLES["Td"]
    pos, num = build(table, STRUCTURES["Td"])
    exact = symmetry_data(table, pos, num)
    rng = np.random.default_rng(3)
    noisy_ops = exact.operations + 1e-4 * rng.standard_normal(exact.operations.shape)

    class NoOps:
        irreps = table.irreps
        classes = table.classes
        character_matrix = table.character_matrix
        order = table.order

    sym = SymmetryData(
        pos, num, exact.center, exact.frame, noisy_ops, exact.permutations, NoOps(), exact.op_class
    )
    sab = symmetry_adapted_basis(sym, "cartesian")
    assert np.abs((sab.matrix @ sab.matrix.T).toarray() - np.eye(3 * len(num))).max() < 1e-10
    assert sab.multiplicities == symmetry_adapted_basis(exact, "cartesian").multiplicities


def test_real_harmonic_matrices_are_orthogonal_with_improper_parity():
    rng = np.random.default_rng(0)
    r = np.linalg.qr(rng.standard_normal((3, 3)))[0]
    r *= np.sign(np.linalg.det(r))
    for l in range(4):
        d = harmonics.rotation_matrices(l, np.stack([r, -r]))
        assert np.allclose(d[0] @ d[0].T, np.eye(2 * l + 1), atol=1e-12)
        assert np.allclose(d[1], (-1) ** l * d[0], atol=1e-12)
    # p functions in order (y, z, x) rotate like a displacement vector
    d1 = harmonics.rotation_matrices(1, r[None])[0]
    perm = [1, 2, 0]
    assert np.allclose(d1, r[np.ix_(perm, perm)], atol=1e-12)


def test_unknown_basis_and_bad_shells_raise_basis_error():
    sym = make_sym("C3v")
    with pytest.raises(BasisError, match="basis"):
        symmetry_adapted_basis(sym, "spherical")
    with pytest.raises(BasisError, match="q"):
        Basis.orbitals({"Fe": "spdq"})
    with pytest.raises(BasisError, match=r"outside 0\.\.6"):
        Basis.orbitals({26: [7]})
    with pytest.raises(BasisError, match="Xx"):
        Basis.orbitals({"Xx": "s"})
    with pytest.raises(BasisError, match=r"\(n_bonds, 2\)"):
        Basis.bonds(np.array([0, 1, 2]))
    # g shells are counted (Analysis.representation) but have no matrices: said when used
    g_shells = Basis.orbitals({"Fe": "spdg"})
    with pytest.raises(BasisError, match=r"l = 4.*up to l = 3"):
        symmetry_adapted_basis(sym, g_shells)


def test_elements_not_named_carry_no_orbitals():
    # the one Basis reads an orbital spec as the counting code always did: elements not named
    # (and no "*") carry nothing, so C3v's carbon atoms add no functions here
    sym = make_sym("C3v")
    n_n = int(np.sum(sym.numbers == 7))
    n_h = int(np.sum(sym.numbers == 1))
    basis = Basis.orbitals({7: "sp", 1: "s"})
    assert basis_dimension(sym, basis) == 4 * n_n + n_h
    check_block_structure(sym, basis)


def test_bonds_that_are_not_closed_raise_symmetry_error():
    sym = make_sym("C3v")
    with pytest.raises(SymmetryError, match="not closed"):
        symmetry_adapted_basis(sym, Basis.bonds(np.array([[0, 1]])))


def test_bad_symmetry_data_raises_input_error():
    sym = make_sym("C3v")
    with pytest.raises(InputError, match=r"positions: expected shape \(n_atoms, 3\)"):
        SymmetryData(
            sym.positions[:, :2],
            sym.numbers,
            sym.center,
            sym.frame,
            sym.operations,
            sym.permutations,
            sym.table,
            sym.op_class,
        )
    with pytest.raises(InputError, match="permutations"):
        SymmetryData(
            sym.positions,
            sym.numbers,
            sym.center,
            sym.frame,
            sym.operations,
            sym.permutations[:, ::2],
            sym.table,
            sym.op_class,
        )
    with pytest.raises(InputError, match="op_index"):
        representation_matrix(sym, 99, "cartesian")


# --- with the project's own character tables (gammatrace.tables) ---------------------------

PROJECT_GROUPS = [
    "C1",
    "Cs",
    "Ci",
    "C2",
    "C2v",
    "C2h",
    "D2",
    "D2h",
    "C3",
    "C3h",
    "D3d",
    "S4",
    "S6",
    "D2d",
    "C4v",
    "C5",
    "C5v",
    "D5h",
    "C6h",
    "C7",
    "D7d",
    "S8",
    "D8h",
    "T",
    "Th",
    "O",
    "I",
    "C∞v",
    "D∞h",
]


@pytest.mark.parametrize("group", PROJECT_GROUPS)
def test_project_tables_give_block_diagonal_cartesian_bases(group):
    from gammatrace.tables import get_table

    table = get_table(group)
    linear = group in ("C∞v", "D∞h")
    # a generic orbit, an orbit on z and an orbit on x (collapsed where the group allows)
    seeds = (
        [(1, (0.0, 0.0, 0.9)), (6, (0.0, 0.0, 0.0))]
        if linear
        else [(6, (0.41, 0.23, 0.87)), (8, (0.0, 0.0, 1.3)), (1, (1.7, 0.0, 0.0))]
    )
    pos, num = build(table, seeds)
    sym = symmetry_data(table, pos, num, rotation=random_rotation(13), shift=(1.0, 0.5, -2.0))
    sab = check_block_structure(sym, "cartesian")
    # the multiplicities agree with the table's own reduction of the counted characters
    chars = characters(sym, "cartesian")
    per_class = np.array([chars[sym.op_class == c][0] for c in range(len(table.classes))])
    assert sab.multiplicities == {k: v for k, v in table.reduce(per_class).items() if v}


@pytest.mark.parametrize("group", ["C9", "D∞h", "Th"])
def test_reference_matrices_are_representations_with_table_characters(group):
    # C9's E4 and D∞h's Γ, H, I (|m| = 4..6) come from the regular representation;
    # Th's Eg/Eu are complex-conjugate pairs shown as one real E.
    from gammatrace.tables import get_table

    table = get_table(group)
    pos, num = build(table, [(6, (0.41, 0.23, 0.87))])
    sym = symmetry_data(table, pos, num, rotation=random_rotation(2))
    ops = table.operations
    h = len(ops)
    mult = np.array(
        [[int(np.argmin(np.abs(ops - a @ b).reshape(h, -1).max(axis=1))) for b in ops] for a in ops]
    )
    for i, (_label, mats) in enumerate(irreducible_matrices(sym).items()):
        assert np.abs(np.einsum("aij,bjk->abik", mats, mats) - mats[mult]).max() < 1e-10
        assert np.allclose(
            np.einsum("kij,kjl->kil", mats, mats.transpose(0, 2, 1)),
            np.eye(mats.shape[1]),
            atol=1e-10,
        )
        chars = table.character_matrix[i, table.operation_class]
        assert np.allclose(np.trace(mats, axis1=1, axis2=2), chars, atol=1e-10)
