"""Name a finite point group from its operation matrices, in any orientation.

Used for site groups (the stabiliser of an atom) and for subgroups. The rules are the textbook
flow chart (common practice): count rotation axes of order ≥ 3 (several: a polyhedral group),
else take the principal axis of order n and look for perpendicular C2 axes, σh, σv and S2n.
"""

from __future__ import annotations

import numpy as np

__all__ = ["identify_operations"]


def _axis_and_angle(m: np.ndarray) -> tuple[np.ndarray, float]:
    """Axis and rotation angle (degrees, [0, 180]) of a proper rotation matrix."""
    cos = np.clip((np.trace(m) - 1.0) / 2.0, -1.0, 1.0)
    angle = float(np.degrees(np.arccos(cos)))
    if angle < 1e-6:
        return np.array([0.0, 0.0, 1.0]), 0.0
    w, v = np.linalg.eigh((m + m.T) / 2.0)
    axis = v[:, int(np.argmin(np.abs(w - 1.0)))]
    return axis / np.linalg.norm(axis), angle


def _rotation_order(angle: float, h: int) -> int:
    """Order of a rotation by ``angle`` degrees, with a denominator bounded by the group order."""
    if angle < 1e-6:
        return 1
    frac = angle / 360.0
    for n in range(2, 2 * h + 2):
        k = round(frac * n)
        if k and abs(frac * n - k) < 1e-4 * n:
            return n
    return 0


def identify_operations(ops: np.ndarray) -> str:
    """The Schoenflies name of the finite group formed by ``ops`` (``(h, 3, 3)``).

    Examples
    --------
    >>> import numpy as np
    >>> identify_operations(np.array([np.eye(3), np.diag([1.0, 1.0, -1.0])]))
    'Cs'
    """
    ops = np.asarray(ops, dtype=np.float64).reshape(-1, 3, 3)
    h = len(ops)
    if h == 1:
        return "C1"
    det = np.linalg.det(ops)
    proper = det > 0
    # proper rotation axes with their orders
    axes: list[tuple[np.ndarray, int]] = []
    for m in ops[proper]:
        axis, angle = _axis_and_angle(m)
        n = _rotation_order(angle, h)
        if n <= 1:
            continue
        for k, (a, order) in enumerate(axes):
            if abs(abs(float(a @ axis)) - 1.0) < 1e-6:
                axes[k] = (a, max(order, n))
                break
        else:
            axes.append((axis, n))
    has_inversion = any(np.allclose(m, -np.eye(3), atol=1e-6) for m in ops)
    high = [a for a in axes if a[1] >= 3]
    if len(high) > 1:
        top = max(o for _, o in high)
        base = {5: "I", 4: "O", 3: "T"}.get(top)
        if base is None:
            return f"?{h}"
        if has_inversion:
            return base + "h"
        if not proper.all():
            return "Td" if base == "T" else f"?{h}"
        return base
    improper = ops[~proper]
    if not axes:
        if has_inversion:
            return "Ci"
        return "Cs"
    principal, n = max(axes, key=lambda a: a[1])
    # mirrors: improper ops with angle 0 (R = σ); normal = eigenvector with eigenvalue -1
    sigma_h = False
    sigma_v = False
    for m in improper:
        pm = -m
        axis, angle = _axis_and_angle(pm)
        # σ = σh·C(0) => -σ is C2 about the normal
        if abs(angle - 180.0) < 1e-4:
            w, v = np.linalg.eigh((m + m.T) / 2.0)
            normal = v[:, int(np.argmin(w))]
            if np.isclose(np.trace(m), 1.0, atol=1e-6):
                c = abs(float(normal @ principal))
                if c > 1 - 1e-6:
                    sigma_h = True
                elif c < 1e-6:
                    sigma_v = True
    perp_c2 = [a for a, o in axes if o % 2 == 0 and abs(float(a @ principal)) < 1e-6]
    if n == 2 and len(axes) == 3:
        # D2 family: any C2 may serve as principal; D2d needs the S4 axis as principal,
        # which the perpendicular count below does not depend on.
        perp_c2 = [a for a, _ in axes if abs(float(a @ principal)) < 1e-6]
    if perp_c2:
        if sigma_h:
            return f"D{n}h"
        if len(improper):
            return f"D{n}d"
        return f"D{n}"
    if not len(improper):
        return f"C{n}"
    if sigma_h:
        return f"C{n}h"
    if sigma_v:
        return f"C{n}v"
    return f"S{2 * n}"
