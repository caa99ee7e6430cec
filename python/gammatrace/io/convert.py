"""Any supported input to a :class:`~gammatrace.io.Structure` (:func:`as_structure`)."""

from __future__ import annotations

import os
from typing import Any, Union

from ..errors import InputError, ReadError
from ..text import plural
from .adapters import from_ase, from_rdkit
from .structure import FrameError, Structure, coerce_elements, coerce_positions
from .xyz import read_xyz

__all__ = ["StructureLike", "as_structure"]

StructureLike = Union[Structure, str, os.PathLike, Any]


def as_structure(
    obj: StructureLike, positions: Any = None, *, frame: int | None = None
) -> Structure:
    """Turn any supported input into a :class:`Structure`.

    Parameters
    ----------
    obj
        One of: a :class:`Structure`; element symbols (``D`` and ``T`` for hydrogen-2 and -3)
        or atomic numbers (with ``positions``);
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
        pos = coerce_positions(positions)
        nums, masses = coerce_elements(obj, pos.shape[0])
        return Structure(nums, pos, masses=masses)
    if isinstance(obj, (str, os.PathLike)):
        frames = read_xyz(obj)
        if frame is None:
            if len(frames) != 1:
                raise InputError(
                    f"{os.fspath(obj)} holds {plural(len(frames), 'frame')}: pass frame=K, or use "
                    "analyze_many() for all of them"
                )
            frame = 0
        if not -len(frames) <= frame < len(frames):
            raise InputError(
                f"frame={frame}: {os.fspath(obj)} holds {plural(len(frames), 'frame')}"
            )
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
