"""Symmetrisation: move a nearly symmetric structure onto the exact point group.

Each atom becomes the group average of the images that the operations bring onto it,
x'_i = (1/h) Σ_R R⁻¹ x_{π_R(i)} (:func:`gammatrace.group.measure.symmetric_part`, the projection
the symmetry measures use), computed in the standard frame with the exact operations
(the table's canonical matrices when it has them, see :mod:`gammatrace.group.irreps`). When the
permutations compose like the operations, the result satisfies R x'_i = x'_{π_R(i)} exactly
(to rounding).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .bases.matrices import SymmetryData
from .errors import SymmetryError
from .group.irreps import group_data
from .group.measure import symmetric_part
from .text import format_length

__all__ = ["SymmetrizedStructure", "symmetrize"]


@dataclass(frozen=True)
class SymmetrizedStructure:
    """Result of :func:`symmetrize`.

    Attributes
    ----------
    positions : ndarray, shape (N, 3)
        Symmetrised coordinates in ångström, input frame.
    rms_displacement : float
        Root mean square distance moved per atom (Å).
    max_displacement : float
        Largest distance any atom moved (Å).
    most_moved_atom : int
        Index of the atom that moved the most.
    max_deviation : float
        Largest |R x'_i - x'_{π_R(i)}| of the result over all operations and atoms (Å).
    """

    positions: np.ndarray
    rms_displacement: float
    max_displacement: float
    most_moved_atom: int
    max_deviation: float


def symmetrize(sym: SymmetryData, tolerance: float | None = None) -> SymmetrizedStructure:
    """Project a structure onto its exact point group.

    Parameters
    ----------
    sym : SymmetryData
    tolerance : float, optional
        If given, the largest distance (Å) an atom may move.

    Returns
    -------
    SymmetrizedStructure

    Raises
    ------
    SymmetryError
        If an atom would move further than ``tolerance``, or the permutations do not compose
        like the operations (the result would not be symmetric).
    """
    g = group_data(sym)
    frame = g.frame
    y = (sym.positions - sym.center) @ frame.T  # standard frame
    ysym, dev = symmetric_part(y, g.ops_standard, sym.permutations)
    max_dev = float(dev.max())
    scale = max(1.0, float(np.abs(ysym).max()))
    if max_dev > 1e-9 * scale:
        k, i = np.unravel_index(int(np.argmax(dev)), dev.shape)
        raise SymmetryError(
            f"the permutations do not compose like the operations: after symmetrisation "
            f"operation {k} still moves atom {i} {format_length(max_dev)} Å from atom "
            f"{sym.permutations[k, i]}"
        )
    positions = ysym @ frame + sym.center
    step = np.linalg.norm(positions - sym.positions, axis=1)
    worst = int(np.argmax(step))
    if tolerance is not None and step[worst] > tolerance:
        raise SymmetryError(
            f"symmetrisation would move atom {worst} by {format_length(step[worst])} Å, more "
            f"than the tolerance {format_length(tolerance)} Å"
        )
    return SymmetrizedStructure(
        positions, float(np.sqrt(np.mean(step**2))), float(step[worst]), worst, max_dev
    )
