"""Plain records shared by the table builders: classes, irreps and a table's raw content."""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

__all__ = ["GOLDEN_MINUS", "GOLDEN_PLUS", "ClassInfo", "Irrep", "TableSpec", "snap"]


class ClassInfo(NamedTuple):
    """One class of a character table, as the table heads it.

    Attributes
    ----------
    label : str
        Printed label with its size prefix, e.g. ``"2C3"``, ``"3σv"``, ``"12C5^2"``.
    size : int
        Number of operations in the class.
    proper : bool
        True when the operations are rotations C(angle), False for σh·C(angle).
    angle : float
        θ in degrees, in [0, 180] (DEVELOPERS.md, "Operations").
    """

    label: str
    size: int
    proper: bool
    angle: float


class Irrep(NamedTuple):
    """One irreducible representation (real form).

    Attributes
    ----------
    label : str
        Mulliken symbol in the ASCII spelling of INTERFACE.md (``A1g``, ``E'``, ``Σg+``).
    dim : int
        Dimension (a complex-conjugate pair combined into one real irrep has dim 2).
    characters : tuple of float
        One character per class, in the order of ``CharacterTable.classes``.
    functions : tuple of str
        Linear, rotational and quadratic functions transforming as this irrep.
    pair : bool
        True when the irrep stands for a pair of complex-conjugate one-dimensional irreps
        (norm κ = 2 in the reduction formula); False by default.
    """

    label: str
    dim: int
    characters: tuple[float, ...]
    functions: tuple[str, ...]
    pair: bool = False


@dataclass
class TableSpec:
    """The raw content of a table as a builder produces it (before functions are matched).

    ``op_class`` holds the class index (print order) of each operation in ``ops``;
    ``characters`` is (n_irreps, n_classes) in print order; ``square`` holds the index of
    each operation's square (the core's group arithmetic). ``weights`` are the class weights
    of the reduction formula when they are not size / h (K_h: a quadrature of the integral
    over O(3)); ``unresolved`` names, for such a table, the representations outside its reach.
    """

    name: str
    ops: np.ndarray
    op_class: np.ndarray
    classes: tuple[ClassInfo, ...]
    irrep_labels: tuple[str, ...]
    characters: np.ndarray
    order: int | None
    square: np.ndarray | None = None
    is_linear: bool = False
    is_spherical: bool = False
    weights: np.ndarray | None = None
    unresolved: str = ""


# Surds that printed tables write exactly; characters are snapped to them so that,
# e.g., 2cos72° is bit-identical to −(1 − √5)/2 computed once.
GOLDEN_PLUS = (1.0 + np.sqrt(5.0)) / 2.0
GOLDEN_MINUS = (1.0 - np.sqrt(5.0)) / 2.0
_EXACT = np.array([GOLDEN_PLUS, GOLDEN_MINUS, np.sqrt(2.0), np.sqrt(3.0)])


def snap(values: np.ndarray, tol: float = 1e-9) -> np.ndarray:
    """Round characters that are within ``tol`` of an integer or a printed surd onto it."""
    v = np.array(values, dtype=np.float64)
    r = np.round(v)
    v = np.where(np.abs(v - r) < tol, r, v)
    for x in np.concatenate([_EXACT, -_EXACT]):
        v = np.where(np.abs(v - x) < tol, x, v)
    v[v == 0.0] = 0.0  # no negative zeros
    return v
