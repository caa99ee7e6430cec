"""XYZ and extended-XYZ files through the Rust reader, and XYZ output.

Bad frames become :class:`~gammatrace.io.FrameError` entries in place; the other frames are
still returned.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence

from .. import _core
from ..errors import ReadError
from .elements import element_data
from .structure import FrameError, Structure

__all__ = ["read_xyz", "read_xyz_raw", "write_xyz"]


def _frames_from_raw(raw: dict, source: str) -> list[Structure | FrameError]:
    offsets = raw["offsets"]
    out: list[Structure | FrameError] = []
    for k, err in enumerate(raw["errors"]):
        if err is not None:
            out.append(FrameError(source, k, err[0], err[1]))
            continue
        a, b = int(offsets[k]), int(offsets[k + 1])
        out.append(
            Structure(
                raw["numbers"][a:b],
                raw["positions"][a:b],
                source=source,
                index=k,
                comment=raw["comments"][k],
                info=dict(raw["info"][k]),
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


def read_xyz_raw(path: str | os.PathLike) -> dict:
    """The reader's ragged arrays (positions, numbers, offsets, comments, info, errors).

    For batches: no per-frame Python objects are made.
    """
    source = os.fspath(path)
    if source == "-":
        return _core.read_xyz_bytes(sys.stdin.buffer.read(), "<stdin>")
    if not os.path.exists(source):
        raise ReadError(f"{source}: no such file")
    return _core.read_xyz_path(source, source)


def write_xyz(structures: Sequence[Structure], path: str | os.PathLike) -> None:
    """Write structures as a multi-frame XYZ file (symbols, Å, 10 decimals)."""
    with open(path, "w", encoding="utf-8") as fh:
        for s in structures:
            symbols = element_data(s.numbers)[2]
            fh.write(f"{s.n_atoms}\n{s.comment}\n")
            fh.writelines(
                f"{sym:<2s} {x:16.10f} {y:16.10f} {z:16.10f}\n"
                for sym, (x, y, z) in zip(symbols, s.positions)
            )
