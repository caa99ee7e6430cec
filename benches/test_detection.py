"""Point-group detection next to counting the same operations (issue 14, part 1).

Each group holds, from the same run:

- ``ours-detection``: ``_core.find_point_group`` on the bare coordinates (every operation
  verified against all atoms, as in any analysis below the verify-all limit);
- ``ours-counting``: ``_core.count_unshifted`` for the operations detection found (the
  floor: one streaming pass per operation, no search, no lookup).

Groups ``detect benzene``, ``detect C60``, ``detect Ih-2057``: one structure per call.
Group ``detect C1 30 atoms x100``: 100 distinct C1 conformers per call (each its own call
into the core), plus ``ours-detection-batch``: the same 100 through
``_core.find_point_groups_batch`` on one thread (detection and the count of E, without a
Python call per structure). Per-structure times are in each record's ``extra_info``.
"""

from __future__ import annotations

import functools

import numpy as np
import pytest
from gammatrace import _core

from .conftest import note
from .workloads import TOL, c1_conformers, molecule

LINEAR_N = _core.LINEAR_SUBGROUP_N
LIMIT = _core.VERIFY_ALL_LIMIT
MOLECULES = {"benzene": "D6h", "C60": "Ih", "Ih-2057": "Ih"}


def detect(s):
    return _core.find_point_group(s.positions, s.numbers, TOL, LINEAR_N, LIMIT)


@functools.cache
def reference(name: str):
    """Untimed detection: the operations counted and the expected answers."""
    s = molecule(name)
    d = detect(s)
    ops = np.ascontiguousarray(d.operations)
    counts = _core.count_unshifted(s.positions, tuple(d.center), ops, TOL)
    return d, ops, counts


@pytest.mark.parametrize("name", list(MOLECULES))
def test_detection(benchmark, name):
    s = molecule(name)
    benchmark.group = f"detect {name}"
    benchmark.name = "ours-detection"
    d = benchmark(detect, s)
    note(benchmark, kind="ours-detection", n_atoms=s.n_atoms, order=len(d.operations))
    assert d.point_group == MOLECULES[name]
    assert len(d.verified) == len(d.operations)  # every operation checked on all atoms


@pytest.mark.parametrize("name", list(MOLECULES))
def test_counting(benchmark, name):
    s = molecule(name)
    d, ops, counts = reference(name)
    center = tuple(d.center)
    benchmark.group = f"detect {name}"
    benchmark.name = "ours-counting"
    got = benchmark(_core.count_unshifted, s.positions, center, ops, TOL)
    note(benchmark, kind="ours-counting", n_atoms=s.n_atoms, order=len(ops))
    assert got[0] == s.n_atoms
    assert np.array_equal(got, counts)
    # the permutations of the detection give the same counts
    fixed = (d.permutations == np.arange(s.n_atoms)).sum(axis=1)
    assert np.array_equal(fixed, counts[d.verified])


C1_GROUP = "detect C1 30 atoms x100"


def _per_structure(benchmark, n):
    return benchmark.stats.stats.median / n * 1e6


def test_c1_detection(benchmark):
    structures = c1_conformers()
    benchmark.group = C1_GROUP
    benchmark.name = "ours-detection"
    groups = benchmark(lambda: [detect(s).point_group for s in structures])
    note(benchmark, kind="ours-detection", n_structures=len(structures))
    benchmark.extra_info["us_per_structure"] = _per_structure(benchmark, len(structures))
    assert set(groups) == {"C1"}


def test_c1_detection_batch(benchmark):
    structures = c1_conformers()
    pos = np.ascontiguousarray(np.concatenate([s.positions for s in structures]))
    num = np.concatenate([s.numbers for s in structures])
    off = np.cumsum([0] + [s.n_atoms for s in structures]).astype(np.int64)
    benchmark.group = C1_GROUP
    benchmark.name = "ours-detection-batch"
    out = benchmark(_core.find_point_groups_batch, pos, num, off, TOL, LINEAR_N, 1)
    note(benchmark, kind="ours-detection", n_structures=len(structures), threads=1)
    benchmark.extra_info["us_per_structure"] = _per_structure(benchmark, len(structures))
    assert set(out.point_group) == {"C1"}


def test_c1_counting(benchmark):
    structures = c1_conformers()
    found = [(s, detect(s)) for s in structures]
    work = [(s.positions, tuple(d.center), np.ascontiguousarray(d.operations)) for s, d in found]
    benchmark.group = C1_GROUP
    benchmark.name = "ours-counting"
    counts = benchmark(lambda: [_core.count_unshifted(p, c, o, TOL) for p, c, o in work])
    note(benchmark, kind="ours-counting", n_structures=len(structures))
    benchmark.extra_info["us_per_structure"] = _per_structure(benchmark, len(structures))
    assert all(c.tolist() == [s.n_atoms] for c, (s, _) in zip(counts, found))
