"""The stereographic projection of a point group: its symmetry elements and the orbit of a
general position, in the symbols of the crystallographic standard."""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from ..group.symmetry import as_symmetry
from ._figure import CLASS_COLOURS, new_figure, save
from .elements import _class_elements, axis_lines, representative_elements

if TYPE_CHECKING:  # pragma: no cover
    from ..group.symmetry import SymmetryData

__all__ = ["draw_stereogram", "general_position", "project"]

# symbol sizes in units of the primitive circle's radius
_POLYGON = 0.048  # circumradius of the filled n-gon
_OUTER = 0.074  # circumradius of the open 2n-gon around it (rotoinversion without i)
_LENS = (0.062, 0.027)  # half-length, half-width of the two-fold lens
_HOLE = 0.015  # radius of the small open circle (the inversion on the axis)

# candidate general positions: polar angle from z, azimuth from x (degrees, standard frame)
_CANDIDATES = ((38.0, 21.0), (52.0, 11.0), (27.0, 34.0), (63.0, 7.0), (44.0, 29.0), (33.0, 13.0))


def project(points: Any) -> tuple[np.ndarray, np.ndarray]:
    """Stereographic projection onto the equatorial plane (unit primitive circle).

    A point of the upper hemisphere (z ≥ 0) is projected from the south pole,
    (x, y) / (1 + z); one of the lower hemisphere from the north pole, (x, y) / (1 − z), so
    both land inside the primitive circle (common practice of crystallographic stereograms).

    Parameters
    ----------
    points : array_like, shape (k, 3)
        Directions (normalised here).

    Returns
    -------
    xy : numpy.ndarray, shape (k, 2)
    upper : numpy.ndarray of bool, shape (k,)
        True for z > 0.

    Examples
    --------
    >>> xy, upper = project([[0, 0, 1], [1, 0, 0], [0, 0, -1]])
    >>> xy.round(6).tolist(), upper.tolist()
    ([[0.0, 0.0], [1.0, 0.0], [0.0, 0.0]], [True, False, False])
    """
    p = np.asarray(points, dtype=np.float64).reshape(-1, 3)
    p = p / np.linalg.norm(p, axis=1, keepdims=True)
    z = p[:, 2]
    upper = z > 0
    return p[:, :2] / (1.0 + np.abs(z))[:, None], upper


def _standard_operations(sym) -> np.ndarray:
    frame = np.asarray(sym.frame, dtype=np.float64)
    return np.einsum("ij,kjl,ml->kim", frame, np.asarray(sym.operations), frame)


def general_position(sym: SymmetryData) -> np.ndarray:
    """The orbit of a general position: every operation applied to one unit vector that lies
    on no symmetry element (standard frame), one row per operation.

    The point is the first of a few fixed directions whose h images are all distinct and away
    from the equator; the one whose images lie farthest apart when none is.

    Parameters
    ----------
    sym : SymmetryData or Analysis

    Returns
    -------
    numpy.ndarray, shape (h, 3)
    """
    from scipy.spatial import cKDTree

    sym = as_symmetry(sym)
    ops = _standard_operations(sym)
    best, best_score = None, -1.0
    for theta, phi in _CANDIDATES:
        t, f = np.radians(theta), np.radians(phi)
        g = np.array([np.sin(t) * np.cos(f), np.sin(t) * np.sin(f), np.cos(t)])
        images = ops @ g
        if len(images) > 1:
            d, _ = cKDTree(images).query(images, k=2)
            spread = float(d[:, 1].min())
        else:
            spread = 1.0
        score = min(spread, 4.0 * float(np.abs(images[:, 2]).min()))
        if score > best_score:
            best, best_score = images, score
        if score > 0.05:
            break
    return best


def _refuse(sym) -> None:
    if getattr(sym.table, "is_spherical", False):
        raise InputError(
            "stereogram: K_h (a single atom) has every line through the atom as a rotation "
            "axis and every plane through it as a mirror; there is nothing to project"
        )
    if sym.is_linear:
        raise InputError(
            f"stereogram: {sym.point_group} is an infinite group (the molecular axis is C∞ and "
            "every plane through it a mirror); the general position's orbit is a circle, not "
            "points. Stereograms are drawn for finite point groups; draw_symmetry shows the "
            "elements of a linear molecule"
        )


def _polygon(n: int, radius: float, angle: float) -> np.ndarray:
    """A regular n-gon (n ≥ 3) with one edge facing the direction ``angle`` (radians)."""
    t = angle + np.pi / n + 2.0 * np.pi * np.arange(n) / n
    return radius * np.column_stack([np.cos(t), np.sin(t)])


def _lens(angle: float, half_length: float, half_width: float, k: int = 14) -> np.ndarray:
    """The two-fold symbol: two circular arcs meeting in points at ±half_length along
    ``angle`` (radians)."""
    a, b = half_length, half_width
    r = (a * a + b * b) / (2.0 * b)  # circle through (±a, 0) and (0, b)
    t0 = np.arcsin(a / r)
    t = np.linspace(-t0, t0, k)
    upper = np.column_stack([r * np.sin(t), r * np.cos(t) - (r - b)])
    shape = np.vstack([upper, -upper[1:-1]])
    c, s = np.cos(angle), np.sin(angle)
    return shape @ np.array([[c, s], [-s, c]])


def _filled(n: int, angle: float, scale: float = 1.0) -> np.ndarray:
    if n == 2:
        return _lens(angle, _LENS[0] * scale, _LENS[1] * scale)
    return _polygon(n, _POLYGON * scale, angle)


def _symbol_patches(line, at: np.ndarray, colour: str) -> list:
    """The patches of one axis symbol at ``at``: [open 2n-gon], filled n-gon, [small circle]."""
    from matplotlib.patches import Circle, Polygon

    angle = float(np.arctan2(at[1], at[0])) if np.hypot(*at) > 1e-9 else 0.0
    gid = f"axis:{line.symbol}"
    out = []
    if line.improper and not line.inversion:
        out.append(
            Polygon(
                at + _polygon(2 * line.order, _OUTER, angle),
                closed=True,
                facecolor="white",
                edgecolor="black",
                lw=1.0,
                zorder=4,
            )
        )
    out.append(
        Polygon(
            at + _filled(line.order, angle),
            closed=True,
            facecolor=colour,
            edgecolor="black",
            lw=0.8,
            zorder=5,
            gid=gid,
        )
    )
    if line.inversion:
        out.append(Circle(at, _HOLE, facecolor="white", edgecolor="black", lw=0.8, zorder=6))
    return out


def _great_circle(normal: np.ndarray, k: int = 181) -> np.ndarray:
    """The projected upper half of the great circle of the plane with this normal."""
    u = np.cross([0.0, 0.0, 1.0], normal)
    u = u / np.linalg.norm(u)
    v = np.cross(normal, u)
    v = v if v[2] >= 0 else -v
    t = np.linspace(0.0, np.pi, k)
    xy, _ = project(np.cos(t)[:, None] * u + np.sin(t)[:, None] * v)
    return xy


def _marker(vertices: np.ndarray) -> Any:
    from matplotlib.path import Path

    v = vertices / np.abs(vertices).max()
    return Path(np.vstack([v, v[:1]]), closed=True)


def draw_stereogram(sym: SymmetryData, path: str | os.PathLike | None = None) -> Any:
    """Stereographic projection of the symmetry elements and of a general position.

    The view looks down the standard z axis (``sym.frame``; the principal axis at the
    centre, x to the right, y up); the primitive circle is the equator. The symbols follow
    the convention of the crystallographic standard, International Tables for
    Crystallography Vol. A, symbols for symmetry elements and the stereograms of the point
    groups (from memory):

    - an n-fold rotation axis is a filled regular n-gon where it meets the upper hemisphere
      (both ends, for an axis in the equatorial plane): a lens (two arcs) for n = 2, a
      triangle, a square, a pentagon, a hexagon …;
    - an axis that also carries the inversion (n/m for n even, the rotoinversion n̄ for n
      odd) adds a small open circle inside the n-gon;
    - a rotoinversion axis without the inversion ((2n)̄: S4 = 4̄, S8 = 8̄, and C3h's 6̄)
      draws the filled n-gon inside an open 2n-gon;
    - a mirror plane is its great circle, drawn solid: a diameter for a vertical plane, an
      arc for an inclined one; a horizontal mirror makes the primitive circle solid, which
      is dashed otherwise;
    - the inversion centre alone (Ci) is a small open circle at the centre;
    - the general position, one direction on no element taken through every operation,
      gives h points: a dot on the upper hemisphere, an open circle on the lower.

    Each mirror class and each kind of axis has its colour (the same as in
    :func:`draw_symmetry`), and the legend names the table's classes on each.

    Parameters
    ----------
    sym : SymmetryData or Analysis
        A finite point group.
    path : str or path-like, optional
        Write the picture there as a PNG.

    Returns
    -------
    matplotlib.figure.Figure
        Artists carry a ``gid``: ``"primitive"``, ``"mirror:<class>"`` for each great circle,
        ``"axis:<symbol>"`` for each filled axis symbol, ``"inversion"``, and
        ``"general:upper"`` / ``"general:lower"`` for the two sets of general positions.

    Raises
    ------
    InputError
        For C∞v, D∞h and K_h (infinitely many elements), when matplotlib is missing or the
        file cannot be written.
    """
    sym = as_symmetry(sym)
    _refuse(sym)
    fig = new_figure(9.6, 6.4)
    from matplotlib.legend_handler import HandlerTuple
    from matplotlib.lines import Line2D
    from matplotlib.patches import Circle

    table = sym.table
    colour_of: dict[int, str] = {}
    for k, rep in enumerate(representative_elements(sym)):
        for c in rep.classes:
            colour_of[c] = CLASS_COLOURS[k % len(CLASS_COLOURS)]
    per_class = _class_elements(sym)
    mirrors = {c: e[2] for c, e in per_class.items() if e[0] == "mirror"}
    inversion = any(e[0] == "inversion" for e in per_class.values())
    horizontal = [c for c, normals in mirrors.items() if any(abs(n[2]) > 1 - 1e-6 for n in normals)]

    ax = fig.add_axes((0.02, 0.03, 0.6, 0.86))
    ax.set_aspect("equal")
    ax.set_xlim(-1.2, 1.2)
    ax.set_ylim(-1.2, 1.2)
    ax.axis("off")
    handles: list = []
    labels: list[str] = []

    primitive = Circle(
        (0.0, 0.0),
        1.0,
        fill=False,
        edgecolor=colour_of[horizontal[0]] if horizontal else "black",
        lw=2.0 if horizontal else 1.2,
        ls="-" if horizontal else (0, (6, 4)),
        zorder=2,
        gid="primitive",
    )
    ax.add_patch(primitive)
    for text, d in (("x", np.array([1.0, 0.0])), ("y", np.array([0.0, 1.0]))):
        ax.annotate(
            "",
            xy=tuple(1.12 * d),
            xytext=tuple(1.02 * d),
            arrowprops={"arrowstyle": "->", "color": "0.45", "lw": 0.8},
        )
        ax.text(*(1.17 * d), text, color="0.35", fontsize=10, ha="center", va="center")

    for c, normals in mirrors.items():
        colour = colour_of[c]
        label = table.classes[c].label
        for n in normals:
            if abs(n[2]) > 1 - 1e-6:
                continue  # the primitive circle itself
            xy = _great_circle(n)
            ax.plot(xy[:, 0], xy[:, 1], color=colour, lw=1.6, zorder=3, gid=f"mirror:{label}")
        where = ""
        if c in horizontal:
            where = " (one is the primitive)" if len(normals) > 1 else " (the primitive)"
        handles.append(Line2D([], [], color=colour, lw=2.0))
        labels.append(f"{label}: mirror plane{'s' if len(normals) > 1 else ''}{where}")

    kinds: dict[tuple, list] = {}
    for line in axis_lines(sym):
        colour = colour_of.get(line.classes[0], "black")
        v = line.vector
        poles = [v, -v] if abs(v[2]) < 1e-6 else [v]
        for pole in poles:
            at = np.array(project(pole)[0][0])
            for patch in _symbol_patches(line, at, colour):
                ax.add_patch(patch)
        kinds.setdefault((line.symbol, line.classes, colour, line.order, line.improper), []).append(
            line
        )
    for (symbol, classes, colour, order, improper), members in kinds.items():
        parts = []
        if improper and not inversion:
            parts.append(
                Line2D(
                    [],
                    [],
                    ls="",
                    marker=_marker(_polygon(2 * order, 1, 0.0)),
                    ms=15,
                    mfc="white",
                    mec="black",
                    mew=1.0,
                )
            )
        parts.append(
            Line2D(
                [],
                [],
                ls="",
                marker=_marker(_filled(order, 0.0)),
                ms=11 if improper and not inversion else 12,
                mfc=colour,
                mec="black",
                mew=0.8,
            )
        )
        if inversion:
            parts.append(
                Line2D([], [], ls="", marker="o", ms=3.5, mfc="white", mec="black", mew=0.8)
            )
        handles.append(tuple(parts))
        names = ", ".join(table.classes[c].label for c in classes)
        count = len(members)
        labels.append(f"{symbol}: {names}" + (f" ({count} axes)" if count > 1 else ""))
    if inversion and not kinds:
        ax.add_patch(
            Circle(
                (0.0, 0.0),
                _HOLE * 1.3,
                facecolor="white",
                edgecolor="black",
                lw=1.0,
                zorder=6,
                gid="inversion",
            )
        )
    if inversion:
        handles.append(Line2D([], [], ls="", marker="o", ms=5, mfc="white", mec="black", mew=1.0))
        labels.append("i: inversion centre" + (" (on every axis symbol)" if kinds else ""))

    images = general_position(sym)
    xy, upper = project(images)
    dots = ax.scatter(xy[upper, 0], xy[upper, 1], s=16, c="black", zorder=7, gid="general:upper")
    rings = ax.scatter(
        xy[~upper, 0],
        xy[~upper, 1],
        s=60,
        facecolors="none",
        edgecolors="black",
        linewidths=1.0,
        zorder=7,
        gid="general:lower",
    )
    handles += [dots, rings]
    labels += [
        f"general position, upper hemisphere ({int(upper.sum())})",
        f"general position, lower hemisphere ({int((~upper).sum())})",
    ]
    fig.legend(
        handles,
        labels,
        handler_map={tuple: HandlerTuple(ndivide=1)},
        loc="center left",
        bbox_to_anchor=(0.62, 0.5),
        fontsize=9,
        frameon=False,
        title="classes on each element",
        title_fontsize=9,
    ).set_gid("legend")
    h = len(images)
    fig.suptitle(
        f"{sym.point_group}: stereographic projection ({h} general position{'s' if h > 1 else ''})",
        fontsize=12,
    )
    fig.text(0.32, 0.915, "looking down the standard z axis", ha="center", fontsize=9)
    save(fig, path)
    return fig
