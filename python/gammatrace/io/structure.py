"""The one record every entry point turns its input into: :class:`Structure`, and
:class:`FrameError` for a frame that could not be read (kept in place, never dropped).

A :class:`Structure` holds atomic numbers (``int64 (n_atoms,)``), Cartesian positions in
ångström (``float64 (n_atoms, 3)``), and where it came from (``source``, ``index`` of the frame).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import InputError, StructureError
from .elements import atomic_numbers, element_data

__all__ = ["FrameError", "Structure", "coerce_numbers", "coerce_positions"]


@dataclass(frozen=True)
class Structure:
    """One molecule or cluster.

    Attributes
    ----------
    numbers : numpy.ndarray
        Atomic numbers, ``int64 (n_atoms,)``.
    positions : numpy.ndarray
        Cartesian coordinates in ångström, ``float64 (n_atoms, 3)``, C-contiguous.
    source : str
        File name as given, or ``"<array>"``.
    index : int
        Zero-based frame index within ``source``.
    comment : str
        The XYZ comment line, if any.
    info : dict
        ``key=value`` properties of an extended-XYZ comment line.
    """

    numbers: np.ndarray
    positions: np.ndarray
    source: str = "<array>"
    index: int = 0
    comment: str = ""
    info: dict = field(default_factory=dict)

    @property
    def n_atoms(self) -> int:
        """Number of atoms."""
        return int(self.numbers.shape[0])

    @property
    def symbols(self) -> list[str]:
        """Element symbols."""
        return element_data(self.numbers)[2]


@dataclass(frozen=True)
class FrameError:
    """A frame that could not be read or analysed, kept in its place in the batch.

    Attributes
    ----------
    source, index
        Where it came from (file as given, zero-based frame).
    type : str
        The exception class name (``ReadError``, ``StructureError`` ...).
    message : str
        The full sentence, naming file, frame, line or atom.
    """

    source: str
    index: int
    type: str
    message: str

    def to_dict(self) -> dict:
        """The JSON form of shared/INTERFACE.md for a structure that failed."""
        return {
            "source": self.source,
            "index": self.index,
            "error": {"type": self.type, "message": self.message},
        }


def coerce_numbers(elements: Any, n_expected: int | None) -> np.ndarray:
    arr = np.asarray(elements)
    if arr.ndim != 1:
        raise InputError(f"symbols/numbers: expected a 1-D sequence, got shape {arr.shape}")
    if arr.dtype.kind in "iu":
        if arr.dtype.kind == "u" and arr.size and arr.max() > np.iinfo(np.int64).max:
            k = int(np.argmax(arr))
            raise StructureError(f"atom {k} has atomic number {arr[k]}, outside 1..=118")
        nums = np.ascontiguousarray(arr, dtype=np.int64)
    elif arr.dtype.kind in "UOS":
        nums = atomic_numbers([str(s) for s in arr.tolist()])
    elif arr.size == 0:
        nums = np.zeros(0, dtype=np.int64)
    else:
        raise InputError(
            f"symbols/numbers: expected element symbols or integer atomic numbers, got dtype "
            f"{arr.dtype}"
        )
    if n_expected is not None and nums.shape[0] != n_expected:
        raise StructureError(
            f"{nums.shape[0]} elements but {n_expected} coordinate rows: they must match"
        )
    return nums


def coerce_positions(positions: Any) -> np.ndarray:
    if np.iscomplexobj(positions):
        raise InputError("positions: complex numbers given; expected real coordinates in Å")
    try:
        pos = np.ascontiguousarray(positions, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(f"positions: cannot read as numbers ({exc})") from None
    if pos.ndim != 2 or pos.shape[1] != 3:
        if pos.size == 0:
            return np.zeros((0, 3), dtype=np.float64)
        raise InputError(f"positions: expected shape (n_atoms, 3), got {pos.shape}")
    return pos
