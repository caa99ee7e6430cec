"""How far a structure is from having an improper operation: the margin of "chiral".

A structure is chiral at a tolerance when no mirror, inversion or S_n holds within it. Noise
makes that verdict fragile (benzene with 0.02 Å noise is C1 at 0.01 Å), so the verdict comes
with ``improper_within``: the smallest tolerance, searched up to ``SEARCH_FACTOR`` × the
given one, at which an improper operation holds — the largest distance any atom moves to its
image under the best improper operation found. ``None`` when none holds within that range.
"""

from __future__ import annotations

import functools
import math

import numpy as np

from .. import _core
from ..tables import LINEAR_SUBGROUP_N
from .symmetry import VERIFY_ALL_LIMIT, SymmetryData

__all__ = ["SEARCH_FACTOR", "improper_ladder", "improper_within", "tolerance_ladder"]

#: The search for an improper operation stops at this multiple of the tolerance.
SEARCH_FACTOR = 10.0
#: Tolerances tried per factor of ten above the given one (a geometric ladder).
_STEPS = 10


def tolerance_ladder(tol: float, bound: float) -> list[float]:
    """The tolerances searched above ``tol``: ``tol · 10^(j/10)`` for j = 0, 1, … up to
    ``bound`` (the last one clipped to it), ``tol`` itself first.

    >>> [round(t, 4) for t in tolerance_ladder(0.01, 0.1)][:3], tolerance_ladder(0.01, 0.1)[-1]
    ([0.01, 0.0126, 0.0158], 0.1)
    """
    n = max(0, math.ceil(math.log10(bound / tol) * _STEPS - 1e-9))
    return [min(tol * 10.0 ** (j / _STEPS), bound) for j in range(n + 1)]


@functools.lru_cache(maxsize=64)
def improper_ladder(tol: float) -> np.ndarray:
    """The tolerances above ``tol`` that the search for an improper operation tries
    (:func:`tolerance_ladder` up to ``SEARCH_FACTOR`` × ``tol``, ``tol`` itself left out), as
    the core takes them; read-only, one array per tolerance."""
    ladder = np.asarray(tolerance_ladder(tol, SEARCH_FACTOR * tol)[1:], dtype=np.float64)
    ladder.setflags(write=False)
    return ladder


def _best_improper(structure, center, ops, proper, tol) -> float | None:
    """Largest image distance of the best improper operation among ``ops`` (held at tol)."""
    improper = np.flatnonzero(~np.asarray(proper, dtype=bool))
    if len(improper) == 0:
        return None
    s = structure
    _, devs = _core.map_operations(
        s.positions,
        s.numbers,
        tuple(center),
        np.ascontiguousarray(ops[improper]),
        tol,
        s.masses,
    )
    return float(np.min(devs))


def improper_within(sym: SymmetryData) -> float | None:
    """The smallest tolerance (Å) at which the structure has an improper operation.

    For an achiral structure it is at most ``sym.tol``: the deviation of its best improper
    operation, as detection measured it (exact when detection verified every operation; for
    huge structures, where it verifies E and the generators only, the best verified improper
    generator: an upper bound, at which that operation does hold). For a chiral one the
    core detects the group again on the ladder of tolerances up to ``SEARCH_FACTOR`` ×
    ``sym.tol`` (:func:`tolerance_ladder`): first at that bound, where finding no improper
    operation gives ``None``, then upwards from the bottom to the first tolerance with one
    (a tolerance at which detection fails counts as none). Batches apply the same rule in
    the core (``_core.find_point_groups_batch`` with ``improper_ladder``).

    Examples
    --------
    >>> import gammatrace as gt
    >>> water = gt.analyze(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692],
    ...                                      [0, -0.7572, -0.4692]])
    >>> water.improper_within < 1e-6
    True
    """
    s = sym.structure
    if not sym.chiral:
        # the core's fold over the improper operations detection verified (None when it
        # verified none, or for a hand-built SymmetryData, which measured nothing)
        best = sym.best_verified_improper
        if best is not None:
            return best
        return _best_improper(s, sym.center, sym.operations, sym.proper, sym.tol)
    return _core.improper_within(
        s.positions,
        s.numbers,
        sym.tol,
        LINEAR_SUBGROUP_N,
        VERIFY_ALL_LIMIT,
        improper_ladder(sym.tol),
        s.masses,
    )
