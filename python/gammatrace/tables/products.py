"""Products and powers of irreps: overtone and combination bands, electric-dipole transitions.

Everything here reads a :class:`~gammatrace.tables.CharacterTable`'s public attributes
(``operations``, ``operation_class``, ``character_matrix``, ``irreps``, ``reduce``,
``raw_multiplicities``) and the core's exact membership of operations (``_ops.locate``).

Powers of a representation
--------------------------
The n-th symmetric power Sⁿ Γ (the states of n quanta of one degenerate vibration: its
(n − 1)-th overtone) and the n-th antisymmetric power Λⁿ Γ have the characters h_n and e_n of
the power sums p_k(g) = χ(g^k) (Newton's identities, common practice):

    h_n = (1/n) Σ_{k=1..n} p_k h_{n−k},      e_n = (1/n) Σ_{k=1..n} (−1)^(k−1) p_k e_{n−k},

h_0 = e_0 = 1. For n = 2 they are (χ(g)² ± χ(g²)) / 2. The class of g^k is the **power map**
of the table (:func:`power_classes`): the k-th power of one operation of each class, found
among the table's canonical operations by the core (``_core.locate_operations``), cached per
table and k. Real classes (a class joined with its inverse class) have a well-defined power
map, since (g⁻¹)^k = (g^k)⁻¹.

Bands and transitions
---------------------
A band spec names the quanta: ``T1u^2`` (first overtone of a T1u fundamental: S²), ``T1u^3``
(S³), ``E1u+E2g`` (a binary combination: the direct product), ``A1+E^2`` (mixed); its species is
the direct product of the symmetric powers of its terms. A band is IR-active when one of its
irreps carries x, y or z, Raman-active when one carries a quadratic function (the table's
``ir_active_irreps`` / ``raman_active_irreps``). A transition ``A1g->T1u`` between two states
is electric-dipole allowed when Γ_i ⊗ Γ(x,y,z) ⊗ Γ_f contains the totally symmetric irrep;
each dipole component (x, y, z, as the table's functions name them) is tested on its own.

The infinite groups
-------------------
C∞v and D∞h are reported through C_Mv / D_Md and K_h through C_M × Ci (M = 13). The stand-ins
separate |m| ≤ 6 and K_h's rows are l ≤ 5, so a band whose largest |m| (or l) exceeds that
has no label in the table, and a finite sum of cos(Kθ) over θ = 360°k/M aliases K onto
M − K. The largest |m| of a product is the sum of its factors' (Sⁿ of a |m| irrep reaches
n|m|; likewise l for K_h), so the bound is exact and checked before reducing
(:class:`~gammatrace.errors.ReductionError` when exceeded). For the totally symmetric content
alone (a transition) a sum of |m| up to M − 1 = 12 is exact in C_Mv / D_Md; for K_h the
weighted sampling is exact for l_i + l_c + l_f ≤ M − 2 = 11, which every l ≤ 5 transition
meets.
"""

from __future__ import annotations

import weakref
from dataclasses import dataclass

import numpy as np

from ..errors import InputError, ReductionError
from ._ops import locate
from .registry import get_table
from .table import INTEGER_TOL

__all__ = [
    "MAX_POWER",
    "Band",
    "Transition",
    "antisymmetric_power",
    "antisymmetric_power_characters",
    "band",
    "band_characters",
    "dipole_components",
    "parse_band",
    "parse_transition",
    "power_classes",
    "selection",
    "symmetric_power",
    "symmetric_power_characters",
    "totally_symmetric",
    "transition",
]

#: Largest power n accepted (the characters of Sⁿ grow as n^(d−1); beyond a few hundred quanta
#: no band is of interest and double precision would blur the reduction of the larger irreps).
MAX_POWER = 200

_AXES = ("x", "y", "z")
# ASCII spellings of the Greek letters of the linear groups' labels (longest first).
_GREEK_ALIASES = (("Sigma", "Σ"), ("Delta", "Δ"), ("Gamma", "Γ"), ("Phi", "Φ"), ("Pi", "Π"))

_POWER_CACHE: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


# -------------------------------------------------------------------------- power map


def power_classes(table, k: int) -> np.ndarray:
    """The power map: the class of g^k for g in each class of ``table`` (cached per table).

    Parameters
    ----------
    table : CharacterTable
    k : int
        Power, k ≥ 0 (g⁰ = E).

    Returns
    -------
    numpy.ndarray of int, shape (n_classes,)
        Read-only; entry c is the class index of the k-th power of the operations of class c.
    """
    k = int(k)
    if k < 0:
        raise ValueError(f"power_classes: k must be ≥ 0, got {k}")
    cache = _POWER_CACHE.setdefault(table, {})
    if k not in cache:
        ops = np.asarray(table.operations)
        cls = np.asarray(table.operation_class)
        reps = np.unique(cls, return_index=True)[1]  # first operation of class 0, 1, …
        powers = np.linalg.matrix_power(ops[reps], k)
        out = cls[locate(ops, powers)]
        out.setflags(write=False)
        cache[k] = out
    return cache[k]


def totally_symmetric(table) -> str:
    """Label of the totally symmetric irrep (characters 1 on every class): A1, Ag, Σ+, Sg…"""
    ones = np.all(np.abs(np.asarray(table.character_matrix) - 1.0) < 1e-9, axis=1)
    return table.irreps[int(np.flatnonzero(ones)[0])].label


# -------------------------------------------------------------------------- powers


def _characters(table, rep) -> np.ndarray:
    """Characters per class of an irrep label or of given characters."""
    if isinstance(rep, str):
        return np.asarray(table.character_matrix[_index(table, rep)], dtype=np.float64)
    chars = np.asarray(rep, dtype=np.float64)
    if chars.shape != (len(table.classes),):
        raise ValueError(
            f"characters for {table.name} must have shape ({len(table.classes)},), "
            f"got {chars.shape}"
        )
    return chars


def _index(table, label: str) -> int:
    labels = [ir.label for ir in table.irreps]
    if label not in labels:
        raise InputError(f"{table.name} has no irrep {label!r}; its irreps are {', '.join(labels)}")
    return labels.index(label)


def _check_power(n) -> int:
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)):
        raise InputError(f"power: expected a whole number ≥ 1, got {n!r}")
    n = int(n)
    if not 1 <= n <= MAX_POWER:
        raise InputError(f"power: must be 1 … {MAX_POWER}, got {n}")
    return n


def _power_characters(table, rep, n, sign: float) -> np.ndarray:
    n = _check_power(n)
    chi = _characters(table, rep)
    p = [chi[power_classes(table, k)] for k in range(1, n + 1)]
    h = [np.ones_like(chi)]
    for m in range(1, n + 1):
        acc = np.zeros_like(chi)
        for k in range(1, m + 1):
            acc += (sign ** (k - 1)) * p[k - 1] * h[m - k]
        h.append(acc / m)
    return h[n]


def symmetric_power_characters(table, rep, n: int) -> np.ndarray:
    """Characters of the n-th symmetric power Sⁿ of an irrep (label) or a representation
    (characters per class), from the power sums: h_n = (1/n) Σ_k χ(g^k) h_{n−k}."""
    return _power_characters(table, rep, n, 1.0)


def antisymmetric_power_characters(table, rep, n: int) -> np.ndarray:
    """Characters of the n-th antisymmetric power Λⁿ: e_n = (1/n) Σ_k (−1)^(k−1) χ(g^k) e_{n−k}."""
    return _power_characters(table, rep, n, -1.0)


def symmetric_power(table, label: str, n: int) -> dict[str, int]:
    """Irreps of Sⁿ of one irrep: the species of the n-quantum level of a fundamental.

    Examples
    --------
    >>> from gammatrace.tables import get_table
    >>> symmetric_power(get_table("Oh"), "T1u", 2)
    {'A1g': 1, 'Eg': 1, 'T2g': 1}
    """
    chars = symmetric_power_characters(table, label, n)
    return _reduce_within_reach(table, chars, _reach_of(table, [(label, n)]), f"{label}^{n}")


def antisymmetric_power(table, label: str, n: int) -> dict[str, int]:
    """Irreps of Λⁿ of one irrep (empty when n exceeds its dimension)."""
    dim = table.irreps[_index(table, label)].dim
    chars = antisymmetric_power_characters(table, label, n)
    if n > dim:
        return {}
    reach = _reach_of(table, [(label, 1)])
    if reach is not None:
        # the largest |m| (l) of Λⁿ: the sum of the n largest weights m, m − 1, … of the
        # irrep (a 2-d irrep of a linear group has weights ±m only: Λ² is one-dimensional)
        top = reach[1]
        weights = [top, -top] if reach[0] == "|m|" else list(range(top, -top - 1, -1))
        reach = (reach[0], max(0, sum(sorted(weights, reverse=True)[:n])), *reach[2:])
    return _reduce_within_reach(table, chars, reach, f"Λ^{n} {label}")


# -------------------------------------------------------------------------- reach


def _reach(table) -> tuple[str, np.ndarray, int, int] | None:
    """The table's :attr:`~gammatrace.tables.CharacterTable.angular_reach`."""
    return table.angular_reach


def _reach_of(table, factors) -> tuple[str, int, int, int] | None:
    reach = _reach(table)
    if reach is None:
        return None
    what, values, full, ts = reach
    total = sum(int(values[_index(table, lab)]) * n for lab, n in factors)
    return what, total, full, ts


def _reduce_within_reach(table, chars, reach, what: str) -> dict[str, int]:
    """Reduce, after checking the largest |m| (l) ``reach`` of :func:`_reach_of` if any."""
    if reach is not None and reach[1] > reach[2]:
        name, total, full, _ = reach
        raise ReductionError(
            f"{what} reaches {name} = {total}, beyond the {table.name} table's {name} ≤ {full} "
            "(the finite sampling behind it has no label there and would alias it)"
        )
    return table.reduce(chars, what=what)


# -------------------------------------------------------------------------- specs


def _labels_for(table, text: str) -> str:
    out = "".join(text.split())
    if table.is_linear:
        for ascii_name, greek in _GREEK_ALIASES:
            out = out.replace(ascii_name, greek)
    return out


def _syntax_error(kind: str, spec: str, table, detail: str) -> InputError:
    labels = ", ".join(ir.label for ir in table.irreps)
    return InputError(f"{kind} {spec!r}: {detail}; the irreps of {table.name} are {labels}")


def _parse_terms(text: str, pos: int, labels: list[str]):
    """Factors ``[(label, n), …]`` of text[pos:], trying longer labels first (labels of the
    linear groups contain '+'); None when no reading exists. Raises ValueError for a bad power."""
    for lab in labels:
        if not text.startswith(lab, pos):
            continue
        p = pos + len(lab)
        n = 1
        if p < len(text) and text[p] == "^":
            q = p + 1
            while q < len(text) and text[q].isdigit():
                q += 1
            if q == p + 1:
                raise ValueError(f"'^' after {lab} needs a power (e.g. {lab}^2)")
            n = int(text[p + 1 : q])
            if n < 1:
                raise ValueError(f"the power of {lab} must be at least 1, got {n}")
            p = q
        if p == len(text):
            return [(lab, n)]
        if text[p] == "+":
            rest = _parse_terms(text, p + 1, labels)
            if rest is not None:
                return [(lab, n), *rest]
    return None


def parse_band(table, spec: str) -> list[tuple[str, int]]:
    """The terms of a band spec: ``"A1+E^2"`` -> ``[("A1", 1), ("E", 2)]``.

    Terms are irrep labels of ``table`` joined by ``+``, each with an optional power ``^n``;
    whitespace is ignored, and for the linear groups ``Sigma``, ``Pi``, ``Delta``, ``Phi``,
    ``Gamma`` stand for Σ, Π, Δ, Φ, Γ.

    Raises
    ------
    InputError
        Naming the spec: an empty or malformed spec, an unknown irrep (the message lists the
        table's irreps), a power outside 1 … ``MAX_POWER``.
    """
    if not isinstance(spec, str):
        raise InputError(f"band: expected a spec such as 'T1u^2' or 'E1u+E2g', got {spec!r}")
    text = _labels_for(table, spec)
    if not text:
        raise InputError(f"band {spec!r}: empty; expected e.g. 'T1u^2', 'E1u+E2g', 'A1+E^2'")
    labels = sorted((ir.label for ir in table.irreps), key=len, reverse=True)
    try:
        terms = _parse_terms(text, 0, labels)
    except ValueError as exc:
        raise InputError(f"band {spec!r}: {exc}") from None
    if terms is None:
        detail = "not a sum of irreps with optional powers (e.g. 'T1u^2', 'E1u+E2g', 'A1+E^2')"
        if not any("+" in lab for lab in labels):  # the terms can be told apart by '+' alone
            for term in text.split("+"):
                name = term.split("^")[0]
                if name and name not in labels:
                    detail = f"{name!r} is not an irrep"
                    break
        raise _syntax_error("band", spec, table, detail)
    for lab, n in terms:
        if n > MAX_POWER:
            raise InputError(f"band {spec!r}: power {n} of {lab} is above {MAX_POWER}")
    return terms


def parse_transition(table, spec: str) -> tuple[str, str]:
    """``"A1g->T1u"`` -> ``("A1g", "T1u")`` (``→`` accepted for ``->``).

    Raises
    ------
    InputError
        Naming the spec: no arrow, or a side that is not an irrep of ``table`` (the message
        lists the irreps).
    """
    if not isinstance(spec, str):
        raise InputError(f"transition: expected a spec such as 'A1g->T1u', got {spec!r}")
    text = _labels_for(table, spec).replace("→", "->")
    parts = text.split("->")
    if len(parts) != 2 or not all(parts):
        raise InputError(
            f"transition {spec!r}: expected two irreps joined by '->', e.g. 'A1g->T1u'"
        )
    labels = [ir.label for ir in table.irreps]
    for side in parts:
        if side not in labels:
            raise _syntax_error("transition", spec, table, f"{side!r} is not an irrep")
    return parts[0], parts[1]


# -------------------------------------------------------------------------- bands


@dataclass(frozen=True)
class Band:
    """An overtone or combination band: its species and activity.

    Attributes
    ----------
    band : str
        The spec as given, without whitespace (``"T1u^2"``).
    terms : tuple of (str, int)
        The quanta: irrep and power of each term.
    irreps : dict
        Irrep label -> multiplicity of the band's species.
    ir_active, raman_active : bool
        Some irrep of the band carries x, y or z / a quadratic function.
    """

    band: str
    terms: tuple
    irreps: dict
    ir_active: bool
    raman_active: bool

    def to_dict(self) -> dict:
        """The ``bands`` entry of ``selection --format json``."""
        return {
            "band": self.band,
            "irreps": dict(self.irreps),
            "ir_active": self.ir_active,
            "raman_active": self.raman_active,
        }


def band_characters(table, terms) -> np.ndarray:
    """Characters of the product of symmetric powers ``[(label, n), …]``."""
    out = np.ones(len(table.classes))
    for lab, n in terms:
        out = out * symmetric_power_characters(table, lab, n)
    return out


def band(table, spec) -> Band:
    """The species and activity of a band spec (``"T1u^2"``, ``"E1u+E2g"``, ``"A1+E^2"``) or
    of its terms ``[(label, n), …]``.

    Examples
    --------
    >>> from gammatrace.tables import get_table
    >>> b = band(get_table("D6h"), "E1u+E2g")
    >>> b.irreps, b.ir_active, b.raman_active
    ({'B1u': 1, 'B2u': 1, 'E1u': 1}, True, False)
    """
    if isinstance(spec, str):
        terms = parse_band(table, spec)
        name = "".join(spec.split())
    else:
        terms = [(str(lab), _check_power(n)) for lab, n in spec]
        for lab, _ in terms:
            _index(table, lab)
        name = "+".join(lab + (f"^{n}" if n > 1 else "") for lab, n in terms)
    chars = band_characters(table, terms)
    irreps = _reduce_within_reach(table, chars, _reach_of(table, terms), name)
    return Band(
        name,
        tuple(terms),
        irreps,
        bool(set(irreps) & table.ir_active_irreps),
        bool(set(irreps) & table.raman_active_irreps),
    )


# -------------------------------------------------------------------------- transitions


def dipole_components(table) -> dict[str, tuple[str, ...]]:
    """The irreps carrying x, y, z, each with its components as the table's functions group
    them: C2v ``{"A1": ("z",), "B1": ("x",), "B2": ("y",)}``, Oh ``{"T1u": ("x", "y", "z")}``."""
    out: dict[str, tuple[str, ...]] = {}
    for ir in table.irreps:
        comps = []
        for f in ir.functions:
            parts = f.strip("()").split(",")
            if all(p in _AXES for p in parts):
                comps += parts
        if comps:
            out[ir.label] = tuple(sorted(comps))
    found = sorted(c for cs in out.values() for c in cs)
    if found != list(_AXES):
        raise RuntimeError(f"internal: {table.name} lists x, y, z as {out}")
    return out


@dataclass(frozen=True)
class Transition:
    """An electric-dipole transition between two states.

    Attributes
    ----------
    transition : str
        ``"initial->final"``.
    initial, final : str
        Irrep labels of the two states.
    allowed : bool
        Γ_i ⊗ Γ(x,y,z) ⊗ Γ_f contains the totally symmetric irrep.
    components : tuple of str
        The dipole components (among x, y, z) that make it allowed; empty when forbidden.
    """

    transition: str
    initial: str
    final: str
    allowed: bool
    components: tuple

    def to_dict(self) -> dict:
        """The ``transitions`` entry of ``selection --format json``."""
        return {
            "transition": self.transition,
            "allowed": self.allowed,
            "components": list(self.components),
        }


def _totally_symmetric_content(table, factors, what: str) -> int:
    labels = [lab for lab, _ in factors]
    reach = _reach_of(table, factors)
    if reach is not None and reach[1] > reach[3]:
        name, total, _, limit = reach
        raise ReductionError(
            f"{what}: the product {' x '.join(labels)} reaches {name} = {total}, beyond what the "
            f"{table.name} table's sampling resolves for its totally symmetric part "
            f"({name} sum ≤ {limit})"
        )
    chars = np.ones(len(table.classes))
    for lab in labels:
        chars = chars * table.character_matrix[_index(table, lab)]
    raw = float(table.raw_multiplicities(chars)[_index(table, totally_symmetric(table))])
    n = round(raw)
    if abs(raw - n) > INTEGER_TOL or n < 0:
        raise ReductionError(f"{what}: totally symmetric content {raw:.6g} is not a whole number")
    return n


def transition(table, initial: str, final: str | None = None) -> Transition:
    """Electric-dipole selection rule between two states: ``transition(t, "A1g", "T1u")`` or
    ``transition(t, "A1g->T1u")``.

    Each irrep Γ_c carrying dipole components is tested: Γ_i ⊗ Γ_c ⊗ Γ_f ∋ totally symmetric.

    Examples
    --------
    >>> from gammatrace.tables import get_table
    >>> transition(get_table("C2v"), "A1->B1").components
    ('x',)
    """
    if final is None:
        spec = initial
        initial, final = parse_transition(table, spec)
        name = f"{initial}->{final}"
    else:
        name = f"{initial}->{final}"
        initial, final = parse_transition(table, name)
    comps: list[str] = []
    for lab, axes in dipole_components(table).items():
        if _totally_symmetric_content(table, [(initial, 1), (lab, 1), (final, 1)], name):
            comps += axes
    comps.sort()
    return Transition(name, initial, final, bool(comps), tuple(comps))


# -------------------------------------------------------------------------- selection


def selection(group, bands=(), transitions=()) -> dict:
    """Bands and transitions of one point group, as ``gammatrace selection --format json``.

    Parameters
    ----------
    group : str or CharacterTable
        Point-group name (``"Oh"``, ``"D∞h"``, ``"K_h"``) or a table.
    bands : iterable of str
        Band specs: ``"T1u^2"``, ``"E1u+E2g"``, ``"A1+E^2"``.
    transitions : iterable of str
        Transition specs: ``"A1g->T1u"``.

    Returns
    -------
    dict
        ``{"group", "bands": [{"band", "irreps", "ir_active", "raman_active"}, …],
        "transitions": [{"transition", "allowed", "components"}, …]}``.

    Raises
    ------
    TableError
        Unknown group.
    InputError
        A malformed spec or an unknown irrep (the message names the spec).
    ReductionError
        A band of an infinite group beyond the |m| (l) its table resolves.
    """
    table = get_table(group) if isinstance(group, str) else group
    return {
        "group": table.name,
        "bands": [band(table, s).to_dict() for s in bands],
        "transitions": [transition(table, s).to_dict() for s in transitions],
    }
