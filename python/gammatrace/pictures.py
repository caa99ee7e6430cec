"""Pictures (``pip install 'gammatrace[plot]'``): a structure with its symmetry elements, and a
bar chart of point-group counts for a batch. PNG files through matplotlib's Agg backend."""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np

from .errors import InputError
from .group.symmetry import as_symmetry

if TYPE_CHECKING:  # pragma: no cover
    from .group.symmetry import SymmetryData

__all__ = ["draw_symmetry", "plot_group_counts", "symmetry_elements"]


def _pyplot():
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        raise InputError("pictures need matplotlib: pip install 'gammatrace[plot]'") from None
    return plt


def symmetry_elements(sym: SymmetryData) -> dict:
    """Rotation axes (unit vector, order), mirror-plane normals and the inversion centre.

    ``sym`` is a SymmetryData (or an Analysis). Axes and normals are in the input frame;
    ``center`` is the centre of mass.
    """
    from .tables._ops import describe, fraction_of_turn

    sym = as_symmetry(sym)
    proper, angle, axis = describe(sym.operations)
    axes: list[tuple[np.ndarray, int]] = []
    for a, t in zip(axis[proper & (angle > 1e-6)], angle[proper & (angle > 1e-6)]):
        n = fraction_of_turn(t, 4000).denominator
        for k, (b, o) in enumerate(axes):
            if abs(abs(float(a @ b)) - 1) < 1e-6:
                axes[k] = (b, max(o, n))
                break
        else:
            axes.append((a, n))
    improper = ~proper
    normals = list(axis[improper & (angle < 1e-6)])  # σ = σh·C(0): the axis is the normal
    inversion = bool((improper & (np.abs(angle - 180.0) < 1e-6)).any())
    return {"axes": axes, "planes": normals, "inversion": inversion, "center": sym.center}


_COLOURS = {
    1: "#dddddd",
    6: "#444444",
    7: "#3050f8",
    8: "#ff0d0d",
    9: "#90e050",
    16: "#ffff30",
    17: "#1ff01f",
    79: "#ffd123",
}


def draw_symmetry(sym: SymmetryData, path: str, *, max_atoms: int = 5000) -> str:
    """Draw the structure with its rotation axes (labelled Cn), mirror planes and inversion
    centre to a PNG file; returns the path. Structures above ``max_atoms`` are subsampled."""
    plt = _pyplot()
    sym = as_symmetry(sym)
    el = symmetry_elements(sym)
    pos = sym.structure.positions - sym.center
    nums = sym.structure.numbers
    if len(pos) > max_atoms:
        pick = np.random.default_rng(0).choice(len(pos), max_atoms, replace=False)
        pos, nums = pos[pick], nums[pick]
    radius = float(np.linalg.norm(pos, axis=1).max()) if len(pos) else 1.0
    radius = max(radius, 1.0)
    fig = plt.figure(figsize=(7, 7))
    ax = fig.add_subplot(projection="3d")
    colours = [_COLOURS.get(int(z), "#a0a0c0") for z in nums]
    ax.scatter(
        pos[:, 0],
        pos[:, 1],
        pos[:, 2],
        c=colours,
        s=60 if len(pos) < 200 else 8,
        edgecolors="k",
        linewidths=0.3,
        depthshade=True,
    )
    span = 1.25 * radius
    for axis, order in el["axes"]:
        p = np.outer([-span, span], axis)
        ax.plot(p[:, 0], p[:, 1], p[:, 2], color="tab:blue", lw=1.4 if order > 2 else 0.8)
        tip = axis * span * 1.05
        ax.text(tip[0], tip[1], tip[2], f"C{order}", color="tab:blue", fontsize=9)
    for normal in el["planes"][:24]:
        u = np.cross(normal, [1.0, 0, 0] if abs(normal[0]) < 0.9 else [0, 1.0, 0])
        u /= np.linalg.norm(u)
        v = np.cross(normal, u)
        g = np.linspace(-span, span, 2)
        uu, vv = np.meshgrid(g, g)
        pts = uu[..., None] * u + vv[..., None] * v
        ax.plot_surface(
            pts[..., 0],
            pts[..., 1],
            pts[..., 2],
            color="tab:orange",
            alpha=min(0.15, 1.0 / len(el["planes"])),
            linewidth=0,
        )
    if el["inversion"]:
        ax.scatter([0], [0], [0], marker="*", s=200, c="tab:red", label="inversion centre")
        ax.legend(loc="upper left")
    ax.set_box_aspect((1, 1, 1))
    lim = (-span, span)
    ax.set_xlim(lim)
    ax.set_ylim(lim)
    ax.set_zlim(lim)
    ax.set_xlabel("x / Å")
    ax.set_ylabel("y / Å")
    ax.set_zlabel("z / Å")
    n_planes = len(el["planes"])
    ax.set_title(
        f"{sym.point_group}: {len(el['axes'])} rotation axes, {n_planes} mirror planes"
        + (", inversion centre" if el["inversion"] else "")
    )
    fig.tight_layout()
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path


def plot_group_counts(counts: Mapping[str, int], path: str) -> str:
    """Bar chart of structures per point group (descending) to a PNG file; returns the path."""
    plt = _pyplot()
    items = sorted(counts.items(), key=lambda kv: (-kv[1], kv[0]))
    fig, ax = plt.subplots(figsize=(max(4, 0.6 * len(items) + 2), 4))
    ax.bar([k for k, _ in items], [v for _, v in items], color="tab:blue")
    ax.set_ylabel("structures")
    ax.set_xlabel("point group")
    ax.set_title("Point groups in the batch")
    for i, (_, v) in enumerate(items):
        ax.text(i, v, str(v), ha="center", va="bottom", fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path
