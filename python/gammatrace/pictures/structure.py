"""The 3D view: a structure in its standard frame with one symmetry element per class of
operations, labelled with the classes, and legends for the elements and the atoms."""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from ..group.symmetry import as_symmetry
from ..io.elements import SYMBOLS, element_data
from ._figure import CLASS_COLOURS, atom_colour, new_figure, save
from .elements import representative_elements

if TYPE_CHECKING:  # pragma: no cover
    from ..group.symmetry import SymmetryData

__all__ = ["ELEMENT_CHOICES", "draw_symmetry"]

#: What ``draw_symmetry(elements=...)`` accepts.
ELEMENT_CHOICES = ("representatives", "all")

# bonds are drawn between atoms closer than the sum of their covalent radii plus this margin
# (Å; common practice for ball-and-stick pictures), for structures up to _BOND_LIMIT atoms
_BOND_MARGIN = 0.45
_BOND_LIMIT = 500
_LINE_STYLES = ("-", "--", "-.", ":")


def _in_plane_basis(normal: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Two unit vectors spanning the plane of ``normal``: the first as close to z as the
    plane allows (to x for a horizontal plane)."""
    for ref in (np.array([0.0, 0.0, 1.0]), np.array([1.0, 0.0, 0.0])):
        u = ref - (ref @ normal) * normal
        if np.linalg.norm(u) > 1e-3:
            u = u / np.linalg.norm(u)
            return u, np.cross(normal, u)
    raise AssertionError("a unit normal has a perpendicular among z and x")  # pragma: no cover


def _bonds(pos: np.ndarray, numbers: np.ndarray) -> np.ndarray:
    """Pairs (i, j), i < j, closer than r_i + r_j + margin (covalent radii)."""
    from scipy.spatial import cKDTree

    radii = element_data(numbers)[1]
    pairs = cKDTree(pos).query_pairs(2.0 * float(radii.max()) + _BOND_MARGIN, output_type="ndarray")
    if len(pairs) == 0:
        return pairs.reshape(0, 2)
    d = np.linalg.norm(pos[pairs[:, 0]] - pos[pairs[:, 1]], axis=1)
    return pairs[d < radii[pairs[:, 0]] + radii[pairs[:, 1]] + _BOND_MARGIN]


# candidate views (elevation, azimuth in degrees), the first preferred on ties
_VIEWS = tuple(
    (e, a) for e in (16.0, 26.0, 8.0) for a in (-58.0, -35.0, -75.0, -20.0, -100.0, -125.0)
)


def _best_view(reps) -> tuple[float, float]:
    """The view in which the drawn elements are seen best: the smallest angle between a
    drawn axis and the line of sight, and between a drawn plane and it, as large as can be."""

    def score(view):
        e, a = np.radians(view)
        sight = np.array([np.cos(e) * np.cos(a), np.cos(e) * np.sin(a), np.sin(e)])
        worst = 1.0
        for rep in reps:
            c = abs(float(rep.vector @ sight))
            if rep.kind == "axis":
                worst = min(worst, np.sqrt(max(0.0, 1.0 - c * c)))  # sin of the angle
            elif rep.kind == "plane":
                worst = min(worst, c)  # 0 when the plane is edge-on
        return round(worst, 3)

    return max(_VIEWS, key=lambda v: (score(v), -_VIEWS.index(v)))


# where a plane's label may go on its rim (radians from the in-plane direction nearest z)
_RIM_ANGLES = tuple(np.radians(a) for a in (40.0, 140.0, 90.0, 0.0, 180.0, 320.0, 220.0, 270.0))


def _free_spot(candidates: list, placed: list, span: float) -> np.ndarray:
    """The first candidate point as far from the labels already placed as any (within 5 %
    of the span); remembered in ``placed``."""

    def room(p):
        return min((float(np.linalg.norm(p - q)) for q in placed), default=np.inf)

    best = max(room(p) for p in candidates)
    spot = next(p for p in candidates if room(p) >= min(best, 0.6 * span) - 0.05 * span)
    placed.append(spot)
    return spot


def _disc(normal: np.ndarray, radius: float, n: int = 72) -> np.ndarray:
    u, v = _in_plane_basis(normal)
    t = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return radius * (np.cos(t)[:, None] * u + np.sin(t)[:, None] * v)


def draw_symmetry(
    sym: SymmetryData,
    path: str | os.PathLike | None = None,
    *,
    elements: str = "representatives",
    max_atoms: int = 5000,
    elev: float | None = None,
    azim: float | None = None,
) -> Any:
    """Draw the structure with one symmetry element per class of operations.

    The structure is drawn in its standard frame (``sym.frame``: z along the principal axis,
    at the centre of mass). Each class of the character table is shown at one of its
    elements — a rotation axis as a line, a mirror as a translucent disc, the inversion
    centre as a small open circle — labelled with the table's class labels; classes that
    share an element (2C6, 2C3 and C2 on the principal axis of D6h) share one line and one
    label. Each drawn element has its own colour, and two elements of the same kind and order
    (C2' and C2'', σv and σd) also differ in line style. Atoms are drawn over the elements,
    so an atom at the centre stays visible around the inversion mark. Legends list the
    elements (with how many the class has) and the atoms by element.

    Parameters
    ----------
    sym : SymmetryData or Analysis
    path : str or path-like, optional
        Write the picture there as a PNG.
    elements : {"representatives", "all"}
        ``"all"`` also draws every other element of each class, faint.
    max_atoms : int
        Structures with more atoms are drawn through a random subsample (fixed seed).
    elev, azim : float, optional
        Viewing angles in degrees (matplotlib's 3D view). By default, of a few views from
        slightly above, the one where no drawn axis points at the viewer and no drawn plane
        is seen edge-on.

    Returns
    -------
    matplotlib.figure.Figure
        Drawn artists carry a ``gid``: ``"element:<label>"`` for each labelled element,
        ``"axis:<label>"`` and ``"plane:<label>"`` for the drawn elements (``"other-axis:…"``,
        ``"other-plane:…"`` for the faint ones), ``"inversion"``,
        ``"atoms"``, ``"bonds"``, ``"element-legend"``, ``"atom-legend"`` and ``"title"``.

    Raises
    ------
    InputError
        When matplotlib is missing, ``elements`` is not one of the choices, or the file
        cannot be written.
    """
    if elements not in ELEMENT_CHOICES:
        raise InputError(f"elements: expected one of {ELEMENT_CHOICES}, received {elements!r}")
    sym = as_symmetry(sym)
    fig = new_figure(10.0, 7.0)
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch
    from mpl_toolkits.mplot3d.art3d import Line3DCollection, Poly3DCollection

    frame = np.asarray(sym.frame, dtype=np.float64)
    pos = (np.asarray(sym.positions) - np.asarray(sym.center)) @ frame.T
    nums = np.asarray(sym.numbers)
    if len(pos) > max_atoms:
        pick = np.sort(np.random.default_rng(0).choice(len(pos), max_atoms, replace=False))
        pos, nums = pos[pick], nums[pick]
    radius = max(float(np.linalg.norm(pos, axis=1).max()), 1.0)
    span = 1.3 * radius

    ax = fig.add_axes((0.0, 0.0, 0.66, 0.92), projection="3d")
    ax.computed_zorder = False  # atoms over planes and axes, whatever the depth
    reps = representative_elements(sym)
    handles, labels = [], []
    seen_styles: dict[tuple, int] = {}
    placed: list[np.ndarray] = []  # where labels went, so that the next ones keep away
    for k, rep in enumerate(reps):
        colour = "black" if rep.kind == "centre" else CLASS_COLOURS[k % len(CLASS_COLOURS)]
        style_key = (rep.kind, rep.order)
        style = _LINE_STYLES[seen_styles.get(style_key, 0) % len(_LINE_STYLES)]
        seen_styles[style_key] = seen_styles.get(style_key, 0) + 1
        if rep.kind == "plane":
            if elements == "all":
                for other in rep.others:
                    ghost = Poly3DCollection(
                        [_disc(other, 0.95 * span)],
                        facecolor=(*_rgb(colour), 0.03),
                        edgecolor=(*_rgb(colour), 0.25),
                        linewidths=0.6,
                        zorder=1,
                    )
                    ghost.set_gid(f"other-plane:{rep.text}")
                    ax.add_collection3d(ghost)
            disc = Poly3DCollection(
                [_disc(rep.vector, 0.95 * span)],
                facecolor=(*_rgb(colour), 0.13),
                edgecolor=colour,
                linewidths=1.6,
                linestyles=style,
                zorder=1,
            )
            disc.set_gid(f"plane:{rep.text}")
            ax.add_collection3d(disc)
            u, v = _in_plane_basis(rep.vector)
            rim = [0.97 * span * (np.cos(t) * u + np.sin(t) * v) for t in _RIM_ANGLES]
            at = _free_spot(rim, placed, span)
            ax.text(*at, rep.text, color=colour, fontsize=10, zorder=5, gid=f"element:{rep.text}")
            handles.append(
                Patch(facecolor=(*_rgb(colour), 0.25), edgecolor=colour, linestyle=style, lw=1.4)
            )
            noun = "mirror plane"
        elif rep.kind == "axis":
            if elements == "all":
                for other in rep.others:
                    p = np.outer([-span, span], other)
                    ax.plot(
                        *p.T,
                        color=colour,
                        lw=0.8,
                        alpha=0.35,
                        ls=style,
                        zorder=2,
                        gid=f"other-axis:{rep.text}",
                    )
            p = np.outer([-span, span], rep.vector)
            (line,) = ax.plot(*p.T, color=colour, lw=2.4, ls=style, zorder=2)
            line.set_gid(f"axis:{rep.text}")
            tip = _free_spot([1.06 * span * rep.vector, -1.06 * span * rep.vector], placed, span)
            ax.text(*tip, rep.text, color=colour, fontsize=10, zorder=5, gid=f"element:{rep.text}")
            handles.append(Line2D([], [], color=colour, lw=2.4, ls=style))
            noun = "rotation axis" if rep.order != 0 else "molecular axis"
        else:
            ax.scatter(
                [0.0],
                [0.0],
                [0.0],
                marker="o",
                s=26,
                facecolors="white",
                edgecolors="black",
                linewidths=1.2,
                zorder=4,
                depthshade=False,
                gid="inversion",
            )
            off = 0.07 * span
            ax.text(
                off,
                off,
                off,
                rep.text,
                color="black",
                fontsize=10,
                zorder=5,
                gid=f"element:{rep.text}",
            )
            handles.append(
                Line2D([], [], ls="", marker="o", mfc="white", mec="black", mew=1.2, ms=6)
            )
            noun = "inversion centre"
        if rep.count is None:
            what = f"{noun}, 1 of infinitely many"
        else:
            what = noun + (f", 1 of {rep.count}" if rep.count > 1 else "")
        sep = "\n    " if len(rep.text) + len(what) > 34 else ": "
        labels.append(f"{rep.text}{sep}{what}")

    # atoms and bonds, over the elements
    if len(pos) <= _BOND_LIMIT and len(pos) > 1:
        pairs = _bonds(pos, nums)
        if len(pairs):
            segs = np.stack([pos[pairs[:, 0]], pos[pairs[:, 1]]], axis=1)
            bonds = Line3DCollection(segs, colors="#6b6b6b", linewidths=1.6, zorder=3)
            bonds.set_gid("bonds")
            ax.add_collection3d(bonds)
    radii = element_data(nums)[1]
    per_angstrom = 330.0 / (2.0 * span)  # points per Å across the drawn box, roughly
    sizes = (0.42 * radii * per_angstrom) ** 2 if len(pos) <= _BOND_LIMIT else 6.0
    atoms = ax.scatter(
        pos[:, 0],
        pos[:, 1],
        pos[:, 2],
        c=[atom_colour(z) for z in nums],
        s=sizes,
        edgecolors="#202020",
        linewidths=0.4,
        depthshade=False,
        zorder=3.5,
    )
    atoms.set_gid("atoms")
    ax.set_box_aspect((1, 1, 1))
    ax.set_xlim(-span, span)
    ax.set_ylim(-span, span)
    ax.set_zlim(-span, span)
    ax.set_xlabel("x / Å")
    ax.set_ylabel("y / Å")
    ax.set_zlabel("z / Å")
    if elev is None or azim is None:
        best = _best_view(reps)
        elev = best[0] if elev is None else elev
        azim = best[1] if azim is None else azim
    ax.view_init(elev=elev, azim=azim)

    if handles:
        leg = fig.legend(
            handles,
            labels,
            loc="upper left",
            bbox_to_anchor=(0.64, 0.9),
            title="symmetry elements (one per class)",
            fontsize=9,
            title_fontsize=9,
            frameon=False,
        )
        leg.set_gid("element-legend")
    present = sorted(set(int(z) for z in np.asarray(sym.numbers)))
    n_of = {z: int(np.count_nonzero(np.asarray(sym.numbers) == z)) for z in present}
    atom_handles = [
        Line2D([], [], ls="", marker="o", mfc=atom_colour(z), mec="#202020", ms=8) for z in present
    ]
    atom_leg = fig.legend(
        atom_handles,
        [f"{SYMBOLS[z] if 0 < z < len(SYMBOLS) else z} × {n_of[z]}" for z in present],
        loc="lower left",
        bbox_to_anchor=(0.64, 0.06),
        title="atoms",
        fontsize=9,
        title_fontsize=9,
        frameon=False,
        ncols=1 if len(present) <= 8 else 2,
    )
    atom_leg.set_gid("atom-legend")
    what = (
        "all elements, one per class highlighted" if elements == "all" else "one element per class"
    )
    if getattr(sym.table, "is_spherical", False):
        what = "a single atom: every line through it is a rotation axis, every plane a mirror"
    fig.suptitle(f"{sym.point_group}: {what}", fontsize=12, gid="title")
    fig.text(0.33, 0.925, "standard frame, z along the principal axis", ha="center", fontsize=9)
    save(fig, path)
    return fig


def _rgb(colour: str) -> tuple:
    from matplotlib.colors import to_rgb

    return to_rgb(colour)
