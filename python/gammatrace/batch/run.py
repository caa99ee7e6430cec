"""Batches: many structures at once, as a table.

The Rust core detects every structure's group and counts unshifted atoms for every operation in
parallel (GIL released); here the results are grouped by point group and reduced with numpy, one
vectorised pass per group, so there is no Python loop over structures in the numeric work.
One bad structure never stops a batch: its row carries the error.

Columns of the table (one row per structure, input order):
``source, index, n_atoms, point_group, order, max_deviation, symmetry_number, chiral,
gamma_vib, n_modes, n_fundamentals, n_ir, n_raman, error_type, error``.
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any, Callable

import numpy as np

from .. import _core
from .._progress import progress as _progress
from ..analysis import _check_tol
from ..errors import GammatraceError, InputError
from ..group import DEFAULT_TOL
from ..io import (
    STANDARD_MASSES,
    FrameError,
    Structure,
    apply_cell,
    as_structure,
    check_cell_choice,
    read_xyz_raw,
)
from ..io.cell import periodic_info
from ..spectroscopy import activity_masks, format_irreps, reduce_vibrations
from ..tables import LINEAR_SUBGROUP_N, get_table

__all__ = [
    "COLUMNS",
    "Ragged",
    "analyze_batch",
    "iter_batch",
    "ragged_from_file",
    "ragged_from_structures",
    "to_dataframe",
]

COLUMNS = (
    "source",
    "index",
    "n_atoms",
    "point_group",
    "order",
    "max_deviation",
    "symmetry_number",
    "chiral",
    "gamma_vib",
    "n_modes",
    "n_fundamentals",
    "n_ir",
    "n_raman",
    "error_type",
    "error",
)
DEFAULT_CHUNK = 8192


@dataclass
class Ragged:
    """Structures as ragged arrays: concatenated positions/numbers plus ``offsets``.

    Attributes
    ----------
    positions : ``float64 (total_atoms, 3)``; numbers : ``int64 (total_atoms,)``;
    offsets : ``int64 (n_structures + 1,)``; sources : list of str; indices : ``int64``;
    errors : list of (type, message) or None, for frames that failed to read (or were
    refused: a periodic frame under ``cell="refuse"``);
    masses : ``float64 (total_atoms,)`` or None (every atom with its standard atomic weight);
    atoms of one element with different masses are different species.
    """

    positions: np.ndarray
    numbers: np.ndarray
    offsets: np.ndarray
    sources: list
    indices: np.ndarray
    errors: list
    masses: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.offsets) - 1

    def slice(self, a: int, b: int) -> Ragged:
        """Structures a..b (offsets rebased to zero)."""
        o = self.offsets[a : b + 1]
        return Ragged(
            self.positions[o[0] : o[-1]],
            self.numbers[o[0] : o[-1]],
            o - o[0],
            self.sources[a:b],
            self.indices[a:b],
            self.errors[a:b],
            None if self.masses is None else self.masses[o[0] : o[-1]],
        )


def ragged_from_structures(structures: Iterable[Any], cell: str | None = None) -> Ragged:
    """Pack Structures (or anything :func:`~gammatrace.io.as_structure` takes) into a Ragged.

    Row ``index`` is the position in ``structures`` (0, 1, 2, …), whatever frame of which file a
    Structure came from; ``source`` keeps where it came from. ``cell``: what to do with periodic
    structures (:func:`gammatrace.io.apply_cell`); a refused one keeps its place with its error.
    """
    choice = check_cell_choice(cell)
    pos, num, offs, srcs, idx, errs = [], [], [0], [], [], []
    mass: list = []
    for k, item in enumerate(structures):
        s_mass = None
        if isinstance(item, FrameError):
            s_pos, s_num, err = np.zeros((0, 3)), np.zeros(0, np.int64), (item.type, item.message)
            src = item.source
        else:
            src = "<input>"
            try:
                s = as_structure(item)
                src = s.source
                s = apply_cell(s, choice)
                s_pos, s_num, s_mass, err = s.positions, s.numbers, s.masses, None
            except GammatraceError as exc:
                s_pos, s_num = np.zeros((0, 3)), np.zeros(0, np.int64)
                err = (type(exc).__name__, str(exc))
        index = k
        pos.append(s_pos)
        num.append(s_num)
        mass.append(s_mass)
        offs.append(offs[-1] + len(s_num))
        srcs.append(src)
        idx.append(index)
        errs.append(err)
    masses = None
    if any(m is not None for m in mass):
        masses = np.concatenate(
            [STANDARD_MASSES[n] if m is None else m for n, m in zip(num, mass)]
        ).astype(np.float64)
    return Ragged(
        np.ascontiguousarray(np.concatenate(pos) if pos else np.zeros((0, 3)), dtype=np.float64),
        np.ascontiguousarray(np.concatenate(num) if num else np.zeros(0), dtype=np.int64),
        np.asarray(offs, dtype=np.int64),
        srcs,
        np.asarray(idx, dtype=np.int64),
        errs,
        masses,
    )


def ragged_from_file(path: str | os.PathLike, cell: str | None = None) -> Ragged:
    """Read a multi-frame XYZ file into ragged arrays (Rust reader, no per-frame objects).

    Masses (``D``/``T`` symbols, a ``masses`` column) are kept; periodic frames are handled
    by ``cell`` as in :func:`gammatrace.io.apply_cell` — a refused frame (or one that cannot
    be unwrapped) becomes an error in its place, with no atoms.
    """
    choice = check_cell_choice(cell)
    source = os.fspath(path)
    raw = read_xyz_raw(path)
    n = len(raw.offsets) - 1
    offsets = np.asarray(raw.offsets, dtype=np.int64)
    positions, numbers = raw.positions, raw.numbers
    masses = None
    if len(raw.masses):
        m = raw.masses
        masses = np.where(np.isnan(m), STANDARD_MASSES[numbers], m)
    errors = list(raw.errors)
    dropped = np.zeros(n, dtype=bool)
    copied = False
    for k, comment in enumerate(raw.comments):
        # only frames with a cell key are looked at; a key is part of the comment line, so
        # the line is parsed (raw.info) only when it holds one of the names
        if errors[k] is not None or not ("pbc" in (low := comment.lower()) or "lattice" in low):
            continue
        info = raw.info[k]
        if not any(key.lower() in ("pbc", "lattice") for key, _ in info):
            continue
        a, b = int(offsets[k]), int(offsets[k + 1])
        where = f"{source} [frame {k}]"
        try:
            lattice, pbc = periodic_info(dict(info), where)
            s = Structure(
                numbers[a:b],
                positions[a:b],
                source,
                k,
                masses=None if masses is None else masses[a:b],
                cell=lattice,
                pbc=pbc,
            )
            unwrapped = apply_cell(s, choice)
        except GammatraceError as exc:
            errors[k] = (type(exc).__name__, str(exc))
            dropped[k] = True
            continue
        if unwrapped is not s:
            if not copied:
                positions, copied = positions.copy(), True
            positions[a:b] = unwrapped.positions
    if dropped.any():
        # refused frames keep their row (with the error) but no atoms
        counts = np.diff(offsets)
        keep = np.repeat(~dropped, counts)
        positions = np.ascontiguousarray(positions[keep])
        numbers = np.ascontiguousarray(numbers[keep])
        masses = None if masses is None else np.ascontiguousarray(masses[keep])
        offsets = np.concatenate([[0], np.cumsum(np.where(dropped, 0, counts))]).astype(np.int64)
    return Ragged(
        positions,
        numbers,
        offsets,
        [source] * n,
        np.arange(n, dtype=np.int64),
        errors,
        masses,
    )


def _empty_columns(n: int) -> dict:
    return {
        "n_atoms": np.zeros(n, np.int64),
        "point_group": np.full(n, "", dtype=object),
        "order": np.full(n, -1, np.int64),
        "max_deviation": np.full(n, np.nan),
        "symmetry_number": np.zeros(n, np.int64),
        "chiral": np.zeros(n, bool),
        "gamma_vib": np.full(n, "", dtype=object),
        "n_modes": np.zeros(n, np.int64),
        "n_fundamentals": np.zeros(n, np.int64),
        "n_ir": np.zeros(n, np.int64),
        "n_raman": np.zeros(n, np.int64),
        "error_type": np.full(n, "", dtype=object),
        "error": np.full(n, "", dtype=object),
    }


def _format_rows(table, mult: np.ndarray) -> np.ndarray:
    labels = [ir.label for ir in table.irreps]
    uniq, inverse = np.unique(mult, axis=0, return_inverse=True)
    texts = np.array(
        [format_irreps({labels[j]: int(v) for j, v in enumerate(row) if v}) for row in uniq],
        dtype=object,
    )
    return texts[np.asarray(inverse).reshape(-1)]


def _reduce_group(group: str, rows: np.ndarray, raw: dict, n_atoms: np.ndarray, cols: dict):
    """Vectorised classes, Γ_3N, Γ_vib and activity for all rows of one point group."""
    table = get_table(group)
    h = len(table.operations)
    start = raw.op_offsets[rows]
    if np.any(raw.op_offsets[rows + 1] - start != h):
        raise GammatraceError(f"{group}: operation count differs from the table's {h}")
    idx = start[:, None] + np.arange(h)[None, :]
    # detection lists each group's operations in canonical order (operation k is canonical
    # operation k), so the classes are the table's own
    cls = np.broadcast_to(table.operation_class, idx.shape)
    # Γ_3N per operation: unshifted atoms × the core's per-atom contribution of x, y, z (l = 1)
    per_atom = _core.orbital_contributions(
        np.ascontiguousarray(raw.proper[idx].reshape(-1)),
        np.ascontiguousarray(raw.angle[idx].reshape(-1)),
        1,
    ).reshape(idx.shape)
    chi_op = raw.unshifted[idx].astype(np.float64) * per_atom
    k, nc = len(rows), len(table.classes)
    flat = (np.arange(k)[:, None] * nc + cls).reshape(-1)
    sums = np.bincount(flat, weights=chi_op.reshape(-1), minlength=k * nc).reshape(k, nc)
    sizes = np.asarray(table.class_sizes, dtype=np.float64)
    chars = sums / sizes
    spread = np.abs(chi_op - np.take_along_axis(chars, cls, axis=1)).max(axis=1)
    bad = spread > 1e-6
    # the one Γ_vib reduction single analyses use too, for all rows at once
    mult, modes, ok, _ = reduce_vibrations(table, chars, n_atoms[rows])
    bad |= ~ok
    good = ~bad
    r = rows[good]
    m = mult[good]
    ir_mask, raman_mask = activity_masks(table)
    cols["point_group"][r] = group
    cols["order"][r] = -1 if table.order is None else h
    cols["n_modes"][r] = modes[good]
    cols["n_fundamentals"][r] = m.sum(axis=1)
    cols["n_ir"][r] = m[:, ir_mask].sum(axis=1)
    cols["n_raman"][r] = m[:, raman_mask].sum(axis=1)
    cols["gamma_vib"][r] = _format_rows(table, m)
    cols["symmetry_number"][r] = table.symmetry_number
    cols["chiral"][r] = raw.n_proper[r] == h
    for row in rows[bad]:
        cols["error_type"][row] = "ReductionError"
        cols["error"][row] = (
            f"Γ_vib of this {group} structure does not reduce to non-negative integers "
            "(characters inconsistent within a class: tolerance too loose?)"
        )


def detect_chunk(chunk: Ragged, tol: float, n_threads: int, improper_ladder=None):
    """The core's batch detection of one chunk (``_core.BatchResult``); with
    ``improper_ladder`` also each structure's orbits and improper_within."""
    return _core.find_point_groups_batch(
        chunk.positions,
        chunk.numbers,
        np.ascontiguousarray(chunk.offsets),
        tol,
        LINEAR_SUBGROUP_N,
        int(n_threads),
        None if chunk.masses is None else np.ascontiguousarray(chunk.masses),
        improper_ladder,
    )


def _run_chunk(chunk: Ragged, tol: float, n_threads: int) -> dict:
    n = len(chunk)
    cols = _empty_columns(n)
    cols["source"] = np.asarray(chunk.sources, dtype=object)
    cols["index"] = chunk.indices.copy()
    cols["n_atoms"] = np.diff(chunk.offsets)
    raw = detect_chunk(chunk, tol, n_threads)
    groups = np.asarray(raw.point_group, dtype=object)
    cols["max_deviation"] = np.asarray(raw.max_deviation, dtype=np.float64)
    for g in np.unique(groups[groups != ""]):
        rows = np.flatnonzero(groups == g)
        try:
            _reduce_group(str(g), rows, raw, cols["n_atoms"], cols)
        except GammatraceError as exc:
            cols["error_type"][rows] = type(exc).__name__
            cols["error"][rows] = str(exc)
    for k, err in enumerate(raw.errors):
        if err is not None:
            cols["error_type"][k], cols["error"][k] = err
    for k, err in enumerate(chunk.errors):  # read errors win over "no atoms"
        if err is not None:
            cols["error_type"][k], cols["error"][k] = err
            cols["point_group"][k] = ""
    return cols


def iter_batch(
    data: Ragged,
    *,
    tol: float = DEFAULT_TOL,
    n_threads: int = 0,
    chunk_size: int = DEFAULT_CHUNK,
    progress: bool | Callable[[int], None] = False,
) -> Iterator[dict]:
    """Analyse a :class:`Ragged` chunk by chunk, yielding a dict of columns per chunk.

    Between chunks control returns to Python, so Ctrl-C stops cleanly after the last
    completed chunk and a writer can flush what is done.
    """
    tol = _check_tol(tol)
    if chunk_size < 1:
        raise InputError(f"chunk_size: must be at least 1, got {chunk_size}")
    with _progress(len(data), enabled=None if progress is True else False) as bar:
        for a in range(0, len(data), chunk_size):
            b = min(a + chunk_size, len(data))
            cols = _run_chunk(data.slice(a, b), float(tol), int(n_threads))
            bar.update(b - a)
            if callable(progress):
                progress(b - a)
            yield cols


def _concat(parts: Sequence[dict]) -> dict:
    if not parts:
        return {k: v for k, v in _empty_columns(0).items()} | {
            "source": np.zeros(0, dtype=object),
            "index": np.zeros(0, np.int64),
        }
    return {k: np.concatenate([p[k] for p in parts]) for k in COLUMNS}


def analyze_batch(
    structures: Any,
    *,
    tol: float = DEFAULT_TOL,
    n_threads: int = 0,
    chunk_size: int = DEFAULT_CHUNK,
    progress: bool = False,
    output: str = "pandas",
    cell: str | None = None,
):
    """Analyse many structures in parallel and return one row per structure.

    Parameters
    ----------
    structures
        A :class:`Ragged`, a path to a multi-frame XYZ file, or an iterable of Structures,
        ``ase.Atoms`` or ``(symbols, positions)`` pairs. Masses (isotopes) are honoured.
    tol : float
        Distance tolerance in ångström.
    n_threads : int
        Worker threads in the core (0 = all cores). Results do not depend on it.
    chunk_size : int
        Structures per call into the core (progress and Ctrl-C are handled between chunks).
    progress : bool
        Show a progress bar on standard error (when it is a terminal and tqdm is installed).
    output : {"pandas", "dict", "arrow"}
        The table type returned.
    cell : {"refuse", "ignore", "unwrap"}, optional
        Periodic frames: refused (the default: an error row, the batch goes on), analysed as
        given, or unwrapped into whole molecules first (:mod:`gammatrace.io.cell`). Not
        applied to a :class:`Ragged`, which is analysed as it is.

    Returns
    -------
    pandas.DataFrame, dict of numpy arrays, or pyarrow.Table
        Columns as in :data:`COLUMNS`; failed structures have ``error_type``/``error`` set.
    """
    data = _as_ragged(structures, cell)
    cols = _concat(
        list(
            iter_batch(data, tol=tol, n_threads=n_threads, chunk_size=chunk_size, progress=progress)
        )
    )
    return convert(cols, output)


def _as_ragged(structures: Any, cell: str | None = None) -> Ragged:
    check_cell_choice(cell)
    if isinstance(structures, Ragged):
        return structures
    if isinstance(structures, (str, os.PathLike)):
        return ragged_from_file(structures, cell)

    def items():
        for s in structures:
            if isinstance(s, tuple) and len(s) == 2:
                yield as_structure(s[0], s[1])
            else:
                yield s

    return ragged_from_structures(items(), cell)


def convert(cols: dict, output: str = "pandas"):
    """Turn a dict of columns into the requested table type."""
    if output == "dict":
        return cols
    if output == "pandas":
        return to_dataframe(cols)
    if output == "arrow":
        import pyarrow as pa

        return pa.table({k: _arrow_col(k, v) for k, v in cols.items()})
    raise InputError(f"output: expected 'pandas', 'dict' or 'arrow', got {output!r}")


def _arrow_col(name: str, values: np.ndarray):
    import pyarrow as pa

    if values.dtype == object:
        return pa.array([str(v) for v in values], type=pa.string())
    return pa.array(values)


def to_dataframe(cols: dict):
    """A pandas DataFrame of batch columns (needs pandas: ``pip install 'gammatrace[table]'``)."""
    try:
        import pandas as pd
    except ImportError:
        raise InputError("output='pandas' needs pandas: pip install 'gammatrace[table]'") from None
    frame = pd.DataFrame({k: cols[k] for k in COLUMNS})
    frame["order"] = frame["order"].astype("Int64").where(frame["order"] >= 0, None)
    return frame
