"""Generated character tables of the axial families, for any n.

Families: Cn, Cnv, Cnh, S2n, Dn, Dnh, Dnd (and C1, Cs = C1h, Ci = S2).

Every operation of an axial group maps z to s·z (s = ±1) and acts on the xy plane by a
2x2 orthogonal matrix M: a rotation by φ (det M = +1) or a reflection in the line at
angle α (det M = −1). Writing ``ang`` for φ or 2α, the group is either isomorphic to its
planar image P through R ↦ M (Cn, Cnv, S2n, Dn, Dnd) or to Cn × {E, σh} and Dn × {E, σh}
(Cnh, Dnh; P is then the image of the proper part), with P the cyclic group C_N or the
dihedral group D_N of the plane. Their real irreps are

- C_N: A = 1; B = cos(N·ang/2) (N even); E_k = 2cos(k·ang), k = 1 … ⌊(N−1)/2⌋;
- D_N: A1 = 1; A2 = det M; B1 = cos(N·ang/2), B2 = det M·cos(N·ang/2) (N even);
  E_k = 2cos(k·ang) on rotations and 0 on reflections,

so B1 is +1 on the C2' axis along x (Dn), on σv(xz) (Cnv) and on C2' (Dnd), as printed.
Products with {E, σh} take ′/″ (odd n) or g/u (even n, from χ(i) = χ(C2)·χ(σh)). S2n and
Dnd with n odd contain i and are relabelled as Cn × Ci and Dn × Ci (g/u, and the index of
E_k folded into 1 … (n−1)/2), as printed. D2 and D2h take the labels B1, B2, B3 of the
functions z, y, x.

The canonical operations are in the standard frame of DEVELOPERS.md: z along the principal
axis; σv of Cnv contains x; the C2' axis of Dn, Dnh, Dnd lies along x; σv of Dnh contains
the C2' axes; σd of Dnd bisects neighbouring C2' axes. Classes are computed by conjugacy,
then named and ordered by content as printed tables head them.
"""

from __future__ import annotations

import numpy as np

from ._ops import (
    INVERSION,
    SIGMA_H,
    canonical_group,
    describe,
    locate,
    real_classes,
    rotation_label,
)
from ._types import ClassInfo, TableSpec, snap

__all__ = ["axial_spec", "core_name"]


def _perp(beta, z_sign: float) -> np.ndarray:
    """Operations whose xy part reflects in the line at angle ``beta``; z -> z_sign·z.

    z_sign = −1 gives the C2 about the horizontal axis at ``beta``; +1 the vertical mirror
    containing z and that axis.
    """
    b = np.asarray(beta, dtype=np.float64)
    out = np.zeros((*b.shape, 3, 3))
    c, s = np.cos(2 * b), np.sin(2 * b)
    out[..., 0, 0] = c
    out[..., 0, 1] = s
    out[..., 1, 0] = s
    out[..., 1, 1] = -c
    out[..., 2, 2] = z_sign
    return out


def core_name(family: str, n: int) -> str:
    """The Schoenflies name of an axial family member as the core spells it.

    ``family`` is ``"C"``, ``"Cv"``, ``"Ch"``, ``"S"``, ``"D"``, ``"Dh"`` or ``"Dd"``; for
    ``"S"`` n is the order 2n of S_2n. C1h is ``"Cs"`` and S2 is ``"Ci"``.
    """
    if family == "Ch" and n == 1:
        return "Cs"
    if family == "S" and n == 2:
        return "Ci"
    if family == "S":
        return f"S{n}"
    suffix = {"C": "", "Cv": "v", "Ch": "h", "D": "", "Dh": "h", "Dd": "d"}[family]
    return f"{family[0]}{n}{suffix}"


# --- irreps of the planar image P ------------------------------------------------------


def _cyclic(big_n: int):
    """Real irreps of C_N as (base label, E index or 0, character function)."""
    out = [("A", 0, lambda d, a: np.ones_like(a))]
    if big_n % 2 == 0:
        out.append(("B", 0, lambda d, a: np.cos(big_n * a / 2)))
    for k in range(1, (big_n - 1) // 2 + 1):
        out.append(("E", k, lambda d, a, k=k: 2 * np.cos(k * a)))
    return out


def _dihedral(big_n: int):
    """Real irreps of D_N as (base label, E index or 0, character function)."""
    out = [("A1", 0, lambda d, a: np.ones_like(a)), ("A2", 0, lambda d, a: d)]
    if big_n % 2 == 0:
        out.append(("B1", 0, lambda d, a: np.cos(big_n * a / 2)))
        out.append(("B2", 0, lambda d, a: d * np.cos(big_n * a / 2)))
    for k in range(1, (big_n - 1) // 2 + 1):
        out.append(("E", k, lambda d, a, k=k: np.where(d > 0, 2 * np.cos(k * a), 0.0)))
    return out


def _e_label(base: str, k: int, n_e: int) -> str:
    if base != "E":
        return base
    return "E" if n_e == 1 else f"E{k}"


def _fold(k: int, n: int) -> int:
    k %= n
    return min(k, n - k)


def _irreps(family: str, n: int):
    """Irreps of an axial group as (label, character function of (s, d, ang)).

    ``s`` is det R (used by the products with {E, σh} only), ``d`` = det M and ``ang``
    the angle of M (see the module docstring).
    """
    if family in ("C", "S", "Ch"):
        big_n = n
        plane = _cyclic(big_n)
    elif family == "Dd":
        big_n = 2 * n
        plane = _dihedral(big_n)
    else:
        big_n = n
        plane = _dihedral(big_n)
    n_e = (big_n - 1) // 2

    def lift(fn, with_s=False):
        if with_s:
            return lambda s, d, a: fn(d, a) * s
        return lambda s, d, a: fn(d, a)

    if family in ("Ch", "Dh"):
        out = []
        if n % 2 == 1:
            for mark, with_s in (("'", False), ("''", True)):
                for base, k, fn in plane:
                    out.append((_e_label(base, k, n_e) + mark, lift(fn, with_s)))
        else:
            d2 = family == "Dh" and n == 2
            for parity in (1.0, -1.0):
                mark = "g" if parity > 0 else "u"
                for base, k, fn in plane:
                    c2 = float(fn(1.0, np.pi))  # character of C2(z) in P
                    with_s = np.sign(c2) != parity  # χ(σh) = χ(i)/χ(C2)
                    label = _D2_LABELS[base] if d2 else _e_label(base, k, n_e)
                    out.append((label + mark, lift(fn, with_s)))
            if d2:
                out = _d2_order(out)
        return out
    if (family == "S" and (n // 2) % 2 == 1) or (family == "Dd" and n % 2 == 1):
        # S2n, Dnd with n odd: Cn × Ci and Dn × Ci.
        small = n // 2 if family == "S" else n
        n_e_small = (small - 1) // 2
        g, u = [], []
        for base, k, fn in plane:
            if base == "E":
                target = g if k % 2 == 0 else u
                target.append((k, _fold(k, small), fn))
            else:
                parity_u = base in ("B", "B1", "B2")
                new = {"A": "A", "B": "A", "A1": "A1", "A2": "A2", "B1": "A1", "B2": "A2"}[base]
                (u if parity_u else g).append((new, 0, fn))
        out = []
        for mark, group in (("g", g), ("u", u)):
            ones = [x for x in group if isinstance(x[0], str)]
            es = sorted((x for x in group if not isinstance(x[0], str)), key=lambda x: x[1])
            for base, _, fn in ones:
                out.append((base + mark, lift(fn)))
            for _, k_small, fn in es:
                out.append((_e_label("E", k_small, n_e_small) + mark, lift(fn)))
        return out
    if family == "D" and n == 2:
        return _d2_order([(_D2_LABELS[base], lift(fn)) for base, _, fn in plane])
    return [(_e_label(base, k, n_e), lift(fn)) for base, k, fn in plane]


# D2 / D2h: the dihedral irreps of D_2 named by the functions z, y, x (B1, B2, B3).
_D2_LABELS = {"A1": "A", "A2": "B1", "B2": "B2", "B1": "B3"}


def _d2_order(irreps):
    rank = {"A": 0, "B1": 1, "B2": 2, "B3": 3}
    return sorted(irreps, key=lambda x: (x[0][-1] == "u", rank[x[0].rstrip("gu")]))


# --- classes ---------------------------------------------------------------------------


def _class_names(family: str, n: int, ops, cls, reps):
    """Name and order the classes of an axial group by content.

    Returns the class ids in print order and their labels (without size prefix).
    """
    proper, angle, axis = describe(ops[reps])
    az = np.abs(axis[:, 2])
    x_c2 = cls[locate(ops, _perp(0.0, -1.0)[None])[0]] if family in ("D", "Dh", "Dd") else -1
    xz_mirror = cls[locate(ops, _perp(0.0, 1.0)[None])[0]] if family in ("Cv", "Dh") else -1
    d2 = family in ("D", "Dh") and n == 2
    kinds, names = [], []
    for j, rep in enumerate(reps):
        p, t, a = bool(proper[j]), float(angle[j]), axis[j]
        if p and t < 1e-9:
            kind, name = "E", "E"
        elif p and az[j] > 0.5:
            kind, name = "Cz", rotation_label(True, t, 4 * n)
            if d2:
                name = "C2(z)"
        elif p:
            kind = "C2p"
            if d2:
                name = "C2(x)" if abs(a[0]) > 0.5 else "C2(y)"
            elif n % 2 == 1:
                name = "C2"
            elif family == "Dd":
                name = "C2'"
            else:
                name = "C2'" if rep == x_c2 else "C2''"
        elif abs(t - 180.0) < 1e-9:
            kind, name = "i", "i"
        elif t < 1e-9 and az[j] > 0.5:
            kind, name = "σh", "σ(xy)" if d2 else "σh"
        elif t < 1e-9:
            kind = "σvert"
            if d2:
                name = "σ(yz)" if abs(a[0]) > 0.5 else "σ(xz)"
            elif family == "Cv" and n == 2:
                name = "σv(xz)" if rep == xz_mirror else "σv'(yz)"
            elif family == "Dd":
                name = "σd"
            else:
                name = "σv" if rep == xz_mirror else "σd"
        else:
            kind, name = "Sz", rotation_label(False, t, 4 * n)
        kinds.append(kind)
        names.append(name)

    def proper_key(j):
        kind = kinds[j]
        if kind == "E":
            return (0, 0.0)
        if kind == "Cz":
            return (1, float(angle[j]))
        if d2:
            return (2, 0.0) if names[j] == "C2(y)" else (3, 0.0)
        return (2, 0.0) if names[j] in ("C2'", "C2") else (3, 0.0)

    index_of = {int(r): j for j, r in enumerate(reps)}
    if family in ("Ch", "Dh"):
        mode = "sigma" if n % 2 == 1 else "i"
    elif family == "S":
        mode = "i" if (n // 2) % 2 == 1 else "power"
    elif family == "Dd":
        mode = "i" if n % 2 == 1 else "power"
    else:
        mode = "planes"
    partner = {"i": INVERSION, "sigma": SIGMA_H}.get(mode)
    keys = []
    for j, rep in enumerate(reps):
        if proper[j]:
            keys.append(proper_key(j))
        elif partner is not None:
            q = cls[locate(ops, (partner @ ops[rep])[None])[0]]
            keys.append((10, *proper_key(index_of[int(q)])))
        elif kinds[j] == "Sz":
            keys.append((1, float(angle[j])))
        else:  # vertical mirrors: σv before σd
            keys.append((4, 0.0) if names[j].startswith("σv(") or names[j] == "σv" else (5, 0.0))
    order = sorted(range(len(reps)), key=lambda j: keys[j])
    return order, names, proper, angle


def axial_spec(family: str, n: int, name: str) -> TableSpec:
    """Build the table of an axial group.

    Parameters
    ----------
    family : str
        ``"C"``, ``"Cv"``, ``"Ch"``, ``"S"``, ``"D"``, ``"Dh"`` or ``"Dd"``.
    n : int
        The n of the family (for ``"S"``, the order 2n).
    name : str
        The name to report (``"Cs"`` for Ch with n = 1, ``"Ci"`` for S with n = 2).

    Returns
    -------
    TableSpec
    """
    group = canonical_group(core_name(family, n))
    ops = np.asarray(group.operations)
    cls = real_classes(group.class_of, group.inverse)
    reps = np.unique(cls)
    order, names, proper, angle = _class_names(family, n, ops, cls, reps)
    # Renumber: class index in print order for every operation.
    new_index = np.empty(len(ops), dtype=np.int64)
    classes = []
    position = np.empty(len(reps), dtype=np.int64)
    position[np.asarray(order)] = np.arange(len(order))
    new_index[:] = position[np.searchsorted(reps, cls)]
    sizes = np.bincount(new_index, minlength=len(reps))
    for pos, j in enumerate(order):
        size = int(sizes[pos])
        label = (f"{size}" if size > 1 else "") + names[j]
        classes.append(ClassInfo(label, size, bool(proper[j]), float(np.round(angle[j], 10))))
    # Parameters of the planar image M: of the operation itself for the families that are
    # isomorphic to it, of the proper part g or σh·g for Cnh = Cn × {E, σh} and
    # Dnh = Dn × {E, σh} (so that 1/2 subscripts refer to C2', as printed).
    par = np.sign(np.linalg.det(ops))
    planar = ops
    if family in ("Ch", "Dh"):
        planar = np.where(par[:, None, None] > 0, ops, SIGMA_H @ ops)
    s = par
    d = np.linalg.det(planar[:, :2, :2])
    ang = np.arctan2(planar[:, 1, 0], planar[:, 0, 0])
    labels, rows = [], []
    rep_of_class = np.unique(new_index, return_index=True)[1]
    for label, fn in _irreps(family, n):
        per_op = np.broadcast_to(fn(s, d, ang), s.shape).astype(np.float64)
        if np.abs(per_op - per_op[rep_of_class[new_index]]).max() > 1e-8:
            raise RuntimeError(f"internal: {name} irrep {label} is not a class function")
        labels.append(label)
        rows.append(per_op[rep_of_class])
    chars = snap(np.array(rows))
    return TableSpec(
        name=name,
        ops=ops,
        op_class=new_index,
        classes=tuple(classes),
        irrep_labels=tuple(labels),
        characters=chars,
        order=len(ops),
        square=np.asarray(group.square),
    )
