"""Where the group's operations send given atoms, in canonical operation order.

Shared by the orbits (:mod:`.orbits`) and the site analysis (:mod:`gammatrace.descent.sites`);
it reads a :class:`~gammatrace.group.symmetry.SymmetryData`.
"""

from __future__ import annotations

import numpy as np

from ..errors import SymmetryError
from ..tables._ops import multiplication_table
from ..text import plural

__all__ = ["atom_images"]


def atom_images(sym, atoms: np.ndarray) -> np.ndarray:
    """``(h, k)``: the atom each of ``atoms`` goes to under every canonical operation.

    ``sym`` is a :class:`~gammatrace.group.symmetry.SymmetryData`.

    Uses every permutation when all were verified; otherwise composes the verified ones (the
    generators) breadth-first through the multiplication table, O(h·k) work in all.
    """
    canon = sym.canonical_index
    h = len(canon)
    img = np.empty((h, len(atoms)), dtype=np.int64)
    if sym.permutations_known:
        img[canon] = sym.permutations[:, atoms]
        return img
    prod, _ = multiplication_table(sym.table.name)
    ident = 0  # E is canonical operation 0
    verified = sym.verified_operations
    gen_perms = sym.generator_permutations
    gens = canon[verified]
    known = np.zeros(h, dtype=bool)
    img[ident] = atoms
    known[ident] = True
    frontier = [ident]
    while frontier:
        new = []
        for g in frontier:
            for s, perm in zip(gens, gen_perms):
                p = int(prod[s, g])
                if not known[p]:
                    img[p] = perm[img[g]]  # s·g moves i to perm_s[perm_g[i]]
                    known[p] = True
                    new.append(p)
        frontier = new
    if not known.all():
        raise SymmetryError(
            f"{sym.point_group}: the verified operations generate only {known.sum()} of the "
            f"{plural(h, 'operation')}"
        )
    return img
