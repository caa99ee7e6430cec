"""K_h = O(3), the group of a single atom, through a sampling.

The canonical operations are the core's sampling of O(3): C_M × Ci, the rotations about z by
multiples of 360°/M and their products with the inversion, M = ``LINEAR_SUBGROUP_N`` = 13.
Its classes are those of O(3) (the core joins every operation with its inverse): E, the
rotations C(±θ_k), i and the improper operations i·C(±θ_k), θ_k = 360°·k/M, k = 1 … (M−1)/2.

The irreps are the angular-momentum irreps D_l^(g/u) of O(3), labelled ``Sg``, ``Pu``,
``Dg``, … (parity (−1)^l for a shell of orbitals), with the characters

    χ_l(C(θ)) = sin((2l+1)θ/2) / sin(θ/2)  (2l+1 at θ = 0),  χ(i·C(θ)) = ±χ_l(θ) (g/u).

The reduction formula of a compact group is an integral; for class functions of SO(3) the
Weyl integration formula turns it into ⟨χ, χ'⟩ = (1/π)∫₀^π χ(θ)χ'(θ)(1 − cos θ) dθ, and the
mean over the M sampled angles with the weights (1 − cos θ_k) is exact for trigonometric
polynomials of degree < M. χ_l χ_l' (1 − cos θ) has degree l + l' + 1, so the sampled
reduction is exact for l, l' ≤ (M − 3)/2 = 5: the table lists l = 0 … 5 (``MAX_L``), with
class weights w_c = size_c (1 − cos θ_c) / h (θ_c the angle of the class's proper part;
for i·C(θ) that is θ, not the rotoreflection angle the class records). A representation
with l > 5 is not a combination of these rows on the sampled classes (l = 6 gives the
regular representation of C_M) and :meth:`CharacterTable.reduce` refuses it.
"""

from __future__ import annotations

import numpy as np

from ._ops import LINEAR_SUBGROUP_N, canonical_group, describe, real_classes
from ._types import ClassInfo, TableSpec, snap

__all__ = ["L_LETTERS", "MAX_L", "spherical_characters", "spherical_spec"]

#: Largest angular momentum the sampling resolves exactly: (M − 3) / 2.
MAX_L = (LINEAR_SUBGROUP_N - 3) // 2

#: Spectroscopic letters of l = 0 … ``MAX_L``, the first letter of each irrep's label.
L_LETTERS = "SPDFGH"


def _angle_text(angle: float) -> str:
    return f"{angle:.4g}°"


def spherical_characters(l: int, theta_deg) -> np.ndarray:
    """χ_l(θ) = sin((2l+1)θ/2) / sin(θ/2), the character of the rotation irrep D_l of SO(3).

    ``theta_deg`` is the rotation angle in degrees (scalar or array); 2l + 1 at θ = 0.
    """
    t = np.radians(np.asarray(theta_deg, dtype=np.float64))
    half = np.sin(t / 2.0)
    small = np.abs(half) < 1e-12
    safe = np.where(small, 1.0, half)
    return np.where(small, 2.0 * l + 1.0, np.sin((2 * l + 1) * t / 2.0) / safe)


def spherical_spec() -> TableSpec:
    """Build the table of K_h from the core's sampling C_M × Ci.

    Returns
    -------
    TableSpec
        With ``order`` None, ``is_spherical`` True and the quadrature weights of the classes.
    """
    group = canonical_group("K_h")
    ops = np.asarray(group.operations)
    h = len(ops)
    cls = real_classes(group.class_of, group.inverse)
    reps = np.unique(cls)
    proper, angle, _ = describe(ops[reps])
    # angle of the proper part: i·C(θ) = σh·C(θ + 180°) records 180° − θ
    theta = np.where(proper, angle, 180.0 - angle)
    order = sorted(range(len(reps)), key=lambda j: (not proper[j], round(float(theta[j]), 9)))
    position = np.empty(len(reps), dtype=np.int64)
    position[np.asarray(order)] = np.arange(len(order))
    op_class = position[np.searchsorted(reps, cls)]
    sizes = np.bincount(op_class, minlength=len(reps))
    classes, thetas, signs = [], [], []
    for pos, j in enumerate(order):
        p, t, a = bool(proper[j]), float(theta[j]), float(np.round(angle[j], 10))
        if p:
            label = "E" if t < 1e-9 else f"∞C({_angle_text(t)})"
        else:
            label = "i" if t < 1e-9 else f"∞S({_angle_text(a)})"
        classes.append(ClassInfo(label, int(sizes[pos]), p, a))
        thetas.append(t)
        signs.append(1.0 if p else -1.0)
    thetas_a, signs_a = np.array(thetas), np.array(signs)
    labels, rows = [], []
    for l in range(MAX_L + 1):  # by angular momentum, g before u
        chi = spherical_characters(l, thetas_a)
        labels += [L_LETTERS[l] + "g", L_LETTERS[l] + "u"]
        rows += [chi, chi * signs_a]
    weights = sizes * (1.0 - np.cos(np.radians(thetas_a))) / h
    return TableSpec(
        name="K_h",
        ops=ops,
        op_class=op_class,
        classes=tuple(classes),
        irrep_labels=tuple(labels),
        characters=snap(np.array(rows)),
        order=None,
        square=np.asarray(group.square),
        is_spherical=True,
        weights=weights,
        unresolved=f"angular momentum above l = {MAX_L}",
    )
