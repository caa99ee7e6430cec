"""Hostile sizes: many frames, many atoms, absurd atom counts — bounded memory or a clear refusal.

Memory is measured as the peak resident set size (VmHWM, reset after the imports) of a fresh
subprocess, so the Rust core's allocations count too. The bounds are generous multiples of the
data held (they catch allocation driven by a claimed count, quadratic growth, or copies per
frame), not performance targets. What does not fit in CI time (10^7 atoms, 10^7 frames) is
described in fuzz/RESULTS.md.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import gammatrace as gt
import pytest

pytestmark = pytest.mark.skipif(
    not sys.platform.startswith("linux"), reason="reads /proc/self/status"
)

XENON = b"1\n\nXe 0 0 0\n"  # 12 bytes: the smallest useful frame


# imports first; then the peak is reset (Linux: clear_refs "5" resets VmHWM) and the resident
# size taken as ``base_mb``; at the end ``rss_mb`` is the peak since the reset
PRELUDE = """import json
import numpy, gammatrace, gammatrace.batch, gammatrace.io, gammatrace._core


def _status_mb(key):
    with open("/proc/self/status") as fh:
        for line in fh:
            if line.startswith(key + ":"):
                return int(line.split()[1]) / 1024


with open("/proc/self/clear_refs", "w") as fh:
    fh.write("5")
OUT = {"base_mb": _status_mb("VmRSS")}
"""


def _run(code: str, timeout: float = 600) -> dict:
    """Run ``code`` in a fresh interpreter; its ``OUT`` dict comes back with ``rss_mb`` (peak)
    and ``base_mb`` (resident after the imports, before ``code``)."""
    wrapper = textwrap.dedent(code) + textwrap.dedent(
        """
        OUT["rss_mb"] = _status_mb("VmHWM")
        print(json.dumps(OUT))
        """
    )
    proc = subprocess.run(
        [sys.executable, "-c", PRELUDE + wrapper],
        capture_output=True,
        text=True,
        timeout=timeout,
    )
    assert proc.returncode == 0, proc.stderr[-3000:]
    return json.loads(proc.stdout.strip().splitlines()[-1])


def test_many_tiny_frames_in_process(tmp_path):
    # 10^5 frames: every one read and analysed, in order
    from gammatrace.batch import analyze_batch

    path = tmp_path / "xenon.xyz"
    path.write_bytes(XENON * 100_000)
    cols = analyze_batch(str(path), output="dict")
    assert len(cols["index"]) == 100_000
    assert (cols["index"] == range(100_000)).all()
    assert set(cols["point_group"]) == {"K_h"}
    assert not any(cols["error"])


@pytest.mark.slow
def test_a_million_frames_are_read_and_screened_in_proportional_memory(tmp_path):
    path = tmp_path / "million.xyz"
    path.write_bytes(XENON * 1_000_000)  # 12 MB
    out = _run(
        f"""
        from gammatrace.batch import analyze_batch
        cols = analyze_batch({str(path)!r}, output="dict")
        OUT["n"] = len(cols["index"])
        OUT["groups"] = sorted(set(cols["point_group"]))
        OUT["ordered"] = bool((cols["index"] == range(len(cols["index"]))).all())
        """
    )
    assert out["n"] == 1_000_000 and out["groups"] == ["K_h"] and out["ordered"]
    # at most 1 kB per frame above the interpreter's own footprint
    assert out["rss_mb"] - out["base_mb"] < 1000, out


@pytest.mark.slow
def test_reader_memory_grows_linearly_with_frames(tmp_path):
    rss = {}
    for n in (100_000, 1_000_000):
        path = tmp_path / f"x{n}.xyz"
        path.write_bytes(XENON * n)
        out = _run(
            f"""
            from gammatrace.io import read_xyz_raw
            raw = read_xyz_raw({str(path)!r})
            OUT["n"] = len(raw.offsets) - 1
            """
        )
        assert out["n"] == n
        rss[n] = out["rss_mb"] - out["base_mb"]
    # ten times the frames costs at most about ten times the memory (plus slack)
    assert rss[1_000_000] < 12 * rss[100_000] + 50, rss


@pytest.mark.slow
def test_reader_costs_at_most_200_bytes_per_tiny_frame(tmp_path):
    # the floor is about 60 bytes: coordinates 24, number 8, offsets 8 + 8 (atoms, comment)
    # and the 12 bytes of the mapped file; comments, info and errors make no object per frame
    path = tmp_path / "million.xyz"
    path.write_bytes(XENON * 1_000_000)
    out = _run(
        f"""
        from gammatrace.io import read_xyz_raw
        raw = read_xyz_raw({str(path)!r})
        OUT["frames"] = [len(raw.offsets) - 1, len(raw.comments), len(raw.errors)]
        OUT["atoms"] = int(raw.offsets[-1])
        """
    )
    assert out["frames"] == [1_000_000] * 3 and out["atoms"] == 1_000_000
    assert (out["rss_mb"] - out["base_mb"]) * 2**20 / 1_000_000 < 200, out


@pytest.mark.parametrize("claimed", ["10000000", "1000000000000", "18446744073709551615"])
def test_an_absurd_atom_count_is_refused_without_allocating(claimed):
    # a count line is a claim: nothing may be allocated for it before the atom lines exist
    data = f"{claimed}\nclaims many atoms\nO 0 0 0\nH 0 0 1\n".encode()
    out = _run(
        f"""
        from gammatrace import _core
        raw = _core.read_xyz_bytes({data!r}, "claim.xyz")
        OUT["errors"] = list(raw.errors)
        """
    )
    ((kind, message),) = out["errors"]
    assert kind == "ReadError"
    assert "claim.xyz" in message and claimed in message
    assert out["rss_mb"] - out["base_mb"] < 50


def test_one_frame_claiming_more_atoms_than_the_file_holds_keeps_the_next_ones():
    from gammatrace import _core

    water = b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n"
    raw = _core.read_xyz_bytes(b"1000000000\nclaim\nO 0 0 0\n" + water * 3, "claim.xyz")
    assert raw.errors[0][0] == "ReadError"
    assert "next frame starts at line 4" in raw.errors[0][1]
    assert raw.errors[1:] == [None, None, None]


@pytest.mark.slow
def test_a_large_cluster_is_analysed_in_proportional_memory():
    # 2.2·10^5 atoms (Mackay icosahedron, 40 shells): memory per atom stays small
    from gammatrace.io.builders import mackay_size

    n_atoms = mackay_size(40)
    out = _run(
        """
        import gammatrace as gt
        from gammatrace.io.builders import mackay_icosahedron
        s = mackay_icosahedron(40)
        res = gt.analyze(s)
        OUT["group"] = res.point_group
        OUT["vib"] = res.vibrations().modes
        """
    )
    assert out["group"] == "Ih"
    assert out["vib"] == 3 * n_atoms - 6
    # 24 bytes of coordinates per atom; allow 2 kB per atom for everything built on them
    assert (out["rss_mb"] - out["base_mb"]) * 2**20 / n_atoms < 2048, out


def test_structure_with_coordinates_out_of_range_is_refused():
    with pytest.raises(gt.StructureError, match="supported range"):
        gt.analyze(["H", "H"], [[0.0, 0.0, 0.0], [0.0, 0.0, 2e6]])
