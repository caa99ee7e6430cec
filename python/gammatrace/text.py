"""Small text helpers shared by every readable output: counted nouns and lengths.

Imports nothing from the package, so any module can use it.
"""

from __future__ import annotations

import math

__all__ = ["format_length", "plural"]


def plural(n: int, noun: str, plural_form: str | None = None) -> str:
    """``n`` followed by ``noun``, in the plural unless n is 1.

    Examples
    --------
    >>> plural(1, "mode"), plural(3, "mode"), plural(0, "orbit")
    ('1 mode', '3 modes', '0 orbits')
    >>> plural(2, "copy", "copies")
    '2 copies'
    """
    count = int(n)
    if count == 1:
        return f"1 {noun}"
    return f"{count} {plural_form if plural_form is not None else noun + 's'}"


def format_length(x: float) -> str:
    """A length (or any small positive quantity) as a reader writes it.

    Four significant digits without an exponent from 1e-3 up to 1e4 (``1.524``, ``0.0152``,
    ``1250``), trailing zeros dropped; an exponent below 1e-3 (``3.2e-05``) and from 1e4 on
    (``1.235e+07``); ``0`` for zero. The Rust core's messages follow the same rule
    (``length`` in rust/error.rs).

    Examples
    --------
    >>> format_length(1.524), format_length(2.0), format_length(3.2e-5), format_length(0.0)
    ('1.524', '2', '3.2e-05', '0')
    """
    v = float(x)
    if math.isnan(v):
        return "NaN"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    if v == 0.0:
        return "0"
    if abs(v) >= 1e-3:
        return f"{v:.4g}"
    mantissa, _, exponent = f"{v:.1e}".partition("e")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{exponent}"
