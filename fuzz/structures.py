"""Structures from fuzz bytes, for fuzz_detect.py and the regression tests."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
from gammatrace.io.builders import orbit_structure

GROUPS = ["C1", "Cs", "Ci", "T", "Td", "Th", "O", "Oh", "I", "Ih"]
GROUPS += [fam.replace("n", str(n)) for n in range(2, 13) for fam in ("Cn", "Cnv", "Cnh")]
GROUPS += [fam.replace("n", str(n)) for n in range(2, 13) for fam in ("Dn", "Dnh", "Dnd")]
GROUPS += [f"S{2 * n}" for n in range(2, 13)]
TOLS = [1e-6, 1e-3, 0.01, 0.05, 0.1, 0.3, 1.0]
MAX_ATOMS = 2000


def structure_from_bytes(data: bytes):
    """``(numbers, positions, tol)`` or None when the bytes are too few."""
    if len(data) < 4:
        return None
    head, body = data[:4], data[4:]
    tol = TOLS[head[1] % len(TOLS)]
    # coordinates: the body as float16 words scaled into Å (NaN/inf included on purpose)
    usable = len(body) // 2 * 2
    values = np.frombuffer(body[:usable], dtype=np.float16).astype(np.float64)
    k = len(values) // 3
    if k == 0:
        return None
    points = values[: 3 * k].reshape(k, 3)
    numbers = np.array([1 + b % 10 for b in body[:k]] or [6], dtype=np.int64)[:k]
    if head[0] % 2 == 0:
        group = GROUPS[head[2] % len(GROUPS)]
        ops = gt.get_table(group).operations
        points = points[: max(1, MAX_ATOMS // len(ops))]
        numbers = numbers[: len(points)]
        with np.errstate(all="ignore"):
            s = orbit_structure(ops, np.nan_to_num(points, posinf=1e4, neginf=-1e4), numbers)
        positions, numbers = s.positions, s.numbers
        if head[3] % 4 == 0:  # shake
            rng = np.random.default_rng(head[3])
            positions = positions + rng.normal(size=positions.shape) * tol * (head[3] / 64.0)
    else:
        positions = points[:MAX_ATOMS]
        numbers = numbers[:MAX_ATOMS]
    return numbers, np.ascontiguousarray(positions, dtype=np.float64), tol
