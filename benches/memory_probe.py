"""Peak resident memory of one analysis, measured in a fresh process.

tracemalloc does not see the Rust core's allocations, so the probe reads the kernel's counters
(/proc/self/status: VmRSS before, VmHWM after; the high-water mark is reset first through
/proc/self/clear_refs where allowed). Run by ``benches/test_memory.py``::

    python -m benches.memory_probe positions.npy numbers.npy --workload ours
    python -m benches.memory_probe frames.xyz --workload read-raw

``read-raw`` reads a multi-frame XYZ file with ``gammatrace.io.read_xyz_raw`` (the reader's
ragged arrays, no per-frame Python objects). Prints one JSON object.
"""

from __future__ import annotations

import argparse
import gc
import json
from pathlib import Path

import numpy as np


def _status_kb(key: str) -> int:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(key + ":"):
            return int(line.split()[1])
    raise RuntimeError(f"/proc/self/status has no {key}")


def _reset_peak() -> bool:
    try:
        Path("/proc/self/clear_refs").write_text("5")
        return True
    except OSError:
        return False


def main(argv=None) -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("positions", help="positions .npy, or the XYZ file for read-raw")
    p.add_argument("numbers", nargs="?", help="atomic numbers .npy (not for read-raw)")
    p.add_argument("--workload", choices=("ours", "kdtree", "read-raw"), default="ours")
    p.add_argument("--tol", type=float, default=0.01)
    args = p.parse_args(argv)

    import gammatrace as gt

    from . import baselines

    if args.workload == "read-raw":
        _read_raw(args.positions)
        return
    positions = np.load(args.positions)
    numbers = np.load(args.numbers)
    # warm-up on a small structure: imports, tables and the thread pool are not counted
    warm = gt.analyze(["O", "H", "H"], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
    warm.representation("cartesian")
    warm.vibrations()
    ops = center = None
    if args.workload == "kdtree":
        a = gt.analyze(numbers, positions, tol=args.tol)  # operations given, as in the suite
        ops, center = np.ascontiguousarray(a.operation_matrices), a.center
        del a
    gc.collect()
    rss_before = _status_kb("VmRSS")
    reset = _reset_peak()
    if args.workload == "ours":
        a = gt.analyze(numbers, positions, tol=args.tol)
        group = a.point_group
        a.representation("cartesian")
        a.vibrations()
    else:
        baselines.kdtree_cartesian_characters(positions, numbers, center, ops, args.tol)
        group = None
    hwm_after = _status_kb("VmHWM")
    print(
        json.dumps(
            {
                "workload": args.workload,
                "n_atoms": len(positions),
                "point_group": group,
                "coordinate_bytes": int(positions.nbytes),
                "rss_before_kb": rss_before,
                "hwm_after_kb": hwm_after,
                "peak_reset": reset,
                "peak_extra_bytes": (hwm_after - rss_before) * 1024,
            }
        )
    )


def _read_raw(path: str) -> None:
    from gammatrace.io import read_xyz_raw

    # no warm-up read: memory freed by one would be reused by the measured read, below the
    # high-water mark (as in tests/reliability/test_hostile_sizes.py, imports come first)
    gc.collect()
    rss_before = _status_kb("VmRSS")
    reset = _reset_peak()
    raw = read_xyz_raw(path)
    hwm_after = _status_kb("VmHWM")
    n_frames = len(raw.offsets) - 1
    n_atoms = int(raw.offsets[-1])
    print(
        json.dumps(
            {
                "workload": "read-raw",
                "n_atoms": n_atoms,
                "n_frames": n_frames,
                "point_group": None,
                "coordinate_bytes": 24 * n_atoms,
                "rss_before_kb": rss_before,
                "hwm_after_kb": hwm_after,
                "peak_reset": reset,
                "peak_extra_bytes": (hwm_after - rss_before) * 1024,
            }
        )
    )


if __name__ == "__main__":
    main()
