"""The symmetry elements behind the pictures: every rotation axis, mirror plane and the
inversion centre of a structure, and one representative element per class of operations.

An element is where an operation leaves space fixed: the axis of C_n^k and of S_n^k, the plane
of σ (stored as its normal), the point of i. Classes of the character table group the
operations; the operations of one class lie on elements that the group maps onto each other
(the 4 three-fold axes of class 8C3 in Oh). Several classes can share one element: in D6h the
principal axis carries 2C6, 2C3, C2, 2S3 and 2S6. The pictures draw one element per class, and
a shared element once, labelled with all its classes.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..group.symmetry import as_symmetry
from ..tables._ops import fraction_of_turn

if TYPE_CHECKING:  # pragma: no cover
    from ..group.symmetry import SymmetryData

__all__ = [
    "AxisLine",
    "RepresentativeElement",
    "axis_lines",
    "representative_elements",
    "symmetry_elements",
]

# largest denominator read off an angle: S_2n of the largest generated family (n = 1000)
_MAX_DEN = 4000
# two unit vectors on one line / perpendicular: the operations are ideal (canonical matrices
# written into the input frame), so 1e-6 leaves room only for the frame's round-off
_SAME = 1e-6


def _is_identity(proper: bool, angle: float) -> bool:
    return bool(proper) and angle < 1e-6


def _kind(proper: bool, angle: float) -> str:
    if proper:
        return "rotation"
    if angle < 1e-6:
        return "mirror"
    if abs(angle - 180.0) < 1e-6:
        return "inversion"
    return "rotoreflection"


def _order(angle: float) -> int:
    """n of C_n^k or S_n^k from the angle 360k/n (folded into [0, 180])."""
    return fraction_of_turn(angle, _MAX_DEN).denominator


def _distinct_lines(vectors: np.ndarray) -> np.ndarray:
    """Unit vectors with one per line (v and −v are one line), in first-seen order."""
    out: list[np.ndarray] = []
    for v in vectors:
        v = v / np.linalg.norm(v)
        if not any(abs(abs(float(v @ w)) - 1.0) < _SAME for w in out):
            out.append(v)
    return np.array(out).reshape(-1, 3)


def _upward(v: np.ndarray) -> np.ndarray:
    """The sign of a line's direction that points up (z > 0), else along +x, else +y."""
    for k in (2, 0, 1):
        if abs(v[k]) > _SAME:
            return v if v[k] > 0 else -v
    return v


def _preference(v: np.ndarray) -> tuple:
    """Sort key among equivalent elements: closest to z, then x, then y (standard frame)."""
    a = np.round(np.abs(v), 6)
    return (-a[2], -a[0], -a[1])


def _crowding(v: np.ndarray, axes: list[dict]) -> tuple:
    """Sort key for a new representative axis: farthest from the axes already chosen (so
    that the drawn axes spread out), then :func:`_preference`."""
    if not axes:
        return (0.0, *_preference(v))
    cos = max(abs(float(v @ a["line"])) for a in axes)
    return (round(cos, 6), *_preference(v))


@dataclass(frozen=True)
class RepresentativeElement:
    """One element standing for the classes of operations that lie on it.

    Attributes
    ----------
    kind : str
        ``"axis"`` (rotations and rotoreflections), ``"plane"`` (a mirror) or ``"centre"``
        (the inversion centre).
    vector : numpy.ndarray, shape (3,)
        Unit axis direction (pointing up: z > 0, else +x, else +y) or plane normal, in the
        standard frame; zeros for the centre.
    classes : tuple of int
        The classes (indices into ``table.classes``) whose representative this is, the
        leading class first (for an axis: the rotation of highest order).
    labels : tuple of str
        Their labels, as the table heads them.
    text : str
        The label to print: the labels joined; ``C∞`` (and ``S∞``) for the axis of a linear
        molecule, whose table lists the sampled rotations as separate classes.
    order : int
        Highest rotation order on an axis (0 for C∞), 1 for a plane, 2 for the centre.
    others : numpy.ndarray, shape (m, 3)
        The other elements of the leading class (axes or normals, standard frame), not drawn
        unless asked for; none for a linear molecule, whose ∞C2 and ∞σv are infinitely many.
    count : int or None
        How many elements the leading class has (this one and ``others``); None for
        infinitely many.
    """

    kind: str
    vector: np.ndarray
    classes: tuple
    labels: tuple
    text: str
    order: int
    others: np.ndarray
    count: int | None = 1


def _class_elements(sym):
    """Per non-identity class: (kind, order, distinct lines of its axes/normals, standard frame)."""
    frame = np.asarray(sym.frame, dtype=np.float64)
    std_axis = np.asarray(sym.axis, dtype=np.float64) @ frame.T
    out = {}
    for c in range(len(sym.table.classes)):
        ops = np.flatnonzero(np.asarray(sym.op_class) == c)
        if len(ops) == 0 or _is_identity(sym.proper[ops[0]], sym.angle[ops[0]]):
            continue
        kind = _kind(bool(sym.proper[ops[0]]), float(sym.angle[ops[0]]))
        order = {"mirror": 1, "inversion": 2}.get(kind) or _order(float(sym.angle[ops[0]]))
        if sym.is_linear and kind in ("rotation", "rotoreflection"):
            # the sampled rotations about the molecular axis: C(θ) / S(φ) for many θ
            on_axis = abs(abs(std_axis[ops[0], 2]) - 1.0) < _SAME
            order = 0 if on_axis else order
        out[c] = (kind, order, _distinct_lines(std_axis[ops]))
    return out


def representative_elements(sym: SymmetryData) -> list[RepresentativeElement]:
    """One representative element per class of operations, shared elements merged.

    Axes are chosen first, highest rotation order first; a class whose operations lie on an
    axis already chosen is put on that axis (C3 on the C6 axis, S4 on the C2 axis of Td),
    otherwise on its element farthest from the axes chosen so far (the first: closest to the
    standard z axis; ties: closest to z, then x, then y), so that the drawn axes spread out.
    Each mirror
    class then takes the plane that contains the axes chosen so far, in that order of
    preference (σv of D6h the plane through the drawn C2', σd the one through the drawn C2'').

    Parameters
    ----------
    sym : SymmetryData or Analysis

    Returns
    -------
    list of RepresentativeElement
        Axes, then planes, then the centre. The labels of all of them together are the
        labels of the table's non-identity classes, each once. A single atom (K_h, every
        line an axis and every plane a mirror) gets the centre only.

    Examples
    --------
    >>> import gammatrace as gt
    >>> water = gt.analyze(["O", "H", "H"], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
    >>> [(e.kind, e.text) for e in representative_elements(water)]
    [('axis', 'C2'), ('plane', 'σv(xz)'), ('plane', "σv'(yz)")]
    """
    sym = as_symmetry(sym)
    table = sym.table
    per_class = _class_elements(sym)
    if getattr(table, "is_spherical", False):
        centre = [c for c, (kind, _, _) in per_class.items() if kind == "inversion"]
        return [
            RepresentativeElement(
                "centre",
                np.zeros(3),
                tuple(centre),
                tuple(table.classes[c].label for c in centre),
                "i",
                2,
                np.zeros((0, 3)),
            )
        ]
    axes: list[dict] = []  # {"line", "classes"}

    def axis_key(c):
        kind, order, _ = per_class[c]
        rank = 0 if kind == "rotation" else 1
        return (rank, -(order if order else 10**9), c)

    for c in sorted(
        (c for c, e in per_class.items() if e[0] in ("rotation", "rotoreflection")), key=axis_key
    ):
        lines = per_class[c][2]
        for a in axes:
            if any(abs(abs(float(a["line"] @ v)) - 1.0) < _SAME for v in lines):
                a["classes"].append(c)
                break
        else:
            best = min(range(len(lines)), key=lambda k: (_crowding(lines[k], axes), k))
            axes.append({"line": _upward(lines[best]), "classes": [c]})
    out: list[RepresentativeElement] = []
    for a in axes:
        lead = a["classes"][0]
        labels = tuple(table.classes[c].label for c in a["classes"])
        order = per_class[lead][1]
        if order == 0:
            kinds = {per_class[c][0] for c in a["classes"]}
            text = "C∞" + (", S∞" if "rotoreflection" in kinds else "")
        else:
            text = ", ".join(labels)
        others = np.array(
            [v for v in per_class[lead][2] if abs(abs(float(v @ a["line"])) - 1.0) >= _SAME]
        ).reshape(-1, 3)
        count = 1 + len(others)
        if sym.is_linear and order != 0:  # ∞C2: the stand-in's axes are a sample
            others, count = np.zeros((0, 3)), None
        out.append(
            RepresentativeElement(
                "axis", a["line"], tuple(a["classes"]), labels, text, order, others, count
            )
        )
    chosen = [a["line"] for a in axes]
    for c in sorted(c for c, e in per_class.items() if e[0] == "mirror"):
        normals = per_class[c][2]

        def contains(n):
            return tuple(-int(abs(float(n @ line)) < _SAME) for line in chosen)

        best = min(
            range(len(normals)), key=lambda k: (contains(normals[k]), _preference(normals[k]), k)
        )
        normal = _upward(normals[best])
        others = np.array([v for k, v in enumerate(normals) if k != best]).reshape(-1, 3)
        count = 1 + len(others)
        if sym.is_linear:  # ∞σv: the stand-in's planes are a sample
            others, count = np.zeros((0, 3)), None
        label = table.classes[c].label
        out.append(RepresentativeElement("plane", normal, (c,), (label,), label, 1, others, count))
    for c, (kind, _, _) in per_class.items():
        if kind == "inversion":
            label = table.classes[c].label
            out.append(
                RepresentativeElement(
                    "centre", np.zeros(3), (c,), (label,), label, 2, np.zeros((0, 3))
                )
            )
    return out


@dataclass(frozen=True)
class AxisLine:
    """One rotation axis of the group with what lies on it, for the stereogram.

    Attributes
    ----------
    vector : numpy.ndarray, shape (3,)
        Unit direction, standard frame, pointing up (z > 0, else +x, else +y).
    order : int
        n: the highest proper rotation C_n about it.
    improper : bool
        True when a rotoreflection about it or a mirror perpendicular to it is in the group.
    inversion : bool
        True when the group holds the inversion (then every axis carries it).
    classes : tuple of int
        The classes with an operation about this axis, the highest rotation's class first.
    """

    vector: np.ndarray
    order: int
    improper: bool
    inversion: bool
    classes: tuple

    @property
    def symbol(self) -> str:
        """The axis in Hermann–Mauguin notation: ``n``, ``n/m`` or ``n̄`` (rotoinversion).

        C_n alone is n. With the inversion, n even is n/m and n odd is n̄ (S_2n, which holds
        i). Improper without the inversion: σh with n odd is (2n)̄ (C3h: 6̄), S_2n with n
        even is (2n)̄ (S4: 4̄).
        """
        n = self.order
        if self.inversion:
            return f"{n}/m" if n % 2 == 0 else f"{n}\u0304"
        if self.improper:
            return f"{2 * n}\u0304"
        return str(n)


def axis_lines(sym: SymmetryData) -> list[AxisLine]:
    """Every rotation axis of a finite group, each once, with the order and improper
    operations about it (standard frame), highest order first.

    Parameters
    ----------
    sym : SymmetryData or Analysis

    Returns
    -------
    list of AxisLine
    """
    sym = as_symmetry(sym)
    frame = np.asarray(sym.frame, dtype=np.float64)
    std_axis = np.asarray(sym.axis, dtype=np.float64) @ frame.T
    proper = np.asarray(sym.proper, dtype=bool)
    angle = np.asarray(sym.angle, dtype=np.float64)
    op_class = np.asarray(sym.op_class)
    kinds = [_kind(bool(p), float(t)) for p, t in zip(proper, angle)]
    inversion = "inversion" in kinds
    lines: list[dict] = []
    for k in np.flatnonzero(proper & (angle > 1e-6)):
        v = std_axis[k] / np.linalg.norm(std_axis[k])
        n = _order(float(angle[k]))
        for ln in lines:
            if abs(abs(float(ln["vector"] @ v)) - 1.0) < _SAME:
                ln["ops"].append(k)
                ln["order"] = max(ln["order"], n)
                break
        else:
            lines.append({"vector": _upward(v), "ops": [k], "order": n})
    out = []
    for ln in lines:
        on = [
            k
            for k, kind in enumerate(kinds)
            if kind in ("mirror", "rotoreflection")
            and abs(abs(float(ln["vector"] @ std_axis[k]) / np.linalg.norm(std_axis[k])) - 1.0)
            < _SAME
        ]
        top = [k for k in ln["ops"] if _order(float(angle[k])) == ln["order"]]
        rest = sorted({int(op_class[k]) for k in ln["ops"] + on if kinds[k] != "mirror"})
        lead = int(op_class[top[0]])
        classes = (lead, *[c for c in rest if c != lead])
        out.append(AxisLine(ln["vector"], ln["order"], bool(on), inversion, classes))
    out.sort(key=lambda a: (-a.order, _preference(a.vector)))
    return out


def symmetry_elements(sym: SymmetryData) -> dict:
    """Rotation axes (unit vector, order), mirror-plane normals and the inversion centre.

    ``sym`` is a SymmetryData (or an Analysis). Axes and normals are in the input frame;
    ``center`` is the centre of mass. Every element is listed (31 axes and 15 planes for
    Ih); :func:`representative_elements` gives one per class.
    """
    sym = as_symmetry(sym)
    proper = np.asarray(sym.proper, dtype=bool)
    angle = np.asarray(sym.angle, dtype=np.float64)
    axis = np.asarray(sym.axis, dtype=np.float64)
    axes: list[tuple[np.ndarray, int]] = []
    for a, t in zip(axis[proper & (angle > 1e-6)], angle[proper & (angle > 1e-6)]):
        n = _order(float(t))
        for k, (b, o) in enumerate(axes):
            if abs(abs(float(a @ b)) - 1) < _SAME:
                axes[k] = (b, max(o, n))
                break
        else:
            axes.append((a, n))
    improper = ~proper
    normals = list(axis[improper & (angle < 1e-6)])  # σ = σh·C(0): the axis is the normal
    inversion = bool((improper & (np.abs(angle - 180.0) < 1e-6)).any())
    return {"axes": axes, "planes": normals, "inversion": inversion, "center": sym.center}
