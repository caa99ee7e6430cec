"""Readable names for the functions of a basis, and symmetry-adapted functions written out.

Function names (:func:`function_names`), one per basis function in the basis order of
:mod:`gammatrace.bases.components`; atoms are numbered from 1 after their species symbol
(``O1``, ``H2``; isotopes by their own symbol, ``D3``, ``¹³C4``):

==================  ==========================================================================
``atoms``           ``φ(H4)``: the scalar on atom H4
``cartesian``       ``x(H4)``, ``y(H4)``, ``z(H4)``: displacements along the input axes
``orbitals``        ``s(H4)``, ``p_y(C3)``, ``p_z(C3)``, ``p_x(C3)``, ``d_xy(Fe1)``, ``d_yz``,
                    ``d_z²``, ``d_xz``, ``d_x²−y²``, ``f_z³`` …: real harmonics in the order
                    m = −l..l of :mod:`gammatrace.group.harmonics`; an element with two shells
                    of one l numbers them in the order given (``s[1](C1)``, ``s[2](C1)``)
``pi``              ``p⊥(C1)``: the p orbital along the centre's normal
``bonds``           ``σ(O1–H2)``: the stretch of the bond between O1 and H2
``bond_vectors``    ``b(O1→H2)``: the vector along the bond, pointing from O1 to H2
``vectors``         ``v1(H4)``, ``v2(H4)`` …: the user's vectors at each atom, in their order
==================  ==========================================================================

A symmetry-adapted function is a row of the adapted basis X (:class:`Combination`). It is
written out with the coefficients of magnitude at least :data:`COEFFICIENT_CUTOFF` and, where
it is exact, as a common factor times integers and square roots (:func:`exact_form`):

* **exact**: the smallest n ≤ :data:`EXACT_MAX_N` for which every listed coefficient c_i
  makes a_i = c_i² n an integer within :data:`EXACT_TOLERANCE`, with Σ a_i = n (the listed
  terms alone are normalised). Then c_i = ±√a_i/√n, and the function is written
  (1/√n)(±k_1√r_1 f_1 ± …) with a_i = k_i² r_i, r_i square-free: (1/m) for n = m², no
  factor for n = 1, no 1 before a function, no √1:
  ``(1/√6)(2 σ(N1–H2) − σ(N1–H3) − σ(N1–H4))``, ``(1/2)(p_y(N1) + √3 p_x(N1))``;
* otherwise each coefficient with three decimals (``0.110 x(C1) − 0.068 z(C1)``; below
  0.001 in exponent form).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..io.elements import SYMBOLS

__all__ = [
    "COEFFICIENT_CUTOFF",
    "EXACT_MAX_N",
    "EXACT_TOLERANCE",
    "Combination",
    "atom_labels",
    "exact_form",
    "function_names",
    "harmonic_names",
]

#: Coefficients of smaller magnitude are left out of a written-out function.
COEFFICIENT_CUTOFF = 1e-6
#: The largest n of an exact form (1/√n)(k_1 f_1 + …).
EXACT_MAX_N = 1000
#: How close c √n must be to an integer for the exact form.
EXACT_TOLERANCE = 1e-9

_SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
_LETTER = "spdfghi"
# real harmonics m = -l..l, as gammatrace.group.harmonics orders them, written for reading
_HARMONICS = {
    0: ("",),
    1: ("y", "z", "x"),
    2: ("xy", "yz", "z²", "xz", "x²−y²"),
    3: ("y(3x²−y²)", "xyz", "yz²", "z³", "xz²", "z(x²−y²)", "x(x²−3y²)"),
}


def harmonic_names(l: int) -> tuple[str, ...]:
    """Orbital names of one shell without the atom, in the order m = −l..l.

    Examples
    --------
    >>> harmonic_names(1)
    ('p_y', 'p_z', 'p_x')
    >>> harmonic_names(2)[2], harmonic_names(2)[4]
    ('d_z²', 'd_x²−y²')
    """
    l = int(l)
    if l == 0:
        return ("s",)
    if l in _HARMONICS:
        return tuple(f"{_LETTER[l]}_{h}" for h in _HARMONICS[l])
    # beyond f the matrix code has no harmonics; name the functions by m
    return tuple(f"{_LETTER[l]}_{m:+d}" for m in range(-l, l + 1))


def atom_labels(symbols: Sequence[str]) -> list[str]:
    """``O1``, ``H2`` …: each atom's species symbol and its number from 1; a mass number
    before a symbol (an isotope other than D and T) is written as a superscript.

    Examples
    --------
    >>> atom_labels(["O", "D", "13C"])
    ['O1', 'D2', '¹³C3']
    """
    out = []
    for i, sym in enumerate(symbols):
        digits = len(sym) - len(sym.lstrip("0123456789"))
        out.append(f"{sym[:digits].translate(_SUPERSCRIPT)}{sym[digits:]}{i + 1}")
    return out


def function_names(resolved: Any, symbols: Sequence[str] | None = None) -> list[str]:
    """One name per function of a resolved basis, in the basis order (module table).

    Parameters
    ----------
    resolved : ResolvedBasis
    symbols : sequence of str, optional
        Species symbols of the atoms (``Structure.species_symbols``, isotopes apart); by
        default the element symbols of ``resolved.numbers``.

    Returns
    -------
    list of str
        ``resolved.dimension`` names.
    """
    if symbols is None:
        symbols = [SYMBOLS[int(z)] for z in resolved.numbers]
    atoms = atom_labels(symbols)
    kind = resolved.kind
    if kind == "atoms":
        return [f"φ({a})" for a in atoms]
    if kind == "cartesian":
        return [f"{c}({a})" for a in atoms for c in "xyz"]
    if kind == "pi":
        return [f"p⊥({atoms[int(j)]})" for j in resolved.centres]
    if kind == "bonds":
        return [f"σ({atoms[int(a)]}–{atoms[int(b)]})" for a, b in resolved.pairs]
    if kind == "bond_vectors":
        return [f"b({atoms[int(a)]}→{atoms[int(b)]})" for a, b in resolved.pairs]
    if kind == "vectors":
        m = resolved.vectors.shape[1]
        return [f"v{k + 1}({a})" for a in atoms for k in range(m)]
    # orbitals: atom-major, the element's shells in the order given
    per_element = {}
    for z, shells in resolved.element_shells.items():
        names = []
        for pos, l in enumerate(shells):
            tag = ""
            if shells.count(l) > 1:
                tag = f"[{shells[: pos + 1].count(l)}]"
            names.extend(f"{h}{tag}" for h in harmonic_names(l))
        per_element[int(z)] = names
    return [f"{h}({a})" for a, z in zip(atoms, resolved.numbers) for h in per_element[int(z)]]


def exact_form(coefficients: Any) -> tuple[int, tuple[int, ...]] | None:
    """``(n, (a_1, a_2, …))`` with c_i = sign(a_i) √(|a_i| / n) exactly, or None (rule in
    the module notes).

    Examples
    --------
    >>> exact_form([2 / 6**0.5, -1 / 6**0.5, -1 / 6**0.5])
    (6, (4, -1, -1))
    >>> exact_form([0.5, 0.5, -0.5, -0.5])
    (4, (1, 1, -1, -1))
    >>> exact_form([0.5, -(3**0.5) / 2])
    (4, (1, -3))
    >>> exact_form([0.9, 0.1]) is None
    True
    """
    c = np.asarray(coefficients, dtype=np.float64).ravel()
    if c.size == 0:
        return None
    candidates = np.arange(1, EXACT_MAX_N + 1, dtype=np.int64)
    for square in np.unique(np.round(c * c, 13)):  # narrow the candidates value by value
        scaled = square * candidates
        near = np.rint(scaled)
        candidates = candidates[(np.abs(scaled - near) <= EXACT_TOLERANCE) & (near >= 1)]
        if candidates.size == 0:
            return None
    for n in candidates:
        a = np.rint(c * c * n).astype(np.int64)
        if int(a.sum()) == n and np.all(np.abs(c * c * n - a) <= EXACT_TOLERANCE):
            return int(n), tuple(int(v) for v in np.where(c < 0, -a, a))
    return None


def _root(a: int) -> str:
    """√a written as k√r (r square-free): ``""`` for 1, ``"2"``, ``"√3"``, ``"2√3"``."""
    k = math.isqrt(a)
    while a % (k * k):
        k -= 1
    r = a // (k * k)
    return ("" if k == 1 else str(k)) + ("" if r == 1 else f"√{r}")


def _decimal(value: float) -> str:
    a = abs(value)
    return f"{a:.3f}" if a >= 1e-3 else f"{a:.1e}"


@dataclass(frozen=True)
class Combination:
    """One symmetry-adapted function (a row of X) written out over the basis functions.

    Attributes
    ----------
    row : int
        Row of X.
    irrep : str
    copy, partner : int
        Copy within the irrep and partner within the copy, both from 0 (X's labels).
    dimension : int
        Dimension of the irrep.
    multiplicity : int
        Copies of the irrep in the basis.
    indices : ndarray of int64
        Basis functions with a listed coefficient (|c| ≥ the cutoff), increasing.
    coefficients : ndarray of float64
        Their coefficients (the row of X; the row is normalised).
    functions : tuple of str
        Their names (:func:`function_names`).
    exact : tuple or None
        ``(n, squares)``: coefficient i is ``sign(a) √(|a| / n)``, a = ``squares[i]``
        (:func:`exact_form`).
    """

    row: int
    irrep: str
    copy: int
    partner: int
    dimension: int
    multiplicity: int
    indices: np.ndarray
    coefficients: np.ndarray
    functions: tuple
    exact: tuple | None

    @property
    def label(self) -> str:
        """``A1``; ``A1 (copy 2)`` when the irrep occurs more than once; ``E (copy 1,
        partner 2)`` for a degenerate irrep (copies and partners counted from 1)."""
        if self.dimension > 1:
            return f"{self.irrep} (copy {self.copy + 1}, partner {self.partner + 1})"
        if self.multiplicity > 1:
            return f"{self.irrep} (copy {self.copy + 1})"
        return self.irrep

    def pieces(self) -> list[str]:
        """The written-out function in pieces whose concatenation is :meth:`expression`
        (a line may break before any piece but the first); ``["0"]`` when every
        coefficient is below the cutoff."""
        if not self.functions:
            return ["0"]
        if self.exact is not None:
            n, squares = self.exact
            root = math.isqrt(n)
            factor = "" if n == 1 else (f"(1/{root})" if root * root == n else f"(1/√{n})")
            mags = [_root(abs(a)) for a in squares]
            mags = [f"{m} " if m else "" for m in mags]
            signs = [a < 0 for a in squares]
        else:
            factor = ""
            mags = [f"{_decimal(c)} " for c in self.coefficients]
            signs = [c < 0 for c in self.coefficients]
        out = []
        for i, (mag, neg, name) in enumerate(zip(mags, signs, self.functions)):
            if i == 0:
                out.append(f"{'−' if neg else ''}{mag}{name}")
            else:
                out.append(f" {'−' if neg else '+'} {mag}{name}")
        if factor and len(out) > 1:
            out[0] = f"{factor}({out[0]}"
            out[-1] = f"{out[-1]})"
        elif factor:
            out[0] = f"{factor}{out[0]}"
        return out

    def expression(self) -> str:
        """The function as text, e.g. ``(1/√2)(σ(O1–H2) + σ(O1–H3))``."""
        return "".join(self.pieces())

    def to_dict(self) -> dict:
        """JSON form: row, irrep, copy and partner (from 0), the terms (index, function,
        coefficient to 12 significant digits), the text, and the exact form (``{"n",
        "squares"}``: coefficient i = sign(a) √(|a|/n), a = squares[i]) or null."""
        terms = [
            {"index": int(i), "function": f, "coefficient": float(f"{c:.12g}")}
            for i, f, c in zip(self.indices, self.functions, self.coefficients)
        ]
        exact = None
        if self.exact is not None:
            exact = {"n": self.exact[0], "squares": list(self.exact[1])}
        return {
            "row": self.row,
            "irrep": self.irrep,
            "copy": self.copy,
            "partner": self.partner,
            "terms": terms,
            "expression": self.expression(),
            "exact": exact,
        }
