"""The JSON object of every structure of a batch (shared/INTERFACE.md), a chunk at a time.

The object :meth:`gammatrace.Analysis.to_dict` writes by default, for many structures
without a Python object per structure: the core detects each chunk in parallel and also
gives every structure's orbits and ``improper_within`` (the rule of
:func:`gammatrace.group.improper_within`, over the same tolerance ladder); the group-dependent
keys come from :func:`gammatrace.summary.summary_rows`, one vectorised pass per group. A
structure the group pass cannot reduce is analysed on its own, so that its row carries the
error the one-structure path gives (or its result, should that path succeed).
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

import numpy as np

from ..analysis import _check_tol, analyze_structure
from ..errors import GammatraceError
from ..group import DEFAULT_TOL
from ..group.chirality import improper_ladder
from ..group.orbits import species_symbols_of
from ..io import FrameError, Structure
from ..summary import summary_rows
from ..tables import get_table
from .run import DEFAULT_CHUNK, Ragged, detect_chunk

__all__ = ["analysis_rows"]


def analysis_rows(
    data: Ragged,
    *,
    tol: float = DEFAULT_TOL,
    n_threads: int = 0,
    chunk_size: int = DEFAULT_CHUNK,
) -> Iterator[dict]:
    """The JSON object of each structure of ``data``, in order (a failed one as
    ``{"source", "index", "error": {"type", "message"}}``), chunk by chunk.

    Equal, key for key, to ``analyze(structure).to_dict()`` of each structure.
    """
    t = _check_tol(tol)
    ladder = improper_ladder(t)
    for a in range(0, len(data), chunk_size):
        yield from _chunk_rows(data.slice(a, min(a + chunk_size, len(data))), t, ladder, n_threads)


def _error_row(data: Ragged, k: int, kind: str, message: str) -> dict:
    return FrameError(str(data.sources[k]), int(data.indices[k]), kind, message).to_dict()


def _chunk_rows(data: Ragged, tol: float, ladder: np.ndarray, n_threads: int) -> list:
    n = len(data)
    raw = detect_chunk(data, tol, n_threads, ladder)
    offsets = data.offsets
    n_atoms = np.diff(offsets)
    groups = list(raw.point_group)
    ok = np.array([g != "" for g in groups], dtype=bool)
    rows: list[Any] = [None] * n
    summaries: dict[int, dict] = {}
    by_group: dict[str, list[int]] = {}
    for k, g in enumerate(groups):
        if g:
            by_group.setdefault(g, []).append(k)
    op_off = raw.op_offsets
    for g, members in by_group.items():
        table = get_table(g)
        h = int(op_off[members[0] + 1] - op_off[members[0]])
        idx = op_off[np.asarray(members)][:, None] + np.arange(h)[None, :]
        for k, row in zip(
            members,
            summary_rows(table, raw.unshifted[idx], n_atoms[members]),
        ):
            summaries[k] = row
    env = _environment_counts(data, raw.orbit_ids, ok)
    iw = raw.improper_within.tolist()
    for k in range(n):
        if data.errors[k] is not None:  # read errors come first
            rows[k] = _error_row(data, k, *data.errors[k])
            continue
        if raw.errors[k] is not None:
            rows[k] = _error_row(data, k, *raw.errors[k])
            continue
        summary = summaries.get(k)
        if summary is None:
            rows[k] = _one(data, k, tol)
            continue
        a, b = int(offsets[k]), int(offsets[k + 1])
        table = get_table(groups[k])
        row = {
            "source": str(data.sources[k]),
            "index": int(data.indices[k]),
            "n_atoms": b - a,
            "point_group": groups[k],
            "order": table.order,
            "tolerance": tol,
            "max_deviation": float(raw.max_deviation[k]),
            "classes": summary["classes"],
            "representations": summary["representations"],
            "vibrations": summary["vibrations"],
            "symmetry_number": summary["symmetry_number"],
            "chiral": summary["chiral"],
            "improper_within": None if iw[k] != iw[k] else iw[k],
            "environments": env[k],
        }
        rows[k] = row
    return rows


def _environment_counts(data: Ragged, orbit_ids: np.ndarray, ok: np.ndarray) -> dict:
    """Structure -> ``environments`` (species symbol -> symmetry-distinct atoms), for every
    structure that succeeded, from the orbit ids the core gives (concatenated over those
    structures, each numbered in order of first atom): the rule of
    :func:`gammatrace.group.environments`, for the whole chunk at once."""
    counts = np.diff(data.offsets)
    atoms = np.repeat(ok, counts)  # the atoms the orbit ids cover, in order
    atom_index = np.flatnonzero(atoms)
    if len(atom_index) == 0:
        return {}
    owner = np.repeat(np.arange(len(counts)), counts)[atom_index]
    ids = np.asarray(orbit_ids, dtype=np.int64)
    # each structure's orbits are 0 … m − 1: m is its largest id + 1
    starts = np.concatenate([[0], np.cumsum(counts[ok])[:-1]])
    n_orbits = np.zeros(len(counts), dtype=np.int64)
    n_orbits[ok] = np.maximum.reduceat(ids, starts) + 1
    base = np.concatenate([[0], np.cumsum(n_orbits)[:-1]])
    g = ids + base[owner]  # orbits numbered over the chunk, still in order of first atom
    first = np.flatnonzero(g == np.maximum.accumulate(np.concatenate([[-1], g[:-1]])) + 1)
    symbols = species_symbols_of(data.numbers, data.masses, atom_index[first])
    out: dict[int, dict] = {}
    for k, symbol in zip(owner[first].tolist(), symbols):
        env = out.setdefault(k, {})
        env[symbol] = env.get(symbol, 0) + 1
    return out


def _one(data: Ragged, k: int, tol: float) -> dict:
    """One structure through the one-structure path: its object, or its error row."""
    a, b = int(data.offsets[k]), int(data.offsets[k + 1])
    s = Structure(
        data.numbers[a:b],
        data.positions[a:b],
        str(data.sources[k]),
        int(data.indices[k]),
        masses=None if data.masses is None else data.masses[a:b],
    )
    try:
        return analyze_structure(s, tol).to_dict()
    except GammatraceError as exc:
        return _error_row(data, k, type(exc).__name__, str(exc))
