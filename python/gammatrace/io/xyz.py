"""XYZ and extended-XYZ files through the Rust reader, and XYZ output.

Bad frames become :class:`~gammatrace.io.FrameError` entries in place; the other frames are
still returned.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence

import numpy as np

from .. import _core
from ..errors import ReadError
from .cell import periodic_info
from .elements import STANDARD_MASSES
from .structure import FrameError, Structure

__all__ = ["frame_masses", "read_xyz", "read_xyz_raw", "write_xyz"]


def frame_masses(raw: dict, a: int, b: int) -> np.ndarray | None:
    """Masses of atoms a..b of the reader's ragged arrays: None when the file gives none of
    them a mass of its own, else the given masses with standard weights filling the gaps."""
    masses = raw.masses
    if len(masses) == 0:
        return None
    m = masses[a:b]
    given = ~np.isnan(m)
    if not given.any():
        return None
    return np.where(given, m, STANDARD_MASSES[raw.numbers[a:b]])


def _frames_from_raw(raw: dict, source: str) -> list[Structure | FrameError]:
    offsets = raw.offsets
    out: list[Structure | FrameError] = []
    for k, err in enumerate(raw.errors):
        if err is not None:
            out.append(FrameError(source, k, err[0], err[1]))
            continue
        a, b = int(offsets[k]), int(offsets[k + 1])
        info = dict(raw.info[k])
        try:
            cell, pbc = periodic_info(info, f"{source} [frame {k}]")
        except ReadError as exc:
            out.append(FrameError(source, k, "ReadError", str(exc)))
            continue
        out.append(
            Structure(
                raw.numbers[a:b],
                raw.positions[a:b],
                source=source,
                index=k,
                comment=raw.comments[k],
                info=info,
                masses=frame_masses(raw, a, b),
                cell=cell,
                pbc=pbc,
            )
        )
    return out


def read_xyz(path: str | os.PathLike) -> list[Structure | FrameError]:
    """Read every frame of a (multi-frame, extended) XYZ file with the Rust reader.

    ``"-"`` reads standard input. Bad frames become :class:`FrameError` entries in place;
    the other frames are still returned.

    Raises
    ------
    ReadError
        When the file cannot be opened at all.
    """
    source = os.fspath(path)
    if source == "-":
        data = sys.stdin.buffer.read()
        raw = _core.read_xyz_bytes(data, "<stdin>")
        return _frames_from_raw(raw, "-")
    if not os.path.exists(source):
        raise ReadError(f"{source}: no such file")
    raw = _core.read_xyz_path(source, source)
    return _frames_from_raw(raw, source)


def read_xyz_raw(path: str | os.PathLike) -> _core.XyzFrames:
    """The reader's ragged arrays (positions, numbers, masses, offsets, comments, info, errors).

    ``masses`` is empty when no atom of the file has a mass of its own, else parallel to
    ``numbers`` with NaN where the standard atomic weight applies. ``comments``, ``info``
    (the ``key=value`` pairs of each comment line) and ``errors`` (``None`` or the error type
    and message of each frame) are read-only sequences whose items are made when asked for.

    For batches: no per-frame Python objects are made.
    """
    source = os.fspath(path)
    if source == "-":
        return _core.read_xyz_bytes(sys.stdin.buffer.read(), "<stdin>")
    if not os.path.exists(source):
        raise ReadError(f"{source}: no such file")
    return _core.read_xyz_path(source, source)


def write_xyz(structures: Sequence[Structure], path: str | os.PathLike) -> None:
    """Write structures as a multi-frame XYZ file (symbols, Å, 10 decimals).

    Hydrogen-2 and -3 are written ``D`` and ``T`` (read back as such); other masses that
    differ from the standard weights are not written (plain XYZ has no place for them).
    """
    with open(path, "w", encoding="utf-8") as fh:
        for s in structures:
            symbols = [
                sym if sym.isalpha() else elem for sym, elem in zip(s.species_symbols, s.symbols)
            ]
            fh.write(f"{s.n_atoms}\n{s.comment}\n")
            fh.writelines(
                f"{sym:<2s} {x:16.10f} {y:16.10f} {z:16.10f}\n"
                for sym, (x, y, z) in zip(symbols, s.positions)
            )
