"""One source of group-theory facts: the core's canonical operations are the tables' operations,
bit for bit, and detection reports its operations in canonical order, so nothing is matched."""

from __future__ import annotations

import numpy as np
import pytest
from _symmetry_helpers import random_rotation
from gammatrace import _core, analyze
from gammatrace.analysis import DEFAULT_TOL, VERIFY_ALL_LIMIT
from gammatrace.io import as_structure
from gammatrace.tables import LINEAR_SUBGROUP_N, get_table

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
