"""One structure, analysed: point group, operations, classes, representations, vibrations.

:func:`analyze` is the front door. It calls the Rust core once to find the point group; the
core reports the operations in canonical order with their classes (one source of truth for
class names, see DEVELOPERS.md). :class:`Analysis` is a thin facade over the one value object
:class:`~gammatrace.group.SymmetryData` (structure, operations, permutations, table, classes):
representations, vibrations, orbits, change of basis, modes and symmetrisation all read that
object and are computed on first use.
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
from .bases.counting import Representation, build_representation
from .errors import GammatraceError, InputError
from .group import (
    DEFAULT_TOL,
    VERIFY_ALL_LIMIT,
    Orbit,
    SymmetryData,
    environments,
    improper_within,
    orbits,
)
from .group.chirality import SEARCH_FACTOR
from .group.measure import NearGroup, NearSymmetry
from .io import (
    FrameError,
    Structure,
    apply_cell,
    as_structure,
    check_cell_choice,
    read_structures,
)
from .render import write_html, write_latex, write_markdown
from .render.results import analysis_blocks
from .spectroscopy import Vibrations, binary_bands, fermi_resonances, format_irreps, vibrations
from .summary import summary_rows
from .tables import LINEAR_SUBGROUP_N
from .text import format_length, plural

__all__ = [
    "DEFAULT_TOL",
    "Analysis",
    "Operation",
    "Orbit",
    "analyze",
    "analyze_many",
]

#: Smallest and largest tolerance accepted, Å.
MIN_TOL, MAX_TOL = 1e-6, 10.0
DEFAULT_BASES = ("atoms", "cartesian")
#: The bases whose JSON :func:`gammatrace.summary.summary_rows` builds.
_SUMMARY_BASES = (parse_basis("atoms"), parse_basis("cartesian"))


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


def _from_symmetry(name: str, doc: str) -> property:
    """A read-only attribute of the facade that is the value object's own."""

    def get(self: Analysis) -> Any:
        return getattr(self.symmetry, name)

    return property(get, doc=doc)


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

    A facade over :attr:`symmetry` (a :class:`~gammatrace.group.SymmetryData`); everything
    beyond the point group is computed on first use and cached.
    """

    def __init__(self, structure: Structure, raw: _core.Detection, tol: float):
        #: The one value object: structure, operations, permutations, table and classes.
        self.symmetry = SymmetryData.from_detection(structure, raw, tol)

    structure = _from_symmetry("structure", "The :class:`~gammatrace.io.Structure`.")
    tol = _from_symmetry("tol", "The distance tolerance, Å.")
    point_group = _from_symmetry("point_group", "Schoenflies name (``C2v``, ``D∞h``, ``K_h``).")
    center = _from_symmetry("center", "``float64 (3,)``: the fixed point of the operations.")
    frame = _from_symmetry("frame", "``float64 (3, 3)``: rows = standard x, y, z axes.")
    operation_matrices = _from_symmetry("operations", "``float64 (h, 3, 3)``, input frame.")
    proper = _from_symmetry("proper", "``bool (h,)``: rotation (True) or σh·C(angle).")
    angle = _from_symmetry("angle", "``float64 (h,)``: θ in degrees, [0, 180].")
    axis = _from_symmetry("axis", "``float64 (h, 3)``: unit axis (plane normal).")
    max_deviation = _from_symmetry("max_deviation", "Largest atom displacement, Å.")
    canonical_index = _from_symmetry(
        "canonical_index", "``int64 (h,)``: which canonical operation each one is."
    )
    table = _from_symmetry("table", "The :class:`~gammatrace.tables.CharacterTable`.")
    op_class = _from_symmetry("op_class", "``int64 (h,)``: class index of each operation.")
    classes = _from_symmetry("classes", "The table's classes, in print order.")
    n_atoms = _from_symmetry("n_atoms", "Number of atoms.")
    is_linear = _from_symmetry("is_linear", "True for C∞v and D∞h.")
    order = _from_symmetry(
        "group_order", "Group order; None for the infinite groups (linear, one atom)."
    )
    permutations = _from_symmetry(
        "permutations", "``int64 (h, n_atoms)``: atom i goes to ``permutations[k, i]``."
    )
    all_verified = _from_symmetry("all_verified", "True when detection mapped every operation.")
    verified_operations = _from_symmetry(
        "verified_operations", "``int64 (k,)``: operations detection verified."
    )
    generator_permutations = _from_symmetry(
        "generator_permutations", "Permutations of the verified operations."
    )
    symmetry_number = _from_symmetry("symmetry_number", "Rotational symmetry number σ.")
    chiral = _from_symmetry("chiral", "True when the group has no improper operation.")
    unshifted_atoms = _from_symmetry(
        "unshifted_atoms", "``float64 (h,)``: atoms each operation leaves unshifted."
    )

    @cached_property
    def operations(self) -> list[Operation]:
        """All operations (for the infinite groups: those of the finite sampling)."""
        sym = self.symmetry
        labels = [c.label for c in sym.classes]
        return [
            Operation(
                k,
                sym.operations[k],
                bool(sym.proper[k]),
                float(sym.angle[k]),
                sym.axis[k],
                labels[int(sym.op_class[k])],
            )
            for k in range(len(sym.operations))
        ]

    @cached_property
    def improper_within(self) -> float | None:
        """The smallest tolerance (Å) at which a mirror, the inversion or an S_n holds; at most
        :attr:`tol` when the structure is not chiral, ``None`` when none holds within 10 ×
        :attr:`tol` (see :func:`gammatrace.group.improper_within`)."""
        return improper_within(self.symmetry)

    # ---------------------------------------------------------------- near symmetry
    @cached_property
    def near(self) -> NearSymmetry:
        """Detection at looser tolerances, cached (:mod:`gammatrace.group.measure`)."""
        return NearSymmetry(self.symmetry)

    def near_symmetry(self, max_factor: float = SEARCH_FACTOR) -> list[NearGroup]:
        """The groups of larger order found up to ``max_factor`` × :attr:`tol`, each with its
        continuous symmetry measure (0–100; assignment as detected, orientation optimised:
        an upper bound of the optimal measure). See :mod:`gammatrace.group.measure`."""
        return self.near.higher_groups(max_factor)

    def symmetry_measure(self, group: str) -> NearGroup:
        """The continuous symmetry measure against a named group (``.measure``; None when the
        group is not found up to 0.5 Å), where it was found (``.tolerance``, ``.found_at``)."""
        return self.near.measure(group)

    @cached_property
    def chirality_measure(self) -> NearGroup | None:
        """The continuous chirality measure: the smallest measure against Cs, Ci, S4, … at
        the first tolerance where an improper operation holds (None when none does up to
        0.5 Å); ``.group`` names the improper group that gives it."""
        return self.near.chirality()

    @property
    def masses(self) -> np.ndarray:
        """Masses in u: those of the input (isotopes: ``D``/``T``, an extended-XYZ ``masses``
        column, ``ase.Atoms`` masses, RDKit isotopes), else the standard atomic weights."""
        return self.structure.atom_masses

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
            cache[b] = build_representation(self.symmetry, resolved)
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

    def vibrations(self) -> Vibrations:
        """Γ_vib with IR/Raman activity (see :mod:`gammatrace.spectroscopy`)."""
        if "_vibrations" not in self.__dict__:
            gamma_3n = self.representation("cartesian").characters
            self.__dict__["_vibrations"] = vibrations(self.symmetry, gamma_3n)
        return self.__dict__["_vibrations"]

    def combination_bands(self) -> list:
        """First overtones and binary combinations of the fundamentals with their IR/Raman
        activity: a list of :class:`~gammatrace.spectroscopy.CombinationBand` (see
        :func:`gammatrace.spectroscopy.binary_bands`)."""
        return binary_bands(self.table, self.vibrations().irreps)

    def fermi_resonances(self, frequencies: Any, window: float) -> list:
        """Fundamentals within ``window`` cm⁻¹ of an overtone 2ν_a or combination ν_a + ν_b
        whose species contains their irrep: candidates for Fermi resonance.

        ``frequencies``: ``{irrep: wavenumber or [wavenumbers]}``, ``(irrep, wavenumber)``
        pairs or the result of :meth:`label_modes` with frequencies, checked against Γ_vib.
        Band positions are harmonic sums with no anharmonic correction. Returns
        :class:`~gammatrace.spectroscopy.FermiCandidate` records (see
        :func:`gammatrace.spectroscopy.fermi_resonances`).
        """
        return fermi_resonances(self.table, frequencies, window, self.vibrations().irreps)

    # ---------------------------------------------------------------- change of basis
    def symmetry_data(self) -> SymmetryData:
        """The one value object (:attr:`symmetry`), for :mod:`gammatrace.basis_change`,
        :mod:`gammatrace.modes` and :mod:`gammatrace.symmetrize`."""
        return self.symmetry

    def symmetry_adapted_basis(self, basis: Any = "cartesian"):
        """The orthogonal sparse change of basis X (rows = SALCs) for ``basis``; see
        :func:`gammatrace.basis_change.symmetry_adapted_basis`.

        ``basis`` is a spec as for :meth:`representation` (``"cartesian"``, ``"atoms"``,
        ``"bonds"``, ``"bond_vectors"``, ``"orbitals:Fe=spd,H=s"``, a :class:`Basis`).

        Raises
        ------
        BasisError
            For a basis the matrix code does not serve (user vectors, l > 3).
        """
        from .bases.matrices import symmetry_adapted_basis  # scipy loads on first use only

        b = parse_basis(basis)
        check_matrix_kind(b)  # before resolving: the unsupported kind is the first thing to say
        return symmetry_adapted_basis(self.symmetry, self.resolve_basis(b))

    def label_modes(self, hessian: Any = None, **kwargs: Any):
        """Label normal modes from a Cartesian Hessian or mode vectors; see
        :func:`gammatrace.modes.label_modes`; masses default to :attr:`masses` (the
        structure's own, isotopes included, else standard atomic masses)."""
        from .modes import label_modes

        kwargs.setdefault("masses", self.masses)
        return label_modes(self.symmetry, hessian, **kwargs)

    def symmetrize(self):
        """Project the structure onto its exact point group; see
        :func:`gammatrace.symmetrize.symmetrize`."""
        from .symmetrize import symmetrize

        return symmetrize(self.symmetry, tolerance=self.tol)

    # ---------------------------------------------------------------- orbits
    @cached_property
    def orbits(self) -> list[Orbit]:
        """Sets of symmetry-equivalent atoms with their site groups (:func:`group.orbits`)."""
        return orbits(self.symmetry)

    @cached_property
    def environment_sets(self) -> dict[str, list]:
        """Species symbol -> the sets of symmetry-equivalent atoms (zero-based indices), e.g.
        naphthalene's ``{"C": [[0, 3, 4, 7], [1, 2, 5, 6], [8, 9]], "H": [...]}``. Counts
        symmetry-equivalent atoms of this static structure; conformational averaging in
        solution can merge more (a methyl group's three H, the two H of a flipping CH2)."""
        return environments(self.symmetry)

    @property
    def environments(self) -> dict[str, int]:
        """Species symbol -> number of symmetry-distinct atoms of it (isotopes apart: ``D``),
        the number of environments the symmetry implies (e.g. NMR signals of the static
        structure; see :attr:`environment_sets`)."""
        return {sym: len(sets) for sym, sets in self.environment_sets.items()}

    # ---------------------------------------------------------------- output
    def to_dict(
        self,
        bases: Sequence[Any] = DEFAULT_BASES,
        orbits: bool = False,
        near: bool = False,
        measure: Sequence[str] = (),
    ) -> dict:
        """The JSON object of shared/INTERFACE.md for this structure.

        Parameters
        ----------
        bases
            Which representations to include (``"atoms"`` and ``"cartesian"`` by default).
        orbits : bool
            Include the symmetry-distinct atoms (``orbits``).
        near : bool
            Include ``near_symmetry`` (the higher groups up to 10 × :attr:`tol`) and
            ``chirality_measure``.
        measure
            Group names whose measure ``near_symmetry`` also lists (once per group).
        """
        sym = self.symmetry
        s = sym.structure
        n_atoms = sym.n_atoms
        # the group-dependent keys as the many-frame path builds them (gammatrace.summary);
        # None when something does not reduce: the objects below then raise the error
        (row,) = summary_rows(sym.table, sym.unshifted_atoms[None], [n_atoms])
        out: dict[str, Any] = {
            "source": s.source,
            "index": s.index,
            "n_atoms": n_atoms,
            "point_group": sym.point_group,
            "order": sym.group_order,
            "tolerance": sym.tol,
            "max_deviation": float(sym.max_deviation),
            "classes": sym.table.class_dicts() if row is None else row["classes"],
            "representations": {},
        }
        reps = out["representations"]
        for spec in bases:
            b = parse_basis(spec)
            if row is not None and b in _SUMMARY_BASES:
                reps[b.name] = row["representations"][b.name]
            else:
                reps[b.name] = self.representation(b).to_dict()
        out["vibrations"] = self.vibrations().to_dict() if row is None else row["vibrations"]
        out["symmetry_number"] = sym.symmetry_number
        out["chiral"] = sym.chiral
        iw = self.improper_within
        out["improper_within"] = None if iw is None else float(iw)
        out["environments"] = self.environments
        if orbits:
            out["orbits"] = [o.to_dict() for o in self.orbits]
        if near or measure:
            out["near_symmetry"] = [r.to_dict() for r in self.near.records(near, measure)]
        if near:
            cm = self.chirality_measure
            out["chirality_measure"] = None if cm is None else cm.to_dict()
        return out

    def report(self, bases: Sequence[Any] = DEFAULT_BASES, worked: bool = True) -> str:
        """A readable text report: group, classes, representations, vibrations."""
        s = self.structure
        lines = [
            f"{s.source} [frame {s.index}]: {plural(self.n_atoms, 'atom')}",
            f"  point group   {self.point_group}"
            + (f"  (order {self.order})" if self.order else "")
            + f"   tolerance {self.tol} Å, largest deviation {format_length(self.max_deviation)} Å",
            f"  symmetry number σ = {self.symmetry_number}, {self._chirality_text()}",
        ]
        for spec in bases:
            rep = self.representation(spec)
            lines.append(f"  Γ({rep.basis.name}) = {format_irreps(rep.irreps)}")
            if worked:
                lines.extend("      " + row for row in rep.worked_table().splitlines())
        vib = self.vibrations()
        lines.append(f"  Γ_vib = {format_irreps(vib.irreps)}   ({plural(vib.modes, 'mode')})")
        lines.append(
            f"  IR active: {format_irreps(vib.ir_active)}   "
            f"Raman active: {format_irreps(vib.raman_active)}   "
            f"polarised: {format_irreps(vib.polarised)}"
        )
        lines.append(
            f"  distinct fundamentals {vib.n_fundamentals}: {vib.n_ir} IR, {vib.n_raman} Raman"
            + ("; mutual exclusion (centrosymmetric)" if vib.mutual_exclusion and vib.modes else "")
        )
        lines.append("  " + self._environments_text())
        return "\n".join(lines)

    def to_markdown(
        self, bases: Sequence[Any] = DEFAULT_BASES, worked: bool = True, extra: Sequence[str] = ()
    ) -> str:
        """The report as Markdown: the group and its facts, the Γ summary (characters per
        class and reduction of each basis and of Γ_vib), the activity of the fundamentals,
        the worked table of each basis (``worked``: unshifted atoms, contribution of each,
        character, per class), the symmetry-distinct atoms, then the ``extra`` lines."""
        return write_markdown(analysis_blocks(self, bases, worked, extra))

    def to_latex(
        self,
        bases: Sequence[Any] = DEFAULT_BASES,
        worked: bool = True,
        extra: Sequence[str] = (),
        document: bool = False,
    ) -> str:
        """The report of :meth:`to_markdown` as LaTeX: a fragment needing no package, or
        with ``document=True`` a whole ``article``."""
        return write_latex(analysis_blocks(self, bases, worked, extra), document=document)

    def _repr_html_(self) -> str:
        return write_html(analysis_blocks(self, DEFAULT_BASES, worked=False))

    def _repr_markdown_(self) -> str:
        return self.to_markdown(worked=False)

    def _environments_text(self, max_listed: int = 60) -> str:
        """``environments: C 3 (1,4,5,8 | 2,3,6,7 | 9,10), H 2 (…)`` (atoms numbered from 1;
        the atoms are listed for structures of at most ``max_listed`` atoms)."""
        parts = []
        for symbol, sets in self.environment_sets.items():
            text = f"{symbol} {len(sets)}"
            if self.n_atoms <= max_listed:
                text += " (" + " | ".join(",".join(str(a + 1) for a in s) for s in sets) + ")"
            parts.append(text)
        note = " (atoms numbered from 1)" if self.n_atoms <= max_listed else ""
        return "environments: " + ", ".join(parts) + note

    def _chirality_text(self) -> str:
        """``not chiral``, or ``chiral at 0.01 Å; achiral within 0.03 Å`` (the margin)."""
        if not self.chiral:
            return "not chiral"
        iw = self.improper_within
        if iw is None:
            return (
                f"chiral at {self.tol:g} Å; no mirror, inversion or S_n within {10 * self.tol:g} Å"
            )
        return f"chiral at {self.tol:g} Å; achiral within {iw:.2g} Å"

    def __repr__(self) -> str:
        return (
            f"<Analysis {self.structure.source}[{self.structure.index}]: {self.point_group}, "
            f"{plural(self.n_atoms, 'atom')}, max deviation {format_length(self.max_deviation)} Å>"
        )


def analyze(
    obj: Any,
    positions: Any = None,
    *,
    tol: float = DEFAULT_TOL,
    frame: int | None = None,
    cell: str | None = None,
) -> Analysis:
    """Find the point group of one structure and make its symmetry available.

    Parameters
    ----------
    obj
        Element symbols (``D``, ``T`` for hydrogen-2, -3) or atomic numbers (with
        ``positions``), an XYZ path, a :class:`~gammatrace.io.Structure`, an ``ase.Atoms``
        or an RDKit ``Mol``. Atoms of one element with different masses never map onto each
        other.
    positions : array_like, optional
        ``(n_atoms, 3)`` in ångström; a C-contiguous float64 array is not copied.
    tol : float
        Distance tolerance in ångström (default 0.01): an operation holds when every atom has
        an image of its element within ``tol``.
    frame : int, optional
        Frame of a multi-frame file.
    cell : {"refuse", "ignore", "unwrap"}, optional
        What to do with a periodic input (an extended-XYZ frame with ``pbc``/``Lattice``, an
        ``ase.Atoms`` with ``pbc``): refuse it (the default), analyse the coordinates as a
        finite cluster as given, or make its molecules whole first
        (:mod:`gammatrace.io.cell`). Inputs without a cell are not affected.

    Returns
    -------
    Analysis

    Raises
    ------
    StructureError, ReadError, InputError
        Bad input (empty, NaN, unknown element, overlapping atoms, malformed file).
    CellError
        A periodic input with ``cell="refuse"``, or one that cannot be unwrapped.
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
    choice = check_cell_choice(cell)
    s = apply_cell(as_structure(obj, positions, frame=frame), choice)
    return analyze_structure(s, t)


def analyze_structure(s: Structure, tol: float) -> Analysis:
    """Analyse a :class:`Structure` (no input coercion; a periodic cell is not looked at)."""
    raw = _core.find_point_group(
        s.positions, s.numbers, tol, LINEAR_SUBGROUP_N, VERIFY_ALL_LIMIT, s.masses
    )
    return Analysis(s, raw, tol)


def analyze_many(
    inputs: Iterable[Any],
    *,
    tol: float = DEFAULT_TOL,
    catch: bool = True,
    cell: str | None = None,
) -> Iterator[Analysis | FrameError]:
    """Analyse every structure of every input (paths, Structures, ase.Atoms...), in order.

    A structure that fails becomes a :class:`~gammatrace.io.FrameError` in its place (with
    ``catch=True``); the others go on. ``cell`` as for :func:`analyze`: a periodic frame
    refused is such a failure.
    """
    t = _check_tol(tol)
    choice = check_cell_choice(cell)
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
                s = apply_cell(as_structure(fr), choice)
                yield analyze_structure(s, t)
            except GammatraceError as exc:
                if not catch:
                    raise
                src = getattr(fr, "source", "<input>")
                idx = getattr(fr, "index", 0)
                yield FrameError(src, idx, type(exc).__name__, str(exc))
