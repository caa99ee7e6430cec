"""Sets of symmetry-equivalent atoms and the site group of each."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import _core
from ..io.elements import SYMBOLS, species
from ..tables.subgroups import identify_group
from .stabilisers import atom_images
from .symmetry import SymmetryData

__all__ = [
    "Orbit",
    "environment_sets",
    "environments",
    "orbit_sets",
    "orbits",
    "site_group_names",
    "species_symbols_of",
]

#: Up to this many atoms the sets are gathered in a Python loop (cheaper than numpy calls).
_FEW_ATOMS = 256


@dataclass(frozen=True)
class Orbit:
    """A set of symmetry-equivalent atoms.

    Attributes
    ----------
    atoms : list of int
        Zero-based atom indices, ascending.
    size : int
        Number of atoms.
    site_order : int or None
        Order of the site group (the stabiliser of one atom): group order / orbit size; None
        for the infinite groups.
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


def orbits(sym: SymmetryData) -> list[Orbit]:
    """Sets of symmetry-equivalent atoms, in order of their first atom, with site groups.

    Costs one pass over the verified permutations (the generators' for huge structures);
    the site group of each orbit comes from where the group's operations send one of its
    atoms, composed through the multiplication table (no further pass over the atoms).
    """
    splits = orbit_sets(sym)
    h = sym.group_order
    names = site_group_names(sym, np.array([a[0] for a in splits], dtype=np.int64))
    return [
        Orbit(atoms.tolist(), len(atoms), h // len(atoms) if h else None, name)
        for atoms, name in zip(splits, names)
    ]


def _orbit_ids(sym: SymmetryData) -> np.ndarray:
    """Orbit of each atom (``int64 (N,)``), orbits numbered in order of their first atom:
    one union-find pass in the core over the generators' permutations (every verified one
    when no generating set is known)."""
    perms = np.ascontiguousarray(sym.generator_permutations)
    return _core.orbits(sym.n_atoms, perms, sym.generator_rows)


def orbit_sets(sym: SymmetryData) -> list[np.ndarray]:
    """The sets of symmetry-equivalent atoms (ascending indices), in order of their first
    atom: one union-find pass over the verified permutations in the core, no site groups."""
    ids = _orbit_ids(sym)
    order = np.argsort(ids, kind="stable")
    counts = np.bincount(ids)
    return np.split(order, np.cumsum(counts)[:-1])


def site_group_names(sym: SymmetryData, representatives: np.ndarray) -> list:
    """Schoenflies names of the stabilisers of the given atoms (one per atom).

    A stabiliser that is the whole group takes the group's name (C∞v, D∞h and K_h included,
    never that of their finite stand-in); half of D∞h's stand-in, the site of an atom off the
    centre of a linear molecule, is C∞v.
    """
    images = atom_images(sym, representatives)  # (h, k), rows = canonical operations
    ops = sym.table.operations
    cache: dict = {}
    out = []
    for j, atom in enumerate(representatives):
        stab = np.flatnonzero(images[:, j] == atom)
        key = stab.tobytes()
        if key not in cache:
            if len(stab) == len(ops):
                cache[key] = sym.point_group
            elif sym.is_linear and 2 * len(stab) == len(ops):
                cache[key] = "C∞v"
            else:
                cache[key] = identify_group(ops[stab])
        out.append(cache[key])
    return out


def environments(sym: SymmetryData) -> dict[str, list]:
    """Symmetry-distinct environments per species: symbol -> the sets of equivalent atoms.

    The symbol tells isotopes apart (``D`` next to ``H``; :attr:`Structure.species_symbols`).
    Sets are those of the static structure (its orbits): conformational averaging in solution
    (a rotating methyl group, ring flips) can make more atoms equivalent on the NMR time
    scale than the symmetry of one geometry does.
    """
    s = sym.structure
    return environment_sets(_orbit_ids(sym), s.numbers, s.masses)


def environment_sets(ids: np.ndarray, numbers: np.ndarray, masses: Any = None) -> dict:
    """:func:`environments` from the orbit of each atom (``ids``, numbered in order of first
    atom, as ``_core.orbits`` gives them), the atomic numbers and the masses (None for the
    standard ones): species symbol -> the sets of equivalent atoms."""
    if len(ids) <= _FEW_ATOMS:
        sets: dict[int, list] = {}
        for i, k in enumerate(ids.tolist()):
            sets.setdefault(k, []).append(i)
        members = list(sets.values())
    else:
        ids = np.asarray(ids, dtype=np.int64)
        order = np.argsort(ids, kind="stable")
        members = [a.tolist() for a in np.split(order, np.cumsum(np.bincount(ids))[:-1])]
    symbols = species_symbols_of(numbers, masses, [m[0] for m in members])
    out: dict[str, list] = {}
    for symbol, atoms in zip(symbols, members):
        out.setdefault(symbol, []).append(atoms)
    return out


def species_symbols_of(numbers: np.ndarray, masses: Any, atoms: Any) -> list[str]:
    """The species symbols (isotopes apart: ``D``, ``13C``) of the given atoms; the element
    symbols when ``masses`` is None (every atom of its standard mass)."""
    if masses is None:
        return [SYMBOLS[z] for z in np.asarray(numbers)[atoms].tolist()]
    every = species(np.ascontiguousarray(numbers), np.ascontiguousarray(masses))[1]
    return [every[i] for i in np.asarray(atoms).tolist()]
