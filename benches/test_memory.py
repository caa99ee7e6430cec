"""Peak memory of the 10⁶-atom analyses against the size of the coordinate array.

Each test runs ``benches.memory_probe`` in a fresh process (the time recorded is that of the
whole process, start-up included; the numbers that matter are in ``extra_info``):
``peak_extra_bytes`` = VmHWM after the analysis − VmRSS before it, and its ratio to the
``(n_atoms, 3)`` float64 coordinate array (target: ≤ 10×).

``tiny-frames-1e6-read``: ``gammatrace.io.read_xyz_raw`` on 10⁶ one-atom frames (12 bytes
each); ``bytes_per_frame`` = peak extra bytes / frames (target of issue 14, part 4: ≤ 200 B).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from .conftest import note
from .workloads import cluster

ROOT = Path(__file__).resolve().parent.parent


def _probe(tmp_path, family, k, workload):
    s = cluster(family, k)
    pos, num = tmp_path / "positions.npy", tmp_path / "numbers.npy"
    np.save(pos, s.positions)
    np.save(num, s.numbers)
    out = subprocess.run(
        [sys.executable, "-m", "benches.memory_probe", str(pos), str(num), "--workload", workload],
        check=False,
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=1800,
    )
    pos.unlink()
    num.unlink()
    if out.returncode != 0:
        raise RuntimeError(f"memory probe failed:\n{out.stderr}")
    return json.loads(out.stdout.strip().splitlines()[-1])


@pytest.mark.timeout(3600)
@pytest.mark.parametrize(
    ("family", "k", "workload"),
    [
        pytest.param("Ih", 6, "ours", marks=pytest.mark.headline),
        ("Oh", 6, "ours"),
        ("Ih", 5, "kdtree"),
    ],
    ids=["Ih-1e6-ours", "Oh-1e6-ours", "Ih-1e5-kdtree"],
)
def test_peak_memory(benchmark, tmp_path, family, k, workload):
    benchmark.group = "peak memory"
    benchmark.name = f"{family}-1e{k}-{workload}"
    res = benchmark.pedantic(_probe, args=(tmp_path, family, k, workload), rounds=1, iterations=1)
    ratio = res["peak_extra_bytes"] / res["coordinate_bytes"]
    note(benchmark, family=family, kind=f"memory-{workload}", ratio_to_coordinates=ratio, **res)
    assert res["n_atoms"] == cluster(family, k).n_atoms
    assert res["workload"] != "ours" or res["point_group"] == family
    assert res["peak_extra_bytes"] >= 0


TINY_FRAME = b"1\n\nXe 0 0 0\n"  # the smallest useful frame, as in tests/reliability
TINY_FRAMES = 1_000_000


def _probe_tiny(tmp_path):
    path = tmp_path / "tiny.xyz"
    path.write_bytes(TINY_FRAME * TINY_FRAMES)
    out = subprocess.run(
        [sys.executable, "-m", "benches.memory_probe", str(path), "--workload", "read-raw"],
        check=False,
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=600,
    )
    path.unlink()
    if out.returncode != 0:
        raise RuntimeError(f"memory probe failed:\n{out.stderr}")
    return json.loads(out.stdout.strip().splitlines()[-1])


@pytest.mark.timeout(600)
def test_peak_memory_tiny_frames(benchmark, tmp_path):
    benchmark.group = "peak memory"
    benchmark.name = "tiny-frames-1e6-read"
    res = benchmark.pedantic(_probe_tiny, args=(tmp_path,), rounds=1, iterations=1)
    note(
        benchmark,
        kind="memory-read-raw",
        ratio_to_coordinates=res["peak_extra_bytes"] / res["coordinate_bytes"],
        bytes_per_frame=res["peak_extra_bytes"] / res["n_frames"],
        **res,
    )
    assert res["n_frames"] == TINY_FRAMES
    assert res["peak_extra_bytes"] >= 0
