"""Reducible representations: bases on atoms and bonds, their characters, their reduction.

Characters are counted in the Rust core (``_core.*_characters``) for every operation of the
group, never traced out of matrices. Here they are checked to be constant over each conjugacy
class (the cheapest end-to-end self-check of the pipeline) and reduced with the character table.

Bases (``Basis``):

========================  ==========================================================
``"atoms"``               one scalar per atom (the permutation representation)
``"cartesian"``           x, y, z displacements of every atom (Γ_3N)
``"orbitals"``            atomic orbitals by angular momentum, per element (``"Fe=spd,H=s"``)
``"pi"``                  one p orbital per atom perpendicular to the plane (planar structures)
``"bonds"``               bond stretches (scalars on unordered atom pairs)
``"bond_vectors"``        vectors along bonds (+1 kept, −1 reversed)
``"vectors"``             the user's own 3-vectors at every atom, ``(n_atoms, m, 3)``
========================  ==========================================================

Bonds are found from covalent radii (Cordero et al. 2008): atoms i, j are bonded when
d_ij ≤ scale · (r_i + r_j), with ``scale = 1.2`` by default, unless given explicitly.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import BasisError, SymmetryError

if TYPE_CHECKING:  # pragma: no cover
    from .analysis import Analysis

__all__ = ["DEFAULT_BOND_SCALE", "ORBITAL_LETTERS", "Basis", "Representation", "parse_basis"]

#: Spectroscopic letters of angular momentum l = 0, 1, 2 ...
ORBITAL_LETTERS = "spdfghi"
#: Bond criterion d_ij <= scale * (r_i + r_j) with Cordero covalent radii.
DEFAULT_BOND_SCALE = 1.2
KINDS = ("atoms", "cartesian", "orbitals", "pi", "bonds", "bond_vectors", "vectors")


@dataclass(frozen=True, eq=False)
class Basis:
    """A basis on the atoms or bonds of a structure.

    Use the constructors: ``Basis("atoms")``, ``Basis("cartesian")``, ``Basis("pi")``,
    :meth:`orbitals`, :meth:`bond_stretches`, :meth:`bond_vectors`, :meth:`vector_set`,
    or :func:`parse_basis` on a string such as ``"orbitals:Fe=spd,H=s"``.
    """

    kind: str
    shells: Mapping[Any, str] | None = None
    bonds: np.ndarray | None = None
    bond_scale: float = DEFAULT_BOND_SCALE
    vectors: np.ndarray | None = None

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise BasisError(f"unknown basis '{self.kind}'; known: {', '.join(KINDS)}")

    @property
    def name(self) -> str:
        """The key of this basis in ``representations`` of the JSON output."""
        return self.kind

    @classmethod
    def orbitals(cls, shells: Mapping[Any, str]) -> Basis:
        """Atomic orbitals: ``{"Fe": "spd", "H": "s"}`` or ``{26: "spd"}``; ``"*"`` = others.

        Letters s, p, d, f, g, h, i (l = 0…6); a letter twice means two shells.
        Elements not named (and no ``"*"``) carry no orbitals.
        """
        for key, letters in shells.items():
            bad = [c for c in str(letters) if c not in ORBITAL_LETTERS]
            if bad or not letters:
                raise BasisError(
                    f"orbitals: '{key}={letters}' names unknown angular momentum "
                    f"'{''.join(bad) or letters}'; use letters of '{ORBITAL_LETTERS}'"
                )
        return cls("orbitals", shells=dict(shells))

    @classmethod
    def bond_stretches(cls, bonds: Any = None, scale: float = DEFAULT_BOND_SCALE) -> Basis:
        """Bond stretches: explicit ``(n_bonds, 2)`` atom pairs, or found with ``scale``."""
        return cls("bonds", bonds=_coerce_bonds(bonds), bond_scale=float(scale))

    @classmethod
    def bond_vectors(cls, bonds: Any = None, scale: float = DEFAULT_BOND_SCALE) -> Basis:
        """Vectors along bonds (oriented from the first atom to the second)."""
        return cls("bond_vectors", bonds=_coerce_bonds(bonds), bond_scale=float(scale))

    @classmethod
    def vector_set(cls, vectors: Any) -> Basis:
        """The user's own 3-vectors: ``(n_atoms, 3)`` or ``(n_atoms, m, 3)``."""
        arr = np.asarray(vectors, dtype=np.float64)
        if arr.ndim == 2:
            arr = arr[:, None, :]
        if arr.ndim != 3 or arr.shape[2] != 3 or arr.shape[1] < 1:
            raise BasisError(
                f"vectors: expected shape (n_atoms, 3) or (n_atoms, m, 3), got {arr.shape}"
            )
        if not np.all(np.isfinite(arr)):
            raise BasisError("vectors: contains NaN or infinite values")
        return cls("vectors", vectors=np.ascontiguousarray(arr))


def _coerce_bonds(bonds: Any) -> np.ndarray | None:
    if bonds is None:
        return None
    arr = np.asarray(bonds)
    if arr.size == 0:
        return np.zeros((0, 2), dtype=np.int64)
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.dtype.kind not in "iu":
        raise BasisError(f"bonds: expected integer pairs of shape (n_bonds, 2), got {arr.shape}")
    return np.ascontiguousarray(arr, dtype=np.int64)


def parse_basis(spec: Any) -> Basis:
    """A :class:`Basis` from a spec: a Basis, a kind name, or a string with options.

    Examples: ``"cartesian"``, ``"pi"``, ``"bonds"``, ``"bonds:scale=1.3"``,
    ``"bond_vectors"``, ``"orbitals:Fe=spd,H=s"``, ``"orbitals:*=spd"``.

    Raises
    ------
    BasisError
        For an unknown kind or option.
    """
    if isinstance(spec, Basis):
        return spec
    if isinstance(spec, Mapping):
        return Basis.orbitals(spec)
    if not isinstance(spec, str):
        raise BasisError(f"basis: expected a Basis or a string, got {type(spec).__name__}")
    kind, _, opts = spec.strip().partition(":")
    kind = kind.strip().lower().replace("-", "_")
    if kind == "orbitals":
        shells: dict[str, str] = {}
        if not opts:
            raise BasisError("orbitals: name the shells, e.g. 'orbitals:Fe=spd,H=s'")
        for item in opts.split(","):
            el, eq, letters = item.partition("=")
            if not eq:
                el, letters = "*", el
            shells[el.strip()] = letters.strip().lower()
        return Basis.orbitals(shells)
    if kind in ("bonds", "bond_vectors"):
        scale = DEFAULT_BOND_SCALE
        if opts:
            key, _, val = opts.partition("=")
            if key.strip() != "scale":
                raise BasisError(f"{kind}: unknown option '{opts}'; expected scale=FACTOR")
            try:
                scale = float(val)
            except ValueError:
                raise BasisError(f"{kind}: scale '{val}' is not a number") from None
        ctor = Basis.bond_stretches if kind == "bonds" else Basis.bond_vectors
        return ctor(None, scale)
    if opts:
        raise BasisError(f"{kind}: takes no options, got '{opts}'")
    if kind == "vectors":
        raise BasisError("vectors: pass the array from Python with Basis.vector_set(array)")
    return Basis(kind)


@dataclass(frozen=True)
class Representation:
    """A reducible representation on a structure: characters per class and its reduction.

    Attributes
    ----------
    basis : Basis
        What it is built on.
    characters : numpy.ndarray
        One character per class, in table order.
    per_operation : numpy.ndarray
        The counted character of every operation (constant within each class).
    irreps : dict
        Mulliken label -> multiplicity (zeros left out).
    unshifted : numpy.ndarray
        Unshifted atoms (or bonds) for one operation of each class.
    contributions : list
        Contribution per unshifted item in each class (a number, or None when it varies).
    """

    basis: Basis
    characters: np.ndarray
    per_operation: np.ndarray
    irreps: dict
    unshifted: np.ndarray
    contributions: list
    class_labels: tuple

    @property
    def dimension(self) -> int:
        """The dimension (character of E)."""
        return round(float(self.characters[0])) if len(self.characters) else 0

    def to_dict(self) -> dict:
        """``{"characters": [...], "irreps": {...}}`` as in shared/INTERFACE.md."""
        return {"characters": [json_number(c) for c in self.characters], "irreps": self.irreps}

    def worked_table(self) -> str:
        """The per-class table a practitioner writes by hand.

        Columns: class, unshifted atoms (or bonds), contribution per unshifted item, character.
        """
        item = "bonds" if self.basis.kind in ("bonds", "bond_vectors") else "atoms"
        rows = [("class", f"unshifted {item}", "per item", "character")]
        for label, n, contrib, chi in zip(
            self.class_labels, self.unshifted, self.contributions, self.characters
        ):
            rows.append(
                (
                    label,
                    str(int(n)),
                    "-" if n == 0 else "varies" if contrib is None else format_number(contrib),
                    format_number(chi),
                )
            )
        widths = [max(len(r[i]) for r in rows) for i in range(4)]
        lines = [
            "  ".join(c.rjust(w) if i else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths)))
            for r in rows
        ]
        lines.insert(1, "  ".join("-" * w for w in widths))
        return "\n".join(lines)


def json_number(x: float) -> int | float:
    """An integer when the value is integral to 1e-9, else a float rounded to 10 decimals."""
    xf = float(x)
    r = round(xf)
    if abs(xf - r) < 1e-9:
        return int(r)
    return round(xf, 10)


def format_number(x: float) -> str:
    """Text form of a character: ``-1``, ``0.618``."""
    v = json_number(x)
    return str(v) if isinstance(v, int) else f"{v:.3f}"


# --------------------------------------------------------------------------------------------
# Counting (one call into the core per basis) and the per-class check
# --------------------------------------------------------------------------------------------


def _shell_counts(analysis: Analysis, shells: Mapping[Any, str]) -> np.ndarray:
    from .io import atomic_numbers

    numbers = analysis.structure.numbers
    default = None
    per_z: dict[int, str] = {}
    for key, letters in shells.items():
        if key == "*":
            default = letters
            continue
        if isinstance(key, (int, np.integer)):
            z = int(key)
            if not 1 <= z <= 118:
                raise BasisError(f"orbitals: atomic number {z} is not an element")
        else:
            try:
                z = int(atomic_numbers([str(key)])[0])
            except ValueError:
                raise BasisError(f"orbitals: unknown element '{key}'") from None
        per_z[z] = letters
    n_l = 1 + max(ORBITAL_LETTERS.index(c) for s in shells.values() for c in s)
    table = np.zeros((119, n_l), dtype=np.uint32)
    if default is not None:
        for c in default:
            table[:, ORBITAL_LETTERS.index(c)] += 1
    for z, letters in per_z.items():
        table[z, :] = 0
        for c in letters:
            table[z, ORBITAL_LETTERS.index(c)] += 1
    return np.ascontiguousarray(table[numbers])


def plane_normal(positions: np.ndarray, center: np.ndarray, tol: float) -> np.ndarray:
    """Unit normal of the plane of a planar structure.

    Raises
    ------
    BasisError
        When the structure is not planar within ``tol`` (names the farthest atom).
    """
    x = positions - center
    if len(x) < 3:
        raise BasisError("pi: needs a planar structure of at least 3 atoms")
    _, _s, vt = np.linalg.svd(x, full_matrices=False)
    normal = vt[-1]
    height = np.abs(x @ normal)
    worst = int(np.argmax(height))
    if height[worst] > tol:
        raise BasisError(
            f"pi: the structure is not planar: atom {worst} is {height[worst]:.3f} Å from the "
            f"best plane (tolerance {tol} Å)"
        )
    return normal / np.linalg.norm(normal)


def count_characters(analysis: Analysis, basis: Basis) -> tuple[np.ndarray, np.ndarray]:
    """Per-operation characters and unshifted items for a basis (Rust does the counting)."""
    from . import _core

    s = analysis.structure
    pos, center, ops, tol = (
        s.positions,
        tuple(analysis.center),
        analysis.operation_matrices,
        analysis.tol,
    )
    proper = np.ascontiguousarray(analysis.proper)
    angle = np.ascontiguousarray(analysis.angle)
    kind = basis.kind
    if kind in ("bonds", "bond_vectors"):
        bonds = basis.bonds if basis.bonds is not None else analysis.bonds(basis.bond_scale)
        if len(bonds) and (bonds.min() < 0 or bonds.max() >= s.n_atoms):
            k = int(np.argmax((bonds < 0).any(1) | (bonds >= s.n_atoms).any(1)))
            raise BasisError(
                f"bonds: bond {k} ({bonds[k, 0]}, {bonds[k, 1]}) names an atom that does not "
                f"exist (the structure has {s.n_atoms} atoms)"
            )
        # a stretch's character is the count of bonds kept; vectors need the signed count too
        unshifted = _core.bond_characters(pos, center, ops, bonds, False, tol)
        if kind == "bonds":
            return unshifted.copy(), unshifted
        return _core.bond_characters(pos, center, ops, bonds, True, tol), unshifted
    unshifted = analysis.unshifted_atoms
    if kind == "atoms":
        return unshifted.copy(), unshifted
    if kind == "cartesian":
        # every atom carries x, y, z: one p-like shell (l = 1), so one counting pass serves
        return unshifted * _core.orbital_contributions(proper, angle, 1), unshifted
    if kind == "orbitals":
        counts = _shell_counts(analysis, basis.shells or {})
        return _core.shell_characters(pos, center, ops, proper, angle, counts, tol), unshifted
    if kind == "pi":
        normal = plane_normal(pos, analysis.center, tol)
        return _core.pi_characters(pos, center, ops, tuple(normal), tol), unshifted
    if kind == "vectors":
        vec = basis.vectors
        assert vec is not None
        if vec.shape[0] != s.n_atoms:
            raise BasisError(
                f"vectors: {vec.shape[0]} rows but the structure has {s.n_atoms} atoms"
            )
        flat = np.ascontiguousarray(vec.reshape(-1, 3))
        return _core.vector_set_characters(pos, center, ops, flat, vec.shape[1], tol), unshifted
    raise BasisError(f"unknown basis '{kind}'")  # pragma: no cover (checked in Basis)


def per_class(
    per_op: np.ndarray, op_class: np.ndarray, labels: tuple, what: str, atol: float = 1e-6
) -> np.ndarray:
    """Characters per class from characters per operation, checking constancy in each class.

    Raises
    ------
    SymmetryError
        When two operations of one class disagree; names the class and the operations.
    """
    n = len(labels)
    first = np.full(n, -1, dtype=np.int64)
    # the first operation of each class represents it
    order = np.argsort(op_class, kind="stable")
    cls_sorted = op_class[order]
    starts = np.searchsorted(cls_sorted, np.arange(n))
    present = starts < len(cls_sorted)
    present[present] = cls_sorted[starts[present]] == np.arange(n)[present]
    first[present] = order[starts[present]]
    if not present.all():
        missing = [labels[i] for i in np.flatnonzero(~present)]
        raise SymmetryError(f"{what}: no detected operation falls into class(es) {missing}")
    chars = per_op[first]
    dev = np.abs(per_op - chars[op_class])
    bad = dev > atol * np.maximum(1.0, np.abs(chars[op_class]))
    if bad.any():
        k = int(np.flatnonzero(bad)[0])
        c = int(op_class[k])
        members = np.flatnonzero(op_class == c)
        raise SymmetryError(
            f"{what}: characters disagree within class {labels[c]}: operation "
            f"{int(first[c])} gives {per_op[first[c]]:.6g}, operation {k} gives "
            f"{per_op[k]:.6g} (class operations {members.tolist()}); the tolerance may be "
            "too loose for this structure"
        )
    return chars


def build_representation(analysis: Analysis, basis: Basis) -> Representation:
    """Count, check per class and reduce a basis on an analysed structure."""
    chars_op, unshifted_op = count_characters(analysis, basis)
    labels = tuple(c.label for c in analysis.classes)
    chars = per_class(chars_op, analysis.op_class, labels, f"basis '{basis.name}'")
    unshifted = per_class(unshifted_op, analysis.op_class, labels, f"basis '{basis.name}'")
    uniform = True
    if basis.kind == "orbitals":
        uniform = np.unique(_shell_counts(analysis, basis.shells or {}), axis=0).shape[0] == 1
    contributions: list = []
    for k in range(len(labels)):
        n = unshifted[k]
        per_item = chars[k] / n if n else 0.0
        if not uniform or (basis.kind == "bond_vectors" and n and abs(abs(per_item) - 1) > 1e-9):
            contributions.append(None)
        else:
            contributions.append(per_item)
    irreps = analysis.table.reduce(chars, what=f"basis '{basis.name}'")
    return Representation(basis, chars, chars_op, irreps, unshifted, contributions, labels)
