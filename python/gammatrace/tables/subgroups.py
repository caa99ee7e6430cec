"""Subgroups of a point group and the correlation of irreps into them.

``subgroups(G)`` enumerates every subgroup of G's canonical operations (joins of cyclic
subgroups, closed by the core's ``GroupData.closure``), keeps one per conjugacy class within
G, names each with the core's namer (``identify_group``) and finds its standard frame: the
rotation F (rows = the subgroup's standard x, y, z written in G's standard frame) such
that F·S·Fᵀ is exactly the subgroup's canonical operation set. Where the orientation
rules of DEVELOPERS.md leave a choice that atom counts would settle (which C2 is z in D2h,
σv or σd in C2nv, C2' or C2'' in D2nh, …), every valid frame is found.

``correlate(G, H)`` gives one entry per conjugacy class of subgroups H in G: it restricts
G's characters to the subgroup, assigns the operations to H's classes with
``H.locate_classes`` in H's own standard frame and reduces them. One subgroup may have
several standard frames (which C2 pair is C2' in D4h, which mirror is σv(xz) in C2v, which
axis is z in D2h): they differ by an automorphism of H, which permutes H's classes and so
relabels its irreps, never by what the subgroup is. The entry gives the correlation in the
first frame (keeping G's z, then x axis, as printed correlation tables orient the subgroup)
and lists each other naming that changes the labels as a note with its relabelling
(``other_namings``). Subgroups that are not conjugate in G stay separate entries (D3h in
D6h through C2' or through C2''). Entries come first when they keep G's z axis, then when
more of their axes lie along G's axes.

Linear groups: C∞v and D∞h are represented by C_Mv and D_Mh (M even for D∞h, so that i is
present) with M the smallest suitable multiple of the subgroup's axis order that is ≥ 13,
and the irreps with |m| ≤ 6 are reported with their linear labels. ``subgroups`` of a
linear group lists those of C12v / D12h (principal axes of order dividing 12).

K_h: every point group is a subgroup of O(3), and all copies of one point group are
conjugate in it, so ``correlate("K_h", H)`` has one embedding for every H; the characters of
its irreps on H's classes come from the rotation angle of each class's proper part
(``spherical.spherical_characters``, times −1 on improper classes for u). ``subgroups`` of
K_h is refused (there are infinitely many).

Enumeration is limited to groups of order ≤ ``MAX_ORDER``.
"""

from __future__ import annotations

from functools import cache
from typing import NamedTuple

import numpy as np

from .. import _core
from ..errors import ReductionError, TableError
from ..render import write_html, write_latex, write_markdown
from ..render.tables import correlation_grid
from ._ops import canonical_group, contains_all, describe, fraction_of_turn, multiplication_table
from .linear import linear_class_label
from .names import parse_group_name
from .registry import get_table
from .spherical import L_LETTERS, spherical_characters

__all__ = [
    "MAX_ORDER",
    "Correlation",
    "SubgroupEmbedding",
    "correlate",
    "embedding_namings",
    "identify_group",
    "subgroups",
]

#: Largest group order whose subgroups are enumerated.
MAX_ORDER = 240


class Correlation(dict):
    """The result of :func:`correlate`: the INTERFACE.md ``correlate`` dict itself (``group``,
    ``subgroup``, ``embeddings``; equal to, and serialised as, a plain dict), with a display.

    :meth:`to_markdown` and :meth:`to_latex` write it as a correlation table (the group's
    irreps down, one column per embedding; ``gammatrace.render.correlation_markdown`` does the
    same for a plain dict); notebooks show it as an HTML table.
    """

    __slots__ = ()

    def to_markdown(self) -> str:
        """The correlation table as Markdown, descriptions and other namings as notes."""
        return write_markdown([correlation_grid(self)])

    def to_latex(self, document: bool = False) -> str:
        """The correlation table as LaTeX: a fragment, or a whole ``article`` (``document``)."""
        return write_latex([correlation_grid(self)], document=document)

    def _repr_html_(self) -> str:
        return write_html([correlation_grid(self)])

    def _repr_markdown_(self) -> str:
        return self.to_markdown()


_TOL = 1e-6


class SubgroupEmbedding(NamedTuple):
    """One subgroup of a parent group, up to conjugacy within the parent.

    Attributes
    ----------
    name : str
        Schoenflies name of the subgroup.
    description : str
        Which axes and planes are kept, in words.
    op_indices : numpy.ndarray of int or None
        Indices into the parent's canonical operations (None for linear parents, whose
        subgroups live in a larger finite representative than ``operations``).
    rotation : numpy.ndarray, shape (3, 3)
        Rows are the subgroup's standard x, y, z in the parent's standard frame:
        ``rotation @ R @ rotation.T`` is a parent operation R in the subgroup's frame.
    operations : numpy.ndarray, shape (k, 3, 3)
        The subgroup's operations in the parent's standard frame.
    """

    name: str
    description: str
    op_indices: np.ndarray | None
    rotation: np.ndarray
    operations: np.ndarray


# --- enumeration -------------------------------------------------------------------------


def _closure(group, gens) -> np.ndarray:
    """Sorted indices of the subgroup of ``group`` (the core's ``GroupData``) generated by
    ``gens``: the core's closure, the one the namer and detection rely on."""
    return group.closure(np.asarray(gens, dtype=np.int64))


def _enumerate(name: str):
    """Representatives of the conjugacy classes of subgroups, as sorted index arrays.

    Every subgroup is a join of cyclic subgroups, so joins are taken breadth-first from
    the cyclic ones until no new subgroup appears.
    """
    group = canonical_group(name)
    table, inv = multiplication_table(name)
    h = len(table)
    conj = table[table, inv[:, None]]  # conj[g, x] = index of g x g⁻¹
    cyclic = {}
    for g in range(h):
        c = _closure(group, [g])
        cyclic.setdefault(c.tobytes(), (c, [g]))
    found = dict(cyclic)
    frontier = list(cyclic.values())
    cyc = list(cyclic.values())
    while frontier:
        nxt = []
        for s, gens in frontier:
            members = np.zeros(h, dtype=bool)
            members[s] = True
            for _c, (g,) in cyc:
                if members[g]:
                    continue
                t = _closure(group, [*gens, g])
                key = t.tobytes()
                if key not in found:
                    found[key] = (t, [*gens, g])
                    nxt.append(found[key])
        frontier = nxt
    # One representative per conjugacy class within the group.
    reps, seen = [], set()
    for s, _ in sorted(found.values(), key=lambda a: (-len(a[0]), a[0].tolist())):
        if s.tobytes() in seen:
            continue
        for g in range(h):
            seen.add(np.sort(conj[g, s]).tobytes())
        reps.append(s)
    return reps


# --- identification ----------------------------------------------------------------------


def _axes(dirs: np.ndarray):
    """Cluster directions (up to sign); returns representative unit vectors and labels."""
    reps, labels = [], np.empty(len(dirs), dtype=np.int64)
    for j, d in enumerate(dirs):
        for k, r in enumerate(reps):
            if abs(abs(d @ r) - 1.0) < 1e-6:
                labels[j] = k
                break
        else:
            labels[j] = len(reps)
            reps.append(d)
    return np.array(reps).reshape(-1, 3), labels


def _order(angle_deg: float) -> int:
    return fraction_of_turn(angle_deg, 4000).denominator


def identify_group(ops: np.ndarray) -> str:
    """Schoenflies name of a finite set of operations closed under multiplication.

    The core names it (``_core.identify_group``), with the code that names detected groups.

    Parameters
    ----------
    ops : numpy.ndarray, shape (h, 3, 3)
        Orthogonal matrices, each element once.

    Returns
    -------
    str

    Raises
    ------
    InputError
        If the matrices are not orthogonal or do not form a group (entry-wise within 1e-6).
    """
    ops = np.ascontiguousarray(np.asarray(ops, dtype=np.float64).reshape(-1, 3, 3))
    return _core.identify_group(ops)


def _frames(name: str, ops: np.ndarray, sub_table):
    """Every proper rotation F taking ``ops`` onto the canonical set of ``name``.

    Sorted so that frames keeping the parent's z (then x, then y) axis come first.
    """
    parent_axes = np.eye(3)
    if name in ("C1", "Ci"):
        return [np.eye(3)]
    proper, angle, axis = describe(ops)
    rot = proper & (angle > 1e-6)
    mirrors = ~proper & (angle < 1e-6)
    if name == "Cs":
        z_dirs = axis[mirrors]
    elif name in ("O", "Oh"):
        z_dirs = axis[rot & (np.abs(angle - 90.0) < 1e-6)]
    elif name == "D2d":
        z_dirs = axis[~proper & (np.abs(angle - 90.0) < 1e-6)]
    elif name in ("T", "Th", "Td", "I", "Ih", "D2", "D2h"):
        z_dirs = axis[rot & (np.abs(angle - 180.0) < 1e-6)]
    else:  # axial: the unique axis of highest order
        order = np.array([_order(t) if r else 0 for r, t in zip(rot, angle)])
        z_dirs = axis[order == order.max()]
    z_dirs, _ = _axes(z_dirs)
    cand = [axis[rot], axis[mirrors]]
    for z in z_dirs:  # in-plane directions of mirrors containing z
        m = axis[mirrors]
        cand.append(np.cross(z, m))
    cand = np.concatenate([c.reshape(-1, 3) for c in cand])
    cand = cand[np.linalg.norm(cand, axis=1) > 1e-6]
    cand = cand / np.linalg.norm(cand, axis=1)[:, None]
    x_all, _ = _axes(cand) if len(cand) else (np.zeros((0, 3)), None)
    target = sub_table.operations
    frames = []
    for z0 in z_dirs:
        for z in (z0, -z0):
            xs = [x for x in x_all if abs(x @ z) < 1e-6]
            if not xs:  # rotation about z leaves the set unchanged: pick a direction
                ref = parent_axes[0] if abs(parent_axes[0] @ z) < 0.9 else parent_axes[1]
                x = ref - (ref @ z) * z
                xs = [x / np.linalg.norm(x)]
            for x0 in xs:
                for x in (x0, -x0):
                    f = np.array([x, np.cross(z, x), z])
                    moved = f @ ops @ f.T
                    if contains_all(target, moved):
                        frames.append(f)
    unique = []
    for f in frames:
        if not any(np.abs(f - u).max() < 1e-9 for u in unique):
            unique.append(f)
    unique.sort(key=_frame_key)
    return unique


def _entry_key(f: np.ndarray) -> tuple:
    """Sort key of a subgroup by its first frame: z kept, then axes along parent axes."""
    along = int((np.abs(f).max(axis=1) > 1 - 1e-9).sum())
    return (-round(f[2, 2], 6), -along)


def _frame_key(f: np.ndarray) -> tuple:
    """Sort key of a frame: keeping the parent's z, then x, then y axis comes first."""
    return (-round(f[2, 2], 6), -round(f[0, 0], 6), -round(f[1, 1], 6))


# --- public functions --------------------------------------------------------------------


def _linear_representative(name: str, n_axis: int = 12, min_m: int = 0):
    """Finite table standing for C∞v / D∞h: C_Mv or D_Mh, M a multiple of n_axis, M ≥ min_m.

    M is even for D∞h so that D_Mh holds the inversion.
    """
    m = n_axis
    if name == "D∞h" and m % 2:
        m *= 2
    while m < min_m:
        m *= 2
    return get_table(f"C{m}v" if name == "C∞v" else f"D{m}h")


@cache
def _parent_subgroups(name: str):
    parent = get_table(name)
    finite = _linear_representative(name) if parent.is_linear else parent
    if len(finite.operations) > MAX_ORDER:
        raise TableError(
            f"subgroups of {name} (order {len(finite.operations)}) are not enumerated: "
            f"the limit is order {MAX_ORDER}"
        )
    out = []
    for idx in _enumerate(finite.name):
        ops = finite.operations[idx]
        sub_name = identify_group(ops)
        frames = _frames(sub_name, ops, get_table(sub_name))
        if not frames:
            raise RuntimeError(f"internal: no standard frame for {sub_name} in {name}")
        out.append((sub_name, idx, frames, finite))
    return out


def _parent_label(parent_tab, parent_name: str, j: int) -> str:
    """A parent class's label; for a linear parent, as its own table prints it."""
    info = parent_tab.classes[j]
    return linear_class_label(info) if parent_name in ("C∞v", "D∞h") else info.label


def _class_map(parent_tab, sub_tab, idx, frame, parent_name: str) -> str:
    """'2C3 ⊂ 8C3; 3σv ⊂ 6σd': which parent classes each subgroup class comes from."""
    moved = frame @ parent_tab.operations[idx] @ frame.T
    sub_cls = sub_tab.locate_classes(moved)
    par_cls = parent_tab.operation_class[idx]
    parts = []
    for c, info in enumerate(sub_tab.classes):
        if info.label == "E":
            continue
        src = sorted(set(par_cls[sub_cls == c].tolist()))
        names = dict.fromkeys(_parent_label(parent_tab, parent_name, j) for j in src)
        parts.append(f"{info.label} from {', '.join(names)}")
    return "; ".join(parts)


def _z_words(parent_tab, frame, parent_name: str) -> str:
    z = frame[2]
    if abs(abs(z[2]) - 1.0) < 1e-6:
        return "z along the parent's z axis"
    proper, angle, axis = describe(parent_tab.operations)
    along = (np.abs(axis @ z) > 1 - 1e-6) & (angle > 1e-6) & proper
    if along.any():
        best = int(np.flatnonzero(along)[np.argmin(angle[along])])
        label = _parent_label(parent_tab, parent_name, parent_tab.operation_class[best])
        label = label.lstrip("0123456789")
        return f"z along a {label} axis of the parent"
    return "z along a mirror normal of the parent"


def _describe(parent_name, parent_tab, sub_name, sub_tab, idx, frame, merged: bool) -> str:
    text = f"{sub_name} with {_z_words(parent_tab, frame, parent_name)}"
    classes = _class_map(parent_tab, sub_tab, idx, frame, parent_name)
    if classes:
        text += f"; classes from {parent_name}: {classes}"
    if merged:
        text += " (other choices of the subgroup's axes give the same correlation)"
    return text


def subgroups(group_name: str) -> list[SubgroupEmbedding]:
    """Every subgroup of a point group, one per conjugacy class within the group.

    Parameters
    ----------
    group_name : str
        Point-group name (see :func:`gammatrace.tables.parse_group_name`).

    Returns
    -------
    list of SubgroupEmbedding
        Largest first. Each comes with one standard frame (the first in the order
        "keeps the parent's z, then x"); :func:`correlate` lists the others where they
        change the correlation.

    Raises
    ------
    TableError
        Bad name, or a group above ``MAX_ORDER`` operations.

    Examples
    --------
    >>> sorted({s.name for s in subgroups("C3v")})
    ['C1', 'C3', 'C3v', 'Cs']
    """
    parent = get_table(group_name)
    if parent.is_spherical:
        raise TableError(
            f"{parent.name} has infinitely many subgroups (every point group, each in "
            "every orientation): correlate it with a named group instead"
        )
    out = []
    for sub_name, idx, frames, finite in _parent_subgroups(parent.name):
        sub_tab = get_table(sub_name)
        desc = _describe(parent.name, finite, sub_name, sub_tab, idx, frames[0], False)
        out.append(
            SubgroupEmbedding(
                name=sub_name,
                description=desc,
                op_indices=None if parent.is_linear else idx.copy(),
                rotation=frames[0].copy(),
                operations=finite.operations[idx].copy(),
            )
        )
    return out


def _restrict(parent_tab, sub_tab, idx, frame) -> np.ndarray:
    """Characters of every parent irrep on the subgroup's classes, (n_irreps, n_sub_classes)."""
    moved = frame @ parent_tab.operations[idx] @ frame.T
    sub_cls = sub_tab.locate_classes(moved)
    chars = parent_tab.character_matrix[:, parent_tab.operation_class[idx]]
    out = np.zeros((chars.shape[0], len(sub_tab.classes)))
    for c in range(len(sub_tab.classes)):
        block = chars[:, sub_cls == c]
        if np.ptp(block, axis=1).max() > 1e-8:
            raise RuntimeError("internal: restricted characters are not class functions")
        out[:, c] = block[:, 0]
    return out


def _linear_rows(parent_name: str, finite):
    """Rows of the finite representative that carry linear labels: {label: row index}."""
    labels = [ir.label for ir in get_table(parent_name).irreps]
    cls = finite.classes
    c_min = next(j for j, c in enumerate(cls) if c.proper and c.angle > 0)  # C_M
    m_total = round(360.0 / cls[c_min].angle)
    vert = next(j for j, c in enumerate(cls) if not c.proper and c.angle == 0 and c.size > 1)
    inv = next((j for j, c in enumerate(cls) if c.label == "i"), None)
    greek = ("Π", "Δ", "Φ", "Γ", "H", "I")
    rows = {}
    for r, ir in enumerate(finite.irreps):
        chi = ir.characters
        parity = "" if inv is None else ("g" if chi[inv] > 0 else "u")
        if ir.dim == 1:
            if chi[c_min] < 0:
                continue  # B irreps: |m| = M/2 > 6
            lab = f"Σ{parity}{'+' if chi[vert] > 0 else '-'}"
        else:
            k = round(np.degrees(np.arccos(np.clip(chi[c_min] / 2, -1, 1))) * m_total / 360.0)
            if k > len(greek):
                continue
            lab = greek[k - 1] + parity
        rows[lab] = r
    return [(lab, rows[lab]) for lab in labels if lab in rows]


def correlate(group_name: str, subgroup_name: str) -> Correlation:
    """How the irreps of a group split in a subgroup, per inequivalent embedding.

    Parameters
    ----------
    group_name, subgroup_name : str
        Point-group names.

    Returns
    -------
    Correlation
        A dict, the INTERFACE.md ``correlate`` object: ``group``, ``subgroup`` and
        ``embeddings``, one per conjugacy class of such subgroups in the group, each with
        ``description``, ``correlation`` (every irrep of the group -> the subgroup irreps
        it contains) and ``other_namings``: for each other standard frame of the same
        subgroup that changes the labels, ``{"note", "relabel"}``, ``relabel`` mapping
        subgroup labels to the labels they take in that naming (fixed ones left out).

    Raises
    ------
    TableError
        Bad names, or SUBGROUP is not a subgroup of GROUP (the message lists the
        subgroups that are).

    Examples
    --------
    >>> correlate("C3v", "Cs")["embeddings"][0]["correlation"]["E"]
    {"A'": 1, "A''": 1}
    """
    parent = get_table(group_name)
    sub = get_table(subgroup_name)
    if parent.is_spherical:
        return Correlation(_correlate_spherical(parent, sub))
    if parent.is_linear:
        parsed = parse_group_name(sub.name)
        n_axis = parsed.n or 1
        if parsed.family == "S":
            n_axis = parsed.n
        # Irreps up to |m| = 6 need M ≥ 13.
        finite = _linear_representative(parent.name, max(n_axis, 1), min_m=13)
        candidates = [(s, i, f) for s, i, f, _ in _parent_subgroups(finite.name) if s == sub.name]
        rows = _linear_rows(parent.name, finite)
    else:
        finite = parent
        candidates = [(s, i, f) for s, i, f, _ in _parent_subgroups(parent.name) if s == sub.name]
        rows = [(ir.label, r) for r, ir in enumerate(parent.irreps)]
    if not candidates:
        names = sorted({s.name for s in subgroups(parent.name)}, key=_name_key)
        raise TableError(
            f"{sub.name} is not a subgroup of {parent.name}; its subgroups are {', '.join(names)}"
        )
    # as printed tables list them: subgroups keeping the parent's z axis first, then those
    # whose axes lie along more of the parent's axes (stable: enumeration order otherwise)
    candidates.sort(key=lambda c: _entry_key(c[2][0]))
    embeddings, seen = [], set()
    for _, idx, frames in candidates:
        corrs = [_correlation(finite, sub, idx, f, rows, parent.name) for f in frames]
        keys = [repr(c) for c in corrs]
        if parent.is_linear and keys[0] in seen:
            continue  # conjugate in the infinite group (a rotation about z)
        seen.update(keys)
        same = [f for f, k in zip(frames, keys) if k == keys[0]]
        desc = _describe(parent.name, finite, sub.name, sub, idx, frames[0], _n_choices(same) > 1)
        namings, done = [], {keys[0]}
        for f, k, corr in zip(frames, keys, corrs):
            if k in done:
                continue
            done.add(k)
            namings.append(
                _other_naming(parent.name, finite, sub, idx, frames[0], f, corrs[0], corr)
            )
        embeddings.append({"description": desc, "correlation": corrs[0], "other_namings": namings})
    return Correlation(group=parent.name, subgroup=sub.name, embeddings=embeddings)


def _correlation(finite, sub, idx, frame, rows, parent_name: str) -> dict:
    """Each parent irrep -> the subgroup irreps it contains, the subgroup in ``frame``."""
    restricted = _restrict(finite, sub, idx, frame)
    try:
        counts = sub.reduce_many(restricted[[r for _, r in rows]])
    except ReductionError as exc:  # a restriction is a representation: never expected
        raise RuntimeError(f"internal: {parent_name} restricted to {sub.name}: {exc}") from None
    labels = sub.labels
    return {
        lab: {labels[j]: int(n) for j, n in enumerate(row) if n}
        for (lab, _), row in zip(rows, counts)
    }


def _sources(parent_tab, sub_tab, idx, frame, parent_name: str) -> dict:
    """Subgroup class label -> the parent class labels its operations come from."""
    moved = frame @ parent_tab.operations[idx] @ frame.T
    sub_cls = sub_tab.locate_classes(moved)
    par_cls = parent_tab.operation_class[idx]
    return {
        info.label: tuple(
            dict.fromkeys(
                _parent_label(parent_tab, parent_name, j)
                for j in sorted(set(par_cls[sub_cls == c].tolist()))
            )
        )
        for c, info in enumerate(sub_tab.classes)
    }


def _class_permutation(sub_tab, idx, parent_tab, first, other) -> np.ndarray:
    """σ with σ[c] = the class, in the frame ``other``, of the operations of class c in the
    frame ``first`` (an automorphism of the subgroup permuting its classes)."""
    ops = parent_tab.operations[idx]
    a = sub_tab.locate_classes(first @ ops @ first.T)
    b = sub_tab.locate_classes(other @ ops @ other.T)
    sigma = np.full(len(sub_tab.classes), -1, dtype=np.int64)
    for c in range(len(sub_tab.classes)):
        image = np.unique(b[a == c])
        if len(image) != 1:
            raise RuntimeError("internal: two frames of one subgroup do not map class to class")
        sigma[c] = image[0]
    if sorted(sigma.tolist()) != list(range(len(sigma))):
        raise RuntimeError("internal: two frames of one subgroup do not permute its classes")
    return sigma


def _cycles(perm: dict) -> str:
    """'B1g ↔ B2g, B1u ↔ B2u' or 'B1g → B2g → B3g → B1g' for a relabelling."""
    out, done = [], set()
    for start in perm:
        if start in done:
            continue
        cycle = [start]
        while perm[cycle[-1]] != start:
            cycle.append(perm[cycle[-1]])
        done.update(cycle)
        if len(cycle) == 2:
            out.append(f"{cycle[0]} ↔ {cycle[1]}")
        else:
            out.append(" → ".join([*cycle, start]))
    return ", ".join(out)


def _other_naming(parent_name, finite, sub, idx, first, other, corr, other_corr) -> dict:
    """Another standard frame of the same subgroup: which labels it changes.

    The two frames differ by an automorphism of the subgroup (the naming of C2'/C2'',
    σv/σd, the axes of D2h, …), which permutes its classes by σ and so its irreps by π with
    χ_π(i)(σ(c)) = χ_i(c); the correlation in the other frame is the first one with every
    subgroup label i read as π(i). Returns ``{"note", "relabel"}`` (π without fixed labels).
    """
    sigma = _class_permutation(sub, idx, finite, first, other)
    chars = sub.character_matrix
    moved = np.empty_like(chars)
    moved[:, sigma] = chars  # moved[i] = χ_i ∘ σ⁻¹
    relabel = {}
    for i, row in enumerate(moved):
        hit = np.flatnonzero(np.abs(chars - row).max(axis=1) < 1e-8)
        if len(hit) != 1:
            raise RuntimeError("internal: a class permutation does not permute the irreps")
        if hit[0] != i:
            relabel[sub.irreps[i].label] = sub.irreps[int(hit[0])].label
    renamed = {lab: {relabel.get(k, k): v for k, v in parts.items()} for lab, parts in corr.items()}
    renamed = {
        lab: {k: parts[k] for k in sub.labels if k in parts} for lab, parts in renamed.items()
    }
    if renamed != other_corr:
        raise RuntimeError("internal: another frame's correlation is not a relabelling")
    a = _sources(finite, sub, idx, first, parent_name)
    b = _sources(finite, sub, idx, other, parent_name)
    changed = [f"{lab} from {', '.join(b[lab])}" for lab in b if b[lab] != a[lab]]
    if changed:
        how = f"naming its classes {'; '.join(changed)}"
    else:
        how = f"another choice of its axes ({_z_words(finite, other, parent_name)})"
    note = f"{how} instead relabels the {sub.name} irreps: {_cycles(relabel)}"
    return {"note": note, "relabel": relabel}


def embedding_namings(embedding: dict) -> list[tuple[dict, str]]:
    """Every naming of one ``correlate`` entry: (correlation, note), its own naming first.

    The first item is the entry's ``correlation`` with an empty note; then one per item of
    ``other_namings``: the correlation with the subgroup labels read through its
    ``relabel``, and its ``note``. For matching a correlation found by other means (the
    operations of a structure, named in the structure's own frame) against the entry.

    Examples
    --------
    >>> entry = correlate("Oh", "D4h")["embeddings"][0]
    >>> [named["A2g"] for named, _ in embedding_namings(entry)]
    [{'B1g': 1}, {'B2g': 1}]
    """
    out = [(embedding["correlation"], "")]
    for other in embedding.get("other_namings", []):
        relabel = other["relabel"]
        named = {
            label: {relabel.get(k, k): v for k, v in parts.items()}
            for label, parts in embedding["correlation"].items()
        }
        out.append((named, other["note"]))
    return out


def _correlate_spherical(parent, sub) -> dict:
    """K_h into any point group: χ_l on the rotation angle of each class's proper part."""
    theta = np.array([c.angle if c.proper else 180.0 - c.angle for c in sub.classes])
    improper = np.array([not c.proper for c in sub.classes])
    corr = {}
    for ir in parent.irreps:
        chi = spherical_characters(L_LETTERS.index(ir.label[0]), theta)
        if ir.label.endswith("u"):
            chi = np.where(improper, -chi, chi)
        corr[ir.label] = sub.reduce(chi, what=f"{ir.label} of {parent.name}")
    desc = (
        f"{sub.name} in any orientation (all copies of {sub.name} are conjugate in {parent.name})"
    )
    return {
        "group": parent.name,
        "subgroup": sub.name,
        "embeddings": [{"description": desc, "correlation": corr, "other_namings": []}],
    }


def _line(v: np.ndarray) -> tuple:
    """A direction up to sign, as a hashable key."""
    j = int(np.argmax(np.abs(v) > 1e-6))
    return tuple(np.round(v * np.sign(v[j]), 6) + 0.0)


def _n_choices(frames) -> int:
    """Number of frames that differ by more than the signs of their axes."""
    return len({(_line(f[2]), _line(f[0])) for f in frames})


def _name_key(name: str):
    t = get_table(name)
    return (-len(t.operations), name)
