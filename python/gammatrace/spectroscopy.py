"""Vibrational symmetry: Γ_vib = Γ_3N − Γ_trans − Γ_rot, IR and Raman activity, selection rules.

IR-active irreps transform as x, y or z; Raman-active ones as a quadratic function (read from the
character table's basis functions). For linear molecules only Rx and Ry are rotations (3N − 5
modes), and a single atom (K_h) has none (3N − 3 = 0 modes). Centrosymmetric structures obey
mutual exclusion: no fundamental is both IR and Raman active. Only totally symmetric
fundamentals give polarised Raman bands (depolarisation ratio below 3/4; common practice).

Beyond the fundamentals: :func:`binary_bands` lists the first overtones (the symmetric square of
each fundamental's irrep) and binary combinations (direct products) of a structure's
fundamentals with their activity, and :func:`fermi_resonances` the fundamentals lying near an
overtone or combination of the same symmetry (products and powers: ``tables.products``).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .bases import parse_basis
from .bases.counting import build_representation
from .errors import InputError, ReductionError
from .render import write_html, write_markdown
from .render.results import vibrations_grid
from .tables.products import band, totally_symmetric
from .text import plural

if TYPE_CHECKING:  # pragma: no cover
    from .group.symmetry import SymmetryData

__all__ = [
    "CombinationBand",
    "FermiCandidate",
    "Fundamental",
    "Vibrations",
    "activity_masks",
    "binary_bands",
    "external_characters",
    "fermi_resonances",
    "format_irreps",
    "fundamentals",
    "reduce_vibrations",
    "rotational_freedom",
    "vibration_characters",
    "vibration_count",
    "vibration_spans",
    "vibrations",
    "vibrations_from_counts",
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
    polarised : dict
        The fundamentals with polarised Raman bands: the totally symmetric ones (A1, A1g, Σ+,
        …), label -> count; empty when Γ_vib has none.
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
    polarised: dict

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
            "polarised": self.polarised,
        }

    def _repr_html_(self) -> str:
        return write_html([vibrations_grid(self)])

    def _repr_markdown_(self) -> str:
        return write_markdown([vibrations_grid(self)])


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
    """Characters of Γ_trans + Γ_rot per class (see :func:`rotational_freedom`), read-only.

    Γ_vib = Γ_3N − this; shared by single analyses, batches and the site-symmetry route.
    """
    return _facts(table).external


def _external_characters(table) -> np.ndarray:
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


@dataclass(frozen=True)
class _TableFacts:
    """What the vibrational analysis reads from one table, prepared once per table."""

    labels: tuple
    dims: np.ndarray
    external: np.ndarray
    ir_mask: np.ndarray
    raman_mask: np.ndarray
    totally_symmetric: str
    centrosymmetric: bool
    #: ``ir_mask`` and ``raman_mask`` as tuples of bool, for the per-structure loop.
    ir_flags: tuple
    raman_flags: tuple


def _facts(table) -> _TableFacts:
    return table.prepared("vibrational facts", _build_facts)


def _build_facts(table) -> _TableFacts:
    labels = tuple(ir.label for ir in table.irreps)
    ir_set, raman_set = table.ir_active_irreps, table.raman_active_irreps
    arrays = (
        np.asarray([ir.dim for ir in table.irreps], dtype=np.int64),
        _external_characters(table),
        np.array([lab in ir_set for lab in labels], dtype=bool),
        np.array([lab in raman_set for lab in labels], dtype=bool),
    )
    for a in arrays:
        a.setflags(write=False)
    return _TableFacts(
        labels,
        *arrays,
        totally_symmetric(table),
        any(c.label == "i" for c in table.classes),
        tuple(arrays[2].tolist()),
        tuple(arrays[3].tolist()),
    )


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
        False where the multiplicities are not non-negative integers spanning ``modes`` (or
        the characters lie outside what the table resolves, as :meth:`reduce_rows` says).
    chars : numpy.ndarray, shape (k, n_classes)
        Γ_vib characters.
    """
    chars = vibration_characters(table, chars_3n)
    mult, ok = table.reduce_rows(chars)
    modes, spans = vibration_spans(table, mult, n_atoms)
    return mult, modes, ok & spans, chars


def vibration_characters(table, chars_3n) -> np.ndarray:
    """Γ_vib = Γ_3N − Γ_trans − Γ_rot, per row of ``chars_3n`` ``(k, n_classes)``."""
    return np.asarray(chars_3n, dtype=np.float64) - _facts(table).external


def vibration_spans(table, mult: np.ndarray, n_atoms) -> tuple[np.ndarray, np.ndarray]:
    """``(modes, ok)``: the number of vibrations of each structure (:func:`vibration_count`)
    and whether the Γ_vib multiplicities ``mult`` ``(k, n_irreps)`` span exactly that many."""
    modes = vibration_count(table, n_atoms)
    return modes, mult @ _facts(table).dims == modes


def activity_masks(table) -> tuple[np.ndarray, np.ndarray]:
    """Boolean masks over the table's irreps: IR-active, Raman-active."""
    facts = _facts(table)
    return facts.ir_mask, facts.raman_mask


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
    return vibrations_from_counts(table, mult[0].tolist(), int(modes[0]), chars[0])


def vibrations_from_counts(table, counts: list, modes: int, characters) -> Vibrations:
    """The :class:`Vibrations` of Γ_vib multiplicities ``counts`` (table order), as
    :func:`reduce_vibrations` gives them: activity, polarised bands, the counts of distinct
    fundamentals (single analyses and the batch rows of :mod:`gammatrace.summary` alike)."""
    facts = _facts(table)
    irreps = {lab: v for lab, v in zip(facts.labels, counts) if v}
    ir = {lab: v for lab, v, a in zip(facts.labels, counts, facts.ir_flags) if v and a}
    raman = {lab: v for lab, v, a in zip(facts.labels, counts, facts.raman_flags) if v and a}
    a1 = facts.totally_symmetric
    polarised = {a1: irreps[a1]} if a1 in irreps and a1 in raman else {}
    return Vibrations(
        irreps,
        modes,
        ir,
        raman,
        sum(irreps.values()),
        sum(ir.values()),
        sum(raman.values()),
        facts.centrosymmetric,
        characters,
        polarised,
    )


# ------------------------------------------------------------------ overtones and combinations


@dataclass(frozen=True)
class CombinationBand:
    """A first overtone (2ν_a) or binary combination (ν_a + ν_b) of fundamentals.

    Attributes
    ----------
    kind : str
        ``"overtone"`` (two quanta of one fundamental: the symmetric square of its irrep) or
        ``"combination"`` (one quantum each of two fundamentals: the direct product; two
        different fundamentals of one irrep give its full direct square).
    quanta : tuple of str
        The irreps of the two quanta, ``(a, a)`` for an overtone.
    irreps : dict
        The band's species, label -> multiplicity.
    ir_active, raman_active : bool
        Some irrep of the band carries x, y or z / a quadratic function.
    """

    kind: str
    quanta: tuple
    irreps: dict
    ir_active: bool
    raman_active: bool

    @property
    def allowed(self) -> bool:
        """Active in the IR or in the Raman spectrum."""
        return self.ir_active or self.raman_active

    @property
    def label(self) -> str:
        """``2ν(E1u)`` or ``ν(E1u) + ν(E2g)``."""
        a, b = self.quanta
        return f"2ν({a})" if self.kind == "overtone" else f"ν({a}) + ν({b})"

    def to_dict(self) -> dict:
        return {
            "kind": self.kind,
            "quanta": list(self.quanta),
            "irreps": dict(self.irreps),
            "ir_active": self.ir_active,
            "raman_active": self.raman_active,
        }


def _binary(table, a: str, b: str | None, cache: dict):
    """The species and activity of 2ν_a (b None) or ν_a + ν_b, computed once per pair."""
    key = (a, b)
    if key not in cache:
        terms = [(a, 2)] if b is None else [(a, 1), (b, 1)]
        cache[key] = band(table, terms)
    return cache[key]


def binary_bands(table, irreps: dict) -> list[CombinationBand]:
    """First overtones and binary combinations of the fundamentals ``irreps`` (Γ_vib).

    For each irrep a of Γ_vib, its overtone 2ν_a (the symmetric square); for each pair of
    irreps a ≠ b, the combination ν_a + ν_b (the direct product); and when Γ_vib holds a more
    than once, the combination of two different fundamentals of species a (the direct
    square). Irreps in table order.

    Parameters
    ----------
    table : CharacterTable
    irreps : dict
        Label -> number of fundamentals (:attr:`Vibrations.irreps`).
    """
    labels = [ir.label for ir in table.irreps if irreps.get(ir.label, 0) > 0]
    cache: dict = {}
    out = []
    for i, a in enumerate(labels):
        b = _binary(table, a, None, cache)
        out.append(CombinationBand("overtone", (a, a), b.irreps, b.ir_active, b.raman_active))
        for c in labels[i:]:
            if c == a and irreps[a] < 2:
                continue
            b = _binary(table, a, c, cache)
            out.append(
                CombinationBand("combination", (a, c), b.irreps, b.ir_active, b.raman_active)
            )
    return out


@dataclass(frozen=True)
class Fundamental:
    """One fundamental with its wavenumber: ``index`` = position in the list given."""

    index: int
    irrep: str
    wavenumber: float


@dataclass(frozen=True)
class FermiCandidate:
    """A fundamental near an overtone or combination band that contains its irrep.

    Attributes
    ----------
    fundamental : Fundamental
    kind : str
        ``"overtone"`` or ``"combination"``.
    quanta : tuple of Fundamental
        The fundamentals of the band (the same one twice for an overtone).
    wavenumber : float
        The band's harmonic position, 2ν_a or ν_a + ν_b (cm⁻¹).
    irreps : dict
        The band's species.
    """

    fundamental: Fundamental
    kind: str
    quanta: tuple
    wavenumber: float
    irreps: dict

    @property
    def separation(self) -> float:
        """|ν_fundamental − ν_band| in cm⁻¹."""
        return abs(self.fundamental.wavenumber - self.wavenumber)

    def to_dict(self) -> dict:
        def fund(f: Fundamental) -> dict:
            return {"index": f.index, "irrep": f.irrep, "wavenumber": f.wavenumber}

        return {
            "fundamental": fund(self.fundamental),
            "kind": self.kind,
            "quanta": [fund(f) for f in self.quanta],
            "wavenumber": self.wavenumber,
            "irreps": dict(self.irreps),
            "separation": self.separation,
        }


def _pairs_from(frequencies: Any) -> list[tuple[Any, Any]]:
    if hasattr(frequencies, "sets") and hasattr(frequencies, "frequencies"):  # mode labels
        if frequencies.frequencies is None:
            raise InputError(
                "frequencies: these mode labels carry no frequencies (label them from a "
                "Hessian with masses, or pass frequencies)"
            )
        freqs = np.asarray(frequencies.frequencies, dtype=np.float64)
        external = np.asarray(frequencies.external, dtype=bool)
        return [
            (s.irrep, float(freqs[list(s.modes)].mean()))
            for s in frequencies.sets
            if not external[list(s.modes)].any()
        ]
    if isinstance(frequencies, Mapping):
        pairs = []
        for label, value in frequencies.items():
            values = np.atleast_1d(np.asarray(value, dtype=object))
            pairs += [(label, v) for v in values.tolist()]
        return pairs
    try:
        return [(label, value) for label, value in frequencies]
    except (TypeError, ValueError):
        raise InputError(
            "frequencies: expected {irrep: wavenumber or [wavenumbers]}, (irrep, wavenumber) "
            f"pairs or labelled modes, got {type(frequencies).__name__}"
        ) from None


def fundamentals(table, frequencies: Any, irreps: dict | None = None) -> list[Fundamental]:
    """Fundamentals with wavenumbers (cm⁻¹), one per degenerate set, checked against a table.

    Parameters
    ----------
    table : CharacterTable
    frequencies
        ``{irrep: wavenumber or [wavenumbers]}``, ``[(irrep, wavenumber), …]``, or the
        labelled modes of :func:`gammatrace.modes.label_modes` with frequencies (a
        degenerate set counts once, at its mean; translations and rotations are left out).
    irreps : dict, optional
        Γ_vib: each irrep given must be in it, at most as often as it occurs there.

    Raises
    ------
    InputError
        An unknown irrep (the message lists the table's), a wavenumber that is not a positive
        finite number, more fundamentals of an irrep than Γ_vib holds.
    """
    labels = [ir.label for ir in table.irreps]
    out: list[Fundamental] = []
    for label, value in _pairs_from(frequencies):
        if label not in labels:
            raise InputError(
                f"frequencies: {label!r} is not an irrep of {table.name}; its irreps are "
                + ", ".join(labels)
            )
        try:
            nu = float(value)
        except (TypeError, ValueError):
            nu = math.nan
        if not math.isfinite(nu) or nu <= 0:
            raise InputError(
                f"frequencies: the wavenumber of {label} must be a positive number in cm⁻¹, "
                f"got {value!r}"
            )
        out.append(Fundamental(len(out), label, nu))
    if irreps is not None:
        for label in dict.fromkeys(f.irrep for f in out):
            given = sum(f.irrep == label for f in out)
            if given > irreps.get(label, 0):
                raise InputError(
                    f"frequencies: {given} fundamentals of {label} given, but Γ_vib = "
                    f"{format_irreps(irreps)} holds {irreps.get(label, 0)}"
                )
    return out


def fermi_resonances(
    table, frequencies: Any, window: float, irreps: dict | None = None
) -> list[FermiCandidate]:
    """Pairs that could be in Fermi resonance: a fundamental ν_c within ``window`` cm⁻¹ of an
    overtone 2ν_a or a binary combination ν_a + ν_b (c not a, b) whose species contains c's irrep.

    Positions are harmonic: 2ν_a and ν_a + ν_b with no anharmonic corrections, so a real
    overtone usually lies somewhat lower; choose ``window`` with that in mind. Symmetry only
    says which pairs *can* interact; how strongly is beyond it.

    Parameters
    ----------
    table : CharacterTable
    frequencies
        As for :func:`fundamentals`.
    window : float
        Largest |ν_c − ν_band| in cm⁻¹ (positive).
    irreps : dict, optional
        Γ_vib, to check the fundamentals against.

    Returns
    -------
    list of FermiCandidate
        By fundamental (in the order given), then by separation.
    """
    try:
        w = float(window)
    except (TypeError, ValueError):
        w = math.nan
    if not math.isfinite(w) or w <= 0:
        raise InputError(f"window: expected a positive width in cm⁻¹, got {window!r}")
    funds = fundamentals(table, frequencies, irreps)
    nu = np.array([f.wavenumber for f in funds])
    order = np.argsort(nu, kind="stable")
    sorted_nu = nu[order]
    cache: dict = {}
    out = []
    for i, a in enumerate(funds):
        for b in funds[i:]:
            target = a.wavenumber + b.wavenumber
            lo = np.searchsorted(sorted_nu, target - w, side="left")
            hi = np.searchsorted(sorted_nu, target + w, side="right")
            if lo == hi:
                continue
            overtone = b is a
            species = _binary(table, a.irrep, None if overtone else b.irrep, cache).irreps
            for k in order[lo:hi]:
                c = funds[int(k)]
                if c is a or c is b or c.irrep not in species:
                    continue
                kind = "overtone" if overtone else "combination"
                out.append(FermiCandidate(c, kind, (a, b), target, species))
    out.sort(key=lambda r: (r.fundamental.index, r.separation, r.quanta[0].index))
    return out
