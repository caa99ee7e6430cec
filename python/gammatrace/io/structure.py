"""The one record every entry point turns its input into: :class:`Structure`, and
:class:`FrameError` for a frame that could not be read (kept in place, never dropped).

A :class:`Structure` holds atomic numbers (``int64 (n_atoms,)``), Cartesian positions in
ångström (``float64 (n_atoms, 3)``), optional per-atom masses (isotopes), an optional periodic
cell, and where it came from (``source``, ``index`` of the frame).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import InputError, StructureError
from .elements import STANDARD_MASSES, element_data, nuclides, species

__all__ = ["FrameError", "Structure", "coerce_elements", "coerce_positions"]


#: The ``pbc`` of a structure without a periodic cell.
_NOT_PERIODIC = (False, False, False)


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
    masses : numpy.ndarray or None
        Per-atom masses in u, ``float64 (n_atoms,)`` (isotopes: ``D``/``T`` symbols, an
        extended-XYZ ``masses`` column, masses set on an ``ase.Atoms``, RDKit isotopes);
        None when every atom has the standard atomic weight of its element.
    cell : numpy.ndarray or None
        Lattice vectors as rows, Å, ``float64 (3, 3)``, when the input declares a cell.
    pbc : tuple of bool
        Periodic directions along the three lattice vectors; any True makes the structure
        periodic (see :mod:`gammatrace.io.cell`).
    """

    numbers: np.ndarray
    positions: np.ndarray
    source: str = "<array>"
    index: int = 0
    comment: str = ""
    info: dict = field(default_factory=dict)
    masses: np.ndarray | None = None
    cell: np.ndarray | None = None
    pbc: tuple = _NOT_PERIODIC

    def __post_init__(self) -> None:
        if self.masses is not None:
            m = np.ascontiguousarray(self.masses, dtype=np.float64)
            if m.shape != (self.numbers.shape[0],):
                raise InputError(
                    f"masses: expected shape ({self.numbers.shape[0]},), got {m.shape}"
                )
            object.__setattr__(self, "masses", m)
        if self.cell is not None:
            c = np.ascontiguousarray(self.cell, dtype=np.float64)
            if c.shape != (3, 3):
                raise InputError(f"cell: expected shape (3, 3), got {c.shape}")
            object.__setattr__(self, "cell", c)
        if self.pbc is not _NOT_PERIODIC:
            pbc = tuple(bool(p) for p in np.broadcast_to(np.asarray(self.pbc, dtype=bool), (3,)))
            object.__setattr__(self, "pbc", pbc)

    @property
    def n_atoms(self) -> int:
        """Number of atoms."""
        return int(self.numbers.shape[0])

    @property
    def symbols(self) -> list[str]:
        """Element symbols."""
        return element_data(self.numbers)[2]

    @property
    def atom_masses(self) -> np.ndarray:
        """Masses in u: those given (:attr:`masses`), else the standard atomic weights
        (IUPAC 2021)."""
        if self.masses is not None:
            return self.masses
        return STANDARD_MASSES[self.numbers]

    @property
    def species(self) -> np.ndarray:
        """``int64 (n_atoms,)``: equal for atoms of one element and one mass (within
        ``MASS_TOLERANCE``), the codes detection matches atoms by; the atomic numbers when
        no masses are given."""
        return species(self.numbers, self.masses)[0]

    @property
    def species_symbols(self) -> list[str]:
        """Symbols that tell isotopes apart: the element symbol for the standard mass, ``D``
        and ``T`` for ²H and ³H, otherwise the mass number before the element (``13C``)."""
        return species(self.numbers, self.masses)[1]

    @property
    def periodic(self) -> bool:
        """True when the input declares a periodic direction (see :mod:`gammatrace.io.cell`)."""
        return any(self.pbc)


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


def coerce_elements(elements: Any, n_expected: int | None) -> tuple[np.ndarray, np.ndarray | None]:
    """Atomic numbers and masses (None unless a nuclide symbol such as ``D`` is given) of
    element symbols or atomic numbers."""
    if isinstance(elements, (list, tuple)) and elements and isinstance(elements[0], str):
        nums, masses = nuclides(elements)  # the common case, without a numpy array between
    else:
        nums, masses = _elements_of_array(np.asarray(elements))
    if n_expected is not None and nums.shape[0] != n_expected:
        raise StructureError(
            f"{nums.shape[0]} elements but {n_expected} coordinate rows: they must match"
        )
    return nums, masses


def _elements_of_array(arr: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
    if arr.ndim != 1:
        raise InputError(f"symbols/numbers: expected a 1-D sequence, got shape {arr.shape}")
    if arr.dtype.kind in "iu":
        if arr.dtype.kind == "u" and arr.size and arr.max() > np.iinfo(np.int64).max:
            k = int(np.argmax(arr))
            raise StructureError(f"atom {k} has atomic number {arr[k]}, outside 1..=118")
        return np.ascontiguousarray(arr, dtype=np.int64), None
    if arr.dtype.kind in "UOS":
        return nuclides([str(s) for s in arr.tolist()])
    if arr.size == 0:
        return np.zeros(0, dtype=np.int64), None
    raise InputError(
        f"symbols/numbers: expected element symbols or integer atomic numbers, got dtype "
        f"{arr.dtype}"
    )


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
