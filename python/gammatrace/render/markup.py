"""Labels, functions and prose written two ways: Unicode (text, Markdown, HTML) and LaTeX.

The package spells labels in ASCII (INTERFACE.md: ``E'``, ``A2''``, ``12C5^2``, ``x2+y2``);
readable outputs write them as printed tables do: primes ′ ″, powers and squares as
superscripts (``12C5²``, ``x²+y²``). LaTeX gets the same in math mode (``$12C_{5}^{2}$``,
``$x^2+y^2$``) and only ASCII, so that a plain ``article`` compiles it with pdflatex.

Imports nothing from the package but :mod:`gammatrace.text`, so every layer can use it.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

__all__ = [
    "latex_class",
    "latex_function",
    "latex_group",
    "latex_irrep",
    "latex_irreps",
    "latex_text",
    "unicode_function",
    "unicode_irreps",
    "unicode_label",
]

_SUPERSCRIPT = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
_FROM_SUPERSCRIPT = {v: k for k, v in zip("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")}

# Greek letters and symbols of the package's labels and messages, as LaTeX math.
_MATH = {
    "α": r"\alpha",
    "β": r"\beta",
    "γ": r"\gamma",
    "δ": r"\delta",
    "ε": r"\varepsilon",
    "θ": r"\theta",
    "κ": r"\kappa",
    "λ": r"\lambda",
    "μ": r"\mu",
    "ν": r"\nu",
    "π": r"\pi",
    "ρ": r"\rho",
    "σ": r"\sigma",
    "τ": r"\tau",
    "φ": r"\varphi",
    "χ": r"\chi",
    "ψ": r"\psi",
    "ω": r"\omega",
    "Γ": r"\Gamma",
    "Δ": r"\Delta",
    "Θ": r"\Theta",
    "Λ": r"\Lambda",
    "Π": r"\Pi",
    "Σ": r"\Sigma",
    "Φ": r"\Phi",
    "Ψ": r"\Psi",
    "Ω": r"\Omega",
    "∞": r"\infty",
    "°": r"^\circ",
    "≤": r"\le",
    "≥": r"\ge",
    "≠": r"\neq",
    "≈": r"\approx",
    "±": r"\pm",
    "×": r"\times",
    "·": r"\cdot",
    "⊗": r"\otimes",
    "⊕": r"\oplus",
    "→": r"\to",
    "↔": r"\leftrightarrow",
    "−": "-",
    "√": r"\surd",
    "′": "'",
    "″": "''",
    "<": "<",
    ">": ">",
    "|": "|",
}
_TEXT = {
    "\\": r"\textbackslash{}",
    "{": r"\{",
    "}": r"\}",
    "$": r"\$",
    "&": r"\&",
    "#": r"\#",
    "%": r"\%",
    "_": r"\_",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "Å": r"\AA{}",
    "…": r"\ldots{}",
    "–": "--",
    "—": "---",
    "\u00a0": "~",
}


def unicode_label(label: str) -> str:
    """A class or irrep label as printed: ``'`` → ′, ``''`` → ″, ``^k`` → superscript.

    Examples
    --------
    >>> unicode_label("3C2''"), unicode_label("σv'(yz)"), unicode_label("12C5^2")
    ('3C2″', 'σv′(yz)', '12C5²')
    """
    out = label.replace("''", "″").replace("'", "′")
    return re.sub(r"\^(\d+)", lambda m: m.group(1).translate(_SUPERSCRIPT), out)


def unicode_function(function: str) -> str:
    """A basis function with squares as superscripts: ``(x2-y2,xy)`` → ``(x²-y²,xy)``."""
    return re.sub(r"(?<=[xyz])2", "²", function)


def unicode_irreps(irreps: Mapping[str, int]) -> str:
    """``{"A1": 2, "E'": 1}`` → ``2A1 + E′``; empty → ``0``."""
    if not irreps:
        return "0"
    return " + ".join(f"{n if n != 1 else ''}{unicode_label(k)}" for k, n in irreps.items())


def latex_text(text: str) -> str:
    """Prose in LaTeX text mode: special characters escaped, Greek letters and symbols in
    math mode (adjacent ones share one ``$…$``), superscript digits as ``^{…}``.

    Characters outside the package's vocabulary (an accented file name) are kept as they
    are; a UTF-8 LaTeX reads the Latin ones.

    Examples
    --------
    >>> latex_text("Σ g χ(R), 360°/13, K_h")
    '$\\\\Sigma$ g $\\\\chi$(R), 360$^\\\\circ$/13, K\\\\_h'
    """
    parts: list[tuple[bool, str]] = []  # (math?, piece)
    i = 0
    while i < len(text):
        ch = text[i]
        if ch in _FROM_SUPERSCRIPT:
            j = i
            while j < len(text) and text[j] in _FROM_SUPERSCRIPT:
                j += 1
            parts.append((True, "^{" + "".join(_FROM_SUPERSCRIPT[c] for c in text[i:j]) + "}"))
            i = j
            continue
        if ch in _MATH:
            parts.append((True, _MATH[ch]))
        else:
            parts.append((False, _TEXT.get(ch, ch)))
        i += 1
    out, math = [], []
    for is_math, piece in parts:
        if is_math:
            # a control word followed by a letter needs a space (\sigma v, not \sigmav)
            if math and re.search(r"\\[A-Za-z]+$", math[-1]) and piece[:1].isalpha():
                piece = " " + piece
            math.append(piece)
            continue
        if math:
            out.append("$" + "".join(math) + "$")
            math = []
        out.append(piece)
    if math:
        out.append("$" + "".join(math) + "$")
    return "".join(out)


def _math_symbol(s: str) -> str:
    """Greek letters and ∞ of a label part as math (``∞`` → ``\\infty``)."""
    out = []
    for ch in s:
        m = _MATH.get(ch)
        if m is None:
            out.append(ch)
        elif m.startswith("\\"):
            out.append(m + " ")
        else:
            out.append(m)
    return "".join(out).rstrip()


_GROUP = re.compile(r"^(?P<base>[CDSTOIK])(?P<n>\d+|∞)?(?P<suffix>_?[a-z]*)$")


def latex_group(name: str) -> str:
    """A Schoenflies name in math mode: ``C2v`` → ``$C_{2v}$``, ``D∞h`` → ``$D_{\\infty h}$``.

    Examples
    --------
    >>> latex_group("C2v"), latex_group("D∞h"), latex_group("K_h"), latex_group("O")
    ('$C_{2v}$', '$D_{\\\\infty h}$', '$K_{h}$', '$O$')
    """
    m = _GROUP.match(name)
    if m is None:
        return latex_text(name)
    n = m["n"] or ""
    sub = (r"\infty " if n == "∞" else n) + m["suffix"].lstrip("_")
    return f"${m['base']}_{{{sub.strip()}}}$" if sub else f"${m['base']}$"


_CLASS = re.compile(
    r"^(?P<size>\d+|∞)?(?P<op>E|i|C|S|σ)(?P<order>\d+|∞)?(?P<kind>[vhd])?"
    r"(?P<primes>'*)(?:\^(?P<power>\d+))?(?:\((?P<arg>[^)]*)\))?$"
)


def latex_class(label: str) -> str:
    """A class label in math mode: ``12C5^2`` → ``$12C_{5}^{2}$``, ``3σv`` → ``$3\\sigma_{v}$``.

    Examples
    --------
    >>> latex_class("3C2''"), latex_class("σv'(yz)"), latex_class("2C∞(27.69°)")
    ("$3C_{2}''$", "$\\\\sigma_{v}'(yz)$", '$2C_{\\\\infty}(27.69^\\\\circ)$')
    """
    m = _CLASS.match(label)
    if m is None:
        return latex_text(label)
    size = m["size"] or ""
    out = r"\infty " if size == "∞" else size
    out += r"\sigma" if m["op"] == "σ" else m["op"]
    sub = ("" if m["order"] is None else _math_symbol(m["order"])) + (m["kind"] or "")
    if sub:
        out += f"_{{{sub}}}"
    out += m["primes"]
    if m["power"]:
        out += f"^{{{m['power']}}}"
    if m["arg"] is not None:
        out += "(" + _math_symbol(m["arg"]) + ")"
    return f"${out}$"


_IRREP = re.compile(
    r"^(?P<member>[12](?=[A-ZΣΠΔΦΓ]))?(?P<letter>[A-Z]|Σ|Π|Δ|Φ|Γ)(?P<index>\d*)(?P<parity>[gu]?)"
    r"(?P<primes>'*)(?P<sign>[+-]?)$"
)


def _latex_irrep_body(label: str) -> str:
    m = _IRREP.match(label)
    if m is None:
        return ""
    out = "{}^{" + m["member"] + "}" if m["member"] else ""
    out += _math_symbol(m["letter"])
    sub = m["index"] + m["parity"]
    if sub:
        out += f"_{{{sub}}}"
    out += m["primes"]
    if m["sign"]:
        out += f"^{{{m['sign']}}}"
    return out


def latex_irrep(label: str) -> str:
    """A Mulliken label in math mode: ``A1g`` → ``$A_{1g}$``, ``Σg+`` → ``$\\Sigma_{g}^{+}$``.

    Examples
    --------
    >>> latex_irrep("A1g"), latex_irrep("E''"), latex_irrep("Σg+"), latex_irrep("1E")
    ('$A_{1g}$', "$E''$", '$\\\\Sigma_{g}^{+}$', '${}^{1}E$')
    """
    body = _latex_irrep_body(label)
    return f"${body}$" if body else latex_text(label)


def latex_irreps(irreps: Mapping[str, int]) -> str:
    """``{"A1": 2, "B2": 1}`` → ``$2A_{1} + B_{2}$``; empty → ``$0$``."""
    if not irreps:
        return "$0$"
    terms = []
    for label, n in irreps.items():
        body = _latex_irrep_body(label)
        if not body:
            return latex_text(unicode_irreps(irreps))
        terms.append(f"{n if n != 1 else ''}{body}")
    return "$" + " + ".join(terms) + "$"


def latex_function(function: str) -> str:
    """A basis function in math mode: ``(x2-y2,xy)`` → ``$(x^2-y^2, xy)$``, ``Rz`` → ``$R_z$``.

    Examples
    --------
    >>> latex_function("(x2-y2,xy)"), latex_function("(Rx,Ry)")
    ('$(x^2-y^2, xy)$', '$(R_x, R_y)$')
    """
    out = re.sub(r"(?<=[xyz])2", "^2", function)
    out = re.sub(r"R([xyz])", r"R_\1", out)
    return "$" + out.replace(",", ", ") + "$"
