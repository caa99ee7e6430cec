"""One source of group-theory facts: the core's canonical operations are the tables' operations,
bit for bit, detection reports its operations in canonical order, so nothing is matched, and
one namer in the core names detected groups, subgroups and site groups alike."""

from __future__ import annotations

import numpy as np
import pytest
from _symmetry_helpers import INV, closure, improper, member_index, random_rotation, refl, rot
from gammatrace import _core, analyze
from gammatrace.analysis import DEFAULT_TOL, VERIFY_ALL_LIMIT
from gammatrace.errors import InputError
from gammatrace.io import as_structure
from gammatrace.tables import LINEAR_SUBGROUP_N, get_table, subgroups
from gammatrace.tables.subgroups import identify_group

GROUPS = [
    "C1", "Cs", "Ci", "C2", "C7", "C2v", "C5v", "C3h", "C6h", "S4", "S6", "S10", "D2", "D5",
    "D2h", "D6h", "D7h", "D2d", "D3d", "D8d", "T", "Td", "Th", "O", "Oh", "I", "Ih", "C∞v", "D∞h",
    "K_h",
]  # fmt: skip


@pytest.mark.parametrize("name", GROUPS)
def test_table_operations_are_the_cores_bit_for_bit(name):
    core = _core.canonical_group(name, LINEAR_SUBGROUP_N)
    table = get_table(name)
    assert table.operations.dtype == core.operations.dtype == np.float64
    assert np.array_equal(table.operations, core.operations)
    assert table.operations.tobytes() == core.operations.tobytes()


@pytest.mark.parametrize("name", GROUPS)
def test_table_classes_are_unions_of_the_cores_conjugacy_classes(name):
    core = _core.canonical_group(name, LINEAR_SUBGROUP_N)
    table = get_table(name)
    for c in np.unique(core.class_of):
        assert len(set(table.operation_class[core.class_of == c].tolist())) == 1
    # a real class is a conjugacy class merged with its inverse class (common practice)
    inv_cls = table.operation_class[core.inverse]
    np.testing.assert_array_equal(inv_cls, table.operation_class)


def test_defaults_come_from_the_core():
    assert DEFAULT_TOL == _core.DEFAULT_TOLERANCE
    assert VERIFY_ALL_LIMIT == _core.VERIFY_ALL_LIMIT
    assert LINEAR_SUBGROUP_N == _core.LINEAR_SUBGROUP_N


def _ammonia():
    # NH3 (C3v), geometry from memory: N–H 1.012 Å, H–N–H 106.7°
    return ["N", "H", "H", "H"], np.array(
        [
            [0.0, 0.0, 0.0],
            [0.9377, 0.0, -0.3816],
            [-0.4689, 0.8121, -0.3816],
            [-0.4689, -0.8121, -0.3816],
        ]
    )


def _benzene():
    # C–C 1.39 Å, C–H 1.08 Å (common practice)
    ang = np.radians(60.0 * np.arange(6))
    ring = np.c_[np.cos(ang), np.sin(ang), np.zeros(6)]
    return ["C"] * 6 + ["H"] * 6, np.vstack([1.39 * ring, 2.47 * ring])


@pytest.mark.parametrize("make", [_ammonia, _benzene])
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_detected_operations_are_canonical_operations_in_order(make, seed):
    symbols, pos = make()
    q = random_rotation(seed)
    a = analyze(symbols, pos @ q.T + np.array([0.3, -1.0, 2.0]))
    table = a.table
    np.testing.assert_array_equal(a.canonical_index, np.arange(len(table.operations)))
    std = np.einsum("ij,kjl,ml->kim", a.frame, a.operation_matrices, a.frame)
    assert np.abs(std - table.operations[a.canonical_index]).max() < 1e-9
    np.testing.assert_array_equal(a.op_class, table.operation_class)


def test_detection_result_is_a_typed_frozen_record():
    symbols, pos = _ammonia()
    s = as_structure(symbols, pos)
    det = _core.find_point_group(s.positions, s.numbers, 0.01, LINEAR_SUBGROUP_N, 2_000_000)
    assert isinstance(det, _core.Detection)
    assert det.point_group == "C3v"
    assert det.operations.shape == (6, 3, 3) and det.permutations.shape == (6, 4)
    assert det.canonical_index.dtype == np.int64
    with pytest.raises(AttributeError):
        det.point_group = "C1"


# --- one namer ------------------------------------------------------------------------------

AXIAL_N = range(2, 13)
NAMED = (
    ["C1", "Cs", "Ci", "T", "Td", "Th", "O", "Oh", "I", "Ih"]
    + [f"C{n}" for n in AXIAL_N]
    + [f"C{n}v" for n in AXIAL_N]
    + [f"C{n}h" for n in AXIAL_N]
    + [f"S{2 * n}" for n in AXIAL_N]
    + [f"D{n}" for n in AXIAL_N]
    + [f"D{n}h" for n in AXIAL_N]
    + [f"D{n}d" for n in AXIAL_N]
)


def _moved(ops, q):
    return np.ascontiguousarray(np.einsum("ij,kjl,ml->kim", q, ops, q))


@pytest.mark.parametrize("name", NAMED)
def test_core_names_canonical_operations_in_any_orientation_and_order(name):
    ops = get_table(name).operations
    assert _core.identify_group(np.ascontiguousarray(ops)) == name
    for seed in (11, 12):
        q = random_rotation(seed)
        moved = _moved(ops, q)[np.random.default_rng(seed).permutation(len(ops))]
        assert _core.identify_group(moved) == name
        assert identify_group(moved) == name  # the tables' wrapper is the core's namer


def _generators(name: str, q: np.ndarray):
    """Generators of a group built from its definition, about axes turned by ``q``, and its
    order. Definitions and orders: Cotton, Chemical Applications of Group Theory, 3rd ed.,
    ch. 3 (the point groups and their systematic classification)  # from memory
    """
    u = q @ np.array([0.0, 0.0, 1.0])  # principal axis
    v = q @ np.array([1.0, 0.0, 0.0])  # a direction perpendicular to it

    def in_plane(deg):  # the direction at `deg` from v about u
        t = np.radians(deg)
        return np.cos(t) * v + np.sin(t) * np.cross(u, v)

    if name in ("C1", "Cs", "Ci"):
        return {"C1": [], "Cs": [refl(u)], "Ci": [INV]}[name], {"C1": 1, "Cs": 2, "Ci": 2}[name]
    if name[0] in "CDS" and name[1:2].isdigit():
        n = int(name[1:].rstrip("vhd"))
        kind = name[0] + name[1:].lstrip("0123456789")
        if kind == "S":  # S_2m: one improper rotation by 360°/2m
            return [improper(u, 360.0 / n)], n
        cn = rot(u, 360.0 / n)
        c2p = rot(v, 180.0)
        table = {
            "C": ([cn], n),
            "Cv": ([cn, refl(in_plane(90.0))], 2 * n),  # σv contains u and v
            "Ch": ([cn, refl(u)], 2 * n),
            "D": ([cn, c2p], 2 * n),
            "Dh": ([cn, c2p, refl(u)], 4 * n),
            # σd contains u and bisects two C2' axes (at 0° and 180°/n)
            "Dd": ([cn, c2p, refl(in_plane(90.0 / n + 90.0))], 4 * n),
        }
        return table[kind]
    # Polyhedral groups, cube / icosahedron with C2 along the coordinate axes (common practice)
    c3 = rot(q @ np.ones(3), 120.0)
    c2z = rot(u, 180.0)
    c4z = rot(u, 90.0)
    c5 = rot(q @ np.array([0.0, 1.0, (1.0 + np.sqrt(5.0)) / 2.0]), 72.0)
    return {
        "T": ([c3, c2z], 12),
        "Td": ([c3, c2z, refl(q @ np.array([1.0, -1.0, 0.0]))], 24),
        "Th": ([c3, c2z, INV], 24),
        "O": ([c3, c4z], 24),
        "Oh": ([c3, c4z, INV], 48),
        "I": ([c5, c3], 60),
        "Ih": ([c5, c3, INV], 120),
    }[name]


@pytest.mark.parametrize("name", NAMED)
def test_core_names_groups_built_from_their_definitions(name):
    for seed in (21, 22):
        gens, order = _generators(name, random_rotation(seed))
        ops = np.ascontiguousarray(closure(gens))
        assert len(ops) == order
        assert _core.identify_group(ops) == name


def test_core_refuses_sets_that_are_not_groups():
    ops = np.ascontiguousarray(get_table("D6h").operations)
    with pytest.raises(InputError, match="not among them"):
        _core.identify_group(ops[:-1])  # not closed
    with pytest.raises(InputError, match="identity"):
        _core.identify_group(ops[1:])
    with pytest.raises(InputError, match="same operation"):
        _core.identify_group(np.concatenate([ops, ops[3:4]]))
    skew = ops.copy()
    skew[2, 0, 0] *= 1.01
    with pytest.raises(InputError, match="not orthogonal"):
        _core.identify_group(skew)
    with pytest.raises(ValueError):  # InputError is a ValueError
        _core.identify_group(np.zeros((0, 3, 3)))
    with pytest.raises(ValueError, match="shape"):
        _core.identify_group(np.zeros((2, 3, 2)))


def _order_by_powers(m: np.ndarray) -> int:
    p, k = m, 1
    while np.abs(p - np.eye(3)).max() > 1e-9:
        p, k = p @ m, k + 1
        assert k <= 1000
    return k


@pytest.mark.parametrize("name", ["D6h", "Oh", "Ih", "S8", "C∞v"])
def test_core_closure_is_the_generated_subgroup(name):
    group = _core.canonical_group(name, LINEAR_SUBGROUP_N)
    ops = group.operations
    h = len(ops)
    np.testing.assert_array_equal(group.closure(group.generators), np.arange(h))
    np.testing.assert_array_equal(group.closure(np.zeros(0, dtype=np.int64)), [0])
    for k in range(h):  # a cyclic subgroup has as many members as its generator's order
        members = group.closure(np.array([k]))
        assert members.dtype == np.int64 and k in members and 0 in members
        assert len(members) == _order_by_powers(ops[k])
    rng = np.random.default_rng(5)
    for _ in range(10):  # closed under products, and a group the namer accepts
        members = group.closure(rng.choice(h, size=2))
        sub = ops[members]
        member_index(sub, np.einsum("aij,bjk->abik", sub, sub).reshape(-1, 3, 3))
        assert get_table(_core.identify_group(np.ascontiguousarray(sub))).order == len(sub)
    with pytest.raises(InputError, match="out of range"):
        group.closure(np.array([h]))
    with pytest.raises(ValueError, match="negative"):
        group.closure(np.array([-1]))


@pytest.mark.parametrize(
    "group, names",
    [
        # Subgroups of Ih ≅ A5 × C2 up to conjugacy, 22 classes  # from memory
        (
            "Ih",
            "Ih I Th T D5d D5 C5v S10 C5 D3d D3 C3v S6 C3 D2h D2 C2v C2h C2 Cs Ci C1",
        ),
        # Subgroups of Td ≅ S4 up to conjugacy, 11 classes  # from memory
        ("Td", "Td T D2d C3v S4 D2 C2v C3 C2 Cs C1"),
    ],
)
def test_subgroups_keep_their_names(group, names):
    assert sorted(s.name for s in subgroups(group)) == sorted(names.split())
