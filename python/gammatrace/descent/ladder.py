"""Distortion ladders: the point group of one structure over a series of tolerances.

* :func:`distortion_ladder` — the point group at a series of tolerances, the largest deviation
  at each, and how the irreps correlate between successive distinct groups, restricted through
  the actual operations (each of the lower group's operations found among the higher's by how
  it permutes the atoms and whether it is proper)
  and named by the embedding of :func:`gammatrace.tables.correlate` with that correlation.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..analysis import Analysis, _check_tol, analyze_structure
from ..errors import GammatraceError, TableError
from ..io import as_structure
from ..spectroscopy import format_irreps
from ..tables import correlate, embedding_namings
from ..text import format_length, plural

__all__ = [
    "DEFAULT_LADDER_TOLERANCES",
    "Descent",
    "DistortionLadder",
    "LadderStep",
    "distortion_ladder",
]

#: Tolerances (Å) of the default ladder: a geometric series from 1e-4 to 0.5 Å.
DEFAULT_LADDER_TOLERANCES = tuple(float(t) for t in np.geomspace(1e-4, 0.5, 13))

# --------------------------------------------------------------------------------------------
# Distortion ladder
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class LadderStep:
    """The point group found at one tolerance.

    Attributes
    ----------
    tolerance : float
        Å.
    point_group : str or None
        None when the analysis failed at this tolerance (see ``error``).
    order : int or None
    max_deviation : float or None
        Largest distance (Å) between an atom's image and the nearest atom of its element.
    error : str or None
        ``"Type: message"`` when the analysis failed.
    analysis : Analysis or None
    """

    tolerance: float
    point_group: str | None
    order: int | None
    max_deviation: float | None
    error: str | None = None
    analysis: Analysis | None = field(default=None, repr=False)

    def to_dict(self) -> dict:
        """JSON form."""
        out: dict[str, Any] = {
            "tolerance": self.tolerance,
            "point_group": self.point_group,
            "order": self.order,
            "max_deviation": self.max_deviation,
        }
        if self.error is not None:
            out["error"] = self.error
        return out


@dataclass(frozen=True, eq=False)
class Descent:
    """How the irreps of a higher group split in the next lower group of a ladder.

    Attributes
    ----------
    higher, lower : str
        The group at the looser and at the tighter tolerance.
    higher_step, lower_step : int
        Indices into :attr:`DistortionLadder.steps`.
    correlation : dict or None
        Each irrep of ``higher`` -> the irreps of ``lower`` it contains, restricted through
        the actual operations; None when they could not be matched (see ``note``).
    embedding : str or None
        The description of the embedding of :func:`gammatrace.tables.correlate` with the
        same correlation.
    note : str
        Why the correlation or the embedding is missing; or, when the structure names the
        lower group's classes otherwise than the embedding's first naming (C2' and C2''
        the other way round, …), that other naming (``other_namings`` of correlate); else
        empty.
    """

    higher: str
    lower: str
    higher_step: int
    lower_step: int
    correlation: dict | None
    embedding: str | None
    note: str = ""

    def to_dict(self) -> dict:
        """JSON form."""
        return {
            "higher": self.higher,
            "lower": self.lower,
            "correlation": self.correlation,
            "embedding": self.embedding,
            "note": self.note,
        }


@dataclass(frozen=True, eq=False)
class DistortionLadder:
    """Point groups of one structure over a series of tolerances (tightest first).

    Attributes
    ----------
    source : str
    n_atoms : int
    steps : list of LadderStep
    descents : list of Descent
        One per change of group between successive successful steps.
    """

    source: str
    n_atoms: int
    steps: list
    descents: list

    def deviation_from(self, group: str) -> float | None:
        """How far the structure is from ``group``: the largest deviation at the tightest
        tolerance where it was found (Å), or None if it never was."""
        for st in self.steps:
            if st.point_group == group:
                return st.max_deviation
        return None

    def to_dict(self) -> dict:
        """JSON form: steps and descents."""
        return {
            "source": self.source,
            "n_atoms": self.n_atoms,
            "steps": [s.to_dict() for s in self.steps],
            "descents": [d.to_dict() for d in self.descents],
        }

    def to_text(self) -> str:
        """The ladder as a table, then each descent with its correlation."""
        lines = [f"{self.source}: {plural(self.n_atoms, 'atom')}"]
        rows = [("tolerance/Å", "group", "order", "largest deviation/Å")]
        for st in self.steps:
            if st.point_group is None:
                rows.append((f"{st.tolerance:.3g}", "-", "", f"failed: {st.error}"))
            else:
                rows.append(
                    (
                        f"{st.tolerance:.3g}",
                        st.point_group,
                        "" if st.order is None else str(st.order),
                        f"{st.max_deviation:.3g}",
                    )
                )
        widths = [max(len(r[i]) for r in rows) for i in range(4)]
        for r in rows:
            lines.append("  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
        for d in self.descents:
            dev = self.deviation_from(d.higher)
            lines.append(
                f"  {d.higher} -> {d.lower}: {d.higher} holds within {format_length(dev)} Å"
                if dev is not None
                else f"  {d.higher} -> {d.lower}"
            )
            if d.embedding:
                lines.append(f"    {d.embedding}")
            if d.note:
                lines.append(f"    ({d.note})")
            for irrep, parts in (d.correlation or {}).items():
                lines.append(f"    {irrep:>6s} -> {format_irreps(parts)}")
        return "\n".join(lines)


def _restrict_through_operations(high: Analysis, low: Analysis) -> tuple[dict | None, str]:
    """Correlation of ``high``'s irreps into ``low`` from the operations both detected.

    An operation of a non-linear structure is fixed by how it permutes the atoms and whether
    it is proper (a planar structure's g and σh·g permute alike but differ in handedness), so
    each of ``low``'s operations is found among ``high``'s by that key: no matrix matching.
    """
    key = {
        (bool(p), perm.tobytes()): k
        for k, (p, perm) in enumerate(zip(high.proper, high.permutations))
    }
    if len(key) != len(high.proper):
        # a linear molecule: every rotation about its axis permutes the atoms alike
        return None, f"the operations of {high.point_group} do not tell apart by their permutations"
    found = [key.get((bool(p), perm.tobytes())) for p, perm in zip(low.proper, low.permutations)]
    if any(k is None for k in found) or len(set(found)) != len(found):
        return None, (
            f"the {low.point_group} operations are not all among the {high.point_group} ones "
            "(they permute the atoms differently)"
        )
    idx = np.asarray(found, dtype=np.int64)
    chars = high.table.character_matrix[:, high.op_class[idx]]  # (irreps of high, ops of low)
    n_cls = len(low.table.classes)
    restricted = np.zeros((chars.shape[0], n_cls))
    for c in range(n_cls):
        block = chars[:, low.op_class == c]
        if block.shape[1] == 0 or np.ptp(block, axis=1).max() > 1e-8:
            return None, f"restricted characters are not constant over {low.point_group} classes"
        restricted[:, c] = block[:, 0]
    corr = {
        ir.label: low.table.reduce(restricted[r], what=f"{ir.label} of {high.point_group}")
        for r, ir in enumerate(high.table.irreps)
    }
    return corr, ""


def _descent(steps: list, hi: int, lo: int) -> Descent:
    high, low = steps[hi].analysis, steps[lo].analysis
    hg, lg = high.point_group, low.point_group
    try:
        known = correlate(hg, lg)["embeddings"]
    except TableError as exc:
        known, note_known = None, str(exc)
    else:
        note_known = ""
    corr, note = _restrict_through_operations(high, low)
    if corr is None:
        if known is not None and len(known) == 1:
            emb = known[0]
            return Descent(hg, lg, hi, lo, emb["correlation"], emb["description"], note)
        return Descent(hg, lg, hi, lo, None, None, note or note_known)
    if known is None:
        return Descent(hg, lg, hi, lo, corr, None, note_known)
    for emb in known:
        for named, how in embedding_namings(emb):  # the structure may name C2'/C2'' apart
            if named == corr:
                return Descent(hg, lg, hi, lo, corr, emb["description"], how)
    note = f"matches none of the {plural(len(known), 'embedding')} of correlate"
    return Descent(hg, lg, hi, lo, corr, None, note)


def distortion_ladder(structure: Any, tolerances: Any = None) -> DistortionLadder:
    """The point group of a structure at a series of tolerances, and the descents between.

    Parameters
    ----------
    structure
        Anything :func:`gammatrace.analyze` takes as one argument: a
        :class:`~gammatrace.io.Structure`, an ``ase.Atoms``, an XYZ path.
    tolerances : sequence of float, optional
        Å; sorted tightest first. Default :data:`DEFAULT_LADDER_TOLERANCES`
        (1e-4 … 0.5 Å, geometric).

    Returns
    -------
    DistortionLadder
        A failed analysis at one tolerance becomes a step with ``error`` set; the others go on.

    Raises
    ------
    InputError
        Bad structure or a tolerance that is not a positive finite number.

    Examples
    --------
    >>> import gammatrace as gt
    >>> from gammatrace.descent import distortion_ladder
    >>> s = gt.io.as_structure(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692],
    ...                                           [0, -0.7562, -0.4692]])
    >>> [st.point_group for st in distortion_ladder(s, [1e-4, 0.01]).steps]
    ['Cs', 'C2v']
    """

    s = as_structure(structure)
    tols = DEFAULT_LADDER_TOLERANCES if tolerances is None else tolerances
    tols = sorted(_check_tol(t) for t in tols)
    steps = []
    for t in tols:
        try:
            a = analyze_structure(s, t)
        except GammatraceError as exc:
            steps.append(LadderStep(t, None, None, None, f"{type(exc).__name__}: {exc}"))
            continue
        steps.append(LadderStep(t, a.point_group, a.order, float(a.max_deviation), None, a))
    descents = []
    last = None
    for k, st in enumerate(steps):
        if st.point_group is None:
            continue
        if last is not None and steps[last].point_group != st.point_group:
            descents.append(_descent(steps, k, last))
        last = k
    return DistortionLadder(s.source, s.n_atoms, steps, descents)
