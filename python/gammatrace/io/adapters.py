"""Optional readers: ASE (``ase.Atoms`` and every format ASE reads) and RDKit (``Mol``, SDF).

Neither library is imported until it is needed; a missing one is a :class:`ReadError` naming
the extra to install.
"""

from __future__ import annotations

import os
from typing import Any

import numpy as np

from ..errors import ReadError, StructureError
from .structure import FrameError, Structure
from .xyz import read_xyz

__all__ = ["from_ase", "from_rdkit", "read_structures"]


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
