"""Determinism: the same input gives byte-identical output for any thread count and input order.

Checked on a mixed multi-frame file (symmetric structures of many groups in random
orientations, a linear molecule, a single atom, bad frames) and on one cluster large enough
(> 50 000 atoms) for the core's lookup and counting kernels to run in parallel.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys

import gammatrace as gt
import numpy as np
import pytest
from conftest import random_rotation
from gammatrace.batch import COLUMNS, analyze_batch
from gammatrace.batch.screen import screen
from gammatrace.cli import main
from gammatrace.io import Structure, write_xyz
from gammatrace.io.builders import mackay_icosahedron, orbit_structure

GROUPS = ["C2v", "C3v", "D3h", "D6h", "Td", "Oh", "Ih", "S8", "C5h", "D4d", "Cs", "C1", "T"]
BAD_FRAME = "3\na frame with a bad coordinate\nO 0 0 0\nH 0 x 1\nH 0 1 0\n"


def _structures(rng: np.random.Generator) -> list[Structure]:
    out = []
    for g in GROUPS:
        k = 4 if g == "C1" else 2
        s = orbit_structure(
            gt.get_table(g).operations, rng.normal(size=(k, 3)) * 2, [6, 1, 8, 7][:k]
        )
        pos = s.positions @ random_rotation(rng).T + rng.normal(size=3) * 5
        out.append(Structure(s.numbers, np.ascontiguousarray(pos), comment=g))
    out.append(Structure(np.array([6, 8]), np.array([[0.0, 0, 0], [0, 0, 1.13]]), comment="CO"))
    out.append(Structure(np.array([54]), np.array([[1.0, 2.0, 3.0]]), comment="Xe"))
    return out


@pytest.fixture(scope="module")
def mixed_file(tmp_path_factory):
    """A multi-frame file with 3 copies of each structure and two bad frames in between."""
    rng = np.random.default_rng(8)
    path = tmp_path_factory.mktemp("det") / "mixed.xyz"
    structures = _structures(rng) * 3
    write_xyz(structures, path)
    text = path.read_text()
    frames = text.split("\n")
    # a bad frame after the first structure and at the end
    n0 = int(frames[0]) + 2
    head, tail = "\n".join(frames[:n0]) + "\n", "\n".join(frames[n0:])
    path.write_text(head + BAD_FRAME + tail + BAD_FRAME)
    return str(path)


def _cli_json(argv: list[str], threads: str) -> tuple[int, bytes]:
    env = dict(os.environ, RAYON_NUM_THREADS=threads)
    proc = subprocess.run(
        [sys.executable, "-m", "gammatrace.cli", *argv],
        env=env,
        capture_output=True,
        timeout=240,
    )
    return proc.returncode, proc.stdout


def test_cli_json_is_identical_for_1_and_2_threads(mixed_file):
    argv = ["analyze", mixed_file, "--format", "json", "--orbits"]
    status1, out1 = _cli_json(argv, "1")
    status2, out2 = _cli_json(argv, "2")
    assert status1 == status2 == 1  # the bad frames
    assert out1 == out2
    rows = [json.loads(line) for line in out1.splitlines()]
    assert [r["index"] for r in rows] == list(range(len(rows)))
    assert sum("error" in r for r in rows) == 2


@pytest.mark.slow
def test_cli_json_of_a_large_cluster_is_identical_for_1_and_2_threads(tmp_path):
    # 55 301 atoms: above the core's parallel thresholds (lookup and counting)
    path = tmp_path / "mackay.xyz"
    write_xyz([mackay_icosahedron(25)], path)
    argv = ["analyze", str(path), "--format", "json"]
    status1, out1 = _cli_json(argv, "1")
    status2, out2 = _cli_json(argv, "2")
    assert status1 == status2 == 0
    assert out1 == out2
    assert json.loads(out1)["point_group"] == "Ih"


def test_cli_json_is_identical_in_process_and_repeated(mixed_file, capsysbinary):
    outs = []
    for _ in range(2):
        main(["analyze", mixed_file, "--format", "json"])
        outs.append(capsysbinary.readouterr().out)
    assert outs[0] == outs[1]
    _status, sub = _cli_json(["analyze", mixed_file, "--format", "json"], "2")
    assert sub == outs[0]


def _as_json(cols: dict) -> str:
    def py(v):
        if isinstance(v, (np.integer,)):
            return int(v)
        if isinstance(v, (np.floating, float)):
            return None if np.isnan(v) else float(v)
        if isinstance(v, np.bool_):
            return bool(v)
        return v

    n = len(cols["index"])
    rows = [{c: py(cols[c][k]) for c in COLUMNS} for k in range(n)]
    return json.dumps(rows, ensure_ascii=False, allow_nan=False)


@pytest.mark.parametrize("chunk_size", [1, 7, 8192])
def test_batch_is_identical_for_any_thread_count_and_chunk_size(mixed_file, chunk_size):
    ref = _as_json(analyze_batch(mixed_file, n_threads=1, output="dict"))
    for n_threads in (1, 2, 0):
        cols = analyze_batch(mixed_file, n_threads=n_threads, chunk_size=chunk_size, output="dict")
        assert _as_json(cols) == ref


def test_shuffled_batch_comes_back_in_input_order_with_the_same_rows():
    rng = np.random.default_rng(3)
    structures = [
        Structure(s.numbers, s.positions, source=f"s{k}", index=k, comment=s.comment)
        for k, s in enumerate(_structures(rng) * 4)
    ]
    ref = analyze_batch(structures, n_threads=1, output="dict")
    ref_rows = json.loads(_as_json(ref))
    assert [r["source"] for r in ref_rows] == [s.source for s in structures]
    for trial in range(3):
        order = np.random.default_rng(trial).permutation(len(structures))
        shuffled = [structures[i] for i in order]
        cols = analyze_batch(shuffled, n_threads=2, chunk_size=5, output="dict")
        rows = json.loads(_as_json(cols))
        # input order kept: row k is the k-th structure handed in
        assert [r["source"] for r in rows] == [s.source for s in shuffled]
        # index is the position in the list handed in (shared/INTERFACE.md, "Batches")
        assert [r.pop("index") for r in rows] == list(range(len(shuffled)))
        expected = [dict(ref_rows[i]) for i in order]
        for r in expected:
            del r["index"]
        assert rows == expected


def test_screened_jsonl_is_identical_for_1_and_2_threads(mixed_file, tmp_path):
    paths = []
    for n_threads in (1, 2):
        out = tmp_path / f"screen{n_threads}.jsonl"
        screen([mixed_file], str(out), n_threads=n_threads, chunk_size=4, progress=False)
        paths.append(out)
    assert paths[0].read_bytes() == paths[1].read_bytes()
    assert len(paths[0].read_bytes().splitlines()) == len(gt.read_xyz(mixed_file))
