"""One structure, analysed: point group, operations, classes, representations, vibrations.

:func:`analyze` is the front door. It calls the Rust core once to find the point group (with the
operations, their permutations and the standard frame), assigns every operation to a class of the
character table by its matrix in the standard frame (one source of truth for class names, see
DEVELOPERS.md), and then builds whatever representations are asked for, lazily.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np

from . import _core
from .bases import ResolvedBasis, check_matrix_kind, find_bonds, parse_basis
from .errors import GammatraceError, InputError, SymmetryError
from .io import FrameError, Structure, as_structure, element_data, read_structures
from .representations import Representation, build_representation
from .stabilisers import atom_images
from .tables import LINEAR_SUBGROUP_N, get_table

__all__ = [
    "DEFAULT_TOL",
    "Analysis",
    "Operation",
    "Orbit",
    "analyze",
    "analyze_many",
]

#: Default distance tolerance in ångström (see DEVELOPERS.md, "Tolerance"); the core's value.
DEFAULT_TOL: float = float(_core.DEFAULT_TOLERANCE)
#: Smallest and largest tolerance accepted, Å.
MIN_TOL, MAX_TOL = 1e-6, 10.0
#: Verify every operation (and keep its permutation) while n_atoms * order stays below this;
#: above it detection verifies E and the generators, and the other permutations are mapped
#: on first use (:attr:`Analysis.permutations`).
VERIFY_ALL_LIMIT: int = int(_core.VERIFY_ALL_LIMIT)
DEFAULT_BASES = ("atoms", "cartesian")


@dataclass(frozen=True)
class Operation:
    """One symmetry operation of a structure.

    Attributes
    ----------
    index : int
        Position in :attr:`Analysis.operations`.
    matrix : numpy.ndarray
        3×3 matrix acting on coordinates centred on :attr:`Analysis.center`, input frame.
    proper : bool
        True for a rotation C(angle), False for σh·C(angle).
    angle : float
        Degrees in [0, 180].
    axis : numpy.ndarray
        Unit axis (plane normal for a reflection) in the input frame.
    class_label : str
        The class of the character table it belongs to.
    """

    index: int
    matrix: np.ndarray
    proper: bool
    angle: float
    axis: np.ndarray
    class_label: str


@dataclass(frozen=True)
class Orbit:
    """A set of symmetry-equivalent atoms.

    Attributes
    ----------
    atoms : list of int
        Zero-based atom indices, ascending.
    size : int
        Number of atoms.
    site_order : int
        Order of the site group (the stabiliser of one atom): group order / orbit size.
    site_group : str or None
        Schoenflies name of the site group, when known.
    """

    atoms: list
    size: int
    site_order: int | None
    site_group: str | None

    def to_dict(self) -> dict:
        """``{"size", "site_group", "atoms"}`` as in shared/INTERFACE.md."""
        return {"size": self.size, "site_group": self.site_group, "atoms": self.atoms}


def _check_tol(tol: Any) -> float:
    try:
        t = float(tol)
    except (TypeError, ValueError):
        raise InputError(f"tol: expected a distance in Å, got {tol!r}") from None
    if not math.isfinite(t) or t <= 0:
        raise InputError(f"tol: must be a positive finite distance in Å, got {tol!r}")
    if not MIN_TOL <= t <= MAX_TOL:
        raise InputError(
            f"tol: {t:.3g} Å is outside the usable range {MIN_TOL:g} to {MAX_TOL:g} Å "
            "(below it coordinates carry no such precision; above it atoms of a molecule merge)"
        )
    return t


class Analysis:
    """The symmetry of one structure. Build it with :func:`analyze`.

    Everything beyond the point group is computed on first use and cached.
    """

    def __init__(self, structure: Structure, raw: _core.Detection, tol: float):
        self.structure = structure
        self.tol = tol
        self._raw = raw
        self.point_group: str = raw.point_group
        self.center: np.ndarray = raw.center
        self.frame: np.ndarray = raw.frame
        self.operation_matrices: np.ndarray = raw.operations
        self.proper: np.ndarray = raw.proper
        self.angle: np.ndarray = raw.angle
        self.axis: np.ndarray = raw.axis
        self.max_deviation: float = raw.max_deviation
        #: ``int64 (h,)``: which of the table's canonical operations each detected operation
        #: is, as the core reports it (detection lists them in canonical order).
        self.canonical_index: np.ndarray = raw.canonical_index
        self.table = get_table(self.point_group)
        self.op_class = self.table.operation_class[self.canonical_index]
        self.classes = list(self.table.classes)

    # ---------------------------------------------------------------- basic facts
    @property
    def n_atoms(self) -> int:
        """Number of atoms."""
        return self.structure.n_atoms

    @property
    def is_linear(self) -> bool:
        """True for C∞v and D∞h."""
        return self.table.is_linear

    @property
    def order(self) -> int | None:
        """Group order; None for the infinite groups (linear molecules, a single atom)."""
        return self.table.order

    @cached_property
    def operations(self) -> list[Operation]:
        """All operations (for linear groups: those of the finite subgroup reported; for a
        single atom: those of the sampling of K_h)."""
        labels = [c.label for c in self.classes]
        return [
            Operation(
                k,
                self.operation_matrices[k],
                bool(self.proper[k]),
                float(self.angle[k]),
                self.axis[k],
                labels[int(self.op_class[k])],
            )
            for k in range(len(self.operation_matrices))
        ]

    @cached_property
    def permutations(self) -> np.ndarray:
        """``int64 (h, n_atoms)``: atom i goes to atom ``permutations[k, i]`` under op k.

        Operations that detection did not verify itself (structures with n_atoms × order above
        ``VERIFY_ALL_LIMIT`` verify only E and the generators) are mapped here, on first use,
        with one lookup pass each.

        Raises
        ------
        SymmetryError
            If such an operation does not hold within the tolerance.
        """
        verified = self._raw.verified
        perms = self._raw.permutations
        h = len(self.operation_matrices)
        out = np.empty((h, self.n_atoms), dtype=np.int64)
        out[verified] = perms
        missing = sorted(set(range(h)) - set(verified.tolist()))
        if missing:
            s = self.structure
            more, _ = _core.map_operations(
                s.positions,
                s.numbers,
                tuple(self.center),
                np.ascontiguousarray(self.operation_matrices[missing]),
                self.tol,
            )
            out[missing] = more
        return out

    @property
    def all_verified(self) -> bool:
        """True when detection mapped every operation (small and mid-size structures)."""
        return len(self._raw.verified) == len(self.operation_matrices)

    @property
    def verified_operations(self) -> np.ndarray:
        """``int64 (k,)``: the operations detection verified (all, or E and the generators)."""
        return self._raw.verified

    @property
    def generator_permutations(self) -> np.ndarray:
        """Permutations of the verified operations (all, or the generators for huge inputs)."""
        return self._raw.permutations

    @property
    def symmetry_number(self) -> int:
        """Rotational symmetry number σ: the number of proper operations.

        1 for C∞v, 2 for D∞h, 1 for a single atom (the table's).
        """
        return self.table.symmetry_number

    @property
    def chiral(self) -> bool:
        """True when the group has no improper operation (no σ, i or S_n)."""
        return bool(np.all(self.proper))

    @cached_property
    def unshifted_atoms(self) -> np.ndarray:
        """Atoms each operation leaves unshifted (``float64 (h,)``), counted once in the core."""
        s = self.structure
        counts = _core.count_unshifted(
            s.positions, tuple(self.center), self.operation_matrices, self.tol
        )
        return counts.astype(np.float64)

    @cached_property
    def masses(self) -> np.ndarray:
        """Standard atomic masses (u)."""
        return element_data(self.structure.numbers)[0]

    def bonds(self, scale: float = 1.2) -> np.ndarray:
        """Bonded atom pairs ``(n_bonds, 2)`` from covalent radii: d ≤ scale·(r_i + r_j)."""
        return find_bonds(self.structure.numbers, self.structure.positions, scale)

    # ---------------------------------------------------------------- representations
    def representation(self, basis: Any = "cartesian") -> Representation:
        """The reducible representation on a basis, with its reduction.

        Parameters
        ----------
        basis : str or Basis
            ``"atoms"``, ``"cartesian"``, ``"pi"``, ``"bonds"``, ``"bond_vectors"``,
            ``"orbitals:Fe=spd,H=s"`` or a :class:`Basis`.

        Raises
        ------
        BasisError
            For an unknown basis or one that does not fit the structure.
        SymmetryError
            When characters disagree within a class.
        ReductionError
            When the characters do not reduce to integer multiplicities.
        """
        b = parse_basis(basis)
        cache = self.__dict__.setdefault("_rep_cache", {})
        if b not in cache:
            resolved = self.resolve_basis(b)
            cache[b] = build_representation(self, resolved)
        return cache[b]

    def resolve_basis(self, basis: Any = "cartesian") -> ResolvedBasis:
        """A basis spec resolved on this structure once (cached by the hashable Basis); both
        :meth:`representation` and :meth:`symmetry_adapted_basis` read the resolved form.

        Raises
        ------
        BasisError
            For an unknown basis or one that does not fit the structure.
        """
        b = parse_basis(basis)
        cache = self.__dict__.setdefault("_resolved_bases", {})
        if b not in cache:
            cache[b] = b.resolve(self.structure, center=self.center, tol=self.tol)
        return cache[b]

    def vibrations(self):
        """Γ_vib with IR/Raman activity (see :mod:`gammatrace.spectroscopy`)."""
        from .spectroscopy import vibrations

        return vibrations(self)

    # ---------------------------------------------------------------- change of basis
    def symmetry_data(self):
        """The structure with all its operations and permutations, for
        :mod:`gammatrace.basis_change`, :mod:`gammatrace.modes` and :mod:`gammatrace.symmetrize`.

        Raises
        ------
        SymmetryError
            For a single atom: its group K_h is sampled by rotations about one axis, whose
            projections do not separate the irreps of O(3).
        """
        from .basis_change import SymmetryData

        if self.table.is_spherical:
            raise SymmetryError(
                "a single atom (K_h) has no finite group for a change of basis: its group is "
                "sampled by rotations about one axis, which do not separate the irreps of O(3)"
            )
        s = self.structure
        return SymmetryData(
            s.positions,
            s.numbers,
            self.center,
            self.frame,
            self.operation_matrices,
            self.permutations,
            self.table,
            self.op_class,
            self.canonical_index,
        )

    def symmetry_adapted_basis(self, basis: Any = "cartesian"):
        """The orthogonal sparse change of basis X (rows = SALCs) for ``basis``; see
        :func:`gammatrace.basis_change.symmetry_adapted_basis`.

        ``basis`` is a spec as for :meth:`representation` (``"cartesian"``, ``"atoms"``,
        ``"bonds"``, ``"bond_vectors"``, ``"orbitals:Fe=spd,H=s"``, a :class:`Basis`).

        Raises
        ------
        BasisError
            For a basis the matrix code does not serve (π, user vectors, l > 3).
        """
        from .basis_change import symmetry_adapted_basis  # scipy loads on first use only

        b = parse_basis(basis)
        check_matrix_kind(b)  # before resolving: the unsupported kind is the first thing to say
        return symmetry_adapted_basis(self.symmetry_data(), self.resolve_basis(b))

    def label_modes(self, hessian: Any = None, **kwargs: Any):
        """Label normal modes from a Cartesian Hessian or mode vectors; see
        :func:`gammatrace.modes.label_modes` (masses default to standard atomic masses)."""
        from .modes import label_modes

        kwargs.setdefault("masses", self.masses)
        return label_modes(self.symmetry_data(), hessian, **kwargs)

    def symmetrize(self):
        """Project the structure onto its exact point group; see
        :func:`gammatrace.symmetrize.symmetrize`."""
        from .symmetrize import symmetrize

        return symmetrize(self.symmetry_data(), tolerance=self.tol)

    # ---------------------------------------------------------------- orbits
    @cached_property
    def orbits(self) -> list[Orbit]:
        """Sets of symmetry-equivalent atoms, in order of their first atom, with site groups.

        Costs one pass over the verified permutations (the generators' for huge structures);
        the site group of each orbit comes from where the group's operations send one of its
        atoms, composed through the multiplication table (no further pass over the atoms).
        """

        perms = self.generator_permutations
        ids = np.asarray(_core.orbits(self.n_atoms, np.ascontiguousarray(perms)), dtype=np.int64)
        order = np.argsort(ids, kind="stable")
        counts = np.bincount(ids)
        splits = np.split(order, np.cumsum(counts)[:-1])
        h = self.order
        names = self._site_groups(np.array([a[0] for a in splits], dtype=np.int64))
        return [
            Orbit(atoms.tolist(), len(atoms), h // len(atoms) if h else None, name)
            for atoms, name in zip(splits, names)
        ]

    def _site_groups(self, representatives: np.ndarray) -> list:
        """Schoenflies names of the stabilisers of the given atoms.

        A stabiliser that is the whole group takes the group's name (C∞v, D∞h and K_h
        included, never that of their finite stand-in); half of D∞h's stand-in, the site of
        an atom off the centre of a linear molecule, is C∞v.
        """
        from .tables.subgroups import identify_group

        images = atom_images(
            self, representatives, self.canonical_index
        )  # (h, k), rows = canonical operations
        ops = self.table.operations
        cache: dict = {}
        out = []
        for j, atom in enumerate(representatives):
            stab = np.flatnonzero(images[:, j] == atom)
            key = stab.tobytes()
            if key not in cache:
                if len(stab) == len(ops):
                    cache[key] = self.point_group
                elif self.is_linear and 2 * len(stab) == len(ops):
                    cache[key] = "C∞v"
                else:
                    cache[key] = identify_group(ops[stab])
            out.append(cache[key])
        return out

    # ---------------------------------------------------------------- output
    def to_dict(self, bases: Sequence[Any] = DEFAULT_BASES, orbits: bool = False) -> dict:
        """The JSON object of shared/INTERFACE.md for this structure.

        Parameters
        ----------
        bases
            Which representations to include (``"atoms"`` and ``"cartesian"`` by default).
        orbits : bool
            Include the symmetry-distinct atoms (``orbits``).
        """
        out: dict[str, Any] = {
            "source": self.structure.source,
            "index": self.structure.index,
            "n_atoms": self.n_atoms,
            "point_group": self.point_group,
            "order": self.order,
            "tolerance": self.tol,
            "max_deviation": float(self.max_deviation),
            "classes": [
                {"label": c.label, "size": c.size, "proper": c.proper, "angle": float(c.angle)}
                for c in self.classes
            ],
            "representations": {},
        }
        for spec in bases:
            b = parse_basis(spec)
            out["representations"][b.name] = self.representation(b).to_dict()
        out["vibrations"] = self.vibrations().to_dict()
        out["symmetry_number"] = self.symmetry_number
        out["chiral"] = self.chiral
        if orbits:
            out["orbits"] = [o.to_dict() for o in self.orbits]
        return out

    def report(self, bases: Sequence[Any] = DEFAULT_BASES, worked: bool = True) -> str:
        """A readable text report: group, classes, representations, vibrations."""
        from .spectroscopy import format_irreps

        s = self.structure
        lines = [
            f"{s.source} [frame {s.index}]: {self.n_atoms} atoms",
            f"  point group   {self.point_group}"
            + (f"  (order {self.order})" if self.order else "")
            + f"   tolerance {self.tol} Å, largest deviation {self.max_deviation:.2e} Å",
            f"  symmetry number σ = {self.symmetry_number}, "
            + ("chiral" if self.chiral else "not chiral"),
        ]
        for spec in bases:
            rep = self.representation(spec)
            lines.append(f"  Γ({rep.basis.name}) = {format_irreps(rep.irreps)}")
            if worked:
                lines.extend("      " + row for row in rep.worked_table().splitlines())
        vib = self.vibrations()
        lines.append(f"  Γ_vib = {format_irreps(vib.irreps)}   ({vib.modes} modes)")
        lines.append(
            f"  IR active: {format_irreps(vib.ir_active)}   "
            f"Raman active: {format_irreps(vib.raman_active)}"
        )
        lines.append(
            f"  distinct fundamentals {vib.n_fundamentals}: {vib.n_ir} IR, {vib.n_raman} Raman"
            + ("; mutual exclusion (centrosymmetric)" if vib.mutual_exclusion else "")
        )
        return "\n".join(lines)

    def __repr__(self) -> str:
        return (
            f"<Analysis {self.structure.source}[{self.structure.index}]: {self.point_group}, "
            f"{self.n_atoms} atoms, max deviation {self.max_deviation:.1e} Å>"
        )


def analyze(
    obj: Any, positions: Any = None, *, tol: float = DEFAULT_TOL, frame: int | None = None
) -> Analysis:
    """Find the point group of one structure and make its symmetry available.

    Parameters
    ----------
    obj
        Element symbols or atomic numbers (with ``positions``), an XYZ path, a
        :class:`~gammatrace.io.Structure`, an ``ase.Atoms`` or an RDKit ``Mol``.
    positions : array_like, optional
        ``(n_atoms, 3)`` in ångström; a C-contiguous float64 array is not copied.
    tol : float
        Distance tolerance in ångström (default 0.01): an operation holds when every atom has
        an image of its element within ``tol``.
    frame : int, optional
        Frame of a multi-frame file.

    Returns
    -------
    Analysis

    Raises
    ------
    StructureError, ReadError, InputError
        Bad input (empty, NaN, unknown element, overlapping atoms, malformed file).
    ToleranceError, SymmetryError
        When the operations found do not form a consistent group.

    Examples
    --------
    >>> import gammatrace as gt
    >>> water = gt.analyze(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692],
    ...                                      [0, -0.7572, -0.4692]])
    >>> water.point_group
    'C2v'
    >>> water.vibrations().irreps
    {'A1': 2, 'B2': 1}
    """
    t = _check_tol(tol)
    s = as_structure(obj, positions, frame=frame)
    return analyze_structure(s, t)


def analyze_structure(s: Structure, tol: float) -> Analysis:
    """Analyse a :class:`Structure` (no input coercion)."""
    raw = _core.find_point_group(s.positions, s.numbers, tol, LINEAR_SUBGROUP_N, VERIFY_ALL_LIMIT)
    return Analysis(s, raw, tol)


def analyze_many(
    inputs: Iterable[Any], *, tol: float = DEFAULT_TOL, catch: bool = True
) -> Iterator[Analysis | FrameError]:
    """Analyse every structure of every input (paths, Structures, ase.Atoms...), in order.

    A structure that fails becomes a :class:`~gammatrace.io.FrameError` in its place (with
    ``catch=True``); the others go on.
    """
    t = _check_tol(tol)
    for item in inputs:
        if isinstance(item, (str, bytes)) or hasattr(item, "__fspath__"):
            try:
                frames = read_structures(item)
            except GammatraceError as exc:
                if not catch:
                    raise
                yield FrameError(str(item), 0, type(exc).__name__, str(exc))
                continue
        else:
            frames = [item]
        if not frames:
            src = str(item)
            message = f"{src}: no structure in the file (it is empty)"
            if not catch:
                raise InputError(message)
            yield FrameError(src, 0, "ReadError", message)
            continue
        for fr in frames:
            if isinstance(fr, FrameError):
                if not catch:
                    raise InputError(fr.message)
                yield fr
                continue
            try:
                s = as_structure(fr)
                yield analyze_structure(s, t)
            except GammatraceError as exc:
                if not catch:
                    raise
                src = getattr(fr, "source", "<input>")
                idx = getattr(fr, "index", 0)
                yield FrameError(src, idx, type(exc).__name__, str(exc))
