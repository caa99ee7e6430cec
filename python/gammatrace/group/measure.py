"""Near symmetry: the higher groups a structure reaches at looser tolerances, and how far it is
from each, as a continuous symmetry measure.

The measure is the continuous symmetry measure (CSM) of Zabrodsky, Peleg and Avnir (J. Am. Chem.
Soc. 1992, 114, 7843; improper groups: Pinsky and Avnir, Inorg. Chem. 1998, 37, 5575), on the
0–100 scale and normalised by the size of the structure::

    S(G) = 100 · min_Q Σ_i |P_i − Q_i|² / Σ_i |P_i − P₀|²

Q runs over the G-symmetric structures and P₀ is the centroid (unweighted: the measure is a
property of the geometry, not of the masses), so S is 0 for an exact structure and does not
change under rotation, translation, renumbering of the atoms or uniform scaling.

**Which variant.** The minimum over Q is taken with the atom assignment that detection found
(operation k sends atom i to ``permutations[k, i]``); for a fixed orientation of the group's
symmetry elements the nearest G-symmetric structure under that assignment is the group average
(the projection :func:`symmetric_part`, the one :mod:`gammatrace.symmetrize` uses)::

    Q_i − P₀ = (1/h) Σ_k R_k⁻¹ (P_{π_k(i)} − P₀)

(P₀ is the best fixed point: the average moves the centroid only along the directions the group
fixes). The orientation is then optimised locally by alternating that projection with a
Kabsch fit of a rotation U that brings Q onto P (U Q is symmetric under U R_k Uᵀ with the same
assignment): each step can only lower the sum, and the loop stops when it no longer does. The
assignment itself is never changed, so the value is an upper bound of the CSM as its authors
define it (which minimises over assignments too); for small distortions, where the nearest atom
is the image, the two agree.

**Where the groups come from.** Detection is repeated on a geometric ladder of tolerances, ten
steps per factor of ten (:func:`gammatrace.group.chirality.tolerance_ladder`, the ladder of
``improper_within``):

* :meth:`NearSymmetry.higher_groups` — every group of larger order than the one found at the
  given tolerance (the infinite groups rank above all finite ones, D∞h above C∞v), first
  found up to ``max_factor`` × the tolerance, with the measure for that detection's operations;
* :meth:`NearSymmetry.measure` — a named group: the first tolerance whose group is the named
  one or has it as a subgroup (:func:`gammatrace.tables.subgroups`); every copy of the subgroup
  inside the detected group (the embeddings and their conjugates) is measured and the smallest
  value kept. The search goes on past ``SEARCH_FACTOR`` × the tolerance up to
  ``EXTENDED_BOUND`` (0.5 Å): the record then has ``tolerance`` None (not found within
  ``SEARCH_FACTOR`` × the tolerance) but a ``measure`` and ``found_at``; beyond that bound both
  are None;
* :meth:`NearSymmetry.chirality` — the continuous chirality measure: the smallest measure
  against the smallest improper groups (Cs, Ci, S4, S8, …: the cyclic groups of an improper
  operation of order 2^k, to which every improper operation leads by an odd power) at the first
  tolerance of that extended ladder where detection finds an improper operation.

A tolerance at which detection fails, or whose permutations do not compose like the operations
(the group average would not be symmetric), is skipped.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from .. import _core
from ..errors import GammatraceError, InputError, TableError
from ..tables import LINEAR_SUBGROUP_N, get_table, subgroups
from ..tables._ops import canonical_group, multiplication_table
from ..tables.subgroups import identify_group
from .chirality import SEARCH_FACTOR, tolerance_ladder
from .irreps import _orthonormal_frame
from .symmetry import VERIFY_ALL_LIMIT, SymmetryData

__all__ = [
    "EXTENDED_BOUND",
    "Measure",
    "NearGroup",
    "NearSymmetry",
    "continuous_measure",
    "symmetric_part",
]

#: Named groups and the chirality measure are searched up to this tolerance (Å) when they are
#: not found within SEARCH_FACTOR × the tolerance (or up to that, when it is larger).
EXTENDED_BOUND = 0.5
#: The orientation loop stops after this many steps or when a step lowers the measure by less
#: than this fraction of the size Σ|P − P₀|².
_MAX_STEPS, _STEP_GAIN = 200, 1e-13


# --------------------------------------------------------------------------------------------
# The projection and the measure
# --------------------------------------------------------------------------------------------


def symmetric_part(
    y: np.ndarray, ops: np.ndarray, perms: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """The group average of a structure under an assignment, and how symmetric it came out.

    Parameters
    ----------
    y : ndarray, shape (N, 3)
        Coordinates relative to the fixed point, in the frame of ``ops``.
    ops : ndarray, shape (h, 3, 3)
        The group's operations (exact, orthogonal), same frame.
    perms : ndarray, shape (h, N)
        Operation k sends atom i to atom ``perms[k, i]``.

    Returns
    -------
    ysym : ndarray, shape (N, 3)
        ``ysym_i = (1/h) Σ_k R_k⁻¹ y_{π_k(i)}``.
    deviation : ndarray, shape (h, N)
        ``|R_k ysym_i − ysym_{π_k(i)}|``: rounding when the permutations compose like the
        operations, else the size of the failure.
    """
    acc = np.zeros_like(y)
    for k in range(len(ops)):
        # R⁻¹ y_{π(i)} as rows: y_{π(i)} @ R for orthogonal R
        acc += y[perms[k]] @ ops[k]
    ysym = acc / len(ops)
    moved = np.einsum("kij,nj->kni", ops, ysym)
    return ysym, np.linalg.norm(moved - ysym[perms], axis=2)


def _kabsch(q: np.ndarray, p: np.ndarray) -> np.ndarray:
    """The proper rotation U minimising Σ_i |p_i − U q_i|² (rows are points)."""
    w, _, zt = np.linalg.svd(p.T @ q)
    d = np.ones(3)
    d[2] = np.sign(np.linalg.det(w @ zt)) or 1.0
    return (w * d) @ zt


@dataclass(frozen=True, eq=False)
class Measure:
    """The measure of one structure against one set of operations (see the module doc).

    Attributes
    ----------
    value : float
        S on the 0–100 scale.
    nearest : ndarray, shape (N, 3)
        The nearest symmetric structure found (input frame, Å).
    operations : ndarray, shape (h, 3, 3)
        The operations in the orientation that gave it (acting about the centroid).
    steps : int
        Orientation steps taken.
    """

    value: float
    nearest: np.ndarray = field(repr=False)
    operations: np.ndarray = field(repr=False)
    steps: int


def continuous_measure(
    positions: np.ndarray,
    operations: np.ndarray,
    permutations: np.ndarray,
    *,
    optimise: bool = True,
) -> Measure | None:
    """The continuous symmetry measure of a structure for given operations and assignment.

    Parameters
    ----------
    positions : array_like, shape (N, 3)
        Å, any frame.
    operations : array_like, shape (h, 3, 3)
        Exact orthogonal matrices of a point group in the same frame (only their directions
        matter: they act about the centroid).
    permutations : array_like, shape (h, N)
        Operation k sends atom i to atom ``permutations[k, i]``.
    optimise : bool
        Optimise the orientation of the operations (alternating projection and Kabsch fit);
        False gives the measure for the operations as given (never smaller).

    Returns
    -------
    Measure or None
        None when the permutations do not compose like the operations (no group average is
        symmetric under them).
    """
    pos = np.asarray(positions, dtype=np.float64)
    ops = np.asarray(operations, dtype=np.float64)
    perms = np.asarray(permutations, dtype=np.int64)
    centroid = pos.mean(axis=0)
    p = pos - centroid
    size = float(np.sum(p * p))
    q, dev = symmetric_part(p, ops, perms)
    scale = max(1.0, float(np.abs(p).max()))
    if dev.max() > 1e-9 * scale:
        return None
    if size <= 0.0:  # one atom, or all atoms on one point: nothing to measure
        return Measure(0.0, pos.copy(), ops, 0)
    resid = float(np.sum((p - q) ** 2))
    steps = 0
    while optimise and steps < _MAX_STEPS and resid > 0.0:
        u = _kabsch(q, p)
        turned = np.einsum("ab,kbc,dc->kad", u, ops, u)
        q2, _ = symmetric_part(p, turned, perms)
        r2 = float(np.sum((p - q2) ** 2))
        if r2 >= resid - _STEP_GAIN * size:
            if r2 < resid:
                ops, q, resid = turned, q2, r2
            break
        ops, q, resid = turned, q2, r2
        steps += 1
    return Measure(100.0 * resid / size, q + centroid, ops, steps)


# --------------------------------------------------------------------------------------------
# Records
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class NearGroup:
    """A group a structure has at some tolerance, with the measure of the structure against it.

    Attributes
    ----------
    group : str
        Schoenflies name.
    tolerance : float or None
        The tolerance (Å) of the ladder at which detection found it (or, for a named subgroup,
        found a group containing it); None when that is beyond ``SEARCH_FACTOR`` × the given
        tolerance or it was not found at all.
    measure : float or None
        The continuous symmetry measure (0–100) for that detection's operations and assignment,
        orientation optimised; None when the group was not found within ``EXTENDED_BOUND``.
    found_at : float or None
        The tolerance (Å) at which it was found, also beyond ``SEARCH_FACTOR`` × the given
        tolerance (named groups and the chirality measure search up to ``EXTENDED_BOUND``).
    searched_to : float or None
        The largest tolerance (Å) searched.
    nearest : ndarray or None
        The nearest symmetric structure found (Å, input frame).
    """

    group: str
    tolerance: float | None
    measure: float | None
    found_at: float | None = None
    searched_to: float | None = None
    nearest: np.ndarray | None = field(default=None, repr=False)

    def to_dict(self) -> dict:
        """JSON form: ``{"group", "tolerance", "measure", "found_at"}``."""
        return {
            "group": self.group,
            "tolerance": self.tolerance,
            "measure": self.measure,
            "found_at": self.found_at,
        }

    def describe(self, kind: str = "near") -> str:
        """One line of text. ``kind``: ``"near"`` (``near D6h at 0.016 Å, measure 0.0072``),
        ``"named"`` (``measure against D4h: 0.23 (found at 0.16 Å)``) or ``"chirality"``
        (``chirality measure 0.0013 (against Cs, found at 0.02 Å)``)."""
        value = _text(self.measure)
        if kind == "near":
            return f"near {self.group} at {self.found_at:.2g} Å, measure {value}"
        if self.measure is None:
            return f"measure against {self.group}: not found within {self.searched_to:.2g} Å"
        where = f"found at {self.found_at:.2g} Å"
        if self.tolerance is None:
            where += f", beyond {SEARCH_FACTOR:g} × the tolerance"
        if kind == "chirality":
            return f"chirality measure {value} (against {self.group}, {where})"
        return f"measure against {self.group}: {value} ({where})"


def _text(measure: float | None) -> str:
    """Two significant digits; rounding-level values (below 1e-12 on the 0–100 scale) as 0."""
    if measure is None:
        return "-"
    return "0" if measure < 1e-12 else f"{measure:.2g}"


# --------------------------------------------------------------------------------------------
# The search
# --------------------------------------------------------------------------------------------


def _rank(sym: SymmetryData) -> tuple[bool, int]:
    """Infinite groups above finite ones; within each, by the number of operations held."""
    return (sym.group_order is None, sym.order)


class NearSymmetry:
    """Near symmetry of one structure: detection repeated at looser tolerances, cached.

    Parameters
    ----------
    sym : SymmetryData
        The structure with the group found at its tolerance (``sym.tol``).
    """

    def __init__(self, sym: SymmetryData):
        self.sym = sym
        self._found: dict[float, SymmetryData | None] = {sym.tol: sym}

    # ---------------------------------------------------------------- detection, cached
    def at(self, tol: float) -> SymmetryData | None:
        """The group at a tolerance (Å); None when detection fails there."""
        if tol not in self._found:
            s = self.sym.structure
            try:
                raw = _core.find_point_group(
                    s.positions, s.numbers, tol, LINEAR_SUBGROUP_N, VERIFY_ALL_LIMIT, s.masses
                )
                self._found[tol] = SymmetryData.from_detection(s, raw, tol)
            except GammatraceError:
                self._found[tol] = None
        return self._found[tol]

    def _ladder(self, bound: float) -> list[float]:
        return tolerance_ladder(self.sym.tol, bound)

    @property
    def extended_bound(self) -> float:
        """How far named groups and the chirality measure are searched (Å): ``EXTENDED_BOUND``,
        or ``SEARCH_FACTOR`` × the tolerance when that is larger."""
        return max(EXTENDED_BOUND, SEARCH_FACTOR * self.sym.tol)

    def _extended(self) -> list[float]:
        return self._ladder(self.extended_bound)

    def _within(self, t: float) -> float | None:
        """``t`` when it lies within SEARCH_FACTOR × the tolerance, else None."""
        return t if t <= SEARCH_FACTOR * self.sym.tol * (1 + 1e-9) else None

    # ---------------------------------------------------------------- measures
    def _measure_ops(self, found: SymmetryData, index: np.ndarray | None = None) -> Measure | None:
        """The measure against the exact canonical operations ``index`` (positions among
        ``found.operations``; all by default)."""
        table = found.table
        canon = np.asarray(table.operations, dtype=np.float64)
        k = np.arange(found.order) if index is None else np.asarray(index, dtype=np.int64)
        frame = _orthonormal_frame(found.frame)
        exact = canon[found.canonical_index[k]]  # standard frame
        ops = np.einsum("ai,kab,bj->kij", frame, exact, frame)  # input frame
        try:
            perms = found.permutations[k]
        except GammatraceError:
            return None
        return continuous_measure(found.positions, ops, perms)

    def _record(self, name: str, t: float, m: Measure) -> NearGroup:
        return NearGroup(name, self._within(t), m.value, t, t, m.nearest)

    def higher_groups(self, max_factor: float = SEARCH_FACTOR) -> list[NearGroup]:
        """Each group of larger order found as the tolerance grows to ``max_factor`` × the
        given one (first found, tightest tolerance first), with its measure.

        Raises
        ------
        InputError
            If ``max_factor`` is not a finite number ≥ 1 (also a ``ValueError``).
        """
        try:
            f = float(max_factor)
        except (TypeError, ValueError):
            f = math.nan
        if not math.isfinite(f) or f < 1.0:
            raise InputError(f"max_factor: expected a finite number >= 1, got {max_factor!r}")
        base = _rank(self.sym)
        seen = {self.sym.point_group}
        out = []
        for t in self._ladder(f * self.sym.tol)[1:]:
            found = self.at(t)
            if found is None or found.point_group in seen or _rank(found) <= base:
                continue
            m = self._measure_ops(found)
            if m is None:
                continue
            seen.add(found.point_group)
            out.append(NearGroup(found.point_group, t, m.value, t, t, m.nearest))
        return out

    def records(self, near: bool = True, groups: Sequence[str] = ()) -> list[NearGroup]:
        """What ``analyze --near [--measure GROUP]...`` lists: the higher groups (when
        ``near``), then each named group not already listed.

        Raises
        ------
        TableError
            If a name is not a point-group name.
        """
        out = self.higher_groups() if near else []
        listed = {r.group for r in out}
        for name in groups:
            r = self.measure(name)
            if r.group not in listed:
                listed.add(r.group)
                out.append(r)
        return out

    def measure(self, group: str) -> NearGroup:
        """The measure against a named group: at the first tolerance (up to ``EXTENDED_BOUND``)
        whose group is ``group`` or contains it; the smallest over the copies of the subgroup.

        Raises
        ------
        TableError
            If ``group`` is not a point-group name.
        """
        name = get_table(group).name
        for t in self._extended():
            found = self.at(t)
            if found is None:
                continue
            best = self._best_copy(found, name)
            if best is not None:
                return self._record(name, t, best)
        return NearGroup(name, None, None, None, self.extended_bound)

    def _best_copy(self, found: SymmetryData, name: str) -> Measure | None:
        """The smallest measure over the copies of ``name`` among ``found``'s operations."""
        if found.point_group == name:
            return self._measure_ops(found)
        if found.table.is_spherical:  # one atom: every point group holds, each atom fixed
            ops = np.asarray(get_table(name).operations, dtype=np.float64)
            perms = np.zeros((len(ops), found.n_atoms), dtype=np.int64)
            return continuous_measure(found.positions, ops, perms)
        copies = _copies(found, name)
        best = None
        for index in copies:
            m = (
                self._measure_ops(found, index)
                if isinstance(index, np.ndarray)
                else self._measure_mapped(found, index[1])
            )
            if m is not None and (best is None or m.value < best.value):
                best = m
        return best

    def _measure_mapped(self, found: SymmetryData, ops_std: np.ndarray) -> Measure | None:
        """A subgroup of a linear group given by its operations (standard frame): their
        permutations are mapped at the detection's tolerance."""
        frame = _orthonormal_frame(found.frame)
        ops = np.ascontiguousarray(np.einsum("ai,kab,bj->kij", frame, ops_std, frame))
        s = found.structure
        try:
            perms, _ = _core.map_operations(
                s.positions, s.numbers, tuple(found.center), ops, found.tol, s.masses
            )
        except GammatraceError:
            return None
        return continuous_measure(s.positions, ops, perms)

    def chirality(self) -> NearGroup | None:
        """The continuous chirality measure: the smallest measure against Cs, Ci, S4, … at the
        first tolerance (up to ``EXTENDED_BOUND``) where an improper operation holds; None when
        none does."""
        for t in self._extended():
            found = self.at(t)
            if found is None or found.chiral:
                continue
            best, best_name = None, ""
            for index in _improper_cycles(found):
                m = self._measure_ops(found, index)
                if m is not None and (best is None or m.value < best.value):
                    best = m
                    best_name = _cycle_name(found, index)
            if best is not None:
                return self._record(best_name, t, best)
        return None


# --------------------------------------------------------------------------------------------
# Subgroups among the detected operations
# --------------------------------------------------------------------------------------------


def _positions_of(found: SymmetryData) -> np.ndarray:
    """``pos[c]`` = position among ``found.operations`` of canonical operation c."""
    pos = np.empty(len(found.canonical_index), dtype=np.int64)
    pos[found.canonical_index] = np.arange(len(found.canonical_index))
    return pos


def _copies(found: SymmetryData, name: str) -> list:
    """Every copy of the subgroup ``name`` in ``found``'s group: position arrays among its
    operations; for a linear group, ``(None, ops_std)`` pairs (their operations in the
    standard frame, from the finite group that stands for it in ``subgroups``)."""
    try:
        embeddings = [e for e in subgroups(found.point_group) if e.name == name]
    except TableError:
        return []
    if found.is_linear:
        if name == "C∞v" and found.point_group == "D∞h":
            keep = np.asarray(found.table.operations)[:, 2, 2] > 0.5  # keep the axis' sense
            return [_positions_of(found)[np.flatnonzero(keep)]]
        return [(None, np.asarray(e.operations)) for e in embeddings]
    if not embeddings:
        return []
    prod, inv = multiplication_table(found.point_group)
    pos = _positions_of(found)
    out, seen = [], set()
    for e in embeddings:
        idx = np.asarray(e.op_indices, dtype=np.int64)
        for g in range(len(prod)):
            conj = np.unique(prod[prod[g, idx], inv[g]])  # g S g⁻¹
            key = conj.tobytes()
            if key not in seen:
                seen.add(key)
                out.append(pos[conj])
    return out


def _improper_cycles(found: SymmetryData) -> list[np.ndarray]:
    """The cyclic groups generated by an improper operation of order 2^k (Cs, Ci, S4, S8, …),
    as positions among ``found``'s operations, each once."""
    group = canonical_group(found.point_group)
    pos = _positions_of(found)
    out, seen = [], set()
    for k in np.flatnonzero(~np.asarray(found.proper, dtype=bool)):
        cyc = group.closure(np.array([found.canonical_index[k]], dtype=np.int64))
        n = len(cyc)
        if n & (n - 1):  # not a power of two: an odd power of it is one of the others
            continue
        key = np.sort(cyc).tobytes()
        if key not in seen:
            seen.add(key)
            out.append(pos[cyc])
    return out


def _cycle_name(found: SymmetryData, index: np.ndarray) -> str:
    """The name of a group of ``found``'s operations (the core's namer)."""
    canon = np.asarray(found.table.operations, dtype=np.float64)
    return identify_group(canon[found.canonical_index[index]])
