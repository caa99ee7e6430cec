"""The CharacterTable class: classes, irreps, canonical operations and the reduction formula.

Tables are in real form: a complex-conjugate pair of one-dimensional irreps (Cn, Cnh, S2n
with n ≥ 3, T, Th) is one real irrep E of dimension 2, and the classes are *real classes*
(a class merged with its inverse class, e.g. ``2C3`` of C3 holds C3 and C3²), as printed
tables with the pair combined show them. For such an irrep the norm
κ = (1/h) Σ_c g_c χ(c)² is 2 instead of 1, and the reduction formula divides by it:

    n_i = (1/h) Σ_c g_c χ(c) χ_i(c) / κ_i,

which equals the complex formula n_i = (1/h) Σ g χ χ_i* for each member of the pair
(a real representation holds both members equally often). Likewise Σ_i dim_i² / κ_i = h.

In general the formula weighs class c by w_c: n_i = Σ_c w_c χ(c) χ_i(c) / κ_i with
κ_i = Σ_c w_c χ_i(c)². For a finite group w_c = g_c / h (the formula above, computed as
written there). K_h, sampled by a finite group, weighs its classes by a quadrature of the
integral over O(3) (``spherical``), and its rows span only part of the class functions of the
sampling: so every reduction also checks that Σ_i n_i χ_i gives back the characters, and
refuses a representation the table does not resolve.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np

from .. import _core
from ..errors import ReductionError
from ..render import write_html, write_latex, write_markdown, write_text
from ..render.tables import table_grid
from ._ops import LINEAR_SUBGROUP_N, locate
from ._types import ClassInfo, Irrep, TableSpec
from .complex import ComplexForm, build_complex_form, member_labels
from .functions import match_functions
from .spherical import MAX_L

__all__ = ["CharacterTable"]

#: How far from an integer a multiplicity may lie and still count as that integer.
INTEGER_TOL = 1e-6


def _fmt_number(x: float) -> str:
    r = round(x)
    if abs(x - r) < 1e-9:
        return str(int(r))
    return f"{x:.3f}"


class CharacterTable:
    """Character table of one point group, with canonical operations in the standard frame.

    Build tables with :func:`gammatrace.tables.get_table`, not directly.

    Attributes
    ----------
    name : str
        Schoenflies name (``"D6h"``, ``"C∞v"``).
    order : int or None
        Number of operations; None for the linear groups and K_h.
    is_linear : bool
        True for C∞v and D∞h.
    is_spherical : bool
        True for K_h.
    classes : list of ClassInfo
        In print order.
    irreps : list of Irrep
        In print order.
    character_matrix : numpy.ndarray, shape (n_irreps, n_classes)
    class_sizes : numpy.ndarray of int, shape (n_classes,)
    class_weights : numpy.ndarray, shape (n_classes,)
        w_c of the reduction formula: g_c / h, or K_h's quadrature weights.
    operations : numpy.ndarray, shape (h, 3, 3)
        Canonical operations (for linear groups: of the finite subgroup; K_h: its sampling).
    operation_class : numpy.ndarray of int, shape (h,)
        Class index of each canonical operation.
    """

    def __init__(self, spec: TableSpec):
        self.name: str = spec.name
        self.order: int | None = spec.order
        self.is_linear: bool = spec.is_linear
        self.is_spherical: bool = spec.is_spherical
        self.classes: list[ClassInfo] = list(spec.classes)
        chars = np.array(spec.characters, dtype=np.float64)
        self.character_matrix = chars
        self.class_sizes = np.array([c.size for c in self.classes], dtype=np.int64)
        self.operations = np.array(spec.ops, dtype=np.float64)
        self.operation_class = np.array(spec.op_class, dtype=np.int64)
        for arr in (self.character_matrix, self.class_sizes, self.operations, self.operation_class):
            arr.setflags(write=False)
        self._h = len(self.operations)
        # w_c·h: the class sizes themselves for a finite group (so its formula is evaluated
        # as (1/h) Σ g_c χ χ_i / κ_i, written above), K_h's quadrature weights times h
        if spec.weights is None:
            self._factor = self.class_sizes.astype(np.float64)
        else:
            self._factor = np.asarray(spec.weights, dtype=np.float64) * self._h
        self._factor.setflags(write=False)
        self._unresolved = spec.unresolved
        norms = (chars**2 * self._factor).sum(axis=1) / self._h
        self._kappa = np.round(norms)
        if np.abs(norms - self._kappa).max() > 1e-9 or not set(self._kappa) <= {1.0, 2.0}:
            raise RuntimeError(f"internal: {self.name} rows have norms {norms}")
        functions = match_functions(
            self.operations, self.operation_class, chars, self._factor, self._kappa
        )
        self.irreps: list[Irrep] = [
            Irrep(label, round(row[0]), tuple(row.tolist()), funcs, bool(k == 2))
            for label, row, funcs, k in zip(spec.irrep_labels, chars, functions, self._kappa)
        ]
        self._labels = [ir.label for ir in self.irreps]
        reps = np.unique(self.operation_class, return_index=True)[1]
        self._rep_ops = self.operations[reps]
        self._square_class = self.operation_class[np.asarray(spec.square)[reps]]
        self._complex: ComplexForm | None = None

    # -- basic properties ------------------------------------------------------------

    def __repr__(self) -> str:
        return f"CharacterTable({self.name!r}, {len(self.classes)} classes)"

    def prepared(self, key: str, build):
        """``build(self)``, computed once per table and kept under ``key``: for the facts the
        layers above read from a table on every structure (activity masks, the summary's
        plan), so that each is prepared once."""
        memo = self.__dict__.setdefault("_prepared", {})
        if key not in memo:
            memo[key] = build(self)
        return memo[key]

    @cached_property
    def class_labels(self) -> tuple:
        """The class labels, in print order (``("E", "2C3", "3σv")``)."""
        return tuple(c.label for c in self.classes)

    @cached_property
    def _class_records(self) -> tuple:
        return tuple((c.label, c.size, bool(c.proper), float(c.angle)) for c in self.classes)

    def class_dicts(self) -> list:
        """The classes as the JSON objects of shared/INTERFACE.md (fresh dicts each call):
        ``{"label", "size", "proper", "angle"}``."""
        return [
            {"label": lab, "size": size, "proper": proper, "angle": angle}
            for lab, size, proper, angle in self._class_records
        ]

    @cached_property
    def class_representatives(self) -> np.ndarray:
        """``int64 (n_classes,)``: the first canonical operation of each class."""
        out = np.unique(self.operation_class, return_index=True)[1].astype(np.int64)
        out.setflags(write=False)
        return out

    @cached_property
    def symmetry_number(self) -> int:
        """Rotational symmetry number σ: the number of proper operations.

        For the infinite groups, the classical count: 2 for D∞h, 1 for C∞v and for K_h (a
        single atom has no rotational degrees of freedom to count).
        """
        if self.is_linear:
            return 2 if self.name == "D∞h" else 1
        if self.is_spherical:
            return 1
        return int(np.count_nonzero(np.linalg.det(self.operations) > 0))

    @property
    def class_weights(self) -> np.ndarray:
        """w_c of the reduction formula n_i = Σ_c w_c χ(c) χ_i(c) / κ_i (they sum to 1).

        g_c / h for a finite group (and the finite stand-ins of C∞v, D∞h); for K_h the
        quadrature weights g_c (1 − cos θ_c) / h of its sampling (``tables.spherical``).
        """
        return self._factor / self._h

    @property
    def norms(self) -> np.ndarray:
        """κ_i = Σ_c w_c χ_i(c)²: 1 for real irreps, 2 for combined complex pairs."""
        return self._kappa.copy()

    @property
    def pairs(self) -> list[str]:
        """Labels of the irreps that stand for complex-conjugate pairs (κ = 2), table order."""
        return [ir.label for ir in self.irreps if ir.pair]

    def is_pair(self, label: str) -> bool:
        """True when the irrep ``label`` stands for a pair of complex-conjugate
        one-dimensional irreps: its norm κ is 2, so the reduction formula divides by 2h for
        it, and the multiplicity it gives is how often each member of the pair occurs.

        Raises
        ------
        KeyError
            If the table has no such irrep.

        Examples
        --------
        >>> from gammatrace.tables import get_table
        >>> get_table("C3").is_pair("E"), get_table("C3v").is_pair("E")
        (True, False)
        """
        return self.irreps[self.index(label)].pair

    def complex_form(self) -> ComplexForm:
        """The table with its complex-conjugate pairs written apart (cached).

        One column per conjugacy class (g and g⁻¹ apart), each pair E as its members ``1E``
        and ``2E`` with complex characters (``tables.complex``). A table without pairs
        (including C∞v, D∞h and K_h) comes back as it is.

        Examples
        --------
        >>> from gammatrace.tables import get_table
        >>> c3 = get_table("C3").complex_form()
        >>> [c.label for c in c3.classes], list(c3.labels)
        (['E', 'C3', 'C3^2'], ['A', '1E', '2E'])
        """
        if self._complex is None:
            finite = not (self.is_linear or self.is_spherical)
            self._complex = build_complex_form(
                self.name,
                self.order,
                self.operation_class,
                self.classes,
                self._labels,
                self.character_matrix,
                self._kappa if finite else np.ones_like(self._kappa),
                [ir.functions for ir in self.irreps],
                weights=self.class_weights if self.is_spherical else None,
                plain_text=self.to_text(),
                real_table=self,
            )
        return self._complex

    @property
    def labels(self) -> list[str]:
        """Irrep labels in table order."""
        return list(self._labels)

    @cached_property
    def vector_characters(self) -> np.ndarray:
        """Characters of Γ(x, y, z) per class: 1 + 2cosθ (proper), −1 + 2cosθ (improper)."""
        out = np.trace(self._rep_ops, axis1=1, axis2=2)
        out.setflags(write=False)
        return out

    @cached_property
    def rotation_characters(self) -> np.ndarray:
        """Characters of Γ(Rx, Ry, Rz) per class: det R times the vector character."""
        out = np.linalg.det(self._rep_ops) * self.vector_characters
        out.setflags(write=False)
        return out

    @cached_property
    def ir_active_irreps(self) -> frozenset:
        """Labels of the irreps transforming as x, y or z."""
        return frozenset(self.reduce(self.vector_characters, what="Γ(x,y,z)"))

    @cached_property
    def raman_active_irreps(self) -> frozenset:
        """Labels of the irreps transforming as a quadratic function (x2, xy, …)."""
        v = self.vector_characters
        quad = (v**2 + v[self._square_class]) / 2.0
        return frozenset(self.reduce(quad, what="Γ(quadratic functions)"))

    def index(self, label: str) -> int:
        """Row index of the irrep ``label``.

        Raises
        ------
        KeyError
            If the table has no such irrep (the message lists the labels).
        """
        try:
            return self._labels.index(label)
        except ValueError:
            raise KeyError(
                f"{self.name} has no irrep {label!r}; its irreps are {', '.join(self._labels)}"
            ) from None

    # -- classes of detected operations ----------------------------------------------

    def locate_classes(self, ops_std) -> np.ndarray:
        """Class index of each of the given canonical operations (exact membership).

        For operations that are canonical operations of this group written in its standard
        frame (e.g. a subgroup's operations moved into this group's frame): the core finds
        each among :attr:`operations`. Detected operations never need this: detection
        reports them in canonical order (operation k is canonical operation k).

        Parameters
        ----------
        ops_std : array_like, shape (k, 3, 3)

        Returns
        -------
        numpy.ndarray of int, shape (k,)

        Raises
        ------
        ValueError
            If ``ops_std`` is not of shape (k, 3, 3), or an operation is not one of this
            group's (every entry within 1e-6).
        """
        ops = np.ascontiguousarray(ops_std, dtype=np.float64)
        if ops.ndim != 3 or ops.shape[1:] != (3, 3):
            raise ValueError(f"ops_std must have shape (k, 3, 3), got {ops.shape}")
        if len(ops) == 0:
            return np.zeros(0, dtype=np.int64)
        return self.operation_class[locate(self.operations, ops)]

    # -- reduction ---------------------------------------------------------------------

    def raw_multiplicities(self, chars) -> np.ndarray:
        """The reduction formula without rounding or checks: n_i = Σ_c w_c χ χ_i / κ_i.

        ``chars`` is ``(n_classes,)`` or ``(k, n_classes)``; the result has the matching
        leading shape. For callers that check integrality themselves (batches flag bad rows
        instead of raising); :meth:`reduce` and :meth:`reduce_many` use it.
        """
        return np.asarray(chars, dtype=np.float64) @ self._reduction

    @property
    def reduction_matrix(self) -> np.ndarray:
        """``(n_classes, n_irreps)``, read-only: characters @ this = the raw multiplicities
        (:meth:`raw_multiplicities`)."""
        return self._reduction

    @cached_property
    def _reduction(self) -> np.ndarray:
        """``(n_classes, n_irreps)``: characters @ this = the raw multiplicities (prepared
        once per table)."""
        m = np.ascontiguousarray((self.character_matrix * self._factor).T / (self._h * self._kappa))
        m.setflags(write=False)
        return m

    @cached_property
    def spans_class_functions(self) -> bool:
        """True when every set of characters is a combination of the rows (as many irreps as
        classes, nothing outside the table's reach): then the back-check cannot fail."""
        return not self._unresolved and len(self.irreps) == len(self.classes)

    def unresolved_rows(self, arr: np.ndarray, raw: np.ndarray) -> np.ndarray:
        """Rows (of ``arr``, 2-D) that Σ_i n_i χ_i, with the raw multiplicities, misses.

        The sum gives the characters back exactly when they lie in the span of the rows:
        always for a finite group, whose rows span all its class functions; for K_h, when no
        angular momentum above l = 5 is present. The tolerance per class, 1e-6 (1 + Σ_i
        |χ_i(c)|), leaves room for rounding in the characters.
        """
        if self.spans_class_functions:
            return np.zeros(len(arr), dtype=bool)
        back = raw @ self.character_matrix
        tol = INTEGER_TOL * (1.0 + np.abs(self.character_matrix).sum(axis=0))
        return (np.abs(back - arr) > tol).any(axis=1)

    def _unresolved_message(self, what: str, chars, raw) -> str:
        cols = ", ".join(f"{c.label}: {_fmt_number(x)}" for c, x in zip(self.classes, chars))
        back = np.asarray(raw) @ self.character_matrix
        got = ", ".join(_fmt_number(x) for x in back)
        reach = f" ({self._unresolved})" if self._unresolved else ""
        return (
            f"{what} lies outside what the {self.name} table resolves{reach}: characters "
            f"[{cols}] are no combination of its irreps (the reduction formula gives back "
            f"[{got}])"
        )

    def _check_chars(self, chars, ndim: int) -> np.ndarray:
        arr = np.asarray(chars, dtype=np.float64)
        n_cls = len(self.classes)
        if arr.ndim != ndim or arr.shape[-1] != n_cls:
            want = "(n_classes,)" if ndim == 1 else "(k, n_classes)"
            raise ValueError(
                f"characters for {self.name} must have shape {want} with n_classes = {n_cls}, "
                f"got shape {arr.shape}"
            )
        if not np.isfinite(arr).all():
            raise ValueError(f"characters for {self.name} contain NaN or infinity: {arr}")
        return arr

    def _residual_message(self, what: str, chars, raw) -> str:
        cols = ", ".join(f"{c.label}: {_fmt_number(x)}" for c, x in zip(self.classes, chars))
        parts = ", ".join(
            f"{lab} {v:.6g} (residual {abs(v - round(v)):.2g})" for lab, v in zip(self._labels, raw)
        )
        return (
            f"{what} does not reduce to non-negative integer multiplicities in {self.name}: "
            f"characters [{cols}] give {parts}"
        )

    def reduce(self, chars_per_class, what: str = "representation") -> dict[str, int]:
        """Reduce a representation into irreps with the reduction formula.

        Parameters
        ----------
        chars_per_class : array_like, shape (n_classes,)
            Characters in the order of :attr:`classes`.
        what : str
            Name of the representation, used in error messages.

        Returns
        -------
        dict of str to int
            Nonzero multiplicities, keys in table order.

        Raises
        ------
        ValueError
            Wrong shape or non-finite characters.
        ReductionError
            A multiplicity is farther than 1e-6 from an integer, or negative; the message
            shows the characters and every multiplicity with its residual. Also when the
            irreps do not give the characters back (Σ n_i χ_i ≠ χ beyond 1e-6): the
            representation lies outside what the table resolves (K_h: l > 5).

        Examples
        --------
        >>> from gammatrace.tables import get_table
        >>> get_table("C3v").reduce([12, 0, 2])
        {'A1': 3, 'A2': 1, 'E': 4}
        """
        chars = self._check_chars(chars_per_class, 1)
        mult, ok = self.reduce_rows(chars[None])
        if not ok[0]:
            raw = self.raw_multiplicities(chars)
            if self.unresolved_rows(chars[None], raw[None])[0]:
                raise ReductionError(self._unresolved_message(what, chars, raw))
            raise ReductionError(self._residual_message(what, chars, raw))
        return {lab: v for lab, v in zip(self._labels, mult[0].tolist()) if v != 0}

    def reduce_rows(self, chars) -> tuple[np.ndarray, np.ndarray]:
        """Reduce many representations, flagging instead of raising: ``(mult, ok)`` with
        ``mult`` ``int64 (k, n_irreps)`` and ``ok`` False for a row that :meth:`reduce` would
        refuse (not integers within 1e-6, negative, or outside what the table resolves)."""
        arr = np.ascontiguousarray(chars, dtype=np.float64)
        every = self._every_class
        # the core's rounding rule (rust/reduce.rs), shared with the summary of many frames
        mult, ok = _core.reduce_counts(
            arr, every, every, self._reduction, self._no_offset, INTEGER_TOL
        )
        if not self.spans_class_functions:
            ok &= ~self.unresolved_rows(arr, arr @ self._reduction)
        return mult, ok

    @cached_property
    def _every_class(self) -> np.ndarray:
        """``0, 1, …, n_classes − 1``: characters per class as their own class counts."""
        out = np.arange(len(self.classes), dtype=np.int64)
        out.setflags(write=False)
        return out

    @cached_property
    def _no_offset(self) -> np.ndarray:
        out = np.zeros(len(self.irreps))
        out.setflags(write=False)
        return out

    def reduce_many(self, chars) -> np.ndarray:
        """Reduce many representations at once.

        Parameters
        ----------
        chars : array_like, shape (k, n_classes)

        Returns
        -------
        numpy.ndarray of int, shape (k, n_irreps)

        Raises
        ------
        ReductionError
            For the first row that does not reduce or lies outside what the table resolves
            (the message names the row).
        """
        arr = self._check_chars(chars, 2)
        mult, ok = self.reduce_rows(arr)
        if ok.all():
            return mult
        raw = self.raw_multiplicities(arr)
        outside = np.flatnonzero(self.unresolved_rows(arr, raw))
        if len(outside):
            row = int(outside[0])
            msg = self._unresolved_message(f"row {row}", arr[row], raw[row])
            raise ReductionError(f"{msg} ({len(outside)} of {len(arr)} rows fail)")
        bad = np.flatnonzero(~ok)
        row = int(bad[0])
        msg = self._residual_message(f"row {row}", arr[row], raw[row])
        raise ReductionError(f"{msg} ({len(bad)} of {len(arr)} rows fail)")

    # -- products ----------------------------------------------------------------------

    @cached_property
    def angular_reach(self) -> tuple[str, np.ndarray, int, int] | None:
        """For the infinite groups, what the finite sampling resolves: (quantity, its value
        per irrep, the largest value a full reduction resolves, the largest sum whose totally
        symmetric content it resolves) — ``("|m|", …, 6, 12)`` for C∞v/D∞h, ``("l", …, 5, 11)``
        for K_h; None for a finite group. Products beyond it would alias onto a wrong label."""
        chars = np.asarray(self.character_matrix)
        dims = np.array([ir.dim for ir in self.irreps])
        if self.is_spherical:
            return "l", (dims - 1) // 2, MAX_L, LINEAR_SUBGROUP_N - 2
        if self.is_linear:
            step = 360.0 / LINEAR_SUBGROUP_N
            col = next(
                j
                for j, c in enumerate(self.classes)
                if c.proper and c.size == 2 and abs(c.angle - step) < 1e-6
            )
            cos = np.clip(chars[:, col] / 2.0, -1.0, 1.0)
            m = np.where(dims == 1, 0, np.rint(np.arccos(cos) / np.radians(step))).astype(int)
            return "|m|", m, (LINEAR_SUBGROUP_N - 1) // 2, LINEAR_SUBGROUP_N - 1
        return None

    def _check_reach(self, labels, what: str, offset: int = 0) -> None:
        """Refuse a product of the infinite groups beyond what the sampling resolves."""
        reach = self.angular_reach
        if reach is None:
            return
        name, values, full, _ = reach
        total = sum(int(values[self.index(lab)]) for lab in labels) + offset
        if total > full:
            raise ReductionError(
                f"{what} reaches {name} = {total}, beyond the {self.name} table's {name} ≤ "
                f"{full} (the finite sampling behind it has no label there and would alias it)"
            )

    def direct_product(self, *labels: str) -> np.ndarray:
        """Characters of the direct product of the named irreps (per class)."""
        if not labels:
            raise ValueError("direct_product needs at least one irrep label")
        out = np.ones(len(self.classes))
        for lab in labels:
            out = out * self.character_matrix[self.index(lab)]
        return out

    def decompose_product(self, *labels: str) -> dict[str, int]:
        """Irreps in the direct product of the named irreps, e.g. E ⊗ E = A1 + A2 + E."""
        what = " x ".join(labels)
        self._check_reach(labels, what)
        return self.reduce(self.direct_product(*labels), what=what)

    def _square_chars(self, label: str, sign: float) -> np.ndarray:
        chi = self.character_matrix[self.index(label)]
        return (chi**2 + sign * chi[self._square_class]) / 2.0

    def symmetric_square(self, label: str) -> dict[str, int]:
        """Irreps in the symmetric square [Γ²]: χ(R) = (χ(R)² + χ(R²)) / 2."""
        self._check_reach((label, label), f"[{label}]^2")
        return self.reduce(self._square_chars(label, 1.0), what=f"[{label}]^2")

    def antisymmetric_square(self, label: str) -> dict[str, int]:
        """Irreps in the antisymmetric square {Γ²}: χ(R) = (χ(R)² − χ(R²)) / 2."""
        reach = self.angular_reach
        if reach is not None and reach[0] == "l":  # Λ² of an l shell reaches 2l − 1
            self._check_reach((label, label), f"{{{label}}}^2", offset=-1)
        return self.reduce(self._square_chars(label, -1.0), what=f"{{{label}}}^2")

    # -- output ------------------------------------------------------------------------

    def to_dict(self) -> dict:
        """The table as the INTERFACE.md ``table`` JSON object.

        Each irrep carries ``pair``: True when it stands for a complex-conjugate pair (κ = 2).
        K_h adds ``weights``: the class weights w_c of its reduction formula.
        """

        def num(x):
            r = round(x)
            return int(r) if abs(x - r) < 1e-12 else float(x)

        out = {
            "group": self.name,
            "order": self.order,
            "classes": self.class_dicts(),
            "irreps": [
                {
                    "label": ir.label,
                    "dim": ir.dim,
                    "characters": [num(x) for x in ir.characters],
                    "functions": list(ir.functions),
                    "pair": ir.pair,
                }
                for ir in self.irreps
            ],
        }
        if self.is_spherical:
            out["weights"] = [float(w) for w in self.class_weights]
        return out

    def _pair_note(self) -> str:
        pairs = self.pairs
        names = " and ".join([", ".join(pairs[:-1]), pairs[-1]] if len(pairs) > 1 else pairs)
        each = "each stand" if len(pairs) > 1 else "stands"
        members = ", ".join(" and ".join(member_labels(p)) for p in pairs)
        return (
            f"({names} {each} for a pair of complex-conjugate one-dimensional irreps "
            f"({members} of --complex), combined as in printed tables: for "
            f"{'them' if len(pairs) > 1 else 'it'} the reduction formula divides by 2h, "
            "n = (1/2h) Σ g χ(R) χ_i(R), and n is how often each member of the pair occurs)"
        )

    @property
    def notes(self) -> list[str]:
        """The notes printed under the table: complex-conjugate pairs, and for C∞v, D∞h and
        K_h the sampling the reduction formula uses."""
        out = []
        if self.pairs:
            out.append(self._pair_note())
        if self.is_linear:
            out.append(
                f"(C∞ and S∞ sampled at multiples of 360°/{LINEAR_SUBGROUP_N}; class sizes "
                f"and h = {self._h} of that sampling in the reduction formula; "
                "|m| ≤ 6 resolved)"
            )
        if self.is_spherical:
            out.append(
                f"(rotations sampled at multiples of 360°/{LINEAR_SUBGROUP_N}, with and without "
                "i; each class weighted by size·(1 − cos θ)/h, θ its rotation angle, in the "
                f"reduction formula; l ≤ {MAX_L} resolved)"
            )
        return out

    def _blocks(self) -> list:
        return [table_grid(self)]

    def to_text(self) -> str:
        """The table as printed, in aligned text.

        The group in the corner, the classes across (``2C3``, ``3σv``, ``C2′``, ``12C5²``),
        the irreps down; irrational characters in their exact printed forms (``2cos72°``,
        ``√2``, ``(1+√5)/2``; the decimal values in a line under the table); two function
        columns, linear functions and rotations, and quadratic functions (``x²+y²``); then
        the notes (:attr:`notes`). JSON (:meth:`to_dict`) keeps numbers and ASCII labels.

        Examples
        --------
        >>> from gammatrace.tables import get_table
        >>> print(get_table("C3v").to_text())
        C3v  E  2C3  3σv  linear, rotations  quadratic
        --------------------------------------------------------
        A1   1    1    1  z                  x²+y²; z²
        A2   1    1   -1  Rz
        E    2   -1    0  (x,y); (Rx,Ry)     (x²-y²,xy); (xz,yz)
        """
        return write_text(table_grid(self))

    def to_markdown(self) -> str:
        """The table as a Markdown pipe table (the layout of :meth:`to_text`), notes below."""
        return write_markdown(self._blocks())

    def to_latex(self, document: bool = False) -> str:
        """The table as LaTeX: a ``tabular`` fragment needing no package (characters and
        labels in math mode, ASCII only), or with ``document=True`` a whole ``article``."""
        return write_latex(self._blocks(), document=document)

    def _repr_html_(self) -> str:
        return write_html(self._blocks())

    def _repr_markdown_(self) -> str:
        return self.to_markdown()
