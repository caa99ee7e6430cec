"""Vibrational symmetry: Γ_vib = Γ_3N − Γ_trans − Γ_rot, IR and Raman activity, selection rules.

IR-active irreps transform as x, y or z; Raman-active ones as a quadratic function (read from the
character table's basis functions). For linear molecules only Rx and Ry are rotations (3N − 5
modes), and a single atom (K_h) has none (3N − 3 = 0 modes). Centrosymmetric structures obey
mutual exclusion: no fundamental is both IR and Raman active.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:  # pragma: no cover
    from .analysis import Analysis

__all__ = ["Vibrations", "format_irreps", "vibrations"]


@dataclass(frozen=True)
class Vibrations:
    """The vibrational representation of a structure.

    Attributes
    ----------
    irreps : dict
        Γ_vib: Mulliken label -> multiplicity.
    modes : int
        Number of vibrational degrees of freedom (3N − 6, 3N − 5 when linear, 0 for an atom).
    ir_active, raman_active : dict
        The IR- and Raman-active part of Γ_vib.
    n_fundamentals : int
        Distinct fundamentals (a degenerate set counts once): Σ multiplicities.
    n_ir, n_raman : int
        Distinct IR-active and Raman-active fundamentals.
    mutual_exclusion : bool
        True for centrosymmetric structures (no fundamental both IR and Raman active).
    characters : numpy.ndarray
        Characters of Γ_vib per class.
    """

    irreps: dict
    modes: int
    ir_active: dict
    raman_active: dict
    n_fundamentals: int
    n_ir: int
    n_raman: int
    mutual_exclusion: bool
    characters: np.ndarray

    def to_dict(self) -> dict:
        """The ``vibrations`` object of shared/INTERFACE.md (plus counts)."""
        return {
            "irreps": self.irreps,
            "modes": self.modes,
            "ir_active": self.ir_active,
            "raman_active": self.raman_active,
            "n_fundamentals": self.n_fundamentals,
            "n_ir_active": self.n_ir,
            "n_raman_active": self.n_raman,
            "mutual_exclusion": self.mutual_exclusion,
        }


def format_irreps(irreps: dict) -> str:
    """``{"A1": 2, "B2": 1}`` -> ``"2A1 + B2"``; empty -> ``"0"``."""
    if not irreps:
        return "0"
    return " + ".join(f"{n if n != 1 else ''}{label}" for label, n in irreps.items())


def rotational_freedom(table) -> int:
    """Rotational degrees of freedom of a structure of this group: 3, 2 for a linear group
    (only Rx, Ry), 0 for K_h (a single atom: no rotation moves it). The one place that says so.
    """
    if table.is_spherical:
        return 0
    return 2 if table.is_linear else 3


def external_characters(table) -> np.ndarray:
    """Characters of Γ_trans + Γ_rot per class (see :func:`rotational_freedom`).

    Γ_vib = Γ_3N − this; shared by single analyses, batches and the site-symmetry route.
    """
    trans = np.asarray(table.vector_characters, dtype=np.float64)
    free = rotational_freedom(table)
    if free == 0:
        return trans
    rot = np.asarray(table.rotation_characters, dtype=np.float64)
    if free == 2:
        # Rotation about the molecular axis is not a degree of freedom: drop the Rz irrep.
        rz = [ir for ir in table.irreps if "Rz" in ir.functions]
        rot = rot - np.asarray(rz[0].characters, dtype=np.float64)
    return trans + rot


def vibration_count(table, n_atoms) -> np.ndarray:
    """3N − 3 − rotations: 3N − 6, 3N − 5 for a linear group, 0 for one atom (K_h), for
    each entry of ``n_atoms``."""
    n = np.asarray(n_atoms, dtype=np.int64)
    return 3 * n - 3 - rotational_freedom(table)


def vibrations(analysis: Analysis) -> Vibrations:
    """Γ_vib of an analysed structure, with IR and Raman activity.

    Raises
    ------
    ReductionError
        If Γ_vib does not reduce to non-negative integers (a bug or a tolerance problem).
    """
    n = analysis.n_atoms
    table = analysis.table
    gamma_3n = analysis.representation("cartesian").characters
    chars = gamma_3n - external_characters(table)
    modes = int(vibration_count(table, np.array([n]))[0])
    irreps = table.reduce(chars, what="Γ_vib")
    negative = {k: v for k, v in irreps.items() if v < 0}
    if negative:
        from .errors import ReductionError

        raise ReductionError(f"Γ_vib has negative multiplicities {negative}: characters {chars}")
    dims = {ir.label: ir.dim for ir in table.irreps}
    total = sum(dims[k] * v for k, v in irreps.items())
    if total != modes:
        from .errors import ReductionError

        raise ReductionError(f"Γ_vib spans {total} modes, expected {modes}: {irreps}")
    ir_set = set(table.ir_active_irreps)
    raman_set = set(table.raman_active_irreps)
    ir = {k: v for k, v in irreps.items() if k in ir_set}
    raman = {k: v for k, v in irreps.items() if k in raman_set}
    centro = any(c.label == "i" for c in table.classes)
    return Vibrations(
        irreps,
        modes,
        ir,
        raman,
        int(sum(irreps.values())),
        int(sum(ir.values())),
        int(sum(raman.values())),
        centro,
        chars,
    )
