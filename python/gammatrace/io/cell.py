"""Periodic input: frames that declare a crystal cell, and what to do with them.

A crystal repeats by lattice translations, so its symmetry is a space group; the point groups
this package finds are groups of operations that fix one point of a *finite* structure. A
periodic frame therefore has no point group of that kind, and is refused unless the caller
says what to do with the cell (``cell=``, on the command line ``--cell``):

``"refuse"`` (the default)
    a :class:`~gammatrace.errors.CellError` naming the frame;
``"ignore"``
    the coordinates are analysed as a finite cluster, exactly as given;
``"unwrap"``
    molecules split across the cell boundaries are made whole first (minimum-image rule,
    bonds from covalent radii: d ≤ 1.2 (r_i + r_j), Cordero et al. 2008), and the whole
    unwrapped set is analysed as one finite structure. Each molecule is rebuilt around its
    lowest-numbered atom, which keeps its given position; molecules are not moved relative to
    each other. A structure whose bonds run through the cell (an extended solid, a chain, a
    sheet) has no finite molecule to unwrap: a CellError.

A frame is periodic when its ``pbc`` flags hold any ``T``; an extended-XYZ frame with a
``Lattice`` and no ``pbc`` is periodic in all three directions (the extended-XYZ convention).
An ``ase.Atoms`` is periodic when any of its ``pbc`` flags is set.
"""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np

from .. import _core
from ..errors import CellError, InputError, ReadError
from .elements import element_data
from .structure import Structure

__all__ = ["BOND_SCALE", "CELL_CHOICES", "apply_cell", "check_cell_choice", "periodic_info"]

#: What to do with a periodic frame (the ``cell`` option); the first is the default.
CELL_CHOICES = ("refuse", "ignore", "unwrap")
#: Bonds for unwrapping: d ≤ BOND_SCALE · (r_i + r_j), covalent radii.
BOND_SCALE = 1.2

_TRUE = {"t", "true", "1"}
_FALSE = {"f", "false", "0"}


def check_cell_choice(cell: str | None) -> str:
    """The cell option as one of :data:`CELL_CHOICES` (None is ``"refuse"``).

    Raises
    ------
    InputError
        For anything else.
    """
    if cell is None:
        return CELL_CHOICES[0]
    if cell not in CELL_CHOICES:
        raise InputError(f"cell: expected one of {', '.join(CELL_CHOICES)}, got {cell!r}")
    return cell


def periodic_info(info: dict, where: str) -> tuple[np.ndarray | None, tuple[bool, bool, bool]]:
    """The cell (lattice vectors as rows, Å) and periodic flags of extended-XYZ properties.

    ``where`` names the frame in error messages.

    Raises
    ------
    ReadError
        For a ``Lattice`` that is not nine numbers or ``pbc`` flags that are not T/F.
    """
    lattice = pbc = None
    for key, value in info.items():
        k = key.lower()
        if k == "lattice":
            lattice = value
        elif k == "pbc":
            pbc = value
    cell = None
    if lattice is not None:
        try:
            cell = np.array([float(v) for v in str(lattice).split()], dtype=np.float64)
        except ValueError:
            cell = None
        if cell is None or cell.shape != (9,) or not np.all(np.isfinite(cell)):
            raise ReadError(f"{where}: Lattice '{lattice}' is not nine numbers")
        cell = cell.reshape(3, 3)
    if pbc is None:
        flags = (True, True, True) if cell is not None else (False, False, False)
        return cell, flags
    tokens = str(pbc).lower().split()
    if len(tokens) == 1:
        tokens = tokens * 3
    if len(tokens) != 3 or any(t not in _TRUE | _FALSE for t in tokens):
        raise ReadError(f"{where}: pbc '{pbc}' is not three T/F flags")
    return cell, tuple(t in _TRUE for t in tokens)  # type: ignore[return-value]


def _where(s: Structure) -> str:
    return f"{s.source} [frame {s.index}]"


def _flags(pbc) -> str:
    return " ".join("T" if p else "F" for p in pbc)


def apply_cell(s: Structure, cell: str | None) -> Structure:
    """The structure to analyse for a frame, under the ``cell`` option (see the module notes).

    A structure without periodic flags is returned as it is, whatever the option.

    Raises
    ------
    CellError
        For a periodic frame with ``cell`` ``"refuse"`` (the default), and for one that cannot
        be unwrapped (no Lattice, or bonds running through the cell).
    InputError
        For an unknown ``cell`` option.
    """
    choice = check_cell_choice(cell)
    if not any(s.pbc) or choice == "ignore":
        return s
    if choice == "refuse":
        raise CellError(
            f'{_where(s)}: the frame declares a periodic cell (pbc "{_flags(s.pbc)}"). A '
            "crystal repeats by lattice translations, so its symmetry is a space group; the "
            "point groups found here are those of finite molecules and clusters (operations "
            "that fix one point), which a periodic structure does not have. Say what to do "
            "with the cell: cell='ignore' (command line --cell ignore) analyses the "
            "coordinates as a finite cluster as given; cell='unwrap' (--cell unwrap) first "
            "makes molecules whole across the cell boundaries"
        )
    if s.cell is None:
        raise CellError(
            f"{_where(s)}: cannot unwrap: the frame declares periodic directions "
            f'(pbc "{_flags(s.pbc)}") but no Lattice'
        )
    pos = unwrap_positions(s.numbers, s.positions, s.cell, s.pbc, _where(s))
    return dataclasses.replace(s, positions=pos)


def unwrap_positions(
    numbers: np.ndarray,
    positions: np.ndarray,
    cell: np.ndarray,
    pbc,
    where: str = "the structure",
) -> np.ndarray:
    """Positions with every molecule made whole across the periodic directions.

    Bonds are found among the atoms and their images one cell away in each periodic
    direction (wrapped into the cell first); each molecule is then rebuilt by a walk over its
    bonds from its lowest-numbered atom, which keeps its given position.

    Raises
    ------
    CellError
        For a singular cell, or bonds that lead from an atom to its own periodic image (an
        extended solid, chain or sheet: no finite molecule).
    """
    pos = np.ascontiguousarray(positions, dtype=np.float64)
    lat = np.asarray(cell, dtype=np.float64).reshape(3, 3)
    periodic = np.flatnonzero(np.asarray(pbc, dtype=bool))
    n = len(pos)
    if n == 0 or len(periodic) == 0:
        return pos
    if abs(np.linalg.det(lat)) < 1e-9:
        raise CellError(f"{where}: cannot unwrap: the Lattice vectors span no volume")
    frac = pos @ np.linalg.inv(lat)
    shift = np.zeros_like(frac)
    shift[:, periodic] = np.floor(frac[:, periodic])
    wrapped = pos - shift @ lat
    steps = [(-1, 0, 1) if k in periodic else (0,) for k in range(3)]
    shifts = np.array([(0, 0, 0)] + [s for s in itertools.product(*steps) if any(s)], float)
    images = (wrapped[None, :, :] + (shifts @ lat)[:, None, :]).reshape(-1, 3)
    radii = element_data(numbers)[1]
    bonds = _core.find_bonds(
        np.ascontiguousarray(images), np.ascontiguousarray(np.tile(radii, len(shifts))), BOND_SCALE
    )
    # keep bonds with an end in the central copy (index < n): central atom i to atom j in
    # image s, as the displacement from i to that image of j
    a, b = bonds[:, 0], bonds[:, 1]
    keep = a < n  # pairs come as (smaller, larger) index: the central end is a
    a, b = a[keep], b[keep]
    i, j = a, b % n
    disp = images[b] - images[a]
    if np.any(i == j):
        k = int(i[np.argmax(i == j)])
        raise CellError(
            f"{where}: cannot unwrap: atom {k} is bonded to its own periodic image (an "
            "extended solid, chain or sheet has no finite molecule); use cell='ignore' to "
            "analyse the coordinates as given"
        )
    # edges in both directions; molecules are the connected components, each walked
    # breadth-first from its lowest-numbered atom, one vectorised step per bond layer
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    src = np.concatenate([i, j])
    dst = np.concatenate([j, i])
    vec = np.concatenate([disp, -disp])
    graph = coo_matrix((np.ones(len(src)), (src, dst)), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    roots = np.unique(labels, return_index=True)[1]
    out = np.full_like(pos, np.nan)
    placed = np.zeros(n, dtype=bool)
    out[roots] = pos[roots]
    placed[roots] = True
    frontier = placed.copy()
    while True:
        step = np.flatnonzero(frontier[src] & ~placed[dst])
        if len(step) == 0:
            break
        step = step[np.unique(dst[step], return_index=True)[1]]
        out[dst[step]] = out[src[step]] + vec[step]
        placed[dst[step]] = True
        frontier = np.zeros(n, dtype=bool)
        frontier[dst[step]] = True
    miss = np.abs(out[dst] - out[src] - vec).max(axis=1) if len(src) else np.zeros(0)
    bad = miss > 1e-6 * (1.0 + np.abs(out).max())
    if np.any(bad):
        k = int(dst[np.argmax(bad)])
        raise CellError(
            f"{where}: cannot unwrap: the bonds of atom {k} lead to its own periodic image (an "
            "extended solid, chain or sheet has no finite molecule); use cell='ignore' to "
            "analyse the coordinates as given"
        )
    return out
