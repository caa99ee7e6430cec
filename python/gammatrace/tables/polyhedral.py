"""Tabulated character tables of the polyhedral groups T, Td, Th, O, Oh, I, Ih.

The operations are the core's canonical operations in the standard frame of DEVELOPERS.md
(x, y, z along the C2 axes of T, the S4 axes of Td, the C4 axes of O; the C5 axes of I
along the cyclic permutations of (0, ±1, ±φ)). Conjugacy classes are computed and matched
to the printed columns by content: proper or improper, angle and class size, which is
unique within each of these groups.

The characters of the rotation groups T, O and I are the printed ones (F. A. Cotton,
Chemical Applications of Group Theory, Appendix IIA), with the complex pair E of T
combined into one real E; the centrosymmetric groups Th, Oh and Ih are built as
G × Ci, χ(i·g) = ±χ(g), with their improper columns in printed order.
"""

from __future__ import annotations

import numpy as np

from ._ops import canonical_group, describe, real_classes
from ._types import GOLDEN_MINUS, GOLDEN_PLUS, ClassInfo, TableSpec, snap

__all__ = ["POLYHEDRAL", "polyhedral_spec"]

# Proper classes: (label, size, angle) in printed order, and the rows of the rotation group.
_T = {
    "classes": [("E", 1, 0.0), ("8C3", 8, 120.0), ("3C2", 3, 180.0)],
    "irreps": {"A": [1, 1, 1], "E": [2, -1, 2], "T": [3, 0, -1]},
}
_O = {
    "classes": [
        ("E", 1, 0.0),
        ("6C4", 6, 90.0),
        ("3C2", 3, 180.0),
        ("8C3", 8, 120.0),
        ("6C2", 6, 180.0),
    ],
    "irreps": {
        "A1": [1, 1, 1, 1, 1],
        "A2": [1, -1, 1, 1, -1],
        "E": [2, 0, 2, -1, 0],
        "T1": [3, 1, -1, 0, -1],
        "T2": [3, -1, -1, 0, 1],
    },
}
_I = {
    "classes": [
        ("E", 1, 0.0),
        ("12C5", 12, 72.0),
        ("12C5^2", 12, 144.0),
        ("20C3", 20, 120.0),
        ("15C2", 15, 180.0),
    ],
    "irreps": {
        "A": [1, 1, 1, 1, 1],
        # χ(C5) = 1 + 2cos72° = (1 + √5)/2 and χ(C5²) = 1 + 2cos144° = (1 − √5)/2.
        "T1": [3, GOLDEN_PLUS, GOLDEN_MINUS, 0, -1],
        "T2": [3, GOLDEN_MINUS, GOLDEN_PLUS, 0, -1],
        "G": [4, -1, -1, 1, 0],
        "H": [5, 0, 0, -1, 1],
    },
}


def _td():
    classes = [
        ("E", 1, True, 0.0),
        ("8C3", 8, True, 120.0),
        ("3C2", 3, True, 180.0),
        ("6S4", 6, False, 90.0),
        ("6σd", 6, False, 0.0),
    ]
    irreps = {
        "A1": [1, 1, 1, 1, 1],
        "A2": [1, 1, 1, -1, -1],
        "E": [2, -1, 2, 0, 0],
        "T1": [3, 0, -1, 1, -1],
        "T2": [3, 0, -1, -1, 1],
    }
    return classes, irreps


def _with_inversion(proper, improper):
    """Classes and rows of G × Ci from G's table.

    ``improper`` lists (label, size, angle, index of the proper class g with class i·g).
    """
    classes = [(lab, size, True, ang) for lab, size, ang in proper["classes"]]
    classes += [(lab, size, False, ang) for lab, size, ang, _ in improper]
    partner = [j for *_, j in improper]
    irreps = {}
    for mark, sign in (("g", 1.0), ("u", -1.0)):
        for lab, row in proper["irreps"].items():
            irreps[lab + mark] = list(row) + [sign * row[j] for j in partner]
    return classes, irreps


def _oh_proper():
    # Oh prints its proper columns as E, 8C3, 6C2, 6C4, 3C2(=C4²).
    perm = [0, 3, 4, 1, 2]
    return {
        "classes": [_O["classes"][j] for j in perm],
        "irreps": {k: [v[j] for j in perm] for k, v in _O["irreps"].items()},
    }


def _data(name: str):
    if name == "T":
        return [(lab, s, True, a) for lab, s, a in _T["classes"]], _T["irreps"]
    if name == "Td":
        return _td()
    if name == "Th":
        improper = [("i", 1, 180.0, 0), ("8S6", 8, 60.0, 1), ("3σh", 3, 0.0, 2)]
        return _with_inversion(_T, improper)
    if name == "O":
        return [(lab, s, True, a) for lab, s, a in _O["classes"]], _O["irreps"]
    if name == "Oh":
        improper = [
            ("i", 1, 180.0, 0),
            ("6S4", 6, 90.0, 3),
            ("8S6", 8, 60.0, 1),
            ("3σh", 3, 0.0, 4),
            ("6σd", 6, 0.0, 2),
        ]
        return _with_inversion(_oh_proper(), improper)
    if name == "I":
        return [(lab, s, True, a) for lab, s, a in _I["classes"]], _I["irreps"]
    if name == "Ih":
        # i·C5² = S10 (improper 36°) and i·C5 = S10³ (108°), printed S10 first.
        improper = [
            ("i", 1, 180.0, 0),
            ("12S10", 12, 36.0, 2),
            ("12S10^3", 12, 108.0, 1),
            ("20S6", 20, 60.0, 3),
            ("15σ", 15, 0.0, 4),
        ]
        return _with_inversion(_I, improper)
    raise ValueError(f"internal: {name} is not a polyhedral group")


POLYHEDRAL = ("T", "Td", "Th", "O", "Oh", "I", "Ih")


def polyhedral_spec(name: str) -> TableSpec:
    """Build the table of a polyhedral group (``"T"``, ``"Td"``, … ``"Ih"``).

    Returns
    -------
    TableSpec
    """
    printed, irreps = _data(name)
    group = canonical_group(name)
    ops = np.asarray(group.operations)
    cls = real_classes(group.class_of, group.inverse)
    reps, sizes = np.unique(cls, return_counts=True)
    proper, angle, _ = describe(ops[reps])
    op_class = np.full(len(ops), -1, dtype=np.int64)
    for pos, (label, size, is_proper, ang) in enumerate(printed):
        hit = [
            j
            for j in range(len(reps))
            if proper[j] == is_proper and abs(angle[j] - ang) < 1e-6 and sizes[j] == size
        ]
        if len(hit) != 1:
            raise RuntimeError(f"internal: {name} class {label} matched {len(hit)} classes")
        op_class[cls == reps[hit[0]]] = pos
    if (op_class < 0).any() or len(printed) != len(reps):
        raise RuntimeError(f"internal: {name} classes do not match the printed columns")
    classes = tuple(ClassInfo(lab, s, p, float(a)) for lab, s, p, a in printed)
    chars = snap(np.array([irreps[k] for k in irreps], dtype=np.float64))
    return TableSpec(
        name=name,
        ops=ops,
        op_class=op_class,
        classes=classes,
        irrep_labels=tuple(irreps),
        characters=chars,
        order=len(ops),
        square=np.asarray(group.square),
    )
