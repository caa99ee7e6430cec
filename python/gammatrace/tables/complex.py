"""The complex form of a character table: complex-conjugate pairs written apart.

The real tables (``table``) combine each pair of complex-conjugate one-dimensional irreps into
one real irrep of dimension 2 (norm κ = 2) and merge each class with its inverse class. The
complex form undoes both: one column per conjugacy class (g and g⁻¹ apart), and each combined
irrep E becomes its two members ``1E`` and ``2E`` with complex characters λ and λ*.

Members are found from the real characters and the core's group arithmetic, with no table of
roots of unity: λ is a homomorphism with λ + λ* = χ_E, so Re λ(g) = χ_E(g)/2, and for one
operation g0 with χ_E(g0)/2 ≠ ±1, taking λ(g0) = exp(iφ0), φ0 ∈ (0, π),

    Im λ(g) = (cos φ0 · Re λ(g) − Re λ(g0·g)) / sin φ0

(from λ(g0·g) = λ(g0) λ(g)). g0 is the first class, in print order, on which χ_E/2 is not
±1, so ``1E`` is the member whose first complex character has a positive imaginary part
(ε rather than ε* on C3 of C3, i on C4 of C4, as printed). The result is checked: |λ| = 1 and
λ(s·g) = λ(s) λ(g) for every generator s and every g.

Column order and labels follow printed complex tables: for Cn, S2n without i, and the proper
part of the others, the powers of the generator (C6: E, C6, C3, C2, C3^2, C6^5; S8: E, S8,
C4, S8^3, …); groups G × {E, i} and G × {E, σh} (Cnh, S2n with n odd, Th) repeat G's columns
times i (or σh), named by their own angle (C3h: σh, S3, S3^5; S6: i, S6^5, S6). In T and Th,
4C3 is the class of the counter-clockwise 120° rotation about (1, 1, 1) of the standard frame.

In text, characters are written with ε = exp(2πi/N): N is the order of the rotation subgroup
(Cn, Cnh: n; S2n with n odd: n; S4, S8, …: 2n; T, Th: 3), and each root of unity is written
as ±1, ±i or ±ε^k, ±ε^k* with the smallest k (C6: ε, −ε*, −1, −ε, ε*).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from fractions import Fraction
from typing import Any, NamedTuple

import numpy as np

from ..render import Paragraph, write_html, write_latex, write_markdown
from ..render.grid import cell
from ..render.tables import complex_grid
from ._ops import INVERSION, SIGMA_H, canonical_group, contains_all, describe, locate, rotation
from ._types import ClassInfo

__all__ = [
    "ComplexClass",
    "ComplexForm",
    "build_complex_form",
    "format_root",
    "member_labels",
]

_TOL = 1e-9
_SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


class ComplexClass(NamedTuple):
    """One conjugacy class of the complex form.

    Attributes
    ----------
    label : str
        Printed label with its size prefix, e.g. ``"C3^2"``, ``"4C3"``, ``"S6^5"``.
    size : int
    proper : bool
    angle : float
        θ in degrees, in [0, 180], as :class:`ClassInfo` (g and g⁻¹ share it).
    real_class : int
        Index of the class of the real table that holds this one.
    inverse : int
        Index (in the complex form) of the class of the inverses.
    """

    label: str
    size: int
    proper: bool
    angle: float
    real_class: int
    inverse: int


def member_labels(label: str) -> tuple[str, str]:
    """Labels of the two members of the pair written ``label`` in the real table."""
    return f"1{label}", f"2{label}"


@dataclass(frozen=True, eq=False)
class ComplexForm:
    """A character table with its complex-conjugate pairs written apart.

    Attributes
    ----------
    name : str
    order : int or None
    classes : tuple of ComplexClass
        One per conjugacy class, in print order.
    labels : tuple of str
        Row labels: real irreps as in the real table, pair members ``1E``, ``2E``.
    pair_of : tuple of (str or None)
        For each row, the label of the real-table pair it belongs to; None for a real irrep.
    dims : tuple of int
    functions : tuple of tuple of str
        A real irrep's functions; for a pair, the functions of the pair against its first
        member (they span the pair together, as printed tables write them against a brace).
    characters : numpy.ndarray of complex, shape (n_rows, n_classes)
    epsilon : int or None
        N of ε = exp(2πi/N) in the text form; None when the group has no pairs.
    operation_class : numpy.ndarray of int, shape (h,)
        Class (index into ``classes``) of each canonical operation of the group.
    weights : numpy.ndarray or None
        Class weights of the reduction formula where they are not size / h (K_h).
    plain_text : str
        The real table's text, written by :meth:`to_text` when there are no pairs.
    real_table : CharacterTable or None
        The real table, written by the other outputs (Markdown, LaTeX, HTML) when there are
        no pairs.
    """

    name: str
    order: int | None
    classes: tuple[ComplexClass, ...]
    labels: tuple[str, ...]
    pair_of: tuple[str | None, ...]
    dims: tuple[int, ...]
    functions: tuple[tuple[str, ...], ...]
    characters: np.ndarray
    epsilon: int | None
    operation_class: np.ndarray
    weights: np.ndarray | None = None
    plain_text: str = ""
    real_table: Any = None

    @property
    def pairs(self) -> list[str]:
        """Labels (real table) of the irreps that stand for complex-conjugate pairs."""
        return list(dict.fromkeys(p for p in self.pair_of if p is not None))

    @property
    def has_pairs(self) -> bool:
        """True when some irrep of the real table is a complex-conjugate pair."""
        return bool(self.pairs)

    def to_dict(self) -> dict:
        """JSON form: characters as ``[re, im]``; each row says which pair it belongs to."""

        def num(x: float):
            r = round(x)
            return int(r) if abs(x - r) < 1e-12 else float(x)

        out = {
            "group": self.name,
            "order": self.order,
            "form": "complex",
            "epsilon": None if self.epsilon is None else f"exp(2πi/{self.epsilon})",
            "pairs": [{"label": p, "members": list(member_labels(p))} for p in self.pairs],
            "classes": [
                {
                    "label": c.label,
                    "size": c.size,
                    "proper": c.proper,
                    "angle": c.angle,
                    "inverse": self.classes[c.inverse].label,
                }
                for c in self.classes
            ],
            "irreps": [
                {
                    "label": lab,
                    "dim": dim,
                    "pair_of": pair,
                    "characters": [[num(a), num(b)] for a, b in zip(re, im)],
                    "functions": list(funcs),
                }
                for lab, dim, pair, re, im, funcs in zip(
                    self.labels,
                    self.dims,
                    self.pair_of,
                    self.characters.real.tolist(),
                    self.characters.imag.tolist(),
                    self.functions,
                )
            ],
        }
        if self.weights is not None:
            out["weights"] = [float(w) for w in self.weights]
        return out

    def _no_pairs_note(self) -> str:
        return (
            f"({self.name} has no complex-conjugate pairs: its complex form is the table "
            "above, every class its own inverse)"
        )

    def to_text(self) -> str:
        """The complex table, characters written with ε as printed tables write them.

        Without pairs: the real table (its own notes included) and a line saying so.
        """
        if not self.has_pairs and self.plain_text:
            return self.plain_text + "\n" + self._no_pairs_note()
        head = [self.name] + [c.label for c in self.classes] + ["functions"]
        texts: dict = {}  # a table of order h has at most h distinct characters

        def cell(z: complex) -> str:
            key = (round(z.real, 9), round(z.imag, 9))
            if key not in texts:
                texts[key] = format_root(z, self.epsilon)
            return texts[key]

        rows = [
            [lab] + [cell(z) for z in row.tolist()] + ["; ".join(funcs)]
            for lab, row, funcs in zip(self.labels, self.characters, self.functions)
        ]
        widths = [max(len(r[j]) for r in [head, *rows]) for j in range(len(head) - 1)]
        lines = []
        for r in [head, *rows]:
            cells = [r[0].ljust(widths[0])] + [r[j].rjust(widths[j]) for j in range(1, len(widths))]
            lines.append("  ".join([*cells, r[-1]]).rstrip())
        lines.insert(1, "-" * len(lines[0]))
        lines.extend(self.notes)
        return "\n".join(lines)

    @property
    def notes(self) -> list[str]:
        """The notes under the complex table: ε, the pairs' members, the split classes."""
        if not self.has_pairs:
            return [self._no_pairs_note()]
        notes = []
        if self.epsilon is not None and self.epsilon not in (1, 2, 4):
            notes.append(f"ε = exp(2πi/{self.epsilon}), ε* its complex conjugate")
        members = ", ".join(f"{a} and {b}" for a, b in map(member_labels, self.pairs))
        notes.append(
            f"{members}: the complex-conjugate one-dimensional irreps that the real table "
            f"combines as {', '.join(self.pairs)}; the functions of a pair stand against its "
            "first member and span the pair together"
        )
        split = [
            (c.label, self.classes[c.inverse].label)
            for j, c in enumerate(self.classes)
            if c.inverse > j
        ]
        notes.append(
            "classes "
            + ", ".join(f"{a} and {b}" for a, b in split)
            + " hold inverse operations (one class each in the real table)"
        )
        return [f"({n})" for n in notes]

    def _blocks(self) -> list:
        if not self.has_pairs and self.real_table is not None:
            return [*self.real_table._blocks(), Paragraph([cell(self._no_pairs_note())])]
        write = functools.partial(_cached_root, epsilon=self.epsilon, cache={})
        return [complex_grid(self, write, self.notes)]

    def to_markdown(self) -> str:
        """The complex table as Markdown (characters in ε as in :meth:`to_text`)."""
        return write_markdown(self._blocks())

    def to_latex(self, document: bool = False) -> str:
        """The complex table as LaTeX: a fragment, or a whole ``article`` (``document``)."""
        return write_latex(self._blocks(), document=document)

    def _repr_html_(self) -> str:
        return write_html(self._blocks())

    def _repr_markdown_(self) -> str:
        return self.to_markdown()


def _cached_root(z: complex, epsilon: int | None, cache: dict) -> str:
    key = (round(z.real, 9), round(z.imag, 9))
    if key not in cache:
        cache[key] = format_root(z, epsilon)
    return cache[key]


# --- writing roots of unity with ε --------------------------------------------------------


def _power(k: int, conj: bool) -> str:
    text = "ε" + (str(k).translate(_SUPERSCRIPT) if k > 1 else "")
    return text + ("*" if conj else "")


def format_root(z: complex, n_eps: int | None) -> str:
    """A character as printed: a real number, or a root of unity as ±1, ±i, ±ε^k, ±ε^k*.

    ``n_eps`` is the N of ε = exp(2πi/N); among the forms that equal ``z``, the one with the
    smallest k is written (+ before −, ε^k before ε^k*).
    """
    z = complex(z)
    if abs(z.imag) < _TOL:
        r = round(z.real)
        return str(int(r)) if abs(z.real - r) < _TOL else f"{z.real:.3f}"
    if abs(z.real) < _TOL and abs(abs(z.imag) - 1.0) < _TOL:
        return "i" if z.imag > 0 else "-i"
    if n_eps is None or abs(abs(z) - 1.0) > 1e-6:
        return f"{z.real:.3f}{z.imag:+.3f}i"
    # z = exp(iπ m / N); s·ε^k has m = 2k (+N for s = −1), s·ε^k* has m = −2k (+N).
    two_n = 2 * n_eps
    m = round(math.atan2(z.imag, z.real) / math.pi * n_eps) % two_n
    forms = []
    for minus in (False, True):
        for conj in (False, True):
            twice_k = ((n_eps - m if conj else m - n_eps) if minus else (-m if conj else m)) % two_n
            if twice_k % 2 == 0 and 0 < twice_k // 2 < n_eps:
                forms.append((twice_k // 2, minus, conj))
    if not forms:
        return f"{z.real:.3f}{z.imag:+.3f}i"
    k, minus, conj = min(forms)
    return ("-" if minus else "") + _power(k, conj)


# --- classes: order and labels ------------------------------------------------------------


def _turn(angle_deg: float, max_den: int) -> tuple[int, int]:
    """The angle as p/q of a full turn, 0 ≤ p < q, lowest terms (q ≤ max_den)."""
    f = Fraction((float(angle_deg) % 360.0) / 360.0).limit_denominator(max_den)
    p, q = f.numerator % f.denominator, f.denominator
    return p, q


def _phi(r: np.ndarray) -> float:
    """Counter-clockwise angle about +z in [0°, 360°) of a rotation about z."""
    return round(float(np.degrees(np.arctan2(r[1, 0], r[0, 0]))), 9) % 360.0


def _axial_label(r: np.ndarray, max_den: int) -> str:
    """C_q^p for C(360p/q) about +z; S_q^p for σh·C(360p/q) (p odd; S_q^(p+q) for p even)."""
    if np.linalg.det(r) > 0:
        p, q = _turn(_phi(r), max_den)
        if p == 0:
            return "E"
        return f"C{q}" + (f"^{p}" if p > 1 else "")
    p, q = _turn(_phi(SIGMA_H @ r), max_den)
    if p == 0:
        return "σh"
    if 2 * p == q:
        return "i"
    if p % 2 == 0:
        p += q
    return f"S{q}" + (f"^{p}" if p > 1 else "")


def _axial_order(ops: np.ndarray, reps: np.ndarray):
    """Print keys and labels of the classes of Cn, Cnh, S2n (abelian, every class one op)."""
    has_i = contains_all(ops, INVERSION[None])
    has_sigma = contains_all(ops, SIGMA_H[None])
    partner = INVERSION if has_i else SIGMA_H if has_sigma else None
    max_den = 2 * len(ops)
    keys, labels = [], []
    for rep in reps:
        r = ops[rep]
        if np.linalg.det(r) > 0:
            key = (0, _phi(r))
        elif partner is not None:
            key = (1, _phi(partner @ r))
        else:
            key = (0, _phi(SIGMA_H @ r))
        keys.append(key)
        labels.append(_axial_label(r, max_den))
    return keys, labels


def _polyhedral_order(ops, reps, sizes, real_of_rep, class_of_op):
    """Print keys and labels of the classes of T and Th (4C3 holds C3 about (1, 1, 1)).

    ``class_of_op`` holds, for every operation, the position of its class in ``reps``.
    """
    c3 = locate(ops, rotation([1.0, 1.0, 1.0], 2.0 * np.pi / 3.0)[None])[0]
    first_c3 = int(class_of_op[c3])
    proper, angle, _ = describe(ops[reps])
    keys: list = [None] * len(reps)
    labels: list = [None] * len(reps)
    for j in range(len(reps)):
        if not proper[j]:
            continue
        split = abs(angle[j] - 120.0) < 1e-6
        second = split and j != first_c3
        keys[j] = (0, int(real_of_rep[j]), int(second))
        if angle[j] < 1e-6:
            labels[j] = "E"
        elif split:
            labels[j] = f"{sizes[j]}C3" + ("^2" if second else "")
        else:
            labels[j] = f"{sizes[j]}C2"
    for j, rep in enumerate(reps):
        if proper[j]:
            continue
        # Th = T × {E, i}: the column of i·g follows the columns of T
        q = int(class_of_op[locate(ops, (INVERSION @ ops[rep])[None])[0]])
        keys[j] = (1, *keys[q][1:])
        name = {"E": "i", "C2": "σh", "C3": "S6^5", "C3^2": "S6"}[labels[q].lstrip("0123456789")]
        labels[j] = (f"{sizes[j]}" if sizes[j] > 1 else "") + name
    return keys, labels


# --- the pairs -----------------------------------------------------------------------------


def _member(chi_ops: np.ndarray, g0: int, prod_g0: np.ndarray) -> np.ndarray:
    """λ on every operation, from Re λ = χ/2 and λ(g0) = exp(iφ0), φ0 ∈ (0, π)."""
    c = chi_ops / 2.0
    c0 = c[g0]
    s0 = math.sqrt(max(0.0, 1.0 - c0 * c0))
    return c + 1j * (c0 * c - c[prod_g0]) / s0


def _snap(z: np.ndarray) -> np.ndarray:
    re, im = z.real.copy(), z.imag.copy()
    for part in (re, im):
        r = np.round(part)
        near = np.abs(part - r) < _TOL
        part[near] = r[near]
        part[part == 0.0] = 0.0
    return re + 1j * im


def _root_orders(values: np.ndarray) -> int:
    """The smallest N with every value an N-th root of unity (values: |H|-th roots, H the
    group they are taken on, so each is exp(2πi m/|H|) with m an integer)."""
    h = len(values)
    m = np.round(np.angle(values) / (2.0 * np.pi) * h).astype(np.int64) % h
    return h // math.gcd(h, *m.tolist())


def _check_member(name: str, label: str, lam: np.ndarray, ops, generators, op_cls) -> None:
    """|λ| = 1, λ(s·g) = λ(s) λ(g) for every generator s, and λ constant over each class."""
    if np.abs(np.abs(lam) - 1.0).max() > 1e-6:
        raise RuntimeError(f"internal: {name} {label} member has |λ| ≠ 1")
    for s in generators:
        prod = locate(ops, ops[s] @ ops)
        if np.abs(lam[prod] - lam[s] * lam).max() > 1e-6:
            raise RuntimeError(f"internal: {name} {label} member is not a homomorphism")
    first = np.unique(op_cls, return_index=True)[1]
    if np.abs(lam - lam[first[op_cls]]).max() > 1e-6:
        raise RuntimeError(f"internal: {name} {label} member is not a class function")


def build_complex_form(
    name: str,
    order: int | None,
    op_real_class: np.ndarray,
    real_classes: list[ClassInfo],
    labels: list[str],
    characters: np.ndarray,
    kappa: np.ndarray,
    functions: list[tuple[str, ...]],
    weights: np.ndarray | None = None,
    plain_text: str = "",
    real_table: Any = None,
) -> ComplexForm:
    """The complex form of a finite group's real table (see the module docstring).

    Parameters are the real table's: the class (real form) of each canonical operation of
    ``name``, its classes, irrep labels, characters (n_irreps, n_classes), norms κ and
    functions. A table without pairs (κ = 1 throughout) is returned as it is, every class its
    own inverse (with ``weights`` and ``plain_text``, the real table's, kept for output).
    """
    chars = np.asarray(characters, dtype=np.float64)
    kappa = np.asarray(kappa)
    if not (kappa == 2).any():
        n_cls = len(real_classes)
        return ComplexForm(
            name=name,
            order=order,
            classes=tuple(
                ComplexClass(*c, real_class=j, inverse=j) for j, c in enumerate(real_classes)
            ),
            labels=tuple(labels),
            pair_of=(None,) * len(labels),
            dims=tuple(round(row[0]) for row in chars),
            functions=tuple(tuple(f) for f in functions),
            characters=chars.astype(np.complex128).reshape(len(labels), n_cls),
            epsilon=None,
            operation_class=np.asarray(op_real_class).copy(),
            weights=weights,
            plain_text=plain_text,
            real_table=real_table,
        )
    group = canonical_group(name)
    ops = np.asarray(group.operations)
    class_of = np.asarray(group.class_of)
    inverse = np.asarray(group.inverse)
    op_real_class = np.asarray(op_real_class)
    reps = np.unique(class_of)
    where = np.searchsorted(reps, class_of)  # position of each operation's class in reps
    sizes = np.bincount(where, minlength=len(reps))
    real_of_rep = op_real_class[reps]
    if name in ("T", "Th"):
        keys, cls_labels = _polyhedral_order(ops, reps, sizes, real_of_rep, where)
    else:
        keys, cls_labels = _axial_order(ops, reps)
    print_order = sorted(range(len(reps)), key=keys.__getitem__)
    position = np.empty(len(reps), dtype=np.int64)
    position[np.asarray(print_order)] = np.arange(len(reps))
    op_cls = position[where]  # class (print order) of each operation
    proper, angle, _ = describe(ops[reps])
    classes = tuple(
        ComplexClass(
            label=cls_labels[j],
            size=int(sizes[j]),
            proper=bool(proper[j]),
            angle=float(np.round(angle[j], 10)),
            real_class=int(real_of_rep[j]),
            inverse=int(op_cls[inverse[reps[j]]]),
        )
        for j in print_order
    )
    rep_ops = reps[np.asarray(print_order)]  # one operation per class, print order
    real_col = np.array([c.real_class for c in classes])
    subgroup = np.ones(len(ops), dtype=bool)
    if contains_all(ops, INVERSION[None]) or contains_all(ops, SIGMA_H[None]):
        subgroup = np.linalg.det(ops) > 0  # G × {E, i} or G × {E, σh}: ε of G
    n_eps = 1
    rows, row_labels, pair_of, dims, funcs = [], [], [], [], []
    for r, label in enumerate(labels):
        if kappa[r] == 1:
            rows.append(chars[r, real_col].astype(np.complex128))
            row_labels.append(label)
            pair_of.append(None)
            dims.append(round(chars[r, 0]))
            funcs.append(tuple(functions[r]))
            continue
        chi_ops = chars[r, op_real_class]
        half = chi_ops[rep_ops] / 2.0
        first = int(np.flatnonzero(np.abs(np.abs(half) - 1.0) > 1e-9)[0])
        g0 = int(rep_ops[first])
        lam = _member(chi_ops, g0, locate(ops, ops[g0] @ ops))
        _check_member(name, label, lam, ops, np.asarray(group.generators), op_cls)
        lam = _snap(lam)
        n_eps = math.lcm(n_eps, _root_orders(lam[subgroup]))
        one, two = member_labels(label)
        rows.extend([lam[rep_ops], np.conj(lam[rep_ops])])
        row_labels.extend([one, two])
        pair_of.extend([label, label])
        dims.extend([1, 1])
        funcs.extend([tuple(functions[r]), ()])
    return ComplexForm(
        name=name,
        order=order,
        classes=classes,
        labels=tuple(row_labels),
        pair_of=tuple(pair_of),
        dims=tuple(dims),
        functions=tuple(funcs),
        characters=_snap(np.array(rows)),
        epsilon=n_eps,
        operation_class=op_cls,
    )
