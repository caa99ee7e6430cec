"""Where the group's operations send given atoms, in canonical operation order.

Shared by the orbits of :class:`~gammatrace.analysis.Analysis` and the site analysis of
:mod:`gammatrace.sites`; it needs only what an analysis exposes (``canonical_index``,
``permutations``, ``verified_operations``, …), never the ``Analysis`` class itself.
"""

from __future__ import annotations

import numpy as np

from .errors import SymmetryError
from .tables._ops import multiplication_table

__all__ = ["atom_images"]


def atom_images(analysis, atoms: np.ndarray, canon: np.ndarray) -> np.ndarray:
    """``(h, k)``: the atom each of ``atoms`` goes to under every canonical operation.

    ``analysis`` is an :class:`~gammatrace.analysis.Analysis` (or anything with the same
    attributes); ``canon`` its ``canonical_index``.

    Uses every permutation when all were verified; otherwise composes the verified ones (the
    generators) breadth-first through the multiplication table, O(h·k) work in all.
    """
    h = len(canon)
    img = np.empty((h, len(atoms)), dtype=np.int64)
    if analysis.all_verified or "permutations" in analysis.__dict__:
        img[canon] = analysis.permutations[:, atoms]
        return img
    prod, _ = multiplication_table(analysis.table.name)
    ident = 0  # E is canonical operation 0
    verified = analysis.verified_operations
    gen_perms = analysis.generator_permutations
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
            f"{analysis.point_group}: the verified operations generate only {known.sum()} of "
            f"{h} operations"
        )
    return img
