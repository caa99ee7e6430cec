"""Batch analysis of 10⁴ conformers of a 30-atom molecule (Td, D3h, C2v parents; half distorted).

Group ``"batch 1e4 conformers"``:

- ``ours-threads-<t>``: ``analyze_batch`` on the packed arrays (``Ragged``), t = 1 and all cores;
- ``ours-from-structures``: the same, packing the list of Structures inside the timed call;
- ``ours-loop``: ``gammatrace.analyze`` + ``vibrations()`` one structure at a time;
- ``kdtree-loop``: baseline (b) per conformer, given the parent's operations in the conformer's
  frame: test each with cKDTree, count unshifted atoms of those that hold, reduce Γ_3N.
"""

from __future__ import annotations

import functools
import os

import gammatrace as gt
import numpy as np
import pytest
from gammatrace.batch import analyze_batch, ragged_from_structures

from . import baselines
from .conftest import note
from .workloads import N_CONFORMERS, TOL, conformers, parents

GROUP = "batch 1e4 conformers"
THREADS = sorted({1, os.cpu_count() or 1})


@functools.cache
def data():
    structures, expected, which, rot, _shift = conformers(N_CONFORMERS)
    return structures, ragged_from_structures(structures), expected, which, rot


def _check(groups, expected):
    groups = np.asarray(groups, dtype=object).astype(str)
    assert groups.shape == expected.shape
    wrong = np.flatnonzero(groups != expected)
    assert len(wrong) == 0, f"{len(wrong)} conformers misassigned, first {wrong[:5]}"


@pytest.mark.headline
@pytest.mark.parametrize("threads", THREADS, ids=[f"threads-{t}" for t in THREADS])
def test_ours_batch(benchmark, threads):
    _, ragged, expected, *_ = data()
    benchmark.group = GROUP
    benchmark.name = f"ours-threads-{threads}"
    out = benchmark.pedantic(
        analyze_batch,
        args=(ragged,),
        kwargs={"tol": TOL, "n_threads": threads, "output": "dict"},
        rounds=5,
        iterations=1,
        warmup_rounds=1,
    )
    note(
        benchmark,
        kind="ours",
        threads=threads,
        n_structures=len(expected),
        per_second=len(expected) / benchmark.stats.stats.median,
    )
    _check(out["point_group"], expected)
    assert not any(out["error"])


def test_ours_batch_from_structures(benchmark):
    structures, _, expected, *_ = data()
    benchmark.group = GROUP
    benchmark.name = "ours-from-structures"
    out = benchmark.pedantic(
        analyze_batch,
        args=(structures,),
        kwargs={"tol": TOL, "output": "dict"},
        rounds=3,
        iterations=1,
    )
    note(
        benchmark,
        kind="ours",
        n_structures=len(expected),
        per_second=len(expected) / benchmark.stats.stats.median,
    )
    _check(out["point_group"], expected)


@pytest.mark.timeout(1800)
def test_ours_loop(benchmark):
    structures, _, expected, *_ = data()
    benchmark.group = GROUP
    benchmark.name = "ours-loop"

    def run():
        groups = []
        for s in structures:
            a = gt.analyze(s, tol=TOL)
            a.vibrations()
            groups.append(a.point_group)
        return groups

    groups = benchmark.pedantic(run, rounds=1, iterations=1)
    note(
        benchmark,
        kind="ours-loop",
        n_structures=len(expected),
        per_second=len(expected) / benchmark.stats.stats.median,
    )
    _check(groups, expected)


@pytest.mark.timeout(1800)
def test_kdtree_loop_baseline(benchmark):
    structures, _, expected, which, rot = data()
    par = parents()
    known = []  # per parent: operations, classes, table (from an untimed gammatrace analysis)
    for _, p in par:
        a = gt.analyze(p, tol=TOL)
        known.append((a.operation_matrices, a.op_class, a.table))
    benchmark.group = GROUP
    benchmark.name = "kdtree-loop"

    def run():
        groups = []
        for s, w, r in zip(structures, which, rot):
            ops, op_class, table = known[w]
            ops_here = r @ ops @ r.T  # the parent's operations in this conformer's frame
            x = s.positions - s.positions.mean(axis=0)
            trees = baselines._element_trees(x, s.numbers)
            chars = np.zeros(len(ops_here))
            holds = True
            for k, op in enumerate(ops_here):
                try:
                    perm = baselines.map_atoms_kdtree(x, trees, op, TOL)
                except baselines.NotASymmetry:
                    holds = False
                    break
                chars[k] = np.count_nonzero(perm == np.arange(len(x))) * np.trace(op)
            if holds:
                baselines.reduce_vibrations(table, op_class, chars)
                groups.append(par[w][0])
            else:
                groups.append("C1")
        return groups

    groups = benchmark.pedantic(run, rounds=1, iterations=1)
    note(
        benchmark,
        kind="kdtree",
        n_structures=len(expected),
        per_second=len(expected) / benchmark.stats.stats.median,
    )
    _check(groups, expected)
