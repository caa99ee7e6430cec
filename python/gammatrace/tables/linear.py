"""Linear groups C∞v and D∞h through a finite subgroup.

The infinite groups are represented by C_Mv (for C∞v) and D_Md (for D∞h, M odd, so that
D_Md = D_M × Ci carries g/u), with M = ``LINEAR_SUBGROUP_N`` = 13. Their irreps map one to
one onto the linear labels: A1 → Σ+, A2 → Σ- (A2u → Σu+ and A1u → Σu-, since ± refers to
the vertical mirrors), E_k → the |m| = k label (Π, Δ, Φ, Γ, H, I),
so the tables distinguish |m| ≤ 6 — angular momenta up to l = 6 reduce correctly. A
representation carrying |m| > 6 would alias onto a lower label (E_k of C_13v has the
characters of E_(13−k)), so this limit is documented and not silently extended.

The canonical operations are those of the finite subgroup (the core's C∞v / D∞h); the classes
keep its sizes (so the reduction formula is the finite group's) but are labelled as printed
tables of the infinite groups label them (``linear_class_label``): ``2C∞(27.69°)`` for the
rotations by ±φ about the axis, ``∞σv`` for the vertical mirrors, ``∞C2`` for the
perpendicular C2 axes, ``2S∞(φ)`` for the improper rotations, ``i``; ``order`` is None.
"""

from __future__ import annotations

from ._ops import LINEAR_SUBGROUP_N
from ._types import ClassInfo, TableSpec
from .axial import axial_spec

__all__ = ["LINEAR_SUBGROUP_N", "MAX_ABS_M", "linear_class_label", "linear_spec"]

#: Largest |m| that the finite subgroup separates: (LINEAR_SUBGROUP_N − 1) / 2.
MAX_ABS_M = (LINEAR_SUBGROUP_N - 1) // 2

_GREEK = ("Π", "Δ", "Φ", "Γ", "H", "I")


def _angle_text(angle: float) -> str:
    return f"{angle:.4g}°"


def linear_class_label(info: ClassInfo) -> str:
    """The label of a finite stand-in's class as tables of C∞v / D∞h print it.

    Classes of more than two operations are the vertical mirrors (``∞σv``) or the C2 axes
    perpendicular to the molecular axis (``∞C2``); the others are E, i, σh and the rotations
    and improper rotations about the axis by ±φ (``2C∞(φ)``, ``2S∞(φ)``, φ in degrees).
    """
    if info.size > 2:
        return "∞C2" if info.proper else "∞σv"
    if info.proper:
        if info.angle < 1e-9:
            return "E"
        return ("2" if info.size == 2 else "") + f"C∞({_angle_text(info.angle)})"
    if info.angle < 1e-9:
        return "σh"
    if abs(info.angle - 180.0) < 1e-9:
        return "i"
    return ("2" if info.size == 2 else "") + f"S∞({_angle_text(info.angle)})"


def _linear_labels(spec: TableSpec):
    """Linear labels of the finite subgroup's irreps, and the print order of the rows.

    Σ+ / Σ- say whether a one-dimensional irrep is symmetric under the vertical mirrors
    (the last class, σv of C_Mv and σd of D_Md): A1 and A2 of C_Mv, but A1u of D_Md is
    antisymmetric under σd = i·C2' and so is Σu- (z is Σu+, as printed).
    """
    labels = []
    for label, row in zip(spec.irrep_labels, spec.characters):
        parity = label[-1] if label[-1] in "gu" else ""
        if row[0] == 1:
            labels.append(f"Σ{parity}+" if row[-1] > 0 else f"Σ{parity}-")
        else:
            labels.append(_GREEK[int(label.rstrip("gu")[1:]) - 1] + parity)
    rank = {"+": 0, "-": 1}
    order = sorted(
        range(len(labels)),
        key=lambda j: (
            labels[j][-1] == "u" or labels[j][-2:] in ("u+", "u-"),
            labels[j][0] != "Σ",
            rank.get(labels[j][-1], 0),
            j,
        ),
    )
    return [labels[j] for j in order], order


def linear_spec(name: str) -> TableSpec:
    """Build the table of ``"C∞v"`` or ``"D∞h"`` through its finite subgroup.

    Returns
    -------
    TableSpec
        With ``order`` None and ``is_linear`` True.
    """
    if name == "C∞v":
        spec = axial_spec("Cv", LINEAR_SUBGROUP_N, f"C{LINEAR_SUBGROUP_N}v")
    elif name == "D∞h":
        spec = axial_spec("Dd", LINEAR_SUBGROUP_N, f"D{LINEAR_SUBGROUP_N}d")
    else:
        raise ValueError(f"internal: {name} is not a linear group")
    labels, order = _linear_labels(spec)
    spec.name = name
    spec.irrep_labels = tuple(labels)
    spec.characters = spec.characters[order]
    spec.classes = tuple(c._replace(label=linear_class_label(c)) for c in spec.classes)
    spec.order = None
    spec.is_linear = True
    return spec
