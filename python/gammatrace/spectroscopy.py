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

from .bases import parse_basis
from .bases.counting import build_representation
from .errors import ReductionError
from .text import plural

if TYPE_CHECKING:  # pragma: no cover
    from .group.symmetry import SymmetryData

__all__ = [
    "Vibrations",
    "activity_masks",
    "external_characters",
    "format_irreps",
    "reduce_vibrations",
    "rotational_freedom",
    "vibration_count",
    "vibrations",
]


@dataclass(frozen=True)
class Vibrations:
    """The vibrational representation of a structure.

    Attributes
    ----------
    irreps : dict
        Γ_vib: Mulliken label -> multiplicity.
    modes : int
        Number of vibrational degrees of freedom (3N − 6, or 3N − 5 when linear).
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


def reduce_vibrations(table, chars_3n, n_atoms):
    """Γ_vib for many structures of one group at once: the one reduction single analyses and
    batches share.

    Parameters
    ----------
    table : CharacterTable
    chars_3n : array_like, shape (k, n_classes)
        Γ_3N characters per class.
    n_atoms : array_like, shape (k,)

    Returns
    -------
    mult : numpy.ndarray of int, shape (k, n_irreps)
        Γ_vib multiplicities in table order.
    modes : numpy.ndarray of int, shape (k,)
        3N − 6 (3N − 5 linear, 0 for one atom).
    ok : numpy.ndarray of bool, shape (k,)
        False where the multiplicities are not non-negative integers spanning ``modes``.
    chars : numpy.ndarray, shape (k, n_classes)
        Γ_vib characters.
    """
    chars = np.asarray(chars_3n, dtype=np.float64) - external_characters(table)[None, :]
    modes = vibration_count(table, n_atoms)
    raw = table.raw_multiplicities(chars)
    mult = np.rint(raw).astype(np.int64)
    dims = np.asarray([ir.dim for ir in table.irreps], dtype=np.int64)
    ok = (
        (np.abs(raw - mult).max(axis=1, initial=0.0) <= 1e-6)
        & (mult >= 0).all(axis=1)
        & ((mult * dims).sum(axis=1) == modes)
    )
    return mult, modes, ok, chars


def activity_masks(table) -> tuple[np.ndarray, np.ndarray]:
    """Boolean masks over the table's irreps: IR-active, Raman-active."""
    ir_set, raman_set = table.ir_active_irreps, table.raman_active_irreps
    labels = [ir.label for ir in table.irreps]
    return (
        np.array([lab in ir_set for lab in labels], dtype=bool),
        np.array([lab in raman_set for lab in labels], dtype=bool),
    )


def vibrations(sym: SymmetryData, cartesian_characters=None) -> Vibrations:
    """Γ_vib of a structure with its group, with IR and Raman activity.

    Parameters
    ----------
    sym : SymmetryData
    cartesian_characters : array_like, optional
        Γ_3N per class, when already counted (else counted here).

    Raises
    ------
    ReductionError
        If Γ_vib does not reduce to non-negative integers (a bug or a tolerance problem).
    """
    table = sym.table
    if cartesian_characters is None:
        resolved = parse_basis("cartesian").resolve(sym, center=sym.center, tol=sym.tol)
        cartesian_characters = build_representation(sym, resolved).characters
    mult, modes, ok, chars = reduce_vibrations(
        table, np.asarray(cartesian_characters, dtype=np.float64)[None, :], [sym.n_atoms]
    )
    if not ok[0]:
        raw = table.raw_multiplicities(chars)[0]
        parts = ", ".join(f"{ir.label} {v:.6g}" for ir, v in zip(table.irreps, raw))
        raise ReductionError(
            f"Γ_vib does not reduce to non-negative integers spanning "
            f"{plural(int(modes[0]), 'mode')}: "
            f"characters {chars[0].tolist()} give {parts}"
        )
    labels = [ir.label for ir in table.irreps]
    irreps = {lab: int(v) for lab, v in zip(labels, mult[0]) if v}
    ir_mask, raman_mask = activity_masks(table)
    ir = {lab: int(v) for lab, v, a in zip(labels, mult[0], ir_mask) if v and a}
    raman = {lab: int(v) for lab, v, a in zip(labels, mult[0], raman_mask) if v and a}
    centro = any(c.label == "i" for c in table.classes)
    return Vibrations(
        irreps,
        int(modes[0]),
        ir,
        raman,
        int(sum(irreps.values())),
        int(sum(ir.values())),
        int(sum(raman.values())),
        centro,
        chars[0],
    )
