"""Reading a multi-frame XYZ file of about 50 MB (30-atom conformers, fixed seed).

Group ``"read 50 MB xyz"``: ``ours`` (``ragged_from_file``, the Rust reader), ``ours+analyze``
(read and batch-analyse every frame), and baselines (c): ``numpy-loadtxt`` and
``pandas-read_csv``. The file is written to a temporary directory and deleted afterwards.
"""

from __future__ import annotations

import os

import numpy as np
import pytest
from gammatrace.batch import analyze_batch, ragged_from_file

from . import baselines
from .conftest import note
from .workloads import CONFORMER_ATOMS, TOL, write_conformer_xyz

GROUP = "read 50 MB xyz"


@pytest.fixture(scope="module")
def xyz_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("xyz") / "conformers.xyz"
    n_frames = write_conformer_xyz(path)
    ref = ragged_from_file(path)  # untimed reference for the checks
    yield path, n_frames, ref
    path.unlink()


def _throughput(benchmark, path, n_frames, kind):
    size = os.path.getsize(path)
    median = benchmark.stats.stats.median
    note(
        benchmark,
        kind=kind,
        n_frames=n_frames,
        file_bytes=size,
        mb_per_s=size / 1e6 / median,
    )


@pytest.mark.headline
def test_ours_read(benchmark, xyz_file):
    path, n_frames, _ = xyz_file
    benchmark.group = GROUP
    benchmark.name = "ours"
    r = benchmark.pedantic(ragged_from_file, args=(path,), rounds=5, iterations=1, warmup_rounds=1)
    _throughput(benchmark, path, n_frames, "ours")
    assert len(r) == n_frames
    assert r.positions.shape == (n_frames * CONFORMER_ATOMS, 3)
    assert not any(e is not None for e in r.errors)


def test_ours_read_and_analyze(benchmark, xyz_file):
    path, n_frames, _ = xyz_file
    benchmark.group = GROUP
    benchmark.name = "ours+analyze"
    out = benchmark.pedantic(
        analyze_batch, args=(path,), kwargs={"tol": TOL, "output": "dict"}, rounds=2, iterations=1
    )
    _throughput(benchmark, path, n_frames, "ours+analyze")
    assert len(out["point_group"]) == n_frames
    assert not any(out["error"])


@pytest.mark.timeout(1800)
def test_loadtxt_baseline(benchmark, xyz_file):
    path, n_frames, ref = xyz_file
    benchmark.group = GROUP
    benchmark.name = "numpy-loadtxt"
    _, xyz = benchmark.pedantic(
        baselines.read_xyz_loadtxt, args=(path, CONFORMER_ATOMS), rounds=1, iterations=1
    )
    _throughput(benchmark, path, n_frames, "loadtxt")
    np.testing.assert_allclose(xyz.reshape(-1, 3), ref.positions, rtol=0, atol=1e-9)


@pytest.mark.timeout(1800)
def test_pandas_baseline(benchmark, xyz_file):
    path, n_frames, ref = xyz_file
    benchmark.group = GROUP
    benchmark.name = "pandas-read_csv"
    _, xyz = benchmark.pedantic(
        baselines.read_xyz_pandas, args=(path, CONFORMER_ATOMS), rounds=3, iterations=1
    )
    _throughput(benchmark, path, n_frames, "pandas")
    np.testing.assert_allclose(xyz.reshape(-1, 3), ref.positions, rtol=0, atol=1e-9)
