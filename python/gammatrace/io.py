"""Structures in and out: arrays, XYZ files (through the Rust reader) and optional ASE/RDKit.

A :class:`Structure` is the one thing every entry point turns its input into: atomic numbers
(``int64 (n_atoms,)``), Cartesian positions in ångström (``float64 (n_atoms, 3)``), and where it
came from (``source``, ``index`` of the frame). Readers never stop at a bad frame: they yield a
:class:`FrameError` in its place and carry on.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Union

import numpy as np

from .errors import InputError, ReadError, StructureError

__all__ = [
    "FrameError",
    "Structure",
    "as_structure",
    "atomic_numbers",
    "element_data",
    "read_structures",
    "read_xyz",
    "write_xyz",
]


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


def _core():
    from . import _core as core

    return core


def atomic_numbers(symbols: Sequence[str]) -> np.ndarray:
    """Atomic numbers for element symbols (``"C"``, ``"cl"``) or numeric strings.

    Raises
    ------
    StructureError
        For an unknown symbol; the message names its position.
    """
    return _core().atomic_numbers([str(s).strip() for s in symbols])


def element_data(numbers: np.ndarray) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Standard atomic masses (u), covalent radii (Å) and symbols for atomic numbers."""
    nums = np.ascontiguousarray(numbers, dtype=np.int64)
    return _core().element_data(nums)


def _coerce_numbers(elements: Any, n_expected: int | None) -> np.ndarray:
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


def _coerce_positions(positions: Any) -> np.ndarray:
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


StructureLike = Union[Structure, str, os.PathLike, Any]


def as_structure(
    obj: StructureLike, positions: Any = None, *, frame: int | None = None
) -> Structure:
    """Turn any supported input into a :class:`Structure`.

    Parameters
    ----------
    obj
        One of: a :class:`Structure`; element symbols or atomic numbers (with ``positions``);
        a path to an XYZ file; an ``ase.Atoms``; an RDKit ``Mol`` with a conformer.
    positions : array_like, optional
        ``(n_atoms, 3)`` coordinates in ångström, when ``obj`` lists the elements. A
        C-contiguous ``float64`` array is used without a copy.
    frame : int, optional
        Which frame of a multi-frame file (default: the file must hold exactly one).

    Raises
    ------
    InputError, StructureError, ReadError
        With a message naming the argument, atom, file, frame or line.
    """
    if isinstance(obj, Structure):
        return obj
    if positions is not None:
        pos = _coerce_positions(positions)
        return Structure(_coerce_numbers(obj, pos.shape[0]), pos)
    if isinstance(obj, (str, os.PathLike)):
        frames = read_xyz(obj)
        if frame is None:
            if len(frames) != 1:
                raise InputError(
                    f"{os.fspath(obj)} holds {len(frames)} frames: pass frame=K, or use "
                    "analyze_many() for all of them"
                )
            frame = 0
        if not -len(frames) <= frame < len(frames):
            raise InputError(f"frame={frame}: {os.fspath(obj)} holds {len(frames)} frames")
        item = frames[frame]
        if isinstance(item, FrameError):
            raise ReadError(item.message)
        return item
    mod = type(obj).__module__ or ""
    if mod.startswith("ase"):
        return from_ase(obj)
    if mod.startswith("rdkit"):
        confs = from_rdkit(obj)
        return confs[frame or 0]
    raise InputError(
        "expected element symbols with positions, an XYZ path, a Structure, an ase.Atoms or an "
        f"RDKit Mol; got {type(obj).__name__}"
    )


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
        raw = _core().read_xyz_bytes(data, "<stdin>")
        return _frames_from_raw(raw, "-")
    if not os.path.exists(source):
        raise ReadError(f"{source}: no such file")
    raw = _core().read_xyz_path(source, source)
    return _frames_from_raw(raw, source)


def read_xyz_raw(path: str | os.PathLike) -> dict:
    """The reader's ragged arrays (positions, numbers, offsets, comments, info, errors).

    For batches: no per-frame Python objects are made.
    """
    source = os.fspath(path)
    if source == "-":
        return _core().read_xyz_bytes(sys.stdin.buffer.read(), "<stdin>")
    if not os.path.exists(source):
        raise ReadError(f"{source}: no such file")
    return _core().read_xyz_path(source, source)


def from_ase(atoms: Any) -> Structure:
    """A :class:`Structure` from an ``ase.Atoms`` (numbers and positions, no copy if possible)."""
    return Structure(
        np.ascontiguousarray(atoms.get_atomic_numbers(), dtype=np.int64),
        np.ascontiguousarray(atoms.get_positions(), dtype=np.float64),
        source=str(atoms.info.get("name", "<ase.Atoms>")),
    )


def from_rdkit(mol: Any) -> list[Structure]:
    """One :class:`Structure` per conformer of an RDKit ``Mol`` (hydrogens as present)."""
    nums = np.array([a.GetAtomicNum() for a in mol.GetAtoms()], dtype=np.int64)
    confs = list(mol.GetConformers())
    if not confs:
        raise StructureError("the RDKit molecule has no conformer (no 3D coordinates)")
    name = mol.GetProp("_Name") if mol.HasProp("_Name") else "<rdkit.Mol>"
    return [
        Structure(nums, np.ascontiguousarray(c.GetPositions(), dtype=np.float64), name, k)
        for k, c in enumerate(confs)
    ]


def read_structures(path: str | os.PathLike) -> list[Structure | FrameError]:
    """Read any supported file: XYZ natively; SDF through RDKit; other formats through ASE.

    Raises
    ------
    ReadError
        When the format needs an optional reader that is not installed (names the extra).
    """
    source = os.fspath(path)
    ext = os.path.splitext(source)[1].lower()
    if source == "-" or ext in (".xyz", ".extxyz", ""):
        return read_xyz(source)
    if ext in (".sdf", ".mol", ".sd"):
        try:
            from rdkit import Chem
        except ImportError:
            raise ReadError(
                f"{source}: reading {ext} needs RDKit: pip install 'gammatrace[rdkit]'"
            ) from None
        out: list[Structure | FrameError] = []
        supplier = Chem.SDMolSupplier(source, removeHs=False)
        for k, mol in enumerate(supplier):
            if mol is None:
                out.append(FrameError(source, k, "ReadError", f"{source}: record {k} unreadable"))
                continue
            for conf in from_rdkit(mol):
                out.append(
                    Structure(
                        conf.numbers,
                        conf.positions,
                        source,
                        len(out),
                        mol.GetProp("_Name") if mol.HasProp("_Name") else "",
                    )
                )
        return out
    try:
        import ase.io
    except ImportError:
        raise ReadError(
            f"{source}: reading {ext} files needs ASE: pip install 'gammatrace[ase]'"
        ) from None
    try:
        images = ase.io.read(source, index=":")
    except Exception as exc:  # noqa: BLE001 (ASE raises many types: all become read errors)
        raise ReadError(f"{source}: {exc}") from None
    return [
        Structure(s.numbers, s.positions, source, k)
        for k, s in enumerate(from_ase(a) for a in images)
    ]


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
