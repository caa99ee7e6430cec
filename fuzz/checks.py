"""Invariants the fuzz targets check on every input (shared by the harnesses and the tests).

Any exception that is not a :class:`gammatrace.GammatraceError` (a Rust panic arrives as a
``BaseException``) escapes these functions and is a crash.
"""

from __future__ import annotations

import gammatrace as gt
import numpy as np
from gammatrace import _core

ERROR_TYPES = {"ReadError", "StructureError", "InputError"}
MAX_ATOMS_ANALYSED = 2000  # keep each fuzz input cheap: bigger frames are read, not analysed


def check_reader(data: bytes, source: str = "<fuzz>") -> dict:
    """Read ``data`` with the Rust reader and check the ragged result is self-consistent."""
    raw = _core.read_xyz_bytes(data, source)
    offsets = np.asarray(raw.offsets)
    errors = raw.errors
    n_frames = len(errors)
    assert len(offsets) == n_frames + 1 and offsets[0] == 0
    assert np.all(np.diff(offsets) >= 0)
    assert raw.positions.shape == (offsets[-1], 3)
    assert raw.numbers.shape == (offsets[-1],)
    assert len(raw.comments) == n_frames and len(raw.info) == n_frames
    assert np.isfinite(raw.positions).all()
    assert ((raw.numbers >= 1) & (raw.numbers <= 118)).all()
    for k, err in enumerate(errors):
        if err is None:
            continue
        kind, message = err
        assert kind in ERROR_TYPES, err
        assert offsets[k + 1] == offsets[k], "a bad frame must hold no atoms"
        assert f"(frame {k})" in message and source in message, message
    # no more atoms than atom lines
    assert offsets[-1] <= data.count(b"\n") + 1
    return raw


def check_analysis(numbers: np.ndarray, positions: np.ndarray, tol: float = gt.DEFAULT_TOL):
    """Analyse one structure; a typed error is fine, anything else is a crash."""
    try:
        res = gt.analyze(numbers, positions, tol=tol)
    except gt.GammatraceError as exc:
        assert str(exc)
        return None
    n = res.n_atoms
    dims = {ir.label: ir.dim for ir in res.table.irreps}
    try:
        for basis, dim in (("atoms", n), ("cartesian", 3 * n)):
            irreps = res.representation(basis).irreps
            assert all(isinstance(v, int) and v > 0 for v in irreps.values())
            assert sum(v * dims[k] for k, v in irreps.items()) == dim, (basis, irreps)
        vib = res.vibrations()
        assert sum(v * dims[k] for k, v in vib.irreps.items()) == vib.modes
    except gt.GammatraceError as exc:
        # a reduction problem must be reported, not rounded; a message is all we ask here
        assert str(exc)
    return res


def check_xyz_input(data: bytes) -> None:
    """The XYZ target: read, then analyse every good frame that is small enough."""
    raw = check_reader(data)
    offsets = raw.offsets
    for k, err in enumerate(raw.errors):
        a, b = int(offsets[k]), int(offsets[k + 1])
        if err is None and 0 < b - a <= MAX_ATOMS_ANALYSED:
            check_analysis(raw.numbers[a:b], raw.positions[a:b])
