"""Reducible representations: characters of a resolved basis, counted, checked and reduced.

Characters are counted in the Rust core (``_core.*_characters``) for every operation of the
group, never traced out of matrices. Here they are checked to be constant over each conjugacy
class (the cheapest end-to-end self-check of the pipeline) and reduced with the character table.

The basis is the one :class:`~gammatrace.Basis` of :mod:`gammatrace.bases`, resolved on the
structure once (:class:`~gammatrace.bases.ResolvedBasis`: shells per atom, bonds, plane normal,
vectors); this module reads only the resolved form.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .. import _core
from ..errors import BasisError, SymmetryError
from ..group.symmetry import class_representatives
from ..render import write_html, write_markdown
from ..render.results import representation_grid
from .resolve import ResolvedBasis
from .spec import Basis

if TYPE_CHECKING:  # pragma: no cover
    from ..group.symmetry import SymmetryData

__all__ = [
    "Representation",
    "build_representation",
    "count_characters",
]


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
        Unshifted atoms carrying the basis (or unshifted bonds) for one operation of each
        class: an atom without functions (a hydrogen of ``orbitals:Fe=d``, of π) is not
        counted.
    contributions : list
        Contribution per unshifted item in each class: a number when every item unshifted in
        that class contributes the same, else None.
    """

    basis: Basis
    characters: np.ndarray
    per_operation: np.ndarray
    irreps: dict
    unshifted: np.ndarray
    contributions: list
    class_labels: tuple

    @property
    def item_name(self) -> str:
        """What the unshifted count counts: ``atoms``, ``bonds`` or ``π centres``."""
        return _ITEMS.get(self.basis.kind, "atoms")

    @property
    def dimension(self) -> int:
        """The dimension (character of E)."""
        return round(float(self.characters[0])) if len(self.characters) else 0

    def to_dict(self) -> dict:
        """``{"characters": [...], "irreps": {...}}`` as in shared/INTERFACE.md."""
        return {"characters": json_numbers(self.characters), "irreps": dict(self.irreps)}

    def worked_table(self) -> str:
        """The per-class table a practitioner writes by hand.

        Columns: class, unshifted atoms carrying the basis (or bonds), contribution per
        unshifted item, character.
        """
        rows = [("class", f"unshifted {self.item_name}", "per item", "character")]
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

    def _repr_html_(self) -> str:
        return write_html([representation_grid(self)])

    def _repr_markdown_(self) -> str:
        return write_markdown([representation_grid(self)])


_ITEMS = {"bonds": "bonds", "bond_vectors": "bonds", "pi": "π centres"}


def json_number(x: float) -> int | float:
    """An integer when the value is integral to 1e-9, else a float rounded to 10 decimals."""
    xf = float(x)
    r = round(xf)
    if abs(xf - r) < 1e-9:
        return int(r)
    return round(xf, 10)


def json_numbers(values: np.ndarray) -> list:
    """:func:`json_number` of each value (one pass when they are all integral)."""
    return json_number_rows(np.asarray(values, dtype=np.float64)[None, :])[0]


def json_number_rows(values: np.ndarray) -> list:
    """:func:`json_number` of every entry of a 2-D array, row by row (integral rows in one
    pass)."""
    arr = np.asarray(values, dtype=np.float64)
    r = np.rint(arr)
    integral = (np.abs(arr - r) < 1e-9).all(axis=1)
    ints = r.astype(np.int64).tolist()
    return [
        ints[k] if integral[k] else [json_number(x) for x in arr[k].tolist()]
        for k in range(len(arr))
    ]


def format_number(x: float) -> str:
    """Text form of a character: ``-1``, ``0.618``."""
    v = json_number(x)
    return str(v) if isinstance(v, int) else f"{v:.3f}"


# --------------------------------------------------------------------------------------------
# Counting (one call into the core per basis) and the per-class check
# --------------------------------------------------------------------------------------------


def count_characters(sym: SymmetryData, resolved: ResolvedBasis) -> tuple[np.ndarray, np.ndarray]:
    """Per-operation characters and unshifted items of a resolved basis: bonds for the bond
    bases, else the atoms carrying at least one function.

    One call into the core (rust/count/) per basis, and one more for the unshifted atoms when
    some atoms carry nothing; no matrix is built.
    """
    pos, center, ops, tol = (sym.positions, tuple(sym.center), sym.operations, sym.tol)
    kind = resolved.kind
    if kind in ("bonds", "bond_vectors"):
        bonds = resolved.pairs
        # a stretch's character is the count of bonds kept; vectors need the signed count too
        unshifted = _core.bond_characters(pos, center, ops, bonds, False, tol)
        if kind == "bonds":
            return unshifted.copy(), unshifted
        return _core.bond_characters(pos, center, ops, bonds, True, tol), unshifted
    unshifted = _unshifted_carriers(sym, resolved)
    if kind == "atoms":
        return unshifted.copy(), unshifted
    proper = np.ascontiguousarray(sym.proper)
    angle = np.ascontiguousarray(sym.angle)
    if kind == "cartesian":
        # every atom carries x, y, z: one p-like shell (l = 1), so one counting pass serves
        return unshifted * _core.orbital_contributions(proper, angle, 1), unshifted
    if kind == "orbitals":
        counts = resolved.shell_counts
        return _core.shell_characters(pos, center, ops, proper, angle, counts, tol), unshifted
    if kind == "pi":
        normals = np.ascontiguousarray(resolved.atom_normals)
        return _core.pi_characters(pos, center, ops, normals, tol), unshifted
    # vectors
    vec = resolved.vectors
    flat = np.ascontiguousarray(vec.reshape(-1, 3))
    return _core.vector_set_characters(pos, center, ops, flat, vec.shape[1], tol), unshifted


def _unshifted_carriers(sym: SymmetryData, resolved: ResolvedBasis) -> np.ndarray:
    """Atoms carrying the basis that each operation leaves unshifted (``float64 (h,)``)."""
    carriers = resolved.carriers
    if carriers.all():
        return sym.unshifted_atoms
    pos = np.ascontiguousarray(sym.positions[carriers])
    counts = _core.count_unshifted(pos, tuple(sym.center), sym.operations, sym.tol)
    return counts.astype(np.float64)


def _orbital_groups_unshifted(sym: SymmetryData, resolved: ResolvedBasis) -> np.ndarray:
    """Orbitals on atoms of different shells: ``(n_groups, h)`` unshifted atoms of each set
    of shells, so a class whose unshifted atoms all carry the same shells is known."""
    shells = resolved.element_shells
    signature = {z: tuple(sorted(ls)) for z, ls in shells.items() if ls}
    groups = sorted(set(signature.values()))
    out = np.zeros((len(groups), sym.order))
    for g, sig in enumerate(groups):
        zs = [z for z, s in signature.items() if s == sig]
        pos = np.ascontiguousarray(sym.positions[np.isin(sym.numbers, zs)])
        out[g] = _core.count_unshifted(pos, tuple(sym.center), sym.operations, sym.tol)
    return out


def per_class(
    per_op: np.ndarray,
    op_class: np.ndarray,
    labels: tuple,
    what: str,
    atol: float = 1e-6,
    first: np.ndarray | None = None,
) -> np.ndarray:
    """Characters per class from characters per operation, checking constancy in each class.

    ``first`` (the first operation of each class, :func:`class_representatives`) may be given
    when known; the first operation of each class represents it.

    Raises
    ------
    SymmetryError
        When two operations of one class disagree; names the class and the operations.
    """
    if first is None:
        first = class_representatives(op_class, labels, what)
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


def build_representation(sym: SymmetryData, resolved: ResolvedBasis) -> Representation:
    """Count, check per class and reduce a resolved basis on a structure with its group.

    Raises
    ------
    BasisError
        For user vectors on a single atom: K_h is sampled by rotations about one axis, so
        their characters cannot say how all of O(3) moves them (a vector along z would pass
        for a scalar).
    """
    basis = resolved.basis
    if sym.table.is_spherical and basis.kind == "vectors":
        raise BasisError(
            "basis 'vectors' has no meaning for a single atom: its group K_h is sampled by "
            "rotations about one axis, which cannot tell how every rotation moves the vectors"
        )
    chars_op, unshifted_op = count_characters(sym, resolved)
    labels = sym.table.class_labels
    what = f"basis '{basis.name}'"
    first = sym.class_representatives
    chars = per_class(chars_op, sym.op_class, labels, what, first=first)
    if basis.kind == "atoms":  # the characters are the unshifted counts
        unshifted = chars
    else:
        unshifted = per_class(unshifted_op, sym.op_class, labels, what, first=first)
    # Each unshifted bond vector or π centre adds +1 or -1: the items agree exactly when the
    # character per item is ±1. Otherwise the items of a class contribute alike when they are
    # all of one kind: always for a uniform basis; for orbitals of several kinds, when one
    # kind alone is unshifted in that class.
    signed = basis.kind in ("bond_vectors", "pi")
    single_kind = np.full(len(labels), signed or resolved.uniform)
    if not single_kind.all() and basis.kind == "orbitals":
        by_group = _orbital_groups_unshifted(sym, resolved)
        kinds = np.stack([per_class(g, sym.op_class, labels, "unshifted") for g in by_group])
        single_kind = (kinds > 0).sum(axis=0) <= 1
    contributions: list = []
    for n, chi, one_kind in zip(unshifted.tolist(), chars.tolist(), single_kind.tolist()):
        per_item = chi / n if n else 0.0
        if not one_kind or (signed and n and abs(abs(per_item) - 1) > 1e-9):
            contributions.append(None)
        else:
            contributions.append(per_item)
    irreps = sym.table.reduce(chars, what=f"basis '{basis.name}'")
    return Representation(basis, chars, chars_op, irreps, unshifted, contributions, labels)
