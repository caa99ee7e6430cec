"""Site symmetry: symmetry-distinct atoms, their site groups, and the site-symmetry route.

* :func:`site_analysis` — the symmetry-distinct atoms (orbits) with the site group of each,
  named and oriented: which operations of the molecular group form the stabiliser, and the
  site group's standard frame relative to the molecule. Everything comes from the atom
  permutations already found by the detector (all of them, or only the generators' for huge
  inputs, composed through the group's multiplication table): no pass over the atoms per orbit.
* :func:`induced_representation` — Γ_3N (or Γ_atoms) by the site-symmetry (correlation)
  route: the basis at one site of each orbit is reduced in the site group and induced up to
  the molecular group with the Frobenius formula
  χ_ind(g) = Σ_j χ̇_site(t_j⁻¹ g t_j) over coset representatives t_j of G/H (χ̇ = 0 outside H).
  :func:`check_induced` compares it with the counted characters and raises on disagreement.

Every group element is handled by its index among the canonical operations of the molecular
character table (``CharacterTable.operations``, standard frame), through
:attr:`~gammatrace.group.SymmetryData.canonical_index`, the same match that gives the classes.
The public names are re-exported by :mod:`gammatrace.descent`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .. import _core
from ..bases import parse_basis
from ..bases.counting import build_representation, json_number
from ..errors import BasisError, SymmetryError
from ..group.stabilisers import atom_images
from ..group.symmetry import SymmetryData, as_symmetry
from ..spectroscopy import external_characters, format_irreps, vibrations
from ..tables import get_table
from ..tables._ops import multiplication_table
from ..tables.subgroups import _describe, _frames, identify_group
from ..text import plural

__all__ = [
    "InducedRepresentation",
    "OrbitInduction",
    "Site",
    "SiteAnalysis",
    "check_induced",
    "induced_representation",
    "site_analysis",
]


# --------------------------------------------------------------------------------------------
# Site analysis
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class Site:
    """One set of symmetry-equivalent atoms (an orbit) and its site symmetry.

    Attributes
    ----------
    atoms : numpy.ndarray of int
        Zero-based atom indices, ascending.
    representative : int
        The first atom of the orbit; the stabiliser and frame refer to it.
    element : str
        Element symbol; an isotope whose mass differs from the standard weight by its own
        symbol (``D``, ``T``, ``13C``).
    distance : float
        Distance of the representative from the centre of mass (Å).
    site_group : str
        Schoenflies name of the stabiliser (``C∞v``/``D∞h`` on the axis of a linear molecule).
    site_table : str
        The character table used for the site group (C∞v / D∞h on the axis of a linear
        molecule, computed with the operations of its finite stand-in).
    stabiliser : numpy.ndarray of int
        Indices into :attr:`SymmetryData.operations` of the operations fixing the representative.
    frame : numpy.ndarray, shape (3, 3)
        Rows are the site group's standard x, y, z axes in the input coordinates:
        ``frame @ R @ frame.T`` is a stabiliser operation R in the site group's own frame.
    description : str
        Which axes and planes of the molecular group the site group keeps, and which
        molecular classes its classes come from.
    site_classes : tuple of str
        The site-table class of each stabiliser operation (same order as ``stabiliser``).
    """

    atoms: np.ndarray
    representative: int
    element: str
    distance: float
    site_group: str
    site_table: str
    stabiliser: np.ndarray
    frame: np.ndarray
    description: str
    site_classes: tuple
    _canonical: np.ndarray = field(repr=False)

    @property
    def size(self) -> int:
        """Number of atoms in the orbit."""
        return len(self.atoms)

    @property
    def site_order(self) -> int:
        """Order of the site group (for linear sites, of its finite stand-in)."""
        return len(self.stabiliser)

    def to_dict(self) -> dict:
        """JSON form: size, site group, atoms, representative, frame and description."""
        return {
            "size": self.size,
            "site_group": self.site_group,
            "atoms": self.atoms.tolist(),
            "representative": self.representative,
            "element": self.element,
            "distance": round(self.distance, 6),
            "stabiliser": self.stabiliser.tolist(),
            "frame": np.round(self.frame, 10).tolist(),
            "description": self.description,
        }


@dataclass(frozen=True, eq=False)
class SiteAnalysis:
    """The symmetry-distinct sites of a structure. Build it with :func:`site_analysis`.

    Attributes
    ----------
    point_group : str
    order : int or None
    n_atoms : int
    sites : list of Site
        In order of their first atom.
    """

    point_group: str
    order: int | None
    n_atoms: int
    sites: list

    @property
    def unique_sites(self) -> np.ndarray:
        """One representative atom per orbit (the symmetry-unique atoms)."""
        return np.array([s.representative for s in self.sites], dtype=np.int64)

    def to_dict(self) -> dict:
        """JSON form with one entry per site."""
        return {
            "point_group": self.point_group,
            "order": self.order,
            "n_atoms": self.n_atoms,
            "sites": [s.to_dict() for s in self.sites],
        }

    def to_text(self) -> str:
        """A readable table: one line per site, then each site group's orientation."""
        lines = [
            f"{self.point_group}: {plural(self.n_atoms, 'atom')} in "
            f"{plural(len(self.sites), 'orbit')}"
        ]
        rows = [("orbit", "size", "element", "r/Å", "site group", "first atom")]
        for k, s in enumerate(self.sites):
            rows.append(
                (
                    str(k),
                    str(s.size),
                    s.element,
                    f"{s.distance:.4f}",
                    s.site_group,
                    str(s.representative),
                )
            )
        widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
        for r in rows:
            lines.append("  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
        seen = set()
        for s in self.sites:
            if s.description and s.description not in seen:
                seen.add(s.description)
                lines.append(f"  {s.description}")
        return "\n".join(lines)


def _display_name(sym: SymmetryData, name: str, h_site: int) -> str:
    """Site-group name as reported: C∞v/D∞h for the axis sites of a linear molecule."""
    if sym.is_linear:
        h = len(sym.operations)
        if h_site == h:
            return sym.point_group
        if h_site == h // 2 and name.endswith("v"):
            return "C∞v"
    return name


def _site_frame(table, idx: np.ndarray):
    """Name, site table, frame (in the molecule's standard frame) and classes of a stabiliser."""
    ops = table.operations[idx]
    name = identify_group(ops)
    site_tab = get_table(name)
    frames = _frames(name, ops, site_tab)
    if not frames:
        raise SymmetryError(f"no standard frame found for the site group {name} in {table.name}")
    f = frames[0]
    classes = site_tab.locate_classes(f @ ops @ f.T)
    return name, site_tab, f, classes


def site_analysis(sym: SymmetryData) -> SiteAnalysis:
    """The orbits of atoms with their site groups, named and oriented.

    Parameters
    ----------
    sym : SymmetryData
        A structure with its group (an :class:`~gammatrace.Analysis` is accepted too).

    Returns
    -------
    SiteAnalysis

    Raises
    ------
    SymmetryError
        If the detected operations do not map onto the table's (a tolerance problem).

    Notes
    -----
    Cost: the orbits come from the generators' permutations (one pass, in the core); the
    stabiliser of every orbit's first atom from its images under all h operations, O(h) per
    orbit; orbits with the same stabiliser share their name and frame. Where a site group's
    orientation rule would need atom counts (σv or σd of C2nv, …), the frame keeping the
    molecule's z, then x axis is taken, as :func:`gammatrace.tables.subgroups` does.

    Examples
    --------
    >>> import gammatrace as gt
    >>> from gammatrace.descent import site_analysis
    >>> ch4 = gt.analyze(["C", "H", "H", "H", "H"], [[0, 0, 0], [0.63, 0.63, 0.63],
    ...     [-0.63, -0.63, 0.63], [-0.63, 0.63, -0.63], [0.63, -0.63, -0.63]])
    >>> [(s.size, s.site_group) for s in site_analysis(ch4).sites]
    [(1, 'Td'), (4, 'C3v')]
    """
    sym = as_symmetry(sym)
    s = sym.structure
    n = sym.n_atoms
    symbols = s.species_symbols  # isotopes by their own symbol (D, 13C)
    gen = np.ascontiguousarray(sym.generator_permutations)
    ids = np.asarray(_core.orbits(n, gen), dtype=np.int64)
    _, first = np.unique(ids, return_index=True)
    order = np.argsort(first)  # orbits in order of their first atom
    reps = first[order]
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    by_atom = np.argsort(rank[ids], kind="stable")
    groups = np.split(by_atom, np.cumsum(np.bincount(rank[ids]))[:-1])
    canon = sym.canonical_index
    to_analysis = np.empty_like(canon)
    to_analysis[canon] = np.arange(len(canon))
    img = atom_images(sym, reps)
    stab = img == reps[None, :]  # (h, n_orbits)
    keys, which = np.unique(stab.T, axis=0, return_inverse=True)
    which = np.asarray(which).reshape(-1)
    table = sym.table
    per_key = []
    for key in keys:
        idx = np.flatnonzero(key)
        if len(idx) == len(table.operations):
            # an atom at the centre: the site group is the group, in its own frame
            name, site_tab, f, classes = table.name, table, np.eye(3), table.operation_class
        else:
            name, site_tab, f, classes = _site_frame(table, idx)
        shown = _display_name(sym, name, len(idx))
        if shown != name:
            # the linear table has its finite stand-in's operations and classes, with the
            # labels of C∞v / D∞h: the stand-in is never shown
            name, site_tab = shown, get_table(shown)
        desc = _describe(sym.point_group, table, name, site_tab, idx, f, False)
        labels = tuple(site_tab.classes[c].label for c in classes)
        stab_ops = to_analysis[idx]
        sort = np.argsort(stab_ops)
        per_key.append((shown, name, stab_ops[sort], f @ sym.frame, desc, labels, sort, idx[sort]))
    dist = np.linalg.norm(s.positions[reps] - sym.center, axis=1)
    sites = []
    for k, atoms in enumerate(groups):
        shown, name, stab_ops, frame, desc, labels, sort, cidx = per_key[which[k]]
        sites.append(
            Site(
                atoms=np.sort(atoms),
                representative=int(reps[k]),
                element=symbols[int(reps[k])],
                distance=float(dist[k]),
                site_group=shown,
                site_table=name,
                stabiliser=stab_ops,
                frame=frame,
                description=desc,
                site_classes=tuple(labels[j] for j in sort),
                _canonical=cidx,
            )
        )
    return SiteAnalysis(sym.point_group, sym.group_order, n, sites)


# --------------------------------------------------------------------------------------------
# The site-symmetry route: induction from site groups
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class OrbitInduction:
    """One orbit's share of an induced representation.

    Attributes
    ----------
    site : Site
    site_irreps : dict
        The basis at one site, reduced in the site group (e.g. ``{"A1": 1, "E1": 1}`` for
        x, y, z at a C5v site).
    induced : dict
        Each site irrep -> the molecular irreps it induces (the correlation method's columns).
    characters : numpy.ndarray
        This orbit's induced characters per molecular class.
    irreps : dict
        This orbit's contribution, reduced in the molecular group.
    """

    site: Site
    site_irreps: dict
    induced: dict
    characters: np.ndarray
    irreps: dict


@dataclass(frozen=True, eq=False)
class InducedRepresentation:
    """A representation obtained by inducing site representations (site-symmetry route).

    Attributes
    ----------
    basis : str
        ``"cartesian"`` or ``"atoms"``.
    point_group : str
    class_labels : tuple of str
    characters : numpy.ndarray
        Per molecular class, in table order.
    irreps : dict
        The reduction (Mulliken label -> multiplicity).
    orbits : list of OrbitInduction
    vibrations : dict or None
        Γ_vib = Γ_3N − Γ_trans − Γ_rot from the induced Γ_3N (cartesian basis only).
    """

    basis: str
    point_group: str
    class_labels: tuple
    characters: np.ndarray
    irreps: dict
    orbits: list
    vibrations: dict | None

    def to_dict(self) -> dict:
        """JSON form: characters, irreps, Γ_vib and each orbit's site irreps and share."""
        return {
            "basis": self.basis,
            "characters": [json_number(c) for c in self.characters],
            "irreps": self.irreps,
            "vibrations": self.vibrations,
            "orbits": [
                {
                    "size": o.site.size,
                    "site_group": o.site.site_group,
                    "site_irreps": o.site_irreps,
                    "induced": o.induced,
                    "irreps": o.irreps,
                }
                for o in self.orbits
            ],
        }

    def to_text(self) -> str:
        """The correlation-method table: per orbit, site irreps and what each induces."""
        lines = [f"Γ({self.basis}) by the site-symmetry route in {self.point_group}"]
        for k, o in enumerate(self.orbits):
            lines.append(
                f"  orbit {k}: {o.site.size} × {o.site.element} at {o.site.site_group}: "
                f"site {format_irreps(o.site_irreps)} -> {format_irreps(o.irreps)}"
            )
            for lab, ind in o.induced.items():
                lines.append(f"      {lab:>6s} ↑ {format_irreps(ind)}")
        lines.append(f"  Γ({self.basis}) = {format_irreps(self.irreps)}")
        if self.vibrations is not None:
            lines.append(f"  Γ_vib = {format_irreps(self.vibrations)}")
        return "\n".join(lines)


def _site_basis_irreps(site_tab, kind: str) -> dict:
    """The basis at one site, reduced in the site group."""
    if kind == "cartesian":
        return site_tab.reduce(site_tab.vector_characters, what="x, y, z at the site")
    return site_tab.reduce(np.ones(len(site_tab.classes)), what="one scalar at the site")


def _induce(prod, inv, subgroup: np.ndarray, site_chars: np.ndarray) -> np.ndarray:
    """Frobenius: χ_ind(g) = Σ_j χ̇(t_j⁻¹ g t_j), t_j coset representatives of G/H.

    ``site_chars`` holds χ on the members of ``subgroup`` (canonical indices); χ̇ is zero
    outside H. Returns χ_ind on every canonical operation.
    """
    h = len(prod)
    dot = np.zeros(h)
    dot[subgroup] = site_chars
    in_coset = np.zeros(h, dtype=bool)
    out = np.zeros(h)
    for t in range(h):
        if in_coset[t]:
            continue
        in_coset[prod[t, subgroup]] = True  # the left coset tH
        out += dot[prod[inv[t], prod[:, t]]]  # t⁻¹ g t for every g
    return out


def _per_class(table, chars_op: np.ndarray, what: str) -> np.ndarray:
    """Characters per class from per-canonical-operation values, checked for constancy."""
    cls = table.operation_class
    out = np.zeros(len(table.classes))
    for c in range(len(table.classes)):
        vals = chars_op[cls == c]
        if np.ptp(vals) > 1e-8:
            raise SymmetryError(f"{what}: induced characters vary within class {c}: {vals}")
        out[c] = vals[0]
    return out


def _vibrations_from(table, chars: np.ndarray) -> dict:
    return table.reduce(chars - external_characters(table), what="Γ_vib (site-symmetry route)")


def induced_representation(
    sym: SymmetryData, basis: Any = "cartesian", sites: SiteAnalysis | None = None
) -> InducedRepresentation:
    """Γ_3N (or Γ_atoms) by inducing each orbit's site representation to the molecular group.

    Parameters
    ----------
    sym : SymmetryData
        A structure with its group (an :class:`~gammatrace.Analysis` is accepted too).
    basis : str
        ``"cartesian"`` (x, y, z displacements at each site) or ``"atoms"`` (one scalar).
    sites : SiteAnalysis, optional
        Reuse a site analysis of ``sym``.

    Returns
    -------
    InducedRepresentation

    Raises
    ------
    BasisError
        For another basis.
    ReductionError
        If an induced representation does not reduce to integers.

    Examples
    --------
    >>> import gammatrace as gt
    >>> from gammatrace.descent import induced_representation
    >>> water = gt.analyze(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692],
    ...                                      [0, -0.7572, -0.4692]])
    >>> ind = induced_representation(water)
    >>> ind.irreps, ind.vibrations
    ({'A1': 3, 'A2': 1, 'B1': 2, 'B2': 3}, {'A1': 2, 'B2': 1})
    """
    kind = parse_basis(basis).kind
    if kind not in ("cartesian", "atoms"):
        raise BasisError(
            f"induced_representation: basis '{kind}' is not supported; use 'cartesian' or 'atoms'"
        )
    sym = as_symmetry(sym)
    sites = sites if sites is not None else site_analysis(sym)
    table = sym.table
    prod, inv = multiplication_table(table.name)
    cache: dict = {}
    total = np.zeros(len(table.classes))
    shares = []
    for site in sites.sites:
        key = site._canonical.tobytes()
        if key not in cache:
            site_tab = get_table(site.site_table)
            position = {c.label: j for j, c in enumerate(site_tab.classes)}
            site_cls = np.array([position[c] for c in site.site_classes], dtype=np.int64)
            site_irreps = _site_basis_irreps(site_tab, kind)
            chars = np.zeros(len(table.classes))
            induced = {}
            for lab, mult in site_irreps.items():
                row = site_tab.character_matrix[site_tab.index(lab)][site_cls]
                ind_op = _induce(prod, inv, site._canonical, row)
                ind = _per_class(table, ind_op, f"{lab} of {site.site_group} induced")
                induced[lab] = table.reduce(
                    ind, what=f"{lab} of the {site.site_group} site induced to {table.name}"
                )
                chars += mult * ind
            irreps = table.reduce(chars, what=f"orbit at {site.site_group} induced")
            cache[key] = (site_irreps, induced, chars, irreps)
        site_irreps, induced, chars, irreps = cache[key]
        total += chars
        shares.append(OrbitInduction(site, site_irreps, induced, chars, irreps))
    irreps = table.reduce(total, what=f"Γ({kind}) by the site-symmetry route")
    vib = _vibrations_from(table, total) if kind == "cartesian" else None
    labels = tuple(c.label for c in table.classes)
    return InducedRepresentation(kind, sym.point_group, labels, total, irreps, shares, vib)


def check_induced(
    sym: SymmetryData, basis: Any = "cartesian", atol: float = 1e-6
) -> InducedRepresentation:
    """Induce by the site-symmetry route and compare with the counted characters.

    Returns
    -------
    InducedRepresentation
        When the two agree (characters within ``atol``, same irreps, same Γ_vib).

    Raises
    ------
    SymmetryError
        When they disagree; the message shows both.
    """
    sym = as_symmetry(sym)
    ind = induced_representation(sym, basis)
    b = parse_basis(basis)
    counted = build_representation(sym, b.resolve(sym, center=sym.center, tol=sym.tol))
    agree = len(counted.characters) == len(ind.characters) and np.allclose(
        counted.characters, ind.characters, atol=atol, rtol=0.0
    )
    if not agree or counted.irreps != ind.irreps:
        raise SymmetryError(
            f"Γ({ind.basis}) in {sym.point_group}: induced characters "
            f"{[json_number(c) for c in ind.characters]} ({format_irreps(ind.irreps)}) differ "
            f"from counted {[json_number(c) for c in counted.characters]} "
            f"({format_irreps(counted.irreps)})"
        )
    if ind.vibrations is not None:
        cart = counted.characters if b.kind == "cartesian" else None
        counted_vib = vibrations(sym, cart).irreps
        if counted_vib != ind.vibrations:
            raise SymmetryError(
                f"Γ_vib in {sym.point_group}: site-symmetry route gives "
                f"{format_irreps(ind.vibrations)}, counting gives {format_irreps(counted_vib)}"
            )
    return ind
