"""Charts: point-group counts of a batch, a distortion ladder (group order against tolerance)
and a stick spectrum of normal modes coloured by irrep."""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from ..errors import InputError
from ..tables import get_table
from ._figure import CLASS_COLOURS, new_figure, save

__all__ = ["draw_ladder", "draw_mode_spectrum", "plot_group_counts"]


def plot_group_counts(counts: Mapping[str, int], path: str | os.PathLike | None = None) -> Any:
    """Bar chart of structures per point group, most frequent first.

    Parameters
    ----------
    counts : mapping of str to int
        Point group -> number of structures.
    path : str or path-like, optional
        Write the chart there as a PNG.

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    InputError
        When matplotlib is missing or the file cannot be written.
    """
    items = sorted(counts.items(), key=lambda kv: (-kv[1], kv[0]))
    fig = new_figure(max(4.0, 0.6 * len(items) + 2.0), 4.0)
    ax = fig.add_subplot()
    ax.bar([k for k, _ in items], [v for _, v in items], color=CLASS_COLOURS[0])
    ax.set_ylabel("structures")
    ax.set_xlabel("point group")
    ax.set_title("Point groups in the batch")
    for i, (_, v) in enumerate(items):
        ax.text(i, v, str(v), ha="center", va="bottom", fontsize=8)
    fig.tight_layout()
    save(fig, path)
    return fig


def draw_ladder(ladder: Any, path: str | os.PathLike | None = None) -> Any:
    """Step plot of the point group's order (log scale) against the tolerance (log scale).

    Each run of tolerances giving the same group is labelled with the group's name; the
    infinite groups (C∞v, D∞h, K_h) sit on a level marked ∞ above the finite orders;
    tolerances where the analysis failed are crosses on the bottom axis.

    Parameters
    ----------
    ladder : DistortionLadder
        From :func:`gammatrace.descent.distortion_ladder` (anything with ``steps`` holding
        ``tolerance``, ``point_group``, ``order`` and ``error`` is read the same way), and
        ``source`` for the title when present.
    path : str or path-like, optional
        Write the picture there as a PNG.

    Returns
    -------
    matplotlib.figure.Figure
        Artists carry a ``gid``: ``"ladder"`` (the step line), ``"group:<name>"`` for each
        run's label, ``"failed"`` for the failed tolerances.

    Raises
    ------
    InputError
        For a ladder without steps, when matplotlib is missing or the file cannot be written.
    """
    steps = list(getattr(ladder, "steps", ()))
    if not steps:
        raise InputError("draw_ladder: the ladder has no steps to draw")
    steps.sort(key=lambda s: s.tolerance)
    done = [s for s in steps if s.point_group is not None]
    failed = [s for s in steps if s.point_group is None]
    finite = [s.order for s in done if s.order is not None]
    top = max(finite, default=1)
    infinite_level = 2.0 * max(top, 2)
    level = {s.point_group: (s.order if s.order is not None else infinite_level) for s in done}

    fig = new_figure(8.0, 4.8)
    ax = fig.add_subplot()
    ax.set_xscale("log")
    ax.set_yscale("log")
    if done:
        x = [s.tolerance for s in done]
        y = [level[s.point_group] for s in done]
        (line,) = ax.step(x, y, where="post", color=CLASS_COLOURS[0], lw=2.0, zorder=2)
        line.set_gid("ladder")
        ax.plot(x, y, ls="", marker="o", ms=5, color=CLASS_COLOURS[0], zorder=3)
        runs: list[list] = []
        for s in done:
            if runs and runs[-1][0].point_group == s.point_group:
                runs[-1].append(s)
            else:
                runs.append([s])
        for run in runs:
            lo, hi = run[0].tolerance, run[-1].tolerance
            ax.annotate(
                run[0].point_group,
                xy=(float(np.sqrt(lo * hi)), level[run[0].point_group]),
                xytext=(0, 7),
                textcoords="offset points",
                ha="center",
                va="bottom",
                fontsize=11,
                gid=f"group:{run[0].point_group}",
            )
    levels = sorted(set(level.values()))
    bottom = min(levels, default=1) / 2.0
    if failed:
        ax.plot(
            [s.tolerance for s in failed],
            [bottom * 1.15] * len(failed),
            ls="",
            marker="x",
            ms=8,
            mew=2,
            color=CLASS_COLOURS[1],
            gid="failed",
            label="analysis failed",
            clip_on=False,
        )
        ax.legend(loc="best", fontsize=9, frameon=False)
    ax.set_ylim(bottom, 2.0 * max(levels, default=1))
    ax.set_yticks(levels)
    ax.set_yticklabels(
        ["∞" if v == infinite_level and v not in finite else f"{v:g}" for v in levels]
    )
    ax.minorticks_off()
    for tick in ax.get_yticklabels():
        if tick.get_text() == "∞":
            tick.set_fontsize(14)
    ax.set_xlabel("tolerance / Å")
    ax.set_ylabel("group order h")
    ax.grid(True, which="major", axis="both", color="0.9")
    source = getattr(ladder, "source", "")
    ax.set_title(
        f"{source}: point group against tolerance" if source else "point group against tolerance"
    )
    fig.tight_layout()
    save(fig, path)
    return fig


def _flags(name: str, values: Any, n: int) -> np.ndarray:
    flags = np.asarray(values)
    if flags.shape != (n,):
        raise InputError(
            f"{name}: expected one flag per mode, shape ({n},), received {flags.shape}"
        )
    return flags.astype(bool)


def draw_mode_spectrum(
    frequencies: Any,
    irreps: Sequence[str],
    ir_active: Any = None,
    raman_active: Any = None,
    table: Any = None,
    *,
    path: str | os.PathLike | None = None,
    title: str | None = None,
    degenerate_within: float = 0.5,
) -> Any:
    """Stick spectrum of normal modes: one stick per mode set, coloured by irrep.

    Modes of one irrep whose wavenumbers lie within ``degenerate_within`` cm⁻¹ of each other
    form one stick, as tall as the number of modes (a degenerate E pair is 2 high). IR-active
    sticks carry a filled triangle, Raman-active ones an open diamond; sticks of modes active
    in neither are dotted. Imaginary frequencies, given as negative wavenumbers, are drawn at
    negative positions.

    Parameters
    ----------
    frequencies : array_like, shape (n_modes,)
        Wavenumbers in cm⁻¹.
    irreps : sequence of str, length n_modes
        The irrep label of each mode.
    ir_active, raman_active : array_like of bool, shape (n_modes,), optional
        Activity of each mode; when omitted, read from ``table`` (the irreps it lists as
        IR or Raman active).
    table : CharacterTable or str, optional
        The group's table (or its name): orders the irreps and their colours as the table
        lists them, and checks the labels.
    path : str or path-like, optional
        Write the picture there as a PNG.
    title : str, optional
    degenerate_within : float
        cm⁻¹.

    Returns
    -------
    matplotlib.figure.Figure
        Artists carry a ``gid``: ``"irrep:<label>"`` for the sticks of each irrep, ``"ir"``
        and ``"raman"`` for the activity marks.

    Raises
    ------
    InputError
        For arrays of the wrong length, a label the table does not have, missing activity
        without a table, when matplotlib is missing or the file cannot be written.
    """
    nu = np.asarray(frequencies, dtype=np.float64).reshape(-1)
    n = len(nu)
    labels = [str(x) for x in irreps]
    if len(labels) != n:
        raise InputError(f"irreps: expected one label per frequency ({n}), received {len(labels)}")
    if not np.all(np.isfinite(nu)):
        raise InputError("frequencies: contains NaN or infinite values")
    tab = get_table(table) if isinstance(table, str) else table
    if tab is not None:
        order = list(tab.labels)
        unknown = sorted(set(labels) - set(order))
        if unknown:
            raise InputError(f"irreps: {unknown} are not irreps of {tab.name} ({order})")
    else:
        order = list(dict.fromkeys(labels))
    if (ir_active is None or raman_active is None) and tab is None:
        raise InputError("ir_active/raman_active: give the flags or the table to read them from")
    ir_irreps = tab.ir_active_irreps if ir_active is None else set()
    raman_irreps = tab.raman_active_irreps if raman_active is None else set()
    ir = (
        np.array([x in ir_irreps for x in labels], dtype=bool)
        if ir_active is None
        else _flags("ir_active", ir_active, n)
    )
    raman = (
        np.array([x in raman_irreps for x in labels], dtype=bool)
        if raman_active is None
        else _flags("raman_active", raman_active, n)
    )

    # mode sets: same irrep, wavenumbers within degenerate_within of the set's first
    sets: list[dict] = []
    for k in np.argsort(nu, kind="stable"):
        for s in sets:
            if s["irrep"] == labels[k] and abs(nu[k] - s["nu"]) <= degenerate_within:
                s["modes"].append(k)
                break
        else:
            sets.append({"irrep": labels[k], "nu": float(nu[k]), "modes": [k]})

    fig = new_figure(9.0, 4.6)
    ax = fig.add_axes((0.08, 0.13, 0.72, 0.76))
    colour = {lab: CLASS_COLOURS[i % len(CLASS_COLOURS)] for i, lab in enumerate(order)}
    from matplotlib.lines import Line2D

    handles, names = [], []
    tallest = max((len(s["modes"]) for s in sets), default=1)
    for lab in order:
        mine = [s for s in sets if s["irrep"] == lab]
        if not mine:
            continue
        x = [s["nu"] for s in mine]
        height = [len(s["modes"]) for s in mine]
        silent = [not (ir[s["modes"]].any() or raman[s["modes"]].any()) for s in mine]
        sticks = ax.vlines(
            x,
            0,
            height,
            colors=colour[lab],
            linewidths=2.2,
            linestyles=[":" if q else "-" for q in silent],
            gid=f"irrep:{lab}",
        )
        sticks.set_zorder(2)
        handles.append(Line2D([], [], color=colour[lab], lw=2.2))
        names.append(lab)
    ir_sets = [s for s in sets if ir[s["modes"]].any()]
    raman_sets = [s for s in sets if raman[s["modes"]].any()]
    ax.scatter(
        [s["nu"] for s in ir_sets],
        [len(s["modes"]) + 0.12 * tallest for s in ir_sets],
        marker="v",
        s=40,
        c="black",
        zorder=3,
        gid="ir",
    )
    ax.scatter(
        [s["nu"] for s in raman_sets],
        [len(s["modes"]) + 0.26 * tallest for s in raman_sets],
        marker="D",
        s=32,
        facecolors="none",
        edgecolors="black",
        linewidths=1.0,
        zorder=3,
        gid="raman",
    )
    handles += [
        Line2D([], [], ls="", marker="v", ms=7, mfc="black", mec="black"),
        Line2D([], [], ls="", marker="D", ms=6, mfc="none", mec="black"),
    ]
    names += ["IR active", "Raman active"]
    if any(not (ir[s["modes"]].any() or raman[s["modes"]].any()) for s in sets):
        handles.append(Line2D([], [], color="0.3", lw=2.0, ls=":"))
        names.append("inactive in both")
    fig.legend(
        handles,
        names,
        loc="center left",
        bbox_to_anchor=(0.81, 0.5),
        fontsize=9,
        frameon=False,
        title="irreps",
        title_fontsize=9,
    ).set_gid("legend")
    if n:
        lo, hi = float(nu.min()), float(nu.max())
        pad = max(0.05 * (hi - lo), 50.0)
        ax.set_xlim(min(lo - pad, 0.0 if lo >= 0 else lo - pad), hi + pad)
    ax.set_ylim(0, tallest * 1.45)
    ax.yaxis.get_major_locator().set_params(integer=True)
    unit = "wavenumber / cm⁻¹" + (" (imaginary: negative)" if n and nu.min() < 0 else "")
    ax.set_xlabel(unit)
    ax.set_ylabel("modes (degeneracy)")
    ax.set_title(title if title is not None else f"normal modes ({n})")
    save(fig, path)
    return fig
