"""Optional readers: ASE (``ase.Atoms`` and every format ASE reads) and RDKit (``Mol``, SDF).

Neither library is imported until it is needed; a missing one is a :class:`ReadError` naming
the extra to install.

Isotopes: an ``ase.Atoms`` whose masses were set (``atoms.set_masses``, or a ``masses``
column read from a file: ``atoms.has("masses")``) has those masses; without them every atom
has the standard atomic weight (ASE's own default masses are not read). An RDKit atom with an
isotope (``atom.GetIsotope()`` > 0) has that nuclide's mass: ²H and ³H from this package's
table (AME2020), other nuclides from RDKit's isotope table. Periodic cells: an ``ase.Atoms``
with any ``pbc`` flag set carries its cell and flags (see :mod:`gammatrace.io.cell`).
"""

from __future__ import annotations

import dataclasses
import os
from typing import Any

import numpy as np

from ..errors import ReadError, StructureError
from .elements import STANDARD_MASSES, nuclides
from .structure import FrameError, Structure
from .xyz import read_xyz

__all__ = ["from_ase", "from_rdkit", "read_structures"]


def from_ase(atoms: Any) -> Structure:
    """A :class:`Structure` from an ``ase.Atoms`` (numbers and positions, no copy if possible;
    masses if set, cell and periodic flags)."""
    pbc = tuple(bool(p) for p in np.broadcast_to(np.asarray(atoms.pbc, dtype=bool), (3,)))
    return Structure(
        np.ascontiguousarray(atoms.get_atomic_numbers(), dtype=np.int64),
        np.ascontiguousarray(atoms.get_positions(), dtype=np.float64),
        source=str(atoms.info.get("name", "<ase.Atoms>")),
        masses=np.array(atoms.get_masses(), dtype=np.float64) if atoms.has("masses") else None,
        cell=np.array(atoms.cell.array, dtype=np.float64) if any(pbc) else None,
        pbc=pbc,
    )


def _rdkit_masses(mol: Any, nums: np.ndarray) -> np.ndarray | None:
    isotopes = np.array([a.GetIsotope() for a in mol.GetAtoms()], dtype=np.int64)
    if not isotopes.any():
        return None
    from rdkit import Chem

    table = Chem.GetPeriodicTable()
    # ²H and ³H from this package's table (the nuclide symbols D and T)
    d_mass, t_mass = nuclides(["D", "T"])[1]
    masses = STANDARD_MASSES[nums].copy()
    for i in np.flatnonzero(isotopes):
        z, a = int(nums[i]), int(isotopes[i])
        if z == 1 and a in (2, 3):
            masses[i] = d_mass if a == 2 else t_mass
            continue
        m = float(table.GetMassForIsotope(z, a))
        if not m > 0.0:
            raise StructureError(f"atom {i}: no mass known for the isotope {a} of element {z}")
        masses[i] = m
    return masses


def from_rdkit(mol: Any) -> list[Structure]:
    """One :class:`Structure` per conformer of an RDKit ``Mol`` (hydrogens as present;
    isotopes with their masses)."""
    nums = np.array([a.GetAtomicNum() for a in mol.GetAtoms()], dtype=np.int64)
    confs = list(mol.GetConformers())
    if not confs:
        raise StructureError("the RDKit molecule has no conformer (no 3D coordinates)")
    masses = _rdkit_masses(mol, nums)
    name = mol.GetProp("_Name") if mol.HasProp("_Name") else "<rdkit.Mol>"
    return [
        Structure(
            nums,
            np.ascontiguousarray(c.GetPositions(), dtype=np.float64),
            name,
            k,
            masses=masses,
        )
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
                    dataclasses.replace(
                        conf,
                        source=source,
                        index=len(out),
                        comment=mol.GetProp("_Name") if mol.HasProp("_Name") else "",
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
        dataclasses.replace(s, source=source, index=k)
        for k, s in enumerate(from_ase(a) for a in images)
    ]
