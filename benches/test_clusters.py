"""Point group + Γ_3N + Γ_vib of icosahedral (Ih) and octahedral (Oh) clusters, 10³…10⁶ atoms.

Each group ``"<family> 1e<k>"`` holds, from the same run:

- ``ours``: ``gammatrace.analyze`` (detection) then ``representation("cartesian")`` and
  ``vibrations()`` — everything from coordinates only;
- ``ours-counting``: the core's unshifted-atom count for the given operations (like for like
  with the baselines);
- ``ours-detection``: the core's detection alone (``_core.find_point_group``, default
  verify-all limit), to set against ``ours-counting``;
- ``kdtree``: baseline (b), numpy + cKDTree, given the operations;
- ``dense``: baseline (a), the literal 3N × 3N matrices, given the operations (10³ only).
"""

from __future__ import annotations

import functools

import gammatrace as gt
import numpy as np
import pytest
from gammatrace import _core

from . import baselines
from .conftest import note
from .workloads import SIZES, TOL, cluster

CASES = [(family, k) for family in ("Ih", "Oh") for k in SIZES]
IDS = [f"{family}-1e{k}" for family, k in CASES]
#: rounds per size exponent: ours, baselines
ROUNDS = {3: (20, 3), 4: (10, 3), 5: (5, 2), 6: (3, 1)}
DENSE_MAX_ATOMS = 2000


def _params():
    out = []
    for (family, k), ident in zip(CASES, IDS):
        marks = [pytest.mark.timeout(3600)]
        if family == "Ih" and k == 6:
            marks.append(pytest.mark.headline)
        if k == 6:
            marks.append(pytest.mark.big)
        out.append(pytest.param(family, k, id=ident, marks=marks))
    return out


@functools.cache
def reference(family: str, k: int):
    """Untimed analysis: the operations handed to the baselines and the expected answers."""
    a = gt.analyze(cluster(family, k), tol=TOL)
    return {
        "point_group": a.point_group,
        "center": a.center,
        "ops": np.ascontiguousarray(a.operation_matrices),
        "op_class": a.op_class,
        "table": a.table,
        "gamma_3n": a.representation("cartesian").irreps,
        "gamma_vib": a.vibrations().irreps,
    }


def ours(structure):
    a = gt.analyze(structure, tol=TOL)
    return a.point_group, a.representation("cartesian").irreps, a.vibrations().irreps


def _dim(table, irreps: dict) -> int:
    dims = {ir.label: ir.dim for ir in table.irreps}
    return sum(m * dims[label] for label, m in irreps.items())


@pytest.mark.parametrize(("family", "k"), _params())
def test_ours(benchmark, family, k):
    s = cluster(family, k)
    benchmark.group = f"{family} 1e{k}"
    benchmark.name = "ours"
    pg, g3n, gvib = benchmark.pedantic(ours, args=(s,), rounds=ROUNDS[k][0], iterations=1)
    note(benchmark, family=family, n_atoms=s.n_atoms, kind="ours", point_group=pg)
    ref = reference(family, k)
    assert pg == family
    assert _dim(ref["table"], g3n) == 3 * s.n_atoms
    assert _dim(ref["table"], gvib) == 3 * s.n_atoms - 6
    assert (g3n, gvib) == (ref["gamma_3n"], ref["gamma_vib"])


@pytest.mark.parametrize(("family", "k"), _params())
def test_ours_counting(benchmark, family, k):
    s = cluster(family, k)
    ref = reference(family, k)
    benchmark.group = f"{family} 1e{k}"
    benchmark.name = "ours-counting"
    center, ops = tuple(ref["center"]), ref["ops"]

    def run():
        counts = _core.count_unshifted(s.positions, center, ops, TOL)
        return counts * np.trace(ops, axis1=1, axis2=2)

    chars = benchmark.pedantic(run, rounds=ROUNDS[k][0], iterations=1)
    note(benchmark, family=family, n_atoms=s.n_atoms, kind="ours-counting")
    g3n, gvib = baselines.reduce_vibrations(ref["table"], ref["op_class"], chars)
    assert (g3n, gvib) == (ref["gamma_3n"], ref["gamma_vib"])


@pytest.mark.parametrize(("family", "k"), _params())
def test_ours_detection(benchmark, family, k):
    s = cluster(family, k)
    benchmark.group = f"{family} 1e{k}"
    benchmark.name = "ours-detection"

    def run():
        return _core.find_point_group(
            s.positions, s.numbers, TOL, _core.LINEAR_SUBGROUP_N, _core.VERIFY_ALL_LIMIT
        )

    d = benchmark.pedantic(run, rounds=ROUNDS[k][0], iterations=1)
    note(benchmark, family=family, n_atoms=s.n_atoms, kind="ours-detection")
    assert d.point_group == family
    verify_all = s.n_atoms * len(d.operations) <= _core.VERIFY_ALL_LIMIT
    assert len(d.verified) == (len(d.operations) if verify_all else 1 + len(d.generators))


@pytest.mark.parametrize(("family", "k"), _params())
def test_kdtree_baseline(benchmark, family, k):
    s = cluster(family, k)
    ref = reference(family, k)
    benchmark.group = f"{family} 1e{k}"
    benchmark.name = "kdtree"

    def run():
        chars = baselines.kdtree_cartesian_characters(
            s.positions, s.numbers, ref["center"], ref["ops"], TOL
        )
        return baselines.reduce_vibrations(ref["table"], ref["op_class"], chars)

    g3n, gvib = benchmark.pedantic(run, rounds=ROUNDS[k][1], iterations=1)
    note(benchmark, family=family, n_atoms=s.n_atoms, kind="kdtree")
    assert (g3n, gvib) == (ref["gamma_3n"], ref["gamma_vib"])


@pytest.mark.parametrize(("family", "k"), _params())
def test_dense_baseline(benchmark, family, k):
    s = cluster(family, k)
    if s.n_atoms > DENSE_MAX_ATOMS:
        pytest.skip(f"a 3N × 3N matrix of {s.n_atoms} atoms needs {72 * s.n_atoms**2 / 1e9:.0f} GB")
    ref = reference(family, k)
    benchmark.group = f"{family} 1e{k}"
    benchmark.name = "dense"

    def run():
        chars = baselines.dense_cartesian_characters(
            s.positions, s.numbers, ref["center"], ref["ops"], TOL
        )
        return baselines.reduce_vibrations(ref["table"], ref["op_class"], chars)

    g3n, gvib = benchmark.pedantic(run, rounds=ROUNDS[k][1], iterations=1)
    note(benchmark, family=family, n_atoms=s.n_atoms, kind="dense")
    assert (g3n, gvib) == (ref["gamma_3n"], ref["gamma_vib"])
