"""The one value object of the package: a structure with its point group.

:class:`SymmetryData` holds what detection found (operations in canonical order, their classes,
the atom permutations, the standard frame) next to the structure and the character table.
Everything above this layer — counting, change of basis, spectroscopy, modes, symmetrisation,
sites, pictures — reads it; :class:`~gammatrace.analysis.Analysis` is a facade over one.

It is built either from a detection (:meth:`SymmetryData.from_detection`, trusted: the core has
verified every operation it reports) or by hand from arrays (validated: shapes, permutations,
elements), for users who bring their own operations.
"""

from __future__ import annotations

from functools import cached_property
from typing import Any

import numpy as np

from .. import _core
from ..errors import InputError, SymmetryError
from ..io.elements import SYMBOLS
from ..io.structure import Structure
from ..tables import get_table
from ..tables._ops import describe
from ..text import plural

__all__ = [
    "DEFAULT_TOL",
    "VERIFY_ALL_LIMIT",
    "SymmetryData",
    "as_symmetry",
    "class_representatives",
]

#: Default distance tolerance in ångström (see DEVELOPERS.md, "Tolerance"); the core's value.
DEFAULT_TOL: float = float(_core.DEFAULT_TOLERANCE)
#: Verify every operation (and keep its permutation) while n_atoms * order stays below this;
#: above it detection verifies E and the generators, and the other permutations are mapped
#: on first use (:attr:`SymmetryData.permutations`).
VERIFY_ALL_LIMIT: int = int(_core.VERIFY_ALL_LIMIT)


def _shape_error(name, expected, received):
    return InputError(f"{name}: expected {expected}, received {received}")


def _frozen(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


def class_representatives(op_class: np.ndarray, labels: tuple, what: str) -> np.ndarray:
    """The first operation of each class (``int64 (n_classes,)``).

    Raises
    ------
    SymmetryError
        When a class has no operation.
    """
    n = len(labels)
    first = np.full(n, -1, dtype=np.int64)
    order = np.argsort(op_class, kind="stable")
    cls_sorted = op_class[order]
    starts = np.searchsorted(cls_sorted, np.arange(n))
    present = starts < len(cls_sorted)
    present[present] = cls_sorted[starts[present]] == np.arange(n)[present]
    first[present] = order[starts[present]]
    if not present.all():
        missing = [labels[i] for i in np.flatnonzero(~present)]
        raise SymmetryError(f"{what}: no detected operation falls into class(es) {missing}")
    return first


class SymmetryData:
    """A structure with its point-group operations, permutations, table and classes.

    Parameters
    ----------
    positions : ndarray, shape (N, 3)
        Cartesian coordinates in ångström, input frame.
    numbers : ndarray, shape (N,)
        Atomic numbers.
    center : ndarray, shape (3,)
        The fixed point of all operations.
    frame : ndarray, shape (3, 3)
        Rows = standard x, y, z axes in input coordinates.
    operations : ndarray, shape (h, 3, 3)
        Operations in the input frame acting on ``positions - center``.
    permutations : ndarray, shape (h, N)
        Operation k maps atom i onto atom ``permutations[k, i]``.
    table : CharacterTable or str
        The group's character table (or its name).
    op_class : ndarray, shape (h,)
        Class index (into ``table.classes``) of each operation.
    canonical_index : ndarray, shape (h,), optional
        Which of ``table.operations`` each operation is (as detection reports it); by
        default operation k is canonical operation k.
    tol : float
        The distance tolerance the operations hold within, Å.

    Raises
    ------
    InputError
        If an array has the wrong shape or a permutation is not one.
    SymmetryError
        If a permutation maps an atom onto an atom of another element.
    """

    def __init__(
        self,
        positions: Any,
        numbers: Any,
        center: Any,
        frame: Any,
        operations: Any,
        permutations: Any,
        table: Any,
        op_class: Any,
        canonical_index: Any = None,
        *,
        tol: float = DEFAULT_TOL,
    ):
        pos = np.ascontiguousarray(positions, dtype=np.float64)
        if pos.ndim != 2 or pos.shape[1] != 3 or pos.shape[0] == 0:
            raise _shape_error("positions", "shape (n_atoms, 3) with n_atoms >= 1", pos.shape)
        if not np.all(np.isfinite(pos)):
            raise InputError("positions: contains NaN or infinite coordinates")
        n = pos.shape[0]
        num = np.ascontiguousarray(numbers, dtype=np.int64)
        if num.shape != (n,):
            raise _shape_error("numbers", f"shape ({n},)", num.shape)
        c = np.ascontiguousarray(center, dtype=np.float64).reshape(-1)
        if c.shape != (3,):
            raise _shape_error("center", "shape (3,)", c.shape)
        fr = np.ascontiguousarray(frame, dtype=np.float64)
        if fr.shape != (3, 3):
            raise _shape_error("frame", "shape (3, 3)", fr.shape)
        ops = np.ascontiguousarray(operations, dtype=np.float64)
        if ops.ndim != 3 or ops.shape[1:] != (3, 3) or ops.shape[0] == 0:
            raise _shape_error("operations", "shape (h, 3, 3)", ops.shape)
        h = ops.shape[0]
        perms = np.ascontiguousarray(permutations, dtype=np.int64)
        if perms.shape != (h, n):
            raise _shape_error("permutations", f"shape ({h}, {n})", perms.shape)
        if np.any(np.sort(perms, axis=1) != np.arange(n)[None, :]):
            raise InputError("permutations: every row must be a permutation of range(n_atoms)")
        if np.any(num[perms] != num[None, :]):
            k, i = np.argwhere(num[perms] != num[None, :])[0]
            raise SymmetryError(
                f"operation {k} maps atom {i} ({SYMBOLS[num[i]] if 0 < num[i] < 119 else num[i]})"
                f" onto atom {perms[k, i]} of another element"
            )
        tab = get_table(table) if isinstance(table, str) else table
        cls = np.ascontiguousarray(op_class, dtype=np.int64)
        if cls.shape != (h,):
            raise _shape_error("op_class", f"shape ({h},)", cls.shape)
        n_classes = len(getattr(tab, "classes", ()))
        if n_classes and (cls.min() < 0 or cls.max() >= n_classes):
            raise InputError(
                f"op_class: expected class indices in 0..{n_classes - 1}, received "
                f"{cls.min()}..{cls.max()}"
            )
        canon = (
            np.arange(h, dtype=np.int64)
            if canonical_index is None
            else np.ascontiguousarray(canonical_index, dtype=np.int64)
        )
        proper, angle, axis = describe(ops)
        self._set(
            structure=Structure(_frozen(num), _frozen(pos)),
            tol=float(tol),
            point_group=str(getattr(tab, "name", "")),
            center=_frozen(c),
            frame=_frozen(fr),
            operations=_frozen(ops),
            proper=_frozen(np.ascontiguousarray(proper, dtype=bool)),
            angle=_frozen(np.ascontiguousarray(angle, dtype=np.float64)),
            axis=_frozen(np.ascontiguousarray(axis, dtype=np.float64)),
            table=tab,
            op_class=_frozen(cls),
            canonical_index=_frozen(canon),
            verified_operations=_frozen(np.arange(h, dtype=np.int64)),
            generator_permutations=_frozen(perms),
            deviations=None,  # not measured: users bring their own operations
            max_deviation=0.0,
            best_verified_improper=None,
            generator_rows=None,  # no generating set known: every row
        )

    def _set(self, **values: Any) -> None:
        self.__dict__.update(values)

    def __getstate__(self) -> dict:
        # The core's record does not pickle: the permutations it holds go in its place.
        state = dict(self.__dict__)
        raw = state.pop("_raw", None)
        if raw is not None and "generator_permutations" not in state:
            state["generator_permutations"] = raw.permutations
        return state

    def __setattr__(self, name: str, value: Any) -> None:
        raise AttributeError(f"SymmetryData is immutable (cannot set {name!r})")

    @classmethod
    def from_detection(cls, structure: Structure, raw: Any, tol: float) -> SymmetryData:
        """Wrap what the core's detection returned (``_core.Detection``), without copies.

        The core reports operations in canonical order with their canonical index and class;
        their permutations are verified by the core (all, or E and the generators for huge
        structures: the rest are mapped on first use of :attr:`permutations`).
        """
        self = object.__new__(cls)
        table = get_table(raw.point_group)
        self._set(
            structure=structure,
            tol=float(tol),
            point_group=raw.point_group,
            center=raw.center,
            frame=raw.frame,
            operations=raw.operations,
            proper=raw.proper,
            angle=raw.angle,
            axis=raw.axis,
            table=table,
            op_class=table.operation_class[raw.canonical_index],
            canonical_index=raw.canonical_index,
            verified_operations=raw.verified,
            _raw=raw,  # the core's record: generator_permutations made from it on first use
            deviations=raw.deviations,
            max_deviation=float(raw.max_deviation),
            best_verified_improper=raw.best_verified_improper,
            generator_rows=raw.generator_rows,
            class_first=raw.class_of,
        )
        return self

    # ------------------------------------------------------------------ the structure
    @property
    def positions(self) -> np.ndarray:
        """``float64 (N, 3)``: coordinates in ångström, input frame."""
        return self.structure.positions

    @property
    def numbers(self) -> np.ndarray:
        """``int64 (N,)``: atomic numbers."""
        return self.structure.numbers

    @property
    def n_atoms(self) -> int:
        """Number of atoms N."""
        return int(self.structure.positions.shape[0])

    # ------------------------------------------------------------------ the group
    @property
    def order(self) -> int:
        """Number of operations h held (for the infinite groups: of the finite sampling)."""
        return int(self.operations.shape[0])

    @property
    def group_order(self) -> int | None:
        """The group's order; None for the infinite groups (linear molecules, one atom)."""
        return self.table.order

    @cached_property
    def class_representatives(self) -> np.ndarray:
        """``int64 (n_classes,)``: the first operation of each class (operations in canonical
        order share the table's, computed once per table)."""
        h = len(self.operations)
        if h == len(self.table.operations) and np.array_equal(self.canonical_index, np.arange(h)):
            return self.table.class_representatives
        return class_representatives(
            self.op_class, tuple(c.label for c in self.table.classes), self.point_group
        )

    @cached_property
    def class_first(self) -> np.ndarray:
        """``int64 (h,)``: for each operation, the index of the first operation of its class
        (detection's ``class_of``)."""
        return _frozen(self.class_representatives[self.op_class])

    @property
    def classes(self) -> list:
        """The table's classes (``ClassInfo``), in print order."""
        return list(self.table.classes)

    @property
    def is_linear(self) -> bool:
        """True for C∞v and D∞h."""
        return bool(self.table.is_linear)

    @property
    def symmetry_number(self) -> int:
        """Rotational symmetry number σ: the number of proper operations (the infinite groups:
        2 for D∞h, 1 for C∞v and for one atom)."""
        return int(self.table.symmetry_number)

    @cached_property
    def chiral(self) -> bool:
        """True when the group has no improper operation (no σ, i or S_n)."""
        return bool(self.proper.all())

    # ------------------------------------------------------------------ permutations
    @property
    def all_verified(self) -> bool:
        """True when every operation's permutation is known from detection."""
        return len(self.verified_operations) == len(self.operations)

    @cached_property
    def generator_permutations(self) -> np.ndarray:
        """``int64 (k, N)``: the permutations detection verified, row j for operation
        ``verified_operations[j]`` (made from the core's record on first use: analyses
        that only count characters never make them)."""
        return self._raw.permutations

    @cached_property
    def permutations(self) -> np.ndarray:
        """``int64 (h, N)``: atom i goes to atom ``permutations[k, i]`` under operation k.

        Operations that detection did not verify itself (structures with n_atoms × order above
        ``VERIFY_ALL_LIMIT`` verify only E and the generators) are mapped here, on first use,
        with one lookup pass each.

        Raises
        ------
        SymmetryError
            If such an operation does not hold within the tolerance.
        """
        if self.all_verified:
            return self.generator_permutations
        verified = self.verified_operations
        h = len(self.operations)
        out = np.empty((h, self.n_atoms), dtype=np.int64)
        out[verified] = self.generator_permutations
        missing = np.setdiff1d(np.arange(h), verified)
        more, _ = _core.map_operations(
            self.positions,
            self.numbers,
            tuple(self.center),
            np.ascontiguousarray(self.operations[missing]),
            self.tol,
            self.structure.masses,
        )
        out[missing] = more
        return _frozen(out)

    @property
    def permutations_known(self) -> bool:
        """True when :attr:`permutations` costs nothing more (all verified or already mapped)."""
        return self.all_verified or "permutations" in self.__dict__

    # ------------------------------------------------------------------ counting
    @cached_property
    def unshifted_atoms(self) -> np.ndarray:
        """Atoms each operation leaves unshifted (``float64 (h,)``), counted once in the core:
        every operation when detection verified every one; otherwise (huge structures) the
        first operation of each class, standing for its class (one rule for single
        structures and batches, ``count::count_unshifted_by_class``)."""
        counts = _core.unshifted_atoms(
            self.positions,
            tuple(self.center.tolist()),
            self.operations,
            self.class_first,
            not self.all_verified,
            self.tol,
        )
        return _frozen(counts)

    def __repr__(self) -> str:
        return (
            f"<SymmetryData {self.point_group}: {plural(self.order, 'operation')}, "
            f"{plural(self.n_atoms, 'atom')}>"
        )


def as_symmetry(obj: Any) -> SymmetryData:
    """The value object itself, or the one an :class:`~gammatrace.Analysis` is a facade over.

    Raises
    ------
    InputError
        For anything else.
    """
    if isinstance(obj, SymmetryData):
        return obj
    inner = getattr(obj, "symmetry", None)
    if isinstance(inner, SymmetryData):
        return inner
    raise InputError(
        f"expected a SymmetryData or an Analysis (gammatrace.analyze), got {type(obj).__name__}"
    )
