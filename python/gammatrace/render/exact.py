"""Characters written exactly, where printed tables write them so.

The numbers of a character table are floats (JSON keeps them so); readable outputs write the
irrational ones as printed tables do:

- ``2cos72°``, ``-2cos144°`` for the five-fold groups, and for any n the cosine of a
  multiple of 360°/n: in degrees when that is a whole number (``2cos40°`` in D9h), else as a
  fraction of π (``2cos(2π/7)``, ``2cos(π/8)``). Angles are multiples of 360°/n, n the order of
  the principal rotation (so D5h and D5d write ``-2cos72°`` on their improper classes, as
  printed, rather than ``2cos108°``); the improper classes' own angles come next (S16's
  ``2cos(π/8)``). Cotton, *Chemical Applications of Group Theory*, Appendix IIA (C5, C5v,
  D5h, D5d) — from memory.
- ``√2``, ``√3`` where 2cos45°, 2cos30° stand (D4d, S8, D8h; D6d, D12h), as Cotton writes them
  (from memory).
- I and Ih: the golden-ratio forms ``(1+√5)/2`` = 1.618 and ``(1-√5)/2`` = -0.618 (Cotton,
  Appendix IIA, I and Ih, where they are written ½(1 ± √5); from memory).
- K_h (the characters sin((2l+1)θ/2)/sin(θ/2) at sampled angles) and anything else: three
  decimals.

Imports nothing from the package.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from fractions import Fraction

__all__ = ["CharacterForms", "Form"]

_TOL = 1e-9
_SQRT5 = math.sqrt(5.0)
_GOLDEN = (
    ((1.0 + _SQRT5) / 2.0, "(1+√5)/2", r"\frac{1+\sqrt{5}}{2}"),
    ((1.0 - _SQRT5) / 2.0, "(1-√5)/2", r"\frac{1-\sqrt{5}}{2}"),
)
_SURDS = ((math.sqrt(2.0), "√2", r"\sqrt{2}"), (math.sqrt(3.0), "√3", r"\sqrt{3}"))


@dataclass(frozen=True)
class Form:
    """One character as written.

    Attributes
    ----------
    text : str
        Unicode (text, Markdown, HTML): ``2cos72°``, ``-√2``, ``(1+√5)/2``, ``1``, ``0.291``.
    latex : str
        LaTeX math, without dollars: ``2\\cos 72^\\circ``.
    value : float
        The number it stands for.
    base : Form or None
        For an exact irrational form, the form without its sign (``2cos72°`` for
        ``-2cos72°``), which the legend under a table gives as a decimal; else None.
    """

    text: str
    latex: str
    value: float
    base: Form | None = None


def _decimal(x: float) -> Form:
    r = round(x)
    if abs(x - r) < _TOL:
        s = str(int(r))
        return Form(s, s, float(r))
    s = f"{x:.3f}"
    return Form(s, s, x)


def _cos_form(turns: Fraction, sign: int) -> tuple[str, str]:
    """2cos of ``turns`` × 360°, degrees when whole, else a fraction of π; signed."""
    degrees = turns * 360
    if degrees.denominator == 1:
        text, latex = f"2cos{degrees.numerator}°", rf"2\cos {degrees.numerator}^\circ"
    else:
        rad = turns * 2  # in units of π
        a, b = rad.numerator, rad.denominator
        num = "" if a == 1 else str(a)
        text, latex = f"2cos({num}π/{b})", rf"2\cos\frac{{{num}\pi}}{{{b}}}"
    return ("-" + text, "-" + latex) if sign < 0 else (text, latex)


def _turn_denominator(angle: float) -> int | None:
    f = Fraction(angle / 360.0).limit_denominator(10000)
    return f.denominator if abs(float(f) * 360.0 - angle) < 1e-6 else None


class CharacterForms:
    """How the characters of one table are written (:class:`Form`), cached per value.

    Parameters
    ----------
    style : {"cos", "golden", "decimal"}
        ``golden`` for I and Ih, ``decimal`` for K_h, ``cos`` for every other group.
    orders : sequence of int
        The n of the 360°/n multiples tried, in order: the rotations' orders from the
        principal one down, then those of the improper classes' angles.
    """

    def __init__(self, style: str, orders: Iterable[int] = ()):
        if style not in ("cos", "golden", "decimal"):
            raise ValueError(f"style must be 'cos', 'golden' or 'decimal', got {style!r}")
        self.style = style
        self.orders = tuple(dict.fromkeys(int(n) for n in orders if n and n > 2))
        self._cache: dict[float, Form] = {}

    @classmethod
    def for_table(cls, table) -> CharacterForms:
        """The forms of a :class:`~gammatrace.tables.CharacterTable` (read duck-typed: its
        ``name``, ``is_spherical`` and its classes' ``proper`` and ``angle``)."""
        if table.is_spherical:
            return cls("decimal")
        if table.name in ("I", "Ih"):
            return cls("golden")
        proper = {_turn_denominator(c.angle) for c in table.classes if c.proper}
        improper = {_turn_denominator(c.angle) for c in table.classes if not c.proper}
        # the principal rotation's n first: its multiples are the angles printed tables use
        first = sorted((n for n in proper if n), reverse=True)
        return cls("cos", first + sorted((n for n in improper if n), reverse=True))

    def form(self, x: float) -> Form:
        """The written form of the character ``x``."""
        x = float(x)
        key = round(x, 9)
        got = self._cache.get(key)
        if got is None:
            got = self._cache[key] = self._form(x)
        return got

    def _form(self, x: float) -> Form:
        plain = _decimal(x)
        if plain.text.lstrip("-").isdigit() or self.style == "decimal":
            return plain
        sign = -1 if x < 0 else 1
        if self.style == "golden":
            for value, text, latex in _GOLDEN:
                for s in (1, -1):
                    if abs(s * value - x) < _TOL:
                        pre = "-" if s < 0 else ""
                        return Form(pre + text, pre + latex, x, Form(text, latex, value))
            return plain
        for value, text, latex in _SURDS:
            if abs(abs(x) - value) < _TOL:
                pre = "-" if sign < 0 else ""
                return Form(pre + text, pre + latex, x, Form(text, latex, value))
        if abs(x) >= 2.0:
            return plain
        for n in self.orders:
            for s in (1, -1):
                turns = math.acos(s * x / 2.0) / (2.0 * math.pi)  # in (0, 1/2)
                k = round(turns * n)
                if 0 < k < n / 2 and abs(2.0 * math.cos(2.0 * math.pi * k / n) - s * x) < _TOL:
                    f = Fraction(k, n)
                    text, latex = _cos_form(f, s)
                    base = Form(*_cos_form(f, 1), s * x)
                    return Form(text, latex, x, base)
        return plain

    @staticmethod
    def legend(forms: Iterable[Form]) -> list[Form]:
        """The exact irrational forms used (``2cos72°``, ``2cos144°``), unsigned, once each,
        in order of first use: what the legend under a table gives as decimals."""
        seen: dict[str, Form] = {}
        for f in forms:
            if f.base is not None and f.base.text not in seen:
                seen[f.base.text] = f.base
        return list(seen.values())
