"""Reading a multi-frame XYZ file of about 50 MB (30-atom conformers, fixed seed).

Group ``"read 50 MB xyz"``: ``ours`` (``ragged_from_file``, the Rust reader), ``ours+analyze``
(read and batch-analyse every frame), and baselines (c): ``numpy-loadtxt`` and
``pandas-read_csv``. The file is written to a temporary directory and deleted afterwards.

Group ``"read 1e6 tiny frames"``: ``read_xyz_raw`` of 10⁶ one-atom frames in a fresh process;
``extra_info`` holds the peak resident memory per frame (target: ≤ 200 bytes).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap

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


TINY_FRAMES = 1_000_000
TINY_TARGET_BYTES = 200

# imports first, then the peak is reset (Linux: clear_refs "5" resets VmHWM) and the read
# is the only thing left to count
_TINY_PROBE = """
import json, sys
import gammatrace.io


def status_kb(key):
    with open("/proc/self/status") as fh:
        for line in fh:
            if line.startswith(key + ":"):
                return int(line.split()[1])


with open("/proc/self/clear_refs", "w") as fh:
    fh.write("5")
before = status_kb("VmRSS")
raw = gammatrace.io.read_xyz_raw(sys.argv[1])
print(json.dumps({"n_frames": len(raw.offsets) - 1,
                  "peak_extra_bytes": (status_kb("VmHWM") - before) * 1024}))
"""


def _read_tiny_frames(path) -> dict:
    out = subprocess.run(
        [sys.executable, "-c", textwrap.dedent(_TINY_PROBE), str(path)],
        check=True,
        capture_output=True,
        text=True,
        timeout=600,
    )
    return json.loads(out.stdout.strip().splitlines()[-1])


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc/self/status")
def test_ours_read_tiny_frames_memory(benchmark, tmp_path):
    path = tmp_path / "tiny.xyz"
    path.write_bytes(b"1\n\nXe 0 0 0\n" * TINY_FRAMES)
    benchmark.group = "read 1e6 tiny frames"
    benchmark.name = "ours"
    res = benchmark.pedantic(_read_tiny_frames, args=(path,), rounds=1, iterations=1)
    per_frame = res["peak_extra_bytes"] / TINY_FRAMES
    note(
        benchmark,
        n_frames=TINY_FRAMES,
        file_bytes=os.path.getsize(path),
        peak_extra_bytes=res["peak_extra_bytes"],
        peak_bytes_per_frame=per_frame,
        target_bytes_per_frame=TINY_TARGET_BYTES,
    )
    path.unlink()
    assert res["n_frames"] == TINY_FRAMES
