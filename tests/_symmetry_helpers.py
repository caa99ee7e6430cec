"""Test-only helpers: small hand-built point groups, character tables and structures.

The groups are closed from generators in the standard frame of DEVELOPERS.md; each class is
identified by one representative matrix, and the characters are typed from
Cotton, "Chemical Applications of Group Theory", 3rd ed., Appendix IIA (typed from memory;
every table is checked for row orthogonality when it is built).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from gammatrace.basis_change import SymmetryData
from scipy.spatial import cKDTree
from scipy.spatial.transform import Rotation

PHI = (1.0 + np.sqrt(5.0)) / 2.0


def rot(axis, angle_deg):
    axis = np.asarray(axis, dtype=float)
    return Rotation.from_rotvec(np.radians(angle_deg) * axis / np.linalg.norm(axis)).as_matrix()


def refl(normal):
    n = np.asarray(normal, dtype=float)
    n = n / np.linalg.norm(n)
    return np.eye(3) - 2.0 * np.outer(n, n)


def improper(axis, angle_deg):
    """σh·C(θ) about ``axis``."""
    return refl(axis) @ rot(axis, angle_deg)


INV = -np.eye(3)


def closure(generators):
    ops = [np.eye(3)]
    frontier = [np.eye(3)]
    while frontier:
        new = []
        for a in frontier:
            for g in generators:
                p = g @ a
                if not any(np.abs(p - o).max() < 1e-8 for o in ops):
                    ops.append(p)
                    new.append(p)
        frontier = new
    return np.array(ops)


@dataclass(frozen=True)
class ClassInfo:
    label: str
    size: int
    proper: bool
    angle: float


@dataclass(frozen=True)
class IrrepInfo:
    label: str
    dim: int
    characters: tuple
    functions: tuple = ()


class Table:
    """A minimal character table with the attributes gammatrace.tables provides."""

    def __init__(self, name, generators, class_reps, irreps):
        ops = closure(generators)
        h = len(ops)
        op_class = np.full(h, -1)
        classes = []
        for c, (label, rep) in enumerate(class_reps):
            conj = np.einsum("gij,jk,glk->gil", ops, rep, ops)  # g R g⁻¹
            members = {int(np.argmin(np.abs(ops - m).reshape(h, -1).max(axis=1))) for m in conj}
            assert all(op_class[k] == -1 for k in members), f"{name}: classes overlap at {label}"
            op_class[list(members)] = c
            det = np.linalg.det(rep)
            # R = C(θ): tr = 1 + 2cosθ; R = σh·C(θ): tr = -1 + 2cosθ (DEVELOPERS.md).
            cos = (np.trace(rep) - np.sign(det)) / 2.0
            angle = float(np.degrees(np.arccos(np.clip(cos, -1.0, 1.0))))
            classes.append(ClassInfo(label, len(members), bool(det > 0), angle))
        assert np.all(op_class >= 0), f"{name}: operations without a class"
        self.name = name
        self.order = h
        self.operations = ops
        self.operation_class = op_class
        self.classes = classes
        self.irreps = [IrrepInfo(lab, int(chars[0]), tuple(chars)) for lab, chars in irreps]
        self.character_matrix = np.array([ir.characters for ir in self.irreps], dtype=float)
        sizes = np.array([c.size for c in classes])
        gram = (self.character_matrix * sizes) @ self.character_matrix.T / h
        nu = np.diag(gram)
        assert np.allclose(gram, np.diag(nu)) and np.all(np.isin(np.round(nu), [1, 2])), name

    def reduce(self, chars_per_class):
        sizes = np.array([c.size for c in self.classes])
        nu = (self.character_matrix**2 * sizes).sum(axis=1) / self.order
        n = (self.character_matrix * sizes) @ np.asarray(chars_per_class) / (self.order * nu)
        return {ir.label: round(v) for ir, v in zip(self.irreps, n) if round(v)}


def _tables():
    one_minus_phi = 1.0 - PHI
    a5 = (0.0, 1.0, PHI)
    d111 = (1.0, 1.0, 1.0)
    z = (0, 0, 1)
    tabs = {}
    # Source: Cotton, Appendix IIA, C2v (typed from memory); σv(xz) has normal y.
    tabs["C2v"] = Table(
        "C2v",
        [rot(z, 180), refl((0, 1, 0))],
        [
            ("E", np.eye(3)),
            ("C2", rot(z, 180)),
            ("σv(xz)", refl((0, 1, 0))),
            ("σv'(yz)", refl((1, 0, 0))),
        ],
        [
            ("A1", (1, 1, 1, 1)),
            ("A2", (1, 1, -1, -1)),
            ("B1", (1, -1, 1, -1)),
            ("B2", (1, -1, -1, 1)),
        ],
    )
    # Source: Cotton, Appendix IIA, C3v (typed from memory); x lies in a σv plane.
    tabs["C3v"] = Table(
        "C3v",
        [rot(z, 120), refl((0, 1, 0))],
        [("E", np.eye(3)), ("2C3", rot(z, 120)), ("3σv", refl((0, 1, 0)))],
        [("A1", (1, 1, 1)), ("A2", (1, 1, -1)), ("E", (2, -1, 0))],
    )
    # Source: Cotton, Appendix IIA, C3 (typed from memory); the complex pair ε, ε* as one real E.
    tabs["C3"] = Table(
        "C3",
        [rot(z, 120)],
        [("E", np.eye(3)), ("C3", rot(z, 120)), ("C3^2", rot(z, 240))],
        [("A", (1, 1, 1)), ("E", (2, -1, -1))],
    )
    # Source: Cotton, Appendix IIA, Td (typed from memory); S4 axes along x, y, z.
    tabs["Td"] = Table(
        "Td",
        [improper(z, 90), rot(d111, 120)],
        [
            ("E", np.eye(3)),
            ("8C3", rot(d111, 120)),
            ("3C2", rot(z, 180)),
            ("6S4", improper(z, 90)),
            ("6σd", refl((1, -1, 0))),
        ],
        [
            ("A1", (1, 1, 1, 1, 1)),
            ("A2", (1, 1, 1, -1, -1)),
            ("E", (2, -1, 2, 0, 0)),
            ("T1", (3, 0, -1, 1, -1)),
            ("T2", (3, 0, -1, -1, 1)),
        ],
    )
    # Source: Cotton, Appendix IIA, D6h (typed from memory); C2' along x (through atoms),
    # σv contains the C2' axes (normal y), σd the C2'' axes (normal x).
    tabs["D6h"] = Table(
        "D6h",
        [rot(z, 60), rot((1, 0, 0), 180), INV],
        [
            ("E", np.eye(3)),
            ("2C6", rot(z, 60)),
            ("2C3", rot(z, 120)),
            ("C2", rot(z, 180)),
            ("3C2'", rot((1, 0, 0), 180)),
            ("3C2''", rot((0, 1, 0), 180)),
            ("i", INV),
            ("2S3", improper(z, 120)),
            ("2S6", improper(z, 60)),
            ("σh", refl(z)),
            ("3σd", refl((1, 0, 0))),
            ("3σv", refl((0, 1, 0))),
        ],
        [
            ("A1g", (1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1)),
            ("A2g", (1, 1, 1, 1, -1, -1, 1, 1, 1, 1, -1, -1)),
            ("B1g", (1, -1, 1, -1, 1, -1, 1, -1, 1, -1, 1, -1)),
            ("B2g", (1, -1, 1, -1, -1, 1, 1, -1, 1, -1, -1, 1)),
            ("E1g", (2, 1, -1, -2, 0, 0, 2, 1, -1, -2, 0, 0)),
            ("E2g", (2, -1, -1, 2, 0, 0, 2, -1, -1, 2, 0, 0)),
            ("A1u", (1, 1, 1, 1, 1, 1, -1, -1, -1, -1, -1, -1)),
            ("A2u", (1, 1, 1, 1, -1, -1, -1, -1, -1, -1, 1, 1)),
            ("B1u", (1, -1, 1, -1, 1, -1, -1, 1, -1, 1, -1, 1)),
            ("B2u", (1, -1, 1, -1, -1, 1, -1, 1, -1, 1, 1, -1)),
            ("E1u", (2, 1, -1, -2, 0, 0, -2, -1, 1, 2, 0, 0)),
            ("E2u", (2, -1, -1, 2, 0, 0, -2, 1, 1, -2, 0, 0)),
        ],
    )
    # Source: Cotton, Appendix IIA, Oh (typed from memory); C4 axes along x, y, z.
    tabs["Oh"] = Table(
        "Oh",
        [rot(z, 90), rot(d111, 120), INV],
        [
            ("E", np.eye(3)),
            ("8C3", rot(d111, 120)),
            ("6C2", rot((1, 1, 0), 180)),
            ("6C4", rot(z, 90)),
            ("3C2", rot(z, 180)),
            ("i", INV),
            ("6S4", improper(z, 90)),
            ("8S6", improper(d111, 60)),
            ("3σh", refl(z)),
            ("6σd", refl((1, -1, 0))),
        ],
        [
            ("A1g", (1, 1, 1, 1, 1, 1, 1, 1, 1, 1)),
            ("A2g", (1, 1, -1, -1, 1, 1, -1, 1, 1, -1)),
            ("Eg", (2, -1, 0, 0, 2, 2, 0, -1, 2, 0)),
            ("T1g", (3, 0, -1, 1, -1, 3, 1, 0, -1, -1)),
            ("T2g", (3, 0, 1, -1, -1, 3, -1, 0, -1, 1)),
            ("A1u", (1, 1, 1, 1, 1, -1, -1, -1, -1, -1)),
            ("A2u", (1, 1, -1, -1, 1, -1, 1, -1, -1, 1)),
            ("Eu", (2, -1, 0, 0, 2, -2, 0, 1, -2, 0)),
            ("T1u", (3, 0, -1, 1, -1, -3, -1, 0, 1, 1)),
            ("T2u", (3, 0, 1, -1, -1, -3, 1, 0, 1, -1)),
        ],
    )
    # Source: Cotton, Appendix IIA, Ih (typed from memory); C2 axes along x, y, z and C5 axes
    # along (0, ±1, ±φ).
    p, q = PHI, one_minus_phi
    tabs["Ih"] = Table(
        "Ih",
        [rot(a5, 72), rot(d111, 120), INV],
        [
            ("E", np.eye(3)),
            ("12C5", rot(a5, 72)),
            ("12C5^2", rot(a5, 144)),
            ("20C3", rot(d111, 120)),
            ("15C2", rot(z, 180)),
            ("i", INV),
            ("12S10", improper(a5, 36)),
            ("12S10^3", improper(a5, 108)),
            ("20S6", improper(d111, 60)),
            ("15σ", refl(z)),
        ],
        [
            ("Ag", (1, 1, 1, 1, 1, 1, 1, 1, 1, 1)),
            ("T1g", (3, p, q, 0, -1, 3, q, p, 0, -1)),
            ("T2g", (3, q, p, 0, -1, 3, p, q, 0, -1)),
            ("Gg", (4, -1, -1, 1, 0, 4, -1, -1, 1, 0)),
            ("Hg", (5, 0, 0, -1, 1, 5, 0, 0, -1, 1)),
            ("Au", (1, 1, 1, 1, 1, -1, -1, -1, -1, -1)),
            ("T1u", (3, p, q, 0, -1, -3, -q, -p, 0, 1)),
            ("T2u", (3, q, p, 0, -1, -3, -p, -q, 0, 1)),
            ("Gu", (4, -1, -1, 1, 0, -4, 1, 1, -1, 0)),
            ("Hu", (5, 0, 0, -1, 1, -5, 0, 0, 1, -1)),
        ],
    )
    return tabs


TABLES = _tables()


def orbit(table, point, tol=1e-6):
    imgs = np.einsum("kij,j->ki", table.operations, np.asarray(point, dtype=float))
    keep = []
    for p in imgs:
        if not any(np.linalg.norm(p - k) < tol for k in keep):
            keep.append(p)
    return np.array(keep)


def build(table, seeds):
    """Positions (standard frame) and numbers from (Z, point) seeds, one orbit per seed."""
    pos, num = [], []
    for z, point in seeds:
        o = orbit(table, point)
        pos.append(o)
        num.extend([z] * len(o))
    return np.concatenate(pos), np.array(num, dtype=np.int64)


def permutations(ops, positions, center, tol=1e-4):
    tree = cKDTree(positions - center)
    moved = np.einsum("kij,nj->kni", ops, positions - center)
    dist, idx = tree.query(moved.reshape(-1, 3))
    assert dist.max() < tol, f"structure not symmetric: {dist.max()}"
    return idx.reshape(len(ops), -1).astype(np.int64)


def symmetry_data(
    table, positions, numbers, rotation=None, shift=(0.0, 0.0, 0.0), table_override=None
):
    """SymmetryData for a structure given in the standard frame, optionally rotated."""
    q = np.eye(3) if rotation is None else np.asarray(rotation)
    center = np.asarray(shift, dtype=float)
    pos_in = positions @ q.T + center
    ops_in = np.einsum("ia,kab,jb->kij", q, table.operations, q)
    perms = permutations(ops_in, pos_in, center)
    return SymmetryData(
        positions=pos_in,
        numbers=numbers,
        center=center,
        frame=q.T,
        operations=ops_in,
        permutations=perms,
        table=table if table_override is None else table_override,
        op_class=table.operation_class,
    )


def random_rotation(seed):
    return Rotation.random(random_state=seed).as_matrix()


def member_index(group, queries, tol=1e-9):
    """Index of each query matrix in ``group`` (an independent check, scipy's KD-tree).

    Raises AssertionError when a query is not (within ``tol``) an element of the group.
    """
    group = np.asarray(group, dtype=float).reshape(-1, 9)
    dist, idx = cKDTree(group).query(np.asarray(queries, dtype=float).reshape(-1, 9))
    assert dist.max() <= tol, f"a matrix is {dist.max():.3g} from every element"
    return idx
